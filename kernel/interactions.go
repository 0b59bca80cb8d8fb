package kernel

import (
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var interactionsCommand = &Command{
	Verb:    "interactions",
	Doc:     "pairs of inputs ranked by how much they act together: mixed second derivatives times both range widths, with each input's curvature and a pair map",
	Example: "interactions total top=10",
	Options: []Option{
		{Key: "top", Doc: "keep the N strongest pairs and curvatures (15 when not given)", Min: 1},
		{Key: "map", Doc: "show the N inputs of strongest interaction in the pair map (8 when not given)", Min: 2},
	},
	run: runInteractions,
}

// runInteractions runs "interactions OUT [top=N] [map=N]".
func runInteractions(x *call) error {
	top, _, _ := x.whole("top")
	mapN, _, _ := x.whole("map")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	res, err := sens.Interactions(pr, &sens.InteractionsSettings{Settings: x.settings(), Top: top, MapInputs: mapN})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	if len(res.NotSmooth) > 0 {
		warn(x.sink, "%s is not twice differentiable at the baseline (the second derivatives follow the branch taken): %s",
			res.Output, strings.Join(res.NotSmooth, "; "))
	}
	x.show(render.Interactions(res, &x.in.Opts))
	return nil
}
