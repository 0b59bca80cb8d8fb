package render

import (
	"fmt"
	"math"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// driverSubtotals adds to a drivers result the inputs Top left out and
// the subtotals of a model with vector inputs: by vector, and by group.
func driverSubtotals(r *Result, d *sens.DriversResult, o *Options) {
	el := unit.Fixed("", 4)
	if d.Rest != nil && math.IsNaN(d.Rest.Elasticity) {
		r.note(fmt.Sprintf("… and %s more %s (top=N keeps N)", count(d.Rest.Count), plural(d.Rest.Count, "input", "inputs")))
	} else if d.Rest != nil {
		r.note(fmt.Sprintf("… and %s more %s, each with |elasticity| at most %s, together %s (top=N keeps N)",
			count(d.Rest.Count), plural(d.Rest.Count, "input", "inputs"), elasticityAbs(el, d.Rest.MaxElasticity), elasticityText(el, d.Rest.Elasticity)))
	}
	for _, part := range []struct {
		title string
		rows  []sens.DriverSubtotal
	}{
		{"by vector input", d.Columns},
		{"by " + d.GroupBy, d.Groups},
	} {
		if len(part.rows) == 0 {
			continue
		}
		bw := max(o.width()/3, 8)
		t := &table{head: []string{part.title, "elements", "Σ elasticity", "Σ ∂" + wrapExpr(d.Output) + "/∂x·x", ""},
			right: []bool{false, true, true, true, false}, textOnly: 1}
		vals := make([]float64, len(part.rows))
		for i, s := range part.rows {
			vals[i] = s.Effect
		}
		eff := unit.NewColumn(d.Unit, vals...)
		for _, s := range part.rows {
			t.add(s.Name, count(s.Count), elasticityText(el, s.Elasticity), eff.Signed(s.Effect), bar(s.Share, bw))
		}
		head := fmt.Sprintf("%s: subtotals %s (every element counted; Σ elasticity is the %% change of %s when all of them change by 1%%)", d.Output, part.title, d.Output)
		r.text += "\n" + head + "\n" + t.text()
		r.html += t.html(head)
	}
}
