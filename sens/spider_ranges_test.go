package sens

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestSpiderOwnRanges: y = 2a + b with a = 10 over its stated range 5..20
// and b = 5 over ±20%, five points a line. By hand: a runs 5, 7.5, 10, 15, 20
// (half the points below the baseline, half above), giving y = 15, 20, 25,
// 35, 45 at -50%, -25%, 0%, +50%, +100%; b runs 4, 4.5, 5, 5.5, 6, giving
// 24 .. 26.
func TestSpiderOwnRanges(t *testing.T) {
	p := compileSrc(t, "input a = 10 (5..20)\ninput b = 5 (±20%)\ny = 2*a + b\n")
	pr, err := p.Problem("y")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Spider(pr, &SpiderSettings{OwnRanges: true, Points: 5})
	if err != nil {
		t.Fatal(err)
	}
	if !res.OwnRanges || len(res.Inputs) != 2 || res.Inputs[0].Name != "a" {
		t.Fatalf("result %+v", res)
	}
	a := res.Inputs[0]
	wantX := []float64{5, 7.5, 10, 15, 20}
	wantY := []float64{15, 20, 25, 35, 45}
	wantP := []float64{-50, -25, 0, 50, 100}
	for j, pt := range a.Points {
		if !scalar.EqualWithinAbsOrRel(pt.Input, wantX[j], 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(pt.Output, wantY[j], 1e-12, 1e-12) ||
			!scalar.EqualWithinAbsOrRel(pt.Pct, wantP[j], 1e-12, 1e-12) {
			t.Errorf("a point %d: %+v, want %v → %v at %v%%", j, pt, wantX[j], wantY[j], wantP[j])
		}
	}
	if a.Spread != 30 || a.Low != 5 || a.High != 20 || a.Source != RangeExplicit {
		t.Errorf("a: spread %v, range %v..%v from %s", a.Spread, a.Low, a.High, a.Source)
	}
	if b := res.Inputs[1]; !scalar.EqualWithinAbsOrRel(b.Spread, 2, 1e-12, 1e-12) || b.Source != RangePercent {
		t.Errorf("b: %+v", b)
	}
}
