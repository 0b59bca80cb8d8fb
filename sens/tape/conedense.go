package tape

import "math"

// Dense nodes of a sweep.
//
// The partial sums of the sections and the total lie in the cones of a
// large share of a batch's runs: their lists are nearly dense, and merging
// them entry by entry is most of a sweep's time. A sum whose operands'
// lists cover at least 1/denseShare of the batch's points is held dense
// instead: an array of its value at every point of the batch, where a
// point whose run is not in the node's cone holds the node's base value,
// and the runs' flags (swBad, swRep, swAffine, the direction, and swIn for
// the runs in the cone) in an array of their own. A sum with a dense
// operand is dense too (its cone holds its operand's), computed over every
// point: a + b at a point of a run in neither cone is base(a) + base(b),
// and where that is not base(k) to the bit the runs outside the cone are
// set to base(k) after, so that every value is the one the lists would
// hold. The values are thus those of the lists, the same additions on the
// same operands: Eval's to the last bit.
//
// Only sums (OpAdd of two operands) are dense. Any other operation, and a
// sum when no array is free, reads a dense operand as a list (sparsify:
// its entries written to the arena, in order of runs). A dense node's
// array is given back after its last reader, or handed to that reader
// when it is a sum, which then adds in place; at most denseSlots arrays
// are alive at once.

// swIn marks, in a dense node's flags of a run, the runs in its cone.
const swIn = swAffine << 1

// swFlag is a run's flags and direction at a dense node, packed (swPack):
// the flags in the low four bits, the direction (dirUnknown, -1, 0 or 1) in
// the next two.
type swFlag uint8

// swPack packs flags f and direction d.
func swPack(f uint8, d int8) swFlag { return swFlag(f | uint8(d)&3<<4) }

// swDirs unpacks a direction.
var swDirs = [4]int8{0, 1, dirUnknown, -1}

// f and d unpack a run's flags and direction.
func (x swFlag) f() uint8 { return uint8(x) & 15 }
func (x swFlag) d() int8  { return swDirs[x>>4&3] }

// swBoth is the table of the flags of a sum at a run from its operands'
// (both zero outside a cone): their flags together, the direction
// dirBoth's, no longer affine where both are in the cone and either is
// not; as add does for entries, the direction only for swRep.
var swBoth = func() (t [64 * 64]swFlag) {
	for x := range 64 {
		for y := range 64 {
			a, b := swFlag(x), swFlag(y)
			f := a.f() | b.f()
			var d int8
			if f&swRep != 0 {
				d = dirBoth(a.d(), b.d())
				if a.f()&b.f()&swIn != 0 && a.f()&b.f()&swAffine == 0 {
					f &^= swAffine
				}
			}
			t[x<<6|y] = swPack(f, d)
		}
	}
	return
}()

// sweepDense is a dense node's values and flags.
type sweepDense struct {
	v   []float64 // the value at each point of the batch
	fl  []swFlag  // each run's flags
	pts int       // the points of the runs in the cone
}

// denseShare: a sum is dense when its operands' lists hold at least
// 1/denseShare of the batch's points (0: never). A variable, for the tests.
var denseShare = 4

// denseRuns is the fewest runs of a batch with dense nodes: a small batch
// gains nothing by them. A variable, for the tests.
var denseRuns = 256

// denseBudget bounds the values of the dense arrays alive at once: 16 MB,
// so at most denseBudget/points arrays (denseSlots). A variable, for the
// tests.
var denseBudget = 1 << 21

// denseSlots is the number of dense arrays a sweep of n points may hold.
func denseSlots(n int) int { return max(2, denseBudget/max(n, 1)) }

// isDense reports whether a node's span is a dense node's (e0 = -1-slot).
func (sp sweepSpan) isDense() bool { return sp.e0 < 0 }

// slot is the dense array of a dense span.
func (sp sweepSpan) slot() int32 { return -1 - sp.e0 }

// denseSpan is the span of a dense node in slot s: no entries, no values
// in the arena.
func denseSpan(s int32) sweepSpan { return sweepSpan{e0: -1 - s, e1: -1 - s} }

// newSlot returns a free dense array for n points and runs runs, or -1
// when denseSlots are in use.
func (sw *coneSweep) newSlot(n, runs int) int32 {
	if len(sw.free) > 0 {
		s := sw.free[len(sw.free)-1]
		sw.free = sw.free[:len(sw.free)-1]
		return s
	}
	if len(sw.dense) >= denseSlots(n) {
		return -1
	}
	sw.dense = append(sw.dense, sweepDense{v: make([]float64, n), fl: make([]swFlag, runs)})
	return int32(len(sw.dense) - 1)
}

// slotFor returns slot s's arrays sized for n points and runs runs.
func (sw *coneSweep) slotFor(s int32, n, runs int) *sweepDense {
	d := &sw.dense[s]
	if cap(d.v) < n {
		d.v = make([]float64, n)
	}
	if cap(d.fl) < runs {
		d.fl = make([]swFlag, runs)
	}
	d.v, d.fl = d.v[:n], d.fl[:runs]
	return d
}

// release gives slot s back.
func (sw *coneSweep) release(s int32) { sw.free = append(sw.free, s) }

// sparsify writes dense node q's list to the arena (its runs in the cone,
// in order) and gives its array back. The arena has room for it
// (sparseSize).
func (sw *coneSweep) sparsify(q int32, ents []sweepEntry, vals []float64, runAt []int32) ([]sweepEntry, []float64) {
	s := sw.span[q].slot()
	d := &sw.dense[s]
	sp := sweepSpan{e0: int32(len(ents)), v0: int32(len(vals))}
	for r, fl := range d.fl {
		if fl&swIn == 0 {
			continue
		}
		a, b := runAt[r], runAt[r+1]
		ents = append(ents, sweepEntry{off: int32(len(vals)), id: int32(r), f: fl.f() &^ swIn, d: fl.d()})
		vals = append(vals, d.v[a:b]...)
	}
	sp.e1, sp.v1 = int32(len(ents)), int32(len(vals))
	sw.span[q] = sp
	sw.owners = append(sw.owners, q)
	sw.release(s)
	return ents, vals
}

// sparseSize is the number of entries and values of dense node q's list.
func (sw *coneSweep) sparseSize(q int32) (int, int) {
	d := &sw.dense[sw.span[q].slot()]
	m := 0
	for _, fl := range d.fl {
		if fl&swIn != 0 {
			m++
		}
	}
	return m, d.pts
}

// addDD sets o = a + b, a and b dense (o may be either), and returns the
// points of the cone.
func addDD(o, a, b *sweepDense, runAt []int32) int {
	bv := b.v[:len(a.v)]
	ov := o.v[:len(a.v)]
	for s := range ov {
		ov[s] = a.v[s] + bv[s]
	}
	bf, of := b.fl[:len(a.fl)], o.fl[:len(a.fl)]
	pts := 0
	runAt = runAt[:len(a.fl)+1]
	for r, fa := range a.fl {
		f := swBoth[int(fa&63)<<6|int(bf[r]&63)]
		if f&swIn != 0 {
			pts += int(runAt[r+1] - runAt[r])
		}
		of[r] = f
	}
	return pts
}

// addDS sets o = a + b, a dense and b the list ents[sb.e0:sb.e1] of base
// value y0 (o may be a); left: the list is the sum's first operand (y0 +
// a, y + a). It returns the points of b's runs outside a's cone.
func addDS(o, a *sweepDense, ents []sweepEntry, vals []float64, sb sweepSpan, runAt []int32, y0 float64, left bool) int {
	ov, av := o.v, a.v[:len(o.v)]
	if o != a {
		copy(o.fl, a.fl)
	}
	gap := func(lo, hi int32) {
		v, x := ov[lo:hi], av[lo:hi]
		if left {
			for s := range v {
				v[s] = y0 + x[s]
			}
		} else {
			for s := range v {
				v[s] = x[s] + y0
			}
		}
	}
	added := 0
	prev := int32(0)
	for _, e := range ents[sb.e0:sb.e1] {
		lo, hi := runAt[e.id], runAt[e.id+1]
		gap(prev, lo)
		prev = hi
		v, x, y := ov[lo:hi], av[lo:hi], vals[e.off:e.off+hi-lo]
		if left {
			for s := range v {
				v[s] = y[s] + x[s]
			}
		} else {
			for s := range v {
				v[s] = x[s] + y[s]
			}
		}
		fa := o.fl[e.id]
		if fa&swIn == 0 {
			added += int(hi - lo)
		}
		o.fl[e.id] = swBoth[int(fa&63)<<6|int(swPack(e.f|swIn, e.d))]
	}
	gap(prev, int32(len(ov)))
	return added
}

// addSS sets o = a + b from the lists sa and sb of base values x0 and y0
// (the merge of add, written at the runs' points), the runs outside both
// cones at base value z0. It returns the points of the cone.
func addSS(o *sweepDense, ents []sweepEntry, vals []float64, sa, sb sweepSpan, runAt []int32, x0, y0, z0 float64) int {
	for s := range o.v {
		o.v[s] = z0
	}
	clear(o.fl)
	pts := 0
	pa, pb := sa.e0, sb.e0
	for pa < sa.e1 || pb < sb.e1 {
		var ea, eb sweepEntry
		var id int32
		switch {
		case pb == sb.e1 || pa < sa.e1 && ents[pa].id < ents[pb].id:
			ea = ents[pa]
			pa++
			id = ea.id
			lo, hi := runAt[id], runAt[id+1]
			v, x := o.v[lo:hi], vals[ea.off:ea.off+hi-lo]
			for s := range v {
				v[s] = x[s] + y0
			}
			o.fl[id] = swPack(ea.f|swIn, ea.d)
		case pa == sa.e1 || ents[pb].id < ents[pa].id:
			eb = ents[pb]
			pb++
			id = eb.id
			lo, hi := runAt[id], runAt[id+1]
			v, y := o.v[lo:hi], vals[eb.off:eb.off+hi-lo]
			for s := range v {
				v[s] = x0 + y[s]
			}
			o.fl[id] = swPack(eb.f|swIn, eb.d)
		default:
			ea, eb = ents[pa], ents[pb]
			pa++
			pb++
			id = ea.id
			lo, hi := runAt[id], runAt[id+1]
			v, x, y := o.v[lo:hi], vals[ea.off:ea.off+hi-lo], vals[eb.off:eb.off+hi-lo]
			for s := range v {
				v[s] = x[s] + y[s]
			}
			o.fl[id] = swBoth[int(swPack(ea.f|swIn, ea.d))<<6|int(swPack(eb.f|swIn, eb.d))]
		}
		pts += int(runAt[id+1] - runAt[id])
	}
	return pts
}

// baseOut sets the points of the runs outside o's cone to z0, when z,
// their value by the sum, is not z0 to the bit.
func baseOut(o *sweepDense, runAt []int32, z, z0 float64) {
	if math.Float64bits(z) == math.Float64bits(z0) {
		return
	}
	for r, fl := range o.fl {
		if fl&swIn == 0 {
			v := o.v[runAt[r]:runAt[r+1]]
			for s := range v {
				v[s] = z0
			}
		}
	}
}
