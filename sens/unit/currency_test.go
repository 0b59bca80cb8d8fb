package unit

import (
	"encoding/json"
	"os"
	"slices"
	"testing"
)

// TestEstimatorCurrencies: the ways estimators write thousands and millions of a currency,
// and the currency signs € and £, read as the same dimension as the code (common practice in
// cost estimates; € is the euro, EUR, and £ the pound sterling, GBP, in ISO 4217).
func TestEstimatorCurrencies(t *testing.T) {
	for _, c := range []struct {
		in     string
		factor float64
		dim    Dim
	}{
		{"$K", 1e3, Currency("$").Dim},
		{"K$", 1e3, Currency("$").Dim},
		{"$k", 1e3, Currency("$").Dim},
		{"k$", 1e3, Currency("$").Dim},
		{"M$", 1e6, Currency("$").Dim},
		{"MM$", 1e6, Currency("$").Dim},
		{"$MM", 1e6, Currency("$").Dim},
		{"€", 1, Currency("EUR").Dim},
		{"k€", 1e3, Currency("EUR").Dim},
		{"€K", 1e3, Currency("EUR").Dim},
		{"€MM", 1e6, Currency("EUR").Dim},
		{"KEUR", 1e3, Currency("EUR").Dim},
		{"MMEUR", 1e6, Currency("EUR").Dim},
		{"£", 1, Currency("GBP").Dim},
		{"£/h", 1.0 / 3600, Currency("GBP").Dim.Div(MustParse("s").Dim)},
		{"CHF", 1, Currency("CHF").Dim},
	} {
		u, err := Parse(c.in)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.in, err)
			continue
		}
		if u.Factor != c.factor || u.Dim != c.dim || u.String() != c.in {
			t.Errorf("Parse(%q) = %v × %s (%q), want %v × %s, written as given", c.in, u.Factor, u.Dim, u.String(), c.factor, c.dim)
		}
	}
	// € and EUR are one currency: they convert one to one.
	if v, err := Convert(2, MustParse("k€"), MustParse("EUR")); err != nil || v != 2000 {
		t.Errorf("Convert(2 k€ to EUR) = %v, %v", v, err)
	}
	if !isMoney("€") || Format(12.5, "€") != "€12.50" {
		t.Errorf("€ is money written before the number: %s", Format(12.5, "€"))
	}
}

// TestISO4217 compares the table of currency codes with the list Debian's iso-codes package
// ships (iso_4217.json, the ISO 4217 maintenance agency's list), where it is installed;
// .ci/deps installs it.
func TestISO4217(t *testing.T) {
	b, err := os.ReadFile("/usr/share/iso-codes/json/iso_4217.json")
	if err != nil {
		t.Skipf("iso-codes not installed: %v", err)
	}
	var doc map[string][]struct {
		Alpha3 string `json:"alpha_3"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	var want []string
	for _, c := range doc["4217"] {
		want = append(want, c.Alpha3)
	}
	slices.Sort(want)
	got := slices.Sorted(slices.Values(iso4217Codes))
	for _, c := range want {
		if !iso4217[c] {
			t.Errorf("ISO 4217 code %s missing from the table", c)
		}
	}
	for _, c := range got {
		if !slices.Contains(want, c) {
			t.Errorf("table code %s is not in ISO 4217", c)
		}
	}
	if len(want) < 150 {
		t.Errorf("only %d codes in the reference list", len(want))
	}
}
