package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// A roll-up Σ q_i p_i: its value against a plain Go loop, and its partial
// derivatives: ∂/∂q_i = p_i and ∂/∂p_i = q_i (calculus, common practice).
func TestLoopDotPartials(t *testing.T) {
	const n = 1000
	b := NewBuilder()
	q, p := b.VecInput(n), b.VecInput(n)
	tp := b.Tape(b.Sum(b.Map(OpMul, q, p)))
	if len(tp.p.loops) != 1 || tp.p.loops[0].kind != loopDot {
		t.Fatalf("sum of a product is %d loop nodes (%v), want one dot product", len(tp.p.loops), tp.p.loops)
	}
	x := make([]float64, 2*n)
	want := 0.0
	for i := range n {
		x[i], x[n+i] = float64(i%17)+0.5, 3.25-float64(i%5)
		want += x[i] * x[n+i]
	}
	g := make([]float64, 2*n)
	got, err := tp.Gradient(g, x, 0)
	if err != nil || got != want {
		t.Fatalf("Σ q p = %v (%v), want %v", got, err, want)
	}
	for i := range n {
		if g[i] != x[n+i] || g[n+i] != x[i] {
			t.Fatalf("line %d: ∂/∂q = %v, ∂/∂p = %v, want %v and %v", i, g[i], g[n+i], x[n+i], x[i])
		}
	}
	// One loop node, not one operation per line: the tape holds the
	// inputs and the dot product's slot.
	if tp.Len() != 2*n+1 {
		t.Errorf("tape of %d slots, want %d", tp.Len(), 2*n+1)
	}
}

// Every kind of loop node against gonum central differences.
func TestLoopGradientsAgainstFD(t *testing.T) {
	const n = 9
	build := func(b *Builder) (Slot, []float64) {
		v, w := b.VecInput(n), b.VecInput(n)
		s := b.Input()
		// (v·w + Σ ln(v) s + min(w) - max(v / s) + Σ_groups sqrt(g) + filtered sum) ...
		dot := b.Dot(v, w)
		lns := b.Sum(b.Map(OpMul, b.Map(OpLn, v), s))
		mn := b.Reduce(OpMin, w)
		mx := b.Reduce(OpMax, b.Map(OpDiv, v, s))
		grp := b.GroupSum(b.Map(OpGrowth, b.Const(0.07), w), []int{0, 1, 2, 0, 1, 2, 0, 0, 1}, 3)
		sq := b.Sum(b.Map(OpSqrt, grp))
		kept := b.Sum(b.Gather(b.Map(OpSquare, v), []int{1, 3, 4, 8, 2}))
		iff := b.Sum(b.Map(OpIf, b.Map(OpGt, v, b.Const(3)), w, b.Map(OpNeg, v)))
		out := b.Fold(OpAdd, dot, lns, mn, b.Unary(OpNeg, mx), sq, kept, iff)
		x := make([]float64, 2*n+1)
		for i := range n {
			x[i], x[n+i] = 1.1+0.37*float64(i), 0.4+0.29*float64((i*5)%n)
		}
		x[2*n] = 1.7
		return out, x
	}
	b := NewBuilder()
	b.SetLoopMin(1)
	out, x := build(b)
	tp := b.Tape(out)
	if len(tp.p.loops) < 8 {
		t.Fatalf("only %d loop nodes", len(tp.p.loops))
	}
	g := make([]float64, len(x))
	if _, err := tp.Gradient(g, x, 0); err != nil {
		t.Fatal(err)
	}
	ref := tapeFD(tapeFunc(tp, 0), x, 1)
	for j := range g {
		if !scalar.EqualWithinAbsOrRel(g[j], ref[j], 1e-6, 1e-6) {
			t.Errorf("∂/∂x%d = %.10g, fd %.10g", j, g[j], ref[j])
		}
	}
	// The same model built from scalar operations gives the same bits.
	e := NewBuilder()
	e.SetLoopMin(math.MaxInt)
	eout, _ := build(e)
	te := e.Tape(eout)
	if len(te.p.loops) != 0 {
		t.Fatalf("the scalar build has %d loop nodes", len(te.p.loops))
	}
	loopsAgree(t, "fd model", tp, te, x)
}

// loopsAgree checks that two tapes of the same model, one with loop nodes
// and one without, give the same outputs and gradients to the bit, by
// every pass.
func loopsAgree(t *testing.T, name string, tp, te *Tape, x []float64) {
	t.Helper()
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || a != a && b != b }
	sameAll := func(a, b []float64) bool { return slices.EqualFunc(a, b, same) }
	for i := range tp.NumOutputs() {
		g1, g2 := make([]float64, len(x)), make([]float64, len(x))
		v1, err1 := tp.Gradient(g1, x, i)
		v2, err2 := te.Gradient(g2, x, i)
		if (err1 == nil) != (err2 == nil) {
			t.Errorf("%s output %d: errors %v and %v", name, i, err1, err2)
			continue
		}
		if err1 != nil {
			var d1, d2 *DomainError
			if !errors.As(err1, &d1) || !errors.As(err2, &d2) || d1.Pos != d2.Pos || d1.Msg != d2.Msg {
				t.Errorf("%s output %d: errors %v and %v", name, i, err1, err2)
			}
			continue
		}
		if !same(v1, v2) || !sameAll(g1, g2) {
			t.Errorf("%s output %d: loops %v %v, scalar %v %v", name, i, v1, g1, v2, g2)
			continue
		}
		// The batched passes over a few samples near x, against the
		// scalar passes of the loop tape.
		const n = 20
		xs := make([]float64, 0, n*len(x))
		for s := range n {
			for _, v := range x {
				xs = append(xs, v*(1+1e-3*float64(s%5-2)))
			}
		}
		for _, tt := range []*Tape{tp, te} {
			out, grads := make([]float64, n), make([]float64, n*len(x))
			if err := tt.GradientBatch(out, grads, xs, n, i); err != nil {
				t.Errorf("%s output %d batched: %v", name, i, err)
				continue
			}
			for s := range n {
				xv := xs[s*len(x) : (s+1)*len(x)]
				v, err := tp.Gradient(g1, xv, i)
				if err != nil || !same(out[s], v) || !sameAll(grads[s*len(x):(s+1)*len(x)], g1) {
					t.Errorf("%s output %d sample %d: batched %v, scalar %v (%v)", name, i, s, out[s], v, err)
					break
				}
			}
		}
	}
}

// Random models of vectors, built with loop nodes and from scalar
// operations, agree to the bit in value and gradient.
func TestLoopsAgreeWithScalarOps(t *testing.T) {
	for seed := range uint64(200) {
		build := func(b *Builder) ([]Slot, []float64) { return randomVecModel(b, seed) }
		b := NewBuilder()
		outs, x := build(b)
		e := NewBuilder()
		e.SetLoopMin(math.MaxInt)
		eouts, _ := build(e)
		tp, te := b.Tape(outs...), e.Tape(eouts...)
		if len(te.p.loops) != 0 {
			t.Fatal("the scalar build has loop nodes")
		}
		loopsAgree(t, "seed "+string(rune('A'+seed%26)), tp, te, x)
	}
}

// randomVecModel builds a random model over vectors of one length: maps
// of the arithmetic, economy and step operations with scalars broadcast,
// reductions, filters and group sums; its outputs are scalars: sums and
// single elements.
func randomVecModel(b *Builder, seed uint64) ([]Slot, []float64) {
	return randomVecModelN(b, seed, 40)
}

// randomVecModelN is randomVecModel with vectors of 2 to nmax+1 elements.
func randomVecModelN(b *Builder, seed uint64, nmax int) ([]Slot, []float64) {
	rng := rand.New(rand.NewPCG(seed, 99))
	n := 2 + rng.IntN(nmax)
	nv, ns := 2+rng.IntN(3), 1+rng.IntN(3)
	var vecs, scal []Slot
	var x []float64
	for range nv {
		vecs = append(vecs, b.VecInput(n))
		for range n {
			x = append(x, 0.5+2*rng.Float64())
		}
	}
	for range ns {
		scal = append(scal, b.Input())
		x = append(x, 0.5+2*rng.Float64())
	}
	cs := make([]float64, n)
	for j := range cs {
		cs[j] = 0.3 + 1.7*rng.Float64()
	}
	vecs = append(vecs, b.VecConst(cs))
	scal = append(scal, b.Const(0.75))
	pickV := func() Slot { return vecs[rng.IntN(len(vecs))] }
	pickS := func() Slot { return scal[rng.IntN(len(scal))] }
	operand := func() Slot {
		if rng.IntN(3) == 0 {
			return pickS()
		}
		return pickV()
	}
	binOps := []Op{OpAdd, OpSub, OpMul, OpDiv, OpMin, OpMax, OpPow, OpGrowth, OpDiscount, OpAnnuityPV}
	unOps := []Op{OpNeg, OpSqrt, OpExp, OpLn, OpAbs, OpSquare, OpAtan, OpFloor}
	var outs []Slot
	for range 6 + rng.IntN(8) {
		var v Slot
		switch r := rng.IntN(10); {
		case r < 4:
			op := binOps[rng.IntN(len(binOps))]
			a, c := pickV(), operand()
			if rng.IntN(2) == 0 {
				a, c = c, a
				if _, ok := b.IsVec(a); ok && op == OpPow {
					a, c = c, a
				}
			}
			if op == OpPow || op == OpGrowth || op == OpDiscount || op == OpAnnuityPV {
				// keep the values in a range where these stay finite
				v = b.Map(op, b.Map(OpDiv, pickV(), b.Const(9)), b.Map(OpAbs, b.Map(OpMin, pickV(), b.Const(3))))
			} else {
				v = b.Map(op, a, c)
			}
		case r < 6:
			v = b.Map(unOps[rng.IntN(len(unOps))], b.Map(OpAdd, pickV(), b.Const(0.5)))
		case r < 7:
			v = b.Map(OpIf, b.Map(OpGt, pickV(), pickS()), pickV(), operand())
		case r < 8:
			// The scalar build shares single elements between a filtered
			// vector and the whole (the first sum of a filter's elements
			// may be the whole vector's); loop nodes do not, and a shared
			// element passes its adjoint back once instead of twice, which
			// can round differently. The filters here take their elements
			// last first and feed a sum of their own.
			var idx []int
			for j := n - 1; j >= 0; j-- {
				if rng.IntN(3) > 0 {
					idx = append(idx, j)
				}
			}
			if len(idx) == 0 {
				idx = []int{n - 1}
			}
			outs = append(outs, b.Binary(OpMul, b.Sum(b.Gather(pickV(), idx)), pickS()))
			continue
		case r < 9:
			// Groups of two or more in turn, for the same reason.
			ng := 2 + rng.IntN(min(n-1, 4))
			groups := make([]int, n)
			for j := range groups {
				groups[j] = j % ng
			}
			v = b.GroupSum(pickV(), groups, ng)
			outs = append(outs, b.Sum(b.Map(OpSqrt, v)))
			continue
		default:
			outs = append(outs, b.Reduce([]Op{OpMin, OpMax}[rng.IntN(2)], pickV()))
			continue
		}
		// A constant vector folded from others may hold 0, 1 or 2, for
		// which the scalar build simplifies element by element (x*1 is x)
		// and so adds the reverse pass's terms in another order: keep
		// only the vectors that depend on inputs.
		if nn, ok := b.IsVec(v); ok && nn == n {
			if _, konst := b.VecConsts(v); !konst {
				vecs = append(vecs, v)
			}
		}
	}
	for range 3 {
		v := pickV()
		outs = append(outs, b.Sum(v), b.Dot(v, pickV()), b.Elem(v, rng.IntN(n)))
	}
	return outs, x
}

// Tracing goes element by element: an output that uses one element of a
// vector depends on that element's inputs only, and a map of a step
// operation on its path is reported.
func TestLoopTracing(t *testing.T) {
	b := NewBuilder()
	b.SetLoopMin(1)
	v, w := b.VecInput(6), b.VecInput(6)
	s := b.Input()
	b.SetPos(5)
	prod := b.Map(OpMul, v, w)
	b.SetPos(6)
	fl := b.Map(OpFloor, b.Map(OpMul, v, s))
	b.SetPos(7)
	tp := b.Tape(b.Elem(prod, 3), b.Sum(fl), b.Elem(prod, 0), b.Binary(OpAdd, b.Elem(fl, 2), b.Elem(prod, 5)))
	for i, want := range [][]int{{3, 9}, {0, 1, 2, 3, 4, 5, 12}, {0, 6}, {2, 5, 11, 12}} {
		if got := tp.InputDeps(i); !slices.Equal(got, want) {
			t.Errorf("InputDeps(%d) = %v, want %v", i, got, want)
		}
	}
	for i, want := range [][]int32{nil, {6}, nil, {6}} {
		if got := tp.StepOps(i); !slices.Equal(got, want) {
			t.Errorf("StepOps(%d) = %v, want %v", i, got, want)
		}
	}
	// An element in the middle of a loop node's result as the output: its
	// value and gradient.
	x := []float64{1, 2, 3, 4, 5, 6, 10, 20, 30, 40, 50, 60, 0.5}
	g := make([]float64, len(x))
	if y, err := tp.Gradient(g, x, 0); err != nil || y != 160 || g[3] != 40 || g[9] != 4 || floatsSum(g) != 44 {
		t.Errorf("v[3]*w[3] = %v (%v), gradient %v", y, err, g)
	}
	// Stale adjoints in lanes past the output do not leak into the next
	// gradient.
	if _, err := tp.Gradient(g, x, 1); err != nil {
		t.Fatal(err)
	}
	if y, err := tp.Gradient(g, x, 2); err != nil || y != 10 || g[0] != 10 || g[6] != 1 || floatsSum(g) != 11 {
		t.Errorf("v[0]*w[0] = %v (%v), gradient %v", y, err, g)
	}
}

func floatsSum(xs []float64) float64 {
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s
}

// A non-finite value in a loop node names the element, the operation and
// its operands; in the reverse pass too; and in a batch, the sample.
func TestLoopDomainErrors(t *testing.T) {
	b := NewBuilder()
	b.SetLoopMin(1)
	v := b.VecInput(5)
	b.SetPos(31)
	lv := b.Map(OpLn, v)
	b.SetPos(32)
	tp := b.Tape(b.Sum(lv), b.Sum(b.Map(OpSqrt, v)))
	var de *DomainError
	x := []float64{1, 2, -3, 4, 5}
	if err := tp.Forward(x); !errors.As(err, &de) || de.Pos != 31 || de.Element != 3 || de.Msg != "ln of a negative number (-3)" || de.Op != OpLn {
		t.Errorf("ln of element 3: %v (%+v)", err, de)
	}
	x[2] = 0
	if _, err := tp.Gradient(make([]float64, 5), x, 1); !errors.As(err, &de) || !de.Reverse || de.Element != 3 || de.Msg != "derivative of sqrt is infinite at 0" {
		t.Errorf("sqrt at 0 in element 3: %v (%+v)", err, de)
	}
	xs := []float64{1, 2, 3, 4, 5, 1, 2, -3, 4, 5}
	if err := tp.ForwardBatch(make([]float64, 2), xs, 2, 0); !errors.As(err, &de) || de.Sample != 1 || de.Element != 3 {
		t.Errorf("batched: %v (%+v)", err, de)
	}
	// A sum that overflows.
	b = NewBuilder()
	b.SetLoopMin(1)
	v = b.VecInput(4)
	tp = b.Tape(b.Sum(v))
	if err := tp.Forward([]float64{1e308, 1e308, 1e308, 1}); !errors.As(err, &de) || de.Msg != "a sum of 4 elements is +Inf" {
		t.Errorf("overflowing sum: %v", err)
	}
	// A NaN in an element that a filter drops is not an error.
	b = NewBuilder()
	b.SetLoopMin(1)
	v = b.VecInput(5)
	tp = b.Tape(b.Sum(b.Gather(b.Map(OpLn, v), []int{0, 1, 3, 4})))
	if err := tp.Forward([]float64{1, 1, -1, 1, 1}); err != nil {
		t.Errorf("NaN in a dropped element: %v", err)
	}
}

// The builder folds constant vectors, simplifies as Binary does, and
// refuses a vector where a scalar belongs.
func TestLoopBuilder(t *testing.T) {
	b := NewBuilder()
	b.SetLoopMin(1)
	v := b.VecInput(5)
	c := b.VecConst([]float64{1, 2, 3, 4, 5})
	if got := b.Map(OpMul, v, b.Const(1)); got != v {
		t.Error("v*1 is not v")
	}
	if got := b.Map(OpAdd, b.Const(0), v); got != v {
		t.Error("0+v is not v")
	}
	if got := b.Map(OpNeg, b.Map(OpNeg, v)); got != v {
		t.Error("-(-v) is not v")
	}
	if vs, ok := b.VecConsts(b.Map(OpMul, c, b.Const(2))); !ok || !slices.Equal(vs, []float64{2, 4, 6, 8, 10}) {
		t.Errorf("2c folds to %v %v", vs, ok)
	}
	if s, ok := b.IsConst(b.Sum(c)); !ok || s != 15 {
		t.Errorf("Σc folds to %v %v", s, ok)
	}
	if vs, ok := b.VecConsts(b.GroupSum(c, []int{1, 0, 1, 0, 1}, 2)); !ok || !slices.Equal(vs, []float64{6, 9}) {
		t.Errorf("group sums of c: %v %v", vs, ok)
	}
	b.Map(OpPow, v, b.Const(2))
	if l := b.loops[len(b.loops)-1]; l.op != OpSquare {
		t.Errorf("v^2 is a map of %v, want OpSquare", l.op)
	}
	b.Map(OpPow, v, b.Const(3))
	if l := b.loops[len(b.loops)-1]; l.op != OpPowConst {
		t.Errorf("v^3 is a map of %v, want OpPowConst", l.op)
	}
	for name, f := range map[string]func(){
		"scalar op on a vector": func() { b.Binary(OpAdd, v, v) },
		"mismatched lengths":    func() { b.Map(OpAdd, v, b.VecInput(4)) },
		"no vector":             func() { b.Map(OpAdd, b.Const(1), b.Input()) },
		"gather out of range":   func() { b.Gather(v, []int{5}) },
		"empty group":           func() { b.GroupSum(v, []int{0, 0, 0, 0, 2}, 3) },
		"element out of range":  func() { b.Elem(v, 5) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

// BenchmarkLoopMin compares a map and sum over short vectors built as a
// loop node and as scalar operations: the crossover that DefaultLoopMin
// is set from.
func BenchmarkLoopMin(b *testing.B) {
	for _, n := range []int{4, 6, 8, 16, 64} {
		for _, loops := range []bool{true, false} {
			name := "scalar"
			if loops {
				name = "loop"
			}
			b.Run(name+"/"+strconv.Itoa(n), func(b *testing.B) {
				bl := NewBuilder()
				bl.SetLoopMin(1)
				if !loops {
					bl.SetLoopMin(math.MaxInt)
				}
				// Independent short roll-ups, 4096 elements in all, as in a
				// model of many small vectors.
				var outs []Slot
				for range 4096 / n {
					v, w := bl.VecInput(n), bl.VecInput(n)
					outs = append(outs, bl.Sum(bl.Map(OpAdd, bl.Map(OpMul, v, w), v)))
				}
				tp := bl.Tape(bl.Fold(OpAdd, outs...))
				x := make([]float64, tp.NumInputs())
				for i := range x {
					x[i] = 1 + float64(i%7)
				}
				b.ReportAllocs()
				for b.Loop() {
					if err := tp.Forward(x); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// A map of a vector and one of its own elements as the scalar (v * v[3],
// v + v[3], v − v[3]) read through a dot product, whose adjoint differs
// element by element, and through a sum, whose adjoint is one for all:
// the reverse pass of a map by a scalar held the scalar's adjoint in a
// register while it added the vector's, so the element's own amount was
// lost (∂/∂v3 of Σ w_j v_j v_3 came out 43.125 instead of 46.375), and the
// sum's pass added the amounts in another order than GradientBatch (found
// by FuzzEvalPaths). The reference is the same computation built of
// scalar operations (SetLoopMin), and the derivative by hand: ∂/∂v3 of
// Σ_j w_j v_j v_3 is Σ_j w_j v_j + w_3 v_3 (calculus).
func TestMapByOwnElement(t *testing.T) {
	build := func(loopMin int, op Op, dot bool) *Tape {
		b := NewBuilder()
		b.SetLoopMin(loopMin)
		v := b.VecInput(9)
		w := b.VecInput(9)
		m := b.Map(op, v, b.Elem(v, 3))
		if dot {
			return b.Tape(b.Dot(m, w))
		}
		return b.Tape(b.Binary(OpAdd, b.Sum(m), b.Elem(w, 0)))
	}
	x := make([]float64, 18)
	for i := range x {
		x[i] = float64(i+1)/4 + 1e-3*float64(i*i)
	}
	for _, op := range []Op{OpMul, OpAdd, OpSub} {
		for _, dot := range []bool{true, false} {
			tp, ref := build(2, op, dot), build(1<<30, op, dot)
			got, want, batch := make([]float64, 18), make([]float64, 18), make([]float64, 18)
			fg, eg := tp.Gradient(got, x, 0)
			fw, ew := ref.Gradient(want, x, 0)
			out := make([]float64, 1)
			eb := tp.GradientBatch(out, batch, x, 1, 0)
			if eg != nil || ew != nil || eb != nil || fg != fw || out[0] != fw {
				t.Fatalf("%v dot %v: %v %v, %v %v, batch %v %v", op, dot, fg, eg, fw, ew, out[0], eb)
			}
			for j := range got {
				if !closeGrad(got[j], want[j]) || !sameBits(got[j], batch[j]) {
					t.Errorf("%v dot %v: ∂/∂x%d %v, scalar build %v, GradientBatch %v", op, dot, j, got[j], want[j], batch[j])
				}
			}
			if op == OpMul && dot {
				h := x[3] * x[9+3]
				for j := range 9 {
					h += x[j] * x[9+j]
				}
				if math.Abs(got[3]-h) > 1e-12*h {
					t.Errorf("∂/∂v3 of Σ w_j v_j v_3 is %v, by hand %v", got[3], h)
				}
			}
		}
	}
}
