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
	var defaults, empty []string
	for _, in := range e.Inputs {
		if in.Source == sens.RangeDefault {
			defaults = append(defaults, in.Name)
			if in.Low == in.High {
				empty = append(empty, in.Name)
			}
		}
	}
	if n := len(defaults); n > 0 {
		warn(x.sink, "explore %s: %s %s no range or distribution: %s slider spans the default ±%d%% of the value",
			e.Output, nameList(defaults, 8), map[bool]string{true: "has", false: "have"}[n == 1],
			map[bool]string{true: "its", false: "their"}[n == 1], sens.DefaultRangePct)
	}
	if n := len(empty); n > 0 {
		warn(x.sink, "explore %s: %s %s 0 with no range or distribution, and ±%d%% of 0 is no range: %s cannot move; state a range, as in `input %s = 0 (-1..1)`",
			e.Output, nameList(empty, 8), map[bool]string{true: "is", false: "are"}[n == 1], sens.DefaultRangePct,
			map[bool]string{true: "its slider", false: "their sliders"}[n == 1], empty[0])
	}
	x.show(render.Explore(e, &x.in.Opts))
	return nil
}
