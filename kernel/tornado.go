package kernel

import (
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

var tornadoCommand = &Command{
	Verb:    "tornado",
	Doc:     "the output at the low and high end of each input's range, sorted by swing",
	Example: "tornado total top=8",
	Options: []Option{topOption},
	run:     runTornado,
}

// runTornado runs "tornado OUT [top=N]".
func runTornado(x *call) error {
	top, _, _ := x.whole("top")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	t, err := sens.Tornado(pr, &sens.TornadoSettings{Settings: x.settings(), Top: top})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	if n := len(t.DefaultRanges); n > 0 {
		verb := "have"
		if n == 1 {
			verb = "has"
		}
		warn(x.sink, "tornado %s: %s %s no range or distribution: the default ±%d%% of the value was used (marked *)",
			t.Output, nameList(t.DefaultRanges, 8), verb, sens.DefaultRangePct)
	}
	x.show(render.Tornado(t, &x.in.Opts))
	return nil
}

// nameList joins names for a message, the first max of them and a count of
// the rest: "a, b, c and 4,997 others".
func nameList(names []string, max int) string {
	if len(names) <= max {
		return strings.Join(names, ", ")
	}
	return strings.Join(names[:max], ", ") + " and " + unit.Format(float64(len(names)-max), "") + " others"
}
