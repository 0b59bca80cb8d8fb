package tape

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// FuzzEvalPaths builds a random tape from the fuzz input, over every
// operation the Builder offers (loop nodes too), and evaluates it at
// random samples that include ±0, subnormals, huge values, ±Inf and NaN.
// Every way of evaluating it must agree with the scalar pass to the bit
// and report the same domain error at the same position and sample:
//
//   - Eval (the reference) against ForwardBatch and ForwardColumns, with
//     the vector kernels on and off;
//   - Gradient against GradientBatch;
//   - Gradient over the scalar code against Gradient through reverseChain
//     (the long tapes' pass, forced by maxReverseCode), and reverseChain
//     against reverseNodes directly, non-finite adjoints included;
//   - a tape with loop nodes against the same computation built from
//     scalar operations (SetLoopMin), which its documentation promises
//     gives the same values and derivatives to the bit.
//
// The reference is the tape's own scalar pass; other tests check it
// against hand-written Go and finite differences.
func FuzzEvalPaths(f *testing.F) {
	f.Add([]byte{0x03, 0x00, 0x20, 0x41, 0x17, 0x09, 0x33, 0x54, 0x81, 0x02, 0x07, 0x11, 0xf0, 0x05})
	f.Add([]byte{0x81, 0x45, 0x99, 0x05, 0x4a, 0x31, 0x7c, 0x12, 0x90, 0x64, 0xaa, 0x18, 0x3f, 0xee, 0x01, 0x23})
	f.Add([]byte("some ordinary text that builds a tape of many operations, with loops"))
	rng := rand.New(rand.NewPCG(3, 77))
	for range 12 {
		b := make([]byte, 24+rng.IntN(80))
		for i := range b {
			b[i] = byte(rng.Uint32())
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 512 {
			return
		}
		fz := fuzzTape{data: data}
		tp, ok := fz.build(0)
		if !ok {
			return
		}
		x, n := fz.samples(tp.NumInputs())
		checkEvalPaths(t, tp, x, n)
		if fz.loops {
			// The same computation with every vector built of scalar
			// operations.
			fz2 := fuzzTape{data: data}
			ref, _ := fz2.build(1 << 30)
			if ref.NumInputs() != tp.NumInputs() {
				t.Fatalf("the scalar build has %d inputs, the loop build %d", ref.NumInputs(), tp.NumInputs())
			}
			checkSameAs(t, tp, ref, x, n)
		}
	})
}

// fuzzTape reads a tape and its samples from fuzz bytes.
type fuzzTape struct {
	data  []byte
	at    int
	loops bool
}

func (f *fuzzTape) byte() byte {
	if f.at >= len(f.data) {
		f.at++
		return 0
	}
	c := f.data[f.at]
	f.at++
	return c
}

func (f *fuzzTape) done() bool { return f.at >= len(f.data) }

// fuzzSpecials are the values a constant or an input most often takes.
var fuzzSpecials = []float64{
	0, math.Copysign(0, -1), 1, -1, 2, 0.5, 3, -2.5, 0.08, -0.08, 10, 16, 17, 0.8, 1e-3, 100,
	1e300, -1e300, 1e-300, 5e-324, -5e-324, 2.5e-310, math.MaxFloat64, -math.MaxFloat64,
	math.Inf(1), math.Inf(-1), math.NaN(), 709.5, 710, -745.5, 1 << 53, 4.5,
}

// float reads a value: a special one, a small decimal or raw bits.
func (f *fuzzTape) float() float64 {
	c := f.byte()
	switch {
	case int(c) < len(fuzzSpecials):
		return fuzzSpecials[c]
	case c < 0xf0:
		return float64(int(c)-128) / 16
	}
	var b [8]byte
	for i := range b {
		b[i] = f.byte()
	}
	return math.Float64frombits(binary.LittleEndian.Uint64(b[:]))
}

var (
	fuzzUnary = []Op{OpSquare, OpNeg, OpSqrt, OpExp, OpLn, OpLog10, OpAbs, OpFloor, OpCeil, OpRound,
		OpSin, OpCos, OpTan, OpAsin, OpAcos, OpAtan, OpNot}
	fuzzBinary = []Op{OpAdd, OpSub, OpMul, OpDiv, OpPow, OpPowConst, OpMin, OpMax, OpLt, OpLe, OpGt, OpGe,
		OpEq, OpNe, OpAnd, OpOr, OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking,
		OpGradientPV, OpGradientUniform, OpAdd, OpSub, OpMul, OpDiv}
	fuzzTernary = []Op{OpIf, OpIf, OpLearn, OpLearnTotal}
)

// build builds the tape; loopMin is passed to SetLoopMin. It reports
// false for an input too short to build anything.
func (f *fuzzTape) build(loopMin int) (*Tape, bool) {
	if len(f.data) < 4 {
		return nil, false
	}
	b := NewBuilder()
	b.SetLoopMin(loopMin)
	head := f.byte()
	nIn := 1 + int(head%4)
	var vals []Slot
	for i := range nIn {
		b.SetPos(int32(i))
		vals = append(vals, b.Input())
	}
	var vecs []Slot
	vlen := 0
	if head&0x80 != 0 {
		f.loops = true
		if loopMin == 0 {
			loopMin = 2
			b.SetLoopMin(loopMin)
		}
		vlen = 1 + int(f.byte()%10)
		b.SetPos(int32(nIn))
		vecs = append(vecs, b.VecInput(vlen))
	}
	pick := func() Slot {
		c := f.byte()
		switch {
		case c < 40:
			b.SetPos(int32(1000 + f.at))
			return b.Const(f.float())
		case c < 200:
			return vals[len(vals)-1-int(c)%min(len(vals), 4)]
		}
		return vals[int(c)%len(vals)]
	}
	pickVec := func() Slot {
		c := f.byte()
		if c < 30 {
			cs := make([]float64, vlen)
			// Finite: over an infinite constant the scalar build folds
			// step by step and keeps the Inf of min(Inf, Inf) as a node
			// that min(·, 0) then reports, where the loop build folds
			// the whole reduction to 0.
			for j := range cs {
				if cs[j] = f.float(); !finite(cs[j]) {
					cs[j] = 1
				}
			}
			return b.VecConst(cs)
		}
		return vecs[len(vecs)-1-int(c)%min(len(vecs), 3)]
	}
	// A vector argument, or a scalar (at least one must be a vector).
	vecArg := func(first bool) Slot {
		if !first && f.byte()%3 == 0 {
			return pick()
		}
		return pickVec()
	}
	nOps := 1 + int(f.byte()%48)
	for k := 0; k < nOps && !f.done(); k++ {
		b.SetPos(int32(100 + k))
		c := f.byte()
		var v Slot
		if f.loops && c >= 200 {
			switch c % 8 {
			case 0, 1:
				op := fuzzUnary[int(f.byte())%len(fuzzUnary)]
				vecs = append(vecs, b.Map(op, pickVec()))
			case 2, 3:
				op := fuzzBinary[int(f.byte())%len(fuzzBinary)]
				if op == OpPowConst {
					vecs = append(vecs, b.Map(op, pickVec(), b.Const(f.float())))
				} else if f.byte()%2 == 0 {
					vecs = append(vecs, b.Map(op, vecArg(true), vecArg(false)))
				} else {
					vecs = append(vecs, b.Map(op, vecArg(false), vecArg(true)))
				}
			case 4:
				op := fuzzTernary[int(f.byte())%len(fuzzTernary)]
				vecs = append(vecs, b.Map(op, vecArg(true), vecArg(false), vecArg(false)))
			case 5:
				vals = append(vals, b.Sum(pickVec()))
			case 6:
				vals = append(vals, b.Reduce([]Op{OpMin, OpMax}[f.byte()%2], pickVec()))
			default:
				switch f.byte() % 3 {
				case 0:
					vals = append(vals, b.Dot(pickVec(), pickVec()))
				case 1:
					idx := make([]int, vlen)
					for j := range idx {
						idx[j] = int(f.byte()) % vlen
					}
					vecs = append(vecs, b.Gather(pickVec(), idx))
				default:
					vals = append(vals, b.Elem(pickVec(), int(f.byte())%vlen))
				}
			}
			continue
		}
		switch r := c % 16; {
		case r < 5:
			op := fuzzUnary[int(f.byte())%len(fuzzUnary)]
			v = b.Unary(op, pick())
		case r < 12:
			op := fuzzBinary[int(f.byte())%len(fuzzBinary)]
			if op == OpPowConst {
				x := pick()
				v = b.Binary(op, x, b.Const(f.float()))
			} else {
				v = b.Binary(op, pick(), pick())
			}
		case r < 14:
			op := fuzzTernary[int(f.byte())%len(fuzzTernary)]
			if op == OpIf && f.byte()%2 == 0 {
				cmp := fuzzBinary[8+int(f.byte())%8]
				cond := b.Binary(cmp, pick(), pick())
				v = b.Call(op, cond, pick(), pick())
			} else {
				v = b.Call(op, pick(), pick(), pick())
			}
		case r == 14:
			args := make([]Slot, 1+f.byte()%4)
			for j := range args {
				args[j] = pick()
			}
			v = b.Fold([]Op{OpMin, OpMax}[f.byte()%2], args...)
		default:
			// A chain of + - * / on the last value, the shapes the plans fuse.
			v = vals[len(vals)-1]
			for range 1 + f.byte()%3 {
				op := fuzzBinary[int(f.byte())%4]
				if f.byte()%2 == 0 {
					v = b.Binary(op, v, pick())
				} else {
					v = b.Binary(op, pick(), v)
				}
			}
		}
		vals = append(vals, v)
	}
	if f.loops {
		b.SetPos(99)
		vals = append(vals, b.Binary(OpAdd, b.Sum(vecs[len(vecs)-1]), vals[len(vals)-1]))
	}
	outs := []Slot{vals[len(vals)-1]}
	if c := f.byte(); c%2 == 0 {
		outs = append(outs, vals[int(c)%len(vals)])
	}
	return b.Tape(outs...), true
}

// samples returns n samples of nIn inputs, row-major: values near a
// base point, some replaced by special values.
func (f *fuzzTape) samples(nIn int) (x []float64, n int) {
	c := f.byte()
	n = 1 + int(c%40)
	if c >= 0xe0 {
		n += 256 // more than one block
	}
	base := make([]float64, nIn)
	for j := range base {
		base[j] = f.float()
	}
	rng := rand.New(rand.NewPCG(uint64(f.byte()), uint64(f.byte())))
	rate := int(f.byte()%8) + 1
	x = make([]float64, n*nIn)
	for s := range n {
		for j := range nIn {
			v := base[j] * (0.5 + rng.Float64())
			if s == 0 {
				v = base[j]
			} else if rng.IntN(8*rate) == 0 {
				v = fuzzSpecials[rng.IntN(len(fuzzSpecials))]
			}
			x[s*nIn+j] = v
		}
	}
	return x, n
}

// errKey is what must agree between two domain errors.
func errKey(err error) string {
	if err == nil {
		return "no error"
	}
	var de *DomainError
	if !errors.As(err, &de) {
		return "not a DomainError: " + err.Error()
	}
	return fmt.Sprintf("%q at position %d, op %v, sample %d, reverse %v", de.Msg, de.Pos, de.Op, de.Sample, de.Reverse)
}

// withSample returns the key of err as reported for sample s.
func withSample(err error, s int) string {
	if err == nil {
		return errKey(nil)
	}
	de := *err.(*DomainError)
	de.Sample = s
	return errKey(&de)
}

// checkEvalPaths checks every pass of tp against Eval and Gradient at the
// n samples x.
func checkEvalPaths(t *testing.T, tp *Tape, x []float64, n int) {
	nIn := tp.NumInputs()
	ref := tp.Clone()
	cols := make([][]float64, nIn)
	for j := range cols {
		cols[j] = make([]float64, n)
		for s := range n {
			cols[j][s] = x[s*nIn+j]
		}
	}
	for i := range tp.NumOutputs() {
		// The reference, sample by sample.
		fv := make([]float64, n)
		ferr := make([]error, n)
		gv := make([]float64, n)
		gerr := make([]error, n)
		grad := make([]float64, n*nIn)
		first := n // first sample whose Eval fails
		for s := range n {
			xs := x[s*nIn : (s+1)*nIn]
			fv[s], ferr[s] = ref.Eval(xs, i)
			if ferr[s] != nil && first == n {
				first = s
			}
			gv[s], gerr[s] = ref.Gradient(grad[s*nIn:(s+1)*nIn], xs, i)
			if ferr[s] != nil {
				if errKey(ferr[s]) != errKey(gerr[s]) {
					t.Fatalf("output %d sample %d: Eval reports %v, Gradient %v", i, s, errKey(ferr[s]), errKey(gerr[s]))
				}
				continue
			}
			if math.Float64bits(gv[s]) != math.Float64bits(fv[s]) {
				t.Fatalf("output %d sample %d: Eval gives %v, Gradient %v", i, s, fv[s], gv[s])
			}
		}
		wantErr := "no error"
		if first < n {
			wantErr = withSample(ferr[first], first)
		}

		// The batched forward passes, with vector kernels off and on.
		for _, vec := range []bool{false, true} {
			was := SetVectorKernels(vec)
			for pass := range 2 {
				out := make([]float64, n)
				var err error
				name := "ForwardBatch"
				if pass == 0 {
					err = tp.ForwardBatch(out, x, n, i)
				} else {
					name = "ForwardColumns"
					err = tp.ForwardColumns(out, cols, n, i)
				}
				if errKey(err) != wantErr {
					SetVectorKernels(was)
					t.Fatalf("output %d, vector kernels %v: %s reports %s, Eval %s", i, VectorKernels(), name, errKey(err), wantErr)
				}
				for s := range first {
					if math.Float64bits(out[s]) != math.Float64bits(fv[s]) {
						SetVectorKernels(was)
						t.Fatalf("output %d sample %d, vector kernels %v: %s gives %v (%#x), Eval %v (%#x)", i, s, VectorKernels(), name, out[s], math.Float64bits(out[s]), fv[s], math.Float64bits(fv[s]))
					}
				}
			}
			SetVectorKernels(was)
		}

		// GradientBatch: block by block, the first forward error of a
		// block, else its first gradient error.
		out := make([]float64, n)
		grads := make([]float64, n*nIn)
		err := tp.GradientBatch(out, grads, x, n, i)
		w := tp.bw
		if w < minBlock {
			w = 1
		}
		want, upTo := "no error", n
		for base := 0; base < n && upTo == n; base += w {
			m := min(w, n-base)
			for s := base; s < base+m; s++ {
				if ferr[s] != nil {
					want, upTo = withSample(ferr[s], s), base
					break
				}
			}
			if upTo < n {
				break
			}
			for s := base; s < base+m; s++ {
				if gerr[s] != nil {
					want, upTo = withSample(gerr[s], s), s
					break
				}
			}
		}
		if errKey(err) != want {
			t.Fatalf("output %d: GradientBatch reports %s, Gradient %s", i, errKey(err), want)
		}
		for s := range upTo {
			if math.Float64bits(out[s]) != math.Float64bits(gv[s]) {
				t.Fatalf("output %d sample %d: GradientBatch's value %v, Gradient's %v", i, s, out[s], gv[s])
			}
			for j := range nIn {
				if g, r := grads[s*nIn+j], grad[s*nIn+j]; !sameBits(g, r) {
					t.Fatalf("output %d sample %d: GradientBatch's ∂/∂x%d %v, Gradient's %v", i, s, j, g, r)
				}
			}
		}

		if !tp.p.plannable() {
			continue
		}
		// The long tapes' pass, through Gradient and directly.
		got := make([]float64, nIn)
		want1 := make([]float64, nIn)
		for s := range n {
			xs := x[s*nIn : (s+1)*nIn]
			maxReverseCode = -1
			fg, eg := tp.Gradient(got, xs, i)
			maxReverseCode = defaultMaxReverseCode
			if errKey(eg) != errKey(gerr[s]) {
				t.Fatalf("output %d sample %d: Gradient through reverseChain reports %s, over the code %s", i, s, errKey(eg), errKey(gerr[s]))
			}
			if eg == nil {
				if math.Float64bits(fg) != math.Float64bits(gv[s]) {
					t.Fatalf("output %d sample %d: Gradient through reverseChain gives %v, over the code %v", i, s, fg, gv[s])
				}
				for j := range got {
					if !sameBits(got[j], grad[s*nIn+j]) {
						t.Fatalf("output %d sample %d: ∂/∂x%d through reverseChain %v, over the code %v", i, s, j, got[j], grad[s*nIn+j])
					}
				}
			}
			// reverseChain against reverseNodes over the values of Eval,
			// error or not.
			p := tp.p
			tp.Eval(xs, i)
			out, end := int(p.outs[i]), p.end(i)
			clear(tp.adj)
			g := tp.adj[:end]
			g[out] = 1
			p.reverseChain(g, tp.vals[:end], out)
			p.inputAdjoints(got, g)
			for k := p.start; k < len(tp.adj); k++ {
				if math.Float64bits(tp.adj[k]) != 0 {
					t.Fatalf("output %d sample %d: node %d's adjoint is %v after reverseChain, not +0", i, s, k, tp.adj[k])
				}
			}
			ref.Eval(xs, i)
			p.clearAdjoints(ref.adj, want1, end)
			ref.adj[out] = 1
			p.reverseNodes(ref.adj[:end], ref.vals[:end], ref.adj, want1, out, false, nil)
			p.inputAdjoints(want1, ref.adj[:end])
			ref.adjUsed = true
			for j := range got {
				if !sameBits(got[j], want1[j]) {
					t.Fatalf("output %d sample %d: reverseChain's ∂/∂x%d %v, reverseNodes' %v", i, s, j, got[j], want1[j])
				}
			}
		}
	}
}

// checkSameAs checks that tp, a tape with loop nodes, gives ref's values
// and gradients at every sample, and an error (of the same pass) where ref
// has one. Not its position or wording: a loop node words its message on
// its own ("a sum of 9 elements is +Inf" for "overflow to +Inf"); a dot
// product is one loop node at the position of its sum, where the scalar
// build reports an overflowing product at the product's position; and the
// scalar build shares a scalar operation with an equal element of a map
// made before it (the map's position), which the loop build does not.
// Nor the last bits of a derivative: where the scalar build shares equal
// elements (a gather that repeats an element, a map over equal constants),
// it multiplies their summed adjoint by the local derivative once, where
// the loop node adds one product an element.
func checkSameAs(t *testing.T, tp, ref *Tape, x []float64, n int) {
	nIn := tp.NumInputs()
	if tp.NumOutputs() != ref.NumOutputs() {
		t.Fatalf("%d outputs, the scalar build %d", tp.NumOutputs(), ref.NumOutputs())
	}
	got, want := make([]float64, nIn), make([]float64, nIn)
	for i := range tp.NumOutputs() {
		for s := range n {
			xs := x[s*nIn : (s+1)*nIn]
			fg, eg := tp.Gradient(got, xs, i)
			fw, ew := ref.Gradient(want, xs, i)
			if eg != nil && ew == nil && cancelledInfinity(eg, ref, xs, i) ||
				ew != nil && eg == nil && cancelledInfinity(ew, ref, xs, i) {
				continue
			}
			if eg != nil || ew != nil {
				var dg, dw *DomainError
				if !errors.As(eg, &dg) || !errors.As(ew, &dw) || dg.Reverse != dw.Reverse {
					t.Fatalf("output %d sample %d: with loop nodes %s, scalar %s", i, s, errKey(eg), errKey(ew))
				}
				continue
			}
			if math.Float64bits(fg) != math.Float64bits(fw) {
				t.Fatalf("output %d sample %d: with loop nodes %v, scalar %v", i, s, fg, fw)
			}
			var scale []float64
			for j := range got {
				if closeGrad(got[j], want[j]) {
					continue
				}
				// Summed in another order, terms that cancel leave a
				// rounding error of the terms' size, not the sum's.
				if scale == nil {
					scale = absGradient(ref, xs, i)
				}
				if d := math.Abs(got[j] - want[j]); !(d <= 1e-9*scale[j]) {
					t.Fatalf("output %d sample %d: ∂/∂x%d with loop nodes %v, scalar %v (terms of size %v)", i, s, j, got[j], want[j], scale[j])
				}
			}
		}
	}
}

// cancelledInfinity reports whether err, an error of the reverse pass of
// one build where the other has none, comes of terms of the partial that
// reach infinity in one order of summing and not the other, which the
// absolute terms of the scalar build ref (absGradient) show by being
// infinite. Two ways, both of sharing: the scalar build shares a scalar
// operation with an equal element of a map made before it (acos(x) and
// the map acos(v) at v's element x), so amounts of opposite sign meet at
// one node and cancel to 0, and the pass skips the node's infinite
// derivative (∞ · 0), which the loop build, an amount through each node,
// reports; and where it shares equal elements (a gather repeating one),
// it multiplies their summed adjoint by the local derivative once, which
// can overflow where the loop build's products, one an element, do not.
func cancelledInfinity(err error, ref *Tape, x []float64, i int) bool {
	var de *DomainError
	if !errors.As(err, &de) || !de.Reverse {
		return false
	}
	for _, a := range absGradient(ref, x, i) {
		if !finite(a) { // +Inf, or NaN from an infinite amount times a zero derivative
			return true
		}
	}
	return false
}

// absGradient returns, for each input of ref (a tape without loop nodes),
// the sum of the absolute values of the terms of its partial derivative
// of output i at x: the reverse pass with every adjoint and local
// derivative taken in absolute value. Two orders of summing the terms
// differ by a rounding error of about that size times the machine epsilon
// and the number of terms (the usual bound on a sum's rounding error,
// common practice), however small the partial itself.
func absGradient(ref *Tape, x []float64, i int) []float64 {
	ref.Eval(x, i)
	p := ref.p
	v := ref.vals
	out := int(p.outs[i])
	g := make([]float64, out+1)
	g[out] = 1
	for k := out; k >= p.start; k-- {
		gk := g[k]
		op := p.ops[k]
		if gk == 0 || op == opArg {
			continue
		}
		a, b := p.a[k], p.b[k]
		ar := op.Arity()
		var z float64
		if ar == 3 {
			z = v[p.a[k+1]]
		}
		dx, dy, dz := deriv(op, v[a], v[b], z, v[k])
		g[a] += gk * math.Abs(dx)
		if ar >= 2 && op != OpPowConst && b != a {
			g[b] += gk * math.Abs(dy)
		} else if ar >= 2 && op != OpPowConst {
			g[a] += gk * math.Abs(dy)
		}
		if ar == 3 {
			g[p.a[k+1]] += gk * math.Abs(dz)
		}
	}
	dst := make([]float64, p.nIn)
	copy(dst, g[:min(p.nIn, len(g))])
	return dst
}

// sqrt(|x|) at x = 0: the adjoint of |x| is +Inf (the derivative of sqrt
// at 0), and |x| passes nothing back at 0 (its derivative there is taken
// as 0, op.go), so the gradient is 0 and no error, as Gradient says;
// GradientBatch sent Inf·0 = NaN back and reported an infinite derivative
// (found by FuzzEvalPaths).
func TestGradientBatchAbsAtZero(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	b.SetPos(7)
	tp := b.Tape(b.Unary(OpSqrt, b.Unary(OpAbs, x)))
	xs := []float64{0, 4, 0, -9, 0, 1, 0, 0, 0, 16, 0, 0}
	n := len(xs)
	g := []float64{0}
	out, grads := make([]float64, n), make([]float64, n)
	if err := tp.GradientBatch(out, grads, xs, n, 0); err != nil {
		t.Fatalf("GradientBatch: %v", err)
	}
	for s, xv := range xs {
		f, err := tp.Gradient(g, xs[s:s+1], 0)
		if err != nil {
			t.Fatalf("Gradient at %v: %v", xv, err)
		}
		if out[s] != f || grads[s] != g[0] {
			t.Errorf("sample %d (x = %v): GradientBatch %v, %v; Gradient %v, %v", s, xv, out[s], grads[s], f, g[0])
		}
	}
	if grads[0] != 0 || grads[1] != 0.25 || grads[3] != -1.0/6 {
		t.Errorf("gradients %v at %v: want 0 at 0, 1/(2·2) at 4, -1/(2·3) at -9", grads, xs)
	}
}

// x / +Inf: the Builder takes an infinite constant, and a guard operation
// (division) with a non-finite operand is a domain error for Eval and
// Gradient (op.go); the node-major block pass of GradientBatch skipped the
// test of constant operands and returned 0 (found by FuzzEvalPaths).
func TestGradientBatchInfiniteConstant(t *testing.T) {
	for _, c := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
		b := NewBuilder()
		x := b.Input()
		b.SetPos(3)
		tp := b.Tape(b.Binary(OpDiv, x, b.Const(c)))
		xs := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
		_, want := tp.Gradient([]float64{0}, xs[:1], 0)
		if want == nil {
			t.Fatalf("x / %v: Gradient reports no error", c)
		}
		out, grads := make([]float64, len(xs)), make([]float64, len(xs))
		err := tp.GradientBatch(out, grads, xs, len(xs), 0)
		if errKey(err) != withSample(want, 0) {
			t.Errorf("x / %v: GradientBatch reports %s, Gradient %s", c, errKey(err), withSample(want, 0))
		}
	}
}

// closeGrad reports whether two derivatives agree but for rounding: to
// 1e-9 relative, or both below 1e-200, or equal non-finite values.
func closeGrad(a, b float64) bool {
	if sameBits(a, b) || a == b {
		return true
	}
	if !finite(a) || !finite(b) {
		return false
	}
	d := math.Abs(a - b)
	return d <= 1e-9*math.Max(math.Abs(a), math.Abs(b)) || d < 1e-200
}

// x ^ c for an infinite or NaN constant c (OpPowConst): Eval tests a guard
// operation's every operand, the exponent too, and reports "constant is
// +Inf"; the plans (ForwardBatch, ForwardColumns) and the block pass
// (GradientBatch) left the exponent untested and returned 0 at x = 0 and
// x = 0.5 (found by FuzzEvalPaths).
func TestEvalPathsPowInfiniteExponent(t *testing.T) {
	for _, c := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
		b := NewBuilder()
		x := b.Input()
		b.SetPos(5)
		tp := b.Tape(b.Binary(OpPow, x, b.Const(c)))
		if tp.p.ops[len(tp.p.ops)-1] != OpPowConst {
			t.Fatalf("x ^ %v is %v, not x ^ constant", c, tp.p.ops[len(tp.p.ops)-1])
		}
		xs := []float64{0, 0.5, 0.25, 0, 0.5, 0.125, 0, 0, 0.5, 0, 0}
		if _, err := tp.Eval(xs[:1], 0); err == nil {
			t.Fatalf("x ^ %v at 0: Eval reports no error", c)
		}
		checkEvalPaths(t, tp, xs, len(xs))
	}
}

// Gradient of an output that is a dot product of direct inputs, on a tape
// where a guard operation before it that the output does not need sees a
// value that is not finite (y / acos(y) at y = 2): the search that clears that operation of blame used the
// adjoint buffer as scratch after the dot had stored its amounts, and the
// pass then ran the dot again from the search's marks, doubling the
// gradient (-10 for -5) and, for a dot of a computed vector, reading marks
// as adjoints (found by FuzzEvalPaths). The reference is the same
// computation of scalar operations (SetLoopMin).
func TestGradientDotAfterNonFiniteNode(t *testing.T) {
	build := func(loopMin int, computed bool) *Tape {
		b := NewBuilder()
		b.SetLoopMin(loopMin)
		y := b.Input()
		v := b.VecInput(10)
		w := b.VecInput(10)
		b.SetPos(1)
		a := b.Binary(OpDiv, y, b.Unary(OpAcos, y)) // a guard that sees NaN
		cs := make([]float64, 10)
		for i := range cs {
			cs[i] = -5 + float64(i)/4
		}
		u := b.VecConst(cs)
		if computed {
			u = b.Map(OpExp, w)
		}
		d := b.Dot(u, v)
		return b.Tape(b.Binary(OpAdd, b.Sum(v), a), d)
	}
	for _, computed := range []bool{false, true} {
		tp, ref := build(2, computed), build(1<<30, computed)
		x := make([]float64, 21)
		x[0] = 2 // acos(2) is not finite
		for i := 1; i < 21; i++ {
			x[i] = float64(i) / 8
		}
		got, want := make([]float64, 21), make([]float64, 21)
		fg, eg := tp.Gradient(got, x, 1)
		fw, ew := ref.Gradient(want, x, 1)
		if eg != nil || ew != nil || fg != fw {
			t.Fatalf("computed %v: Gradient %v, %v; scalar build %v, %v", computed, fg, eg, fw, ew)
		}
		for j := range got {
			if !closeGrad(got[j], want[j]) {
				t.Errorf("computed %v: ∂/∂x%d is %v, scalar build %v", computed, j, got[j], want[j])
			}
		}
	}
}

// sum(m + m) and sum(m + m[3]) for a map m = v + y just before: the sum
// ran the pass of m + m with one adjoint an element and that of m in turn
// as if m's elements had one use, so Gradient gave 1 for 2 and 10 for 19
// (found by FuzzEvalPaths). The reference is the same computation of
// scalar operations (SetLoopMin).
func TestGradientSumOfMapReadTwice(t *testing.T) {
	build := func(loopMin, shape int) *Tape {
		b := NewBuilder()
		b.SetLoopMin(loopMin)
		y := b.Input()
		v := b.VecInput(9)
		b.SetPos(1)
		m := b.Map(OpAdd, v, y)
		var m2 Slot
		switch shape {
		case 0:
			m2 = b.Map(OpAdd, m, m)
		case 1:
			m2 = b.Map(OpSub, m, b.Elem(m, 3))
		default:
			m2 = b.Map(OpMul, b.Elem(m, 0), m)
		}
		return b.Tape(b.Binary(OpAdd, b.Sum(m2), y))
	}
	for shape := range 3 {
		tp, ref := build(2, shape), build(1<<30, shape)
		x := make([]float64, 10)
		for i := range x {
			x[i] = float64(i+1) / 4
		}
		got, want := make([]float64, 10), make([]float64, 10)
		fg, eg := tp.Gradient(got, x, 0)
		fw, ew := ref.Gradient(want, x, 0)
		if eg != nil || ew != nil || fg != fw {
			t.Fatalf("shape %d: Gradient %v, %v; scalar build %v, %v", shape, fg, eg, fw, ew)
		}
		for j := range got {
			if !closeGrad(got[j], want[j]) {
				t.Errorf("shape %d: ∂/∂x%d is %v, scalar build %v", shape, j, got[j], want[j])
			}
		}
	}
}
