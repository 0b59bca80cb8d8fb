package kernel

import "github.com/nudge-dev/nudge/sens/syntax"

var chartsCommand = &Command{
	Verb:    "charts",
	Doc:     "how charts are drawn from now on: svg (the default), png (a bitmap instead of the SVG) or text",
	Example: "charts png",
	run:     runCharts,
}

// runCharts sets how the rest of the session draws charts: "svg" (the
// default), "png" (the notebook's figure is a PNG image, for reports and
// mail readers that show no SVG) or "text" (Unicode charts only, in the
// notebook too).
func runCharts(x *call) error {
	o := &x.in.Opts
	switch name := x.c.Name.Name; name {
	case "svg":
		o.PNG, o.NoCharts = false, false
	case "png":
		o.PNG, o.NoCharts = true, false
	case "text":
		o.PNG, o.NoCharts = false, true
	default:
		return x.errorf(x.c.Name.Pos(), "charts takes svg, png or text%s", syntax.DidYouMean(name, []string{"svg", "png", "text"}))
	}
	x.sink.Stream("stdout", "charts: "+x.c.Name.Name+"\n")
	return nil
}
