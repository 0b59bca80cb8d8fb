package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var breakevenCommand = &Command{
	Verb:    "breakeven",
	Doc:     "every value of an input where the output reaches a target",
	Example: "breakeven total = 160000 over steel",
	run:     runBreakeven,
}

// runBreakeven runs "breakeven OUT = T over X [a..b]".
func runBreakeven(x *call) error {
	pr, err := x.problem()
	if err != nil {
		return err
	}
	s := &sens.BreakevenSettings{Settings: x.settings()}
	if s.Target, err = pr.Constant(x.f, x.c.Target, pr.Unit, "the target"); err != nil {
		return err
	}
	a := x.c.Axes[0]
	in, err := x.input(pr, a)
	if err != nil {
		return err
	}
	s.Input = in.Name
	if a.Low != nil {
		if s.Low, s.High, err = x.axisRange(pr, a, in); err != nil {
			return err
		}
		s.Bounded = true
	}
	res, err := sens.Breakeven(pr, s)
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Breakeven(res, &x.in.Opts))
	return nil
}
