package render

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Spider renders a spider: the output at the ends of each input's change
// (a percentage range, or the input's own range) and its spread, with the
// spider chart of the widest lines (Options.Lines, 8 unless set). Lines that
// coincide are drawn once and named together; a note names the inputs not
// drawn.
func Spider(s *sens.SpiderResult, o *Options) *Result {
	lo, hi := unit.Signed(-s.RangePct, "%"), unit.Signed(s.RangePct, "%")
	lines := s.Inputs[:min(len(s.Inputs), maxTableRows)]
	var outs []float64
	for _, l := range lines {
		outs = append(outs, l.Points[0].Output, l.Points[len(l.Points)-1].Output, l.Spread)
	}
	out := unit.NewColumn(s.Unit, outs...)
	var tb *table
	head := fmt.Sprintf("spider of %s: baseline %s; each input from %s to %s of its value, the others at baseline",
		s.Output, unit.Format(s.Baseline, s.Unit), lo, hi)
	if s.OwnRanges {
		head = fmt.Sprintf("spider of %s: baseline %s; each input over its own range, the others at baseline", s.Output, unit.Format(s.Baseline, s.Unit))
		tb = &table{head: []string{"input", "baseline", "low", "high", "range from", s.Output + " at low", s.Output + " at high", "spread", "note"},
			right: []bool{false, true, true, true, false, true, true, true, false}}
	} else {
		tb = &table{head: []string{"input", "baseline", s.Output + " at " + lo, s.Output + " at " + hi, "spread", "note"},
			right: []bool{false, true, true, true, true, false}}
	}
	for _, l := range lines {
		note := ""
		if l.ZeroValue {
			note = "value is 0: a percentage change leaves it at 0"
			if s.OwnRanges {
				note = "value is 0: no percentage change to draw"
			}
		}
		first, last := l.Points[0], l.Points[len(l.Points)-1]
		if s.OwnRanges {
			tb.add(l.Name, unit.Format(l.Value, l.Unit), unit.Format(l.Low, l.Unit), unit.Format(l.High, l.Unit), rangeFrom(l.Source),
				out.Format(first.Output), out.Format(last.Output), out.Format(l.Spread), note)
			continue
		}
		tb.add(l.Name, unit.Format(l.Value, l.Unit), out.Format(first.Output), out.Format(last.Output), out.Format(l.Spread), note)
	}
	r := &Result{Kind: "spider", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	n := len(s.Inputs) - len(lines)
	if s.Rest != nil {
		n += s.Rest.Count
	}
	if n > 0 {
		r.note(fmt.Sprintf("… and %s more %s with smaller spreads", count(n), plural(n, "input", "inputs")))
	}
	ch := &plotting.Spider{Output: s.Output, Unit: s.Unit, Baseline: s.Baseline, OwnRanges: s.OwnRanges}
	var drawable []plotting.SpiderLine
	var undrawn []string // inputs with a zero baseline over their own ranges
	for _, l := range s.Inputs {
		if s.OwnRanges && l.ZeroValue {
			undrawn = append(undrawn, l.Name)
			continue
		}
		sl := plotting.SpiderLine{Name: l.Name}
		for _, pt := range l.Points {
			sl.Pct = append(sl.Pct, pt.Pct)
			sl.Out = append(sl.Out, pt.Output)
		}
		drawable = append(drawable, sl)
	}
	groups := plotting.GroupSpiderLines(drawable)
	limit := o.lines()
	for i, g := range groups {
		if i < limit {
			ch.Lines = append(ch.Lines, g)
			continue
		}
		undrawn = append(undrawn, strings.Split(g.Name, " = ")...)
	}
	if len(undrawn) > 0 {
		note := fmt.Sprintf("not drawn (the chart shows at most %d lines): %s", limit, names(undrawn, 20))
		r.note(note)
		ch.Notes = append(ch.Notes, note)
	}
	for _, g := range ch.Lines {
		if strings.Contains(g.Name, " = ") {
			r.note("lines that coincide are drawn once: " + g.Name)
		}
	}
	r.attach(ch, o)
	return r
}

// names joins names for a note, the first max of them and a count of the
// rest.
func names(ns []string, max int) string {
	if len(ns) <= max {
		return strings.Join(ns, ", ")
	}
	return strings.Join(ns[:max], ", ") + " and " + count(len(ns)-max) + " others"
}
