package tape

import "math"

// Pieces: which piece of each piecewise operation an output takes at a
// point, so that an analysis that integrates derivatives along a path
// (attribution) can split the path where a kink or a step lies.

// Branch is a piecewise operation that an output depends on: a kink (abs,
// min, max, the min and max of a vector), where the output's derivative
// jumps, or a step (floor, ceil, round, the comparisons, and, or, not,
// if), where the output itself may jump.
type Branch struct {
	Op   Op
	Pos  int32 // the source position of the node (Builder.SetPos)
	Elem int32 // the element of a loop node, else -1
	Step bool  // the output may jump here, not only bend
	node int32 // the node on the tape
}

// Branches returns the piecewise operations output i depends on (through
// every branch of every if), in tape order: the meaning of each entry that
// BranchCodes writes.
func (t *Tape) Branches(i int) []Branch {
	var bs []Branch
	t.p.branches(i, func(k int, j int32, op Op) {
		bs = append(bs, Branch{Op: op, Pos: t.p.pos[k], Elem: j, Step: op.IsStep(), node: int32(k)})
	})
	return bs
}

// BranchCodes evaluates output i at x and writes into codes (len(bs)) a
// number for each piecewise operation of bs, which Branches(i) returned,
// that says which piece it takes: for abs, 1 where x >= 0 and -1 below;
// for min and max, 0 where the first argument is chosen (a tie goes to it)
// and 1 where the second is; for a min or max of a vector, the element
// chosen; for a step operation, its value. Two points with equal codes lie
// on the same piece of every piecewise operation.
//
// When sw is not nil it receives each operation's switching value, which
// changes sign where the operation changes piece: x for abs, x - y for
// min, max and the comparisons <, <=, > and >=, and NaN for the others, so
// that a search for the point where a piece changes can interpolate. It
// returns the output, or a *DomainError.
func (t *Tape) BranchCodes(codes, sw, x []float64, bs []Branch, i int) (float64, error) {
	t.loadInputs(x)
	// The scalar code writes every node's value, which the codes read.
	bad := t.exec(i, t.p.end(i))
	if err := t.check(bad, t.p.outs[i:i+1], t.vals, 1, 0, -1); err != nil {
		return 0, err
	}
	v := t.vals
	p := t.p
	for n, b := range bs {
		k, j := int(b.node), b.Elem
		var c, s float64
		switch {
		case j < 0 && p.ops[k] == opLoop: // a min or max of a vector
			l := &p.loops[p.a[k]]
			var xs []float64
			l.operands(func(first, m int32) { xs = v[first : first+m] })
			c, s = float64(l.best(xs)), math.NaN()
		case j >= 0: // an element of a map
			l := &p.loops[p.a[k]]
			c, s = pieceCode(b.Op, v[l.arg[0]+j*l.step[0]], v[l.arg[1]+j*l.step[1]], v[k+int(j)])
		default:
			c, s = pieceCode(b.Op, v[p.a[k]], v[p.b[k]], v[k])
		}
		codes[n] = c
		if sw != nil {
			sw[n] = s
		}
	}
	return v[p.outs[i]], nil
}

// pieceCode is the code and the switching value of one piecewise
// operation with operands x and y and value r.
func pieceCode(op Op, x, y, r float64) (code, sw float64) {
	switch op {
	case OpAbs:
		if x >= 0 {
			return 1, x
		}
		return -1, x
	case OpMin:
		if x <= y {
			return 0, x - y
		}
		return 1, x - y
	case OpMax:
		if x >= y {
			return 0, x - y
		}
		return 1, x - y
	case OpLt, OpLe, OpGt, OpGe:
		return r, x - y
	case OpIf:
		if x != 0 {
			return 1, math.NaN()
		}
		return 0, math.NaN()
	}
	return r, math.NaN()
}

// isPiecewise reports whether op has kinks or steps.
func isPiecewise(op Op) bool {
	return op == OpAbs || op == OpMin || op == OpMax || op.IsStep()
}

// branches calls f for each piecewise operation output i depends on, in
// tape order: a scalar node k (j = -1), a min or max loop at k (j = -1),
// or element j of a map loop at k.
func (p *tapeProg) branches(i int, f func(k int, j int32, op Op)) {
	mark := p.reach(i)
	for k := p.start; k < len(mark); k++ {
		switch op := p.ops[k]; {
		case op == opLoop:
			l := &p.loops[p.a[k]]
			switch {
			case (l.kind == loopMin || l.kind == loopMax) && mark[k]:
				f(k, -1, OpMin+Op(l.kind-loopMin))
			case l.kind == loopMap && isPiecewise(l.op):
				need := laneNeed(mark, k)
				for j := range l.n {
					if need(int(j)) {
						f(k, j, l.op)
					}
				}
			}
		case mark[k] && isPiecewise(op):
			f(k, -1, op)
		}
	}
}
