package tape

import (
	"slices"
	"sort"
)

// Cones of loop nodes.
//
// On a tape with loop nodes (vec.go) a cone is a set of slots, element by
// element: when one element of an input vector changes, an element-wise
// map changes in one element, a gather in the lanes that copy it, a group
// sum in the group that holds it, and a reduction in its one slot. A point
// is evaluated by running, in tape order over a copy of the base values,
// the scalar operations of its cone and, for a loop node, only its changed
// elements:
//
//   - a map element, a gather element: the element's operation on its
//     operands, the expression the full pass uses;
//   - a sum or a dot product: the blocks of its tree that hold a changed
//     term are summed again and the nodes above them (sumTree), so the
//     result has the bits of the full pass in O(sumBlock + log2 n) a
//     changed block;
//   - a min or max: the base's pick against the changed elements, the
//     tie to the first as the full pass breaks it; the whole vector again
//     only when the base's pick itself moved the wrong way;
//   - a group sum: as a sum, over a copy of the group's members in order
//     and the tree of their sum (groupState).
//
// A point thus costs O(cone), not O(tape). Each value is the full pass's
// to the bit: the same operations on the same operands in the same order.
// A point whose cone meets a non-finite value is evaluated again by the
// full pass (Cones.reference), which finds the error, if any.

// vecCones holds what the cones of a tape with loop nodes keep: the base
// state of the reductions, built on first use, and the changed elements
// of the reductions in the last cone.
type vecCones struct {
	// By loop number (the index into tapeProg.loops), built on first use:
	trees  []*sumTree    // sum and dot loops: the tree at the base
	picks  []int32       // min and max loops: the base's pick, -1 when a value is not finite, -2 before it is known
	groups []*groupState // group loops
	gundo  []groupUndo   // the member values changed since the last restore

	reds    []vred  // the reductions of the last cone, in tape order
	elems   []int32 // their changed elements
	touched []*sumTree
}

// groupState is what the cones keep of a group loop: its members' values at
// the base, group by group in the order of loop.mem, and the sum tree of
// each group over them.
type groupState struct {
	vals  []float64  // vals[q] is element mem[q]'s value
	rank  []int32    // rank[i] is q with mem[q] = i
	trees []*sumTree // by group, over vals[mstart[g]:mstart[g+1]]
}

type groupUndo struct {
	st *groupState
	q  int32
	v  float64
}

// vred is a reduction in a cone: the loop node at k, whose changed
// elements are elems[lo:hi], ascending.
type vred struct {
	k, lo, hi int32
}

// loopEdges calls f(k, a) for each operand a of each element k of the loop
// node at h that the output needs.
func (c *Cones) loopEdges(h int, f func(k, a int32)) {
	p := c.t.p
	l := &p.loops[p.a[h]]
	need := func(j int) bool { return h+j < len(c.needed) && c.needed[h+j] }
	switch l.kind {
	case loopMap:
		ar := l.op.Arity()
		for j := range int(l.n) {
			if !need(j) {
				continue
			}
			k := int32(h + j)
			var seen [3]int32
			for i := range ar {
				a := l.arg[i] + int32(j)*l.step[i]
				if !slices.Contains(seen[:i], a) {
					f(k, a)
				}
				seen[i] = a
			}
		}
	case loopGather:
		for j, i := range l.idx {
			if need(j) {
				f(int32(h+j), l.arg[0]+i)
			}
		}
	case loopGroup:
		for i, g := range l.idx {
			if need(int(g)) {
				f(int32(h)+g, l.arg[0]+int32(i))
			}
		}
	default:
		if need(0) {
			l.operands(func(first, n int32) {
				for s := first; s < first+n; s++ {
					f(int32(h), s)
				}
			})
		}
	}
}

// changedIn appends to dst the offsets s - first of the slots s of the run
// [first, first+n) in the cone: among the cone's nodes (ascending) or
// the changed inputs.
func (c *Cones) changedIn(dst []int32, nodes, inputs []int32, first, n int32) []int32 {
	for _, s := range inputs {
		if s >= first && s < first+n {
			dst = append(dst, s-first)
		}
	}
	lo := sort.Search(len(nodes), func(q int) bool { return nodes[q] >= first })
	for q := lo; q < len(nodes) && nodes[q] < first+n; q++ {
		dst = append(dst, nodes[q]-first)
	}
	return dst
}

// vecCone records the changed elements of each reduction in the cone
// nodes of the inputs.
func (c *Cones) vecCone(inputs, nodes []int32) {
	p := c.t.p
	v := &c.vc
	v.reds, v.elems = v.reds[:0], v.elems[:0]
	group := int32(-1)
	for _, k := range nodes {
		h := k
		switch p.ops[k] {
		case opLoop:
		case opLane:
			h = p.a[k]
		default:
			continue
		}
		l := &p.loops[p.a[h]]
		switch l.kind {
		case loopSum, loopDot, loopMin, loopMax:
		case loopGroup:
			// The changed elements of a group sum, by group.
			if h == group {
				continue
			}
			group = h
			lo := int32(len(v.elems))
			v.elems = c.changedIn(v.elems, nodes, inputs, l.arg[0], l.src)
			e := v.elems[lo:]
			slices.SortFunc(e, func(a, b int32) int {
				if ga, gb := l.idx[a], l.idx[b]; ga != gb {
					return int(ga - gb)
				}
				return int(a - b)
			})
			e = slices.Compact(e)
			v.elems = v.elems[:int(lo)+len(e)]
			v.reds = append(v.reds, vred{k: h, lo: lo, hi: int32(len(v.elems))})
			continue
		default:
			continue
		}
		lo := int32(len(v.elems))
		v.elems = c.changedIn(v.elems, nodes, inputs, l.arg[0], l.n)
		if l.kind == loopDot {
			v.elems = c.changedIn(v.elems, nodes, inputs, l.arg[1], l.n)
		}
		e := v.elems[lo:]
		slices.Sort(e)
		e = slices.Compact(e)
		v.elems = v.elems[:int(lo)+len(e)]
		v.reds = append(v.reds, vred{k: k, lo: lo, hi: int32(len(v.elems))})
	}
}

// loopDir returns the direction in the cone's input of slot k, a loop
// node or one of its elements, and whether the output stays affine in it
// there (see Monotone): a map element as its operation, a gather element
// as its source, a sum as its terms together, a dot product as each term
// with one factor outside the cone, a min or max as its elements
// together (not affine), a group sum as its changed members together.
func (c *Cones) loopDir(k int32) (int8, bool) {
	p := c.t.p
	h := k
	if p.ops[k] == opLane {
		h = p.a[k]
	}
	j := k - h
	l := &p.loops[p.a[h]]
	switch l.kind {
	case loopMap:
		el := func(i int) int32 { return l.arg[i] + j*l.step[i] }
		return c.opDir(l.op, el(0), el(1), el(2))
	case loopGather:
		return c.d(l.arg[0] + l.idx[j]), true
	case loopGroup:
		var r int8
		red := c.redOf(h)
		elems := c.vc.elems[red.lo:red.hi] // by group
		q := sort.Search(len(elems), func(q int) bool { return l.idx[elems[q]] >= j })
		for ; q < len(elems) && l.idx[elems[q]] == j; q++ {
			r = dirBoth(r, c.d(l.arg[0]+elems[q]))
		}
		return r, true
	}
	red := c.redOf(k)
	var r int8
	affine := l.kind == loopSum || l.kind == loopDot
	for _, e := range c.vc.elems[red.lo:red.hi] {
		x := l.arg[0] + e
		switch l.kind {
		case loopDot:
			y := l.arg[1] + e
			switch {
			case c.in(x) && c.in(y):
				r, affine = dirUnknown, false
			case c.in(x):
				r = dirBoth(r, dirTimes(c.d(x), c.vals[y]))
			default:
				r = dirBoth(r, dirTimes(c.d(y), c.vals[x]))
			}
		default:
			r = dirBoth(r, c.d(x))
		}
	}
	return r, affine
}

// redOf returns the reduction at k of the last cone.
func (c *Cones) redOf(k int32) vred {
	r := c.vc.reds
	q := sort.Search(len(r), func(q int) bool { return r[q].k >= k })
	return r[q]
}

// tree returns the sum tree of the sum or dot loop at k, at the base.
func (c *Cones) tree(k int32, l *loop) *sumTree {
	v := &c.vc
	li := c.t.p.a[k]
	if v.trees == nil {
		v.trees = make([]*sumTree, len(c.t.p.loops))
	}
	if t := v.trees[li]; t != nil {
		return t
	}
	x, n := int(l.arg[0]), int(l.n)
	var ys []float64
	if l.kind == loopDot {
		ys = c.vals[l.arg[1] : int(l.arg[1])+n]
	}
	t := newSumTree(c.vals[x:x+n], ys)
	v.trees[li] = t
	return t
}

// pick returns the element the min or max loop at k picks at the base, or
// -1 when one of its elements is not finite there.
func (c *Cones) pick(k int32, l *loop) int32 {
	v := &c.vc
	li := c.t.p.a[k]
	if v.picks == nil {
		v.picks = make([]int32, len(c.t.p.loops))
		for q := range v.picks {
			v.picks[q] = -2
		}
	}
	if b := v.picks[li]; b != -2 {
		return b
	}
	xs := c.vals[l.arg[0] : l.arg[0]+l.n]
	b := int32(l.best(xs))
	if !allFinite(xs) {
		b = -1
	}
	v.picks[li] = b
	return b
}

// group returns the state of the group loop at k, built from the base on
// first use.
func (c *Cones) group(k int32, l *loop) *groupState {
	v := &c.vc
	li := c.t.p.a[k]
	if v.groups == nil {
		v.groups = make([]*groupState, len(c.t.p.loops))
	}
	if st := v.groups[li]; st != nil {
		return st
	}
	st := &groupState{vals: make([]float64, len(l.mem)), rank: make([]int32, len(l.mem)), trees: make([]*sumTree, l.n)}
	xs := c.vals[l.arg[0] : l.arg[0]+l.src]
	for q, i := range l.mem {
		st.vals[q], st.rank[i] = xs[i], int32(q)
	}
	for g := range l.n {
		st.trees[g] = newSumTree(st.vals[l.mstart[g]:l.mstart[g+1]], nil)
	}
	v.groups[li] = st
	return st
}

// groupSum evaluates element g, at slot k, of the group loop l at h, whose
// changed elements red lists ordered by group: the changed members' values
// are copied into the group's state and the blocks of its tree that hold
// them summed again.
func (c *Cones) groupSum(l *loop, v []float64, h, k, g int32, red vred) {
	st := c.group(h, l)
	elems := c.vc.elems[red.lo:red.hi]
	q := sort.Search(len(elems), func(q int) bool { return l.idx[elems[q]] >= g })
	lo := l.mstart[g]
	gv := st.vals[lo:l.mstart[g+1]]
	t := st.trees[g]
	c.vc.touched = append(c.vc.touched, t)
	end := q
	for ; end < len(elems) && l.idx[elems[end]] == g; end++ {
		e := elems[end]
		r := st.rank[e]
		c.vc.gundo = append(c.vc.gundo, groupUndo{st, r, st.vals[r]})
		st.vals[r] = v[l.arg[0]+e]
	}
	// Then the blocks that hold them, each once (ascending: the members
	// of a group are in element order).
	last := int32(-1)
	for _, e := range elems[q:end] {
		if b := (st.rank[e] - lo) / sumBlock; b != last {
			t.update(gv, nil, int(b))
			last = b
		}
	}
	v[k] = t.root()
}

// runVec evaluates nodes, a cone of a tape with loop nodes in tape order,
// over the values v, and says whether an operation met a non-finite value.
func (c *Cones) runVec(v []float64, nodes []int32) (bad bool) {
	p := c.t.p
	red := 0
	group, gred := int32(-1), vred{}
	for _, k := range nodes {
		op := p.ops[k]
		if op != opLoop && op != opLane {
			if p.step(v, k) {
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
			if c.mapElem(l, v, k, k-h) {
				bad = true
			}
		case loopGather:
			v[k] = v[l.arg[0]+l.idx[k-h]]
		case loopGroup:
			if h != group {
				group, gred = h, c.vc.reds[red]
				red++
			}
			c.groupSum(l, v, h, k, k-h, gred)
		default:
			if c.reduce(l, v, k, c.vc.reds[red]) {
				bad = true
			}
			red++
		}
	}
	return bad
}

// evalVec is Eval on a tape with loop nodes: each point by the cone of
// its inputs over a copy of the base values, restored after it.
func (c *Cones) evalVec(dst []float64, i int, vi []float64, j int, vj []float64, n int) error {
	nodes := c.coneOf(i, j)
	p := c.t.p
	v := c.work
	out := p.outs[c.out]
	for s := 0; s < n; s++ {
		v[i] = vi[s]
		if j >= 0 {
			v[j] = vj[s]
		}
		bad := c.runVec(v, nodes)
		dst[s] = v[out]
		for _, k := range nodes {
			v[k] = c.vals[k]
		}
		v[i] = c.vals[i]
		if j >= 0 {
			v[j] = c.vals[j]
		}
		for _, t := range c.vc.touched {
			t.restore()
		}
		c.vc.touched = c.vc.touched[:0]
		for q := len(c.vc.gundo) - 1; q >= 0; q-- {
			u := c.vc.gundo[q]
			u.st.vals[u.q] = u.v
		}
		c.vc.gundo = c.vc.gundo[:0]
		if bad || !finite(dst[s]) {
			if err := c.reference(dst, i, vi, j, vj, s, 1); err != nil {
				return err
			}
		}
	}
	return nil
}

// mapElem evaluates element j, at slot k, of the map loop l, as
// mapForward does, and reports whether an operand of a guard operation is
// not finite.
func (c *Cones) mapElem(l *loop, v []float64, k, j int32) (bad bool) {
	x := v[l.arg[0]+j*l.step[0]]
	y := v[l.arg[1]+j*l.step[1]]
	z := v[l.arg[2]+j*l.step[2]]
	v[k] = evalOp(l.op, x, y, z)
	return opMetas[l.op].guard && (!finite(x) || !finite(y) || !finite(z))
}

// reduce evaluates the reduction loop l at k, whose changed elements red
// lists, and reports whether a value it met is not finite.
func (c *Cones) reduce(l *loop, v []float64, k int32, red vred) (bad bool) {
	n := l.n
	x := l.arg[0]
	xs := v[x : x+n]
	elems := c.vc.elems[red.lo:red.hi]
	switch l.kind {
	case loopSum, loopDot:
		t := c.tree(k, l)
		var ys []float64
		if l.kind == loopDot {
			ys = v[l.arg[1] : l.arg[1]+n]
		}
		c.vc.touched = append(c.vc.touched, t)
		last := int32(-1)
		for _, e := range elems {
			if b := e / sumBlock; b != last {
				t.update(xs, ys, int(b))
				last = b
			}
		}
		v[k] = t.root()
		return false
	}
	// min, max: the first best element, as l.best picks it.
	b := c.pick(k, l)
	if b < 0 {
		v[k] = xs[l.best(xs)]
		return true
	}
	better := func(e, b int32) bool { // e beats b: strictly, as in best
		if l.kind == loopMin {
			return !(xs[b] <= xs[e])
		}
		return !(xs[b] >= xs[e])
	}
	for _, e := range elems {
		if !finite(xs[e]) {
			bad = true
		}
	}
	if bad {
		v[k] = xs[l.best(xs)]
		return true
	}
	base := c.vals[x+b]
	if _, moved := slices.BinarySearch(elems, b); moved {
		// The pick changed: it stays ahead of every unchanged element only
		// if it did not move away from the best.
		if l.kind == loopMin && xs[b] > base || l.kind == loopMax && xs[b] < base {
			v[k] = xs[l.best(xs)]
			return false
		}
	}
	// The first best of the pick and the changed elements, in index order.
	best := int32(-1)
	consider := func(e int32) {
		if best < 0 || better(e, best) {
			best = e
		}
	}
	q := 0
	for ; q < len(elems) && elems[q] < b; q++ {
		consider(elems[q])
	}
	consider(b)
	for ; q < len(elems); q++ {
		if elems[q] != b {
			consider(elems[q])
		}
	}
	v[k] = xs[best]
	return false
}
