package sens

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestSwingShares: for a linear model y = 2a + 3b - c with each range the
// support of a uniform input, the swings are |b_i| (high_i - low_i) and their
// squared shares equal the first-order variance shares
// b_i² var_i / Σ b_j² var_j (var = (high - low)²/12 for a uniform), the
// linear-model Sobol' indices of Saltelli et al., Global Sensitivity
// Analysis: The Primer (2008), §1.2.
func TestSwingShares(t *testing.T) {
	p := compileSrc(t, "input a = 0.5 (0..1)\ninput b = 1 (0..2)\ninput c = 2 (0..4)\ny = 2*a + 3*b - c\n")
	pr, err := p.Problem("y")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Tornado(pr, &TornadoSettings{Top: 2})
	if err != nil {
		t.Fatal(err)
	}
	coef := map[string]float64{"a": 2, "b": 3, "c": -1}
	width := map[string]float64{"a": 1, "b": 2, "c": 4}
	sum := 0.0
	for n := range coef {
		sum += coef[n] * coef[n] * width[n] * width[n] / 12
	}
	got := 0.0
	for _, b := range res.Bars {
		want := coef[b.Name] * coef[b.Name] * width[b.Name] * width[b.Name] / 12 / sum
		if !scalar.EqualWithinAbsOrRel(b.SwingShare, want, 1e-12, 1e-12) {
			t.Errorf("%s: share %v, want %v", b.Name, b.SwingShare, want)
		}
		got += b.SwingShare
	}
	// The bar left out by Top carries the rest: a, 4/56.
	if res.Rest == nil || !scalar.EqualWithinAbsOrRel(res.Rest.SwingShare, 4.0/56, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(got+res.Rest.SwingShare, 1, 1e-12, 1e-12) {
		t.Errorf("rest %+v; shares of the bars %v", res.Rest, got)
	}
}
