package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var sobolCommand = &Command{
	Verb:    "sobol",
	Doc:     "first-order and total-order Sobol' indices, with bootstrap intervals",
	Example: "sobol total n=8192 seed=7",
	Options: []Option{
		{Key: "n", Doc: "the number of base samples; the output is evaluated n·(k+2) times (4,096 when not given)", Min: 2, Max: 1 << 20},
		seedOption,
		{Key: "bootstrap", Doc: "the number of bootstrap resamples for the intervals (500 when not given)", Min: 10, Max: 10_000},
	},
	run: runSobol,
}

// runSobol runs "sobol OUT [n=N] [seed=S] [bootstrap=B]".
func runSobol(x *call) error {
	n, _, _ := x.whole("n")
	boot, _, _ := x.whole("bootstrap")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	res, err := sens.Sobol(pr, &sens.SobolSettings{Settings: x.settings(), N: n, Seed: x.seed(), Bootstrap: boot})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.noticeRanges(res.UniformFromRange)
	x.noteIgnoredCorrelations(res.IgnoredCorrelations)
	if len(res.Unsettled) > 0 {
		warn(x.sink, "sobol %s: %s", res.Output, render.Unsettled(res.Unsettled, res.Confidence))
	}
	x.show(render.Sobol(res, &x.in.Opts))
	return nil
}
