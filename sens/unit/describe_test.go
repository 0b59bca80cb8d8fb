package unit

import "testing"

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
