package kernel

import (
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

var spiderCommand = &Command{
	Verb:    "spider",
	Doc:     "the output against the percentage change of each input, or over each input's own range",
	Example: "spider total (±30%) lines=5",
	Options: []Option{
		{Key: "points", Doc: "the number of points of each line (13 unless given)", Min: 3, Max: 1000},
		{Key: "lines", Doc: "the most lines the chart draws (8 unless given); a note names the rest", Min: 1, Max: 1000},
		topOption,
	},
	run: runSpider,
}

// runSpider runs "spider OUT [(±P%) | over ranges] [points=N] [lines=N] [top=N]".
func runSpider(x *call) error {
	points, _, _ := x.whole("points")
	lines, _, _ := x.whole("lines")
	top, _, _ := x.whole("top")
	s := &sens.SpiderSettings{Points: points, Top: top, OwnRanges: x.c.Name != nil}
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
	o := x.in.Opts
	o.Lines = lines
	x.show(render.Spider(res, &o))
	return nil
}
