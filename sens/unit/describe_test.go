package unit

import (
	"runtime"
	"strings"
	"testing"
)

func TestDescribe(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		// 1 kWh = 3.6 MJ (SI Brochure 9th ed. (2019), table 8: the hour is
		// 3,600 s; a kilowatt hour is 1,000 W for 3,600 s).
		{"kWh", "kWh: kilowatt hour; energy; 1 kWh = 3,600,000 J"},
		// 1 min = 60 s (SI Brochure, table 8).
		{"min", "min: minute; time; 1 min = 60 s"},
		{"kg", "kg: kilogram; mass"},
		{"k$", "k$: thousand $; currency $; 1 k$ = $1,000"},
		{"EUR", "EUR: currency EUR (a dimension of its own unless the model states an exchange rate); currency EUR"},
		{"€", "€: currency EUR, written € (a dimension of its own unless the model states an exchange rate); currency EUR; 1 € = 1 EUR"},
		{"$K", "$K: thousand $; currency $; 1 $K = $1,000"},
		{"MM$", "MM$: million $; currency $; 1 MM$ = $1,000,000"},
		{"$/h", "$/h: $ = currency $ (a dimension of its own unless the model states an exchange rate), h = hour; currency $ per time; 1 $/h = 0.0002778 $/s"},
		{"1", "1: a pure number; dimensionless"},
		// 1 lb = 0.45359237 kg exactly (NIST SP 811, appendix B.8).
		{"lb", "lb: pound (avoirdupois); mass; 1 lb = 0.4536 kg"},
	} {
		got, err := Describe(tc.in)
		if err != nil || got != tc.want {
			t.Errorf("Describe(%q) = %q, %v\nwant %q", tc.in, got, err, tc.want)
		}
	}
	if _, err := Describe("bogus"); err == nil {
		t.Error("Describe(bogus) gave no error")
	}
}

// An unknown name of a megabyte (a line of letters under a console's
// cursor, which inspect describes as a unit) costs no edit distance per
// unit: the distance is at least the difference of the lengths, so no unit
// is near it. Counted in bytes allocated (runtime.MemStats.TotalAlloc), not
// timed: each edit distance computed copies the name as runes.
func TestSuggestLongNameBounded(t *testing.T) {
	for _, name := range []string{strings.Repeat("a", 1<<20), strings.Repeat("é", 1<<19)} {
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		_, err := Describe(name)
		runtime.ReadMemStats(&after)
		if err == nil {
			t.Fatal("a megabyte of letters is a unit")
		}
		// A few copies of the name (lower case, the error's quote) are
		// linear; an edit distance a unit would be hundreds.
		if got := after.TotalAlloc - before.TotalAlloc; got > 32*uint64(len(name)) {
			t.Errorf("%d bytes of %q: %d bytes allocated, want at most %d", len(name), name[:2], got, 32*len(name))
		}
	}
}
