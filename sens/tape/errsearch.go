package tape

import "fmt"

// check returns the domain error, if any, behind the outputs outs: bad
// says a guard operation saw a non-finite operand. vals holds node k of
// the sample at vals[k*stride+off].
func (t *Tape) check(bad bool, outs []int32, vals []float64, stride, off, sample int) error {
	if !bad {
		for _, o := range outs {
			if !finite(vals[int(o)*stride+off]) {
				bad = true
				break
			}
		}
		if !bad {
			return nil
		}
	}
	k := t.findOrigin(outs, vals, stride, off)
	if k < 0 {
		return nil // the non-finite values lie in branches not taken
	}
	return t.nodeError(k, vals, stride, off, sample)
}

// findOrigin returns the first node, in evaluation order, that feeds one
// of outs through the branches taken and whose value is not finite; -1 if
// there is none. It uses t.adj as scratch.
func (t *Tape) findOrigin(outs []int32, vals []float64, stride, off int) int {
	p := t.p
	top := int32(-1)
	for _, o := range outs {
		top = max(top, o)
	}
	mark := t.adj[:top+1]
	t.adjUsed = true
	clear(mark)
	for _, o := range outs {
		mark[o] = 1
	}
	val := func(k int32) float64 { return vals[int(k)*stride+off] }
	for k := int(top); k >= p.start; k-- {
		if op := p.ops[k]; op == opLoop || op == opLane { // vec.go: element by element
			if op == opLoop {
				p.loopDeps(k, laneNeed(mark, k), func(s int32) { mark[s] = 1 }, val)
			}
			continue
		}
		if mark[k] == 0 {
			continue
		}
		a, b := p.a[k], p.b[k]
		mark[a] = 1
		switch p.ops[k] {
		case OpIf:
			if v := val(a); v != 0 || !finite(v) {
				mark[b] = 1
			} else {
				mark[p.a[k+1]] = 1
			}
		default:
			mark[b] = 1
			if p.ops[k].Arity() == 3 {
				mark[p.a[k+1]] = 1
			}
		}
	}
	for k := range mark {
		if mark[k] != 0 && !finite(val(int32(k))) {
			return k
		}
	}
	return -1
}

// args returns the operand values of node k.
func (t *Tape) args(k int, vals []float64, stride, off int) []float64 {
	p := t.p
	op := p.ops[k]
	v := func(s int32) float64 { return vals[int(s)*stride+off] }
	switch op.Arity() {
	case 1:
		return []float64{v(p.a[k])}
	case 2:
		return []float64{v(p.a[k]), v(p.b[k])}
	case 3:
		return []float64{v(p.a[k]), v(p.b[k]), v(p.a[k+1])}
	}
	return []float64{v(int32(k))}
}

func (t *Tape) nodeError(k int, vals []float64, stride, off, sample int) error {
	p := t.p
	op := p.ops[k]
	if op == opLoop || op == opLane {
		return t.loopError(k, vals, stride, off, sample)
	}
	args := t.args(k, vals, stride, off)
	msg := domainMsg(op, args, vals[k*stride+off])
	if op == OpInput {
		msg = fmt.Sprintf("input %d is %s", k, num(args[0]))
	}
	return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: msg, Sample: sample}
}

// reverseError finds the node whose local derivative made the gradient of
// output i non-finite: the last node, in evaluation order, that has a
// finite, nonzero adjoint and passes a non-finite amount back.
func (t *Tape) reverseError(i int, vals, adj []float64, stride, off, sample int) error {
	p := t.p
	out := int(p.outs[i])
	for k := out; k >= p.start; k-- {
		gk := adj[k*stride+off]
		op := p.ops[k]
		if op == opLoop {
			if err := t.loopReverseError(k, vals, adj, stride, off, sample); err != nil {
				return err
			}
			continue
		}
		if op == opLane || gk == 0 || !finite(gk) || op.IsStep() || op == opArg {
			continue
		}
		args := t.args(k, vals, stride, off)
		var x, y, z float64
		switch len(args) {
		case 3:
			z = args[2]
			fallthrough
		case 2:
			y = args[1]
			fallthrough
		case 1:
			x = args[0]
		}
		dx, dy, dz := deriv(op, x, y, z, vals[k*stride+off])
		if op == OpPowConst {
			dy = 0
		}
		if !finite(gk*dx) || !finite(gk*dy) || !finite(gk*dz) {
			return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: derivMsg(op, args), Sample: sample, Reverse: true}
		}
	}
	return &DomainError{Pos: p.pos[out], Op: p.ops[out], Msg: "gradient overflows", Sample: sample, Reverse: true}
}
