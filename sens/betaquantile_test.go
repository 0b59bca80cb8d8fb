package sens

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestBetaTable compares the tabulated Beta quantile with gonum's
// (v0.17.0) Beta.Quantile at random points and at both ends, for the shapes
// a PERT can have (alpha, beta from 1 to 5), within 1e-9 on [0, 1].
func TestBetaTable(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, ab := range [][2]float64{{1, 5}, {5, 1}, {2, 4}, {5.0 / 3, 13.0 / 3}, {3, 3}, {1, 1}, {1.01, 4.99}} {
		b := distuv.Beta{Alpha: ab[0], Beta: ab[1]}
		tab := newBetaTable(b)
		worst := 0.0
		us := []float64{1e-12, 1e-6, 1.0 / betaCells, 0.5, 1 - 1e-6, 1 - 1e-12}
		for range 20000 {
			us = append(us, rng.Float64())
		}
		for _, u := range us {
			worst = math.Max(worst, math.Abs(tab.Quantile(u)-b.Quantile(u)))
		}
		if worst > 1e-9 {
			t.Errorf("Beta(%g, %g): largest difference from gonum %g", ab[0], ab[1], worst)
		}
		exact := 0
		for _, e := range tab.exact {
			if e {
				exact++
			}
		}
		if exact > betaCells/10 {
			t.Errorf("Beta(%g, %g): %d of %d cells fall back to gonum", ab[0], ab[1], exact, betaCells)
		}
	}
}
