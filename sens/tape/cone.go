package tape

import (
	"errors"
	"fmt"
	"math/bits"
	"slices"
)

// Cones evaluates one output of a tape at points that differ from a base
// point in one or two inputs, the way one-at-a-time analyses (tornado,
// spider, a sweep, a break-even search) move: it evaluates the base once,
// and for each point re-evaluates only the cone of the inputs that change,
// the operations that depend on them, reading every other operand from the
// base. The values are those of Eval at the same points, to the last bit:
// the same operations on the same operands.
//
// A Cones is not safe for concurrent use.
type Cones struct {
	t    *Tape // a clone of its own
	out  int
	base []float64 // the base inputs
	vals []float64 // every node's value at the base
	y0   float64

	// users[ustart[k]:ustart[k+1]] are the nodes, needed by the output,
	// that read node k.
	ustart []int32
	users  []int32
	needed []bool

	seen    []uint32 // visit stamps of the cone search
	stamp   uint32
	scratch []int32 // for newPlan: three -1 a node
	dir     []int8  // for Monotone: a direction a node

	bits     []uint64 // for cone: a bit a node, all clear between calls
	stack    []int32  // for cone
	nodes    []int32  // the buffer of lastCone
	last     [2]int32 // the inputs of the cone in lastNodes
	lastOK   bool
	lastCone []int32
	work     []float64 // node values for the scalar path: the base, but for a point's cone
	mono     []int8    // Monotone of each input: 0 not known yet, 1 no, 2 yes

	plans      map[[2]int32]*plan
	planInstrs int // instructions held by plans, bounded by coneCache
	buf        []float64
	rows       [][]float64
	x          []float64 // a full input vector for the reference pass

	vec bool // the tape has loop nodes: points go through evalVec (vecone.go)
	vc  vecCones

	memo map[[2]int32]*coneMemo // see Memo (conebase.go); nil: off
	// dirty is set when an operation the output needs hides a non-finite
	// value at the base (in a branch not taken; see hides): see Eval.
	dirty bool
	// The compiled cones of a tape without loop nodes (conecode.go).
	lastCode   coneCode
	lastCodeOK bool
	recs       []crec  // a record a node
	multi      []int32 // the users of nodes with more than one
	frames     []coneFrame
	dirs       []int8 // a register's direction, while compiling
	sw         *coneSweep
	// The nodes of the cones evaluated so far, and the cones (a point's
	// in a sweep): their average size chooses between sweeps and runs.
	coneNodes, coneRuns int
}

// ErrNoCones is the error of Cones for a tape whose operations cones do
// not know.
var ErrNoCones = errors.New("tape: this tape's operations have no cones")

// coneCache bounds the instructions of the cone plans a Cones keeps.
const coneCache = 1 << 20

// Cones returns an evaluator of output i around the base inputs x. It
// evaluates the base, and returns its error, if any, as Eval would.
//
// A tape with loop nodes has cones element by element (vecone.go), which
// Eval runs point by point. A tape with other operations that cones do not
// know (see plannable) has none: Cones returns ErrNoCones, and the caller
// evaluates its points otherwise.
func (t *Tape) Cones(x []float64, i int) (*Cones, error) {
	vec := !t.p.plannable()
	if vec && len(t.p.loops) == 0 {
		return nil, ErrNoCones
	}
	c := &Cones{t: t.Clone(), out: i, base: slices.Clone(x), plans: map[[2]int32]*plan{}, vec: vec}
	y, err := c.t.Eval(x, i)
	if err != nil {
		return nil, err
	}
	c.y0 = y
	c.vals = slices.Clone(c.t.vals)
	p := t.p
	c.needed = p.reach(i)
	c.dirty = !c.cleanBase()
	c.mono = make([]int8, p.nIn)
	if !vec {
		// The compiled cones and sweeps build what they need on their
		// first use (conecode.go, conesweep.go); the node-by-node cones
		// (Memo, Step) too (initUsers).
		return c, nil
	}
	c.initUsers()
	return c, nil
}

// initUsers builds what the node-by-node cones need (cone, coneOf):
// the users of each node and the search's buffers.
func (c *Cones) initUsers() {
	n := len(c.needed)
	// Users, in compressed rows: count, then fill.
	c.ustart = make([]int32, n+2)
	c.edges(func(k, a int32) { c.ustart[a+2]++ })
	for k := 2; k < len(c.ustart); k++ {
		c.ustart[k] += c.ustart[k-1]
	}
	c.users = make([]int32, c.ustart[n+1])
	c.edges(func(k, a int32) {
		c.users[c.ustart[a+1]] = k
		c.ustart[a+1]++
	})
	c.ustart = c.ustart[:n+1]
	c.seen = make([]uint32, n)
	c.dir = make([]int8, n)
	c.bits = make([]uint64, (n+63)/64)
	c.work = slices.Clone(c.vals)
}

// edges calls f(k, a) for each operand a of each node k the output needs,
// once for each operand of a node; a loop node's elements read theirs
// (loopEdges).
func (c *Cones) edges(f func(k, a int32)) {
	p := c.t.p
	for k := p.start; k < len(c.needed); k++ {
		switch op := p.ops[k]; {
		case op == opArg || op == opLane:
		case op == opLoop:
			c.loopEdges(k, f)
		case c.needed[k]:
			a, b := p.a[k], p.b[k]
			f(int32(k), a)
			if b != a {
				f(int32(k), b)
			}
			if op.Arity() == 3 {
				if z := p.a[k+1]; z != a && z != b {
					f(int32(k), z)
				}
			}
		}
	}
}

// Base returns the output at the base point.
func (c *Cones) Base() float64 { return c.y0 }

// cone returns the operation nodes, in tape order, that depend on the
// given inputs and that the output needs. It leaves c.seen[k] == c.stamp
// marking them and the inputs.
func (c *Cones) cone(inputs []int32) []int32 {
	c.stamp++
	if c.stamp == 0 {
		clear(c.seen)
		c.stamp = 1
	}
	stack, nodes := c.stack[:0], c.nodes[:0]
	defer func() { c.stack = stack }()
	for _, j := range inputs {
		if int(j) < len(c.seen) && c.seen[j] != c.stamp {
			c.seen[j] = c.stamp
			stack = append(stack, j)
		}
	}
	lo, hi := int32(len(c.seen)), int32(-1)
	for len(stack) > 0 {
		k := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for _, u := range c.users[c.ustart[k]:c.ustart[k+1]] {
			if c.seen[u] != c.stamp {
				c.seen[u] = c.stamp
				stack = append(stack, u)
				nodes = append(nodes, u)
				lo, hi = min(lo, u), max(hi, u)
			}
		}
	}
	c.nodes = nodes
	if len(nodes) < 128 || int(hi-lo)/64 > 16*len(nodes) {
		slices.Sort(nodes)
		return nodes
	}
	// A large cone is put in tape order through a bitmap of the nodes,
	// in time proportional to its span in words.
	for _, k := range nodes {
		c.bits[k>>6] |= 1 << (k & 63)
	}
	nodes = nodes[:0]
	for w := lo >> 6; w <= hi>>6; w++ {
		for b := c.bits[w]; b != 0; b &= b - 1 {
			nodes = append(nodes, w<<6|int32(bits.TrailingZeros64(b)))
		}
		c.bits[w] = 0
	}
	return nodes
}

// coneOf returns the cone of input i (and j, when j >= 0), the last one
// asked for again without a search, with c.seen marking it.
func (c *Cones) coneOf(i, j int) []int32 {
	if c.ustart == nil {
		c.initUsers()
	}
	key := [2]int32{int32(i), int32(j)}
	if c.lastOK && c.last == key {
		c.stamp++
		if c.stamp == 0 {
			clear(c.seen)
			c.stamp = 1
		}
		for _, k := range key {
			if k >= 0 && int(k) < len(c.seen) {
				c.seen[k] = c.stamp
			}
		}
		for _, k := range c.lastCone {
			c.seen[k] = c.stamp
		}
		return c.lastCone
	}
	if m := c.memo[key]; m != nil {
		return c.recall(key, m)
	}
	inputs := []int32{int32(i)}
	if j >= 0 {
		inputs = append(inputs, int32(j))
	}
	c.lastCone = c.cone(inputs)
	c.last, c.lastOK = key, true
	if c.memo != nil {
		c.vc.reds, c.vc.elems = nil, nil // they may be a memo's
	}
	if c.vec {
		c.vecCone(inputs, c.lastCone)
	}
	if c.memo != nil {
		return c.remember(key)
	}
	if j < 0 && c.vec { // else compileCone proves it
		if c.mono[i] == 0 {
			c.mono[i] = 1
			if c.monotone(i, c.lastCone) {
				c.mono[i] = 2
			}
		}
	}
	return c.lastCone
}

// plan returns the plan of the cone of inputs (one, or two with j >= 0).
func (c *Cones) plan(i, j int) *plan {
	key := [2]int32{int32(i), int32(j)}
	if pl := c.plans[key]; pl != nil {
		return pl
	}
	inputs := []int32{int32(i)}
	if j >= 0 {
		inputs = append(inputs, int32(j))
	}
	nodes := c.tapeOrder(i, j)
	if c.scratch == nil {
		c.scratch = make([]int32, 3*len(c.t.p.ops))
		for k := range c.scratch {
			c.scratch[k] = -1
		}
	}
	pl := c.t.newPlan(planSrc{nodes: nodes, inputs: inputs, value: func(k int32) float64 { return c.vals[k] }},
		c.t.p.outs[c.out], c.scratch)
	if c.planInstrs+len(pl.code) > coneCache {
		clear(c.plans)
		c.planInstrs = 0
	}
	c.plans[key] = pl
	c.planInstrs += len(pl.code)
	return pl
}

// Size returns the number of operations in the cone of input i (and input
// j, when j >= 0): the work of one point, in tape nodes.
func (c *Cones) Size(i, j int) int {
	if !c.vec {
		return len(c.code(i, j).code)
	}
	return len(c.coneOf(i, j))
}

// Monotone reports whether the output is proven monotone in input i alone
// (the others at the base), rising or falling over the whole line, from
// the operations in the cone of i and the base values of the operands
// outside it. Each operation's direction in its cone operands is known:
// +, max, min, exp, ln, log10, sqrt, atan, asin, floor, ceil and round
// keep it, unary - and acos reverse it, and so does - in its second
// operand; a product with one factor outside the cone keeps it or reverses
// it by that factor's sign, and so does a quotient by a divisor outside
// the cone; an if whose condition is outside the cone passes the branch it
// takes. An operation whose operands in the cone move in opposite
// directions, a product or quotient of two values in the cone, an if whose
// condition is in it, and every other operation leave the direction
// unknown. The output is also monotone when it is affine in input i: when
// every operation in the cone is +, -, unary -, a product with one factor
// outside the cone, a quotient by a divisor outside it, or an if whose
// condition is outside it (x·y + (z − 2x) is affine in x whatever the
// signs). When either holds, the output over any
// range of input i is least and greatest at the range's ends: rounding
// keeps +, -, * and / monotone, so this holds of the computed values too
// (the library functions aside, whose last bit may wobble). The test looks
// at the model's structure and the base, not at sampled values, so no
// shape between samples can fool it.
func (c *Cones) Monotone(i int) bool {
	switch {
	case c.mono[i] != 0:
	case c.vec || c.memo != nil: // under Memo, coneOf proves nothing
		c.coneOf(i, -1)
	default:
		c.code(i, -1)
	}
	return c.mono[i] == 2
}

// Directions of monotone: 0 (constant), +1 (rising), -1 (falling) or
// dirUnknown.
const dirUnknown = 2

// dirNeg is the direction of -x for x of direction a.
func dirNeg(a int8) int8 {
	if a == dirUnknown {
		return a
	}
	return -a
}

// dirBoth is the direction of a sum of terms of directions a and b.
func dirBoth(a, b int8) int8 {
	switch {
	case a == dirUnknown || b == dirUnknown:
		return dirUnknown
	case a == 0:
		return b
	case b == 0 || a == b:
		return a
	}
	return dirUnknown
}

// dirTimes is the direction of v·x for x of direction a.
func dirTimes(a int8, v float64) int8 {
	switch {
	case a == dirUnknown || v != v:
		return dirUnknown
	case v > 0:
		return a
	case v < 0:
		return -a
	}
	return 0
}

// monotone is Monotone of input i, whose cone nodes c.seen marks.
func (c *Cones) monotone(i int, nodes []int32) bool {
	p := c.t.p
	dir := c.dir
	if int(i) < len(dir) {
		dir[i] = 1
	}
	affine := true
	for _, k := range nodes {
		var r int8
		var aff bool
		if op := p.ops[k]; op == opLoop || op == opLane {
			r, aff = c.loopDir(k)
		} else {
			r, aff = c.opDir(op, p.a[k], p.b[k], p.a[min(int(k)+1, len(p.a)-1)])
		}
		affine = affine && aff
		dir[k] = r
	}
	out := p.outs[c.out]
	ok := affine || c.d(out) != dirUnknown
	for _, k := range nodes {
		dir[k] = 0
	}
	if int(i) < len(dir) {
		dir[i] = 0
	}
	return ok
}

// in reports whether slot k is in the cone c.seen marks.
func (c *Cones) in(k int32) bool { return int(k) < len(c.seen) && c.seen[k] == c.stamp }

// d returns the direction of slot k: 0 outside the cone.
func (c *Cones) d(k int32) int8 {
	if c.in(k) {
		return c.dir[k]
	}
	return 0
}

// opDir returns the direction of op over the operands a, b and z (for an
// operation of three), and whether op keeps the output affine in the
// cone's input.
func (c *Cones) opDir(op Op, a, b, z int32) (r int8, affine bool) {
	ina, inb := c.in(a), c.in(b)
	var va, vb float64
	if !ina && (op == OpMul || op == OpIf) {
		va = c.vals[a]
	}
	if !inb && (op == OpMul || op == OpDiv) {
		vb = c.vals[b]
	}
	return opDirection(op, ina, inb, c.in(z), c.d(a), c.d(b), c.d(z), va, vb)
}

// Eval writes into dst the output at n points: the base with input i set
// to vi[s] and, when j >= 0, input j to vj[s]. It returns a *DomainError
// for the first point whose output would be NaN or ±Inf, with Sample set
// to the point's index; dst is then filled up to that point's block.
func (c *Cones) Eval(dst []float64, i int, vi []float64, j int, vj []float64, n int) error {
	nIn := c.t.p.nIn
	if i < 0 || i >= nIn || j >= nIn || j == i || len(vi) < n || j >= 0 && len(vj) < n || len(dst) < n {
		panic(fmt.Sprintf("tape: Cones.Eval of inputs %d, %d over %d points", i, j, n))
	}
	if c.dirty {
		// A value outside the cone may hide a non-finite one at the base
		// (a comparison of a NaN is 0) from a branch that a point takes
		// and the base does not: every point is evaluated whole.
		return c.reference(dst, i, vi, j, vj, 0, n)
	}
	if c.vec {
		return c.evalVec(dst, i, vi, j, vj, n)
	}
	if n <= codePoints {
		return c.evalCode(dst, i, vi, j, vj, n)
	}
	pl := c.plan(i, j)
	w := planWidth(pl.nreg)
	if need := (pl.nreg - pl.nIn) * w; cap(c.buf) < need {
		c.buf = make([]float64, need)
	}
	c.rows = c.rows[:0]
	for r := 0; r < pl.nreg; r++ {
		if r < pl.nIn {
			c.rows = append(c.rows, nil)
			continue
		}
		o := (r - pl.nIn) * w
		c.rows = append(c.rows, c.buf[o:o+w:o+w])
	}
	for k, v := range pl.consts {
		row := c.rows[pl.nIn+k]
		for s := range row {
			row[s] = v
		}
	}
	e := &planExec{pl: pl, w: w, rows: c.rows}
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		e.rows[0] = vi[base : base+m]
		if j >= 0 {
			e.rows[1] = vj[base : base+m]
		}
		bad := e.run(m)
		out := e.output(m)
		copy(dst[base:base+m], out)
		if bad || pl.alwaysBad || !allFinite(out) {
			if err := c.reference(dst, i, vi, j, vj, base, m); err != nil {
				return err
			}
		}
	}
	return nil
}

// codePoints is the number of points up to which Eval runs a cone's
// compiled code point by point (evalCode) instead of compiling a batched
// plan for it.
const codePoints = 4

// reference evaluates points base..base+m-1 by the tape's scalar pass, to
// find the error a block's test flagged, and returns it, or nil when the
// non-finite values lay in branches not taken (the block's values stand).
func (c *Cones) reference(dst []float64, i int, vi []float64, j int, vj []float64, base, m int) error {
	if c.x == nil {
		c.x = slices.Clone(c.base)
	}
	x := c.x
	defer func() {
		x[i] = c.base[i]
		if j >= 0 {
			x[j] = c.base[j]
		}
	}()
	for s := base; s < base+m; s++ {
		x[i] = vi[s]
		if j >= 0 {
			x[j] = vj[s]
		}
		y, err := c.t.Eval(x, c.out)
		if err != nil {
			err.(*DomainError).Sample = s
			return err
		}
		dst[s] = y
	}
	return nil
}
