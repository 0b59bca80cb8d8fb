package sens

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func breakeven(t *testing.T, p *Problem, input string, target float64, s *BreakevenSettings) *BreakevenResult {
	t.Helper()
	if s == nil {
		s = &BreakevenSettings{}
	}
	s.Input, s.Target = input, target
	r, err := Breakeven(p, s)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func TestBreakevenIRR(t *testing.T) {
	// The internal rate of return is the rate at which the net present worth
	// is zero (common practice). The cash flows are constructed so that the
	// rate is known exactly or from standard interest tables; none is quoted
	// from a textbook example.
	for _, tc := range []struct {
		name, src string
		irr, tol  float64
		inRange   bool
		other     []float64 // further roots, beyond i = -100%
	}{{
		// 1000 now returns 1100 in a year: 10% exactly, by definition.
		name: "one period",
		src: `input i = 0.05 (0.03..0.08)
npv = -1000 [$] + 1100 [$] / (1 + i)`,
		irr: 0.10, tol: 1e-12,
	}, {
		// 1000 now returns 600 at the end of each of two years: with
		// v = 1/(1+i), 600v² + 600v - 1000 = 0, so v = (-600 + √(600² +
		// 4·600·1000)) / 1200 (quadratic formula).
		name: "two periods",
		src: `input i = 0.1 (0.05..0.2)
npv = -1000 + 600 / (1 + i) + 600 / (1 + i)^2`,
		// The other root of the quadratic, v < 0, is a rate below -100%,
		// which the search of the whole domain finds too.
		irr: 1/((-600+math.Sqrt(600*600+4*600*1000))/1200) - 1, tol: 1e-12, inRange: true,
		other: []float64{1/((-600-math.Sqrt(600*600+4*600*1000))/1200) - 1},
	}, {
		// 1000 now returns 263.80 a year for five years: the capital
		// recovery factor (A/P, 10%, 5) = 0.26380 in standard interest
		// tables, so the rate is 10% to the tables' five digits (the
		// residual 0.0025 in the payment moves it by about 3.4e-6).
		name: "annuity",
		src: `input payment = 263.80 [$] (250..280)
input i = 0.12 (0.08..0.15)
npv = -1000 [$] + payment * annuity_pv(i, 5)`,
		irr: 0.10, tol: 1e-5, inRange: true,
	}} {
		t.Run(tc.name, func(t *testing.T) {
			p := problemOf(t, tc.src, "npv")
			r := breakeven(t, p, "i", 0, nil)
			if len(r.Crossings) != 1+len(tc.other) || r.Value == nil {
				t.Fatalf("crossings %+v, jumps %+v, message %q", r.Crossings, r.Jumps, r.Message)
			}
			for j, o := range tc.other {
				if c := r.Crossings[j]; !scalar.EqualWithinAbsOrRel(c.Value, o, 1e-12, 1e-12) {
					t.Errorf("root %d = %.12g, want %.12g", j, c.Value, o)
				}
			}
			c := r.Crossings[len(tc.other)]
			if !scalar.EqualWithinAbsOrRel(c.Value, tc.irr, tc.tol, 0) || *r.Value != c.Value {
				t.Errorf("IRR = %.12g, want %.12g", c.Value, tc.irr)
			}
			if c.InRange != tc.inRange || *r.InRange != tc.inRange {
				t.Errorf("in range = %v, want %v", c.InRange, tc.inRange)
			}
			if d := c.Value - r.BaselineInput; c.Distance != d || c.DistancePct == nil ||
				!scalar.EqualWithinAbsOrRel(*c.DistancePct, 100*d/r.BaselineInput, 1e-12, 1e-12) {
				t.Errorf("distance %v (%v%%)", c.Distance, c.DistancePct)
			}
			if c.Slope >= 0 {
				t.Errorf("slope %v; the present worth falls as the rate rises", c.Slope)
			}
		})
	}

	// The same annuity solved for the payment at 10%: 1000 × (A/P, 10%, 5)
	// = 263.80 (standard interest tables, five digits).
	p := problemOf(t, `input payment = 250 [$] (200..300)
input i = 0.10
npv = -1000 [$] + payment * annuity_pv(i, 5)`, "npv")
	r := breakeven(t, p, "payment", 0, nil)
	if r.Value == nil || !scalar.EqualWithinAbsOrRel(*r.Value, 263.80, 0.005, 0) || !*r.InRange {
		t.Errorf("payment = %v, want 263.80 in range", r.Value)
	}
	if r.Unit != "$" || r.InputUnit != "$" {
		t.Errorf("units %q, %q", r.Unit, r.InputUnit)
	}
}

func TestBreakevenCrossings(t *testing.T) {
	// Roots of polynomials, by factoring.
	src := `input x = 3 (2.5..4)
y = (x - 2) * (x - 5)
dip = (x - 0.51)^2 - 0.000001
touch = (x - 0.51)^2
none = x^2 + 1
`
	p := problemOf(t, src, "y")
	r := breakeven(t, p, "x", 0, nil)
	if len(r.Crossings) != 2 {
		t.Fatalf("crossings %+v", r.Crossings)
	}
	for j, want := range []float64{2, 5} {
		c := r.Crossings[j]
		if !scalar.EqualWithinAbsOrRel(c.Value, want, 1e-12, 1e-12) || c.InRange {
			t.Errorf("crossing %d = %+v, want %v outside the range", j, c, want)
		}
		// y' = 2x - 7: -3 at 2, +3 at 5.
		if !scalar.EqualWithinAbsOrRel(c.Slope, 2*want-7, 1e-9, 1e-9) {
			t.Errorf("slope at %v = %v", want, c.Slope)
		}
	}
	if *r.Value != r.Crossings[0].Value || *r.InRange {
		t.Errorf("nearest crossing %v, want 2 (1 below the baseline 3)", *r.Value)
	}
	// Target other than zero: (x-2)(x-5) = -2 at x = 3 and 4, both in range;
	// the baseline itself is one.
	r = breakeven(t, p, "x", -2, nil)
	if len(r.Crossings) != 2 || r.Crossings[0].Value != 3 || !scalar.EqualWithinAbsOrRel(r.Crossings[1].Value, 4, 1e-12, 1e-12) || *r.Value != 3 {
		t.Errorf("crossings %+v", r.Crossings)
	}
	// Restricting the search to 0..3 keeps only x = 2.
	r = breakeven(t, p, "x", 0, &BreakevenSettings{Bounded: true, Low: 0, High: 3})
	if len(r.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(r.Crossings[0].Value, 2, 1e-12, 1e-12) || r.SearchedLow != 0 || r.SearchedHigh != 3 {
		t.Errorf("bounded: %+v searched %v..%v", r.Crossings, r.SearchedLow, r.SearchedHigh)
	}

	// Two crossings 0.002 apart, between grid points 0.05 apart: the dip of
	// |y| at a grid point is searched and both are found (0.51 ∓ 0.001).
	r = breakeven(t, problemOf(t, src, "dip"), "x", 0, nil)
	if len(r.Crossings) != 2 || !scalar.EqualWithinAbsOrRel(r.Crossings[0].Value, 0.509, 1e-9, 0) || !scalar.EqualWithinAbsOrRel(r.Crossings[1].Value, 0.511, 1e-9, 0) {
		t.Errorf("dip: crossings %+v", r.Crossings)
	}
	// A touch: (x - 0.51)² reaches 0 without crossing it.
	r = breakeven(t, problemOf(t, src, "touch"), "x", 0, nil)
	if len(r.Crossings) != 1 || !r.Crossings[0].Touch || !scalar.EqualWithinAbsOrRel(r.Crossings[0].Value, 0.51, 1e-6, 0) {
		t.Errorf("touch: crossings %+v", r.Crossings)
	}

	// No crossing: x² + 1 never reaches 0; the least value found is 1 near
	// x = 0.
	r = breakeven(t, problemOf(t, src, "none"), "x", 0, nil)
	if len(r.Crossings) != 0 || r.Value != nil || r.InRange != nil {
		t.Fatalf("none: %+v", r.Crossings)
	}
	if r.MinOutput < 1 || r.MinOutput > 1.01 || !strings.HasPrefix(r.Message, "none never reaches 0 over x = ") || !strings.Contains(r.Message, "it ranges from 1") {
		t.Errorf("none: min %v, message %q", r.MinOutput, r.Message)
	}
	if r.SearchedLow > -1e6 || r.SearchedHigh < 1e6 {
		t.Errorf("searched %v..%v; want the whole reach", r.SearchedLow, r.SearchedHigh)
	}
}

func TestBreakevenFlatJumpDomain(t *testing.T) {
	src := `input x = 4 (2..6)
input k = 3
flat = k + 0 * x
step = if(x > 5, 10, 0)
root = sqrt(x) - 1
`
	r := breakeven(t, problemOf(t, src, "flat"), "x", 7, nil)
	if !r.Flat || r.Value != nil || !strings.Contains(r.Message, "does not change with x") {
		t.Errorf("flat: %+v", r)
	}
	// A step passes 5 by a jump at x = 5: no crossing, one jump.
	r = breakeven(t, problemOf(t, src, "step"), "x", 5, nil)
	if len(r.Crossings) != 0 || len(r.Jumps) != 1 || !scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, 5, 1e-9, 0) ||
		r.Jumps[0].Left != 0 || r.Jumps[0].Right != 10 || !strings.Contains(r.Message, "jumps past the target at x = 5") {
		t.Errorf("step: crossings %+v jumps %+v message %q", r.Crossings, r.Jumps, r.Message)
	}
	// √x = 1 at x = 1; below 0 the square root fails, which bounds the
	// search on that side.
	r = breakeven(t, problemOf(t, src, "root"), "x", 0, nil)
	if len(r.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(r.Crossings[0].Value, 1, 1e-12, 1e-12) {
		t.Fatalf("root: crossings %+v", r.Crossings)
	}
	if r.SearchedLow < 0 || r.SearchedHigh < 1e6 || !strings.Contains(r.DomainNote, "below x = ") {
		t.Errorf("root: searched %v..%v, note %q", r.SearchedLow, r.SearchedHigh, r.DomainNote)
	}
	// The IRR model's pole at i = -1 is a jump, not a crossing.
	p := problemOf(t, "input i = 0.05 (0.03..0.08)\nnpv = -1000 + 1100 / (1 + i)\n", "npv")
	r = breakeven(t, p, "i", 0, nil)
	if len(r.Jumps) != 1 || !scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, -1, 1e-9, 0) {
		t.Errorf("pole: jumps %+v", r.Jumps)
	}
	if _, err := Breakeven(p, &BreakevenSettings{Input: "j"}); err == nil || err.Error() != "undefined input j (did you mean i?)" {
		t.Errorf("unknown input: %v", err)
	}
}

// The rate of return of 1000 invested now for 1100 a year later is the rate
// at which the net present worth is zero: 10%.
func ExampleBreakeven() {
	rate := NewInput("rate", 0.05, 0.03, 0.08, nil)
	npv := FuncOf(1, func(x []float64) float64 { return -1000 + 1100/(1+x[0]) }, nil)
	p := &Problem{Output: "npv", Unit: "$", F: npv, Inputs: []*Input{rate}}
	r, err := Breakeven(p, &BreakevenSettings{Input: "rate", Target: 0})
	if err != nil {
		fmt.Println(err)
		return
	}
	c := r.Crossings[0]
	fmt.Printf("npv = 0 at rate = %.6g, %+.6g from the baseline (%+.4g%%), in range: %v\n", c.Value, c.Distance, *c.DistancePct, c.InRange)
	fmt.Printf("the pole at rate = %.6g is a jump, not a crossing\n", r.Jumps[0].Value)
	// Output:
	// npv = 0 at rate = 0.1, +0.05 from the baseline (+100%), in range: false
	// the pole at rate = -1 is a jump, not a crossing
}
