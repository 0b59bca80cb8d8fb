package tape

import (
	"math"
	"slices"
)

// Compiled cones: the single-baseline path of Cones for a tape without
// loop nodes.
//
// A cone's nodes lie scattered over the tape: on a tape of 342,000 nodes
// the cone of one input of a generated bid is about 180 nodes spread over
// the whole of it, so running those nodes in place (an operation, two
// operand indices and three values a node, each in a line of its own) is
// bound by cache misses, not by arithmetic. A cone is therefore compiled
// once into a contiguous list of instructions over a register file of its
// own, the operands outside the cone gathered into registers from the
// base values, and every point then runs that list alone. The proof of
// monotonicity (Monotone) is made in the same pass over the cone.
//
// The values are those of the tape's scalar pass to the last bit: the
// same operations on the same operands, in an order in which every operand
// is computed before it is read.

// coneCode is the cone of one input, or two, compiled.
//
// Registers: 0 holds input i, 1 input j (unused when j < 0), [2, 2+m) the
// results of the m instructions in order, and the rest the operands
// outside the cone, read from the base.
type coneCode struct {
	key  [2]int32
	code []cinstr
	regs []float64
	out  int32 // the register of the output
	mono bool  // j < 0: the output is proven monotone in input i (Monotone)
}

// cinstr is one instruction of a coneCode: register 2+t (for the t-th
// instruction) = op(a, b, z).
type cinstr struct {
	op    Op
	check uint8 // chkNone, chkDiv or chkAll: the operands a guard tests (see tapeProg.step)
	a, b  uint32
	z     uint32 // the third operand; a for an operation of fewer
}

const (
	chkNone = iota
	chkDiv  // the divisor
	chkAll  // every operand
)

// codeRegs is the register of the first instruction's result.
const codeRegs = 2

// crec is a node's record for the cone search and compiler: what they
// read of a node in one place (but its base value, which Rebase and Step
// move), so that a node scattered over the tape costs one cache miss, not
// one an array.
type crec struct {
	a, b  int32  // operands
	user  int32  // the one node that reads it (>= 0), -1-q for the users listed at multi[q] (a count, then the users), or noUser
	stamp uint32 // cone search: == Cones.stamp when in the cone
	loc   uint32 // compiler: the register of a node in the cone
	op    Op
}

const noUser = math.MinInt32

// coneFrame is a node of the search's stack and the next of its users to visit.
type coneFrame struct{ k, next int32 }

// initCode builds the records of a tape without loop nodes.
func (c *Cones) initCode() {
	p := c.t.p
	n := len(c.needed)
	c.recs = make([]crec, n)
	count := make([]int32, n)
	c.edges(func(k, a int32) { count[a]++ })
	for k := range c.recs {
		r := &c.recs[k]
		r.user = noUser
		r.op = p.ops[k]
		if k >= p.start {
			r.a, r.b = p.a[k], p.b[k]
		}
		if count[k] > 1 {
			r.user = -1 - int32(len(c.multi))
			c.multi = append(c.multi, 0)
			c.multi = append(c.multi, make([]int32, count[k])...)
		}
	}
	c.edges(func(k, a int32) {
		r := &c.recs[a]
		if r.user == noUser {
			r.user = k
			return
		}
		q := -1 - r.user
		c.multi[q]++
		c.multi[q+c.multi[q]] = k
	})
}

// search returns the operation nodes that depend on input i (and j, when
// j >= 0) and that the output needs, in an order in which each comes after
// its operands (the reverse of a depth-first search's finishing order
// along users), and leaves recs[k].stamp == c.stamp marking them and the
// inputs.
func (c *Cones) search(i, j int) []int32 {
	c.stamp++
	if c.stamp == 0 {
		for k := range c.recs {
			c.recs[k].stamp = 0
		}
		c.stamp = 1
	}
	recs, stamp := c.recs, c.stamp
	stack := c.frames[:0]
	post := c.nodes[:0]
	for _, in := range [2]int{i, j} {
		if in < 0 || in >= len(recs) || recs[in].stamp == stamp {
			continue
		}
		recs[in].stamp = stamp
		stack = append(stack, coneFrame{int32(in), 0})
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			u := recs[f.k].user
			switch {
			case u >= 0 && f.next == 0:
				f.next = 1
			case u < 0 && u != noUser && f.next < c.multi[-1-u]:
				f.next++
				u = c.multi[-1-u+f.next]
			default:
				if f.k != int32(in) {
					post = append(post, f.k)
				}
				stack = stack[:len(stack)-1]
				continue
			}
			if recs[u].stamp != stamp {
				recs[u].stamp = stamp
				stack = append(stack, coneFrame{u, 0})
			}
		}
	}
	c.frames, c.nodes = stack, post
	slices.Reverse(post)
	return post
}

// tapeOrder returns the cone of input i (and j) in tape order.
func (c *Cones) tapeOrder(i, j int) []int32 {
	if c.recs == nil {
		c.initCode()
	}
	nodes := c.search(i, j)
	slices.Sort(nodes)
	return nodes
}

// compileCone compiles the cone of input i (and j, when j >= 0) into cc,
// reusing its buffers. nodes are the cone's operation nodes in an order in
// which each comes after its operands in the cone, which recs marks
// (search).
func (c *Cones) compileCone(cc *coneCode, i, j int, nodes []int32) {
	p := c.t.p
	recs, stamp := c.recs, c.stamp
	m := len(nodes)
	cc.key = [2]int32{int32(i), int32(j)}
	cc.code = cc.code[:0]
	regs := append(cc.regs[:0], 0, 0)
	if i < len(recs) {
		regs[0] = c.vals[i]
		recs[i].loc = 0
	}
	if j >= 0 && j < len(recs) {
		regs[1] = c.vals[j]
		recs[j].loc = 1
	}
	for range m {
		regs = append(regs, 0)
	}
	// The direction of each register in input i, for j < 0 (Monotone).
	mono := j < 0
	dirs := c.dirs[:0]
	if mono {
		dirs = append(dirs, 1, 0)
		for range m {
			dirs = append(dirs, 0)
		}
	}
	affine := true
	// reg returns the register of operand a and whether it is in the cone.
	reg := func(a int32) (uint32, bool) {
		if r := &recs[a]; r.stamp == stamp {
			return r.loc, true
		}
		regs = append(regs, c.vals[a])
		if mono {
			dirs = append(dirs, 0)
		}
		return uint32(len(regs) - 1), false
	}
	for t, k := range nodes {
		r := &recs[k]
		op, a, b := r.op, r.a, r.b
		ra, ina := reg(a)
		rb, inb := ra, ina
		if b != a {
			rb, inb = reg(b)
		}
		rz, inz := ra, ina
		if op.Arity() == 3 {
			rz, inz = reg(p.a[k+1])
		}
		in := cinstr{op: op, a: ra, b: rb, z: rz}
		switch {
		case op == OpDiv:
			in.check = chkDiv
		case op == OpAdd || op == OpSub || op == OpMul || op == OpNeg:
		case opMetas[op].guard:
			in.check = chkAll
		}
		cc.code = append(cc.code, in)
		r.loc = uint32(codeRegs + t)
		if mono {
			d := func(r uint32, in bool) int8 {
				if in {
					return dirs[r]
				}
				return 0
			}
			dir, aff := opDirection(op, ina, inb, inz, d(ra, ina), d(rb, inb), d(rz, inz), regs[ra], regs[rb])
			affine = affine && aff
			dirs[codeRegs+t] = dir
		}
	}
	out := p.outs[c.out]
	ro, ino := reg(out)
	cc.out = int32(ro)
	cc.regs = regs
	if mono {
		cc.mono = affine || !ino || dirs[ro] != dirUnknown
		c.dirs = dirs
	}
}

// opDirection returns the direction of op over operands of directions
// da, db and dz (0 for an operand outside the cone) and whether op keeps
// the output affine in the cone's input (see Monotone). ina, inb and inz
// say which operands are in the cone; va and vb are the values of a and b
// where they are not.
func opDirection(op Op, ina, inb, inz bool, da, db, dz int8, va, vb float64) (r int8, affine bool) {
	switch {
	case op == OpAdd || op == OpSub || op == OpNeg:
		affine = true
	case op == OpMul && !(ina && inb):
		affine = true
	case op == OpDiv && !inb:
		affine = true
	case op == OpIf && !ina:
		affine = true
	}
	r = dirUnknown
	switch op {
	case OpAdd, OpMax, OpMin:
		r = dirBoth(da, db)
	case OpSub:
		r = dirBoth(da, dirNeg(db))
	case OpNeg, OpAcos:
		r = dirNeg(da)
	case OpExp, OpLn, OpLog10, OpSqrt, OpAtan, OpAsin, OpFloor, OpCeil, OpRound:
		r = da
	case OpMul:
		switch {
		case ina && inb:
		case ina:
			r = dirTimes(da, vb)
		default:
			r = dirTimes(db, va)
		}
	case OpDiv:
		if !inb {
			r = dirTimes(da, vb)
		}
	case OpIf:
		if !ina {
			if va != 0 {
				r = db
			} else {
				r = dz
			}
		}
	}
	return r, affine
}

// run evaluates the code at the point its input registers hold and
// returns the output, and whether a guard operation saw a non-finite
// operand (as tapeProg.step reports it).
func (cc *coneCode) run() (y float64, bad bool) {
	r := cc.regs
	for t := range cc.code {
		in := &cc.code[t]
		x, y := r[in.a], r[in.b]
		var v float64
		switch in.op {
		case OpAdd:
			v = x + y
		case OpSub:
			v = x - y
		case OpMul:
			v = x * y
		case OpDiv:
			v = x / y
			if !finite(y) {
				bad = true
			}
		case OpNeg:
			v = -x
		default:
			z := r[in.z]
			v = evalOp(in.op, x, y, z)
			if in.check == chkAll && !(finite(x) && finite(y) && finite(z)) {
				bad = true
			}
		}
		r[codeRegs+t] = v
	}
	return r[cc.out], bad
}

// code returns the compiled cone of input i (and j, when j >= 0).
func (c *Cones) code(i, j int) *coneCode {
	key := [2]int32{int32(i), int32(j)}
	if cc := &c.lastCode; cc.key == key && c.lastCodeOK {
		return cc
	}
	if c.recs == nil {
		c.initCode()
	}
	nodes := c.search(i, j)
	c.compileCone(&c.lastCode, i, j, nodes)
	c.lastCodeOK = true
	c.coneNodes += len(nodes)
	c.coneRuns++
	if j < 0 && c.mono[i] == 0 {
		c.mono[i] = 1
		if c.lastCode.mono {
			c.mono[i] = 2
		}
	}
	return &c.lastCode
}

// evalCode is Eval through the compiled cone, one point after another.
func (c *Cones) evalCode(dst []float64, i int, vi []float64, j int, vj []float64, n int) error {
	cc := c.code(i, j)
	for s := 0; s < n; s++ {
		cc.regs[0] = vi[s]
		if j >= 0 {
			cc.regs[1] = vj[s]
		}
		y, bad := cc.run()
		dst[s] = y
		if bad || !finite(y) {
			if err := c.reference(dst, i, vi, j, vj, s, 1); err != nil {
				return err
			}
		}
	}
	return nil
}
