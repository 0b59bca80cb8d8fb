package tape

import (
	"fmt"
	"math"
	"slices"
)

// A sweep evaluates many points near the base in one pass over the tape,
// for a batch that changes many inputs (a tornado's ends: two points for
// every input). Each node holds the list of the points whose cone it is
// in, with its value at each, sorted by point; a node's list is the merge
// of its operands' lists, and an operand without an entry for a point
// takes its base value. So each point costs exactly its cone's operations,
// as Cones.Eval, but the tape is read in order, once a batch, and the
// lists are read and written in order, instead of each point's cone
// being searched for and visited node by node over the whole tape.
//
// The values are those of Eval to the last bit (the same operations on
// the same operands). A point whose cone saw a non-finite operand at a
// guard, or whose output is not finite, is evaluated again by the tape's
// scalar pass, which reports its error as Eval would. For points of one
// input the sweep also proves monotonicity (Monotone) on the way, from
// the same directions compileCone uses.

// sweepEntry is a point's value at a node.
type sweepEntry struct {
	v  float64
	id int32 // the point
	f  uint8 // swBad | swRep | swAffine
	d  int8  // direction in the point's input (swRep entries only)
}

const (
	swBad    = 1 << iota // a guard saw a non-finite operand
	swRep                // the point decides the monotonicity of its input
	swAffine             // swRep: every operation so far keeps the output affine
)

// coneSweep is the state of the sweeps of a Cones, allocated on the first.
type coneSweep struct {
	span   [][2]int32 // a node's list: arena[span[k][0]:span[k][1]], when has
	has    []uint64   // a bit a node: it has a list in this sweep
	last   []int32    // the last node that reads each node (needed ones)
	arena  []sweepEntry
	spare  []sweepEntry
	owners []int32 // the nodes with lists, in arena order
	keep   []int32
	count  []int32 // points an input, while building the inputs' lists
	at     []int32
}

// sweepArena is the number of entries above which a sweep drops the lists
// no node will read again. A variable, for the tests.
var sweepArena = 1 << 20

// EvalPoints sweeps when its runs of points (points in a row that change
// the same inputs) would visit more than 1/sweepCost as many nodes, by
// the cones' average size so far, as the sweep reads: a cone's node
// visited where it lies on the tape costs a cache miss or two, some tens
// of times a node read in order. A variable, for the tests.
var sweepCost = 32

// coneGuess is the size of a cone assumed before any is known.
const coneGuess = 16

// EvalPoints writes into dst the output at len(dst) points: point s is
// the base with input is[s] set to vi[s] and, when js[s] >= 0, input js[s]
// set to vj[s] (js[s] != is[s]); is[s] < 0 is the base itself. It returns
// a *DomainError for the first point whose output would be NaN or ±Inf,
// with Sample set to the point's index, as Eval would; dst is then filled
// up to that point.
//
// A batch of many inputs is evaluated in one sweep of the tape, else each
// run of points that change the same inputs through their cone (Eval).
func (c *Cones) EvalPoints(dst []float64, is []int32, vi []float64, js []int32, vj []float64) error {
	n := len(dst)
	nIn := c.t.p.nIn
	if len(is) < n || len(vi) < n || len(js) < n || len(vj) < n {
		panic(fmt.Sprintf("tape: Cones.EvalPoints of %d points", n))
	}
	runs := 0
	for s := 0; s < n; s++ {
		i, j := is[s], js[s]
		if int(i) >= nIn || int(j) >= nIn || j == i && j >= 0 || i < 0 && j >= 0 {
			panic(fmt.Sprintf("tape: Cones.EvalPoints of inputs %d, %d", i, j))
		}
		if s == 0 || i != is[s-1] || j != js[s-1] {
			runs++
		}
	}
	avg := coneGuess
	if c.coneRuns > 0 {
		avg = max(1, c.coneNodes/c.coneRuns)
	}
	// A base that hides a non-finite value is evaluated whole, point by
	// point (Eval), and Memo's cones are node by node.
	if c.vec || c.dirty || c.memo != nil || runs*avg*sweepCost < int(c.t.p.outs[c.out])-c.t.p.start {
		for r := 0; r < n; {
			e := r + 1
			for e < n && is[e] == is[r] && js[e] == js[r] {
				e++
			}
			switch {
			case is[r] < 0:
				for s := r; s < e; s++ {
					dst[s] = c.y0
				}
			default:
				if err := c.Eval(dst[r:e], int(is[r]), vi[r:e], int(js[r]), vj[r:e], e-r); err != nil {
					if de, ok := err.(*DomainError); ok {
						de.Sample += r
					}
					return err
				}
			}
			r = e
		}
		return nil
	}
	return c.sweep(dst, is, vi, js, vj)
}

// sweep is EvalPoints in one pass over the tape.
func (c *Cones) sweep(dst []float64, is []int32, vi []float64, js []int32, vj []float64) error {
	p := c.t.p
	out := p.outs[c.out]
	n := len(c.needed)
	sw := c.sw
	if sw == nil {
		sw = &coneSweep{
			span:  make([][2]int32, n),
			has:   make([]uint64, (n+63)/64),
			last:  make([]int32, n),
			count: make([]int32, p.nIn),
			at:    make([]int32, p.nIn),
		}
		for k := p.start; k < n; k++ {
			if op := p.ops[k]; !c.needed[k] || op == opArg {
				continue
			}
			sw.last[p.a[k]] = int32(k)
			sw.last[p.b[k]] = int32(k)
			if p.ops[k].Arity() == 3 {
				sw.last[p.a[k+1]] = int32(k)
			}
		}
		sw.last[out] = math.MaxInt32
		c.sw = sw
	}
	defer func() {
		for _, k := range sw.owners {
			sw.has[k>>6] = 0
		}
		sw.owners = sw.owners[:0]
		sw.arena = sw.arena[:0]
	}()

	// The inputs' lists, by a counting sort of the points' inputs. The
	// first point of one input whose monotonicity is not known yet
	// decides it.
	count, at := sw.count, sw.at
	clear(count)
	for s := range dst {
		if is[s] >= 0 {
			c.coneRuns++
		}
		if i := is[s]; i >= 0 && int(i) < n {
			count[i]++
		} else if i >= 0 && js[s] < 0 {
			c.mono[i] = 2 // the output does not read it
		}
		if j := js[s]; j >= 0 && int(j) < n {
			count[j]++
		}
	}
	total := int32(0)
	for i, m := range count {
		if m == 0 {
			continue
		}
		at[i] = total
		sw.span[i] = [2]int32{total, total + m}
		sw.has[i>>6] |= 1 << (i & 63)
		sw.owners = append(sw.owners, int32(i))
		total += m
	}
	arena := slices.Grow(sw.arena[:0], int(total))[:total]
	for s := range dst {
		if i := is[s]; i >= 0 && int(i) < n {
			e := sweepEntry{v: vi[s], id: int32(s)}
			if js[s] < 0 && c.mono[i] == 0 {
				c.mono[i] = 3 // decided by this point, below
				e.f, e.d = swRep|swAffine, 1
			}
			arena[at[i]] = e
			at[i]++
		}
		if j := js[s]; j >= 0 && int(j) < n {
			arena[at[j]] = sweepEntry{v: vj[s], id: int32(s)}
			at[j]++
		}
	}

	// The operations, in tape order.
	vals := c.vals
	for k := int32(p.start); k <= out; k++ {
		op := p.ops[k]
		if !c.needed[k] || op == opArg {
			continue
		}
		a, b := p.a[k], p.b[k]
		z := a
		if op.Arity() == 3 {
			z = p.a[k+1]
		}
		hasA := sw.has[a>>6]>>(a&63)&1 != 0
		hasB := sw.has[b>>6]>>(b&63)&1 != 0
		hasZ := sw.has[z>>6]>>(z&63)&1 != 0
		if !hasA && !hasB && !hasZ {
			continue
		}
		// Each operand's list, empty where it has none or repeats one
		// before it (its value is then that operand's).
		var sa, sb, sz [2]int32
		if hasA {
			sa = sw.span[a]
		}
		if hasB && b != a {
			sb = sw.span[b]
		}
		if hasZ && z != a && z != b {
			sz = sw.span[z]
		}
		m := int(sa[1] - sa[0] + sb[1] - sb[0] + sz[1] - sz[0])
		if len(arena)+m > cap(arena) && len(arena) >= sweepArena {
			arena = sw.compact(arena, k, m)
			sa, sb, sz = sw.span[a], sw.span[b], sw.span[z]
			if !hasA {
				sa = [2]int32{}
			}
			if !hasB || b == a {
				sb = [2]int32{}
			}
			if !hasZ || z == a || z == b {
				sz = [2]int32{}
			}
		}
		arena = slices.Grow(arena, m)
		start := int32(len(arena))
		switch {
		case op.Arity() == 3:
			arena = sweep3(arena, op, sa, sb, sz, a, b, z, vals)
		case b == a:
			arena = sweep1(arena, op, sa, vals[a])
		default:
			arena = sweep2(arena, op, sa, sb, vals[a], vals[b])
		}
		sw.span[k] = [2]int32{start, int32(len(arena))}
		c.coneNodes += len(arena) - int(start)
		sw.has[k>>6] |= 1 << (k & 63)
		sw.owners = append(sw.owners, k)
	}
	sw.arena = arena

	// The output at each point, and the points the scalar pass must check.
	for s := range dst {
		dst[s] = c.y0
	}
	var list []sweepEntry
	if sw.has[out>>6]>>(out&63)&1 != 0 {
		list = arena[sw.span[out][0]:sw.span[out][1]]
	}
	for _, e := range list {
		dst[e.id] = e.v
		if e.f&swBad != 0 {
			dst[e.id] = math.NaN() // for the scalar pass, below
		}
		if e.f&swRep != 0 {
			i := is[e.id]
			c.mono[i] = 1
			if e.f&swAffine != 0 || e.d != dirUnknown {
				c.mono[i] = 2
			}
		}
	}
	// A point of one input whose cone does not reach the output leaves
	// it unchanged: monotone.
	for s := range dst {
		if i := is[s]; i >= 0 && c.mono[i] == 3 {
			c.mono[i] = 2
		}
	}
	for s := range dst {
		if finite(dst[s]) {
			continue
		}
		y, err := c.point(int(is[s]), vi[s], int(js[s]), vj[s])
		if err != nil {
			err.(*DomainError).Sample = s
			return err
		}
		dst[s] = y
	}
	return nil
}

// compact drops from the arena the lists that no node from k on reads,
// and returns the new arena, with room for m entries and at least
// sweepArena more. The arena and the spare buffer trade places, so that
// a sweep whose lists alive stay few allocates no more.
func (sw *coneSweep) compact(arena []sweepEntry, k int32, m int) []sweepEntry {
	live := 0
	for _, q := range sw.owners {
		if sw.last[q] >= k {
			live += int(sw.span[q][1] - sw.span[q][0])
		}
	}
	if need := live + m + max(live, sweepArena); cap(sw.spare) < need {
		sw.spare = make([]sweepEntry, 0, need)
	}
	next := sw.spare[:0]
	keep := sw.keep[:0]
	for _, q := range sw.owners {
		if sw.last[q] < k {
			sw.has[q>>6] &^= 1 << (q & 63)
			continue
		}
		s := sw.span[q]
		sw.span[q] = [2]int32{int32(len(next)), int32(len(next)) + s[1] - s[0]}
		next = append(next, arena[s[0]:s[1]]...)
		keep = append(keep, q)
	}
	sw.spare = arena[:0]
	sw.keep = sw.owners[:0]
	sw.owners = keep
	return next
}

// point evaluates one point by the tape's scalar pass.
func (c *Cones) point(i int, vi float64, j int, vj float64) (float64, error) {
	if c.x == nil {
		c.x = slices.Clone(c.base)
	}
	x := c.x
	if i >= 0 {
		x[i] = vi
	}
	if j >= 0 {
		x[j] = vj
	}
	y, err := c.t.Eval(x, c.out)
	if i >= 0 {
		x[i] = c.base[i]
	}
	if j >= 0 {
		x[j] = c.base[j]
	}
	return y, err
}

// sweep1 appends to arena the list of a node op(x) whose operand's list
// is arena[sa[0]:sa[1]].
func sweep1(arena []sweepEntry, op Op, sa [2]int32, x0 float64) []sweepEntry {
	guard := opMetas[op].guard
	for q := sa[0]; q < sa[1]; q++ {
		ea := &arena[q]
		x := ea.v
		e := sweepEntry{id: ea.id, f: ea.f}
		switch op {
		case OpNeg:
			e.v = -x
		default:
			e.v = evalOp(op, x, x, 0)
			if guard && !finite(x) {
				e.f |= swBad
			}
		}
		if e.f&swRep != 0 {
			var aff bool
			e.d, aff = opDirection(op, true, true, true, ea.d, ea.d, ea.d, x, x)
			if !aff {
				e.f &^= swAffine
			}
		}
		arena = append(arena, e)
	}
	return arena
}

// sweep2 appends to arena the list of a node op(x, y) whose operands'
// lists are arena[sa[0]:sa[1]] and arena[sb[0]:sb[1]], and whose values
// at the base are x0 and y0.
func sweep2(arena []sweepEntry, op Op, sa, sb [2]int32, x0, y0 float64) []sweepEntry {
	guard := opMetas[op].guard
	pa, pb := sa[0], sb[0]
	for pa < sa[1] || pb < sb[1] {
		var ea, eb *sweepEntry
		switch {
		case pb == sb[1] || pa < sa[1] && arena[pa].id < arena[pb].id:
			ea = &arena[pa]
			pa++
		case pa == sa[1] || arena[pb].id < arena[pa].id:
			eb = &arena[pb]
			pb++
		default:
			ea, eb = &arena[pa], &arena[pb]
			pa++
			pb++
		}
		x, y := x0, y0
		var e sweepEntry
		if ea != nil {
			x, e.id, e.f = ea.v, ea.id, ea.f
		}
		if eb != nil {
			y, e.id = eb.v, eb.id
			e.f |= eb.f
		}
		switch op {
		case OpAdd:
			e.v = x + y
		case OpSub:
			e.v = x - y
		case OpMul:
			e.v = x * y
		case OpDiv:
			e.v = x / y
			if !finite(y) {
				e.f |= swBad
			}
		default:
			e.v = evalOp(op, x, y, 0)
			if guard && !(finite(x) && finite(y)) {
				e.f |= swBad
			}
		}
		if e.f&swRep != 0 {
			var da, db int8
			aff := true
			if ea != nil {
				da, aff = ea.d, ea.f&swAffine != 0
			}
			if eb != nil {
				db, aff = eb.d, aff && eb.f&swAffine != 0
			}
			dir, opAff := opDirection(op, ea != nil, eb != nil, ea != nil, da, db, da, x, y)
			e.d = dir
			if !aff || !opAff {
				e.f &^= swAffine
			}
		}
		arena = append(arena, e)
	}
	return arena
}

// sweep3 appends to arena the list of a node op(x, y, z) whose operands
// are nodes a, b and z: sa, sb and sz are their lists, empty for an
// operand that repeats one before it.
func sweep3(arena []sweepEntry, op Op, sa, sb, sz [2]int32, a, b, z int32, vals []float64) []sweepEntry {
	const none = math.MaxInt32
	x0, y0, z0 := vals[a], vals[b], vals[z]
	guard := opMetas[op].guard
	for sa[0] < sa[1] || sb[0] < sb[1] || sz[0] < sz[1] {
		id := int32(none)
		if sa[0] < sa[1] {
			id = arena[sa[0]].id
		}
		if sb[0] < sb[1] {
			id = min(id, arena[sb[0]].id)
		}
		if sz[0] < sz[1] {
			id = min(id, arena[sz[0]].id)
		}
		x, y, zv := x0, y0, z0
		var ea, eb, ez *sweepEntry
		if sa[0] < sa[1] && arena[sa[0]].id == id {
			ea = &arena[sa[0]]
			x = ea.v
			sa[0]++
		}
		if sb[0] < sb[1] && arena[sb[0]].id == id {
			eb = &arena[sb[0]]
			y = eb.v
			sb[0]++
		}
		if sz[0] < sz[1] && arena[sz[0]].id == id {
			ez = &arena[sz[0]]
			zv = ez.v
			sz[0]++
		}
		// An operand repeated takes the value of the one before.
		if b == a {
			y, eb = x, ea
		}
		if z == a {
			zv, ez = x, ea
		} else if z == b {
			zv, ez = y, eb
		}
		e := sweepEntry{id: id}
		aff := true
		for _, o := range [3]*sweepEntry{ea, eb, ez} {
			if o != nil {
				e.f |= o.f
				aff = aff && o.f&swAffine != 0
			}
		}
		e.v = evalOp(op, x, y, zv)
		if guard && !(finite(x) && finite(y) && finite(zv)) {
			e.f |= swBad
		}
		if e.f&swRep != 0 {
			d := func(e *sweepEntry) int8 {
				if e != nil {
					return e.d
				}
				return 0
			}
			dir, opAff := opDirection(op, ea != nil, eb != nil, ez != nil, d(ea), d(eb), d(ez), x, y)
			e.d = dir
			if !aff || !opAff {
				e.f &^= swAffine
			}
		}
		arena = append(arena, e)
	}
	return arena
}
