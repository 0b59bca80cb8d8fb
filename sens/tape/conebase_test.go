package tape

import (
	"errors"
	"fmt"
	"math"
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

// TestHiddenNaNOutsideCone: at the base, sqrt(x0) is NaN and the
// comparison sqrt(x0) == 2 hides it (it is 0) in the branch the if does
// not take; moving x1 makes the if take it, which the full pass reports as
// an error (a comparison of a NaN), though the comparison lies outside x1's
// cone. Cones, Radial and Walk must report it too, and give the full
// pass's values where the branch is not taken (x1 stays positive).
func TestHiddenNaNOutsideCone(t *testing.T) {
	b := NewBuilder()
	x0, x1 := b.Input(), b.Input()
	hid := b.Binary(OpEq, b.Unary(OpSqrt, x0), b.Const(2))
	tp := b.Tape(b.Call(OpIf, b.Binary(OpGt, x1, b.Const(0)), b.Binary(OpMul, x1, b.Const(3)), hid))
	base := []float64{-1, 1}
	vi := []float64{2, 0.5, -1, 4}
	pts := make([][]float64, len(vi))
	for s, v := range vi {
		pts[s] = []float64{-1, v}
	}
	want, bad, wantErr := evalRef(tp, pts, 0)
	if bad != 2 {
		t.Fatalf("the reference fails at point %d (%v), want 2", bad, wantErr)
	}

	c, err := tp.Cones(base, 0)
	if err != nil {
		t.Fatal(err)
	}
	got := make([]float64, len(vi))
	if d := agree(got, c.Eval(got, 1, vi, -1, nil, len(vi)), want, bad, wantErr); d != "" {
		t.Errorf("Cones: %s", d)
	}

	r, err := tp.Radial(0, []int{1})
	if err != nil {
		t.Fatal(err)
	}
	cols := [][]float64{{-1, -1, -1, -1}, {1, 1, 1, 1}}
	dst, dstAlt := make([]float64, 4), [][]float64{nil, make([]float64, 4)}
	err = r.Eval(dst, dstAlt, cols, [][]float64{nil, vi}, 4)
	var re *RadialError
	if !errors.As(err, &re) || re.Input != 1 {
		t.Errorf("Radial: %v, want the error at input 1", err)
	} else if d := agree(dstAlt[1], re.Err, want, bad, wantErr); d != "" {
		t.Errorf("Radial: %s", d)
	}

	w, err := tp.Walk(0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Start(base); err != nil {
		t.Fatal(err)
	}
	for s, v := range vi {
		y, err := w.Step(1, v)
		if s == bad {
			var de *DomainError
			if !errors.As(err, &de) || de.Msg != wantErr.Msg {
				t.Errorf("Walk, point %d: %v, want %v", s, err, wantErr)
			}
			break
		}
		if err != nil || y != want[s] {
			t.Errorf("Walk, point %d: %v %v, want %v", s, y, err, want[s])
		}
	}
}

// stepAgrees walks output o of tp from x, one input at a time (Cones.Step),
// and checks every point against evalRef: the same value to the last bit,
// the same error; after an error the walk goes on from the point before,
// where Step must have left the Cones. It returns the steps taken.
func stepAgrees(t *testing.T, name string, tp *Tape, x []float64, o int, memo bool, rng *rand.Rand) (steps, failing int) {
	t.Helper()
	nIn := tp.NumInputs()
	c, err := tp.Cones(x, o)
	if err != nil {
		return 0, 0
	}
	if memo {
		c.Memo()
	}
	x = slices.Clone(x)
	for s := range 60 {
		i := rng.IntN(nIn)
		if s%3 == 0 {
			i = nIn - 1 - rng.IntN(min(nIn, 3)) // the scalars, which reach far
		}
		v := x[i] * (1 + 0.4*(rng.Float64()-0.5))
		if rng.IntN(6) == 0 {
			v = -2 // out of some operations' domains
		}
		old := x[i]
		x[i] = v
		got, err := c.Step(i, v)
		want, bad, wantErr := evalRef(tp, [][]float64{slices.Clone(x)}, o)
		steps++
		if bad >= 0 {
			failing++
			var de *DomainError
			if !errors.As(err, &de) || de.Pos != wantErr.Pos || de.Op != wantErr.Op || de.Msg != wantErr.Msg || !slices.Equal(de.Args, wantErr.Args) {
				t.Fatalf("%s output %d, step %d (input %d): error %v, reference %v", name, o, s, i, err, wantErr)
			}
			x[i] = old
			continue
		}
		if err != nil || math.Float64bits(got) != math.Float64bits(want[0]) {
			t.Fatalf("%s output %d, step %d (input %d): %v %v, reference %v", name, o, s, i, got, err, want[0])
		}
		if c.Base() != got {
			t.Fatalf("%s output %d, step %d: base %v after the step to %v", name, o, s, c.Base(), got)
		}
	}
	return steps, failing
}

// Cones.Step walks random vector models, the shapes of a bid and random
// scalar formulas with the full pass's values and errors, with and
// without Memo.
func TestConesStep(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	var steps, failing int
	add := func(s, f int) { steps += s; failing += f }
	for seed := range uint64(80) {
		nmax := 40
		if seed%4 == 0 {
			nmax = 500
		}
		b := NewBuilder()
		outs, x := randomVecModelN(b, 300+seed, nmax)
		tp := b.Tape(outs...)
		for o := range tp.NumOutputs() {
			add(stepAgrees(t, fmt.Sprintf("seed %d", 300+seed), tp, x, o, seed%2 == 0, rng))
		}
	}
	for _, n := range []int{9, 130, 300} {
		tp, x := lineModel(n)
		for o := range tp.NumOutputs() {
			add(stepAgrees(t, fmt.Sprintf("%d lines", n), tp, x, o, true, rng))
		}
	}
	g := &rgen{rng: rand.New(rand.NewPCG(6, 66)), nIn: 3}
	for f := range 300 {
		tp := g.expr(4).tape(3, int32(f))
		add(stepAgrees(t, fmt.Sprintf("formula %d", f), tp, []float64{0.7, 1.3, 2.1}, 0, f%2 == 0, rng))
	}
	t.Logf("%d steps, %d failing", steps, failing)
	if steps < 30000 || failing < 200 {
		t.Errorf("the test covers too little: %d steps, %d failing", steps, failing)
	}
}

// TestInfInBranchNotTaken: at the base 5 / x0 is +Inf (x0 = 0) in the
// branch the if does not take; no operation but the if reads it, so the
// cones stay in use (the base is not dirty), and a point that takes the
// branch is the full pass's error, found by the if in the cone.
func TestInfInBranchNotTaken(t *testing.T) {
	b := NewBuilder()
	x0, x1 := b.Input(), b.Input()
	far := b.Binary(OpAdd, b.Binary(OpDiv, b.Const(5), x0), b.Const(1))
	tp := b.Tape(b.Call(OpIf, b.Binary(OpGt, x1, b.Const(0)), b.Binary(OpMul, x1, b.Const(3)), far))
	base := []float64{0, 1}
	vi := []float64{2, 0.5, -1, 4}
	pts := make([][]float64, len(vi))
	for s, v := range vi {
		pts[s] = []float64{0, v}
	}
	want, bad, wantErr := evalRef(tp, pts, 0)
	if bad != 2 {
		t.Fatalf("the reference fails at point %d (%v), want 2", bad, wantErr)
	}
	c, err := tp.Cones(base, 0)
	if err != nil {
		t.Fatal(err)
	}
	if c.dirty {
		t.Error("an Inf that only an if reads makes the base dirty")
	}
	got := make([]float64, len(vi))
	if d := agree(got, c.Eval(got, 1, vi, -1, nil, len(vi)), want, bad, wantErr); d != "" {
		t.Errorf("Cones: %s", d)
	}
	w, err := tp.Walk(0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Start(base); err != nil || !w.clean {
		t.Fatalf("Walk.Start: %v, clean %v", err, w.clean)
	}
	for s, v := range vi[:bad+1] {
		y, err := w.Step(1, v)
		if s == bad {
			if err == nil {
				t.Errorf("Walk, point %d: %v, want %v", s, y, wantErr)
			}
		} else if err != nil || y != want[s] {
			t.Errorf("Walk, point %d: %v %v, want %v", s, y, err, want[s])
		}
	}
}

// noInput1 replaces input 1 in e by input 2.
func noInput1(e *rexpr) *rexpr {
	if e.op == OpInput && e.in == 1 {
		return &rexpr{op: OpInput, in: 2}
	}
	for q, a := range e.args {
		e.args[q] = noInput1(a)
	}
	return e
}

// TestBranchSwitchAgrees builds random formulas if(x1 > 0, e2, e1), with e1
// free of x1 and often not finite somewhere at the base (x1 = 1, the
// branch not taken), and moves x1 so that the if takes e1: Cones, Radial,
// Walk and Cones.Step give the full pass's values and errors, whatever e1
// hides (a comparison of a NaN, a min of an Inf) or not.
func TestBranchSwitchAgrees(t *testing.T) {
	g := &rgen{rng: rand.New(rand.NewPCG(61, 62)), nIn: 3}
	rng := rand.New(rand.NewPCG(63, 64))
	var failing, dirty int
	for f := range 3000 {
		e := node(OpIf, node(OpGt, &rexpr{op: OpInput, in: 1}, kon(0)), g.expr(3), noInput1(g.expr(5)))
		tp := e.tape(3, int32(f))
		base := []float64{math.Round((rng.Float64()*6-3)*100) / 100, 1, math.Round((rng.Float64()*6-3)*100) / 100}
		c, err := tp.Cones(base, 0)
		if err != nil {
			continue
		}
		if c.dirty {
			dirty++
		}
		vi := []float64{2, -1, 0.5, -2}
		pts := make([][]float64, len(vi))
		for s, v := range vi {
			pts[s] = []float64{base[0], v, base[2]}
		}
		want, bad, wantErr := evalRef(tp, pts, 0)
		if bad >= 0 {
			failing++
		}
		got := make([]float64, len(vi))
		if d := agree(got, c.Eval(got, 1, vi, -1, nil, len(vi)), want, bad, wantErr); d != "" {
			t.Fatalf("formula %d, Cones: %s", f, d)
		}
		r, err := tp.Radial(0, []int{1})
		if err != nil {
			t.Fatal(err)
		}
		cols := [][]float64{{base[0], base[0], base[0], base[0]}, {1, 1, 1, 1}, {base[2], base[2], base[2], base[2]}}
		dst, dstAlt := make([]float64, 4), [][]float64{nil, make([]float64, 4), nil}
		err = r.Eval(dst, dstAlt, cols, [][]float64{nil, vi, nil}, 4)
		var re *RadialError
		if errors.As(err, &re) {
			err = re.Err
		}
		if d := agree(dstAlt[1], err, want, bad, wantErr); d != "" {
			t.Fatalf("formula %d, Radial: %s", f, d)
		}
		w, _ := tp.Walk(0)
		cs, _ := tp.Cones(base, 0)
		for s, v := range vi {
			if _, err := w.Start(base); err != nil {
				t.Fatal(err)
			}
			y, err := w.Step(1, v)
			y2, err2 := cs.Step(1, v)
			for name, r := range map[string]struct {
				y   float64
				err error
			}{"Walk": {y, err}, "Cones.Step": {y2, err2}} {
				switch {
				case bad >= 0 && s == bad:
					var de *DomainError
					if !errors.As(r.err, &de) || de.Msg != wantErr.Msg || de.Pos != wantErr.Pos {
						t.Fatalf("formula %d, %s, point %d: %v %v, reference %v", f, name, s, r.y, r.err, wantErr)
					}
				case bad < 0 || s < bad:
					if r.err != nil || math.Float64bits(r.y) != math.Float64bits(want[s]) {
						t.Fatalf("formula %d, %s, point %d: %v %v, reference %v", f, name, s, r.y, r.err, want[s])
					}
				}
			}
			if bad >= 0 && s >= bad {
				break
			}
			if err2 == nil {
				cs.Rebase(base)
			}
		}
	}
	t.Logf("3000 formulas: %d failing once the branch switches, %d bases dirty", failing, dirty)
	if failing < 100 || dirty < 50 {
		t.Errorf("the test covers too little: %d failing, %d dirty", failing, dirty)
	}
}
