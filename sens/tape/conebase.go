package tape

import "slices"

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
