package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/unit"
)

// breakevenMethod describes, for a chart's note, the root finder Breakeven
// runs (keep it in step with Breakeven's doc comment).
func breakevenMethod(s *BreakevenSettings) string {
	scan := fmt.Sprintf("a scan of the input's whole domain (41 points over the stated range, then steps growing 1.25-fold outward to %s times its scale; where the model fails, bisection towards the failure finds the edge of its domain)", unit.Format(SearchReach, ""))
	if s.Bounded {
		scan = fmt.Sprintf("a scan of 201 points from %s to %s", unit.Format(s.Low, ""), unit.Format(s.High, ""))
	}
	return "Root finder: " + scan + "; each sign change refined by Newton's method on the reverse-mode derivative, safeguarded by bisection, and kept as a crossing only where the output is continuous there (otherwise it is a jump or a pole)."
}

// markDomain flags the crossings that would need the input to change sign
// from its baseline: for an input positive at its baseline (a price, a mass,
// a rate) a crossing at a negative value lies outside its domain, and
// likewise a positive value for a negative baseline. A crossing at 0 is at
// the domain's edge and is not flagged.
func markDomain(res *BreakevenResult) {
	x0 := res.BaselineInput
	for i := range res.Crossings {
		v := res.Crossings[i].Value
		res.Crossings[i].OutsideDomain = x0 > 0 && v < 0 || x0 < 0 && v > 0
	}
}
