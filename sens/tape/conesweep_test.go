package tape

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestEvalPointsAgreesWithTape checks Cones.EvalPoints, by a sweep and run
// by run, against run, the tape's reference pass, to the last bit, on
// random formulas at batches of points that change one input, two, or
// none, including points with domain errors: the same values, and the
// same error at the same point.
func TestEvalPointsAgreesWithTape(t *testing.T) {
	const nIn = 4
	g := &rgen{rng: rand.New(rand.NewPCG(91, 13)), nIn: nIn}
	rng := rand.New(rand.NewPCG(7, 8))
	defer func(v, a int) { sweepCost, sweepArena = v, a }(sweepCost, sweepArena)
	var failing, tested int
	for f := 0; f < 5000; f++ {
		tp := g.expr(5).tape(nIn, int32(f))
		x0 := make([]float64, nIn)
		for i := range x0 {
			x0[i] = math.Round((rng.Float64()*6-3)*100) / 100
		}
		// Runs of points, as the one-at-a-time analyses make them.
		is, js, vi, vj, pts := randomRuns(rng, x0, 24, 3, 4)
		want, bad, wantErr := evalRef(tp, pts, 0)
		// Every other batch drops lists no node reads again after every
		// few entries.
		sweepArena = 1 << 20
		if f%2 == 0 {
			sweepArena = 16
		}
		for _, sweep := range []bool{true, false} {
			c, err := tp.Cones(x0, 0)
			if err != nil {
				break
			}
			sweepCost = 1 << 30
			if !sweep {
				sweepCost = 0
			}
			tested++
			if bad >= 0 && sweep {
				failing++
			}
			got := make([]float64, len(pts))
			if d := agree(got, c.EvalPoints(got, is, vi, js, vj), want, bad, wantErr); d != "" {
				t.Errorf("formula %d, sweep %v: %s", f, sweep, d)
			}
		}
	}
	t.Logf("%d batches, %d failing at some point", tested, failing)
	if failing < 100 || tested < 5000 {
		t.Errorf("%d batches, %d failing: the test covers too little", tested, failing)
	}
}

// refMonotone is Cones.Monotone of input i of output 0 by its definition:
// a walk over every node of the tape in order, the cone being the nodes
// the output needs that read input i or a node of the cone.
func refMonotone(tp *Tape, i int, base []float64) bool {
	p := tp.p
	if _, err := tp.Eval(base, 0); err != nil {
		panic(err)
	}
	vals := tp.vals
	need := p.reach(0)
	in := make([]bool, len(need))
	dir := make([]int8, len(need))
	if i < len(in) {
		in[i], dir[i] = true, 1
	}
	affine := true
	for k := p.start; k < len(need); k++ {
		op := p.ops[k]
		if !need[k] || op == opArg {
			continue
		}
		a, b := p.a[k], p.b[k]
		z := a
		if op.Arity() == 3 {
			z = p.a[k+1]
		}
		if !in[a] && !in[b] && !in[z] {
			continue
		}
		in[k] = true
		r, aff := opDirection(op, in[a], in[b], in[z], dir[a], dir[b], dir[z], vals[a], vals[b])
		dir[k] = r
		affine = affine && aff
	}
	out := p.outs[0]
	return affine || !in[out] || dir[out] != dirUnknown
}

// TestMonotoneCompiledAndSwept checks Monotone as the compiled cone
// (Monotone asked first) and a sweep (points of every input evaluated
// first) prove it against its definition walked over the whole tape, on
// random formulas.
func TestMonotoneCompiledAndSwept(t *testing.T) {
	const nIn = 4
	g := &rgen{rng: rand.New(rand.NewPCG(5, 31)), nIn: nIn}
	defer func(v int) { sweepCost = v }(sweepCost)
	sweepCost = 1 << 30
	var yes, no int
	for f := 0; f < 2000; f++ {
		tp := g.expr(5).tape(nIn, int32(f))
		base := []float64{0.7, -1.3, 2.1, 0.4}
		c1, err := tp.Cones(base, 0)
		if err != nil {
			continue
		}
		c2, _ := tp.Cones(base, 0)
		is, js := make([]int32, nIn), make([]int32, nIn)
		for i := range is {
			is[i], js[i] = int32(i), -1
		}
		// The base values themselves: no point can fail.
		c2.EvalPoints(make([]float64, nIn), is, base, js, make([]float64, nIn))
		for i := 0; i < nIn; i++ {
			want := refMonotone(tp.Clone(), i, base)
			if got := c1.Monotone(i); got != want {
				t.Errorf("formula %d, input %d: compiled monotone %v, want %v", f, i, got, want)
			}
			if c2.mono[i] == 0 && !c2.dirty { // a dirty base is not swept
				t.Errorf("formula %d, input %d: the sweep left monotonicity unknown", f, i)
			}
			if got := c2.Monotone(i); got != want {
				t.Errorf("formula %d, input %d: swept monotone %v, want %v", f, i, got, want)
			}
			if want {
				yes++
			} else {
				no++
			}
		}
	}
	if yes < 1000 || no < 1000 {
		t.Errorf("%d monotone, %d not: the test covers too little", yes, no)
	}
}

// TestCodeAfterRebaseAndStep checks that a compiled cone does not outlive
// its base: after Rebase and after Step (conebase.go), the points of an
// input evaluated just before are evaluated around the new base, to the
// last bit of the reference pass, on random formulas of a tape without
// loop nodes.
func TestCodeAfterRebaseAndStep(t *testing.T) {
	const nIn = 3
	g := &rgen{rng: rand.New(rand.NewPCG(17, 29)), nIn: nIn}
	tested := 0
	for f := 0; f < 1000; f++ {
		tp := g.expr(4).tape(nIn, int32(f))
		x0 := []float64{0.7, -1.3, 2.1}
		x1 := []float64{1.9, 0.4, -0.6}
		c, err := tp.Cones(x0, 0)
		if err != nil {
			continue
		}
		if _, err := tp.Clone().Eval(x1, 0); err != nil {
			continue
		}
		vi := []float64{0.25, -2.5}
		out := make([]float64, 2)
		c.Eval(out, 0, vi, -1, nil, 2) // compiles input 0's cone around x0
		if err := c.Rebase(x1); err != nil {
			t.Fatalf("formula %d: %v", f, err)
		}
		pts := [][]float64{{vi[0], x1[1], x1[2]}, {vi[1], x1[1], x1[2]}}
		want, bad, wantErr := evalRef(tp.Clone(), pts, 0)
		if d := agree(out, c.Eval(out, 0, vi, -1, nil, 2), want, bad, wantErr); d != "" {
			t.Errorf("formula %d, after Rebase: %s", f, d)
		}
		tested++
		if _, err := c.Step(1, 1.1); err != nil {
			continue
		}
		pts = [][]float64{{vi[0], 1.1, x1[2]}, {vi[1], 1.1, x1[2]}}
		want, bad, wantErr = evalRef(tp.Clone(), pts, 0)
		if d := agree(out, c.Eval(out, 0, vi, -1, nil, 2), want, bad, wantErr); d != "" {
			t.Errorf("formula %d, after Step: %s", f, d)
		}
	}
	if tested < 300 {
		t.Errorf("%d formulas tested: too few", tested)
	}
}

// randomRuns makes runs of points near x0 (runs of them; input j set
// beside input i in one run of jOneIn; up to maxRun points a run), as the
// one-at-a-time analyses make them: the arguments of EvalPoints, and each
// point whole for the reference pass.
func randomRuns(rng *rand.Rand, x0 []float64, runs, jOneIn, maxRun int) (is, js []int32, vi, vj []float64, pts [][]float64) {
	nIn := len(x0)
	for range runs {
		i := int32(rng.IntN(nIn+1)) - 1
		j := int32(-1)
		if i >= 0 && rng.IntN(jOneIn) == 0 {
			j = (i + 1 + int32(rng.IntN(nIn-1))) % int32(nIn)
		}
		for range 1 + rng.IntN(maxRun) {
			x := slices.Clone(x0)
			a, b := math.Round((rng.Float64()*12-6)*100)/100, math.Round((rng.Float64()*12-6)*100)/100
			if i >= 0 {
				x[i] = a
			}
			if j >= 0 {
				x[j] = b
			}
			is, js, vi, vj, pts = append(is, i), append(js, j), append(vi, a), append(vj, b), append(pts, x)
		}
	}
	return is, js, vi, vj, pts
}
