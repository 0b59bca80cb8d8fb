package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// chainTapes returns tapes in which an operation's operand is the node
// just before it with no other use, on either side, for every operation as
// the producer and every chained kind of reverseChain as the consumer, in
// chains of two and three, and the same shapes where the producer is also
// an output (so not chained).
func chainTapes() []*Tape {
	producers := append([]Op{OpSquare, OpPowConst}, rgenOps...)
	consumers := []Op{OpAdd, OpSub, OpMul, OpDiv, OpMin, OpMax, OpIf, OpNeg, OpSquare, OpSqrt, OpExp, OpLn,
		OpAbs, OpPow, OpSin, OpLearn}
	prod := func(b *Builder, op Op, x, y, z Slot) Slot {
		switch op.Arity() {
		case 1:
			return b.Unary(op, x)
		case 3:
			return b.Call(op, x, y, z)
		}
		if op == OpPowConst {
			return b.Binary(op, x, b.Const(3))
		}
		return b.Binary(op, x, y)
	}
	var tapes []*Tape
	for _, p := range producers {
		for _, c := range consumers {
			for side := range 2 {
				for _, alsoOut := range []bool{false, true} {
					b := NewBuilder()
					x, y, u, w := b.Input(), b.Input(), b.Input(), b.Input()
					var cond Slot
					if c == OpIf {
						cond = b.Binary(OpGt, u, w) // before the producer, so that it is k-1
					}
					t1 := prod(b, p, x, y, u)
					consume := func(c Op, t Slot, o Slot) Slot {
						switch {
						case c == OpIf:
							return b.Call(OpIf, cond, t, o)
						case c == OpLearn:
							return b.Call(OpLearn, t, o, b.Const(0.8))
						case c.Arity() == 1:
							return b.Unary(c, t)
						case side == 1:
							return b.Binary(c, o, t)
						}
						return b.Binary(c, t, o)
					}
					t2 := consume(c, t1, w)
					c2 := c
					if c == OpNeg { // the builder folds -(-x) to x
						c2 = OpExp
					}
					out := b.Binary(OpMul, consume(c2, t2, x), y) // a chain of three, then a product
					if alsoOut {
						tapes = append(tapes, b.Tape(out, t1, t2))
					} else {
						tapes = append(tapes, b.Tape(out))
					}
				}
			}
		}
	}
	return tapes
}

// sameBits reports whether x and y are the same float64 to the bit, or
// both NaN: which of two NaNs an x86 addition returns depends on the order
// of its operands, which the compiler picks (reverseCode and reverseNodes
// already differ in a NaN's sign), and a NaN gradient is no result:
// Gradient reports it as a *DomainError.
func sameBits(x, y float64) bool {
	return math.Float64bits(x) == math.Float64bits(y) || math.IsNaN(x) && math.IsNaN(y)
}

// reverseChain, the reverse pass of long tapes, against reverseNodes, the
// pass node by node, to the last bit (a NaN for a NaN), on random formulas of every
// operation, the fused kinds' tapes and chainTapes, at points that include
// zeros, signed zeros, huge and tiny values, infinities and NaN (domain
// errors and overflowing derivatives); also that it leaves every adjoint
// at and above start 0, that a second pass over that buffer agrees, and
// that Gradient reports the same errors at the same operations as the
// pass over the scalar code.
func TestReverseChainAgreesWithNodes(t *testing.T) {
	tapes := append(kindTapes(), chainTapes()...)
	g := &rgen{rng: rand.New(rand.NewPCG(13, 6)), nIn: 3}
	for f := 0; f < 2500; f++ {
		tapes = append(tapes, g.expr(6).tape(3, int32(f)))
	}
	rng := rand.New(rand.NewPCG(5, 11))
	special := []float64{0, math.Copysign(0, -1), 1, -1, 1e300, -1e300, 1e-300, math.Inf(1), math.Inf(-1), math.NaN()}
	var chained, nonFinite, errs int
	for f, tp := range tapes {
		p := tp.p
		if !p.plannable() {
			t.Fatalf("tape %d has loop nodes", f)
		}
		for k, kd := range p.chainKinds() {
			if kd > rChain && k >= p.start {
				chained++
			}
		}
		nIn := tp.NumInputs()
		ref := tp.Clone()
		got, again, want := make([]float64, nIn), make([]float64, nIn), make([]float64, nIn)
		x := make([]float64, nIn)
		for pt := range 8 {
			for j := range x {
				x[j] = math.Round((rng.Float64()*6-3)*100) / 100
				if pt >= 4 && rng.IntN(3) == 0 {
					x[j] = special[rng.IntN(len(special))]
				}
			}
			for i := range tp.NumOutputs() {
				tp.Eval(x, i) // an error leaves the values, which the passes read all the same
				out := int(p.outs[i])
				end := p.end(i)
				for pass, dst := range [][]float64{got, again} {
					g := tp.adj[:end]
					if pass == 0 {
						clear(tp.adj) // as reverse does after a pass that keeps adjoints
					} else {
						clear(tp.adj[:p.start])
					}
					g[out] = 1
					p.reverseChain(g, tp.vals[:end], out)
					p.inputAdjoints(dst, g)
					for k := p.start; k < len(tp.adj); k++ {
						if math.Float64bits(tp.adj[k]) != 0 {
							t.Fatalf("tape %d output %d at %v: node %d's adjoint is %v after the pass, not +0", f, i, x, k, tp.adj[k])
						}
					}
				}
				ref.Eval(x, i)
				p.clearAdjoints(ref.adj, want, end)
				ref.adj[out] = 1
				p.reverseNodes(ref.adj[:end], ref.vals[:end], ref.adj, want, out, false, nil)
				p.inputAdjoints(want, ref.adj[:end])
				ref.adjUsed = true
				for j := range got {
					if !sameBits(got[j], want[j]) || !sameBits(again[j], want[j]) {
						t.Fatalf("tape %d output %d at %v: adjoint %d is %v (again %v), node by node %v", f, i, x, j, got[j], again[j], want[j])
					}
					if !finite(want[j]) {
						nonFinite++
					}
				}
			}
		}
		// Through Gradient: the long tapes' pass against the scalar code's.
		for pt := range 4 {
			for j := range x {
				x[j] = math.Round((rng.Float64()*6-3)*100) / 100
				if pt >= 2 && rng.IntN(3) == 0 {
					x[j] = special[rng.IntN(len(special))]
				}
			}
			for i := range tp.NumOutputs() {
				fw, ew := ref.Gradient(want, x, i)
				maxReverseCode = -1
				fg, eg := tp.Gradient(got, x, i)
				maxReverseCode = defaultMaxReverseCode
				if math.Float64bits(fg) != math.Float64bits(fw) && !(math.IsNaN(fg) && math.IsNaN(fw)) {
					t.Fatalf("tape %d output %d at %v: Gradient's value %v, over the code %v", f, i, x, fg, fw)
				}
				var dg, dw *DomainError
				if errors.As(eg, &dg) != errors.As(ew, &dw) || dg != nil && (dg.Pos != dw.Pos || dg.Op != dw.Op || dg.Error() != dw.Error()) {
					t.Fatalf("tape %d output %d at %v: Gradient's error %v, over the code %v", f, i, x, eg, ew)
				}
				if eg != nil {
					errs++
					continue
				}
				for j := range got {
					if !sameBits(got[j], want[j]) {
						t.Fatalf("tape %d output %d at %v: Gradient's adjoint %d is %v, over the code %v", f, i, x, j, got[j], want[j])
					}
				}
			}
		}
	}
	// The corpus must exercise what it claims to.
	if chained < 5000 || nonFinite < 100 || errs < 100 {
		t.Fatalf("%d chained nodes, %d non-finite adjoints, %d gradient errors: too few to test", chained, nonFinite, errs)
	}
	t.Logf("%d tapes, %d chained nodes, %d non-finite adjoints compared, %d gradient errors", len(tapes), chained, nonFinite, errs)
}

// Every chained kind of reverseChain occurs in chainTapes.
func TestChainTapesCoverEveryKind(t *testing.T) {
	seen := map[rkind]bool{}
	for _, tp := range chainTapes() {
		for k, kd := range tp.p.chainKinds() {
			if k >= tp.p.start && kd > rChain {
				seen[kd] = true
			}
		}
	}
	for kd := rChain + 1; kd <= rLn; kd++ {
		if !seen[kd] {
			t.Errorf("no tape has chained kind %d", kd)
		}
	}
}

// A gradient of the long tapes' pass allocates nothing.
func TestReverseChainAllocs(t *testing.T) {
	tp := chainTapes()[40]
	x := []float64{1.5, 0.5, 2, 3}
	dst := make([]float64, 4)
	maxReverseCode = -1
	defer func() { maxReverseCode = defaultMaxReverseCode }()
	if _, err := tp.Gradient(dst, x, 0); err != nil {
		t.Fatal(err)
	}
	if n := testing.AllocsPerRun(100, func() { tp.Gradient(dst, x, 0) }); n != 0 {
		t.Fatalf("%v allocations a gradient", n)
	}
}
