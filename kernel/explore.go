package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var exploreCommand = &Command{
	Verb:    "explore",
	Doc:     "a what-if panel: sliders for the inputs with the largest swings, the output and its tornado bars, recomputed in the page",
	Example: "explore total top=4",
	Options: []Option{{Key: "top", Doc: "sliders for the N inputs with the largest swings (6 by default)", Min: 1}},
	run:     runExplore,
}

// runExplore runs "explore OUT [top=N]".
func runExplore(x *call) error {
	top, _, _ := x.whole("top")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	e, err := sens.Explore(pr, &sens.ExploreSettings{Settings: x.settings(), Top: top})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Explore(e, &x.in.Opts))
	return nil
}
