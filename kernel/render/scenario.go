package render

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

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
	r := message("scenario", s, text)
	r.text = o.wrap(text) // a scenario of many settings is one long line
	return r
}
