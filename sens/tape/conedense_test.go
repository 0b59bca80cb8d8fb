package tape

import (
	"math"
	"math/rand/v2"
	"testing"
)

// denseTerm is a random term of denseSum: a random formula, or one of
// the cases the dense sums must carry through: a branch whose untaken side
// fails at some points, a guarded operation near the edge of its domain,
// a division by a value near 0.
func denseTerm(g *rgen) *rexpr {
	in := func() *rexpr { return &rexpr{op: OpInput, in: g.rng.IntN(g.nIn)} }
	switch g.rng.IntN(6) {
	case 0:
		// sqrt of a negative number where the branch is not taken.
		x := in()
		return node(OpIf, node(OpGt, x, kon(0)), node(OpSqrt, x), node(OpMul, in(), kon(2)))
	case 1:
		// ln near 0: fails at a few points.
		return node(OpLn, node(OpAdd, in(), kon(5.5)))
	case 2:
		// 1 / (x - c), c near the base: huge, infinite or failing.
		return node(OpDiv, in(), node(OpSub, in(), kon(math.Round(g.rng.Float64()*40-20)/10)))
	}
	return g.expr(3)
}

// denseSum is a sum of many random terms, so that its partial sums lie
// in the cones of most runs of a batch: the dense nodes of a sweep.
func denseSum(g *rgen, terms int) *rexpr {
	if terms >= 4 && g.rng.IntN(3) == 0 {
		// Two sums, each dense by itself.
		return node(OpAdd, denseSum(g, terms/2), denseSum(g, terms-terms/2))
	}
	e := denseTerm(g)
	for range terms - 1 {
		if g.rng.IntN(4) == 0 {
			e = node(OpAdd, denseTerm(g), e) // the sum on the right too
		} else {
			e = node(OpAdd, e, denseTerm(g))
		}
	}
	if g.rng.IntN(3) == 0 {
		e = node(OpMul, e, denseTerm(g)) // a dense operand read as a list
	}
	return e
}

// TestEvalPointsDense checks the dense nodes of a sweep (conedense.go)
// against the tape's reference pass, to the last bit, and the
// monotonicity they prove against its definition walked over the whole
// tape (refMonotone), on random sums of many terms with branches, guarded
// operations and divisions by values near 0: every sum dense, sums dense
// from a quarter of the points on, and too few arrays for every sum that
// would be dense (the others read as lists).
func TestEvalPointsDense(t *testing.T) {
	const nIn = 6
	g := &rgen{rng: rand.New(rand.NewPCG(13, 65)), nIn: nIn}
	rng := rand.New(rand.NewPCG(17, 3))
	defer func(c, a, d, b, r int) {
		sweepCost, sweepArena, denseShare, denseBudget, denseRuns = c, a, d, b, r
	}(sweepCost, sweepArena, denseShare, denseBudget, denseRuns)
	sweepCost, denseRuns = 1<<30, 0
	var failing, made, sparsified, mono int
	for f := 0; f < 1500; f++ {
		tp := denseSum(g, 4+rng.IntN(16)).tape(nIn, int32(f))
		x0 := make([]float64, nIn)
		for i := range x0 {
			x0[i] = math.Round((rng.Float64()*6-3)*100) / 100
		}
		is, js, vi, vj, pts := randomRuns(rng, x0, 2+rng.IntN(30), 4, 3)
		want, bad, wantErr := evalRef(tp, pts, 0)
		if bad >= 0 {
			failing++
		}
		switch f % 3 {
		case 0:
			denseShare, denseBudget = 1<<30, 1<<21
		case 1:
			denseShare, denseBudget = 4, 1<<21
		case 2:
			denseShare, denseBudget = 1<<30, 1 // two arrays
		}
		sweepArena = 1 << 20
		if f%2 == 0 {
			sweepArena = 16
		}
		c, err := tp.Cones(x0, 0)
		if err != nil {
			continue
		}
		got := make([]float64, len(pts))
		if d := agree(got, c.EvalPoints(got, is, vi, js, vj), want, bad, wantErr); d != "" {
			t.Errorf("formula %d: %s", f, d)
		}
		if c.sw != nil {
			made += c.sw.denseMade
			sparsified += c.sw.sparsified
		}

		// Monotonicity, from a sweep of the base values of every input.
		c2, _ := tp.Cones(x0, 0)
		is, js = make([]int32, nIn), make([]int32, nIn)
		for i := range is {
			is[i], js[i] = int32(i), -1
		}
		if c2.EvalPoints(make([]float64, nIn), is, x0, js, make([]float64, nIn)) != nil || c2.dirty {
			continue
		}
		for i := range nIn {
			if got, want := c2.Monotone(i), refMonotone(tp.Clone(), i, x0); got != want {
				t.Errorf("formula %d, input %d: swept monotone %v, want %v", f, i, got, want)
			}
			mono++
		}
	}
	t.Logf("%d dense nodes, %d read as lists, %d batches failing at some point, %d inputs' monotonicity", made, sparsified, failing, mono)
	if made < 5000 || sparsified < 500 || failing < 200 || mono < 3000 {
		t.Errorf("%d dense nodes, %d read as lists, %d failing, %d monotone checks: the test covers too little", made, sparsified, failing, mono)
	}
}
