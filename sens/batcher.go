package sens

import (
	"fmt"
	"math"
	"sync"
	"time"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Batched evaluation of points near the baseline: the one-at-a-time
// analyses (tornado, spider, sweeps, break-even) evaluate points that differ
// from the baseline in one or two inputs.

// point is the baseline with up to two inputs changed: x_i = vi and, when
// j >= 0, x_j = vj. i = -1 is the baseline itself.
type point struct {
	i, j   int
	vi, vj float64
}

// batcher evaluates points that differ from the baseline in one or two
// inputs. For a compiled model (a Function with cones) it evaluates each
// run of points that change the same inputs by re-evaluating only the cone
// of those inputs (tape.Cones), batched; the values are those of Eval to
// the last bit. Any other Function gets the points as rows through
// EvalBatch: a block of rows equal to the baseline in which only the
// coordinates each point sets are changed, so preparing a point costs O(1),
// not O(number of inputs).
type batcher struct {
	f      Function
	base   []float64
	dim    int
	rows   []float64
	movers []mover // evalPoints: one a goroutine
	chunk  int
	next   int // the size of the next batch through cones (see batchTime)
	s      *Settings
	cones  coneSet // nil when f has none, or its baseline fails

	done, total int
}

// maxBatchFloats bounds the memory of one batch of rows (4 MiB); maxBatch
// bounds its number of points.
const (
	maxBatchFloats = 1 << 19
	maxBatch       = 1024
)

// coneBatch is the number of points a batch evaluates through cones
// (after a first one of maxBatch): a sweep reads the tape once a batch,
// so a batch holds the ends of many inputs (the tornado of the 10^5-line
// scale model: 49,999 points, about 0.2 s).
const coneBatch = 1 << 16

// batchTime is the time a batch through cones aims at: the batches start
// at maxBatch points and grow (fourfold while one takes less than a quarter
// of this, twofold while less than this) up to
// coneBatch, and halve when one takes more than twice it, so that progress
// reports and checks for cancellation come a few times a second on a
// model whose cones are costly, while a cheap model's points still reach
// the long batches that a sweep of the tape needs. Only the batches' sizes
// depend on the time: the values are those of Eval whatever they are.
const batchTime = 100 * time.Millisecond

func newBatcher(f Function, base []float64, s *Settings) *batcher {
	dim := len(base)
	chunk := maxBatch
	if dim > 0 && maxBatchFloats/dim < chunk {
		chunk = max(1, maxBatchFloats/dim)
	}
	b := &batcher{f: f, base: base, dim: dim, chunk: chunk, s: s}
	if dim >= pointwiseDim {
		b.chunk = maxBatch // points, not rows: see evalPoints
	}
	if c, ok := f.(coner); ok {
		// A baseline that fails leaves the cones off: the points are then
		// evaluated as rows, and the failure reported as Eval reports it.
		if cs, err := c.cones(base); err == nil {
			b.cones = cs
			b.chunk = coneBatch
			b.next = maxBatch
		}
	}
	return b
}

// eval writes f at every point into dst, checking for cancellation and
// reporting progress between batches.
func (b *batcher) eval(dst []float64, pts []point) error {
	ctx := b.s.ctx()
	for start := 0; start < len(pts); {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("stopped: %w", err)
		}
		n := min(b.chunk, len(pts)-start)
		var err error
		switch {
		case b.cones != nil:
			n = min(b.next, len(pts)-start)
			began := time.Now()
			err = b.evalCones(dst[start:start+n], pts[start:start+n])
			switch took := time.Since(began); {
			case took < batchTime/4:
				b.next = min(4*b.next, b.chunk)
			case took < batchTime:
				b.next = min(2*b.next, b.chunk)
			case took > 2*batchTime:
				b.next = max(b.next/2, maxBatch)
			}
		case b.dim >= pointwiseDim:
			err = b.evalPoints(dst[start:start+n], pts[start:start+n])
		default:
			err = b.evalRows(dst[start:start+n], pts[start:start+n])
		}
		if err != nil {
			return err
		}
		start += n
		b.done += n
		if b.total < b.done {
			b.total = b.done
		}
		b.s.progress(b.done, b.total)
	}
	return nil
}

// evalCones evaluates the points through the cones of the inputs they
// change (tape.Cones.EvalPoints: a sweep of the tape for a batch of many
// inputs, else each run of points that change the same inputs through
// their cone).
func (b *batcher) evalCones(dst []float64, pts []point) error {
	return b.cones.evalPoints(dst, pts)
}

// pointwiseDim is the number of inputs from which a Function without
// cones evaluates the points one at a time, through Eval on one vector
// changed in place: a batch of rows that wide fits few points, and its
// batched pass moves every input of every row (a model of vectors, whose
// loop nodes have no cones). A variable, for the tests.
var pointwiseDim = 1 << 12

// pointsPerWorker is the fewest points evalPoints gives a goroutine.
const pointsPerWorker = 16

// evalPoints evaluates points one at a time on the baseline changed in
// place, on up to GOMAXPROCS goroutines, each with an evaluator of its own
// (mover) and a contiguous share of the points. The error is that of the
// first point that fails, whatever the number of goroutines.
func (b *batcher) evalPoints(dst []float64, pts []point) error {
	w := max(1, min(workerCount(0), len(pts)/pointsPerWorker))
	for len(b.movers) < w {
		f := b.f
		if len(b.movers) > 0 {
			f = b.f.Clone()
		}
		b.movers = append(b.movers, newMover(f, b.base))
	}
	if w == 1 {
		return evalShare(b.movers[0], dst, pts)
	}
	errs := make([]error, w)
	var wg sync.WaitGroup
	per := (len(pts) + w - 1) / w
	for g := range w {
		lo, hi := min(g*per, len(pts)), min((g+1)*per, len(pts))
		wg.Go(func() { errs[g] = evalShare(b.movers[g], dst[lo:hi], pts[lo:hi]) })
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// evalShare evaluates points through m.
func evalShare(m mover, dst []float64, pts []point) error {
	for s, p := range pts {
		y, err := m.eval(p.i, p.vi, p.j, p.vj)
		if err != nil {
			return err
		}
		dst[s] = y
	}
	return nil
}

// mover evaluates a Function at points that differ from a base point in
// input i and, when j >= 0, input j, one point at a time; the values and
// errors are those of Eval.
type mover interface {
	eval(i int, vi float64, j int, vj float64) (float64, error)
}

// newMover returns a mover of f around base: through tape.Moves for a
// compiled formula, which loads the base once, else through Eval on the
// base changed in place.
func newMover(f Function, base []float64) mover {
	switch f := f.(type) {
	case *Fn:
		return &fnMover{fn: f, m: f.tape.Moves(base, f.f.out), x0: base}
	case *subFn:
		full := append([]float64(nil), f.full...)
		for i, j := range f.index {
			full[j] = base[i]
		}
		return &fnMover{fn: f.fn, m: f.fn.tape.Moves(full, f.fn.f.out), x0: full, index: f.index}
	}
	return &evalMover{f: f, base: base, x: append([]float64(nil), base...)}
}

// evalMover moves the inputs of a vector and calls Eval.
type evalMover struct {
	f       Function
	base, x []float64
}

func (e *evalMover) eval(i int, vi float64, j int, vj float64) (float64, error) {
	x := e.x
	if i >= 0 {
		x[i] = vi
	}
	if j >= 0 {
		x[j] = vj
	}
	y, err := e.f.Eval(x)
	if i >= 0 {
		x[i] = e.base[i]
	}
	if j >= 0 {
		x[j] = e.base[j]
	}
	return y, err
}

// fnMover evaluates a compiled formula through tape.Moves.
type fnMover struct {
	fn    *Fn
	m     *tape.Moves
	x0    []float64 // the base, every program input
	index []int     // problem input -> program input (nil: the same)
}

func (fm *fnMover) eval(i int, vi float64, j int, vj float64) (float64, error) {
	pi, pj := i, j
	if fm.index != nil {
		if i >= 0 {
			pi = fm.index[i]
		}
		if j >= 0 {
			pj = fm.index[j]
		}
	}
	point := func() []float64 {
		x := append([]float64(nil), fm.x0...)
		if pi >= 0 {
			x[pi] = vi
		}
		if pj >= 0 {
			x[pj] = vj
		}
		return x
	}
	y, err := fm.m.Eval(pi, vi, pj, vj)
	if err != nil {
		return math.NaN(), fm.fn.prog.evalError(err, point())
	}
	// As Fn.Eval: a value that overflows in the display unit is an error.
	v := y * fm.fn.scale
	if math.IsInf(v, 0) && !math.IsInf(y, 0) {
		return math.NaN(), fm.fn.overflow(point(), "")
	}
	return v, nil
}

// evalRows evaluates points as rows through EvalBatch.
func (b *batcher) evalRows(dst []float64, batch []point) error {
	n := len(batch)
	if len(b.rows) < n*b.dim {
		old := len(b.rows) / max(1, b.dim)
		b.rows = append(b.rows, make([]float64, n*b.dim-len(b.rows))...)
		for r := old; r < n; r++ {
			copy(b.rows[r*b.dim:(r+1)*b.dim], b.base)
		}
	}
	for r, p := range batch {
		row := b.rows[r*b.dim : (r+1)*b.dim]
		if p.i >= 0 {
			row[p.i] = p.vi
		}
		if p.j >= 0 {
			row[p.j] = p.vj
		}
	}
	err := b.f.EvalBatch(dst, b.rows[:n*b.dim], n)
	for r, p := range batch {
		row := b.rows[r*b.dim : (r+1)*b.dim]
		if p.i >= 0 {
			row[p.i] = b.base[p.i]
		}
		if p.j >= 0 {
			row[p.j] = b.base[p.j]
		}
	}
	return err
}

// monotone reports whether the output is proven monotone in input i (see
// tape.Cones.Monotone); false when that cannot be told.
func (b *batcher) monotone(i int) bool { return b.cones != nil && b.cones.monotone(i) }

// finish reports the work as complete.
func (b *batcher) finish() {
	b.total = b.done
	b.s.progress(b.done, b.total)
}

// ---- cones of a compiled output

// coner is a Function that can evaluate points near a base point by
// re-evaluating only what the changed inputs reach.
type coner interface {
	cones(base []float64) (coneSet, error)
}

// coneSet evaluates a Function at points that differ from its base point in
// input i and, when j >= 0, input j.
type coneSet interface {
	base() float64
	evalPoints(dst []float64, pts []point) error
	monotone(i int) bool
}

// fnCones are the cones of a compiled formula, over every program input.
type fnCones struct {
	fn    *Fn
	c     *tape.Cones
	x0    []float64 // the base, every program input
	index []int     // problem input -> program input (nil: the same)

	is, js []int32 // evalPoints: the points' program inputs and values
	vi, vj []float64
}

func (fn *Fn) cones(base []float64) (coneSet, error) {
	c, err := fn.tape.Cones(base, fn.f.out)
	if err != nil {
		return nil, fn.prog.evalError(err, base)
	}
	if _, err := fn.scaled(c.Base(), base); err != nil {
		return nil, err
	}
	return &fnCones{fn: fn, c: c, x0: base}, nil
}

func (s *subFn) cones(base []float64) (coneSet, error) {
	full := append([]float64(nil), s.full...)
	for i, j := range s.index {
		full[j] = base[i]
	}
	c, err := s.fn.tape.Cones(full, s.fn.f.out)
	if err != nil {
		return nil, s.fn.prog.evalError(err, full)
	}
	if _, err := s.fn.scaled(c.Base(), full); err != nil {
		return nil, err
	}
	return &fnCones{fn: s.fn, c: c, x0: full, index: s.index}, nil
}

func (fc *fnCones) input(i int) int {
	if i < 0 || fc.index == nil {
		return i
	}
	return fc.index[i]
}

func (fc *fnCones) base() float64 { return fc.c.Base() * fc.fn.scale }

func (fc *fnCones) monotone(i int) bool { return fc.c.Monotone(fc.input(i)) }

func (fc *fnCones) evalPoints(dst []float64, pts []point) error {
	n := len(pts)
	fc.is, fc.js = fc.is[:0], fc.js[:0]
	fc.vi, fc.vj = fc.vi[:0], fc.vj[:0]
	for _, q := range pts {
		fc.is = append(fc.is, int32(fc.input(q.i)))
		fc.js = append(fc.js, int32(fc.input(q.j)))
		fc.vi = append(fc.vi, q.vi)
		fc.vj = append(fc.vj, q.vj)
	}
	// point returns point s as a full vector of program inputs.
	point := func(s int) []float64 {
		x := append([]float64(nil), fc.x0...)
		if i := fc.is[s]; i >= 0 {
			x[i] = fc.vi[s]
		}
		if j := fc.js[s]; j >= 0 {
			x[j] = fc.vj[s]
		}
		return x
	}
	if err := fc.c.EvalPoints(dst[:n], fc.is, fc.vi, fc.js, fc.vj); err != nil {
		var x []float64
		if de, ok := err.(*tape.DomainError); ok && de.Sample >= 0 && de.Sample < n {
			x = point(de.Sample)
		}
		return fc.fn.prog.evalError(err, x)
	}
	for s := range dst[:n] {
		v := dst[s] * fc.fn.scale
		if math.IsInf(v, 0) && !math.IsInf(dst[s], 0) {
			return fc.fn.overflow(point(s), "")
		}
		dst[s] = v
	}
	return nil
}
