package sens

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestSweep1D(t *testing.T) {
	src := `
input rate = 60 [$/h] (50..70)
input hours = 1.5 [h]
input fixed = 10 [$]
input spare = 3
cost = rate * hours + fixed
`
	p := problemOf(t, src, "cost")
	target := 100.0
	r, err := Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "rate", Low: 40, High: 80, N: 5}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	// cost = 1.5·rate + 10 (the model by hand): endpoints 70 and 130.
	want := []SweepPoint{{40, 70}, {50, 85}, {60, 100}, {70, 115}, {80, 130}}
	if len(r.Points) != len(want) {
		t.Fatalf("%d points", len(r.Points))
	}
	for j, w := range want {
		if g := r.Points[j]; g.X != w.X || !scalar.EqualWithinAbsOrRel(g.Output, w.Output, 1e-12, 1e-12) {
			t.Errorf("point %d = %+v, want %+v", j, g, w)
		}
	}
	if r.Baseline != 100 || r.Input.Baseline != 60 || r.Input.Unit != "$/h" || r.Unit != "$" || r.Dims != 1 {
		t.Errorf("result %+v", r)
	}
	if len(r.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(r.Crossings[0], 60, 1e-12, 1e-12) {
		t.Errorf("crossings %v, want [60]", r.Crossings)
	}
	target = 92.5 // between grid points: rate = 55
	r, _ = Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "rate", Low: 40, High: 80, N: 5}, Target: &target})
	if len(r.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(r.Crossings[0], 55, 1e-12, 1e-12) {
		t.Errorf("crossings %v, want [55]", r.Crossings)
	}

	for _, tc := range []struct {
		input  string
		lo, hi float64
		msg    string
	}{
		{"rate", 80, 40, "the range 80 $/h..40 $/h of rate is empty or reversed: write LOW..HIGH with LOW < HIGH"},
		{"rate", 1, 1, "the range 1 $/h..1 $/h of rate is empty or reversed: write LOW..HIGH with LOW < HIGH"},
		{"rates", 1, 2, "undefined input rates (did you mean rate?)"},
		{"spare", 1, 2, "cost does not depend on spare: vary one of the inputs it uses"},
		{"cost", 1, 2, "cost is a formula, not an input: vary one of the inputs it uses"},
		{"rate", math.Inf(-1), 2, "the range of rate must be finite"},
		{"", 1, 2, "a sweep needs an input to vary"},
	} {
		_, err := Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: tc.input, Low: tc.lo, High: tc.hi, N: 5}})
		if err == nil || err.Error() != tc.msg {
			t.Errorf("Sweep1D(%s, %v, %v): error %v, want %q", tc.input, tc.lo, tc.hi, err, tc.msg)
		}
	}
}

func TestSweep2DContourLine(t *testing.T) {
	// f = x + y: the contour f = 10 is the straight line x + y = 10, which
	// linear interpolation on cell edges reproduces exactly (analytic).
	ins := []*Input{NewInput("x", 2, 0, 10, nil), NewInput("y", 3, 0, 10, nil), NewInput("w", 1, 0, 2, nil)}
	f := FuncOf(3, func(x []float64) float64 { return x[0] + x[1] + 0*x[2] }, nil)
	p := &Problem{Output: "f", F: f, Inputs: ins}
	target := 10.0
	r, err := Sweep2D(p, &Sweep2DSettings{X: Axis{"x", 0, 10, 7}, Y: Axis{"y", 0, 10, 9}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Points) != 63 || r.Dims != 2 || r.Inputs[0].N != 7 || r.Inputs[1].N != 9 {
		t.Fatalf("grid %d points, axes %+v", len(r.Points), r.Inputs)
	}
	// Row-major: Points[r*nx+c] at x = xs[c], y = ys[r].
	for rr := 0; rr < 9; rr++ {
		for c := 0; c < 7; c++ {
			g := r.Points[rr*7+c]
			if g.X != r.Inputs[0].Values[c] || g.Y != r.Inputs[1].Values[rr] || !scalar.EqualWithinAbsOrRel(g.Output, g.X+g.Y, 1e-12, 1e-12) {
				t.Fatalf("point (%d, %d) = %+v", rr, c, g)
			}
		}
	}
	if r.Min != 0 || r.Max != 20 || r.Baseline != 5 {
		t.Errorf("min %v max %v baseline %v", r.Min, r.Max, r.Baseline)
	}
	if len(r.Contour) != 1 {
		t.Fatalf("%d contour lines, want 1", len(r.Contour))
	}
	line := r.Contour[0]
	if len(line) < 8 {
		t.Errorf("contour has %d points", len(line))
	}
	for _, pt := range line {
		if !scalar.EqualWithinAbsOrRel(pt.X+pt.Y, 10, 1e-12, 1e-12) {
			t.Errorf("contour point %+v is off x + y = 10", pt)
		}
	}
	// The line runs from one end of the diagonal to the other.
	a, b := line[0], line[len(line)-1]
	if math.Min(a.X, b.X) != 0 || math.Max(a.X, b.X) != 10 {
		t.Errorf("contour ends %+v and %+v, want x = 0 and x = 10", a, b)
	}
	if _, err := Sweep2D(p, &Sweep2DSettings{X: Axis{"x", 0, 1, 3}, Y: Axis{"x", 0, 1, 3}}); err == nil {
		t.Error("same input twice: no error")
	}
}

func TestSweep2DContourCircle(t *testing.T) {
	// f = x² + y²: the contour f = 1 is the unit circle, a closed line; its
	// points lie on edges where linear interpolation of a quadratic errs by
	// at most h²/4 in f (h = 0.1, the grid step).
	ins := []*Input{NewInput("x", 0, -2, 2, nil), NewInput("y", 0, -2, 2, nil)}
	f := FuncOf(2, func(x []float64) float64 { return x[0]*x[0] + x[1]*x[1] }, nil)
	target := 1.0
	r, err := Sweep2D(&Problem{Output: "f", F: f, Inputs: ins}, &Sweep2DSettings{X: Axis{"x", -2, 2, 41}, Y: Axis{"y", -2, 2, 41}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Contour) != 1 {
		t.Fatalf("%d contour lines, want 1", len(r.Contour))
	}
	line := r.Contour[0]
	if line[0] != line[len(line)-1] {
		t.Errorf("circle not closed: %+v .. %+v", line[0], line[len(line)-1])
	}
	for _, pt := range line {
		if v := pt.X*pt.X + pt.Y*pt.Y; math.Abs(v-1) > 0.1*0.1/4 {
			t.Errorf("contour point %+v has f = %v", pt, v)
		}
	}
}

// A sweep's crossing is verified on the model: across a step the output
// passes the target by a jump and no crossing is claimed; on a curve between
// points the crossing is refined to the root, not interpolated.
func TestSweepCrossingsVerified(t *testing.T) {
	target := 5.0
	p := problemOf(t, "input x = 1 (0..3)\ny = if(x < 2, 1, 1e9)\n", "y")
	r, err := Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "x", N: 4}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	// The step is at x = 2 (the model's condition, by hand); points 0, 1,
	// 2, 3 bracket it between 1 and 2 (y(2) = 1e9), so the jump is at 2.
	if len(r.Crossings) != 0 || len(r.Jumps) != 1 || !(r.Jumps[0].Value > 1.999 && r.Jumps[0].Value <= 2) || r.Jumps[0].Pole {
		t.Errorf("step: crossings %v, jumps %+v; want none and one step at 2", r.Crossings, r.Jumps)
	}
	// x² = 2 on 0..3 in 4 points: √2 (closed form); interpolation between
	// (1, 1) and (2, 4) would give 4/3.
	target = 2
	p = problemOf(t, "input x = 1 (0..3)\ny = x^2\n", "y")
	r, err = Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "x", N: 4}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Crossings) != 1 || !scalar.EqualWithinAbsOrRel(r.Crossings[0], math.Sqrt2, 1e-12, 1e-12) || len(r.Jumps) != 0 {
		t.Errorf("x^2 = 2: crossings %v jumps %v, want [√2]", r.Crossings, r.Jumps)
	}
	// 1/(x-1.4) = 0 has no root; the sign change between 1 and 2 is a pole
	// at 1.4 (closed form).
	target = 0
	p = problemOf(t, "input x = 1 (0..3)\ny = 1/(x - 1.4)\n", "y")
	r, err = Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "x", N: 4}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Crossings) != 0 || len(r.Jumps) != 1 || !r.Jumps[0].Pole || !scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, 1.4, 1e-9, 1e-9) {
		t.Errorf("pole: crossings %v jumps %+v, want a pole at 1.4", r.Crossings, r.Jumps)
	}
}

// A 2-D contour across a step is labelled: its points on the step are
// listed as jumps, not claimed as crossings; a smooth contour has none, and
// its points are refined onto the circle.
func TestSweep2DContourJumps(t *testing.T) {
	target := 5.0
	p := problemOf(t, "input x = 1 (0..3)\ninput w = 1 (0..3)\ny = if(x < 2, 1, 1e9) + 0*w\n", "y")
	r, err := Sweep2D(p, &Sweep2DSettings{X: Axis{Input: "x", N: 4}, Y: Axis{Input: "w", N: 4}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	// Four rows, each crossing the step once between x = 1 and 2.
	if len(r.ContourJumps) != 4 {
		t.Errorf("step: %d contour jumps %v, want 4", len(r.ContourJumps), r.ContourJumps)
	}
	for _, q := range r.ContourJumps {
		if !(q.X > 1.999 && q.X <= 2) {
			t.Errorf("jump at %+v, want x = 2", q)
		}
	}
	// x² + w² = 4: every contour point on the circle of radius 2 (closed
	// form), where interpolation on a 4-point grid is off by up to 0.1.
	target = 4
	p = problemOf(t, "input x = 1 (0..3)\ninput w = 1 (0..3)\ny = x^2 + w^2\n", "y")
	r, err = Sweep2D(p, &Sweep2DSettings{X: Axis{Input: "x", N: 4}, Y: Axis{Input: "w", N: 4}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.ContourJumps)+len(r.ContourUnverified) != 0 || len(r.Contour) == 0 {
		t.Fatalf("circle: contour %v jumps %v unverified %v", r.Contour, r.ContourJumps, r.ContourUnverified)
	}
	for _, l := range r.Contour {
		for _, q := range l {
			if d := math.Hypot(q.X, q.Y); !scalar.EqualWithinAbsOrRel(d, 2, 1e-12, 1e-12) {
				t.Errorf("contour point %+v at radius %v, want 2", q, d)
			}
		}
	}
}

// A dip across the target and back between two points of the sweep on the
// same side of it: both crossings are found and verified, wherever the dip
// lies (at the first interval, where no point has two neighbours, or inside
// with a point beside it nearer the target), as a step or a failure of the
// model inside one.
func TestSweepDipsBetweenPoints(t *testing.T) {
	sweep := func(src string, n int, target float64) *Sweep1DResult {
		t.Helper()
		p := problemOf(t, src, "y")
		r, err := Sweep1D(p, &Sweep1DSettings{Axis: Axis{Input: "x", N: n}, Target: &target})
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	near := func(got []float64, want ...float64) bool {
		if len(got) != len(want) {
			return false
		}
		for k := range want {
			if !scalar.EqualWithinAbsOrRel(got[k], want[k], 1e-12, 1e-12) {
				return false
			}
		}
		return true
	}
	// (x - 1.2)(x - 1.7) = 0 on 0..3 in 4 points: roots 1.2 and 1.7 between
	// the points 1 and 2, where the output is 0.14 and 0.24 (algebra, common
	// practice: the roots of a product of linear factors).
	r := sweep("input x = 1 (0..3)\ny = (x - 1.2) * (x - 1.7)\n", 4, 0)
	if !near(r.Crossings, 1.2, 1.7) || len(r.Jumps)+len(r.Unresolved) != 0 {
		t.Errorf("inner dip: crossings %v jumps %v unresolved %v, want [1.2 1.7]", r.Crossings, r.Jumps, r.Unresolved)
	}
	// x² - 0.9x + 0.18 = 0.05 on 0..3: x² - 0.9x + 0.13 = 0, roots
	// (0.9 ± √0.29)/2, both in the first interval 0..1 (quadratic formula,
	// common practice).
	r = sweep("input x = 1 (0..3)\ny = x^2 - 0.9*x + 0.18\n", 4, 0.05)
	if !near(r.Crossings, (0.9-math.Sqrt(0.29))/2, (0.9+math.Sqrt(0.29))/2) || len(r.Jumps)+len(r.Unresolved) != 0 {
		t.Errorf("dip at the end: crossings %v jumps %v unresolved %v", r.Crossings, r.Jumps, r.Unresolved)
	}
	// A dip where the outputs at the points fall all the way to the
	// crossing after it, so that no point is nearer the target than both
	// its neighbours: (x - 1.2)(x - 1.7)(3.05 - x) on 0..4 in 5 points is
	// 6.222, 0.287, 0.252, 0.117, -6.118; its roots are 1.2, 1.7 and 3.05
	// (algebra, common practice). Only the slopes at 1 and 2 show the dip.
	r = sweep("input x = 1 (0..4)\ny = (x - 1.2) * (x - 1.7) * (3.05 - x)\n", 5, 0)
	if !near(r.Crossings, 1.2, 1.7, 3.05) || len(r.Jumps)+len(r.Unresolved) != 0 {
		t.Errorf("dip on a falling line: crossings %v jumps %v unresolved %v, want [1.2 1.7 3.05]", r.Crossings, r.Jumps, r.Unresolved)
	}
	// A step inside the dip: 4(x - 1.5)² - 0.5 below 1.5 crosses 0 at
	// 1.5 - √0.125, then steps up by 1 at 1.5 and stays above 0 (algebra,
	// common practice; the step from the model's condition).
	r = sweep("input x = 1 (0..3)\ny = 4*(x - 1.5)^2 - 0.5 + if(x < 1.5, 0, 1)\n", 4, 0)
	if !near(r.Crossings, 1.5-math.Sqrt(0.125)) || len(r.Jumps) != 1 || r.Jumps[0].Pole ||
		!scalar.EqualWithinAbsOrRel(r.Jumps[0].Value, 1.5, 1e-12, 1e-12) || len(r.Unresolved) != 0 {
		t.Errorf("step in a dip: crossings %v jumps %+v unresolved %v, want [1.5-√0.125] and a step at 1.5", r.Crossings, r.Jumps, r.Unresolved)
	}
	// The model fails inside the dip (sqrt of a negative number for
	// |x - 1.5| < 0.05), where the search first looks: the span is
	// unresolved, naming the failure, and no crossing is claimed there.
	r = sweep("input x = 1 (0..3)\ny = 4*(x - 1.5)^2 - 0.5 + 1e-9*sqrt(abs(x - 1.5) - 0.05)\n", 4, 0)
	if len(r.Unresolved) != 1 || r.Unresolved[0].Low != 1 || r.Unresolved[0].High != 2 || !strings.Contains(r.Unresolved[0].Reason, "square root") {
		t.Errorf("failure in a dip: crossings %v unresolved %+v, want 1..2 unresolved by the square root", r.Crossings, r.Unresolved)
	}
}
