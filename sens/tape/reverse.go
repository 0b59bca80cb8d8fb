package tape

import "fmt"

// Reverse runs the reverse (adjoint) pass for output i over the values
// of the last Forward, Eval or Gradient for that output, and stores
// dst[j] = ∂ output_i / ∂ x_j. dst must have length NumInputs; it is
// returned.
//
// An operation whose adjoint is zero passes nothing back, so an
// unbounded local derivative (sqrt at 0, asin at ±1) matters only where
// it is used: there dst receives ±Inf or NaN. Gradient reports that as a
// *DomainError; Reverse leaves it in dst.
func (t *Tape) Reverse(dst []float64, i int) []float64 {
	return t.reverse(dst, i, false)
}

// reverse runs the reverse pass over the scalar code, or node by node
// (byNodes, a tape with loop nodes, or code longer than maxReverseCode),
// which leaves every node's adjoint in t.adj for reverseError: the scalar
// code keeps those of fused intermediates in local variables.
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
			p.reverseNodes(g, v, t.adj, dst, out, true)
		}
		p.inputAdjoints(dst, g)
		return dst
	}
	p.clearAdjoints(t.adj, dst, end) // the inputs' too: an output that is an input ends below them
	g[out] = 1
	p.reverseNodes(g, v, t.adj, dst, out, false)
	t.adjUsed = true
	p.inputAdjoints(dst, g)
	return dst
}

// reverseNodes runs the reverse pass node by node, from out down: the pass
// of a tape with loop nodes or of long code (see reverse), and the
// reference for reverseCode.
//
// With consume, each node's adjoint is set back to 0 once read, as
// reverseCode does; without, every adjoint stays, for reverseError.
func (p *tapeProg) reverseNodes(g, v, adj, dst []float64, out int, consume bool) {
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
		case opLoop: // vec.go
			p.loopReverse(v, adj, dst, k)
		case opLane: // the first lane with an adjoint runs its loop node
			h := int(a)
			p.loopReverse(v, adj, dst, h)
			k = h
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
// Beyond it the pass goes node by node: it reads 9 bytes a node (operation
// and operands) where the code has 32 an instruction, and once neither fits
// the caches (10^6 nodes) the node loop was faster (BenchmarkPassesLarge:
// gradient 18-20 ms against 21-22 ms), while over the code the gradient of
// 10^3 and 10^5 nodes is 5-15% faster.
const maxReverseCode = 1 << 17

// Gradient evaluates output i at x and its gradient: dst[j] = ∂ output_i
// / ∂ x_j. It returns the output, or a *DomainError if the output or a
// derivative on the way to it is NaN or ±Inf.
func (t *Tape) Gradient(dst, x []float64, i int) (float64, error) {
	f, err := t.Eval(x, i)
	if err != nil {
		return f, err
	}
	t.Reverse(dst, i)
	if !allFinite(dst) {
		t.reverse(dst, i, true) // every adjoint, for reverseError
		return f, t.reverseError(i, t.vals, t.adj, 1, 0, -1)
	}
	return f, nil
}
