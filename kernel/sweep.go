package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var sweepCommand = &Command{
	Verb:    "sweep",
	Doc:     "the output over a range of one or two inputs",
	Example: "sweep total over rate 40..80 and hours 1..2",
	Options: []Option{
		{Key: "n", Doc: "the number of points of each range", Min: 2},
		{Key: "steps", Doc: "the number of intervals of each range", Min: 1},
		{Key: "target", Doc: "a value of the output to find", Quantity: true},
	},
	run: runSweep,
}

// maxGridSide is the most points a side of a 2-D sweep may have.
const maxGridSide = 1000

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
	target, err := x.quantity("target", pr.Unit)
	if err != nil {
		return err
	}
	var axes []sens.Axis
	for _, a := range x.c.Axes {
		in, err := x.input(pr, a)
		if err != nil {
			return err
		}
		lo, hi, err := x.axisRange(a, in)
		if err != nil {
			return err
		}
		axes = append(axes, sens.Axis{Input: in.Name, Low: lo, High: hi, N: n})
	}
	if len(axes) == 1 {
		res, err := sens.Sweep1D(pr, &sens.Sweep1DSettings{Settings: x.settings(), Axis: axes[0], Target: target})
		if err != nil {
			return x.at(x.c.Output.Pos(), err)
		}
		x.show(render.Sweep1D(res, &x.in.Opts))
		return nil
	}
	if n > maxGridSide {
		o := x.c.Option("n")
		if o == nil {
			o = x.c.Option("steps")
		}
		return x.errorf(o.Value.Pos(), "a %d × %d grid is too large: use at most 1,000 points a side", n, n)
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
