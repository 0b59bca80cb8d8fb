package unit

import (
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// equalWithinAbsOrRel reports whether a and b differ by at most abs, or by at most rel times
// the larger magnitude (the rule of gonum's scalar.EqualWithinAbsOrRel).
func equalWithinAbsOrRel(a, b, abs, rel float64) bool {
	if math.Abs(a-b) <= abs {
		return true
	}
	return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))
}

func TestConvert(t *testing.T) {
	const exact = 1e-15 // exact definitions, up to float64 rounding
	for _, c := range []struct {
		x        float64
		from, to string
		want     float64
		rel      float64
		source   string
	}{
		{1, "in", "m", 0.0254, exact, "international yard and pound agreement, 1959: 1 in = 0.0254 m"},
		{1, "ft", "in", 12, exact, "1959 agreement: 1 ft = 12 in = 0.3048 m"},
		{1, "yd", "ft", 3, exact, "1959 agreement: 1 yd = 3 ft = 0.9144 m"},
		{1, "mi", "ft", 5280, exact, "1959 agreement: 1 mi = 5280 ft = 1609.344 m"},
		{1, "lb", "kg", 0.45359237, exact, "1959 agreement: 1 lb = 0.45359237 kg"},
		{1, "lb", "oz", 16, exact, "avoirdupois: 1 lb = 16 oz (NIST SP 811 App. B: oz = 2.834952E-02 kg)"},
		{1, "oz", "g", 28.349523125, exact, "NIST SP 811 App. B: 1 oz (avoirdupois) = 2.834952E-02 kg; exact lb/16"},
		{1, "kWh", "J", 3.6e6, exact, "NIST SP 811 App. B: 1 kW·h = 3.6E+06 J (exact)"},
		{1, "kWh", "MJ", 3.6, exact, "NIST SP 811 App. B: 1 kW·h = 3.6E+06 J (exact)"},
		{1, "kW*h", "kWh", 1, exact, "SI Brochure 9th ed.: W·h is the product of the watt and the hour"},
		{1, "W*s", "J", 1, exact, "SI Brochure 9th ed.: J = W·s"},
		{1, "N*m", "J", 1, exact, "SI Brochure 9th ed.: J = N·m"},
		{1, "Pa*m^2", "N", 1, exact, "SI Brochure 9th ed.: Pa = N/m^2"},
		{1, "kg*m/s^2", "N", 1, exact, "SI Brochure 9th ed.: N = kg·m·s^-2"},
		{1, "h", "s", 3600, exact, "SI Brochure 9th ed., Table 8: 1 h = 3600 s"},
		{90, "min", "h", 1.5, exact, "SI Brochure 9th ed., Table 8: 1 min = 60 s, 1 h = 3600 s"},
		{1, "d", "h", 24, exact, "SI Brochure 9th ed., Table 8: 1 d = 86400 s"},
		{1, "wk", "d", 7, exact, "common practice: a week is 7 days"},
		{1, "yr", "d", 365.25, exact, "IAU: the Julian year is 365.25 d"},
		{1, "yr", "s", 31557600, exact, "IAU: the Julian year is 365.25 × 86400 s"},
		{1, "mo", "d", 30.4375, exact, "this package's month: yr/12 = 365.25/12 d"},
		{1, "t", "kg", 1000, exact, "SI Brochure 9th ed., Table 8: 1 t = 1000 kg"},
		{1, "kt", "t", 1000, exact, "SI prefix k = 1e3"},
		{1, "ha", "m^2", 1e4, exact, "SI Brochure 9th ed., Table 8: 1 ha = 1e4 m^2"},
		{1, "km2", "ha", 100, exact, "1 km^2 = 1e6 m^2 = 100 ha"},
		{1, "ft2", "m2", 0.09290304, exact, "NIST SP 811 App. B: 1 ft^2 = 9.290304E-02 m^2 (exact)"},
		{1, "ac", "ft^2", 43560, 1e-14, "NIST SP 811 App. B: acre = 43560 ft^2 (international foot)"},
		{1, "m^3", "L", 1000, exact, "SI Brochure 9th ed., Table 8: 1 L = 1e-3 m^3"},
		{1, "ft^3", "m^3", 0.028316846592, exact, "NIST SP 811 App. B: 1 ft^3 = 2.831685E-02 m^3 (0.3048^3, exact)"},
		{1, "gal", "L", 3.785411784, exact, "NIST SP 811 App. B: 1 gal (US) = 3.785412E-03 m^3 (exact 231 in^3)"},
		{1, "gal", "in^3", 231, 1e-14, "NIST SP 811 App. B: 1 gal (US) = 231 in^3"},
		{1, "bbl", "gal", 42, exact, "NIST SP 811 App. B: barrel (petroleum) = 42 gal (US)"},
		{1, "mL", "L", 1e-3, exact, "SI prefix m = 1e-3"},
		{1, "BTU", "J", 1055.05585262, exact, "NIST SP 811 App. B: Btu_IT = 1.055056E+03 J; exact 1055.05585262 J"},
		{1, "MMBtu", "GJ", 1.05505585262, exact, "common practice: MMBtu = 1e6 Btu_IT"},
		{1, "hp", "W", 745.6999, 1e-7, "NIST SP 811 App. B: horsepower (550 ft·lbf/s) = 7.456999E+02 W"},
		{1, "lbf", "N", 4.4482216152605, exact, "NIST SP 811 App. B: lbf = 4.448222 N; exact 0.45359237 × 9.80665"},
		{1, "psi", "kPa", 6.894757, 1e-7, "NIST SP 811 App. B: psi = 6.894757E+03 Pa"},
		{1, "atm", "kPa", 101.325, exact, "NIST SP 811 App. B: standard atmosphere = 1.01325E+05 Pa (exact)"},
		{1, "bar", "kPa", 100, exact, "NIST SP 811 App. B: bar = 1.0E+05 Pa (exact)"},
		{1, "mbar", "Pa", 100, exact, "NIST SP 811 App. B: millibar = 1.0E+02 Pa (exact)"},
		{1, "m/s", "km/h", 3.6, exact, "1 m/s = 3600 m/h = 3.6 km/h"},
		{1, "mi/h", "m/s", 0.44704, exact, "NIST SP 811 App. B: mile per hour = 4.4704E-01 m/s (exact)"},
		{1, "g/cm^3", "kg/m^3", 1000, exact, "NIST SP 811 App. B: g/cm^3 = 1.0E+03 kg/m^3"},
		{1, "MWh/t", "kWh/kg", 1, exact, "SI prefixes: 1e6 W·h / 1e3 kg = 1e3 W·h/kg"},
		{1, "µm", "um", 1, exact, "the micro sign and u both mean 1e-6 (SI prefix micro)"},
		{1, "μm", "mm", 1e-3, exact, "Greek mu, SI prefix micro"},
		{5, "%", "1", 0.05, exact, "SI Brochure 9th ed.: % stands for the number 0.01"},
		{1, "ppm", "%", 1e-4, exact, "common practice: ppm = 1e-6"},
		{60, "$/h", "$/min", 1, exact, "1 h = 60 min"},
		{1, "k$", "$", 1000, exact, "this package: prefix k on a currency = 1e3"},
		{1, "M$", "k$", 1000, exact, "this package: prefix M on a currency = 1e6"},
		{2, "MEUR", "kEUR", 2000, exact, "this package: prefix M on a currency = 1e6"},
		{3, "$/each", "$", 3, exact, "this package: each is a dimensionless count"},
		{1, "m²", "m^2", 1, exact, "superscript ² is ^2"},
		{1, "s⁻¹", "1/s", 1, exact, "superscript ⁻¹ is ^-1"},
	} {
		from, err := Parse(c.from)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.from, err)
			continue
		}
		to, err := Parse(c.to)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.to, err)
			continue
		}
		got, err := Convert(c.x, from, to)
		if err != nil {
			t.Errorf("Convert(%v, %s, %s): %v", c.x, c.from, c.to, err)
			continue
		}
		if !equalWithinAbsOrRel(got, c.want, 0, c.rel) {
			t.Errorf("Convert(%v, %s, %s) = %.17g, want %.17g (%s)", c.x, c.from, c.to, got, c.want, c.source)
		}
	}
}

// The design brief's example: minutes times $/h gives $.
func TestMinutesTimesDollarsPerHour(t *testing.T) {
	min, rate, usd := MustParse("min"), MustParse("$/h"), Currency("$")
	cost := min.Mul(rate)
	if cost.Dim != usd.Dim {
		t.Fatalf("dimension of min*$/h = %s, want $", cost.Dim)
	}
	if got, want := cost.String(), "min*$/h"; got != want {
		t.Errorf("String = %q, want %q", got, want)
	}
	// 90 min at 60 $/h costs 90 $ (1 h = 60 min, SI Brochure 9th ed., Table 8).
	got, err := Convert(90*60, cost, usd)
	if err != nil || !equalWithinAbsOrRel(got, 90, 0, 1e-15) {
		t.Errorf("Convert(5400, min*$/h, $) = %v, %v; want 90", got, err)
	}
	// On the tape both inputs are in base units (s and $/s); their product is in $.
	if v := 90 * min.Factor * 60 * rate.Factor; !equalWithinAbsOrRel(v, 90, 0, 1e-15) {
		t.Errorf("base-unit product = %v, want 90", v)
	}
	// total = hours * rate: its partial in hours is rate, 1/60 $/s in base units, which is
	// reported per the input's own unit as 60 $/h (1 h = 3600 s).
	h := MustParse("h")
	g := 60 * rate.Factor
	got, err = Convert(g, Simplest(usd.Dim.Div(h.Dim)), usd.Div(h))
	if err != nil || !equalWithinAbsOrRel(got, 60, 0, 1e-15) || usd.Div(h).String() != "$/h" {
		t.Errorf("partial in %s = %v, %v; want 60 $/h", usd.Div(h), got, err)
	}
	// Multiplying by the hour cancels the symbol.
	if got := MustParse("h").Mul(rate); got != usd {
		t.Errorf("h * $/h = %#v, want %#v", got, usd)
	}
}

func TestConvertIncompatible(t *testing.T) {
	for _, c := range []struct{ from, to, want string }{
		{"min", "kg", "cannot convert min to kg: time vs mass"},
		{"kWh", "kW", "cannot convert kWh to kW: energy vs power"},
		{"$/h", "$", "cannot convert $/h to $: currency $ per time vs currency $"},
		{"m^2", "L", "cannot convert m^2 to L: area vs volume"},
		{"%", "kg", "cannot convert % to kg: dimensionless vs mass"},
		{"EUR", "$", "cannot convert EUR to $: different currencies, and no exchange rate is stated (state one, e.g. exchange EUR = 1.1 [$])"},
		{"USD", "$", "cannot convert USD to $: different currencies, and no exchange rate is stated (state one, e.g. exchange USD = 1.1 [$])"},
	} {
		_, err := Convert(1, MustParse(c.from), MustParse(c.to))
		if err == nil || err.Error() != c.want {
			t.Errorf("Convert(1, %s, %s) error = %v, want %q", c.from, c.to, err, c.want)
		}
	}
}

// TestRoundTrip parses every table symbol, currencies and compound forms, prints them, and
// parses the text again: the Unit must come back identical.
func TestRoundTrip(t *testing.T) {
	cases := map[string]string{ // input -> canonical text
		"$": "$", "EUR": "EUR", "GBP": "GBP", "JPY": "JPY", "k$": "k$", "M$": "M$", "kEUR": "kEUR",
		"1": "1", "$/kg": "$/kg", "$/h": "$/h", "$/(kg*h)": "$/(kg*h)", "$/kg/h": "$/(kg*h)",
		"kg*m/s^2": "kg*m/s^2", "kg·m/s²": "kg*m/s^2", "m2": "m^2", "m3": "m^3", "1/s": "1/s",
		"s^-1": "1/s", "s^(-2)": "1/s^2", "1/s*kg": "kg/s", "EUR/$": "EUR/$", "kg/kg": "1",
		"$/kg*kg": "$", "(m*s)^2": "m^2*s^2", "m^0": "1", " kg * m ": "kg*m", "%*%": "%^2",
		"k$/yr": "k$/yr", "kW*h/m^2/yr": "kW*h/(m^2*yr)", "1/(1/s)": "s", "m^+2": "m^2",
	}
	for _, sym := range Symbols() {
		cases[sym] = sym
	}
	for in, want := range cases {
		u, err := Parse(in)
		if err != nil {
			t.Errorf("Parse(%q): %v", in, err)
			continue
		}
		if got := u.String(); got != want {
			t.Errorf("Parse(%q).String() = %q, want %q", in, got, want)
		}
		v, err := Parse(u.String())
		if err != nil {
			t.Errorf("Parse(%q) (round trip of %q): %v", u.String(), in, err)
			continue
		}
		if v != u {
			t.Errorf("round trip of %q: %#v, then %#v", in, u, v)
		}
	}
}

// TestTableFactors checks the table against the exact definitions it cites, independently of
// the constants table.go builds the rows from.
func TestTableFactors(t *testing.T) {
	for _, c := range []struct {
		sym    string
		want   float64
		dim    string
		source string
	}{
		{"in", 0.0254, "m", "1959 agreement"},
		{"ft", 0.3048, "m", "1959 agreement"},
		{"mi", 1609.344, "m", "1959 agreement"},
		{"lb", 0.45359237, "kg", "1959 agreement"},
		{"oz", 0.028349523125, "kg", "1959 agreement, lb/16"},
		{"ac", 4046.8564224, "m^2", "NIST SP 811 App. B (acre based on the international foot, 43560 ft^2)"},
		{"gal", 3.785411784e-3, "m^3", "NIST SP 811 App. B (US gallon, exact)"},
		{"bbl", 0.158987294928, "m^3", "NIST SP 811 App. B: 1.589873E-01 m^3; exact 42 gal"},
		{"yr", 31557600, "s", "IAU Julian year"},
		{"BTU", 1055.05585262, "kg*m^2/s^2", "NIST SP 811 App. B (Btu_IT)"},
		{"lbf", 4.4482216152605, "kg*m/s^2", "NIST SP 811 App. B"},
		{"hp", 745.69987158227022, "kg*m^2/s^3", "550 ft·lbf/s from the 1959 foot and pound and gn = 9.80665 m/s^2"},
		{"psi", 6894.757293168361, "kg/(m*s^2)", "lbf/in^2 from the 1959 inch and pound and gn"},
		{"atm", 101325, "kg/(m*s^2)", "NIST SP 811 App. B (exact)"},
	} {
		u := MustParse(c.sym)
		if !equalWithinAbsOrRel(u.Factor, c.want, 0, 1e-15) || u.Dim.String() != c.dim {
			t.Errorf("%s: factor %.17g dim %s, want %.17g %s (%s)", c.sym, u.Factor, u.Dim, c.want, c.dim, c.source)
		}
	}
}

// TestDocTable checks that the package documentation lists every symbol of the table with the
// same factor, so the documentation cannot go stale.
func TestDocTable(t *testing.T) {
	src, err := os.ReadFile("doc.go")
	if err != nil {
		t.Fatal(err)
	}
	cols := regexp.MustCompile(`\s{2,}`)
	also := regexp.MustCompile(`\(also ([^)]*)\)`)
	factors := map[string]string{}
	inTable := false
	for _, line := range strings.Split(string(src), "\n") {
		if strings.HasPrefix(line, "//\tsymbol ") {
			inTable = true
			continue
		}
		if !inTable {
			continue
		}
		if !strings.HasPrefix(line, "//\t") {
			break
		}
		f := cols.Split(strings.TrimPrefix(line, "//\t"), -1)
		if len(f) != 4 {
			t.Fatalf("doc table row %q has %d columns, want 4", line, len(f))
		}
		factors[f[0]] = f[2]
		if m := also.FindStringSubmatch(f[1]); m != nil {
			for _, a := range strings.Split(m[1], ", ") {
				factors[a] = f[2]
			}
		}
	}
	for _, e := range table {
		text, ok := factors[e.sym]
		if !ok {
			t.Errorf("doc.go does not list %q", e.sym)
			continue
		}
		num, _, _ := strings.Cut(text, " ")
		v, err := strconv.ParseFloat(num, 64)
		if err != nil || !equalWithinAbsOrRel(v, e.factor, 0, 1e-15) {
			t.Errorf("doc.go lists %s with factor %q; table has %.17g", e.sym, text, e.factor)
		}
	}
	if len(factors) != len(table) {
		t.Errorf("doc.go lists %d symbols, table has %d", len(factors), len(table))
	}
}

func TestSimplest(t *testing.T) {
	for _, c := range []struct{ of, want string }{
		{"1", "1"},
		{"%", "1"},
		{"min", "s"},
		{"lb", "kg"},
		{"kWh", "J"},
		{"kW", "W"},
		{"hp", "W"},
		{"lbf", "N"},
		{"psi", "Pa"},
		{"$", "$"},
		{"k$", "$"},
		{"$/lb", "$/kg"},
		{"$/h", "$/s"},
		{"$/kWh", "$/J"},
		{"1/kWh", "1/J"},
		{"$/(kg*h)", "$/(kg*s)"},
		{"EUR/$", "EUR/$"},
		{"GBP*EUR", "EUR*GBP"},
		{"km/h", "m/s"},
		{"g/cm^3", "kg/m^3"},
		{"J/kg", "m^2/s^2"},
		{"W/m^2", "kg/s^3"},
		{"L", "m^3"},
		{"ha", "m^2"},
		{"mol/L", "mol/m^3"},
		{"A*h", "s*A"},
		{"1/yr", "1/s"},
	} {
		d := MustParse(c.of).Dim
		u := Simplest(d)
		if u.String() != c.want || u.Factor != 1 || u.Dim != d {
			t.Errorf("Simplest(dim of %s) = %s (factor %v, dim %s), want %s", c.of, u, u.Factor, u.Dim, c.want)
		}
		if v, err := Parse(u.String()); err != nil || v != u {
			t.Errorf("Simplest(dim of %s) = %q does not parse back: %v", c.of, u, err)
		}
	}
}

func TestPow(t *testing.T) {
	for _, c := range []struct {
		u        string
		num, den int
		want     string
		factor   float64
	}{
		{"m^2", 1, 2, "m", 1},
		{"km^2", 1, 2, "km", 1e3},
		{"m", 2, 1, "m^2", 1},
		{"ft", 2, 1, "ft^2", 0.09290304}, // NIST SP 811 App. B: ft^2 = 9.290304E-02 m^2
		{"m^3", 1, 3, "m", 1},
		{"m^6", 2, 4, "m^3", 1},
		{"s^-2", 1, -2, "s", 1},
		{"$/h", -1, 1, "h/$", 3600},
		{"m^2/s^2", 1, 2, "m/s", 1},
		{"1", 5, 1, "1", 1},
		{"kg", 0, 1, "1", 1},
	} {
		u := MustParse(c.u)
		got, err := u.Pow(c.num, c.den)
		if err != nil {
			t.Errorf("(%s).Pow(%d, %d): %v", c.u, c.num, c.den, err)
			continue
		}
		if got.String() != c.want || !equalWithinAbsOrRel(got.Factor, c.factor, 0, 1e-15) {
			t.Errorf("(%s).Pow(%d, %d) = %s factor %v, want %s factor %v", c.u, c.num, c.den, got, got.Factor, c.want, c.factor)
		}
		if d, err := u.Dim.Pow(c.num, c.den); err != nil || d != got.Dim {
			t.Errorf("(%s).Dim.Pow(%d, %d) = %s, %v; want %s", c.u, c.num, c.den, d, err, got.Dim)
		}
	}
	for _, c := range []struct {
		u        string
		num, den int
		want     string
	}{
		{"m", 1, 2, "cannot raise m to the power 1/2: the exponent of m would be 1/2"},
		{"$", 1, 2, "cannot raise $ to the power 1/2: the exponent of $ would be 1/2"},
		{"m^3", 1, 2, "cannot raise m^3 to the power 1/2: the exponent of m would be 3/2"},
		{"ha", 1, 2, "cannot raise ha to the power 1/2: the exponent of ha would be 1/2 (write the unit as m^2 first)"},
		{"kg", 1, 0, "cannot raise kg to the power 1/0: zero denominator"},
		{"m^50", 2, 1, "cannot raise m^50 to the power 2: the exponent of m would be 100 (limit ±99)"},
	} {
		_, err := MustParse(c.u).Pow(c.num, c.den)
		if err == nil || err.Error() != c.want {
			t.Errorf("(%s).Pow(%d, %d) error = %v, want %q", c.u, c.num, c.den, err, c.want)
		}
	}
}

func TestPowMore(t *testing.T) {
	// Dim.Pow explains itself without a unit's text.
	_, err := MustParse("km").Dim.Pow(1, 2)
	if want := "cannot raise m to the power 1/2: the exponent of m would be 1/2"; err == nil || err.Error() != want {
		t.Errorf("Dim.Pow error = %v, want %q", err, want)
	}
	if _, err := MustParse("m").Dim.Pow(200, 1); err == nil {
		t.Error("Dim.Pow(200, 1) should be out of range")
	}
	// A hand-built unit (no text) raises its factor: sqrt(4 m^2) is 2 m.
	area := MustParse("m^2").Dim
	got, err := Unit{Factor: 4, Dim: area}.Pow(1, 2)
	if err != nil || got.Factor != 2 || got.Dim != MustParse("m").Dim {
		t.Errorf("sqrt of hand-built 4 m^2 = %#v, %v", got, err)
	}
	// Superscript digits 0 to 9 (Unicode Superscripts and Subscripts block, plus ¹²³ in Latin-1).
	for in, want := range map[string]string{"m⁰": "1", "m¹": "m", "m⁴": "m^4", "s⁻⁵": "1/s^5", "m⁶⁷⁸": "", "m⁺⁹": "m^9", "m¹⁰": "m^10"} {
		u, err := Parse(in)
		if want == "" {
			if err == nil {
				t.Errorf("Parse(%q) should fail (exponent out of range)", in)
			}
			continue
		}
		if err != nil || u.String() != want {
			t.Errorf("Parse(%q) = %v, %v; want %s", in, u, err, want)
		}
	}
}

func TestDim(t *testing.T) {
	energy := MustParse("kWh").Dim
	if !energy.Equal(MustParse("J").Dim) || energy != MustParse("N*m").Dim {
		t.Error("kWh, J and N*m should share one dimension")
	}
	if energy.Equal(MustParse("W").Dim) {
		t.Error("energy should differ from power")
	}
	// Dim is comparable, so it can key a map.
	seen := map[Dim]string{energy: "energy"}
	if seen[MustParse("MJ").Dim] != "energy" {
		t.Error("map lookup by Dim failed")
	}
	if !MustParse("%").Dim.IsDimensionless() || !MustParse("kg/lb").Dim.IsDimensionless() || !One().Dim.IsDimensionless() {
		t.Error("%, kg/lb and One should be dimensionless")
	}
	if MustParse("$").Dim.IsDimensionless() {
		t.Error("$ should not be dimensionless")
	}
	for _, c := range []struct{ u, str, name string }{
		{"kWh", "kg*m^2/s^2", "energy"},
		{"min", "s", "time"},
		{"$/kg", "$/kg", "currency $ per mass"},
		{"EUR", "EUR", "currency EUR"},
		{"1", "1", "dimensionless"},
		{"$/(EUR*h)", "$/(EUR*s)", "currency $ per currency EUR × time"},
	} {
		d := MustParse(c.u).Dim
		if d.String() != c.str || d.Name() != c.name {
			t.Errorf("dim of %s: String %q Name %q, want %q %q", c.u, d.String(), d.Name(), c.str, c.name)
		}
	}
	a, b := MustParse("$/kg").Dim, MustParse("EUR*s").Dim
	if a.Mul(b) != b.Mul(a) || a.Mul(b).Div(b) != a || a.Div(a) != (Dim{}) {
		t.Error("Dim.Mul and Div should be commutative and inverse")
	}
}

func TestCurrency(t *testing.T) {
	usd, eur := Currency("$"), Currency("EUR")
	if usd.Compatible(eur) || usd.Compatible(Currency("USD")) {
		t.Error("currencies must be separate dimensions")
	}
	if eur != MustParse("EUR") || usd != MustParse("$") {
		t.Error("Currency and Parse should agree")
	}
	// Common ISO 4217 codes are all accepted (each checked present in
	// ISO 4217 as Debian's iso-codes 4.15.0 lists it, iso_4217.json).
	for _, code := range []string{"USD", "EUR", "GBP", "JPY", "CHF", "CNY", "CAD", "AUD", "SEK", "INR", "XAU"} {
		if u, err := Parse(code); err != nil || u.Dim != currencyDim(code) {
			t.Errorf("Parse(%q) = %v, %v; want a currency", code, u, err)
		}
	}
	if u := MustParse("kEUR"); u.Factor != 1e3 || u.Dim != eur.Dim {
		t.Errorf("kEUR = %v × %s, want 1000 × EUR", u.Factor, u.Dim)
	}
	for _, bad := range []string{"eur", "BTU", "EURO", "k$", "", "US$"} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Currency(%q) did not panic", bad)
				}
			}()
			Currency(bad)
		}()
	}
}

func TestMulDiv(t *testing.T) {
	kg, m, s := MustParse("kg"), MustParse("m"), MustParse("s")
	if got := kg.Mul(m).Div(s.Mul(s)); got != MustParse("kg*m/s^2") {
		t.Errorf("kg*m/s^2 by Mul/Div = %#v", got)
	}
	if got := kg.Mul(kg); got.String() != "kg^2" {
		t.Errorf("kg*kg = %s, want kg^2", got)
	}
	if got := One().Div(s); got.String() != "1/s" {
		t.Errorf("1/s = %s", got)
	}
	// A hand-built unit keeps factor and dimension; its text falls back to base units.
	hand := Unit{Factor: 2, Dim: kg.Dim}
	if got := hand.Mul(m); got.Factor != 2 || got.Dim != kg.Mul(m).Dim || got.String() != "kg*m (×2)" {
		t.Errorf("hand-built 2 kg times m = %#v (%s)", got, got)
	}
	if got := (Unit{Factor: 1, Dim: kg.Dim}).String(); got != "kg" {
		t.Errorf("hand-built kg prints %q", got)
	}
}
