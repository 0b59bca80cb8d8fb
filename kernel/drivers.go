package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

// topOption keeps the N largest rows of drivers, tornado and spider.
var topOption = Option{Key: "top", Doc: "keep the N largest", Min: 1}

var driversCommand = &Command{
	Verb:    "drivers",
	Doc:     "value, partial derivatives and elasticities of an output, ranked",
	Example: "drivers total top=10",
	Options: []Option{topOption},
	run:     runDrivers,
}

// runDrivers runs "drivers OUT [top=N]".
func runDrivers(x *call) error {
	top, _, _ := x.whole("top")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	d, err := sens.Drivers(pr, &sens.DriversSettings{Settings: sens.Settings{Ctx: x.ctx}, Top: top})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Drivers(d, &x.in.Opts))
	return nil
}
