package render

import (
	"fmt"
	"html"
	"strings"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Compare renders a comparison of scenarios: the output under each, its
// change from the baseline, and the inputs each scenario changes.
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
	return &Result{Kind: "compare", Data: c, Caution: true, text: head + "\n" + tb.text(), html: tb.html(head)}
}

// Scenario renders the definition of a scenario: the inputs it sets, with
// their baselines.
func Scenario(s *sens.ScenarioResult, o *Options) *Result {
	parts := make([]string, 0, len(s.Settings))
	for _, x := range s.Settings {
		parts = append(parts, fmt.Sprintf("%s = %s (baseline %s)", x.Name, unit.Format(x.Value, x.Unit), unit.Format(x.Baseline, x.Unit)))
	}
	verb := "defined"
	if s.Replaced {
		verb = "replaced"
	}
	text := fmt.Sprintf("scenario %s %s", s.Name, verb)
	if len(parts) > 0 {
		text += ": " + strings.Join(parts, ", ")
	}
	return Message("scenario", s, text)
}

// Value renders the value of a name or an expression: "unit_cost = $97.41".
func Value(v *sens.ValueResult, o *Options) *Result {
	val := unit.Format(v.Value, v.Unit)
	return &Result{Kind: "value", Data: v, text: v.Name + " = " + val,
		html: `<p class="nudge-value"><code>` + html.EscapeString(v.Name) + `</code> = <b>` + html.EscapeString(val) + `</b></p>`}
}
