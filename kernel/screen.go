package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var screenCommand = &Command{
	Verb:    "screen",
	Doc:     "derivative-based screening: an upper bound on each input's total-order index from one gradient per sample, for models of many inputs",
	Example: "screen total n=2000 seed=7",
	Options: []Option{
		{Key: "n", Doc: "the number of samples (1,000 when not given)", Min: 2, Max: 1_000_000},
		seedOption,
	},
	run: runScreen,
}

// runScreen runs "screen OUT [n=N] [seed=S]".
func runScreen(x *call) error {
	n, _, _ := x.whole("n")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	res, err := sens.Screen(pr, &sens.ScreenSettings{Settings: x.settings(), N: n, Seed: x.seed()})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.noticeRanges(res.UniformFromRange)
	x.noteIgnoredCorrelations(res.IgnoredCorrelations)
	x.show(render.Screening(res, &x.in.Opts))
	return nil
}
