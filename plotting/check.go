package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"math"
)

// finite returns an error naming what and the field when v is NaN or
// infinite.
func finite(what, field string, v float64) error {
	switch {
	case math.IsNaN(v):
		return fmt.Errorf("%s: %s is NaN", what, field)
	case math.IsInf(v, 0):
		return fmt.Errorf("%s: %s is infinite", what, field)
	}
	return nil
}

// finiteSlice checks every element of vs. The name of an element is
// written only for the one that fails: a heat map has a million.
func finiteSlice(what, field string, vs []float64) error {
	for i, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return finite(what, fmt.Sprintf("%s[%d]", field, i), v)
		}
	}
	return nil
}

// increasing checks that vs is strictly increasing.
func increasing(what, field string, vs []float64) error {
	for i := 1; i < len(vs); i++ {
		if !(vs[i] > vs[i-1]) {
			return fmt.Errorf("%s: %s must increase strictly, but %s[%d] = %s follows %s",
				what, field, field, i, unit.Format(vs[i], ""), unit.Format(vs[i-1], ""))
		}
	}
	return nil
}

// extent returns the smallest and largest of the given values.
func extent(vs ...float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range vs {
		lo = math.Min(lo, v)
		hi = math.Max(hi, v)
	}
	return lo, hi
}

// widen returns a range that is not empty: an empty range [v, v] grows by
// 5% of |v| (or by 1 when v is 0) on each side.
func widen(lo, hi float64) (float64, float64) {
	if hi > lo {
		return lo, hi
	}
	d := math.Abs(lo) * 0.05
	if d == 0 {
		d = 1
	}
	return lo - d, hi + d
}

// orDefault returns s, or def when s is empty after cleaning.
func orDefault(s, def string) string {
	if s = clean(s); s == "" {
		return def
	}
	return s
}
