package tape

import (
	"fmt"
	"sync"
)

// Reverse runs the reverse (adjoint) pass for output i over the values
// of the last Forward, Eval or Gradient for that output, and stores
// dst[j] = ∂ output_i / ∂ x_j. dst must have length NumInputs; it is
// returned.
//
// An operation whose adjoint is zero passes nothing back, so an
// unbounded local derivative (sqrt at 0, asin at ±1) matters only where
// it is used: there dst receives ±Inf or NaN. Gradient reports that as a
// *DomainError; Reverse leaves it in dst.
//
// After Value or Gradient, the inputs only loop nodes read are read from
// the x given there, which must not have changed since.
func (t *Tape) Reverse(dst []float64, i int) []float64 {
	return t.reverse(dst, i, false)
}

// reverse runs the reverse pass over the scalar code, node by node with
// chained adjoints in a register (reverseChain: code longer than
// maxReverseCode), or node by node (byNodes, or a tape with loop nodes),
// which leaves every node's adjoint in t.adj for reverseError: the other
// two keep some in local variables.
func (t *Tape) reverse(dst []float64, i int, byNodes bool) []float64 {
	p := t.p
	if len(dst) != p.nIn {
		panic(fmt.Sprintf("tape: gradient of length %d, tape has %d inputs", len(dst), p.nIn))
	}
	out := int(p.outs[i])
	end := p.end(i)
	v := t.vals[:end]
	g := t.adj[:end]
	if p.plannable() && !byNodes {
		// The pass sets each node's adjoint back to 0 once it has read it,
		// so the buffer needs clearing only below the operations (inputs
		// and constants), unless something else used it since.
		if t.adjUsed {
			clear(t.adj)
			t.adjUsed = false
		} else {
			clear(t.adj[:p.start]) // all of it: an output that is an input ends below the others
		}
		g[out] = 1
		if len(p.scode(-1)) <= maxReverseCode {
			p.reverseCode(p.scode(i), g, v)
		} else {
			p.reverseChain(g, v, out)
		}
		p.inputAdjoints(dst, g)
		return dst
	}
	if byNodes {
		// The error searches read every value and adjoint from the tape.
		if t.xin != nil {
			t.loadInputs(t.xin)
		}
		p.clearAdjoints(t.adj, dst, end) // the inputs' too: an output that is an input ends below them
		g[out] = 1
		p.reverseNodes(g, v, t.adj, dst, out, false, nil)
	} else {
		// The direct inputs' adjoints are written into dst by the loop
		// nodes, or cleared by finish (vecpass.go).
		p.clearShared(t.adj, end)
		g[out] = 1
		ls := &t.lp
		ls.begin(p, dst, t.xin)
		p.reverseNodes(g, v, t.adj, dst, out, false, ls)
		ls.finish(p, dst)
	}
	t.adjUsed = true
	p.inputAdjoints(dst, g)
	return dst
}

// reverseNodes runs the reverse pass node by node, from out down: the pass
// of a tape with loop nodes, and the reference for reverseCode and
// reverseChain.
//
// With consume, each node's adjoint is set back to 0 once read, as
// reverseCode does; without, every adjoint stays, for reverseError.
//
// ls is the loop nodes' state (vecpass.go), nil in the error searches.
func (p *tapeProg) reverseNodes(g, v, adj, dst []float64, out int, consume bool, ls *loopPass) {
	end := len(g)
	ops := p.ops[:end]
	as := p.a[:end]
	bs := p.b[:end]
	for k := out; k >= p.start; k-- {
		gk := g[k]
		if gk == 0 {
			continue
		}
		if consume {
			g[k] = 0
		}
		a, b := as[k], bs[k]
		switch ops[k] {
		case OpAdd:
			g[a] += gk
			g[b] += gk
		case OpSub:
			g[a] += gk
			g[b] -= gk
		case OpMul:
			g[a] += gk * v[b]
			g[b] += gk * v[a]
		case OpDiv:
			q := gk / v[b]
			g[a] += q
			g[b] -= q * v[k]
		case OpNeg:
			g[a] -= gk
		case OpSquare:
			g[a] += 2 * gk * v[a]
		case OpSqrt:
			g[a] += gk * 0.5 / v[k]
		case OpExp:
			g[a] += gk * v[k]
		case OpLn:
			g[a] += gk / v[a]
		case OpAbs:
			if x := v[a]; x > 0 {
				g[a] += gk
			} else if x < 0 {
				g[a] -= gk
			}
		case OpMin:
			if v[a] <= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case OpMax:
			if v[a] >= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case OpIf:
			if v[a] != 0 {
				g[b] += gk
			} else {
				g[as[k+1]] += gk
			}
		case OpFloor, OpCeil, OpRound, OpLt, OpLe, OpGt, OpGe, OpEq, OpNe, OpAnd, OpOr, OpNot, opArg:
		case opLoop: // vec.go; a sum may have run the maps just before it too
			k = p.loopReverse(v, adj, dst, k, ls)
		case opLane: // the first lane with an adjoint runs its loop node
			k = p.loopReverse(v, adj, dst, int(a), ls)
		default:
			p.revDeriv(g, v, k, gk)
		}
	}
}

// revDeriv sends the adjoint gk of node k back through the local
// derivatives of its operation (deriv): the operations without a case of
// their own in reverseNodes and reverseCode.
func (p *tapeProg) revDeriv(g, v []float64, k int, gk float64) {
	a, b := p.a[k], p.b[k]
	op := p.ops[k]
	ar := op.Arity()
	var z float64
	if ar == 3 {
		z = v[p.a[k+1]]
	}
	dx, dy, dz := deriv(op, v[a], v[b], z, v[k])
	g[a] += gk * dx
	if ar >= 2 && op != OpPowConst {
		g[b] += gk * dy
	}
	if ar == 3 {
		g[p.a[k+1]] += gk * dz
	}
}

// maxReverseCode is the longest scalar code the reverse pass runs over.
// Beyond it the pass goes node by node (reverseChain): it reads 9 bytes a
// node (kind and operands) where the code has 32 an instruction, and once
// neither fits the caches (10^6 nodes) the node loop was faster
// (BenchmarkPassesLarge: gradient 18-20 ms against 21-22 ms; reverseChain
// is 4-7% faster again, BenchmarkGradientLong), while over the code the
// gradient of 10^3 nodes is 10-15% faster (at 10^5 nodes the three are
// within 1.5%).
var maxReverseCode = defaultMaxReverseCode // a variable, for the tests

const defaultMaxReverseCode = 1 << 17

// Gradient evaluates output i at x and its gradient: dst[j] = ∂ output_i
// / ∂ x_j. It returns the output, or a *DomainError if the output or a
// derivative on the way to it is NaN or ±Inf.
//
// The inputs only loop nodes read are read in place, as by Value, so dst
// must not share memory with x.
func (t *Tape) Gradient(dst, x []float64, i int) (float64, error) {
	if f, ok, err := t.gradientDot(dst, x, i); ok {
		return f, err
	}
	if f, ok, err := t.gradientChain(dst, x, i); ok {
		return f, err
	}
	return t.gradientNodes(dst, x, i)
}

// gradientNodes is Gradient by Value and the reverse pass.
func (t *Tape) gradientNodes(dst, x []float64, i int) (float64, error) {
	f, err := t.Value(x, i)
	if err != nil {
		return f, err
	}
	t.Reverse(dst, i)
	if !t.lp.allFinite(t.p, dst) {
		t.reverse(dst, i, true) // every value and adjoint, for reverseError
		return f, t.reverseError(i, t.vals, t.adj, 1, 0, -1)
	}
	return f, nil
}

// The pass of long tapes, reverseChain, goes node by node like
// reverseNodes but with a kind of its own for each node (revChain.kinds),
// which says besides the operation whether the node's operand k-1 is a
// node whose one use is here: then node k hands k-1 its adjoint in a
// register (carry) instead of through the adjoint buffer, which k-1 then
// never writes. Over half the nodes of the generated models are such links
// (a product of a sum, a subtotal of a line item). The opArg node after a
// three-argument operation runs that operation, so that the pass does not
// stop at an opArg.

// rkind is a node's kind in reverseChain: an Op (below rChain), an
// operation that hands its adjoint for operand a or b, node k-1, on in
// carry (the A and B kinds; a unary operation's is its operand a), or an
// opArg that runs the operation before it (the rArg kinds).
type rkind = uint8

const (
	rChain rkind = 64 + iota // the first chained kind; Ops are below it
	rAddA
	rAddB
	rSubA
	rSubB
	rMulA
	rMulB
	rDivA
	rDivB
	rMinA
	rMinB
	rMaxA
	rMaxB
	rIfB    // the then-branch
	rArgIf  // the opArg of an if, which runs the if (node k-1)
	rArgIfB // the same, its then-branch node k-2 chained
	rArg3   // the opArg of another three-argument operation, which runs it
	rNeg
	rSquare
	rSqrt
	rExp
	rLn
)

// revChain holds a program's kinds for reverseChain, built once.
type revChain struct {
	once  sync.Once
	kinds []rkind
}

// chainKinds returns the kind of every node for reverseChain.
func (p *tapeProg) chainKinds() []rkind {
	p.rc.once.Do(func() { p.rc.kinds = p.buildChainKinds() })
	return p.rc.kinds
}

func (p *tapeProg) buildChainKinds() []rkind {
	n := len(p.ops)
	uses := make([]uint8, n) // each operand slot, and an output, is a use
	use := func(k int32) {
		if uses[k] < 2 {
			uses[k]++
		}
	}
	for k := p.start; k < n; k++ {
		use(p.a[k])
		if op := p.ops[k]; op != opArg && op.Arity() >= 2 {
			use(p.b[k])
		}
	}
	for _, o := range p.outs {
		uses[o] = 2
	}
	kinds := make([]rkind, n)
	for k := p.start; k < n; k++ {
		op := p.ops[k]
		kinds[k] = rkind(op)
		j := int32(k - 1)
		if j < int32(p.start) || uses[j] != 1 || p.ops[j] == opArg || op == opArg {
			continue
		}
		ina, inb := p.a[k] == j, p.b[k] == j
		side := rkind(0)
		if inb {
			side = 1
		}
		var c rkind
		switch {
		case op.Arity() == 1 && ina:
			switch op {
			case OpNeg:
				c = rNeg
			case OpSquare:
				c = rSquare
			case OpSqrt:
				c = rSqrt
			case OpExp:
				c = rExp
			case OpLn:
				c = rLn
			}
		case op.Arity() == 2 && ina != inb:
			switch op {
			case OpAdd:
				c = rAddA + side
			case OpSub:
				c = rSubA + side
			case OpMul:
				c = rMulA + side
			case OpDiv:
				c = rDivA + side
			case OpMin:
				c = rMinA + side
			case OpMax:
				c = rMaxA + side
			}
		case op == OpIf && inb && !ina && p.a[k+1] != j:
			c = rIfB
		}
		if c != 0 {
			kinds[k] = c
		}
	}
	// An opArg runs its operation, so that the pass need not stop at it: the
	// operation's own kind is read only when it is the output, where the
	// pass starts.
	for k := p.start + 1; k < n; k++ {
		if p.ops[k] != opArg {
			continue
		}
		switch kinds[k-1] {
		case rkind(OpIf):
			kinds[k] = rArgIf
		case rIfB:
			kinds[k] = rArgIfB
		default:
			kinds[k] = rArg3
		}
	}
	return kinds
}

// reverseChain runs the reverse pass from out down, node by node, each
// single-use node k-1 of a chained kind receiving its adjoint from node k
// in a register: the pass of long code (see maxReverseCode), on a tape
// without loop nodes whose adjoints at and above start are 0, which it
// leaves 0. It does the operations of reverseNodes in the same order, so
// its gradients are the same to the bit.
//
// A node's adjoint is g[k] + carry: one of the two is +0 (carry unless k-1
// is chained, g[k] if it is, since its one use passes nothing through the
// buffer), so the sum is the other, except that -0 becomes +0, which like
// +0 passes nothing on. An operation that only adds its adjoint (+ - min
// max if) needs no test for 0: adding ±0 changes no adjoint, which is
// never -0 (it starts at +0, and x + -x is +0). One that multiplies or
// divides by its operands skips a zero adjoint, as reverseNodes does, so
// that 0 × Inf makes no NaN.
func (p *tapeProg) reverseChain(g, v []float64, out int) {
	end := len(g)
	kinds := p.chainKinds()[:end]
	as := p.a[:end]
	bs := p.b[:end]
	start := p.start
	var carry float64
	for k := out; k >= start; k-- {
		gk := g[k] + carry
		g[k] = 0
		carry = 0
		a, b := as[k], bs[k]
		switch kinds[k] {
		case rkind(OpAdd):
			g[a] += gk
			g[b] += gk
		case rAddA:
			carry = gk
			g[b] += gk
		case rAddB:
			g[a] += gk
			carry = gk
		case rkind(OpSub):
			g[a] += gk
			g[b] -= gk
		case rSubA:
			carry = gk
			g[b] -= gk
		case rSubB:
			g[a] += gk
			carry = 0 - gk
		case rkind(OpMul):
			if gk == 0 {
				continue
			}
			g[a] += gk * v[b]
			g[b] += gk * v[a]
		case rMulA:
			if gk == 0 {
				continue
			}
			carry = gk * v[b]
			g[b] += gk * v[a]
		case rMulB:
			if gk == 0 {
				continue
			}
			g[a] += gk * v[b]
			carry = gk * v[a]
		case rkind(OpDiv):
			if gk == 0 {
				continue
			}
			q := gk / v[b]
			g[a] += q
			g[b] -= q * v[k]
		case rDivA:
			if gk == 0 {
				continue
			}
			q := gk / v[b]
			carry = q
			g[b] -= q * v[k]
		case rDivB:
			if gk == 0 {
				continue
			}
			q := gk / v[b]
			g[a] += q
			carry = 0 - q*v[k]
		case rkind(OpNeg):
			g[a] -= gk
		case rNeg:
			carry = 0 - gk
		case rkind(OpSquare):
			if gk == 0 {
				continue
			}
			g[a] += 2 * gk * v[a]
		case rSquare:
			if gk == 0 {
				continue
			}
			carry = 2 * gk * v[a]
		case rkind(OpSqrt):
			if gk == 0 {
				continue
			}
			g[a] += gk * 0.5 / v[k]
		case rSqrt:
			if gk == 0 {
				continue
			}
			carry = gk * 0.5 / v[k]
		case rkind(OpExp):
			if gk == 0 {
				continue
			}
			g[a] += gk * v[k]
		case rExp:
			if gk == 0 {
				continue
			}
			carry = gk * v[k]
		case rkind(OpLn):
			if gk == 0 {
				continue
			}
			g[a] += gk / v[a]
		case rLn:
			if gk == 0 {
				continue
			}
			carry = gk / v[a]
		case rkind(OpAbs):
			if x := v[a]; x > 0 {
				g[a] += gk
			} else if x < 0 {
				g[a] -= gk
			}
		case rkind(OpMin):
			if v[a] <= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case rMinA:
			if v[a] <= v[b] {
				carry = gk
			} else {
				g[b] += gk
			}
		case rMinB:
			if v[a] <= v[b] {
				g[a] += gk
			} else {
				carry = gk
			}
		case rkind(OpMax):
			if v[a] >= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case rMaxA:
			if v[a] >= v[b] {
				carry = gk
			} else {
				g[b] += gk
			}
		case rMaxB:
			if v[a] >= v[b] {
				g[a] += gk
			} else {
				carry = gk
			}
		case rkind(OpIf):
			if v[a] != 0 {
				g[b] += gk
			} else {
				g[as[k+1]] += gk
			}
		case rIfB:
			if v[a] != 0 {
				carry = gk
			} else {
				g[as[k+1]] += gk
			}
		case rArgIf: // node k is 0 (nothing reads an opArg): run the if at k-1
			k--
			gk = g[k]
			g[k] = 0
			if v[as[k]] != 0 {
				g[bs[k]] += gk
			} else {
				g[a] += gk
			}
		case rArgIfB:
			k--
			gk = g[k]
			g[k] = 0
			if v[as[k]] != 0 {
				carry = gk
			} else {
				g[a] += gk
			}
		case rArg3:
			k--
			gk = g[k]
			g[k] = 0
			if gk != 0 {
				p.revDeriv(g, v, k, gk)
			}
		case rkind(OpFloor), rkind(OpCeil), rkind(OpRound), rkind(OpLt), rkind(OpLe), rkind(OpGt),
			rkind(OpGe), rkind(OpEq), rkind(OpNe), rkind(OpAnd), rkind(OpOr), rkind(OpNot), rkind(opArg):
		default:
			if gk != 0 {
				p.revDeriv(g, v, k, gk)
			}
		}
	}
}
