package unit

import (
	"encoding/json"
	"math"
	"os"
	"slices"
	"strings"
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

// TestRates: a stated rate lets currencies mix, keeps the text as written, chains, and
// refuses a cycle. The values are worked by hand: 1 EUR = 1.08 $, 1 GBP = 1.17 EUR, so
// 1 GBP = 1.2636 $ and 1 EUR/h = 1.08/3600 $/s.
func TestRates(t *testing.T) {
	r := NewRates()
	if err := r.Set("EUR", 1.08, "$"); err != nil {
		t.Fatal(err)
	}
	if err := r.Set("£", 1.17, "EUR"); err != nil {
		t.Fatal(err)
	}
	if to, f := r.Resolve("GBP"); to != "$" || math.Abs(f-1.2636) > 1e-12 {
		t.Errorf("GBP resolves to %v %s, want 1.2636 $", f, to)
	}
	eurh := MustParse("EUR/h").In(r)
	if eurh.String() != "EUR/h" || eurh.Dim != MustParse("$/h").Dim || math.Abs(eurh.Factor-1.08/3600) > 1e-15 {
		t.Errorf("EUR/h under the rates: %q %v %s", eurh, eurh.Factor, eurh.Dim)
	}
	// A product keeps the rates: EUR/h times h is EUR, still worth 1.08 $.
	eur := eurh.Mul(MustParse("h"))
	if eur.String() != "EUR" || eur.Dim != Currency("$").Dim || math.Abs(eur.Factor-1.08) > 1e-12 {
		t.Errorf("EUR/h × h = %q %v %s", eur, eur.Factor, eur.Dim)
	}
	if v, err := Convert(100, MustParse("£").In(r), MustParse("k$").In(r)); err != nil || math.Abs(v-0.12636) > 1e-12 {
		t.Errorf("100 £ in k$ = %v, %v", v, err)
	}
	if err := r.Set("$", 0.9, "GBP"); err == nil || !strings.Contains(err.Error(), "cycle: $ -> GBP -> EUR -> $") {
		t.Errorf("cycle: %v", err)
	}
	if _, f := r.Resolve("$"); f != 1 {
		t.Error("a refused rate was kept")
	}
	for _, bad := range []struct {
		code, in string
		per      float64
	}{{"FTE", "$", 1}, {"EUR", "EUR", 1}, {"CHF", "$", 0}, {"CHF", "$", math.Inf(1)}} {
		if err := r.Set(bad.code, bad.per, bad.in); err == nil {
			t.Errorf("Set(%s, %v, %s) accepted", bad.code, bad.per, bad.in)
		}
	}
	// Without a rate nothing changes.
	if u := MustParse("CHF").In(r); u.Dim != Currency("CHF").Dim || u.Factor != 1 {
		t.Errorf("CHF changed: %v", u)
	}
}
