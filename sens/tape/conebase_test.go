package tape

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// rebaseAgrees moves one Cones of output o, keeping its cones (Memo),
// over several base points near x, and checks each point that changes one
// input against evalRef (the full pass) at the same point: the same
// value to the last bit, the same error. A base point that fails must
// fail Rebase. It returns the points checked.
func rebaseAgrees(t *testing.T, name string, tp *Tape, x []float64, o int, rng *rand.Rand) (points int) {
	t.Helper()
	nIn := tp.NumInputs()
	c, err := tp.Cones(x, o)
	if err != nil {
		return 0
	}
	c.Memo()
	inputs := []int{rng.IntN(nIn), rng.IntN(nIn), rng.IntN(nIn), nIn - 1}
	for b := range 6 {
		base := slices.Clone(x)
		for j := range base {
			base[j] *= 1 + 0.3*(rng.Float64()-0.5)
		}
		if b == 5 {
			base[rng.IntN(nIn)] = -2 // out of some operations' domains
		}
		_, bad, _ := evalRef(tp, [][]float64{base}, o)
		if err := c.Rebase(base); (err != nil) != (bad >= 0) {
			t.Errorf("%s output %d, base %d: Rebase error %v, reference fails: %v", name, o, b, err, bad >= 0)
			continue
		} else if err != nil {
			continue
		}
		if got, want, _ := evalRef(tp, [][]float64{base}, o); c.Base() != got[0] {
			t.Errorf("%s output %d, base %d: %v, reference %v", name, o, b, c.Base(), want)
		}
		for _, i := range inputs {
			const n = 5
			vi := make([]float64, n)
			pts := make([][]float64, n)
			for s := range pts {
				vi[s] = base[i] * (1 + 0.25*float64(s-2))
				if s == 4 {
					vi[s] = -3
				}
				pts[s] = slices.Clone(base)
				pts[s][i] = vi[s]
			}
			want, bad, wantErr := evalRef(tp, pts, o)
			got := make([]float64, n)
			if d := agree(got, c.Eval(got, i, vi, -1, nil, n), want, bad, wantErr); d != "" {
				t.Errorf("%s output %d, base %d, input %d: %s", name, o, b, i, d)
			}
			points += n
		}
	}
	return points
}

// Cones moved from base to base (Rebase) with their cones kept (Memo)
// agree with the full pass, on random vector models, the shapes of a bid
// and random scalar formulas.
func TestConesRebase(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	var points int
	for seed := range uint64(60) {
		nmax := 40
		if seed%4 == 0 {
			nmax = 500
		}
		b := NewBuilder()
		outs, x := randomVecModelN(b, seed, nmax)
		tp := b.Tape(outs...)
		for o := range tp.NumOutputs() {
			points += rebaseAgrees(t, fmt.Sprintf("seed %d", seed), tp, x, o, rng)
		}
	}
	for _, n := range []int{9, 300} {
		tp, x := lineModel(n)
		for o := range tp.NumOutputs() {
			points += rebaseAgrees(t, fmt.Sprintf("%d lines", n), tp, x, o, rng)
		}
	}
	g := &rgen{rng: rand.New(rand.NewPCG(5, 55)), nIn: 3}
	for f := range 300 {
		tp := g.expr(4).tape(3, int32(f))
		points += rebaseAgrees(t, fmt.Sprintf("formula %d", f), tp, []float64{0.7, 1.3, 2.1}, 0, rng)
	}
	if points < 5000 {
		t.Errorf("%d points: the test covers too little", points)
	}
}
