package kernel

import "github.com/nudge-dev/nudge/kernel/render"

var scenarioCommand = &Command{
	Verb:    "scenario",
	Doc:     "a named set of input values",
	Example: "scenario lean: hours = 1.2, rate = 55",
	run:     runScenario,
}

// runScenario runs "scenario NAME: X = v, ...": the model checks the
// settings as it stands and keeps the scenario.
func runScenario(x *call) error {
	res, err := x.in.Model.DefineScenario(x.f, x.c)
	if err != nil {
		return err
	}
	x.show(render.Scenario(res, &x.in.Opts))
	return nil
}
