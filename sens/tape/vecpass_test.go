package tape

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// refGradient is the gradient by the passes over the tape's own buffers:
// every input copied onto the tape (Eval), every adjoint accumulated in
// the tape's buffer from a cleared start (the pass of the error searches),
// as Gradient computed it before the inputs were read in place.
func refGradient(t *Tape, dst, x []float64, i int) (float64, error) {
	f, err := t.Eval(x, i)
	if err != nil {
		return f, err
	}
	t.reverse(dst, i, true)
	if !allFinite(dst) {
		return f, t.reverseError(i, t.vals, t.adj, 1, 0, -1)
	}
	return f, nil
}

// sameErr reports whether two errors of passes are both nil or the same
// domain error: place, message, element and pass.
func sameErr(e1, e2 error) bool {
	if (e1 == nil) != (e2 == nil) {
		return false
	}
	if e1 == nil {
		return true
	}
	var d1, d2 *DomainError
	return errors.As(e1, &d1) && errors.As(e2, &d2) && d1.Pos == d2.Pos && d1.Msg == d2.Msg &&
		d1.Element == d2.Element && d1.Reverse == d2.Reverse && d1.Op == d2.Op
}

// inPlaceAgrees checks that Value and Gradient, which read the inputs only
// loop nodes use in place and write their adjoints straight into the
// gradient, give the same values, gradients and errors to the bit as Eval
// and the passes over the tape's buffers, for every output; and that a
// Reverse after Value does too.
func inPlaceAgrees(t *testing.T, name string, tp *Tape, x []float64) {
	t.Helper()
	ref := tp.Clone()
	for i := range tp.NumOutputs() {
		want := make([]float64, len(x))
		fw, errw := refGradient(ref, want, x, i)
		ew, errEval := ref.Eval(x, i)

		v, errv := tp.Value(x, i)
		if !sameErr(errv, errEval) || errv == nil && !sameBits(v, ew) {
			t.Errorf("%s output %d: Value %v (%v), Eval %v (%v)", name, i, v, errv, ew, errEval)
		}
		if errv == nil {
			got := make([]float64, len(x))
			tp.Reverse(got, i)
			if errw == nil && !slices.EqualFunc(got, want, sameBits) {
				t.Errorf("%s output %d: Reverse after Value differs from the reference", name, i)
			}
		}
		// Twice: the second pass starts from the first one's buffers.
		for pass := range 2 {
			got := make([]float64, len(x))
			for j := range got {
				got[j] = math.NaN() // a gradient entry nobody writes shows
			}
			f, err := tp.Gradient(got, x, i)
			if !sameErr(err, errw) {
				t.Errorf("%s output %d pass %d: errors %v and %v", name, i, pass, err, errw)
				continue
			}
			if err != nil {
				continue
			}
			if !sameBits(f, fw) {
				t.Errorf("%s output %d pass %d: value %v, reference %v", name, i, pass, f, fw)
			}
			for j := range got {
				if !sameBits(got[j], want[j]) {
					t.Errorf("%s output %d pass %d: ∂/∂x%d = %v (bits %x), reference %v (bits %x)",
						name, i, pass, j, got[j], math.Float64bits(got[j]), want[j], math.Float64bits(want[j]))
					break
				}
			}
		}
	}
}

// passModel builds the shapes of a line-item model over n lines: three
// columns of inputs q, c, w, two scalar inputs k and r, and a period
// vector 1..n; each output is one shape.
func passModel(b *Builder, n int) (outs []Slot, x []float64, q Slot) {
	q = b.VecInput(n)
	c, w := b.VecInput(n), b.VecInput(n)
	k, r := b.Input(), b.Input()
	rng := rand.New(rand.NewPCG(uint64(n), 11))
	x = make([]float64, 3*n+2)
	for j := range 3 * n {
		x[j] = 0.5 + 20*rng.Float64()
	}
	// Zeros of both signs: a product's adjoint from zero is +0.
	x[0], x[1], x[n+2] = math.Copysign(0, -1), 0, math.Copysign(0, -1)
	x[3*n], x[3*n+1] = 1.15, 0.04
	years := make([]float64, n)
	for j := range years {
		years[j] = float64(j + 1)
	}
	yv := b.VecConst(years)
	idx := []int{}
	for j := 0; j < n; j += 3 {
		idx = append(idx, j)
	}
	groups := make([]int, n)
	for j := range groups {
		groups[j] = j % 3
	}
	line := b.Map(OpMul, q, c)
	outs = []Slot{
		b.Dot(q, c),               // the roll-up: a dot product as the output
		b.Sum(b.Map(OpMul, q, k)), // a sum of a map by a scalar input (fused)
		b.Sum(b.Map(OpMul, b.Map(OpMul, q, c), k)),     // a sum of a map of a map
		b.Sum(b.Map(OpAdd, q, c)),                      // sums of + and -
		b.Sum(b.Map(OpSub, w, k)),                      //
		b.Binary(OpDiv, b.Sum(w), b.Const(float64(n))), // a mean
		b.Dot(q, q), // one span for both factors
		b.Binary(OpMul, b.Dot(w, c), b.Const(1.2)),                                             // a dot product inside a formula
		b.Binary(OpAdd, b.Dot(q, c), b.Sum(q)),                                                 // two loop nodes on one column
		b.Binary(OpAdd, b.Sum(line), b.Reduce(OpMax, line)),                                    // a map read twice
		b.Sum(b.Gather(line, idx)),                                                             // a filter
		b.Dot(b.Gather(q, idx), b.Gather(w, idx)),                                              //
		b.Sum(b.Map(OpSqrt, b.GroupSum(line, groups, 3))),                                      // a grouped sum
		b.Sum(b.Map(OpMul, w, b.Map(OpDiscount, r, yv))),                                       // a present value over periods
		b.Sum(b.Map(OpMul, b.Map(OpMul, w, b.Map(OpGrowth, r, yv)), b.Map(OpDiscount, r, yv))), // escalated and discounted
		b.Binary(OpMul, b.Reduce(OpMin, c), k),                                                 // a min
		b.Sum(b.Map(OpAdd, b.Map(OpMul, q, c), w)),                                             // a chain: the sum, the +, the product
		b.Sum(b.Map(OpSub, w, b.Map(OpMul, q, c))),                                             // the product on the right of a -
		b.Sum(b.Map(OpAdd, b.Map(OpMul, b.Map(OpMul, q, c), k), w)),                            // three maps deep
		b.Call(OpIf, b.Binary(OpGt, k, b.Const(100)), b.Sum(b.Map(OpAdd, b.Map(OpMul, b.Map(OpMul, q, c), k), c)), b.Sum(w)), // a fused sum in the branch not taken
		b.Sum(b.Map(OpMul, q, b.Binary(OpMul, k, r))), // a map by the scalar node just before it
	}
	return outs, x, q
}

// Value and Gradient agree to the bit with the passes over the tape's own
// buffers on the shapes of line-item models, one output to a tape (where
// each column is read only by loop nodes) and all on one tape, at lengths
// within one block of a sum, across blocks, and with a short last block.
func TestInPlaceAgrees(t *testing.T) {
	for _, n := range []int{9, 64, 200, 1030} {
		b := NewBuilder()
		outs, x, q := passModel(b, n)
		inPlaceAgrees(t, fmt.Sprintf("n=%d all", n), b.Tape(outs...), x)
		for i, o := range outs {
			tp := b.Tape(o)
			if i == 0 && tp.p.direct == nil {
				t.Fatal("the roll-up's columns are not read in place")
			}
			inPlaceAgrees(t, fmt.Sprintf("n=%d output %d", n, i), tp, x)
		}
		// An element read by a scalar operation keeps its column on the
		// tape; the others still go in place.
		qe := b.Binary(OpMul, b.Elem(q, 2), b.Const(3))
		inPlaceAgrees(t, fmt.Sprintf("n=%d with an element", n), b.Tape(append(slices.Clone(outs), qe)...), x)
	}
	for seed := range uint64(60) {
		b := NewBuilder()
		outs, x := randomVecModelN(b, 500+seed, 300)
		inPlaceAgrees(t, fmt.Sprintf("random %d", seed), b.Tape(outs...), x)
		inPlaceAgrees(t, fmt.Sprintf("random %d, last output", seed), b.Tape(outs[len(outs)-2]), x)
	}
}

// Domain errors of the forward pass and unbounded or overflowing
// derivatives of the reverse pass are reported by Value and Gradient as by
// Eval and the passes over the tape's buffers: the same operation, message
// and element.
func TestInPlaceErrors(t *testing.T) {
	const n = 200
	type model struct {
		name    string
		out     func(b *Builder, q, c, k Slot) Slot
		set     func(x []float64) // q is x[:n], c is x[n:2n], k is x[2n]
		reverse bool              // the error is the reverse pass's
		element int               // -1: any
	}
	sqrtOfDiff := func(b *Builder, q, c, k Slot) Slot { return b.Sum(b.Map(OpSqrt, b.Map(OpSub, q, k))) }
	dot := func(b *Builder, q, c, k Slot) Slot { return b.Dot(q, c) }
	models := []model{
		{"square root of a negative element", sqrtOfDiff, func(x []float64) { x[7] = 0.1 }, false, 8},
		{"infinite derivative of a square root at 0", sqrtOfDiff, func(x []float64) { x[6] = x[2*n] }, true, 7},
		{"an infinite factor of the roll-up", dot, func(x []float64) { x[n+5] = math.Inf(1) }, false, 0},
		{"a roll-up that overflows", dot, func(x []float64) { x[3], x[n+3] = 1e200, 1e200 }, false, 0},
		{"a roll-up scaled past the range in the gradient",
			func(b *Builder, q, c, k Slot) Slot { return b.Binary(OpMul, b.Dot(q, c), b.Const(1e300)) },
			func(x []float64) {
				for j := range n {
					x[j] = 1e-200
				}
				x[n+4] = 1e10
			}, true, 0},
		{"a sum of a map by a scalar past the range in the gradient",
			func(b *Builder, q, c, k Slot) Slot {
				return b.Binary(OpMul, b.Sum(b.Map(OpMul, q, k)), b.Const(1e10))
			},
			func(x []float64) {
				for j := range n {
					x[j] = 1e-290
				}
				x[2*n] = 1e300
			}, true, -1},
	}
	for _, m := range models {
		b := NewBuilder()
		q, c, k := b.VecInput(n), b.VecInput(n), b.Input()
		tp := b.Tape(m.out(b, q, c, k))
		x := rollUpPoint(n, 0.5)
		m.set(x)
		inPlaceAgrees(t, m.name, tp, x)
		_, err := tp.Gradient(make([]float64, len(x)), x, 0)
		var de *DomainError
		if !errors.As(err, &de) || de.Reverse != m.reverse || de.Element != m.element && m.element >= 0 {
			t.Errorf("%s: %v (%+v), want an error of the reverse pass %v at element %d", m.name, err, de, m.reverse, m.element)
		}
	}
}

// After their first call Value and Gradient allocate nothing.
func TestInPlaceAllocs(t *testing.T) {
	b := NewBuilder()
	outs, x, _ := passModel(b, 1030)
	for _, tp := range []*Tape{b.Tape(outs...), b.Tape(outs[0]), b.Tape(outs[2])} {
		g := make([]float64, len(x))
		for i := range tp.NumOutputs() {
			run := func() {
				if _, err := tp.Gradient(g, x, i); err != nil {
					t.Fatal(err)
				}
				if _, err := tp.Value(x, i); err != nil {
					t.Fatal(err)
				}
			}
			run()
			if a := testing.AllocsPerRun(5, run); a != 0 {
				t.Errorf("output %d: %v allocations a Gradient and Value", i, a)
			}
		}
	}
}

// The shapes meant to skip the intermediate adjoints do: the roll-up's
// output is a dot product of columns read in place, and a sum of a map by
// a scalar runs the map's reverse pass itself.
func TestInPlaceShapes(t *testing.T) {
	b := NewBuilder()
	outs, _, _ := passModel(b, 200)
	tp := b.Tape(outs[0])
	if l := tp.p.loops[tp.p.a[tp.p.outs[0]]]; l.kind != loopDot || tp.p.direct == nil || !tp.p.direct[0] {
		t.Errorf("the roll-up: a loop of kind %d, direct %v", l.kind, tp.p.direct != nil)
	}
	for _, i := range []int{1, 2, 3, 4} {
		tp := b.Tape(outs[i])
		if tp.p.fuse == nil || !tp.p.fuse[tp.p.a[tp.p.outs[0]]] {
			t.Errorf("output %d: the sum does not run its map's pass", i)
		}
	}
	for _, i := range []int{2, 16, 17, 18} {
		tp := b.Tape(outs[i])
		if tp.p.chain == nil {
			t.Errorf("output %d: no map runs the pass of the map before it", i)
		}
	}
	if tp := b.Tape(outs[9]); tp.p.fuse != nil {
		t.Error("a map read twice is fused into one of its readers")
	}
}

// rollUpPoint is the point of the roll-up error tests: q and c (n elements
// each) of 1 to 13, and k.
func rollUpPoint(n int, k float64) []float64 {
	x := make([]float64, 2*n+1)
	for j := range x {
		x[j] = 1 + float64(j%13)
	}
	x[2*n] = k
	return x
}
