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
	if n := len(t.NoRange); n > 0 {
		warn(x.sink, "tornado %s: %s %s 0 with no range or distribution, and ±%d%% of 0 is no range: %s no swing whatever %s effect; state a range, as in `input %s = 0 (-1..1)`",
			t.Output, nameList(t.NoRange, 8), map[bool]string{true: "is", false: "are"}[n == 1], sens.DefaultRangePct,
			map[bool]string{true: "it shows", false: "they show"}[n == 1], map[bool]string{true: "its", false: "their"}[n == 1], t.NoRange[0])
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
