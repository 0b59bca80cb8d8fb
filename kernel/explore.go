package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var exploreCommand = &Command{
	Verb:    "explore",
	Doc:     "a what-if panel: sliders for the inputs named after over, or else for those with the largest swings, the output and its tornado bars, recomputed in the page",
	Example: "explore total top=4",
	Options: []Option{{Key: "top", Doc: "sliders for the N inputs with the largest swings (6 by default)", Min: 1}},
	run:     runExplore,
}

// runExplore runs "explore OUT [over X, Y, ...] [top=N]".
func runExplore(x *call) error {
	top, given, _ := x.whole("top")
	if given && len(x.c.Names) > 0 {
		return x.errorf(x.c.Option("top").Key.Pos(), "top=N and over %s both choose the sliders: give one of them", x.c.Names[0].Name)
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	var chosen []int
	seen := map[string]bool{}
	for _, n := range x.c.Names {
		if seen[n.Name] {
			return x.errorf(n.Pos(), "%s is listed twice", n.Name)
		}
		seen[n.Name] = true
		_, j, err := pr.Input(n.Name)
		if err != nil {
			return x.errorf(n.Pos(), "%v", err)
		}
		chosen = append(chosen, j)
	}
	e, err := sens.Explore(pr, &sens.ExploreSettings{Settings: x.settings(), Top: top, Inputs: chosen})
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	x.show(render.Explore(e, &x.in.Opts))
	return nil
}
