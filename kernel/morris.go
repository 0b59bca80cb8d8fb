package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var morrisCommand = &Command{
	Verb:    "morris",
	Doc:     "elementary effects (mu, mu*, sigma) of each input over its range, and the mu*–sigma chart",
	Example: "morris total r=40 seed=7",
	Options: []Option{
		{Key: "r", Doc: "the number of trajectories (20 when not given)", Min: 2, Max: 100_000},
		seedOption,
		{Key: "levels", Doc: "the number of levels of the grid, even (4 when not given)", Min: 2, Max: 1000},
	},
	run: runMorris,
}

// runMorris runs "morris OUT [r=R] [seed=S] [levels=P]".
func runMorris(x *call) error {
	r, _, _ := x.whole("r")
	levels, given, _ := x.whole("levels")
	if given && levels%2 != 0 {
		return x.errorf(x.c.Option("levels").Value.Pos(), "levels must be even (so that every step reaches another level), found %d", levels)
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	res, err := sens.Morris(pr, &sens.MorrisSettings{Settings: x.settings(), R: r, Levels: levels, Seed: x.seed()})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Morris(res, &x.in.Opts))
	return nil
}
