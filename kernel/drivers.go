package kernel

import (
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

// topOption keeps the N largest rows of drivers, tornado and spider.
var topOption = Option{Key: "top", Doc: "keep the N largest", Min: 1}

var driversCommand = &Command{
	Verb:    "drivers",
	Doc:     "value, partial derivatives and elasticities of an output, ranked",
	Example: "drivers total top=10",
	Options: []Option{topOption, {Key: "group", Name: "COLUMN", Doc: "the text column whose values group the elements of vector inputs in the subtotals"}},
	run:     runDrivers,
}

// runDrivers runs "drivers OUT [top=N] [group=COLUMN]".
func runDrivers(x *call) error {
	top, _, _ := x.whole("top")
	group := ""
	if o := x.c.Option("group"); o != nil {
		group = o.Value.(*syntax.Ident).Name
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	d, err := sens.Drivers(pr, &sens.DriversSettings{Settings: sens.Settings{Ctx: x.ctx}, Top: top, GroupBy: group})
	if err != nil {
		pos := x.c.Output.Pos()
		if o := x.c.Option("group"); o != nil && group != "" && strings.HasPrefix(err.Error(), "group=") {
			pos = o.Value.Pos()
		}
		return x.at(pos, err)
	}
	x.show(render.Drivers(d, &x.in.Opts))
	return nil
}
