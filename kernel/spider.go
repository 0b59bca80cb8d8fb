package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var spiderCommand = &Command{
	Verb:    "spider",
	Doc:     "the output against the percentage change of each input",
	Example: "spider total (±30%)",
	Options: []Option{{Key: "points", Doc: "the number of percentages from -P% to +P%", Min: 3}, topOption},
	run:     runSpider,
}

// runSpider runs "spider OUT [(±P%)] [points=N] [top=N]".
func runSpider(x *call) error {
	points, _, _ := x.whole("points")
	top, _, _ := x.whole("top")
	s := &sens.SpiderSettings{Points: points, Top: top}
	pos := x.c.Output.Pos()
	if r := x.c.Percent; r != nil {
		s.RangePct, pos = r.High.Value, r.High.ValuePos
	}
	pr, err := x.problem()
	if err != nil {
		return err
	}
	s.Settings = x.settings()
	res, err := sens.Spider(pr, s)
	if err != nil {
		return x.at(pos, err)
	}
	x.show(render.Spider(res, &x.in.Opts))
	return nil
}
