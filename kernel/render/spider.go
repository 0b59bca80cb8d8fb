package render

import (
	"fmt"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Spider renders a spider: the output at the ends of the percentage range of
// each input, and its spread, with the spider chart of the eight widest lines.
func Spider(s *sens.SpiderResult, o *Options) *Result {
	lo, hi := unit.Signed(-s.RangePct, "%"), unit.Signed(s.RangePct, "%")
	lines := s.Inputs[:min(len(s.Inputs), maxTableRows)]
	var outs []float64
	for _, l := range lines {
		outs = append(outs, l.Points[0].Output, l.Points[len(l.Points)-1].Output, l.Spread)
	}
	out := unit.NewColumn(s.Unit, outs...)
	tb := &table{head: []string{"input", "baseline", s.Output + " at " + lo, s.Output + " at " + hi, "spread", "note"},
		right: []bool{false, true, true, true, true, false}}
	for _, l := range lines {
		note := ""
		if l.ZeroValue {
			note = "value is 0: a percentage change leaves it at 0"
		}
		first, last := l.Points[0], l.Points[len(l.Points)-1]
		tb.add(l.Name, unit.Format(l.Value, l.Unit), out.Format(first.Output), out.Format(last.Output), out.Format(l.Spread), note)
	}
	head := fmt.Sprintf("spider of %s: baseline %s; each input from %s to %s of its value, the others at baseline",
		s.Output, unit.Format(s.Baseline, s.Unit), lo, hi)
	r := &Result{Kind: "spider", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	n := len(s.Inputs) - len(lines)
	if s.Rest != nil {
		n += s.Rest.Count
	}
	if n > 0 {
		r.note(fmt.Sprintf("… and %s more %s with smaller spreads", count(n), plural(n, "input", "inputs")))
	}
	ch := &plotting.Spider{Output: s.Output, Unit: s.Unit, Baseline: s.Baseline}
	for _, l := range s.Inputs[:min(len(s.Inputs), maxSpiderLines)] {
		sl := plotting.SpiderLine{Name: l.Name}
		for _, pt := range l.Points {
			sl.Pct = append(sl.Pct, pt.Pct)
			sl.Out = append(sl.Out, pt.Output)
		}
		ch.Lines = append(ch.Lines, sl)
	}
	r.attach(ch, o)
	return r
}
