package render

import (
	"fmt"
	"math"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Drivers renders the drivers of an output: each input's value, the partial
// derivative of the output with respect to it in its units, and its
// elasticity, ranked, with a bar of its share of the total |elasticity| in the
// text. A table shows 30 inputs and sums up the rest.
func Drivers(d *sens.DriversResult, o *Options) *Result {
	t := &table{head: []string{"input", "value", "∂" + wrapExpr(d.Output) + "/∂input", "elasticity", ""},
		right: []bool{false, true, true, true, false}, textOnly: 1}
	bw := max(o.width()/3, 8)
	shown := d.Inputs[:min(len(d.Inputs), maxTableRows)]
	el := unit.Fixed("", 4)
	for _, x := range shown {
		t.add(x.Name, unit.Format(x.Value, x.Unit), unit.Format(x.Partial, x.PartialUnit), elasticityText(el, x.Elasticity), bar(x.Share, bw))
	}
	head := fmt.Sprintf("%s = %s at the baseline; inputs ranked by |elasticity| (%% change of %s per 1%% change of the input)",
		d.Output, unit.Format(d.Value, d.Unit), d.Output)
	r := &Result{Kind: "drivers", Data: d, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
	if d.Value == 0 {
		r.note(fmt.Sprintf("the elasticities are undefined (n/a): %s is 0 at the baseline, so a percentage change of it is not; the inputs are ranked by |∂%s/∂input × input| instead", d.Output, d.Output))
	}
	if rest := len(d.Inputs) - len(shown); rest > 0 && d.Value == 0 {
		r.note(fmt.Sprintf("… and %s more inputs (all of them are in the JSON; top=N keeps N)", count(rest)))
	} else if rest > 0 {
		r.note(fmt.Sprintf("… and %s more inputs, each with |elasticity| at most %s (all of them are in the JSON; top=N keeps N)",
			count(rest), elasticityAbs(el, math.Abs(d.Inputs[len(shown)].Elasticity))))
	}
	driverSubtotals(r, d, o)
	return r
}

// count writes a number of things: "4,997".
func count(n int) string { return unit.Format(float64(n), "") }

// elasticityText writes an elasticity, or "n/a" where it is undefined (NaN:
// the output is 0).
func elasticityText(el unit.Column, e float64) string {
	if math.IsNaN(e) {
		return "n/a"
	}
	return el.Signed(e)
}

// elasticityAbs writes |elasticity| unsigned, or "n/a" where it is
// undefined.
func elasticityAbs(el unit.Column, e float64) string {
	if math.IsNaN(e) {
		return "n/a"
	}
	return el.Format(e)
}
