package tape

import (
	"fmt"
	"math"
	"slices"
)

// Cones around many base points: an analysis that evaluates, around each
// of many base points, the points that change one input (the rows of a
// radial design on a tape with loop nodes, whose cones are element by
// element) moves one Cones from base to base (Rebase) and keeps the cone
// of each input, which depends on the tape alone, across them (Memo).

// coneMemo is a cone kept by Memo: its nodes in tape order, and the
// changed elements of its reductions (vecCones.reds and elems).
type coneMemo struct {
	nodes []int32
	reds  []vred
	elems []int32
}

// Memo makes c keep the cone of every input, and pair of inputs, it
// evaluates, for a caller that goes through many inputs around each base
// point: a cone is then searched for once, not at every change of input.
// Monotone proves nothing from then on (it reports false): its proof holds
// for one base point.
func (c *Cones) Memo() {
	if c.memo == nil {
		c.memo = map[[2]int32]*coneMemo{}
	}
}

// remember keeps the cone just found under key.
func (c *Cones) remember(key [2]int32) []int32 {
	m := &coneMemo{nodes: slices.Clone(c.lastCone), reds: slices.Clone(c.vc.reds), elems: slices.Clone(c.vc.elems)}
	c.memo[key] = m
	return c.recall(key, m)
}

// recall makes the kept cone m the last one.
func (c *Cones) recall(key [2]int32, m *coneMemo) []int32 {
	c.lastCone, c.vc.reds, c.vc.elems = m.nodes, m.reds, m.elems
	c.last, c.lastOK = key, true
	return m.nodes
}

// Rebase moves c's base point to x, as if c had been made there, keeping
// what depends on the tape alone (the users of each node, the cones kept
// by Memo). It evaluates the output at x and returns its error, as Eval
// would; c then keeps its base point.
func (c *Cones) Rebase(x []float64) error {
	y, err := c.t.Eval(x, c.out)
	if err != nil {
		return err
	}
	copy(c.base, x)
	c.y0 = y
	copy(c.vals, c.t.vals)
	copy(c.work, c.vals)
	c.dirty = !c.cleanBase()
	c.x = nil
	// What was built from the base values: the proofs of monotonicity,
	// the plans (whose constants are base values), the state of the
	// reductions.
	clear(c.mono)
	clear(c.plans)
	c.lastCodeOK = false // its gathered operands are base values (conecode.go)
	c.planInstrs = 0
	v := &c.vc
	clear(v.trees)
	for q := range v.picks {
		v.picks[q] = -2
	}
	clear(v.groups)
	return nil
}

// cleanBase reports whether no value outside a cone can hide a non-finite
// one at the base (see hides).
func (c *Cones) cleanBase() bool { return !c.t.p.hides(c.vals, c.needed) }

// hides reports whether, at the point whose node values vals holds, an
// operation the output needs (need) can turn a non-finite operand into a
// finite value: a comparison, min or max, a division by it, a guarded
// economy operation, an if on a non-finite condition, a min or max of a
// vector. At a point that evaluates without error such an operation lies
// in a branch not taken; a point that moves an input may take that branch
// through an if in the input's cone while the operation itself, outside
// the cone, is not evaluated again, so its error would go unseen. A
// non-finite branch of an if outside a cone does not matter (the if's
// condition is outside the cone, so it picks the same branch), and an if
// inside it is evaluated again with its operands tested; operations that
// are not guards pass a non-finite value on, to the output or to a guard
// in the cone.
func (p *tapeProg) hides(vals []float64, need []bool) bool {
	bad := func(s int32) bool { return !finite(vals[s]) }
	// operands reports whether an operand of op that it can hide is not
	// finite: the divisor of a division, the base of a constant power,
	// every operand of the others.
	operands := func(op Op, a, b, z func() int32) bool {
		switch op {
		case OpDiv:
			return bad(b())
		case OpPowConst, OpIf:
			return bad(a())
		}
		ar := op.Arity()
		return bad(a()) || ar >= 2 && bad(b()) || ar == 3 && bad(z())
	}
	for k := p.start; k < len(need); k++ {
		op := p.ops[k]
		switch {
		case op == opLoop:
			l := &p.loops[p.a[k]]
			switch l.kind {
			case loopMap:
				if !opMetas[l.op].guard {
					continue
				}
				for j := range l.n {
					if k+int(j) >= len(need) || !need[k+int(j)] {
						continue
					}
					at := func(q int) func() int32 { return func() int32 { return l.arg[q] + j*l.step[q] } }
					if operands(l.op, at(0), at(1), at(2)) {
						return true
					}
				}
			case loopMin, loopMax:
				if need[k] && !allFinite(vals[l.arg[0]:l.arg[0]+l.n]) {
					return true
				}
			}
		case op == opArg || op == opLane || !need[k] || !opMetas[op].guard:
		default:
			if operands(op, func() int32 { return p.a[k] }, func() int32 { return p.b[k] }, func() int32 { return p.a[k+1] }) {
				return true
			}
		}
	}
	return false
}

// Step moves input i of the base point to v: it evaluates the new point
// through the cone of input i, as Eval does, and keeps its values as the
// new base, so that a path of points each one input from the last (a
// trajectory of elementary effects on a model of vectors) costs a cone a
// point. It returns the output at the new point, or the error of Eval
// there, which leaves c at its base. A step from a base that hides a
// non-finite value (see hides), and one whose cone meets a non-finite
// value, are evaluated whole (Rebase).
func (c *Cones) Step(i int, v float64) (float64, error) {
	p := c.t.p
	if i < 0 || i >= p.nIn {
		panic(fmt.Sprintf("tape: Cones.Step of input %d of %d", i, p.nIn))
	}
	whole := func() (float64, error) {
		x := slices.Clone(c.base)
		x[i] = v
		if err := c.Rebase(x); err != nil {
			return math.NaN(), err
		}
		return c.y0, nil
	}
	if c.dirty {
		return whole()
	}
	nodes := c.coneOf(i, -1)
	w := c.work
	w[i] = v
	bad := c.runVec(w, nodes)
	y := w[p.outs[c.out]]
	if bad || !finite(y) {
		// Put the base back, as evalVec does, and evaluate whole.
		for _, k := range nodes {
			w[k] = c.vals[k]
		}
		w[i] = c.vals[i]
		for _, t := range c.vc.touched {
			t.restore()
		}
		c.vc.touched = c.vc.touched[:0]
		for q := len(c.vc.gundo) - 1; q >= 0; q-- {
			u := c.vc.gundo[q]
			u.st.vals[u.q] = u.v
		}
		c.vc.gundo = c.vc.gundo[:0]
		return whole()
	}
	// Keep the new point: its values, the reductions' trees and group
	// members as updated; a min or max in the cone finds its pick again
	// from the new values when next asked.
	for _, k := range nodes {
		c.vals[k] = w[k]
	}
	c.vals[i] = v
	c.base[i] = v
	c.y0 = y
	c.x = nil
	for _, t := range c.vc.touched {
		t.undo = t.undo[:0]
	}
	c.vc.touched = c.vc.touched[:0]
	c.vc.gundo = c.vc.gundo[:0]
	for _, r := range c.vc.reds {
		if l := &p.loops[p.a[r.k]]; (l.kind == loopMin || l.kind == loopMax) && c.vc.picks != nil {
			c.vc.picks[p.a[r.k]] = -2
		}
	}
	clear(c.mono)
	clear(c.plans)
	c.lastCodeOK = false
	c.planInstrs = 0
	return y, nil
}
