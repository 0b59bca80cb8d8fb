package render

import (
	"html"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Value renders the value of a name or an expression: "unit_cost = $97.41".
func Value(v *sens.ValueResult, o *Options) *Result {
	val := unit.Format(v.Value, v.Unit)
	return &Result{Kind: "value", Data: v, text: v.Name + " = " + val,
		html: `<p class="nudge-value"><code>` + html.EscapeString(v.Name) + `</code> = <b>` + html.EscapeString(val) + `</b></p>`}
}
