package tape

import (
	"math"
	"sort"
)

// The inputs only loop nodes read, in the scalar passes.
//
// A roll-up over whole columns of inputs (Σ qty × unit cost over 100,000
// lines) does little arithmetic an input, so copying the inputs onto the
// tape and clearing and copying out their adjoints would be most of its
// work. Value and Gradient read those inputs (tapeProg.direct) in place
// from x, and the reverse pass writes their adjoints straight into the
// caller's gradient: the first loop node to write a run of them assigns
// (0 + amount, as the sum from zero would give), later ones add, and the
// runs nobody wrote are cleared at the end. A sum of a map that only it
// reads runs the map's reverse pass with its own adjoint, so the map's
// adjoints are never stored. Every value and adjoint is the same to the
// bit as by the passes over the tape's own buffers, which stay the
// reference: Eval, Forward and the error searches use them.

// span is a run of direct inputs a loop node reads: a vector operand, or
// one input broadcast. shared is set when it overlaps another span.
type span struct {
	first, n int32
	shared   bool
}

// loopPass is a Tape's state in a reverse pass through loop nodes.
type loopPass struct {
	xin  []float64 // the inputs in place, or nil when all are on the tape
	done int       // a loop node whose reverse pass has run already, or 0
	seen []uint32  // per span: the pass that last wrote it
	pass uint32
	// proven, per span written in this pass: its adjoints are finite, as
	// shown by the amounts stored there (see sure).
	proven []bool
}

// loadShared copies into the input slots the inputs that a pass reads from
// the tape, leaving the direct ones in x (xin), and checks x's length.
func (t *Tape) loadShared(x []float64) {
	p := t.p
	t.loadInputsCheck(x)
	for i := 0; i < len(p.runs); i += 2 {
		r := p.runs[i]
		copy(t.vals[r[0]:r[1]], x[r[0]:r[1]])
	}
	t.xin = x
}

// loadInputsCheck panics when x is not one value an input.
func (t *Tape) loadInputsCheck(x []float64) {
	if len(x) != t.p.nIn {
		t.loadInputs(x) // panics with the message
	}
}

// srcOf returns where the value of slot s is read: xin for an input only
// loop nodes read when xin is not nil, else the tape's values v.
func (p *tapeProg) srcOf(v, xin []float64, s int) []float64 {
	if xin != nil && s < p.nIn && p.direct[s] {
		return xin
	}
	return v
}

// findSpans finds the spans of direct inputs, the span of each loop
// operand, and the sums that run the reverse pass of their map (fuse).
func (p *tapeProg) findSpans() {
	if len(p.loops) == 0 {
		return
	}
	p.findFuse()
	if p.direct == nil {
		return
	}
	defer p.findDots()
	p.dspan = make([][3]int32, len(p.loops))
	at := map[[2]int32]int32{}
	for li := range p.loops {
		l := &p.loops[li]
		p.dspan[li] = [3]int32{-1, -1, -1}
		nops := 1 // operands: a dot's third argument is not one
		switch l.kind {
		case loopMap:
			nops = 3
		case loopDot:
			nops = 2
		}
		for i := range nops {
			first := l.arg[i]
			if int(first) >= p.nIn || !p.direct[first] {
				continue
			}
			n := int32(1)
			switch {
			case l.kind == loopMap && l.step[i] == 0:
			case l.kind == loopGather || l.kind == loopGroup:
				n = l.src
			default:
				n = l.n
			}
			key := [2]int32{first, n}
			r, ok := at[key]
			if !ok {
				r = int32(len(p.spans))
				at[key] = r
				p.spans = append(p.spans, span{first: first, n: n})
			}
			p.dspan[li][i] = r
		}
	}
	// Overlapping spans are cleared before the pass and only added to.
	order := make([]int, len(p.spans))
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return p.spans[order[a]].first < p.spans[order[b]].first })
	end, last := int32(-1), -1
	for _, i := range order {
		s := &p.spans[i]
		if s.first < end {
			s.shared = true
			p.spans[last].shared = true
		}
		if s.first+s.n > end {
			end, last = s.first+s.n, i
		}
	}
}

// findFuse marks the sum loops whose operand is a map, of a shape
// fusedMapReverse knows, that comes just before the sum and that nothing
// else reads: not an operation, not an output, not another loop node.
//
// It also marks the maps by a scalar and the sums and differences whose
// vector operand i is such a map, just before them and read by nothing
// else (chain[l] = i+1): when the sum runs their pass, every element of
// that operand has one adjoint too, and they run its pass in turn.
// readsTwice reports whether an operand of map l other than i reads a slot
// of the vector operand i (m + m, m + m[3]): that vector's elements then
// get more than one adjoint each.
func (l *loop) readsTwice(i int) bool {
	lo, hi := l.arg[i], l.arg[i]+l.n
	for j := range int(l.op.Arity()) {
		n := int32(1)
		if l.step[j] != 0 {
			n = l.n
		}
		if j != i && l.arg[j] < hi && l.arg[j]+n > lo {
			return true
		}
	}
	return false
}

func (p *tapeProg) findFuse() {
	type cand struct {
		lo, hi, li int32 // the map's slots, its reader's loop
		op         int8  // the reader's operand, or -1 for a sum
	}
	var cands []cand
	for k := p.start; k < len(p.ops); k++ {
		if p.ops[k] != opLoop {
			continue
		}
		l := &p.loops[p.a[k]]
		before := func(i int) (*loop, bool) { // operand i, a map just before k
			x := l.arg[i]
			if p.ops[x] != opLoop {
				return nil, false
			}
			m := &p.loops[p.a[x]]
			return m, m.kind == loopMap && int(x)+int(m.n) == k && m.n == l.n && fusable(m)
		}
		switch {
		case l.kind == loopSum:
			if _, ok := before(0); ok {
				cands = append(cands, cand{l.arg[0], int32(k), p.a[k], -1})
			}
		case l.kind == loopMap && fusable(l) && !(l.op == OpMul && l.step[0]+l.step[1] == 2):
			// A map whose vector operands get one adjoint each.
			for i := range 2 {
				if _, ok := before(i); ok && l.step[i] == 1 && !l.readsTwice(i) {
					cands = append(cands, cand{l.arg[i], int32(k), p.a[k], int8(i)})
					break
				}
			}
		}
	}
	if len(cands) == 0 {
		return
	}
	ok := make([]bool, len(cands))
	for i := range ok {
		ok[i] = true
	}
	// read marks the candidates whose slots [lo, hi) a reader other than
	// the sum li touches.
	read := func(lo, hi, li int32) {
		i := sort.Search(len(cands), func(i int) bool { return cands[i].hi > lo })
		for ; i < len(cands) && cands[i].lo < hi; i++ {
			if cands[i].li != li {
				ok[i] = false
			}
		}
	}
	for k := p.start; k < len(p.ops); k++ {
		switch op := p.ops[k]; op {
		case opLane:
		case opLoop:
			li := p.a[k]
			p.loops[li].operands(func(first, n int32) { read(first, first+n, li) })
		default:
			read(p.a[k], p.a[k]+1, -1)
			if op != opArg {
				read(p.b[k], p.b[k]+1, -1)
			}
		}
	}
	for _, o := range p.outs {
		read(o, o+1, -1)
	}
	for i, c := range cands {
		switch {
		case !ok[i]:
		case c.op < 0:
			if p.fuse == nil {
				p.fuse = make([]bool, len(p.loops))
			}
			p.fuse[c.li] = true
		default:
			if p.chain == nil {
				p.chain = make([]int8, len(p.loops))
			}
			p.chain[c.li] = c.op + 1
		}
	}
}

// fusable reports whether fusedMapReverse knows the shape of map m: a
// product of two vectors or of a vector and a scalar, a vector plus or
// minus a vector or a scalar.
func fusable(m *loop) bool {
	sx, sy := m.step[0], m.step[1]
	if sx == 1 && sy == 1 && !disjoint(int(m.arg[0]), int(m.arg[1]), int(m.n)) || !broadcastApart(m) {
		return false
	}
	switch m.op {
	case OpMul:
		return sx+sy >= 1
	case OpAdd, OpSub:
		return sx == 1
	}
	return false
}

// clearShared clears, before a reverse pass of the output whose nodes end
// at end, the tape's adjoints up to there and those of the inputs not
// direct (clearAdjoints without dst).
func (p *tapeProg) clearShared(adj []float64, end int) {
	if p.direct == nil {
		clear(adj[:max(end, p.nIn)])
		return
	}
	if end > p.nIn {
		clear(adj[p.nIn:end])
	}
	for i := 0; i < len(p.runs); i += 2 {
		r := p.runs[i]
		clear(adj[r[0]:r[1]])
	}
}

// begin starts a reverse pass: the direct inputs' values are in xin (or
// on the tape when it is nil), and the spans shared between operands are
// cleared in dst now, as nobody assigns them.
func (ls *loopPass) begin(p *tapeProg, dst, xin []float64) {
	ls.xin = xin
	if len(ls.seen) != len(p.spans) {
		ls.seen = make([]uint32, len(p.spans))
		ls.proven = make([]bool, len(p.spans))
		ls.pass = 0
	}
	ls.pass++
	if ls.pass == 0 {
		clear(ls.seen)
		ls.pass = 1
	}
	for r, s := range p.spans {
		if s.shared {
			clear(dst[s.first : s.first+s.n])
			ls.seen[r] = ls.pass
			ls.proven[r] = false
		}
	}
}

// finish clears in dst the spans no loop node wrote.
func (ls *loopPass) finish(p *tapeProg, dst []float64) {
	for r, s := range p.spans {
		if ls.seen[r] != ls.pass {
			clear(dst[s.first : s.first+s.n])
			ls.seen[r] = ls.pass
			ls.proven[r] = true
		}
	}
}

// allFinite reports whether the gradient dst of the last reverse pass
// with ls is finite: the inputs' adjoints copied from the tape's buffer
// and those of the spans not proven finite are tested.
func (ls *loopPass) allFinite(p *tapeProg, dst []float64) bool {
	if p.direct == nil || len(ls.proven) != len(p.spans) {
		return allFinite(dst)
	}
	for i := 0; i < len(p.runs); i += 2 {
		if r := p.runs[i]; !allFinite(dst[r[0]:r[1]]) {
			return false
		}
	}
	for r, s := range p.spans {
		if !ls.proven[r] && !allFinite(dst[s.first:s.first+s.n]) {
			return false
		}
	}
	return true
}

// sure marks operand i of loop li, whose span the caller has just stored
// whole (set, from fresh), as proven finite when ok.
func (ls *loopPass) sure(p *tapeProg, li int32, i int, set, ok bool) {
	if set && ok {
		ls.proven[p.dspan[li][i]] = true
	}
}

// fresh reports whether operand i of loop li is a span of direct inputs
// not written yet in this pass, which the caller then writes whole; either
// way the span counts as written from now on.
func (ls *loopPass) fresh(p *tapeProg, li int32, i int) bool {
	if p.dspan == nil {
		return false
	}
	r := p.dspan[li][i]
	if r < 0 {
		return false
	}
	ls.proven[r] = false // until sure says otherwise
	if ls.seen[r] == ls.pass {
		return false
	}
	ls.seen[r] = ls.pass
	return true
}

// prepare clears in dst the spans of the operands of loop li not written
// yet, for a reverse pass through it that adds to its operands' adjoints.
func (ls *loopPass) prepare(p *tapeProg, dst []float64, li int32) {
	for i := range 3 {
		if ls.fresh(p, li, i) {
			s := p.spans[p.dspan[li][i]]
			clear(dst[s.first : s.first+s.n])
		}
	}
}

// scaleInto adds a*xs[j] to d[j], or with set stores it plus zero (the sum
// from zero: -0 becomes +0), for every j.
func scaleInto(d, xs []float64, a float64, set bool) {
	xs = xs[:len(d)]
	j := 0
	if set {
		for ; j+4 <= len(d); j += 4 {
			x, o := (*[4]float64)(xs[j:]), (*[4]float64)(d[j:])
			o[0] = float64(a*x[0]) + 0
			o[1] = float64(a*x[1]) + 0
			o[2] = float64(a*x[2]) + 0
			o[3] = float64(a*x[3]) + 0
		}
		for ; j < len(d); j++ {
			d[j] = float64(a*xs[j]) + 0
		}
		return
	}
	for ; j+4 <= len(d); j += 4 {
		x, o := (*[4]float64)(xs[j:]), (*[4]float64)(d[j:])
		o[0] += float64(a * x[0])
		o[1] += float64(a * x[1])
		o[2] += float64(a * x[2])
		o[3] += float64(a * x[3])
	}
	for ; j < len(d); j++ {
		d[j] += float64(a * xs[j])
	}
}

// scaleFinite is scaleInto with set, and reports whether every value it
// stored is finite: it ORs together each value's exponent field plus one
// in the lowest exponent bit, whose sign bit only an exponent of all ones
// (±Inf, NaN) sets, in integer registers beside the arithmetic.
func scaleFinite(d, xs []float64, a float64) bool {
	const exp, one = 0x7ff0_0000_0000_0000, 1 << 52
	xs = xs[:len(d)]
	var f0, f1, f2, f3 uint64
	j := 0
	for ; j+4 <= len(d); j += 4 {
		x, o := (*[4]float64)(xs[j:]), (*[4]float64)(d[j:])
		r0, r1 := float64(a*x[0])+0, float64(a*x[1])+0
		r2, r3 := float64(a*x[2])+0, float64(a*x[3])+0
		o[0], o[1], o[2], o[3] = r0, r1, r2, r3
		f0 |= math.Float64bits(r0)&exp + one
		f1 |= math.Float64bits(r1)&exp + one
		f2 |= math.Float64bits(r2)&exp + one
		f3 |= math.Float64bits(r3)&exp + one
	}
	for ; j < len(d); j++ {
		r := float64(a*xs[j]) + 0
		d[j] = r
		f0 |= math.Float64bits(r)&exp + one
	}
	return (f0|f1|f2|f3)>>63 == 0
}

// addInto adds a to every d[j], or with set stores it (a is an adjoint or
// its negation, never -0 where it is stored: see scaleInto).
func addInto(d []float64, a float64, set bool) {
	if set {
		a += 0
		for j := range d {
			d[j] = a
		}
		return
	}
	for j := range d {
		d[j] += a
	}
}

// mulInto adds g[j]*xs[j] to d[j] where g[j] is not zero, or with set
// stores it plus zero, and zero where g[j] is.
func mulInto(d, g, xs []float64, set bool) {
	g, xs = g[:len(d)], xs[:len(d)]
	if set {
		for j, a := range g {
			r := 0.0
			if a != 0 {
				r = float64(a*xs[j]) + 0
			}
			d[j] = r
		}
		return
	}
	for j, a := range g {
		if a != 0 {
			d[j] += float64(a * xs[j])
		}
	}
}

// copyInto adds sign*g[j] to d[j], or with set stores it plus zero.
func copyInto(d, g []float64, sign float64, set bool) {
	g = g[:len(d)]
	switch {
	case set && sign > 0:
		for j, a := range g {
			d[j] = a + 0
		}
	case set:
		for j, a := range g {
			d[j] = float64(sign*a) + 0
		}
	case sign > 0:
		for j, a := range g {
			d[j] += a
		}
	default:
		for j, a := range g {
			d[j] += float64(sign * a)
		}
	}
}

// disjoint reports whether the runs [x, x+n) and [y, y+n) are one run or
// share no slot, so that adding one operand's amounts over all its
// elements and then the other's adds, slot by slot, in the order of the
// element-by-element loop.
func disjoint(x, y, n int) bool { return x == y || x+n <= y || y+n <= x }

// loopReverseFast runs the reverse pass through the loop node at k (loop
// li) for the shapes it knows, writing the adjoints of direct inputs into
// dst, and reports whether it did, and the first slot of what it ran (see
// loopReverse).
func (p *tapeProg) loopReverseFast(v, adj, dst []float64, k int, li int32, ls *loopPass) (int, bool) {
	l := &p.loops[li]
	n := int(l.n)
	x, y := int(l.arg[0]), int(l.arg[1])
	switch l.kind {
	case loopDot:
		if !disjoint(x, y, n) {
			return k, false
		}
		a := adj[k]
		if a == 0 {
			return k, true
		}
		// A finite sum of products has finite factors, and a factor times
		// an adjoint of at most 1 in size stays finite.
		ok := finite(v[k]) && math.Abs(a) <= 1
		xs, ys := p.srcOf(v, ls.xin, x)[x:x+n], p.srcOf(v, ls.xin, y)[y:y+n]
		set := ls.fresh(p, li, 0)
		if ok || !set {
			scaleInto(p.adjOf(adj, dst, x)[x:x+n], ys, a, set)
			ls.sure(p, li, 0, set, ok)
		} else {
			ls.sure(p, li, 0, set, scaleFinite(p.adjOf(adj, dst, x)[x:x+n], ys, a))
		}
		set = ls.fresh(p, li, 1)
		if ok || !set {
			scaleInto(p.adjOf(adj, dst, y)[y:y+n], xs, a, set)
			ls.sure(p, li, 1, set, ok)
		} else {
			ls.sure(p, li, 1, set, scaleFinite(p.adjOf(adj, dst, y)[y:y+n], xs, a))
		}
		return k, true
	case loopSum:
		a := adj[k]
		fused := p.fuse != nil && p.fuse[li]
		switch {
		case fused && a == 0:
			return p.fusedStart(x), true // nothing to run: nor the maps
		case a == 0:
			return k, true
		case fused:
			p.fusedMapReverse(v, adj, dst, x, a, finite(v[k]), ls)
			return p.fusedStart(x), true
		}
		set := ls.fresh(p, li, 0)
		addInto(p.adjOf(adj, dst, x)[x:x+n], a, set)
		ls.sure(p, li, 0, set, finite(a))
		return k, true
	case loopMap:
		return k, p.mapReverseFast(l, v, adj, dst, k, li, ls)
	}
	return k, false
}

// fusedStart returns the first slot of the map at km and of the maps just
// before it whose pass it runs (chain).
func (p *tapeProg) fusedStart(km int) int {
	for p.chain != nil {
		i := p.chain[p.a[km]] - 1
		if i < 0 {
			break
		}
		km = int(p.loops[p.a[km]].arg[i])
	}
	return km
}

// fusedMapReverse runs the reverse pass of the map at km, every element of
// which has the adjoint a (the sum that reads it sends a to each): the
// amounts of mapReverse for a uniform adjoint, without storing it. sum is
// whether the sum is finite, and so every element of the map.
func (p *tapeProg) fusedMapReverse(v, adj, dst []float64, km int, a float64, sum bool, ls *loopPass) {
	li := p.a[km]
	m := &p.loops[li]
	n := int(m.n)
	x, y := int(m.arg[0]), int(m.arg[1])
	sx, sy := m.step[0], m.step[1]
	vx, vy := p.srcOf(v, ls.xin, x), p.srcOf(v, ls.xin, y)
	ax, ay := p.adjOf(adj, dst, x), p.adjOf(adj, dst, y)
	konst := func(s int) bool { return s >= p.nIn && s < p.start }
	// The operand whose map runs its pass next with the adjoint u, which
	// is what each of its elements would hold (0 + u; a zero u leaves that
	// map nothing to do), after this map's own amounts, in the order of
	// the pass node by node.
	next, u := -1, 0.0
	if p.chain != nil {
		next = int(p.chain[li]) - 1
	}
	defer func() {
		if next >= 0 && u != 0 {
			p.fusedMapReverse(v, adj, dst, int(m.arg[next]), u, sum, ls)
		}
	}()
	switch {
	case m.op == OpMul && sx == 1 && sy == 1:
		ok := sum && math.Abs(a) <= 1 // as for a dot product
		set := ls.fresh(p, li, 0)
		scaleInto(ax[x:x+n], vy[y:y+n], a, set)
		ls.sure(p, li, 0, set, ok)
		set = ls.fresh(p, li, 1)
		scaleInto(ay[y:y+n], vx[x:x+n], a, set)
		ls.sure(p, li, 1, set, ok)
	case m.op == OpMul:
		i0, i1 := 0, 1
		if sx == 0 {
			x, y, vx, vy, ax, ay, i0, i1 = y, x, vy, vx, ay, ax, 1, 0 // the vector first
		}
		c := vy[y]
		if next == i0 {
			u = float64(a * c)
		} else {
			fx := ls.fresh(p, li, i0)
			addInto(ax[x:x+n], float64(a*c), fx)
			ls.sure(p, li, i0, fx, finite(a*c))
		}
		fy := ls.fresh(p, li, i1)
		if !konst(y) {
			acc := ay[y]
			if fy {
				acc = 0
			}
			xs := vx[x : x+n]
			for j := n - 1; j >= 0; j-- {
				acc += float64(a * xs[j])
			}
			ay[y] = acc
		}
	default: // + or - with the vector first
		if next == 0 {
			u = a
		} else {
			fx := ls.fresh(p, li, 0)
			addInto(ax[x:x+n], a, fx)
			ls.sure(p, li, 0, fx, finite(a))
		}
		b := a
		if m.op == OpSub {
			b = -a
		}
		fy := ls.fresh(p, li, 1)
		if sy == 1 && next == 1 {
			u = b
		} else if sy == 1 {
			addInto(ay[y:y+n], b, fy)
			ls.sure(p, li, 1, fy, finite(a))
		} else if !konst(y) {
			acc := ay[y]
			if fy {
				acc = 0
			}
			for range n {
				acc += b
			}
			ay[y] = acc
		}
	}
}

// mapReverseFast runs the reverse pass through the map at k for a product
// of two vectors and a vector plus or minus a vector, writing the
// adjoints of direct inputs into dst, and reports whether it did.
func (p *tapeProg) mapReverseFast(l *loop, v, adj, dst []float64, k int, li int32, ls *loopPass) bool {
	n := int(l.n)
	x, y := int(l.arg[0]), int(l.arg[1])
	if l.step[0] != 1 || l.step[1] != 1 || !disjoint(x, y, n) {
		return false
	}
	gk := adj[k : k+n]
	ax, ay := p.adjOf(adj, dst, x)[x:x+n], p.adjOf(adj, dst, y)[y:y+n]
	switch l.op {
	case OpMul:
		xs, ys := p.srcOf(v, ls.xin, x)[x:x+n], p.srcOf(v, ls.xin, y)[y:y+n]
		mulInto(ax, gk, ys, ls.fresh(p, li, 0))
		mulInto(ay, gk, xs, ls.fresh(p, li, 1))
	case OpAdd, OpSub:
		sign := 1.0
		if l.op == OpSub {
			sign = -1
		}
		copyInto(ax, gk, 1, ls.fresh(p, li, 0))
		copyInto(ay, gk, sign, ls.fresh(p, li, 1))
	default:
		return false
	}
	return true
}

// dotGrad returns sumOrdered(xs, ys) and, block by block while the block's
// terms are in cache, adds a*ys[j] to dx[j] and a*xs[j] to dy[j] (or
// stores them, with setx and sety, as scaleInto does): the forward and the
// reverse pass of a dot product whose adjoint a is known before its value,
// in one pass over its operands. dx and dy are one run or disjoint.
//
// With check, it also reports whether every amount it stored (with setx or
// sety) is finite, which an adjoint above 1 in size does not ensure;
// without, it reports true.
func dotGrad(xs, ys, dx, dy []float64, a float64, setx, sety, check bool) (float64, bool) {
	n := len(xs)
	ys, dx, dy = ys[:n], dx[:n], dy[:n]
	fin := true
	scale := func(d, s []float64, set bool) {
		if check && set {
			fin = scaleFinite(d, s, a) && fin
		} else {
			scaleInto(d, s, a, set)
		}
	}
	if n <= sumBlock {
		s := sumLeaf(xs, ys)
		scale(dx, ys, setx)
		scale(dy, xs, sety)
		return s, fin
	}
	var st [64]float64
	var ht [64]uint8
	sp := 0
	for lo := 0; lo < n; lo += sumBlock {
		hi := min(lo+sumBlock, n)
		switch {
		case hi-lo == sumBlock && setx && sety && check:
			st[sp] = dotStore((*[sumBlock]float64)(xs[lo:]), (*[sumBlock]float64)(ys[lo:]),
				(*[sumBlock]float64)(dx[lo:]), (*[sumBlock]float64)(dy[lo:]), a)
			// Tested while the block is in the first-level cache.
			fin = blockFinite((*[sumBlock]float64)(dx[lo:]), (*[sumBlock]float64)(dy[lo:])) && fin
		case hi-lo == sumBlock && setx && sety:
			st[sp] = dotStore((*[sumBlock]float64)(xs[lo:]), (*[sumBlock]float64)(ys[lo:]),
				(*[sumBlock]float64)(dx[lo:]), (*[sumBlock]float64)(dy[lo:]), a)
		case hi-lo == sumBlock:
			st[sp] = dotFull((*[sumBlock]float64)(xs[lo:]), (*[sumBlock]float64)(ys[lo:]))
		default:
			st[sp] = sumLeaf(xs[lo:hi], ys[lo:hi])
		}
		if hi-lo < sumBlock || !setx || !sety {
			scale(dx[lo:hi], ys[lo:hi], setx)
			scale(dy[lo:hi], xs[lo:hi], sety)
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
	return st[0], fin
}

// gradientDot is Gradient for an output that is a dot product whose
// operands are disjoint runs: its adjoint is 1 before anything is
// evaluated, so its value and its operands' adjoints come from one pass
// over them (dotGrad); the rest of the tape is evaluated before it and
// differentiated after it as usual. ok is false, and nothing done, for
// another output. On a domain error of the forward pass dst may have been
// written.
func (t *Tape) gradientDot(dst, x []float64, i int) (f float64, ok bool, err error) {
	p := t.p
	out := int(p.outs[i])
	if p.direct == nil || p.ops[out] != opLoop {
		return 0, false, nil
	}
	li := p.a[out]
	l := &p.loops[li]
	n, xa, ya := int(l.n), int(l.arg[0]), int(l.arg[1])
	if l.kind != loopDot || !disjoint(xa, ya, n) {
		return 0, false, nil
	}
	if len(dst) != p.nIn {
		t.reverse(dst, i, false) // panics with the message
	}
	t.loadShared(x)
	bad := t.run(out) // the nodes before the output
	end := out + 1
	v, g := t.vals[:end], t.adj[:end]
	p.clearShared(t.adj, end)
	ls := &t.lp
	ls.begin(p, dst, x)
	xs, ys := p.srcOf(v, x, xa)[xa:xa+n], p.srcOf(v, x, ya)[ya:ya+n]
	ax, ay := p.adjOf(t.adj, dst, xa)[xa:xa+n], p.adjOf(t.adj, dst, ya)[ya:ya+n]
	setx := ls.fresh(p, li, 0)
	sety := ls.fresh(p, li, 1) // false when the same span as x: x's amounts are stored first
	v[out], _ = dotGrad(xs, ys, ax, ay, 1, setx, sety, false)
	if bad || !finite(v[out]) {
		t.loadInputs(x)
		if err := t.check(bad, p.outs[i:i+1], t.vals, 1, 0, -1); err != nil {
			return math.NaN(), true, err
		}
		t.xin = x // the values are on the tape too; the pass reads either
		// The search used t.adj as scratch: the adjoints are cleared and
		// the dot's amounts stored again, in a new pass.
		p.clearShared(t.adj, end)
		ls.begin(p, dst, x)
		setx, sety = ls.fresh(p, li, 0), ls.fresh(p, li, 1)
		v[out], _ = dotGrad(xs, ys, ax, ay, 1, setx, sety, false)
	}
	sure := finite(v[out]) // see loopReverseFast
	ls.sure(p, li, 0, setx, sure)
	ls.sure(p, li, 1, sety, sure)
	p.reverseNodes(g, v, t.adj, dst, out, false, ls) // g[out] is 0: the output is done
	return t.finishOnePass(ls, dst, g, v, i, out)
}

// dotStore is dotFull of a block, which also stores a*y[j] + 0 in dx[j] and
// a*x[j] + 0 in dy[j] (scaleInto with set) as it goes.
func dotStore(x, y, dx, dy *[sumBlock]float64, a float64) float64 {
	s0, s1 := float64(x[0]*y[0]), float64(x[1]*y[1])
	s2, s3 := float64(x[2]*y[2]), float64(x[3]*y[3])
	for j := 0; j < sumLanes; j++ {
		dx[j] = float64(a*y[j]) + 0
		dy[j] = float64(a*x[j]) + 0
	}
	for j := sumLanes; j < sumBlock; j += 4 {
		x0, x1, x2, x3 := x[j], x[j+1], x[j+2], x[j+3]
		y0, y1, y2, y3 := y[j], y[j+1], y[j+2], y[j+3]
		s0 += float64(x0 * y0)
		s1 += float64(x1 * y1)
		s2 += float64(x2 * y2)
		s3 += float64(x3 * y3)
		dx[j], dx[j+1], dx[j+2], dx[j+3] = float64(a*y0)+0, float64(a*y1)+0, float64(a*y2)+0, float64(a*y3)+0
		dy[j], dy[j+1], dy[j+2], dy[j+3] = float64(a*x0)+0, float64(a*x1)+0, float64(a*x2)+0, float64(a*x3)+0
	}
	return (s0 + s1) + (s2 + s3)
}

// blockFinite reports whether every element of x and y is finite (see
// allFinite).
func blockFinite(x, y *[sumBlock]float64) bool {
	var c0, c1, c2, c3 float64
	for j := 0; j < sumBlock; j += 4 {
		c0 += (x[j] - x[j]) + (y[j] - y[j])
		c1 += (x[j+1] - x[j+1]) + (y[j+1] - y[j+1])
		c2 += (x[j+2] - x[j+2]) + (y[j+2] - y[j+2])
		c3 += (x[j+3] - x[j+3]) + (y[j+3] - y[j+3])
	}
	return c0+c1+c2+c3 == 0
}

// A dot product inside a formula.
//
// A roll-up is seldom the output itself: total * (1 + markup), k * Σ q c.
// Its adjoint then comes from the operations after it, known in the
// reverse pass only after a forward pass has read its operands once. But
// when those operations are a chain of + - * / and negation from the dot
// product to the output, each node of it the one use of the one before and
// the dot product on a side whose local derivative does not depend on it
// (either side of a sum, difference or product, a quotient's numerator),
// its adjoint depends only on values it does not reach, the operands off
// the chain. Gradient then evaluates every other node first, computes the
// adjoint as the reverse pass would (from 1 at the output, each link adds
// g·v, g/v or ±g to its operand's cleared adjoint; a link whose adjoint
// is 0 passes nothing back), runs the dot product's forward and reverse in
// one pass over its operands (dotGrad), then the chain, and the reverse
// pass of the rest, which skips the dot product (loopPass.done). The dot
// product's operands must be read by it alone, so that no other loop node
// adds to their adjoints: in the reverse pass those would come first.

// dotLink is a node of such a chain and its operand (0 or 1) on the way to
// the dot product.
type dotLink struct {
	k    int32
	side uint8
}

// dotChain is the dot product at dot and the chain from it to an output,
// in evaluation order; dot is 0 when the output has none.
type dotChain struct {
	dot   int32
	links []dotLink
}

// findDots finds the dot product and chain of each output that has them.
func (p *tapeProg) findDots() {
	n := len(p.ops)
	// The reads of each slot by nodes, up to 255. Being an output is not
	// a use: the gradient of one output sends nothing back from another.
	uses := make([]uint8, n)
	use := func(s int32) {
		if uses[s] < 255 {
			uses[s]++
		}
	}
	for k := p.start; k < n; k++ {
		switch op := p.ops[k]; {
		case op == opLane:
		case op == opLoop:
			p.loops[p.a[k]].operands(func(first, m int32) {
				for s := first; s < first+m; s++ {
					use(s)
				}
			})
		case op == opArg || op.Arity() == 1:
			use(p.a[k])
		default:
			use(p.a[k])
			use(p.b[k])
		}
	}
	for i, o := range p.outs {
		if o < int32(p.start) || p.ops[o] == opLoop || p.ops[o] == opLane {
			continue
		}
		if c, ok := p.chainTo(o, uses, 0); ok {
			if p.dots == nil {
				p.dots = make([]dotChain, len(p.outs))
			}
			p.dots[i] = c
		}
	}
}

// maxDotChain bounds the links of a chain.
const maxDotChain = 64

// chainTo returns the chain from a dot product to node k, whose operand
// on the way to it is its only use, and k itself the last link.
func (p *tapeProg) chainTo(k int32, uses []uint8, depth int) (dotChain, bool) {
	if depth >= maxDotChain {
		return dotChain{}, false
	}
	op := p.ops[k]
	for side := range 2 {
		var s int32
		switch {
		case op == OpNeg && side == 0, op == OpDiv && side == 0:
			s = p.a[k]
		case (op == OpAdd || op == OpSub || op == OpMul) && p.a[k] != p.b[k]:
			s = p.a[k]
			if side == 1 {
				s = p.b[k]
			}
		default:
			continue
		}
		if s < int32(p.start) || uses[s] != 1 {
			continue
		}
		var c dotChain
		ok := false
		switch p.ops[s] {
		case opLoop:
			c, ok = dotChain{dot: s}, p.dotAlone(s, uses)
		case OpAdd, OpSub, OpMul, OpDiv, OpNeg:
			c, ok = p.chainTo(s, uses, depth+1)
		}
		if ok {
			c.links = append(c.links, dotLink{k, uint8(side)})
			return c, true
		}
	}
	return dotChain{}, false
}

// dotAlone reports whether the loop node at k is a dot product of
// disjoint runs (or one run twice) that no other node reads.
func (p *tapeProg) dotAlone(k int32, uses []uint8) bool {
	l := &p.loops[p.a[k]]
	n := l.n
	x, y := l.arg[0], l.arg[1]
	if l.kind != loopDot || !disjoint(int(x), int(y), int(n)) {
		return false
	}
	per := uint8(1)
	if x == y {
		per = 2
	}
	for j := range n {
		if uses[x+j] != per || uses[y+j] != per {
			return false
		}
	}
	return true
}

// gradientChain is Gradient for an output with a dot product and chain
// (findDots); ok is false, and nothing done, for another output. On a
// domain error the output's pass runs again as usual, which reports it;
// dst may have been written.
func (t *Tape) gradientChain(dst, x []float64, i int) (f float64, ok bool, err error) {
	p := t.p
	if p.dots == nil || p.dots[i].dot == 0 {
		return 0, false, nil
	}
	c := &p.dots[i]
	if len(dst) != p.nIn {
		t.reverse(dst, i, false) // panics with the message
	}
	out, dk := int(p.outs[i]), int(c.dot)
	li := p.a[dk]
	l := &p.loops[li]
	n, xa, ya := int(l.n), int(l.arg[0]), int(l.arg[1])
	t.loadShared(x)
	// Every node but the dot product and the chain, in order: none of
	// them reads those.
	bad := t.runFrom(p.start, dk)
	from := dk + p.loopWidth(dk)
	for _, ln := range c.links {
		if t.runFrom(from, int(ln.k)) {
			bad = true
		}
		from = int(ln.k) + 1
	}
	end := out + 1
	v, g := t.vals[:end], t.adj[:end]
	// The dot product's adjoint, as reverseNodes computes it.
	a := 1.0
	for j := len(c.links) - 1; j >= 0 && a != 0; j-- {
		k, side := int(c.links[j].k), c.links[j].side
		var d float64 // the operand's adjoint, cleared
		switch p.ops[k] {
		case OpAdd:
			d += a
		case OpSub:
			if side == 0 {
				d += a
			} else {
				d -= a
			}
		case OpMul:
			o := p.b[k]
			if side == 1 {
				o = p.a[k]
			}
			d += a * v[o]
		case OpDiv:
			d += a / v[p.b[k]]
		case OpNeg:
			d -= a
		}
		a = d
	}
	p.clearShared(t.adj, end)
	ls := &t.lp
	ls.begin(p, dst, x)
	xs, ys := p.srcOf(v, x, xa)[xa:xa+n], p.srcOf(v, x, ya)[ya:ya+n]
	if a == 0 {
		// Nothing passes back: the spans stay unwritten, and finish
		// clears them.
		v[dk] = sumOrdered(xs, ys)
	} else {
		ax, ay := p.adjOf(t.adj, dst, xa)[xa:xa+n], p.adjOf(t.adj, dst, ya)[ya:ya+n]
		setx := ls.fresh(p, li, 0)
		sety := ls.fresh(p, li, 1) // false when the same span as x
		// A finite dot product has finite factors, which an adjoint of at
		// most 1 in size keeps finite (see loopReverseFast); above 1 the
		// stores are tested as they are made.
		small := math.Abs(a) <= 1
		var fin bool
		v[dk], fin = dotGrad(xs, ys, ax, ay, a, setx, sety, !small)
		sure := fin && finite(v[dk])
		ls.sure(p, li, 0, setx, sure)
		ls.sure(p, li, 1, sety, sure)
	}
	for _, ln := range c.links {
		if p.step(v, ln.k) {
			bad = true
		}
	}
	if bad || !finite(v[out]) {
		f, err := t.gradientNodes(dst, x, i)
		return f, true, err
	}
	ls.done = dk
	g[out] = 1
	p.reverseNodes(g, v, t.adj, dst, out, false, ls)
	ls.done = 0
	return t.finishOnePass(ls, dst, g, v, i, out)
}

// finishOnePass ends a gradient of output i whose reverse pass has run
// with the loop pass ls (gradientDot, gradientChain): the direct inputs'
// adjoints finished in dst, the others copied there from g, and the
// output's value v[out] returned, or the error of the pass as Gradient
// reports it when an adjoint is not finite.
func (t *Tape) finishOnePass(ls *loopPass, dst, g, v []float64, i, out int) (float64, bool, error) {
	p := t.p
	ls.finish(p, dst)
	t.adjUsed = true
	p.inputAdjoints(dst, g)
	f := v[out]
	if !ls.allFinite(p, dst) {
		t.reverse(dst, i, true) // every value and adjoint, for reverseError
		return f, true, t.reverseError(i, t.vals, t.adj, 1, 0, -1)
	}
	return f, true, nil
}
