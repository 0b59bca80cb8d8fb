package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

var simulateCommand = &Command{
	Verb:    "simulate",
	Doc:     "Monte Carlo simulation of an output from its inputs' distributions: statistics, percentiles, the chance of exceeding a value, and what drives the spread",
	Example: "simulate total n=20000 seed=7 above=160000",
	Options: []Option{
		{Key: "n", Doc: "the number of samples (10,000 when not given)", Min: 2, Max: 1_000_000},
		seedOption,
		{Key: "above", Doc: "a threshold T, in the output's unit: the chance that the output exceeds it", Quantity: true},
	},
	run: runSimulate,
}

// runSimulate runs "simulate OUT [n=N] [seed=S] [above=T]".
func runSimulate(x *call) error {
	n, _, _ := x.whole("n")
	pr, err := x.problem()
	if err != nil {
		return err
	}
	above, err := x.quantity(pr, "above")
	if err != nil {
		return err
	}
	res, err := sens.Simulate(pr, &sens.SimulationSettings{Settings: x.settings(), N: n, Seed: x.seed(), Above: above})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.noticeRanges(res.UniformFromRange)
	if ff := res.FirstFailure; ff != nil {
		warn(x.sink, "simulate %s: %s of %s samples could not be evaluated and are left out of the statistics; the first (sample %d): %s",
			res.Output, unit.Format(float64(res.Failed), ""), unit.Format(float64(res.N), ""), ff.Sample, ff.Message)
	}
	x.show(render.Simulation(res, &x.in.Opts))
	return nil
}
