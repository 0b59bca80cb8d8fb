package sens

import (
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Evaluation along trajectories: each point of a Morris trajectory is the
// one before it with one input moved, so a compiled model evaluates it
// through that input's cone over the values of the point before
// (tape.Walk), with the bits of evaluating it whole.

// walker is a Function that can evaluate trajectories through its cones;
// walk returns the evaluator, or an error when the function has none (a
// model of vectors, whose loop nodes tape.Walk does not know).
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
	w     *tape.Walk
	index []int
	full  []float64
}

func (fn *Fn) walk() (walkSet, error) {
	w, err := fn.tape.Walk(fn.f.out)
	if err != nil {
		return nil, err
	}
	return &fnWalk{fn: fn, w: w}, nil
}

func (s *subFn) walk() (walkSet, error) {
	w, err := s.fn.tape.Walk(s.fn.f.out)
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
	y, err := fw.w.Start(x)
	if err != nil {
		return math.NaN(), err
	}
	return fw.scaled(y)
}

func (fw *fnWalk) step(i int, v float64) (float64, error) {
	if fw.index != nil {
		i = fw.index[i]
	}
	y, err := fw.w.Step(i, v)
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
