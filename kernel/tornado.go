package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
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
		warn(x.sink, "tornado %s: %s %s no range or distribution: the default ±%d%% of the value was used (marked *)",
			t.Output, nameList(t.DefaultRanges, 8), plural(n, "has", "have"), sens.DefaultRangePct)
	}
	x.show(render.Tornado(t, &x.in.Opts))
	return nil
}
