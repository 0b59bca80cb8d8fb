package sens

import "testing"

// must returns v, failing the test on err: run(t)(Sobol(p, s)).
func must[T any](t testing.TB) func(v T, err error) T {
	return func(v T, err error) T {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
}

// named returns the element of xs whose name (by name) is n, or the zero
// value.
func named[T any](xs []T, name func(T) string, n string) T {
	for _, x := range xs {
		if name(x) == n {
			return x
		}
	}
	var zero T
	return zero
}
