package sens

import (
	"slices"
	"strings"
)

// sortBySpread orders xs by spread, largest first, a tie within rounding
// (sortKey) by name, stably (the index breaks the last tie). Each element's key is computed once and an
// index sorted, not the elements themselves: a model with vector inputs
// has hundreds of thousands of bars or lines, and computing sortKey in
// every comparison and moving whole bars dominated a tornado's time.
func sortBySpread[T any](xs []T, key func(*T) (spread float64, name string)) {
	type keyed struct {
		key  float64
		name string
		i    int32
	}
	ks := make([]keyed, len(xs))
	for i := range xs {
		s, n := key(&xs[i])
		ks[i] = keyed{sortKey(s), n, int32(i)}
	}
	slices.SortFunc(ks, func(a, c keyed) int {
		switch {
		case a.key > c.key:
			return -1
		case a.key < c.key:
			return 1
		}
		if r := strings.Compare(a.name, c.name); r != 0 {
			return r
		}
		return int(a.i - c.i) // stable
	})
	sorted := make([]T, len(xs))
	for r, k := range ks {
		sorted[r] = xs[k.i]
	}
	copy(xs, sorted)
}
