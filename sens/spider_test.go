package sens

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestSpider(t *testing.T) {
	src := `
input a = 2 (1..4)
input x = 8 (4..16)
input z = 0 (-1..1)
y = a * x^0.75 + z
`
	p := problemOf(t, src, "y")
	cf := &counting{Function: p.F}
	p.F = cf
	r, err := Spider(p, &SpiderSettings{RangePct: 30})
	if err != nil {
		t.Fatal(err)
	}
	base := 2 * math.Pow(8, 0.75)
	if !scalar.EqualWithinAbsOrRel(r.Baseline, base, 1e-12, 1e-12) || r.RangePct != 30 {
		t.Fatalf("baseline %v range %v", r.Baseline, r.RangePct)
	}
	// Spread: y is proportional to a (elasticity 1) and to x^0.75, so a's
	// line spreads wider than x's; z is 0 and its line flat.
	if len(r.Inputs) != 3 || r.Inputs[0].Name != "a" || r.Inputs[1].Name != "x" || r.Inputs[2].Name != "z" {
		t.Fatalf("lines %+v; want a, x, z by spread", r.Inputs)
	}
	for _, line := range r.Inputs {
		if len(line.Points) != DefaultSpiderPoints {
			t.Fatalf("%s: %d points", line.Name, len(line.Points))
		}
		// Every line passes through the baseline output at 0%.
		mid := line.Points[len(line.Points)/2]
		if mid.Pct != 0 || mid.Output != r.Baseline || mid.Input != line.Value {
			t.Errorf("%s at 0%%: %+v, want the baseline %v", line.Name, mid, r.Baseline)
		}
		if first, last := line.Points[0], line.Points[len(line.Points)-1]; first.Pct != -30 || last.Pct != 30 {
			t.Errorf("%s: span %v..%v", line.Name, first.Pct, last.Pct)
		}
	}
	// The output against a percentage change of a is a straight line of slope
	// base/100 per percent (y is proportional to a); against x it follows
	// (1 + q/100)^0.75 (direct evaluation of the power law).
	for _, pt := range r.Inputs[0].Points {
		if w := base * (1 + pt.Pct/100); !scalar.EqualWithinAbsOrRel(pt.Output, w, 1e-12, 1e-12) {
			t.Errorf("a at %v%%: %v, want %v", pt.Pct, pt.Output, w)
		}
	}
	for _, pt := range r.Inputs[1].Points {
		if w := base * math.Pow(1+pt.Pct/100, 0.75); !scalar.EqualWithinAbsOrRel(pt.Output, w, 1e-12, 1e-12) {
			t.Errorf("x at %v%%: %v, want %v", pt.Pct, pt.Output, w)
		}
	}
	if z := r.Inputs[2]; !z.ZeroValue || z.Spread != 0 {
		t.Errorf("z: %+v, want a flat line marked zero_value", z)
	}
	if cf.evals != 0 || cf.batches != 1 || cf.points != 1+2*12 {
		t.Errorf("evals %d, batches %d, points %d; want 0, 1, 25", cf.evals, cf.batches, cf.points)
	}

	// An even number of points is raised by one so 0% stays on the grid.
	r, err = Spider(p, &SpiderSettings{RangePct: 10, Points: 4})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{-10, -5, 0, 5, 10}
	for j, pt := range r.Inputs[0].Points {
		if pt.Pct != want[j] {
			t.Errorf("points at %v, want %v", r.Inputs[0].Points, want)
			break
		}
	}
}

// Top keeps the lines of largest spread, in the result and so in its JSON,
// and summarises the rest, as Tornado's Top does.
func TestSpiderTop(t *testing.T) {
	p := problemOf(t, "input a = 2\ninput b = 3\ninput c = 4\ny = a + 2*b + 3*c\n", "y")
	all, err := Spider(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	top, err := Spider(p, &SpiderSettings{Top: 2})
	if err != nil {
		t.Fatal(err)
	}
	// Spreads over ±30% (by hand): a 1.2, b 3.6, c 7.2.
	if len(top.Inputs) != 2 || top.Inputs[0].Name != "c" || top.Inputs[1].Name != "b" || all.Rest != nil {
		t.Fatalf("top lines %+v, rest of all %+v", top.Inputs, all.Rest)
	}
	if top.Rest == nil || top.Rest.Count != 1 || !scalar.EqualWithinAbsOrRel(top.Rest.LargestSpread, 1.2, 1e-12, 1e-12) {
		t.Errorf("rest %+v, want 1 line of spread 1.2", top.Rest)
	}
}
