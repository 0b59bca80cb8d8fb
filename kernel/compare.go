package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var compareCommand = &Command{
	Verb:    "compare",
	Doc:     "the output across scenarios, against the baseline",
	Example: "compare total across base, lean",
	run:     runCompare,
}

// runCompare runs "compare OUT across NAME, ...", where base is the baseline.
func runCompare(x *call) error {
	pr, err := x.problem()
	if err != nil {
		return err
	}
	scenarios, err := x.in.Model.Scenarios(x.f, x.c.Names)
	if err != nil {
		return err
	}
	res, err := sens.Compare(pr, &sens.CompareSettings{Settings: x.settings(), Scenarios: scenarios})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Compare(res, &x.in.Opts))
	return nil
}
