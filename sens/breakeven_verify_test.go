package sens

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// Regression tests of issue 8, items 11 to 13: a crossing is reported only
// where it is one, roots next to the edge of the domain or a failing point
// are found, and the search ends on any input.

// TestBreakevenVerifiesCrossings (item 11): sign changes through a pole or a
// step are jumps, not crossings; a wall of huge values next to a minimum is
// not a touch.
func TestBreakevenVerifiesCrossings(t *testing.T) {
	// 1/(x - 1.05000001) is never 0; it changes sign through its pole at
	// x = 1.05000001, where the denominator is 0.
	r := breakeven(t, problemOf(t, "input x = 1 (0..2)\ny = 1/(x - 1.05000001)\n", "y"), "x", 0, nil)
	if len(r.Crossings) != 0 || len(r.Jumps) != 1 || !r.Jumps[0].Pole || !scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, 1.05000001, 1e-12, 1e-12) {
		t.Errorf("pole: crossings %+v jumps %+v", r.Crossings, r.Jumps)
	}

	// tan x = 0 exactly at x = kπ (its zeros; its poles are at π/2 + kπ):
	// every crossing reported must be one, with slope sec² kπ = 1.
	r = breakeven(t, problemOf(t, "input x = 1 (0..2)\ny = tan(x)\n", "y"), "x", 0, nil)
	if len(r.Crossings) < 5 {
		t.Fatalf("tan: %d crossings", len(r.Crossings))
	}
	for _, c := range r.Crossings {
		k := math.Round(c.Value / math.Pi)
		if !scalar.EqualWithinAbsOrRel(c.Value, k*math.Pi, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(c.Slope, 1, 1e-6, 1e-6) {
			t.Errorf("tan: crossing at %v (%v π), slope %v", c.Value, c.Value/math.Pi, c.Slope)
		}
	}
	for _, j := range r.Jumps {
		if k := j.Value/math.Pi - 0.5; !j.Pole || math.Abs(k-math.Round(k)) > 1e-9 {
			t.Errorf("tan: jump %+v is not a pole π/2 + kπ", j)
		}
	}

	// x + 0.1/x = 1.5 ⇔ x² - 1.5x + 0.1 = 0: x = (1.5 ± √1.85)/2 (quadratic
	// formula); for x < 0 the left side is at most -2√0.1, so no root there,
	// and the pole at 0 is not one.
	r = breakeven(t, problemOf(t, "input x = -1 (-2..2)\ny = x + 0.1/x\n", "y"), "x", 1.5, nil)
	want := []float64{(1.5 - math.Sqrt(1.85)) / 2, (1.5 + math.Sqrt(1.85)) / 2}
	if len(r.Crossings) != 2 {
		t.Fatalf("x + 0.1/x: crossings %+v", r.Crossings)
	}
	for j, w := range want {
		if !scalar.EqualWithinAbsOrRel(r.Crossings[j].Value, w, 1e-12, 1e-12) {
			t.Errorf("x + 0.1/x: crossing %v, want %v", r.Crossings[j].Value, w)
		}
	}

	// A step from 1 to 1e9 at x = 2 passes 5 by a jump (not a pole: the
	// output stays 1e9 however close to 2).
	r = breakeven(t, problemOf(t, "input x = 1 (0..3)\ny = if(x < 2, 1, 1e9)\n", "y"), "x", 5, nil)
	if len(r.Crossings) != 0 || len(r.Jumps) != 1 || r.Jumps[0].Pole || !scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, 2, 1e-12, 1e-12) ||
		r.Jumps[0].Left != 1 || r.Jumps[0].Right != 1e9 {
		t.Errorf("step: crossings %+v jumps %+v", r.Crossings, r.Jumps)
	}

	// 1e30·x⁴ + 1 ≥ 1 everywhere, so it never reaches -1e6, and its minimum
	// 1 at x = 0 is no touch.
	r = breakeven(t, problemOf(t, "input x = 1 (0..2)\ny = 1e30*x^4 + 1\n", "y"), "x", -1e6, nil)
	if len(r.Crossings) != 0 || r.MinOutput != 1 || !strings.Contains(r.Message, "never reaches") {
		t.Errorf("wall: crossings %+v min %v message %q", r.Crossings, r.MinOutput, r.Message)
	}
}

// TestBreakevenNearFailures (item 12): roots between the last point of the
// grid that succeeds and the edge of the domain, and roots next to a point
// where the model fails, are found; the note says where it fails in a
// sentence, not as an engine message.
func TestBreakevenNearFailures(t *testing.T) {
	for _, tc := range []struct {
		name, src string
		target    float64
		want      []float64 // closed forms
	}{
		{"ln", "input x = 1 (0.5..2)\ny = ln(x)\n", -3, []float64{math.Exp(-3)}},          // e^-3
		{"sqrt", "input x = 1 (0.5..2)\ny = sqrt(x)\n", 0.1, []float64{0.01}},             // 0.1²
		{"exp", "input x = 1 (0.5..2)\ny = exp(x)\n", 1e300, []float64{300 * math.Ln10}},  // ln 1e300
		{"pole", "input price = 4 (3..6)\ny = 1/(price - 5)\n", 1e6, []float64{5 + 1e-6}}, // 5 + 1/1e6
		{"pole2", "input x = 1 (0..2)\ny = 1/(x + 3)\n", 0.1, []float64{7}},               // 1/0.1 - 3
		// From the root's side of the pole: found once, not again in the
		// round that searches around the pole.
		{"pole above", "input price = 6 (5.5..7)\ny = 1/(price - 5)\n", 1e6, []float64{5 + 1e-6}}, // 5 + 1/1e6
		{"ln far", "input x = 1 (0.5..2)\ny = ln(x)\n", -700, []float64{math.Exp(-700)}},          // e^-700
		{"subnormal", "input x = 1e-320\ny = x * 1e300\n", 5e-21, []float64{5e-321}},              // 5e-21 / 1e300
		{"huge", "input x = 1e303 (1e302..1e305)\ny = x * 2\n", 1e304, []float64{5e303}},          // 1e304 / 2
		{"huge range", "input x = 0 (-1e308..1e308)\ny = x - 3\n", 0, []float64{3}},               // 3
		{"huge value", "input x = 1e305\ny = x / 1e300\n", 7, []float64{7e300}},                   // 7·1e300
	} {
		t.Run(tc.name, func(t *testing.T) {
			r := breakeven(t, problemOf(t, tc.src, "y"), strings.Fields(tc.src)[1], tc.target, nil)
			if len(r.Crossings) != len(tc.want) {
				t.Fatalf("crossings %+v, message %q, note %q", r.Crossings, r.Message, r.DomainNote)
			}
			for j, w := range tc.want {
				// Relative, down to subnormal numbers (gonum's relative test
				// treats differences below the least normal number as
				// absolute). ln near e^-700 is conditioned to about 1e-13.
				if math.Abs(r.Crossings[j].Value-w) > 1e-12*math.Abs(w) {
					t.Errorf("crossing %.17g, want %.17g", r.Crossings[j].Value, w)
				}
			}
		})
	}

	// 0.01/x³ + x = 2.5 ⇔ x⁴ - 2.5x³ + 0.01 = 0 (x ≠ 0): its real roots, as
	// eigenvalues of the companion matrix by gonum's mat.Eigen.
	r := breakeven(t, problemOf(t, "input x = 1 (0.5..2)\ny = 0.01/x^3 + x\n", "y"), "x", 2.5, nil)
	roots := polyRealRoots(t, []float64{1, -2.5, 0, 0, 0.01})
	if len(r.Crossings) != len(roots) {
		t.Fatalf("quartic: crossings %+v, want %v", r.Crossings, roots)
	}
	for j, w := range roots {
		if !scalar.EqualWithinAbsOrRel(r.Crossings[j].Value, w, 1e-12, 1e-10) {
			t.Errorf("quartic: crossing %.17g, want %.17g", r.Crossings[j].Value, w)
		}
	}
	// The pole at 0 is a gap in the domain, said in words with its line.
	if !strings.Contains(r.DomainNote, "the model cannot be evaluated (at x = ") || !strings.Contains(r.DomainNote, "in y, line 2, column") ||
		strings.Contains(r.DomainNote, "test:") || strings.Contains(r.DomainNote, "(with") {
		t.Errorf("note %q", r.DomainNote)
	}
}

// polyRealRoots returns the real roots of the polynomial with coefficients
// c (highest power first, c[0] = 1), ascending: the real eigenvalues of its
// companion matrix.
func polyRealRoots(t *testing.T, c []float64) []float64 {
	n := len(c) - 1
	m := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		m.Set(0, j, -c[j+1])
		if j > 0 {
			m.Set(j, j-1, 1)
		}
	}
	var eig mat.Eigen
	if !eig.Factorize(m, mat.EigenNone) {
		t.Fatal("eigen decomposition failed")
	}
	var out []float64
	for _, v := range eig.Values(nil) {
		if math.Abs(imag(v)) <= 1e-12*cmplx.Abs(v) {
			out = append(out, real(v))
		}
	}
	sort.Float64s(out)
	return out
}

// TestBreakevenStops (item 13): a search over a huge or subnormal input ends
// with a bounded number of evaluations, and a cancelled context stops it.
func TestBreakevenStops(t *testing.T) {
	for _, src := range []string{
		"input x = 1e303 (1e302..1e305)\ny = x * 2\n",
		"input x = 1.5e308\ny = x / 2\n",
		"input x = 1e-320\ny = x * 1e300\n",
		"input x = 5e-324\ny = x\n",
	} {
		p := problemOf(t, src, "y")
		c := &counting{Function: p.F}
		p.F = c
		r, err := Breakeven(p, &BreakevenSettings{Input: "x", Target: 1})
		if err != nil {
			t.Fatalf("%q: %v", src, err)
		}
		if n := c.evals + c.points + c.grads; n > 100000 || r.Evaluations > 100000 {
			t.Errorf("%q: %d evaluations", src, n)
		}
	}
	// Cancelled after the first hundred evaluations: the search stops.
	p := problemOf(t, "input x = 1 (0.5..2)\ny = tan(x)\n", "y")
	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	p.F = &cancelAfter{Function: p.F, n: &n, after: 100, cancel: cancel}
	_, err := Breakeven(p, &BreakevenSettings{Settings: Settings{Ctx: ctx}, Input: "x", Target: 0})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want cancellation", err)
	}
	if n > 100+maxBatch {
		t.Errorf("%d evaluations after cancelling at 100", n)
	}
}

// cancelAfter cancels its context once it has evaluated after points.
type cancelAfter struct {
	Function
	n      *int
	after  int
	cancel func()
}

func (c *cancelAfter) tick(k int) {
	if *c.n += k; *c.n >= c.after {
		c.cancel()
	}
}
func (c *cancelAfter) Eval(x []float64) (float64, error) { c.tick(1); return c.Function.Eval(x) }
func (c *cancelAfter) Gradient(d, x []float64) (float64, error) {
	c.tick(1)
	return c.Function.Gradient(d, x)
}
func (c *cancelAfter) EvalBatch(d, xs []float64, n int) error {
	c.tick(n)
	return c.Function.EvalBatch(d, xs, n)
}
func (c *cancelAfter) Clone() Function { return c }

// TestMidpoint: the bisection point lies in [a, b], is never NaN, and
// repeated bisection closes any bracket, of any sign and scale, with -0 and
// subnormal ends, in a bounded number of steps.
func TestMidpoint(t *testing.T) {
	ends := []float64{math.Copysign(0, -1), 0, 5e-324, 1e-310, 1e-300, 0.05, 1, 3, 1e10, 1e300, math.MaxFloat64}
	var vals []float64
	for _, e := range ends {
		vals = append(vals, e, -e)
	}
	for _, a := range vals {
		for _, b := range vals {
			if !(a < b) {
				continue
			}
			lo, hi := a, b
			steps := 0
			for ; !tight(lo, hi); steps++ {
				m := midpoint(lo, hi)
				if math.IsNaN(m) || m < lo || m > hi {
					t.Fatalf("midpoint(%g, %g) = %g", lo, hi, m)
				}
				// Keep the half nearer to a, the hardest way in.
				hi = m
				if steps > 200 {
					t.Fatalf("%g..%g: no closing after %d steps (at %g..%g)", a, b, steps, lo, hi)
				}
			}
		}
	}
}

// TestBreakevenNarrowGapNote: a gap in the domain narrower than the digits
// shown (the pole of 1/(price - 5), by hand at price = 5) is said to be
// around that value, not "between price = 5 and 5".
func TestBreakevenNarrowGapNote(t *testing.T) {
	r := breakeven(t, problemOf(t, "input price = 6 (5.5..7)\ny = 1/(price - 5)\n", "y"), "price", 1e6, nil)
	if !strings.Contains(r.DomainNote, "in a narrow gap around price = 5 the model cannot be evaluated (division by zero in y, line 2, column") ||
		strings.Contains(r.DomainNote, "between price = 5 and 5") {
		t.Errorf("note %q", r.DomainNote)
	}
}

// An output level at the target over an interval is a plateau, not two
// crossings at its ends with slope 0. round(10x) = 25 for 24.5 <= 10x <
// 25.5 (round half away from zero, by hand): x in [2.45, 2.55).
// min(x, 2.5) = 2.5 for every x >= 2.5: open above, to the search's end.
func TestBreakevenPlateau(t *testing.T) {
	r := breakeven(t, problemOf(t, "input x = 2 (1..3)\ny = round(x*10)\n", "y"), "x", 25, nil)
	if len(r.Crossings) != 0 || len(r.Plateaus) != 1 {
		t.Fatalf("round: crossings %+v plateaus %+v, want one plateau", r.Crossings, r.Plateaus)
	}
	pl := r.Plateaus[0]
	if math.Abs(pl.Low-2.45) > 1e-12 || math.Abs(pl.High-2.55) > 1e-12 || !pl.InRange || pl.OpenLow || pl.OpenHigh {
		t.Errorf("round: plateau %+v, want 2.45..2.55 in range", pl)
	}
	if r.Value == nil || *r.Value != pl.Low || r.Message != "" {
		t.Errorf("round: value %v message %q, want the plateau's low end (nearest the baseline 2)", r.Value, r.Message)
	}
	r = breakeven(t, problemOf(t, "input x = 2 (1..3)\ny = min(x, 2.5)\n", "y"), "x", 2.5, nil)
	if len(r.Crossings) != 0 || len(r.Plateaus) != 1 || r.Plateaus[0].Low != 2.5 || !r.Plateaus[0].OpenHigh || r.Plateaus[0].OpenLow {
		t.Errorf("min: crossings %+v plateaus %+v, want one plateau from 2.5, open above", r.Crossings, r.Plateaus)
	}
	// A touch and a smooth crossing stay crossings: (x-2)² = 0 at 2, x² = 4
	// at ±2 (closed form).
	r = breakeven(t, problemOf(t, "input x = 1 (1..3)\ny = (x-2)^2\n", "y"), "x", 0, nil)
	if len(r.Plateaus) != 0 || len(r.Crossings) != 1 || math.Abs(r.Crossings[0].Value-2) > 1e-6 {
		t.Errorf("touch: crossings %+v plateaus %+v", r.Crossings, r.Plateaus)
	}
	r = breakeven(t, problemOf(t, "input x = 1 (1..3)\ny = x^2\n", "y"), "x", 4, nil)
	if len(r.Plateaus) != 0 || len(r.Crossings) != 2 {
		t.Errorf("x^2: crossings %+v plateaus %+v", r.Crossings, r.Plateaus)
	}
}
