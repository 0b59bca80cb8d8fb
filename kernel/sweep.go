package kernel

import (
	"fmt"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

var sweepCommand = &Command{
	Verb:    "sweep",
	Doc:     "the output over a range of one or two inputs",
	Example: "sweep total over rate 40..80 and hours 1..2",
	Options: []Option{
		{Key: "n", Doc: "the number of points of each range", Min: 2},
		{Key: "steps", Doc: "the number of intervals of each range", Min: 1},
		{Key: "target", Doc: "a value of the output to find", Quantity: true},
		{Key: "limit", Doc: "the most points the sweep may compute (40,000 unless given, at most 1,000,000)", Min: 1},
	},
	run: runSweep,
}

// Limits of the points a sweep computes: DefaultSweepLimit unless the
// command's limit= allows more, and never more than MaxSweepPoints. A
// notebook keeps only part of a larger result (render.MaxBundleJSON).
const (
	DefaultSweepLimit = 40_000
	MaxSweepPoints    = 1_000_000
)

// runSweep runs "sweep OUT over X a..b [and Y c..d] [n=N | steps=N] [target=T]".
func runSweep(x *call) error {
	n, _, _ := x.whole("n")
	if steps, given, _ := x.whole("steps"); given {
		if o := x.c.Option("n"); o != nil {
			return x.errorf(x.c.Option("steps").Key.Pos(), "give either n= (points) or steps= (intervals), not both")
		}
		n = steps + 1
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	target, err := x.quantity(pr, "target")
	if err != nil {
		return err
	}
	var axes []sens.Axis
	for _, a := range x.c.Axes {
		in, err := x.input(pr, a)
		if err != nil {
			return err
		}
		lo, hi, err := x.axisRange(pr, a, in)
		if err != nil {
			return err
		}
		axes = append(axes, sens.Axis{Input: in.Name, Low: lo, High: hi, N: n})
	}
	if err := x.checkSweepSize(n, len(axes)); err != nil {
		return err
	}
	if len(axes) == 1 {
		res, err := sens.Sweep1D(pr, &sens.Sweep1DSettings{Settings: x.settings(), Axis: axes[0], Target: target})
		if err != nil {
			return x.at(x.c.Output.Pos(), err)
		}
		x.show(render.Sweep1D(res, &x.in.Opts))
		return nil
	}
	res, err := sens.Sweep2D(pr, &sens.Sweep2DSettings{Settings: x.settings(), X: axes[0], Y: axes[1], Target: target})
	if err != nil {
		// The inputs and ranges are checked above: what is left is the
		// second axis repeating the first.
		return x.at(x.c.Axes[1].Name.Pos(), err)
	}
	x.show(render.Sweep2D(res, &x.in.Opts))
	return nil
}

// checkSweepSize refuses a sweep of more points than its limit: n a side
// (0 for the default) on dims axes.
func (x *call) checkSweepSize(n, dims int) error {
	if n == 0 {
		return nil // the defaults are far below any limit
	}
	limit, given, _ := x.whole("limit")
	if given && limit > MaxSweepPoints {
		return x.errorf(x.c.Option("limit").Value.Pos(), "limit=%s is more than a sweep computes: use at most %s points", count(limit), count(MaxSweepPoints))
	}
	if !given {
		limit = DefaultSweepLimit
	}
	points := float64(n)
	size := count(n) + " points"
	if dims == 2 {
		points *= float64(n)
		size = fmt.Sprintf("a %s × %s grid of %s points", count(n), count(n), unit.Format(points, ""))
	}
	if points <= float64(limit) {
		return nil
	}
	o := x.c.Option("n")
	if o == nil {
		o = x.c.Option("steps")
	}
	if points > MaxSweepPoints {
		return x.errorf(o.Value.Pos(), "%s is too many: a sweep computes at most %s points", size, count(MaxSweepPoints))
	}
	if given {
		return x.errorf(o.Value.Pos(), "%s is more than limit=%s", size, count(limit))
	}
	return x.errorf(o.Value.Pos(), "%s is more than the %s a sweep computes unless told: add limit=%.0f to compute them (a notebook keeps part of so large a result; nudge exec --json prints all of it), or ask for fewer points",
		size, count(DefaultSweepLimit), points)
}

// count writes a number of things: "40,000".
func count(n int) string { return unit.Format(float64(n), "") }
