package render

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/plotting"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Compare renders a comparison of scenarios: the output under each, its
// change from the baseline, and the inputs each scenario changes, with a
// chart of each scenario's bar against the baseline.
func Compare(c *sens.CompareResult, o *Options) *Result {
	var vs []float64
	for _, s := range c.Scenarios {
		vs = append(vs, s.Value, s.Delta)
	}
	out := unit.NewColumn(c.Unit, vs...)
	tb := &table{head: []string{"scenario", c.Output, "Δ", "Δ %", "changes"}, right: []bool{false, true, true, true, false}}
	for _, s := range c.Scenarios {
		p := "—"
		if s.DeltaPct != nil {
			p = unit.Signed(*s.DeltaPct, "%")
		}
		var ch []string
		for _, x := range s.Changes {
			ch = append(ch, x.Name+" = "+unit.Format(x.Value, x.Unit))
		}
		changes := strings.Join(ch, ", ")
		if s.Name == sens.BaseName {
			changes = "(baseline)"
		}
		tb.add(s.Name, out.Format(s.Value), out.Signed(s.Delta), p, changes)
	}
	head := fmt.Sprintf("%s across scenarios: Δ against the baseline %s", c.Output, unit.Format(c.Baseline, c.Unit))
	r := &Result{Kind: "compare", Data: c, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	ch := &plotting.Compare{Output: c.Output, Unit: c.Unit, Baseline: c.Baseline}
	left := 0 // scenarios beyond the table's rows, which the chart leaves out too
	for i, s := range c.Scenarios {
		switch {
		case s.Name == sens.BaseName:
		case i >= maxTableRows:
			left++
		default:
			ch.Scenarios = append(ch.Scenarios, plotting.Scenario{Name: s.Name, Value: s.Value})
		}
	}
	if left > 0 {
		r.note(fmt.Sprintf("the chart shows the scenarios of the table; %s more are in the JSON", count(left)))
	}
	r.attach(ch, o)
	return r
}
