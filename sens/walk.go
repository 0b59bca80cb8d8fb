package sens

import (
	"errors"
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Evaluation along trajectories: each point of a Morris trajectory is the
// one before it with one input moved, so a compiled model evaluates it
// through that input's cone over the values of the point before
// (tape.Walk), with the bits of evaluating it whole.

// walker is a Function that can evaluate trajectories through its cones
// (tape.Walk; on a model of vectors, tape.Cones moved by Step); walk
// returns the evaluator, or an error when the function has none.
type walker interface {
	walk() (walkSet, error)
}

// walkSet evaluates a trajectory: start at a point, then step, moving one
// input at a time. An error says only that a point failed or overflowed:
// the caller evaluates the trajectory again whole, to report the error as
// it would have without the cones.
type walkSet interface {
	start(x []float64) (float64, error)
	step(i int, v float64) (float64, error)
}

// newWalk returns f's trajectory evaluator, or nil when it has none.
func newWalk(f Function) walkSet {
	if !useRadial {
		return nil
	}
	w, ok := f.(walker)
	if !ok {
		return nil
	}
	ws, err := w.walk()
	if err != nil {
		return nil
	}
	return ws
}

// fnWalk is the trajectory evaluator of a compiled formula over every
// program input; index maps a problem input to its program input (nil:
// the same), the others held at their baselines in full.
type fnWalk struct {
	fn    *Fn
	w     *tape.Walk  // a scalar tape's walk; nil for a tape with loop nodes:
	c     *tape.Cones // its cones element by element, made at the first start
	none  bool        // the tape has no cones at all: every point whole
	index []int
	full  []float64
}

func (fn *Fn) walk() (walkSet, error) {
	w, err := fn.tape.Walk(fn.f.out)
	if errors.Is(err, tape.ErrNoCones) {
		return &fnWalk{fn: fn}, nil // through Cones.Step
	}
	if err != nil {
		return nil, err
	}
	return &fnWalk{fn: fn, w: w}, nil
}

func (s *subFn) walk() (walkSet, error) {
	w, err := s.fn.tape.Walk(s.fn.f.out)
	if errors.Is(err, tape.ErrNoCones) {
		return &fnWalk{fn: s.fn, index: s.index, full: slices.Clone(s.full)}, nil
	}
	if err != nil {
		return nil, err
	}
	return &fnWalk{fn: s.fn, w: w, index: s.index, full: slices.Clone(s.full)}, nil
}

func (fw *fnWalk) start(x []float64) (float64, error) {
	if fw.index != nil {
		for i, j := range fw.index {
			fw.full[j] = x[i]
		}
		x = fw.full
	}
	var y float64
	var err error
	switch {
	case fw.w != nil:
		y, err = fw.w.Start(x)
	case fw.none:
		return math.NaN(), tape.ErrNoCones
	case fw.c == nil:
		// A model of vectors: one Cones, its cones kept, moved to the
		// start of each trajectory and along it.
		if fw.c, err = fw.fn.tape.Cones(x, fw.fn.f.out); err == nil {
			fw.c.Memo()
			y = fw.c.Base()
		} else {
			fw.none = errors.Is(err, tape.ErrNoCones)
		}
	default:
		err = fw.c.Rebase(x)
		y = fw.c.Base()
	}
	if err != nil {
		return math.NaN(), err
	}
	return fw.scaled(y)
}

func (fw *fnWalk) step(i int, v float64) (float64, error) {
	if fw.index != nil {
		i = fw.index[i]
	}
	var y float64
	var err error
	if fw.w != nil {
		y, err = fw.w.Step(i, v)
	} else {
		y, err = fw.c.Step(i, v)
	}
	if err != nil {
		return math.NaN(), err
	}
	return fw.scaled(y)
}

// scaled is y in the display unit; as Fn.EvalBatch, a value that
// overflows there is an error.
func (fw *fnWalk) scaled(y float64) (float64, error) {
	v := y * fw.fn.scale
	if math.IsInf(v, 0) && !math.IsInf(y, 0) {
		return math.NaN(), errRadialOverflow
	}
	return v, nil
}
