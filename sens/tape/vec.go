package tape

import (
	"fmt"
	"math"
	"slices"
)

// Vectors and loop nodes.
//
// A vector is a run of slots: the inputs of one column, a run of
// constants, or the elements of a loop node's result. A loop node is one
// operation over whole vectors: an element-wise operation with scalars
// broadcast (a map), a reduction (sum, dot product, min, max), a gather
// (the elements a filter keeps) or a grouped sum. It occupies the slots
// of its result, one a element: the first slot is the node (opLoop),
// the others are its lanes (opLane), which hold values and adjoints but
// no operation of their own, so the passes dispatch once per loop node,
// not once per element, and skip the lanes. A reduction occupies one
// slot. Every element of every vector is a slot of its own, so the
// partial derivative of an output with respect to each element of an
// input vector is an ordinary entry of the gradient.
//
// The Builder hands a vector to its caller as a Slot of its own (an
// opVec handle, never laid out on a tape); Elem gives the slot of one
// element. A vector shorter than the loop threshold (SetLoopMin), or
// whose elements do not lie in a run of slots, is built from ordinary
// scalar operations instead: the values and derivatives are the same to
// the bit, since a loop node evaluates each element with the same
// expressions as the scalar passes, in the same order, and a sum (of a
// vector, of products, of a group) adds its terms in the order of
// sumOrdered, which the Builder's scalar operations follow too (sumSlots).

// loopKind is what a loop node computes.
type loopKind uint8

const (
	loopMap    loopKind = iota + 1 // lane j = op(x_j, y_j, z_j), a scalar operand broadcast
	loopSum                        // Σ x_j, from the first element on
	loopDot                        // Σ x_j y_j, from the first element on
	loopMin                        // min_j x_j; a tie goes to the first
	loopMax                        // max_j x_j; a tie goes to the first
	loopGather                     // lane j = x[idx[j]]
	loopGroup                      // lane g = Σ x_i over the i with idx[i] = g, in the order of sumOrdered
)

// loop is a loop node. Slots are builder slots in a Builder and tape
// slots on a Tape.
type loop struct {
	kind loopKind
	op   Op    // loopMap: the element operation
	n    int32 // elements of the result (map, gather, group) or of the operand (reductions)
	src  int32 // gather, group: elements of the source vector
	// arg holds the first slot of each operand, step 1 for a vector
	// operand and 0 for a scalar one, broadcast to every element. Unused
	// operands repeat the first.
	arg  [3]int32
	step [3]int32
	idx  []int32 // gather: source element of each lane; group: group of each source element
	// group: mem[mstart[g]:mstart[g+1]] are the source elements of group
	// g, in order; first[g] = mem[mstart[g]], its first
	mem, mstart, first []int32
}

// width returns the number of slots the loop's result occupies.
func (l *loop) width() int {
	switch l.kind {
	case loopMap, loopGather, loopGroup:
		return int(l.n)
	}
	return 1
}

// bvec is a vector of a Builder: the slots of its elements, a run
// first..first+n-1 unless list is set.
type bvec struct {
	first Slot
	n     int
	list  []Slot
	neg   Slot // the vector this one negates element-wise, or -1
	mul   int  // the loop of an element-wise product of two vectors, or -1
}

// DefaultLoopMin is the shortest vector a Builder makes a loop node for;
// shorter ones are built from scalar operations. A loop node costs a
// dispatch, a look-up of its table entry and the first touch of its
// operands before its first element, about as much as half a dozen
// scalar operations; BenchmarkLoopMin measures the crossover (between six
// and eight elements on the development machine).
const DefaultLoopMin = 8

// SetLoopMin sets the shortest vector made into loop nodes (DefaultLoopMin
// when n <= 0). A very large n builds every vector from scalar operations,
// which gives the same values and derivatives to the bit: the reference
// the loop nodes are tested against.
func (b *Builder) SetLoopMin(n int) { b.loopMin = n }

func (b *Builder) minLoop() int {
	if b.loopMin <= 0 {
		return DefaultLoopMin
	}
	return b.loopMin
}

func (b *Builder) newVec(v bvec) Slot {
	s := Slot(len(b.nodes))
	b.nodes = append(b.nodes, bnode{op: opVec, pos: b.pos, args: [3]Slot{Slot(len(b.vecs)), -1, -1}})
	b.vecs = append(b.vecs, v)
	return s
}

// vec returns the vector of handle s, or nil when s is a scalar slot.
func (b *Builder) vec(s Slot) *bvec {
	if s < 0 || int(s) >= len(b.nodes) {
		panic(fmt.Sprintf("tape: slot %d not made by this builder", s))
	}
	if n := b.nodes[s]; n.op == opVec {
		return &b.vecs[n.args[0]]
	}
	return nil
}

// IsVec reports whether s is a vector, and its length.
func (b *Builder) IsVec(s Slot) (n int, ok bool) {
	if v := b.vec(s); v != nil {
		return v.n, true
	}
	return 0, false
}

// VecInput adds n inputs (n >= 1), numbered consecutively, and returns
// the vector of them.
func (b *Builder) VecInput(n int) Slot {
	if n < 1 {
		panic("tape: VecInput of no elements")
	}
	b.nodes = slices.Grow(b.nodes, n+1)
	b.inputs = slices.Grow(b.inputs, n)
	first := b.Input()
	for range n - 1 {
		b.Input()
	}
	return b.newVec(bvec{first: first, n: n, neg: -1, mul: -1})
}

// VecConst returns a vector of the constants vs (at least one).
func (b *Builder) VecConst(vs []float64) Slot {
	if len(vs) == 0 {
		panic("tape: VecConst of no elements")
	}
	first := Slot(len(b.nodes))
	b.nodes = slices.Grow(b.nodes, len(vs)+1)
	for _, v := range vs {
		b.nodes = append(b.nodes, constNode(v, b.pos))
	}
	return b.newVec(bvec{first: first, n: len(vs), neg: -1, mul: -1})
}

// Elem returns the slot of element j of the vector v.
func (b *Builder) Elem(v Slot, j int) Slot {
	x := b.mustVec(v)
	if j < 0 || j >= x.n {
		panic(fmt.Sprintf("tape: element %d of a vector of %d", j, x.n))
	}
	if x.list != nil {
		return x.list[j]
	}
	return x.first + Slot(j)
}

// Elems returns the slots of the elements of v.
func (b *Builder) Elems(v Slot) []Slot {
	x := b.mustVec(v)
	out := make([]Slot, x.n)
	for j := range out {
		out[j] = b.Elem(v, j)
	}
	return out
}

// VecConsts returns the values of v when every element is a constant.
func (b *Builder) VecConsts(v Slot) ([]float64, bool) {
	x := b.mustVec(v)
	out := make([]float64, x.n)
	for j := range out {
		c, ok := b.IsConst(b.Elem(v, j))
		if !ok {
			return nil, false
		}
		out[j] = c
	}
	return out, true
}

func (b *Builder) mustVec(v Slot) *bvec {
	x := b.vec(v)
	if x == nil {
		panic(fmt.Sprintf("tape: slot %d is not a vector", v))
	}
	return x
}

// contiguous reports whether every vector among args lies in a run of
// slots.
func (b *Builder) contiguous(args ...Slot) bool {
	for _, a := range args {
		if x := b.vec(a); x != nil && x.list != nil {
			return false
		}
	}
	return true
}

// loopKey identifies a map or a reduction for sharing: the same operation
// over the same operands is one loop node, as the scalar operations it
// stands for would be shared.
type loopKey struct {
	kind      loopKind
	op        Op
	n         int32
	arg, step [3]int32
}

// addLoop appends loop node l (its operand slots are builder slots) and
// returns the vector of its result, or for a reduction its slot. A map or
// reduction made before on the same operands is returned instead.
func (b *Builder) addLoop(l loop) Slot {
	var key loopKey
	if l.idx == nil {
		key = loopKey{l.kind, l.op, l.n, l.arg, l.step}
		if s, ok := b.loopCSE[key]; ok {
			return s
		}
	}
	r := b.appendLoop(l)
	if l.idx == nil {
		if b.loopCSE == nil {
			b.loopCSE = map[loopKey]Slot{}
		}
		b.loopCSE[key] = r
	}
	return r
}

func (b *Builder) appendLoop(l loop) Slot {
	h := Slot(len(b.nodes))
	li := len(b.loops)
	b.nodes = slices.Grow(b.nodes, l.width()+1)
	b.nodes = append(b.nodes, bnode{op: opLoop, pos: b.pos, args: [3]Slot{Slot(li), -1, -1}})
	w := l.width()
	for range w - 1 {
		b.nodes = append(b.nodes, bnode{op: opLane, pos: b.pos, args: [3]Slot{h, -1, -1}})
	}
	b.loops = append(b.loops, l)
	switch l.kind {
	case loopMap, loopGather, loopGroup:
		return b.newVec(bvec{first: h, n: w, neg: -1, mul: -1})
	}
	return h
}

// Map adds the element-wise operation op over args: each argument is a
// vector, all of one length, or a scalar, used for every element. At
// least one argument must be a vector. The result follows the Builder's
// rules element by element: constants fold, and x + 0, x * 1, x / 1,
// x ^ 1, -(-x), 0 - x, x ^ 2 and x ^ c simplify as for Binary.
func (b *Builder) Map(op Op, args ...Slot) Slot {
	b.checkOp(op, len(args))
	n := -1
	for _, a := range args {
		if x := b.vec(a); x != nil {
			if n >= 0 && x.n != n {
				panic(fmt.Sprintf("tape: Map over vectors of %d and %d elements", n, x.n))
			}
			n = x.n
		} else {
			b.checkSlot(a)
		}
	}
	if n < 0 {
		panic("tape: Map with no vector argument")
	}
	if s, ok := b.simplifyMap(op, args); ok {
		return s
	}
	if s, ok := b.foldMap(op, n, args); ok {
		return s
	}
	if n < b.minLoop() || !b.contiguous(args...) {
		list := make([]Slot, n)
		el := make([]Slot, len(args))
		for j := range list {
			for i, a := range args {
				el[i] = a
				if b.vec(a) != nil {
					el[i] = b.Elem(a, j)
				}
			}
			list[j] = b.Call(op, el...)
		}
		return b.newVec(bvec{list: list, n: n, neg: -1, mul: -1})
	}
	if op == OpPow {
		if _, ok := b.IsConst(args[1]); ok {
			op = OpPowConst
		}
	}
	l := loop{kind: loopMap, op: op, n: int32(n)}
	for i := range 3 {
		a := args[0]
		if i < len(args) {
			a = args[i]
		}
		if x := b.vec(a); x != nil {
			l.arg[i], l.step[i] = int32(x.first), 1
		} else {
			l.arg[i] = int32(a)
		}
	}
	r := b.addLoop(l)
	v := b.mustVec(r)
	switch {
	case op == OpNeg:
		v.neg = args[0]
	case op == OpMul && l.step[0] == 1 && l.step[1] == 1:
		v.mul = int(b.nodes[v.first].args[0])
	}
	return r
}

// simplifyMap applies Binary's simplifications with a constant scalar
// operand, and -(-x) = x.
func (b *Builder) simplifyMap(op Op, args []Slot) (Slot, bool) {
	if op == OpNeg {
		if x := b.vec(args[0]); x != nil && x.neg >= 0 {
			return x.neg, true
		}
		return 0, false
	}
	if len(args) != 2 {
		return 0, false
	}
	x, y := args[0], args[1]
	cx, xc := b.IsConst(x)
	cy, yc := b.IsConst(y)
	switch op {
	case OpAdd:
		if yc && cy == 0 {
			return x, true
		}
		if xc && cx == 0 {
			return y, true
		}
	case OpSub:
		if yc && cy == 0 {
			return x, true
		}
		if xc && cx == 0 && !math.Signbit(cx) {
			return b.Map(OpNeg, y), true
		}
	case OpMul:
		if yc && cy == 1 {
			return x, true
		}
		if xc && cx == 1 {
			return y, true
		}
	case OpDiv:
		if yc && cy == 1 {
			return x, true
		}
	case OpPow:
		if yc && cy == 1 {
			return x, true
		}
		if yc && cy == 2 && !xc {
			return b.Map(OpSquare, x), true
		}
	}
	return 0, false
}

// foldMap computes a map whose arguments are all constants, when every
// element of the result is finite.
func (b *Builder) foldMap(op Op, n int, args []Slot) (Slot, bool) {
	var cs [3][]float64
	var c [3]float64
	for i, a := range args {
		if b.vec(a) != nil {
			vs, ok := b.VecConsts(a)
			if !ok {
				return 0, false
			}
			cs[i] = vs
		} else {
			v, ok := b.IsConst(a)
			if !ok {
				return 0, false
			}
			c[i] = v
		}
	}
	out := make([]float64, n)
	for j := range out {
		var v [3]float64
		for i := range args {
			v[i] = c[i]
			if cs[i] != nil {
				v[i] = cs[i][j]
			}
		}
		out[j] = evalOp(op, v[0], v[1], v[2])
		if !finite(out[j]) {
			return 0, false
		}
	}
	return b.VecConst(out), true
}

// Sum adds the sum of the elements of v: below four elements added one
// after another from the first; from four on, in sumLanes partial sums
// (sumOrdered), whether by a loop node or by scalar operations. The sum of
// an element-wise product of two vectors is their dot product, one loop
// node.
func (b *Builder) Sum(v Slot) Slot {
	x := b.mustVec(v)
	if x.mul >= 0 {
		m := b.loops[x.mul]
		return b.reduce(loopDot, OpAdd, v, Slot(m.arg[0]), Slot(m.arg[1]))
	}
	return b.reduce(loopSum, OpAdd, v, -1, -1)
}

// Dot adds the dot product of the vectors x and y: Σ x_j y_j.
func (b *Builder) Dot(x, y Slot) Slot { return b.Sum(b.Map(OpMul, x, y)) }

// Reduce adds the smallest (op OpMin) or largest (OpMax) element of v;
// a tie credits the first, as a left fold of op does.
func (b *Builder) Reduce(op Op, v Slot) Slot {
	switch op {
	case OpMin:
		return b.reduce(loopMin, op, v, -1, -1)
	case OpMax:
		return b.reduce(loopMax, op, v, -1, -1)
	}
	panic(fmt.Sprintf("tape: Reduce with %v", op))
}

// reduce adds a reduction of v: a loop node, or a left fold of the scalar
// operation fold. x and y, when not -1, are the first slots of the two
// factors of a dot product.
func (b *Builder) reduce(kind loopKind, fold Op, v, x, y Slot) Slot {
	vv := b.mustVec(v)
	if vv.n == 1 {
		return b.Elem(v, 0)
	}
	if vv.n < b.minLoop() || vv.list != nil {
		elems := b.Elems(v)
		if fold != OpAdd || len(elems) < sumLanes {
			return b.Fold(fold, elems...)
		}
		return b.sumSlots(elems)
	}
	if vs, ok := b.VecConsts(v); ok {
		var r float64
		if fold == OpAdd {
			r = sumOrdered(vs, nil)
		} else {
			r = vs[0]
			for _, c := range vs[1:] {
				r = evalOp(fold, r, c, 0)
			}
		}
		if finite(r) {
			return b.Const(r)
		}
	}
	l := loop{kind: kind, n: int32(vv.n)}
	l.arg = [3]int32{int32(vv.first), int32(vv.first), int32(vv.first)}
	l.step = [3]int32{1, 1, 1}
	if kind == loopDot {
		l.arg[0], l.arg[1] = int32(x), int32(y)
	}
	return b.addLoop(l)
}

// sumSlots adds the sum of elems as scalar operations in the order of a
// sum loop (sumOrdered).
func (b *Builder) sumSlots(elems []Slot) Slot {
	leaf := func(lo, hi int) Slot {
		block := elems[lo:hi]
		if len(block) < sumLanes {
			return b.Fold(OpAdd, block...)
		}
		var part [sumLanes]Slot
		for r := range part {
			var terms []Slot
			for j := r; j < len(block); j += sumLanes {
				terms = append(terms, block[j])
			}
			part[r] = b.Fold(OpAdd, terms...)
		}
		return b.Binary(OpAdd, b.Binary(OpAdd, part[0], part[1]), b.Binary(OpAdd, part[2], part[3]))
	}
	return sumShape(len(elems), leaf, func(x, y Slot) Slot { return b.Binary(OpAdd, x, y) })
}

// Gather returns the vector of the elements idx[0], idx[1], ... of v (at
// least one): the rows a filter keeps.
func (b *Builder) Gather(v Slot, idx []int) Slot {
	x := b.mustVec(v)
	if len(idx) == 0 {
		panic("tape: Gather of no elements")
	}
	same := len(idx) == x.n
	for j, i := range idx {
		if i < 0 || i >= x.n {
			panic(fmt.Sprintf("tape: Gather of element %d of a vector of %d", i, x.n))
		}
		same = same && i == j
	}
	if same {
		return v
	}
	if len(idx) < b.minLoop() || x.list != nil {
		list := make([]Slot, len(idx))
		for j, i := range idx {
			list[j] = b.Elem(v, i)
		}
		return b.newVec(bvec{list: list, n: len(list), neg: -1, mul: -1})
	}
	if vs, ok := b.VecConsts(v); ok {
		out := make([]float64, len(idx))
		for j, i := range idx {
			out[j] = vs[i]
		}
		return b.VecConst(out)
	}
	l := loop{kind: loopGather, n: int32(len(idx)), src: int32(x.n), idx: make([]int32, len(idx))}
	for j, i := range idx {
		l.idx[j] = int32(i)
	}
	l.arg = [3]int32{int32(x.first), int32(x.first), int32(x.first)}
	l.step = [3]int32{1, 1, 1}
	return b.addLoop(l)
}

// GroupSum returns the vector of the sums of the elements of v by group:
// element g is the sum, in the order of sumOrdered, of the elements i of v
// with groups[i] = g, taken in order of i. groups has one entry per
// element of v, each in [0, n), and every group has at least one element.
func (b *Builder) GroupSum(v Slot, groups []int, n int) Slot {
	x := b.mustVec(v)
	if len(groups) != x.n || n < 1 {
		panic(fmt.Sprintf("tape: GroupSum of %d elements with %d groups for %d", x.n, len(groups), n))
	}
	members := make([][]Slot, n)
	mstart := make([]int32, n+1)
	for i, g := range groups {
		if g < 0 || g >= n {
			panic(fmt.Sprintf("tape: group %d of %d", g, n))
		}
		members[g] = append(members[g], b.Elem(v, i))
		mstart[g+1]++
	}
	for g := 1; g <= n; g++ {
		mstart[g] += mstart[g-1]
	}
	mem := make([]int32, len(groups))
	next := slices.Clone(mstart)
	for i, g := range groups {
		mem[next[g]] = int32(i)
		next[g]++
	}
	for g, m := range members {
		if m == nil {
			panic(fmt.Sprintf("tape: group %d has no element", g))
		}
	}
	_, konst := b.VecConsts(v)
	if n < b.minLoop() || x.list != nil || konst {
		list := make([]Slot, n)
		for g, m := range members {
			list[g] = b.sumSlots(m)
		}
		return b.newVec(bvec{list: list, n: n, neg: -1, mul: -1})
	}
	first := make([]int32, n)
	for g := range first {
		first[g] = mem[mstart[g]]
	}
	l := loop{kind: loopGroup, n: int32(n), src: int32(x.n), idx: make([]int32, x.n), mem: mem, mstart: mstart, first: first}
	for i, g := range groups {
		l.idx[i] = int32(g)
	}
	l.arg = [3]int32{int32(x.first), int32(x.first), int32(x.first)}
	l.step = [3]int32{1, 1, 1}
	return b.addLoop(l)
}

// ---- freezing

// markLoop marks live, for the loop node at builder slot k, its lanes and
// every slot of its operands, so that each vector keeps its run of slots.
func (b *Builder) markLoop(k int, live []bool) {
	l := &b.loops[b.nodes[k].args[0]]
	for j := 1; j < l.width(); j++ {
		live[k+j] = true
	}
	l.operands(func(first, n int32) {
		for s := first; s < first+n; s++ {
			live[s] = true
		}
	})
}

// operands calls f with the run of slots of each operand of l.
func (l *loop) operands(f func(first, n int32)) {
	switch l.kind {
	case loopMap:
		for i := range 3 {
			if l.step[i] == 1 {
				f(l.arg[i], l.n)
			} else {
				f(l.arg[i], 1)
			}
		}
	case loopDot:
		f(l.arg[0], l.n)
		f(l.arg[1], l.n)
	case loopGather, loopGroup:
		f(l.arg[0], l.src)
	default:
		f(l.arg[0], l.n)
	}
}

// relocate returns l with its operand slots renumbered by idx.
func (l loop) relocate(idx []int32) loop {
	for i := range l.arg {
		l.arg[i] = idx[l.arg[i]]
	}
	return l
}

// ---- the passes

// loopWidth returns the number of slots of the loop node at k.
func (p *tapeProg) loopWidth(k int) int { return p.loops[p.a[k]].width() }

// endNode returns one past the slots a pass over output node o needs: its
// node, the opArg after a three-argument operation, and every lane of a
// loop node's result.
func (p *tapeProg) endNode(o int) int {
	switch op := p.ops[o]; {
	case op == opLane:
		h := int(p.a[o])
		return h + p.loopWidth(h)
	case op == opLoop:
		return o + p.loopWidth(o)
	case op.Arity() == 3:
		return o + 2
	}
	return o + 1
}

// loopForward evaluates the loop node at k over the values v and reports
// whether a guard operation saw a non-finite operand.
func (p *tapeProg) loopForward(v []float64, k int) (bad bool) { return p.loopForwardIn(v, nil, k) }

// loopForwardIn is loopForward with the inputs that only loop nodes read
// taken from xin in place, when xin is not nil (Value).
func (p *tapeProg) loopForwardIn(v, xin []float64, k int) (bad bool) {
	l := &p.loops[p.a[k]]
	n := int(l.n)
	x := int(l.arg[0])
	vx := p.srcOf(v, xin, x)
	switch l.kind {
	case loopMap:
		return l.mapForward(v, vx, p.srcOf(v, xin, int(l.arg[1])), p.srcOf(v, xin, int(l.arg[2])), k)
	case loopSum:
		v[k] = sumOrdered(vx[x:x+n], nil)
	case loopDot:
		y := int(l.arg[1])
		v[k] = sumOrdered(vx[x:x+n], p.srcOf(v, xin, y)[y:y+n])
	case loopMin, loopMax:
		xs := vx[x : x+n]
		v[k] = xs[l.best(xs)]
		return !allFinite(xs)
	case loopGather:
		o := v[k : k+n]
		for j, i := range l.idx {
			o[j] = vx[x+int(i)]
		}
	case loopGroup:
		for g := range n {
			v[k+g] = sumIndexed(vx[x:x+int(l.src)], l.mem[l.mstart[g]:l.mstart[g+1]])
		}
	}
	return false
}

// sumLanes is the number of partial sums of a sum of four or more terms.
const sumLanes = 4

// sumOrdered returns the sum of xs (of xs[j]*ys[j] when ys is not nil), in
// the order every sum of a tape uses: up to sumBlock terms as sumLeaf adds
// them (below sumLanes terms from the first on; from sumLanes terms on,
// term j is added to partial sum j mod 4, each partial sum from its first
// term on, and the result is (s0 + s1) + (s2 + s3): four chains of
// additions run four times as fast as one, and the rounding error grows
// more slowly); a longer sum block by block, the block sums added as a
// binary tree (sumtree.go), so that a point that changes one term is
// summed again in O(log n).
func sumOrdered(xs, ys []float64) float64 {
	n := len(xs)
	if n <= sumBlock {
		return sumLeaf(xs, ys)
	}
	var st [64]float64
	var ht [64]uint8
	sp := 0
	for lo := 0; lo < n; lo += sumBlock {
		hi := min(lo+sumBlock, n)
		switch {
		case hi-lo < sumBlock && ys == nil:
			st[sp] = sumLeaf(xs[lo:hi], nil)
		case hi-lo < sumBlock:
			st[sp] = sumLeaf(xs[lo:hi], ys[lo:hi])
		case ys == nil:
			st[sp] = sumFull((*[sumBlock]float64)(xs[lo:]))
		default:
			st[sp] = dotFull((*[sumBlock]float64)(xs[lo:]), (*[sumBlock]float64)(ys[lo:]))
		}
		ht[sp] = 0
		sp++
		for sp >= 2 && ht[sp-2] == ht[sp-1] {
			st[sp-2] += st[sp-1]
			ht[sp-2]++
			sp--
		}
	}
	for sp >= 2 {
		st[sp-2] += st[sp-1]
		sp--
	}
	return st[0]
}

// sumFull is sumLeaf of a whole block, in the same order, with the block's
// length known to the compiler.
func sumFull(x *[sumBlock]float64) float64 {
	s0, s1, s2, s3 := x[0], x[1], x[2], x[3]
	for j := sumLanes; j < sumBlock; j += 4 {
		s0 += x[j]
		s1 += x[j+1]
		s2 += x[j+2]
		s3 += x[j+3]
	}
	return (s0 + s1) + (s2 + s3)
}

// dotFull is sumLeaf of the products of a whole block.
func dotFull(x, y *[sumBlock]float64) float64 {
	s0, s1 := float64(x[0]*y[0]), float64(x[1]*y[1])
	s2, s3 := float64(x[2]*y[2]), float64(x[3]*y[3])
	for j := sumLanes; j < sumBlock; j += 4 {
		s0 += float64(x[j] * y[j])
		s1 += float64(x[j+1] * y[j+1])
		s2 += float64(x[j+2] * y[j+2])
		s3 += float64(x[j+3] * y[j+3])
	}
	return (s0 + s1) + (s2 + s3)
}

// sum4 is sumOrdered of at least four terms.
func sum4(xs []float64) float64 {
	s0, s1, s2, s3 := xs[0], xs[1], xs[2], xs[3]
	j := sumLanes
	for ; j+4 <= len(xs); j += 4 {
		x := (*[4]float64)(xs[j:])
		s0 += x[0]
		s1 += x[1]
		s2 += x[2]
		s3 += x[3]
	}
	s := [4]float64{s0, s1, s2, s3}
	for r := 0; j < len(xs); j, r = j+1, r+1 {
		s[r] += xs[j]
	}
	return (s[0] + s[1]) + (s[2] + s[3])
}

// dot4 is sumOrdered of at least four products.
func dot4(xs, ys []float64) float64 {
	ys = ys[:len(xs)]
	s0, s1 := float64(xs[0]*ys[0]), float64(xs[1]*ys[1])
	s2, s3 := float64(xs[2]*ys[2]), float64(xs[3]*ys[3])
	j := sumLanes
	for ; j+4 <= len(xs); j += 4 {
		x, y := (*[4]float64)(xs[j:]), (*[4]float64)(ys[j:])
		s0 += float64(x[0] * y[0])
		s1 += float64(x[1] * y[1])
		s2 += float64(x[2] * y[2])
		s3 += float64(x[3] * y[3])
	}
	s := [4]float64{s0, s1, s2, s3}
	for r := 0; j < len(xs); j, r = j+1, r+1 {
		s[r] += float64(xs[j] * ys[j])
	}
	return (s[0] + s[1]) + (s[2] + s[3])
}

// best returns the index of the element a min or max loop picks: a left
// fold of OpMin or OpMax, which keeps the earlier element on a tie.
func (l *loop) best(xs []float64) int {
	b := 0
	for j := 1; j < len(xs); j++ {
		if l.kind == loopMin && !(xs[b] <= xs[j]) || l.kind == loopMax && !(xs[b] >= xs[j]) {
			b = j
		}
	}
	return b
}

// mapForward evaluates a map node at k: the common arithmetic in loops of
// its own, the rest through evalOp, the reference definition.
// The values of its operands x, y, z are read from vx, vy, vz (each v or
// the inputs, see srcOf).
func (l *loop) mapForward(v, vx, vy, vz []float64, k int) (bad bool) {
	n := int(l.n)
	o := v[k : k+n]
	x, y, z := int(l.arg[0]), int(l.arg[1]), int(l.arg[2])
	sx, sy, sz := int(l.step[0]), int(l.step[1]), int(l.step[2])
	op := l.op
	if (op == OpAdd || op == OpMul) && sx == 0 { // commutative: the scalar on the right
		x, y, sx, sy, vx, vy = y, x, sy, sx, vy, vx
	}
	switch {
	case op == OpAdd && sy == 1:
		ys := vy[y : y+n]
		for j, a := range vx[x : x+n] {
			o[j] = a + ys[j]
		}
	case op == OpAdd:
		c := vy[y]
		for j, a := range vx[x : x+n] {
			o[j] = a + c
		}
	case op == OpMul && sy == 1:
		ys := vy[y : y+n]
		for j, a := range vx[x : x+n] {
			o[j] = a * ys[j]
		}
	case op == OpMul:
		c := vy[y]
		for j, a := range vx[x : x+n] {
			o[j] = a * c
		}
	case op == OpSub && sx == 1 && sy == 1:
		ys := vy[y : y+n]
		for j, a := range vx[x : x+n] {
			o[j] = a - ys[j]
		}
	case op == OpSub && sx == 1:
		c := vy[y]
		for j, a := range vx[x : x+n] {
			o[j] = a - c
		}
	case op == OpDiv && sx == 1 && sy == 0:
		c := vy[y]
		for j, a := range vx[x : x+n] {
			o[j] = a / c
		}
	default:
		for j := range o {
			o[j] = evalOp(op, vx[x+j*sx], vy[y+j*sy], vz[z+j*sz])
		}
	}
	if !opMetas[op].guard {
		return false
	}
	ok := allFinite(vx[x:x+max(1, n*sx)]) && allFinite(vy[y:y+max(1, n*sy)])
	if op.Arity() == 3 {
		ok = ok && allFinite(vz[z:z+max(1, n*sz)])
	}
	return !ok
}

// adjoint returns what the reverse pass adds to the adjoints of the
// operands x, y, z of op, whose value is v, for the adjoint gk: the same
// expressions as Reverse, so that a loop node and the scalar operations
// it stands for give the same bits.
func adjoint(op Op, gk, x, y, z, v float64) (da, db, dc float64) {
	switch op {
	case OpAdd:
		return gk, gk, 0
	case OpSub:
		return gk, -gk, 0
	case OpMul:
		return gk * y, gk * x, 0
	case OpDiv:
		q := gk / y
		return q, -(q * v), 0
	case OpNeg:
		return -gk, 0, 0
	case OpSquare:
		return 2 * gk * x, 0, 0
	case OpSqrt:
		return gk * 0.5 / v, 0, 0
	case OpExp:
		return gk * v, 0, 0
	case OpLn:
		return gk / x, 0, 0
	case OpAbs:
		switch {
		case x > 0:
			return gk, 0, 0
		case x < 0:
			return -gk, 0, 0
		}
		return 0, 0, 0
	case OpMin:
		if x <= y {
			return gk, 0, 0
		}
		return 0, gk, 0
	case OpMax:
		if x >= y {
			return gk, 0, 0
		}
		return 0, gk, 0
	case OpIf:
		if x != 0 {
			return 0, gk, 0
		}
		return 0, 0, gk
	}
	if op.IsStep() {
		return 0, 0, 0
	}
	dx, dy, dz := deriv(op, x, y, z, v)
	da = gk * dx
	if op.Arity() >= 2 && op != OpPowConst {
		db = gk * dy
	}
	if op.Arity() == 3 {
		dc = gk * dz
	}
	return da, db, dc
}

// loopReverse runs the reverse pass through the loop node at k: it adds
// to the adjoints g of its operands what the adjoints of its elements
// send back. Adding zero changes no adjoint (an adjoint is never -0: it
// starts at +0), so the amounts are added whatever they are.
//
// With ls (a pass of Value or Gradient; nil in the error searches), the
// inputs only loop nodes read are read from ls.xin when it is not nil, and
// the shapes loopReverseFast knows write their adjoints into dst without
// its clearing them first (vecpass.go). It returns the first slot of what
// it ran: k, or the first slot of the maps a sum ran the pass of, whose
// slots hold no adjoint, so the pass goes on below them.
func (p *tapeProg) loopReverse(v, adj, dst []float64, k int, ls *loopPass) int {
	li := p.a[k]
	l := &p.loops[li]
	n := int(l.n)
	x, y := int(l.arg[0]), int(l.arg[1])
	vx, vy, vz := v, v, v
	if ls != nil {
		if k == ls.done {
			return k // gradientChain stored its amounts (vecpass.go)
		}
		if lo, ok := p.loopReverseFast(v, adj, dst, k, li, ls); ok {
			return lo
		}
		ls.prepare(p, dst, li)
		vx, vy, vz = p.srcOf(v, ls.xin, x), p.srcOf(v, ls.xin, y), p.srcOf(v, ls.xin, int(l.arg[2]))
	}
	// Each operand's adjoints: in dst for an input only loop nodes read.
	gx, gy := p.adjOf(adj, dst, x), p.adjOf(adj, dst, y)
	g := adj
	switch l.kind {
	case loopMap:
		if p.mapReverse(l, v, vx, vy, adj, gx, gy, k) {
			return k
		}
		gz := p.adjOf(adj, dst, int(l.arg[2]))
		z := int(l.arg[2])
		sx, sy, sz := int(l.step[0]), int(l.step[1]), int(l.step[2])
		ar := l.op.Arity()
		for j := n - 1; j >= 0; j-- {
			gk := g[k+j]
			if gk == 0 {
				continue
			}
			xi, yi, zi := x+j*sx, y+j*sy, z+j*sz
			da, db, dc := adjoint(l.op, gk, vx[xi], vy[yi], vz[zi], v[k+j])
			gx[xi] += da
			if ar >= 2 {
				gy[yi] += db
			}
			if ar == 3 {
				gz[zi] += dc
			}
		}
	case loopSum:
		if gk := g[k]; gk != 0 {
			for j := n - 1; j >= 0; j-- {
				gx[x+j] += gk
			}
		}
	case loopDot:
		if gk := g[k]; gk != 0 {
			xs, ys, ax, ay := vx[x:x+n], vy[y:y+n], gx[x:x+n], gy[y:y+n]
			for j := n - 1; j >= 0; j-- {
				ax[j] += gk * ys[j]
				ay[j] += gk * xs[j]
			}
		}
	case loopMin, loopMax:
		if gk := g[k]; gk != 0 {
			gx[x+l.best(vx[x:x+n])] += gk
		}
	case loopGather:
		for j := n - 1; j >= 0; j-- {
			if gk := g[k+j]; gk != 0 {
				gx[x+int(l.idx[j])] += gk
			}
		}
	case loopGroup:
		for i := len(l.idx) - 1; i >= 0; i-- {
			if gk := g[k+int(l.idx[i])]; gk != 0 {
				gx[x+i] += gk
			}
		}
	}
	return k
}

// adjOf returns the buffer that holds the adjoint of slot s in a reverse
// pass: dst, the pass's result, for an input only loop nodes read (so that
// it need not be copied there at the end), else the tape's adjoints.
func (p *tapeProg) adjOf(adj, dst []float64, s int) []float64 {
	if s < p.nIn && p.direct != nil && p.direct[s] {
		return dst
	}
	return adj
}

// findDirect marks the inputs that only loop nodes read: not an operation
// of another kind, not an output, and not in a loop operand's run of
// slots that holds one that is read otherwise (a run's adjoints live in one
// buffer). A reverse pass adds their adjoints in dst directly, in the same
// order as it would in the tape's buffer.
func (p *tapeProg) findDirect() {
	if len(p.loops) == 0 {
		return
	}
	other := make([]bool, p.nIn) // read otherwise
	for k := p.start; k < len(p.ops); k++ {
		if op := p.ops[k]; op != opLoop && op != opLane {
			for _, s := range []int32{p.a[k], p.b[k]} {
				if int(s) < p.nIn {
					other[s] = true
				}
			}
		}
	}
	for _, o := range p.outs {
		if int(o) < p.nIn {
			other[o] = true
		}
	}
	runs := func(f func(first, n int32)) {
		for i := range p.loops {
			p.loops[i].operands(func(first, n int32) {
				if int(first) < p.nIn {
					f(first, n)
				}
			})
		}
	}
	any := false
	for changed := true; changed; {
		changed = false
		runs(func(first, n int32) {
			mixed := false
			for s := first; s < first+n; s++ {
				mixed = mixed || other[s]
			}
			for s := first; s < first+n && mixed; s++ {
				if !other[s] {
					other[s], changed = true, true
				}
			}
		})
	}
	runs(func(first, n int32) { any = any || !other[first] })
	if !any {
		return
	}
	p.direct = make([]bool, p.nIn)
	runs(func(first, n int32) {
		for s := first; s < first+n; s++ {
			p.direct[s] = !other[s]
		}
	})
	for s := 0; s < p.nIn; {
		e := s
		for e < p.nIn && p.direct[e] == p.direct[s] {
			e++
		}
		if p.direct[s] != (len(p.runs)%2 == 1) {
			p.runs = append(p.runs, [2]int{s, s}) // an empty run keeps the parity
		}
		p.runs = append(p.runs, [2]int{s, e})
		s = e
	}
}

// clearAdjoints sets to zero, before a reverse pass of the output whose
// nodes end at end, the tape's adjoints up to there and every input's
// adjoint: in dst for the inputs only loop nodes read.
func (p *tapeProg) clearAdjoints(adj, dst []float64, end int) {
	if p.direct == nil {
		clear(adj[:max(end, p.nIn)])
		return
	}
	if end > p.nIn {
		clear(adj[p.nIn:end])
	}
	for i, r := range p.runs {
		if i%2 == 1 {
			clear(dst[r[0]:r[1]])
		} else {
			clear(adj[r[0]:r[1]])
		}
	}
}

// inputAdjoints copies from the tape's buffer g into dst the adjoints of
// the inputs the reverse pass did not add into dst directly.
func (p *tapeProg) inputAdjoints(dst, g []float64) {
	g = g[:p.nIn] // the buffer ends below the inputs for an output that is one
	if p.direct == nil {
		copy(dst, g)
		return
	}
	for i := 0; i < len(p.runs); i += 2 {
		r := p.runs[i]
		copy(dst[r[0]:r[1]], g[r[0]:r[1]])
	}
}

// mapReverse runs the reverse pass through a map of +, -, * or / over a
// vector and a vector or a scalar, in loops of their own, and reports
// whether it did; the amounts are adjoint's. A constant operand gets no
// adjoint (no pass reads one); a scalar input or node does, the elements'
// amounts added last element first, as the scalar operations would.
// The operands' values are read from vx and vy (see srcOf).
func (p *tapeProg) mapReverse(l *loop, v, vx, vy, adj, ax, ay []float64, k int) bool {
	n := int(l.n)
	x, y := int(l.arg[0]), int(l.arg[1])
	sx, sy := l.step[0], l.step[1]
	konst := func(s int) bool { return s >= p.nIn && s < p.start }
	if !broadcastApart(l) {
		return false // the element-by-element loop, in its order
	}
	gk := adj[k : k+n]
	switch {
	case l.op == OpMul && sx == 1 && sy == 1:
		xs, ys, gx, gy := vx[x:x+n], vy[y:y+n], ax[x:x+n], ay[y:y+n]
		for j := n - 1; j >= 0; j-- {
			if a := gk[j]; a != 0 {
				gx[j] += a * ys[j]
				gy[j] += a * xs[j]
			}
		}
	case l.op == OpMul && sx+sy == 1:
		if sx == 0 {
			x, y, ax, ay, vx, vy = y, x, ay, ax, vy, vx // the vector first; x*y is y*x to the bit
		}
		xs, gx, c := vx[x:x+n], ax[x:x+n], vy[y]
		acc, own := ay[y], !konst(y)
		for j := n - 1; j >= 0; j-- {
			if a := gk[j]; a != 0 {
				gx[j] += a * c
				if own {
					acc += a * xs[j]
				}
			}
		}
		ay[y] = acc
	case (l.op == OpAdd || l.op == OpSub) && sx == 1:
		gx := ax[x : x+n]
		for j := n - 1; j >= 0; j-- {
			gx[j] += gk[j]
		}
		sign := 1.0
		if l.op == OpSub {
			sign = -1
		}
		if sy == 1 {
			gy := ay[y : y+n]
			for j := n - 1; j >= 0; j-- {
				gy[j] += sign * gk[j]
			}
		} else if !konst(y) {
			acc := ay[y]
			for j := n - 1; j >= 0; j-- {
				acc += sign * gk[j]
			}
			ay[y] = acc
		}
	default:
		return false
	}
	return true
}

// broadcastApart reports whether map l's scalar operand, if it has one
// beside a vector, lies outside that vector's slots. A scalar that is an
// element of the vector it multiplies or is added to (v * v[3]) gets two
// amounts from each element's pass; the loops of mapReverse and
// fusedMapReverse, which add one operand's amounts over all elements and
// then the other's (holding the scalar's in a register), would lose one of
// them or add them in another order than the pass element by element.
func broadcastApart(l *loop) bool {
	n := l.n
	for i := range l.op.Arity() {
		if l.step[i] != 0 {
			continue
		}
		s := l.arg[i]
		for j := range l.op.Arity() {
			if l.step[j] == 1 && s >= l.arg[j] && s < l.arg[j]+n {
				return false
			}
		}
	}
	return true
}

// ---- the batched passes

// loopBlock evaluates the loop node at k over the current block of m
// samples; see loopForward.
func (t *Tape) loopBlock(k, m int) (bad bool) {
	l := &t.p.loops[t.p.a[k]]
	row := func(s int) []float64 { return t.row(t.bvals, int32(s), m) }
	n, x := int(l.n), int(l.arg[0])
	switch l.kind {
	case loopMap:
		for j := range n {
			o := row(k + j)
			xs := row(x + j*int(l.step[0]))
			ys := row(int(l.arg[1]) + j*int(l.step[1]))
			var zs []float64
			if l.op.Arity() == 3 {
				zs = row(int(l.arg[2]) + j*int(l.step[2]))
			}
			rowOp(l.op, o, xs, ys, zs)
		}
		if opMetas[l.op].guard {
			l.operands(func(first, c int32) {
				for s := first; s < first+c; s++ {
					bad = bad || !allFinite(row(int(s)))
				}
			})
		}
	case loopSum, loopDot:
		o := row(k)
		if t.bsum == nil {
			t.bsum = make([]float64, (sumLanes+sumStack)*t.bw)
		}
		t.treeRows(n, m, o, func(lo, hi int, dst []float64) { t.sumBlockRows(l, k, lo, hi, m, dst) })
	case loopMin, loopMax:
		o := row(k)
		for j := range n {
			xs := row(x + j)
			for s := range o {
				e := xs[s]
				if j == 0 || l.kind == loopMin && !(o[s] <= e) || l.kind == loopMax && !(o[s] >= e) {
					o[s] = e
				}
			}
			bad = bad || !allFinite(xs)
		}
	case loopGather:
		for j, i := range l.idx {
			copy(row(k+j), row(x+int(i)))
		}
	case loopGroup:
		if t.bsum == nil {
			t.bsum = make([]float64, (sumLanes+sumStack)*t.bw)
		}
		for g := range n {
			mem := l.mem[l.mstart[g]:l.mstart[g+1]]
			t.sumRows(len(mem), m, row(k+g), func(j int) []float64 { return row(x + int(mem[j])) })
		}
	}
	return bad
}

// sumRows writes into o, over a block of m samples, the sum of the rows
// term(0), ..., term(n-1), in the order of sumOrdered.
func (t *Tape) sumRows(n, m int, o []float64, term func(j int) []float64) {
	leaf := func(lo, hi int, o []float64) {
		nn := hi - lo
		lanes := min(nn, sumLanes)
		for j := range nn {
			acc := o
			if lanes == sumLanes {
				r := j % sumLanes
				acc = t.bsum[r*t.bw : r*t.bw+m]
			}
			xs := term(lo + j)
			for s := range acc {
				if j < sumLanes && (lanes == sumLanes || j == 0) {
					acc[s] = xs[s]
				} else {
					acc[s] += xs[s]
				}
			}
		}
		if lanes == sumLanes {
			s0, s1, s2, s3 := t.bsum[:m], t.bsum[t.bw:t.bw+m], t.bsum[2*t.bw:2*t.bw+m], t.bsum[3*t.bw:3*t.bw+m]
			for s := range o {
				o[s] = (s0[s] + s1[s]) + (s2[s] + s3[s])
			}
		}
	}
	t.treeRows(n, m, o, leaf)
}

// treeRows writes into o, over a block of m samples, the sum of n terms in
// the order of sumOrdered: leaf(lo, hi, dst) writes the sum of the terms
// lo..hi-1 (at most sumBlock of them) into dst, and the blocks' sums are
// added pairwise as a binary tree, left to right, on a stack in t.bsum.
func (t *Tape) treeRows(n, m int, o []float64, leaf func(lo, hi int, dst []float64)) {
	if n <= sumBlock {
		leaf(0, n, o)
		return
	}
	stack := func(i int) []float64 { return t.bsum[(sumLanes+i)*t.bw : (sumLanes+i)*t.bw+m] }
	var ht [sumStack]uint8
	sp := 0
	for lo := 0; lo < n; lo += sumBlock {
		leaf(lo, min(lo+sumBlock, n), stack(sp))
		ht[sp] = 0
		sp++
		for sp >= 2 && ht[sp-2] == ht[sp-1] {
			a, c := stack(sp-2), stack(sp-1)
			for s := range a {
				a[s] += c[s]
			}
			ht[sp-2]++
			sp--
		}
	}
	for sp >= 2 {
		a, c := stack(sp-2), stack(sp-1)
		for s := range a {
			a[s] += c[s]
		}
		sp--
	}
	copy(o, stack(0))
}

// sumStack bounds the partial sums a batched long sum keeps: one a bit of
// its number of blocks, and one more.
const sumStack = 48

// sumBlockRows writes into o, over a block of m samples, the sum of terms
// lo..hi-1 of the sum or dot loop l at k, in the order of sumLeaf.
func (t *Tape) sumBlockRows(l *loop, k, lo, hi, m int, o []float64) {
	row := func(s int) []float64 { return t.row(t.bvals, int32(s), m) }
	x, y := int(l.arg[0]), int(l.arg[1])
	n := hi - lo
	lanes := min(n, sumLanes)
	for j := range n {
		r := j % sumLanes
		acc := o
		if lanes == sumLanes {
			acc = t.bsum[r*t.bw : r*t.bw+m]
		}
		xs := row(x + lo + j)
		for s := range acc {
			e := xs[s]
			if l.kind == loopDot {
				e = float64(e * row(y + lo + j)[s])
			}
			if j < sumLanes && (lanes == sumLanes || j == 0) {
				acc[s] = e
			} else {
				acc[s] += e
			}
		}
	}
	if lanes == sumLanes {
		s0, s1, s2, s3 := t.bsum[:m], t.bsum[t.bw:t.bw+m], t.bsum[2*t.bw:2*t.bw+m], t.bsum[3*t.bw:3*t.bw+m]
		for s := range o {
			o[s] = (s0[s] + s1[s]) + (s2[s] + s3[s])
		}
	}
}

// rowOp sets o[s] = op(x[s], y[s], z[s]) over a block, with the same
// expressions as the scalar passes; z is nil unless op takes three
// arguments.
func rowOp(op Op, o, x, y, z []float64) {
	x, y = x[:len(o)], y[:len(o)]
	switch op {
	case OpAdd:
		for s := range o {
			o[s] = x[s] + y[s]
		}
	case OpSub:
		for s := range o {
			o[s] = x[s] - y[s]
		}
	case OpMul:
		for s := range o {
			o[s] = x[s] * y[s]
		}
	case OpDiv:
		for s := range o {
			o[s] = x[s] / y[s]
		}
	default:
		vecOp(op, o, x, y, z)
	}
}

// loopReverseBlock runs the reverse pass through the loop node at k over
// the current block of m samples; see loopReverse.
func (t *Tape) loopReverseBlock(k, m int) {
	l := &t.p.loops[t.p.a[k]]
	val := func(s int) []float64 { return t.row(t.bvals, int32(s), m) }
	adj := func(s int) []float64 { return t.row(t.badj, int32(s), m) }
	n, x, y := int(l.n), int(l.arg[0]), int(l.arg[1])
	switch l.kind {
	case loopMap:
		ar := l.op.Arity()
		z := int(l.arg[2])
		for j := n - 1; j >= 0; j-- {
			xi, yi, zi := x+j*int(l.step[0]), y+j*int(l.step[1]), z+j*int(l.step[2])
			gk, vs, xs, ys, zs := adj(k+j), val(k+j), val(xi), val(yi), val(zi)
			ga, gb, gc := adj(xi), adj(yi), adj(zi)
			for s, g := range gk {
				if g == 0 {
					continue
				}
				da, db, dc := adjoint(l.op, g, xs[s], ys[s], zs[s], vs[s])
				ga[s] += da
				if ar >= 2 {
					gb[s] += db
				}
				if ar == 3 {
					gc[s] += dc
				}
			}
		}
	case loopSum, loopDot:
		gk := adj(k)
		for j := n - 1; j >= 0; j-- {
			ga := adj(x + j)
			if l.kind == loopSum {
				for s, g := range gk {
					ga[s] += g
				}
				continue
			}
			gb, xs, ys := adj(y+j), val(x+j), val(y+j)
			for s, g := range gk {
				if g != 0 {
					ga[s] += g * ys[s]
					gb[s] += g * xs[s]
				}
			}
		}
	case loopMin, loopMax:
		for s, g := range adj(k) {
			if g == 0 {
				continue
			}
			b := 0
			for j := 1; j < n; j++ {
				xb, xj := val(x + b)[s], val(x + j)[s]
				if l.kind == loopMin && !(xb <= xj) || l.kind == loopMax && !(xb >= xj) {
					b = j
				}
			}
			adj(x + b)[s] += g
		}
	case loopGather:
		for j := n - 1; j >= 0; j-- {
			ga, gk := adj(x+int(l.idx[j])), adj(k+j)
			for s, g := range gk {
				ga[s] += g
			}
		}
	case loopGroup:
		for i := len(l.idx) - 1; i >= 0; i-- {
			ga, gk := adj(x+i), adj(k+int(l.idx[i]))
			for s, g := range gk {
				ga[s] += g
			}
		}
	}
}

// ---- tracing and errors

// loopDeps calls mark for every operand slot that the elements of the
// loop node at k for which need is true depend on. With val set, an
// element of an if depends only on the branch its condition takes, as in
// findOrigin; without, on both.
func (p *tapeProg) loopDeps(k int, need func(j int) bool, mark func(s int32), val func(s int32) float64) {
	l := &p.loops[p.a[k]]
	switch l.kind {
	case loopMap:
		ar := l.op.Arity()
		for j := range int(l.n) {
			if !need(j) {
				continue
			}
			el := func(i int) int32 { return l.arg[i] + int32(j)*l.step[i] }
			mark(el(0))
			switch {
			case ar < 2:
			case l.op == OpIf && val != nil:
				if c := val(el(0)); c != 0 || !finite(c) {
					mark(el(1))
				} else {
					mark(el(2))
				}
			default:
				mark(el(1))
				if ar == 3 {
					mark(el(2))
				}
			}
		}
	case loopGather:
		for j, i := range l.idx {
			if need(j) {
				mark(l.arg[0] + i)
			}
		}
	case loopGroup:
		for i, g := range l.idx {
			if need(int(g)) {
				mark(l.arg[0] + int32(i))
			}
		}
	default:
		if need(0) {
			l.operands(func(first, n int32) {
				for s := first; s < first+n; s++ {
					mark(s)
				}
			})
		}
	}
}

// laneNeed returns whether element j of the loop node at k is marked in
// mark, which may end inside the node's lanes.
func laneNeed[T bool | float64](mark []T, k int) func(j int) bool {
	var zero T
	return func(j int) bool { return k+j < len(mark) && mark[k+j] != zero }
}

// loopStep reports whether the loop node at k is a map of a step
// operation with a marked element.
func (p *tapeProg) loopStep(k int, mark []bool) bool {
	l := &p.loops[p.a[k]]
	if l.kind != loopMap || !l.op.IsStep() {
		return false
	}
	need := laneNeed(mark, k)
	for j := range int(l.n) {
		if need(j) {
			return true
		}
	}
	return false
}

// loopElement returns the loop node of slot k (a loop node or one of its
// lanes), the element k holds, and its operation and operand values.
func (p *tapeProg) loopElement(k int, vals []float64, stride, off int) (h, j int, op Op, args []float64) {
	h = k
	if p.ops[k] == opLane {
		h = int(p.a[k])
	}
	j = k - h
	l := &p.loops[p.a[h]]
	v := func(s int32) float64 { return vals[int(s)*stride+off] }
	switch l.kind {
	case loopMap:
		op = l.op
		for i := range op.Arity() {
			args = append(args, v(l.arg[i]+int32(j)*l.step[i]))
		}
	case loopGather:
		args = []float64{v(l.arg[0] + l.idx[j])}
	}
	return h, j, op, args
}

// loopError reports the non-finite value of slot k, a loop node or one of
// its lanes, whose operands are finite.
func (t *Tape) loopError(k int, vals []float64, stride, off, sample int) error {
	p := t.p
	h, j, op, args := p.loopElement(k, vals, stride, off)
	l := &p.loops[p.a[h]]
	e := &DomainError{Pos: p.pos[h], Op: op, Args: args, Sample: sample, Element: j + 1}
	v := vals[k*stride+off]
	switch l.kind {
	case loopMap:
		e.Msg = domainMsg(op, args, v)
	default:
		e.Op = OpAdd
		what := map[loopKind]string{loopSum: "a sum of", loopDot: "a dot product of", loopMin: "the least of",
			loopMax: "the greatest of", loopGather: "an element of", loopGroup: "a group sum of"}[l.kind]
		e.Msg = fmt.Sprintf("%s %d elements is %s", what, l.n, num(v))
		if l.kind == loopGroup {
			e.Msg = fmt.Sprintf("a group sum is %s", num(v))
		}
		if l.width() == 1 {
			e.Element = 0
		}
	}
	return e
}

// loopReverseError returns the error of an element of the map node at k
// whose local derivative turns a finite, nonzero adjoint into a
// non-finite amount, or nil.
func (t *Tape) loopReverseError(k int, vals, adj []float64, stride, off, sample int) error {
	p := t.p
	l := &p.loops[p.a[k]]
	if l.kind != loopMap {
		return nil
	}
	for j := int(l.n) - 1; j >= 0; j-- {
		gk := adj[(k+j)*stride+off]
		if gk == 0 || !finite(gk) {
			continue
		}
		_, _, op, args := p.loopElement(k+j, vals, stride, off)
		var a [3]float64
		copy(a[:], args)
		da, db, dc := adjoint(op, gk, a[0], a[1], a[2], vals[(k+j)*stride+off])
		if !finite(da) || !finite(db) || !finite(dc) {
			return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: derivMsg(op, args), Sample: sample, Reverse: true, Element: j + 1}
		}
	}
	return nil
}
