package tape

import (
	"fmt"
	"math"
	"slices"
)

// A sweep evaluates many points near the base in one pass over the tape,
// for a batch that changes many inputs (a tornado's ends: two points for
// every input). Each node holds the list of the runs of points (points in
// a row that change the same inputs) whose cone it is in, with its value
// at each of their points, sorted by run; a node's list is the merge of
// its operands' lists, and an operand without an entry for a run takes
// its base value. So each point costs exactly its cone's operations, as
// Cones.Eval, but the tape is read in order, once a batch, the lists are
// read and written in order, and the points of a run are computed
// together, instead of each run's cone being searched for and visited
// node by node over the whole tape.
//
// The values are those of Eval to the last bit (the same operations on
// the same operands). A point whose cone saw a non-finite operand at a
// guard, or whose output is not finite, is evaluated again by the tape's
// scalar pass, which reports its error as Eval would. For points of one
// input the sweep also proves monotonicity (Monotone) on the way, from
// the same directions compileCone uses.

// sweepEntry is a run's values at a node: vals[off:off+w], w the number of
// the run's points.
type sweepEntry struct {
	off int32
	id  int32 // the run
	f   uint8 // swBad | swRep | swAffine
	d   int8  // direction in the run's input (swRep entries only)
}

const (
	swBad    = 1 << iota // a guard saw a non-finite operand at a point of the run
	swRep                // the run decides the monotonicity of its input
	swAffine             // swRep: every operation so far keeps the output affine
)

// coneSweep is the state of the sweeps of a Cones, allocated on the first.
type coneSweep struct {
	span   []sweepSpan // a node's list, when has
	has    []uint64    // a bit a node: it has a list in this sweep
	last   []int32     // the last node that reads each node (needed ones)
	ents   []sweepEntry
	vals   []float64
	entBuf []sweepEntry // the whole arrays under ents and vals (regrow)
	valBuf []float64
	owners []int32 // the nodes with lists, in the arena's order
	count  []int32 // runs an input, while building the inputs' lists
	at     []int32
	runAt  []int32      // the first point of each run, and one past the last run's
	dense  []sweepDense // the dense nodes' arrays (conedense.go)
	free   []int32      // the slots of dense not in use
	dnodes []int32      // the nodes that were dense in this sweep

	// owners[:nOld] and the arenas up to oldE and oldV outlived the last
	// compaction, which left fullV values after the last full one.
	nOld              int
	oldE, oldV, fullV int32

	// The dense nodes made, and read as lists, all sweeps together (for
	// the tests).
	denseMade, sparsified int
}

// sweepBufs is what a sweep leaves in its program for the next: its arenas
// (entBuf, valBuf), dense arrays, spans and bits (has: all clear), and
// last, which is that of output lastOut of program lastOf.
type sweepBufs struct {
	ents    []sweepEntry
	vals    []float64
	dense   []sweepDense
	span    []sweepSpan
	has     []uint64
	last    []int32
	lastOf  *tapeProg
	lastOut int32
}

// sweepSpan is a node's list: entries ents[e0:e1], whose values are
// vals[v0:v1].
type sweepSpan struct{ e0, e1, v0, v1 int32 }

// sweepArena is the number of values a sweep writes, past the inputs'
// lists, before it drops the lists no node will read again (compact): a
// megabyte, so that the lists it reads are mostly still in the cache. A
// variable, for the tests.
var sweepArena = 1 << 17

// EvalPoints sweeps when its runs of points (points in a row that change
// the same inputs) would visit more than 1/sweepCost as many nodes, by
// the cones' average size so far, as the sweep reads: a cone's node
// visited where it lies on the tape costs a cache miss or two, some tens
// of times a node read in order. A variable, for the tests.
var sweepCost = 32

// sweepFirst is how much more the runs of a batch cost before the cones'
// records are built (initCode).
const sweepFirst = 16

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
	// Before the first cone is compiled, the runs would first pay for the
	// records of the whole tape (initCode: two passes over its edges and
	// an arena as large as the tape, some forward evaluations' worth),
	// which a sweep does without: a batch a sixteenth as large sweeps
	// (the tornado's first batch of 1,024 points, up to 10^6 lines).
	visits := runs * avg * sweepCost
	if c.recs == nil {
		visits *= sweepFirst
	}
	// A base that hides a non-finite value is evaluated whole, point by
	// point (Eval), and Memo's cones are node by node.
	if c.vec || c.dirty || c.memo != nil || visits < int(c.t.p.outs[c.out])-c.t.p.start {
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
		sw = &coneSweep{count: make([]int32, p.nIn), at: make([]int32, p.nIn)}
		c.sw = sw
	}
	// The arrays of the last sweep of the program (of any Cones: a
	// tornado or a spider makes Cones of its own), instead of new ones
	// allocated and cleared each time, the arenas grown from nothing: the
	// arenas, the dense arrays, the nodes' spans and bits, and their last
	// readers, still valid for the same output. (Not a sync.Pool, which
	// each garbage collection empties: a tornado's allocations start
	// one or two.)
	bufs := p.sweeps.Swap(nil)
	if bufs == nil {
		bufs = &sweepBufs{}
	}
	sw.entBuf, sw.valBuf, sw.dense = bufs.ents, bufs.vals, bufs.dense
	sw.free = sw.free[:0]
	for s := range sw.dense {
		sw.free = append(sw.free, int32(len(sw.dense)-1-s))
	}
	if cap(bufs.span) < n {
		bufs.span = make([]sweepSpan, n)
	}
	if cap(bufs.has) < (n+63)/64 {
		bufs.has = make([]uint64, (n+63)/64) // clear between sweeps
	}
	sw.span, sw.has = bufs.span[:n], bufs.has[:(n+63)/64]
	if bufs.lastOf != p || bufs.lastOut != out || cap(bufs.last) < n {
		if cap(bufs.last) < n {
			bufs.last = make([]int32, n)
		}
		last := bufs.last[:n]
		clear(last)
		for k := p.start; k < n; k++ {
			if op := p.ops[k]; !c.needed[k] || op == opArg {
				continue
			}
			last[p.a[k]] = int32(k)
			last[p.b[k]] = int32(k)
			if p.ops[k].Arity() == 3 {
				last[p.a[k+1]] = int32(k)
			}
		}
		last[out] = math.MaxInt32
		bufs.lastOf, bufs.lastOut = p, out
	}
	sw.last = bufs.last[:n]
	defer func() {
		for _, k := range sw.owners {
			sw.has[k>>6] = 0
		}
		for _, k := range sw.dnodes {
			sw.has[k>>6] = 0
		}
		sw.owners, sw.dnodes = sw.owners[:0], sw.dnodes[:0]
		sw.nOld, sw.oldE, sw.oldV, sw.fullV = 0, 0, 0, 0
		bufs.ents, bufs.vals, bufs.dense = sw.entBuf[:0], sw.valBuf[:0], sw.dense
		p.sweeps.Store(bufs)
		sw.entBuf, sw.valBuf, sw.dense, sw.free = nil, nil, nil, sw.free[:0]
		sw.ents, sw.vals = nil, nil
		sw.span, sw.has, sw.last = nil, nil, nil
	}()

	// The runs.
	runAt := sw.runAt[:0]
	for s := range dst {
		if s == 0 || is[s] != is[s-1] || js[s] != js[s-1] {
			runAt = append(runAt, int32(s))
		}
	}
	runAt = append(runAt, int32(len(dst)))
	sw.runAt = runAt
	runs := len(runAt) - 1

	// The inputs' lists, by a counting sort of the runs' inputs. The
	// first run of one input whose monotonicity is not known yet decides
	// it.
	count, at := sw.count, sw.at
	clear(count)
	for r := range runs {
		s := runAt[r]
		i, j := is[s], js[s]
		if i >= 0 {
			c.coneRuns += int(runAt[r+1] - s)
		}
		if i >= 0 && int(i) < n {
			count[i]++
		} else if i >= 0 && j < 0 {
			c.mono[i] = 2 // the output does not read it
		}
		if j >= 0 && int(j) < n {
			count[j]++
		}
	}
	// Entries first, values after: the values of input i's list are set
	// run by run below, in the order of its entries.
	total := int32(0)
	for i, m := range count {
		if m == 0 {
			continue
		}
		at[i] = total
		sw.span[i] = sweepSpan{e0: total, e1: total + m}
		sw.has[i>>6] |= 1 << (i & 63)
		sw.owners = append(sw.owners, int32(i))
		total += m
	}
	// Room for the cones' values, as far as their average size so far
	// tells, up to sweepArena.
	avg := coneGuess
	if c.coneRuns > 0 {
		avg = max(1, c.coneNodes/c.coneRuns)
	}
	room := min(sweepArena, 2*len(dst)*avg)
	ents := regrow(&sw.entBuf, sw.entBuf[:0], int(total)+room/2)[:total]
	vals := regrow(&sw.valBuf, sw.valBuf[:0], 2*len(dst)+room)
	for r := range runs {
		s := runAt[r]
		if i := is[s]; i >= 0 && int(i) < n {
			en := sweepEntry{id: int32(r)}
			if js[s] < 0 && c.mono[i] == 0 {
				c.mono[i] = 3 // decided by this run, below
				en.f, en.d = swRep|swAffine, 1
			}
			ents[at[i]] = en
			at[i]++
		}
		if j := js[s]; j >= 0 && int(j) < n {
			ents[at[j]] = sweepEntry{id: int32(r)}
			at[j]++
		}
	}
	// The values, list by list.
	for _, i := range sw.owners {
		sp := &sw.span[i]
		sp.v0 = int32(len(vals))
		for q := sp.e0; q < sp.e1; q++ {
			en := &ents[q]
			s, e := runAt[en.id], runAt[en.id+1]
			en.off = int32(len(vals))
			if is[s] == i {
				vals = append(vals, vi[s:e]...)
			} else {
				vals = append(vals, vj[s:e]...)
			}
		}
		sp.v1 = int32(len(vals))
	}

	// The operations, in tape order.
	base := c.vals
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
		hasB := sw.has[b>>6]>>(b&63)&1 != 0 && b != a
		hasZ := sw.has[z>>6]>>(z&63)&1 != 0 && z != a && z != b
		if !hasA && !hasB && !hasZ {
			continue
		}
		// Each operand's list, empty where it has none or repeats one
		// before it (its value is then that operand's).
		span := func() (sa, sb, sz sweepSpan) {
			if hasA {
				sa = sw.span[a]
			}
			if hasB {
				sb = sw.span[b]
			}
			if hasZ {
				sz = sw.span[z]
			}
			return
		}
		sa, sb, sz := span()
		// (A dense operand's span holds nothing of the arena.)
		m := int(sa.e1 - sa.e0 + sb.e1 - sb.e0 + sz.e1 - sz.e0)
		mv := int(sa.v1 - sa.v0 + sb.v1 - sb.v0 + sz.v1 - sz.v0)
		dA, dB, dZ := hasA && sa.isDense(), hasB && sb.isDense(), hasZ && sz.isDense()
		if op == OpAdd && b != a && (dA || dB || denseShare > 0 && runs >= denseRuns && mv*denseShare >= len(dst)) {
			// A dense sum (conedense.go): in the array of an operand
			// read last here, else in a free one.
			o := int32(-1)
			switch {
			case dA && sw.last[a] == k:
				o = sa.slot()
			case dB && sw.last[b] == k:
				o = sb.slot()
			default:
				o = sw.newSlot(len(dst), runs)
			}
			if o >= 0 {
				od := sw.slotFor(o, len(dst), runs)
				x0, y0 := base[a], base[b]
				switch {
				case dA && dB:
					od.pts = addDD(od, &sw.dense[sa.slot()], &sw.dense[sb.slot()], runAt)
				case dA:
					ad := &sw.dense[sa.slot()]
					od.pts = ad.pts + addDS(od, ad, ents, vals, sb, runAt, y0, false)
				case dB:
					bd := &sw.dense[sb.slot()]
					od.pts = bd.pts + addDS(od, bd, ents, vals, sa, runAt, x0, true)
				default:
					od.pts = addSS(od, ents, vals, sa, sb, runAt, x0, y0, base[k])
				}
				if dA || dB {
					baseOut(od, runAt, x0+y0, base[k])
				}
				if dA && sa.slot() != o && sw.last[a] == k {
					sw.release(sa.slot())
				}
				if dB && sb.slot() != o && sw.last[b] == k {
					sw.release(sb.slot())
				}
				sw.span[k] = denseSpan(o)
				sw.has[k>>6] |= 1 << (k & 63)
				sw.dnodes = append(sw.dnodes, k)
				sw.denseMade++
				c.coneNodes += od.pts
				continue
			}
		}
		// Any other operation reads a dense operand as a list: room for
		// it, and for it again in the node's list.
		if dA || dB || dZ {
			for _, q := range [3]int32{a, b, z} {
				if sw.has[q>>6]>>(q&63)&1 != 0 && sw.span[q].isDense() {
					em, ev := sw.sparseSize(q)
					m, mv = m+2*em, mv+2*ev
				}
			}
		}
		if len(ents)+m > cap(ents) || len(vals)+mv > cap(vals) {
			sw.ents, sw.vals = ents, vals
			sw.compact(k)
			ents, vals = sw.ents, sw.vals
			sa, sb, sz = span()
			// Room for twice what is alive, so that compacting stays cheap.
			ents = regrow(&sw.entBuf, ents, max(m, len(ents)))
			vals = regrow(&sw.valBuf, vals, max(mv, len(vals)))
		}
		if dA || dB || dZ {
			for _, q := range [3]int32{a, b, z} {
				if sw.has[q>>6]>>(q&63)&1 != 0 && sw.span[q].isDense() {
					ents, vals = sw.sparsify(q, ents, vals, runAt)
					sw.sparsified++
				}
			}
			sa, sb, sz = span()
		}
		sp := sweepSpan{e0: int32(len(ents)), v0: int32(len(vals))}
		sc := sweepCtx{ents: ents, vals: vals, runAt: runAt, op: op}
		switch {
		case op.Arity() == 3:
			sc.three(sa, sb, sz, a, b, z, base)
		case b == a:
			sc.one(sa)
		case op == OpAdd:
			sc.add(sa, sb, base[a], base[b])
		case op == OpMul:
			sc.mul(sa, sb, base[a], base[b])
		default:
			sc.two(sa, sb, base[a], base[b])
		}
		ents, vals = sc.ents, sc.vals
		sp.e1, sp.v1 = int32(len(ents)), int32(len(vals))
		sw.span[k] = sp
		sw.has[k>>6] |= 1 << (k & 63)
		sw.owners = append(sw.owners, k)
		c.coneNodes += int(sp.v1 - sp.v0)
	}
	sw.ents, sw.vals = ents, vals

	// The output at each point, and the points the scalar pass must check.
	for s := range dst {
		dst[s] = c.y0
	}
	outRun := func(s, e int32, v []float64, f uint8, d int8) {
		copy(dst[s:e], v)
		if f&swBad != 0 {
			for q := s; q < e; q++ {
				dst[q] = math.NaN() // for the scalar pass, below
			}
		}
		if f&swRep != 0 {
			i := is[s]
			c.mono[i] = 1
			if f&swAffine != 0 || d != dirUnknown {
				c.mono[i] = 2
			}
		}
	}
	if sw.has[out>>6]>>(out&63)&1 != 0 {
		if sp := sw.span[out]; sp.isDense() {
			od := &sw.dense[sp.slot()]
			for r, fl := range od.fl {
				if fl&swIn != 0 {
					s, e := runAt[r], runAt[r+1]
					outRun(s, e, od.v[s:e], fl.f(), fl.d())
				}
			}
		} else {
			for _, en := range ents[sp.e0:sp.e1] {
				s, e := runAt[en.id], runAt[en.id+1]
				outRun(s, e, vals[en.off:], en.f, en.d)
			}
		}
	}
	// A run of one input whose cone does not reach the output leaves it
	// unchanged: monotone.
	for r := range runs {
		if i := is[runAt[r]]; i >= 0 && c.mono[i] == 3 {
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

// regrow returns s with room for extra more elements, its capacity cut
// there so that the sweep compacts when it is full. buf holds the whole
// array under s, which doubles when too small: growing it to just twice
// what is alive at every compaction, as the sections' lists grow, would
// allocate and copy the arena over and over.
func regrow[T any](buf *[]T, s []T, extra int) []T {
	n := len(s)
	lim := n + extra
	b := *buf
	if lim <= cap(b) && (n == 0 || &b[:n][0] == &s[0]) {
		return b[:n:lim]
	}
	nb := make([]T, n, max(lim, 2*cap(b)))
	copy(nb, s)
	*buf = nb[:0]
	return nb[:n:lim]
}

// compact drops the lists that no node from k on reads, moving the others
// down in place (their order in the arenas is that of owners).
//
// The lists that outlived a compaction (owners[:nOld], the arenas up to
// oldE and oldV) are left where they are, dead or alive, until they take
// twice the room they did after the last full compaction: compacting
// only the lists written since, most of them dead by then, each value
// is copied about once, where copying everything alive each time copied
// the long-lived lists (the inputs', the line items' waiting for their
// sum) at every compaction, as many values as the sweep wrote.
func (sw *coneSweep) compact(k int32) {
	ents, vals := sw.ents, sw.vals
	full := sw.oldV > 2*sw.fullV
	from, e, v := sw.nOld, sw.oldE, sw.oldV
	if full {
		from, e, v = 0, 0, 0
	}
	keep := sw.owners[:from]
	for _, q := range sw.owners[from:] {
		if sw.last[q] < k {
			sw.has[q>>6] &^= 1 << (q & 63)
			continue
		}
		sp := sw.span[q]
		shift := v - sp.v0
		e0 := e
		for t := sp.e0; t < sp.e1; t++ {
			en := ents[t]
			en.off += shift
			ents[e] = en
			e++
		}
		v += int32(copy(vals[v:], vals[sp.v0:sp.v1]))
		sw.span[q] = sweepSpan{e0: e0, e1: e, v0: sp.v0 + shift, v1: v}
		keep = append(keep, q)
	}
	sw.owners = keep
	sw.ents, sw.vals = ents[:e], vals[:v]
	sw.nOld, sw.oldE, sw.oldV = len(keep), e, v
	if full {
		sw.fullV = v
	}
}

// sweepCtx appends a node's list to the arenas.
type sweepCtx struct {
	ents  []sweepEntry
	vals  []float64
	runAt []int32
	op    Op
}

// lanes appends the values of a new entry of run id and returns them.
func (sc *sweepCtx) lanes(id int32) (int32, []float64) {
	w := int(sc.runAt[id+1] - sc.runAt[id])
	off := len(sc.vals)
	sc.vals = sc.vals[:off+w]
	return int32(off), sc.vals[off : off+w : off+w]
}

// rep sets the direction of entry e, of a run that decides monotonicity,
// from its operands' entries (nil outside the cone) and the base values x0
// and y0 of a and b.
func rep(e *sweepEntry, op Op, ea, eb, ez *sweepEntry, x0, y0 float64) {
	d := func(e *sweepEntry) int8 {
		if e != nil {
			return e.d
		}
		return 0
	}
	aff := true
	for _, o := range [3]*sweepEntry{ea, eb, ez} {
		if o != nil && o.f&swAffine == 0 {
			aff = false
		}
	}
	dir, opAff := opDirection(op, ea != nil, eb != nil, ez != nil, d(ea), d(eb), d(ez), x0, y0)
	e.d = dir
	if !aff || !opAff {
		e.f &^= swAffine
	}
}

// one appends the list of op(x) over the list sa of x (or of op(x, x)).
func (sc *sweepCtx) one(sa sweepSpan) {
	op := sc.op
	guard := opMetas[op].guard
	for q := sa.e0; q < sa.e1; q++ {
		ea := sc.ents[q]
		e := sweepEntry{id: ea.id, f: ea.f}
		var v []float64
		e.off, v = sc.lanes(ea.id)
		x := sc.vals[ea.off : int(ea.off)+len(v)]
		if op == OpNeg {
			for l := range v {
				v[l] = -x[l]
			}
		} else {
			bad := false
			for l := range v {
				v[l] = evalOp(op, x[l], x[l], 0)
				bad = bad || !finite(x[l])
			}
			if guard && bad {
				e.f |= swBad
			}
		}
		if e.f&swRep != 0 {
			rep(&e, op, &ea, &ea, &ea, 0, 0)
		}
		sc.ents = append(sc.ents, e)
	}
}

// two appends the list of op(x, y) over the lists sa of x and sb of y,
// whose base values are x0 and y0.
func (sc *sweepCtx) two(sa, sb sweepSpan, x0, y0 float64) {
	op := sc.op
	pa, pb := sa.e0, sb.e0
	for pa < sa.e1 || pb < sb.e1 {
		var ea, eb *sweepEntry
		switch {
		case pb == sb.e1 || pa < sa.e1 && sc.ents[pa].id < sc.ents[pb].id:
			ea = &sc.ents[pa]
			pa++
		case pa == sa.e1 || sc.ents[pb].id < sc.ents[pa].id:
			eb = &sc.ents[pb]
			pb++
		default:
			ea, eb = &sc.ents[pa], &sc.ents[pb]
			pa++
			pb++
		}
		var e sweepEntry
		var x, y []float64
		if ea != nil {
			e.id, e.f = ea.id, ea.f
		}
		if eb != nil {
			e.id = eb.id
			e.f |= eb.f
		}
		var v []float64
		e.off, v = sc.lanes(e.id)
		if ea != nil {
			x = sc.vals[ea.off : int(ea.off)+len(v)]
		}
		if eb != nil {
			y = sc.vals[eb.off : int(eb.off)+len(v)]
		}
		if op == OpAdd && x != nil && y != nil {
			y = y[:len(x)]
			for l := range x {
				v[l] = x[l] + y[l]
			}
		} else if lanes2(op, v, x, y, x0, y0) {
			e.f |= swBad
		}
		if e.f&swRep != 0 {
			if op == OpAdd {
				// rep, for the commonest operation.
				var da, db int8
				aff := true
				if ea != nil {
					da, aff = ea.d, ea.f&swAffine != 0
				}
				if eb != nil {
					db, aff = eb.d, aff && eb.f&swAffine != 0
				}
				e.d = dirBoth(da, db)
				if !aff {
					e.f &^= swAffine
				}
			} else {
				rep(&e, op, ea, eb, ea, x0, y0)
			}
		}
		sc.ents = append(sc.ents, e)
	}
}

// add is two for OpAdd, the commonest operation (the sums of lines,
// sections and totals), with the merge, the values and the direction
// inline: the same additions in the same order as two.
func (sc *sweepCtx) add(sa, sb sweepSpan, x0, y0 float64) {
	ents, vals, runAt := sc.ents, sc.vals, sc.runAt
	pa, pb := sa.e0, sb.e0
	for pa < sa.e1 && pb < sb.e1 {
		ea, eb := ents[pa], ents[pb]
		var e sweepEntry
		off := int32(len(vals))
		switch {
		case ea.id < eb.id:
			pa++
			w := runAt[ea.id+1] - runAt[ea.id]
			vals = vals[:off+w]
			v, x := vals[off:off+w], vals[ea.off:ea.off+w]
			for l := range v {
				v[l] = x[l] + y0
			}
			e = sweepEntry{off: off, id: ea.id, f: ea.f}
			if e.f&swRep != 0 {
				e.d = dirBoth(ea.d, 0)
			}
		case eb.id < ea.id:
			pb++
			w := runAt[eb.id+1] - runAt[eb.id]
			vals = vals[:off+w]
			v, y := vals[off:off+w], vals[eb.off:eb.off+w]
			for l := range v {
				v[l] = x0 + y[l]
			}
			e = sweepEntry{off: off, id: eb.id, f: eb.f}
			if e.f&swRep != 0 {
				e.d = dirBoth(0, eb.d)
			}
		default:
			pa++
			pb++
			w := runAt[ea.id+1] - runAt[ea.id]
			vals = vals[:off+w]
			v, x, y := vals[off:off+w], vals[ea.off:ea.off+w], vals[eb.off:eb.off+w]
			for l := range v {
				v[l] = x[l] + y[l]
			}
			e = sweepEntry{off: off, id: ea.id, f: ea.f | eb.f}
			if e.f&swRep != 0 {
				e.d = dirBoth(ea.d, eb.d)
				if ea.f&eb.f&swAffine == 0 {
					e.f &^= swAffine
				}
			}
		}
		ents = append(ents, e)
	}
	// The tail of one list: the other operand at its base value.
	for ; pa < sa.e1; pa++ {
		ea := ents[pa]
		off := int32(len(vals))
		w := runAt[ea.id+1] - runAt[ea.id]
		vals = vals[:off+w]
		v, x := vals[off:off+w], vals[ea.off:ea.off+w]
		for l := range v {
			v[l] = x[l] + y0
		}
		e := sweepEntry{off: off, id: ea.id, f: ea.f}
		if e.f&swRep != 0 {
			e.d = dirBoth(ea.d, 0)
		}
		ents = append(ents, e)
	}
	for ; pb < sb.e1; pb++ {
		eb := ents[pb]
		off := int32(len(vals))
		w := runAt[eb.id+1] - runAt[eb.id]
		vals = vals[:off+w]
		v, y := vals[off:off+w], vals[eb.off:eb.off+w]
		for l := range v {
			v[l] = x0 + y[l]
		}
		e := sweepEntry{off: off, id: eb.id, f: eb.f}
		if e.f&swRep != 0 {
			e.d = dirBoth(0, eb.d)
		}
		ents = append(ents, e)
	}
	sc.ents, sc.vals = ents, vals
}

// mul is two for OpMul (the line items' products), as add is for OpAdd:
// the same products, and the direction of rep inline (opDirection: the
// direction times the other operand's base value where one operand is in
// the cone, unknown and not affine where both are).
func (sc *sweepCtx) mul(sa, sb sweepSpan, x0, y0 float64) {
	ents, vals, runAt := sc.ents, sc.vals, sc.runAt
	pa, pb := sa.e0, sb.e0
	for pa < sa.e1 || pb < sb.e1 {
		var e sweepEntry
		off := int32(len(vals))
		switch {
		case pb == sb.e1 || pa < sa.e1 && ents[pa].id < ents[pb].id:
			ea := ents[pa]
			pa++
			w := runAt[ea.id+1] - runAt[ea.id]
			vals = vals[:off+w]
			v, x := vals[off:off+w], vals[ea.off:ea.off+w]
			for l := range v {
				v[l] = x[l] * y0
			}
			e = sweepEntry{off: off, id: ea.id, f: ea.f}
			if e.f&swRep != 0 {
				e.d = dirTimes(ea.d, y0)
			}
		case pa == sa.e1 || ents[pb].id < ents[pa].id:
			eb := ents[pb]
			pb++
			w := runAt[eb.id+1] - runAt[eb.id]
			vals = vals[:off+w]
			v, y := vals[off:off+w], vals[eb.off:eb.off+w]
			for l := range v {
				v[l] = x0 * y[l]
			}
			e = sweepEntry{off: off, id: eb.id, f: eb.f}
			if e.f&swRep != 0 {
				e.d = dirTimes(eb.d, x0)
			}
		default:
			ea, eb := ents[pa], ents[pb]
			pa++
			pb++
			w := runAt[ea.id+1] - runAt[ea.id]
			vals = vals[:off+w]
			v, x, y := vals[off:off+w], vals[ea.off:ea.off+w], vals[eb.off:eb.off+w]
			for l := range v {
				v[l] = x[l] * y[l]
			}
			e = sweepEntry{off: off, id: ea.id, f: ea.f | eb.f}
			if e.f&swRep != 0 {
				e.d = dirUnknown
				e.f &^= swAffine
			}
		}
		ents = append(ents, e)
	}
	sc.ents, sc.vals = ents, vals
}

// lanes2 sets v[l] = op(x[l], y[l]), x[l] being x0 where x is nil and y[l]
// y0 where y is nil, and reports whether a guard saw a non-finite operand
// (as tapeProg.step).
func lanes2(op Op, v, x, y []float64, x0, y0 float64) bool {
	switch {
	case x != nil && y != nil:
		x, y = x[:len(v)], y[:len(v)]
		switch op {
		case OpAdd:
			for l := range v {
				v[l] = x[l] + y[l]
			}
		case OpSub:
			for l := range v {
				v[l] = x[l] - y[l]
			}
		case OpMul:
			for l := range v {
				v[l] = x[l] * y[l]
			}
		default:
			bad := false
			for l := range v {
				var b bool
				v[l], b = stepOp(op, x[l], y[l])
				bad = bad || b
			}
			return bad
		}
	case x != nil:
		x = x[:len(v)]
		switch op {
		case OpAdd:
			for l := range v {
				v[l] = x[l] + y0
			}
		case OpSub:
			for l := range v {
				v[l] = x[l] - y0
			}
		case OpMul:
			for l := range v {
				v[l] = x[l] * y0
			}
		default:
			bad := false
			for l := range v {
				var b bool
				v[l], b = stepOp(op, x[l], y0)
				bad = bad || b
			}
			return bad
		}
	default:
		y = y[:len(v)]
		switch op {
		case OpAdd:
			for l := range v {
				v[l] = x0 + y[l]
			}
		case OpSub:
			for l := range v {
				v[l] = x0 - y[l]
			}
		case OpMul:
			for l := range v {
				v[l] = x0 * y[l]
			}
		default:
			bad := false
			for l := range v {
				var b bool
				v[l], b = stepOp(op, x0, y[l])
				bad = bad || b
			}
			return bad
		}
	}
	return false
}

// stepOp is op(x, y) of an operation of two operands other than + - *,
// and whether a guard saw a non-finite operand, as tapeProg.step.
func stepOp(op Op, x, y float64) (float64, bool) {
	if op == OpDiv {
		return x / y, !finite(y)
	}
	return evalOp(op, x, y, 0), opMetas[op].guard && !(finite(x) && finite(y))
}

// three appends the list of op(x, y, z) over operands a, b and z, whose
// lists are sa, sb and sz (empty for an operand that repeats one before
// it).
func (sc *sweepCtx) three(sa, sb, sz sweepSpan, a, b, z int32, base []float64) {
	const none = math.MaxInt32
	op := sc.op
	x0, y0, z0 := base[a], base[b], base[z]
	guard := opMetas[op].guard
	pa, pb, pz := sa.e0, sb.e0, sz.e0
	for pa < sa.e1 || pb < sb.e1 || pz < sz.e1 {
		id := int32(none)
		if pa < sa.e1 {
			id = sc.ents[pa].id
		}
		if pb < sb.e1 {
			id = min(id, sc.ents[pb].id)
		}
		if pz < sz.e1 {
			id = min(id, sc.ents[pz].id)
		}
		var ea, eb, ez *sweepEntry
		if pa < sa.e1 && sc.ents[pa].id == id {
			ea = &sc.ents[pa]
			pa++
		}
		if pb < sb.e1 && sc.ents[pb].id == id {
			eb = &sc.ents[pb]
			pb++
		}
		if pz < sz.e1 && sc.ents[pz].id == id {
			ez = &sc.ents[pz]
			pz++
		}
		// An operand repeated takes the value of the one before.
		if b == a {
			eb = ea
		}
		if z == a {
			ez = ea
		} else if z == b {
			ez = eb
		}
		e := sweepEntry{id: id}
		for _, o := range [3]*sweepEntry{ea, eb, ez} {
			if o != nil {
				e.f |= o.f
			}
		}
		var v []float64
		e.off, v = sc.lanes(id)
		lane := func(o *sweepEntry, v0 float64, l int) float64 {
			if o != nil {
				return sc.vals[int(o.off)+l]
			}
			return v0
		}
		bad := false
		for l := range v {
			x, y, zv := lane(ea, x0, l), lane(eb, y0, l), lane(ez, z0, l)
			v[l] = evalOp(op, x, y, zv)
			bad = bad || !(finite(x) && finite(y) && finite(zv))
		}
		if guard && bad {
			e.f |= swBad
		}
		if e.f&swRep != 0 {
			rep(&e, op, ea, eb, ez, x0, y0)
		}
		sc.ents = append(sc.ents, e)
	}
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
