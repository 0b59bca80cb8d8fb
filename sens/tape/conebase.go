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
	c.planInstrs = 0
	v := &c.vc
	clear(v.trees)
	for q := range v.picks {
		v.picks[q] = -2
	}
	clear(v.groups)
	return nil
}

// cleanBase reports whether every value the output needs is finite at the
// base, so that no value outside a cone hides a non-finite one.
func (c *Cones) cleanBase() bool {
	for k, need := range c.needed {
		if need && !finite(c.vals[k]) {
			return false
		}
	}
	return true
}

// Step moves input i of the base point to v: it evaluates the new point
// through the cone of input i, as Eval does, and keeps its values as the
// new base, so that a path of points each one input from the last (a
// trajectory of elementary effects on a model of vectors) costs a cone a
// point. It returns the output at the new point, or the error of Eval
// there, which leaves c at its base. A base with a value that is not
// finite, and a step whose cone meets one, are evaluated whole (Rebase).
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
	bad := false
	red := 0
	group, gred := int32(-1), vred{}
	for _, k := range nodes {
		op := p.ops[k]
		if op != opLoop && op != opLane {
			if p.step(w, k) {
				bad = true
			}
			continue
		}
		h := k
		if op == opLane {
			h = p.a[k]
		}
		l := &p.loops[p.a[h]]
		switch l.kind {
		case loopMap:
			if c.mapElem(l, w, k, k-h) {
				bad = true
			}
		case loopGather:
			w[k] = w[l.arg[0]+l.idx[k-h]]
		case loopGroup:
			if h != group {
				group, gred = h, c.vc.reds[red]
				red++
			}
			c.groupSum(l, w, h, k, k-h, gred)
		default:
			if c.reduce(l, w, k, c.vc.reds[red]) {
				bad = true
			}
			red++
		}
	}
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
	c.planInstrs = 0
	return y, nil
}
