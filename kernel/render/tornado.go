package render

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Tornado renders a tornado: the output at the low and high end of each
// input's range, sorted by extent, with the default ranges and the inputs over
// which the output turns marked, and the tornado chart. A table and chart show
// 30 bars and sum up the rest.
func Tornado(t *sens.TornadoResult, o *Options) *Result {
	bars, rest := t.Shown(maxTableRows)
	var outs []float64
	for _, b := range bars {
		outs = append(outs, b.OutputAtLow, b.OutputAtHigh, b.Swing, b.OutMin, b.OutMax)
	}
	out := unit.NewColumn(t.Unit, outs...)
	tb := &table{head: []string{"input", "low", "high", "range from", t.Output + " at low", t.Output + " at high", "swing", "share", "note"},
		right: []bool{false, true, true, false, true, true, true, true, false}}
	for _, b := range bars {
		var notes []string
		if b.NonMonotone {
			notes = append(notes, fmt.Sprintf("† not monotone: %s..%s (min at %s, max at %s)",
				out.Format(b.OutMin), out.Format(b.OutMax), unit.Format(b.InputAtMin, b.Unit), unit.Format(b.InputAtMax, b.Unit)))
		}
		tb.add(b.Name, unit.Format(b.Low, b.Unit), unit.Format(b.High, b.Unit), rangeFrom(b.Source), out.Format(b.OutputAtLow), out.Format(b.OutputAtHigh),
			out.Format(b.Swing), share(b.SwingShare), strings.Join(notes, "; "))
	}
	head := fmt.Sprintf("tornado of %s: baseline %s; each input from the low to the high end of its range, the others at baseline",
		t.Output, unit.Format(t.Baseline, t.Unit))
	r := &Result{Kind: "tornado", Data: t, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	if rest != nil {
		r.note(fmt.Sprintf("… and %s more %s, each with a swing of at most %s (together %s of the sum of squared swings)", count(rest.Count), plural(rest.Count, "input", "inputs"),
			unit.Format(rest.LargestSwing, t.Unit), share(rest.SwingShare)))
	}
	if len(t.NoRange) > 0 {
		r.note(fmt.Sprintf("no range: %s %s 0 with no range or distribution, so ±%d%% of the value is no range and the swing is 0; state a range to see its effect",
			strings.Join(t.NoRange, ", "), map[bool]string{true: "is", false: "are"}[len(t.NoRange) == 1], sens.DefaultRangePct))
	}
	r.note("share: the swing's share of the sum of squared swings, an approximate share of the variance when ranges span like percentiles and inputs act alone and nearly linearly")
	ch := &plotting.Tornado{Output: t.Output, Unit: t.Unit, Baseline: t.Baseline}
	for _, b := range bars {
		ch.Bars = append(ch.Bars, plotting.Bar{Name: b.Name, Low: b.Low, High: b.High, InputUnit: b.Unit,
			OutLow: b.OutputAtLow, OutHigh: b.OutputAtHigh, Min: b.OutMin, Max: b.OutMax,
			NonMonotone: b.NonMonotone, DefaultRange: b.DefaultRange})
	}
	if rest != nil {
		ch.Rest = &plotting.Bar{Name: fmt.Sprintf("%s others", count(rest.Count)), OutLow: rest.OutMin, OutHigh: rest.OutMax, Min: rest.OutMin, Max: rest.OutMax}
	}
	r.attach(ch, o)
	return r
}

// rangeFrom says briefly where a range came from, for a table column.
func rangeFrom(s sens.RangeSource) string {
	switch s {
	case sens.RangeExplicit:
		return "stated"
	case sens.RangePercent:
		return "±% stated"
	case sens.RangeDistribution:
		return "P10–P90"
	case sens.RangeDefault:
		return fmt.Sprintf("default ±%d%%", sens.DefaultRangePct)
	}
	return string(s)
}

// share writes a fraction 0..1 as a percentage: "41.2%", "<0.1%".
func share(f float64) string {
	switch {
	case f <= 0:
		return "0%"
	case f < 0.001:
		return "<0.1%"
	}
	return strconv.FormatFloat(100*f, 'f', 1, 64) + "%"
}
