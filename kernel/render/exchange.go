package render

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Exchange renders a stated exchange rate: "exchange rate: 1 EUR = 1.08 $".
func Exchange(r *sens.ExchangeRate, _ *Options) *Result {
	verb := "stated"
	if r.Replaced {
		verb = "replaced"
	}
	text := fmt.Sprintf("exchange rate %s: 1 %s = %s (amounts in %s and %s now mix; each value keeps the unit it was written in)",
		verb, r.Code, unit.Format(r.Rate, r.In), r.Code, r.In)
	return message("exchange", r, text)
}
