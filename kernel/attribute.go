package kernel

import (
	"errors"
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

var attributeCommand = &Command{
	Verb:    "attribute",
	Doc:     "the change of an output from scenario A to B (either may be base) split among the inputs so that the parts add up, with a waterfall",
	Example: "attribute total from base to lean",
	Options: []Option{topOption},
	run:     runAttribute,
}

// runAttribute runs "attribute OUT from A to B [top=N]".
func runAttribute(x *call) error {
	top, _, _ := x.whole("top")
	from, to := x.c.Names[0], x.c.Names[1]
	if from.Name == to.Name {
		return x.errorf(to.Pos(), "attribute needs two different ends: %s is both the start and the end (write: attribute %s from base to NAME)",
			to.Name, syntax.String(x.c.Output))
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	scs, err := x.in.Model.Scenarios(x.f, x.c.Names)
	if err != nil {
		return err
	}
	res, err := sens.Attribute(pr, &sens.AttributeSettings{Settings: x.settings(), From: scs[0], To: scs[1], Top: top})
	if errors.Is(err, sens.ErrNoChange) {
		return x.errorf(to.Pos(), "%s and %s set every input of %s alike: there is no change to attribute", from.Name, to.Name, pr.Output)
	}
	if err != nil {
		return x.at(x.c.Output.Pos(), err)
	}
	var steps []string
	for _, br := range res.Breaks {
		if br.Kind == "step" && len(br.At) > 0 {
			steps = append(steps, br.At[0])
		}
	}
	if len(steps) > 0 {
		warn(x.sink, "attribute %s: the output jumps at %s on the path from %s to %s (%s): %s of the change is a jump no input's derivative sees, left in the residual",
			res.Output, plural(len(steps), "a step", "steps"), res.From, res.To, nameList(steps, 3), unit.Signed(res.Jumps, res.Unit))
	}
	x.show(render.Attribution(res, &x.in.Opts))
	return nil
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return unit.Format(float64(n), "") + " " + strings.TrimPrefix(many, "a ")
}
