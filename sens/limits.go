package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/unit"
)

// MaxKeptValues bounds what a one-at-a-time or screening analysis keeps
// per point it evaluates: a spider's points (points on each of k lines),
// Morris's elementary effects (r trajectories of k inputs). Beyond it the
// analysis stops with an error before it allocates, instead of exhausting
// memory: at most 16,777,216 values, about 128 MB of numbers (a spider
// point in its result takes several times that).
const MaxKeptValues = 1 << 24

// checkKept returns an error when an analysis would keep count·per values,
// more than MaxKeptValues; what says how many it was asked for ("1,001
// points on 20,000 inputs"), fix how to ask for fewer.
func checkKept(verb, output string, count, per int, what, fix string) error {
	if count <= 0 || per <= 0 || count <= MaxKeptValues/per {
		return nil
	}
	return fmt.Errorf("%s %s: %s would keep %s values, more than the %s an analysis keeps: %s",
		verb, output, what, unit.Format(float64(count)*float64(per), ""), unit.Format(MaxKeptValues, ""), fix)
}
