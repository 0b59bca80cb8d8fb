package sens

import (
	"errors"
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Evaluation of radial designs: Sobol' evaluates, for each row of a matrix
// A of samples, the row itself and the row with input i taken from B, for
// every input i. The k points with one input replaced differ from their
// row in one input, so a compiled model evaluates them through that
// input's cone over the row's own values (tape.Radial): lane by lane, each
// lane's baseline is a row of A. A model of vectors, whose loop nodes have
// cones element by element but not lane by lane, moves one tape.Cones from
// row to row instead. The values are those of evaluating every point
// whole, to the last bit.

// radialer is a Function that can evaluate radial designs through its
// cones. radial returns the evaluator, or an error when the function has
// none (cones too large together, tape.ErrRadialSize): the caller then
// evaluates every point whole.
type radialer interface {
	radial() (radialSet, error)
}

// radialSet evaluates, for n rows given column by column in a (one column
// per input), the rows into fa and, for each input i, the rows with input i
// set to b[i] into fab[i]. An error says only that some point failed or
// overflowed: the caller evaluates the rows again whole, in its own order,
// to report the error as it would have without the cones.
type radialSet interface {
	eval(fa []float64, fab [][]float64, a, b [][]float64, n int) error
}

// useRadial turns the cones of radial designs (Sobol) and of trajectories
// (Morris, walk.go) on; the tests turn them off to compare with every
// point evaluated whole.
var useRadial = true

// newRadial returns f's radial evaluator, or nil when it has none.
func newRadial(f Function) radialSet {
	if !useRadial {
		return nil
	}
	r, ok := f.(radialer)
	if !ok {
		return nil
	}
	rs, err := r.radial()
	if err != nil {
		return nil
	}
	return rs
}

// fnRadial is the radial evaluator of a compiled formula, over every
// program input: index maps a problem input to its program input (nil:
// the same), and the other program inputs read columns of their baselines.
type fnRadial struct {
	fn    *Fn
	r     *tape.Radial
	index []int
	full  []float64 // the baselines of every program input
	// Program-wide columns: cols of the rows, alt of the replacements (nil
	// for inputs not replaced), dst of the outputs.
	cols, alt, dst [][]float64
	fixed          []float64 // the baselines' columns
	fixedLen       int
}

func (fn *Fn) radial() (radialSet, error) {
	nIn := fn.tape.NumInputs()
	all := make([]int, nIn)
	for i := range all {
		all[i] = i
	}
	r, err := fn.tape.Radial(fn.f.out, all)
	if errors.Is(err, tape.ErrNoCones) {
		return &rowCones{fn: fn, x: make([]float64, nIn), y: make([]float64, 1)}, nil
	}
	if err != nil {
		return nil, err
	}
	return &fnRadial{fn: fn, r: r, cols: make([][]float64, nIn), alt: make([][]float64, nIn), dst: make([][]float64, nIn)}, nil
}

func (s *subFn) radial() (radialSet, error) {
	r, err := s.fn.tape.Radial(s.fn.f.out, s.index)
	if errors.Is(err, tape.ErrNoCones) {
		return &rowCones{fn: s.fn, index: s.index, x: slices.Clone(s.full), y: make([]float64, 1)}, nil
	}
	if err != nil {
		return nil, err
	}
	nIn := len(s.full)
	return &fnRadial{fn: s.fn, r: r, index: s.index, full: s.full,
		cols: make([][]float64, nIn), alt: make([][]float64, nIn), dst: make([][]float64, nIn)}, nil
}

// rowCones is the radial evaluator of a compiled formula that has no lane
// cones (a model of vectors: its loop nodes have cones element by element,
// vecone.go, not lane by lane): one Cones moved from row to row
// (tape.Cones.Rebase), evaluating at each row the cone of every input, its
// cones searched for once (tape.Cones.Memo).
type rowCones struct {
	fn    *Fn
	index []int     // problem input -> program input (nil: the same)
	x     []float64 // a row, every program input
	c     *tape.Cones
	none  bool // the tape has no cones at all: every point whole
	y, v  []float64
}

func (rc *rowCones) eval(fa []float64, fab [][]float64, a, b [][]float64, n int) error {
	if rc.none {
		return tape.ErrNoCones
	}
	input := func(i int) int {
		if rc.index == nil {
			return i
		}
		return rc.index[i]
	}
	for j := range n {
		for i, col := range a {
			rc.x[input(i)] = col[j]
		}
		if rc.c == nil {
			c, err := rc.fn.tape.Cones(rc.x, rc.fn.f.out)
			if errors.Is(err, tape.ErrNoCones) {
				rc.none = true
			}
			if err != nil {
				return err
			}
			c.Memo()
			rc.c = c
		} else if err := rc.c.Rebase(rc.x); err != nil {
			return err
		}
		fa[j] = rc.c.Base()
		for i, col := range b {
			rc.v = append(rc.v[:0], col[j])
			if err := rc.c.Eval(rc.y, input(i), rc.v, -1, nil, 1); err != nil {
				return err
			}
			fab[i][j] = rc.y[0]
		}
	}
	return scaleRadial(rc.fn.scale, fa, fab, n)
}

func (fr *fnRadial) eval(fa []float64, fab [][]float64, a, b [][]float64, n int) error {
	if fr.index == nil {
		copy(fr.cols, a)
		copy(fr.alt, b)
		copy(fr.dst, fab)
	} else {
		if fr.fixedLen < n {
			// Constant columns of the baselines, as long as the longest
			// block asked for so far.
			fr.fixed = make([]float64, len(fr.full)*n)
			for j, v := range fr.full {
				c := fr.fixed[j*n : (j+1)*n]
				for r := range c {
					c[r] = v
				}
			}
			fr.fixedLen = n
		}
		w := fr.fixedLen
		for j := range fr.cols {
			fr.cols[j] = fr.fixed[j*w : (j+1)*w : (j+1)*w]
			fr.alt[j], fr.dst[j] = nil, nil
		}
		for i, j := range fr.index {
			fr.cols[j], fr.alt[j], fr.dst[j] = a[i], b[i], fab[i]
		}
	}
	if err := fr.r.Eval(fa, fr.dst, fr.cols, fr.alt, n); err != nil {
		return err
	}
	return scaleRadial(fr.fn.scale, fa, fab, n)
}

// scaleRadial scales the outputs of n rows to the display unit; as in
// Fn.EvalColumns, a value that overflows there is an error.
func scaleRadial(sc float64, fa []float64, fab [][]float64, n int) error {
	if sc == 1 {
		return nil
	}
	scale := func(ys []float64) error {
		for s, y := range ys[:n] {
			v := y * sc
			if math.IsInf(v, 0) && !math.IsInf(y, 0) {
				return errRadialOverflow
			}
			ys[s] = v
		}
		return nil
	}
	if err := scale(fa); err != nil {
		return err
	}
	for _, ys := range fab {
		if err := scale(ys); err != nil {
			return err
		}
	}
	return nil
}

// errRadialOverflow says that a point of a radial design overflowed in the
// display unit; the caller finds which by evaluating again.
var errRadialOverflow = radialError("a value overflows in the display unit")

type radialError string

func (e radialError) Error() string { return string(e) }
