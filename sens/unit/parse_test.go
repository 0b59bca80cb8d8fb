package unit

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestParseErrors(t *testing.T) {
	deep := strings.Repeat("(", maxDepth+1) + "m" + strings.Repeat(")", maxDepth+1)
	for _, c := range []struct {
		in     string
		offset int
		msg    string
	}{
		{"", 0, "empty unit"},
		{"   ", 0, "empty unit"},
		{"kg/", 3, "expected a unit after '/', found end of text"},
		{"kg*", 3, "expected a unit after '*', found end of text"},
		{"kg·", 4, "expected a unit after '·', found end of text"},
		{"^2", 0, "expected a unit, found '^'"},
		{"m^x", 2, `expected an integer exponent after '^', found "x"`},
		{"m^", 2, "expected an integer exponent after '^', found end of text"},
		{"m^2.5", 2, "expected an integer exponent after '^', found 2.5"},
		{"m^-", 3, "expected an integer exponent after '^', found end of text"},
		{"m^(1/2)", 4, "fractional exponents are not supported"},
		{"m^(2", 4, "expected ')' after the exponent, found end of text"},
		{"m^100", 2, "exponent 100 out of range (limit ±99)"},
		{"m100", 1, "exponent 100 out of range (limit ±99)"},
		{"(m^50)^2", 6, "exponent of m out of range: 100 (limit ±99)"},
		{"m^99*m", 4, "exponent of m out of range: 100 (limit ±99)"},
		{"Mt^99", 0, "scale factor of Mt^99 out of floating-point range"},
		{"m^2^3", 3, "a second exponent needs parentheses, as in (m^2)^3"},
		{"m2^3", 2, "a second exponent needs parentheses, as in (m^2)^3"},
		{"m²²²", 1, "exponent ²²² out of range (limit ±99)"},
		{"m²⁻", 3, `malformed superscript exponent "²⁻"`},
		{"m⁻", 1, `malformed superscript exponent "⁻"`},
		{"(kg", 3, "expected ')' to match '(' at offset 0, found end of text"},
		{"(kg m)", 4, `expected '*', '/' or ')', found "m"`},
		{"kg)", 2, "unmatched ')'"},
		{"()", 1, "expected a unit, found ')'"},
		{"kg m", 3, `expected '*' or '/' between units, found "m"`},
		{"kg 2", 3, "expected '*' or '/' between units, found 2"},
		{"2*kg", 0, "a number in a unit must be 1 (dimensionless), found 2"},
		{"1e3", 0, "a number in a unit must be 1 (dimensionless), found 1e3"},
		{"kg,m", 2, "unexpected character ','"},
		{"kg+m", 2, "expected '*' or '/' between units, found '+'"},
		{"\xff", 0, "unexpected character byte 0xff"},
		{deep, maxDepth, "parentheses nested too deeply (limit 32)"},
		{"kgg", 0, `unknown unit "kgg" (did you mean kg?)`},
		{"$/kgg", 2, `unknown unit "kgg" (did you mean kg?)`},
		{"KWH", 0, `unknown unit "KWH" (did you mean kWh?)`},
		{"Kg", 0, `unknown unit "Kg" (did you mean kg?)`},
		{"mw", 0, `unknown unit "mw" (did you mean mW or MW?)`},
		{"eur", 0, `unknown unit "eur" (did you mean EUR?)`},
		{"hours", 0, `unknown unit "hours" (did you mean h?)`},
		{"inches", 0, `unknown unit "inches" (did you mean in?)`},
		{"lbs", 0, `unknown unit "lbs" (did you mean lb?)`},
		{"kgs", 0, `unknown unit "kgs" (did you mean kg?)`},
		{"kilowat", 0, `unknown unit "kilowat" (did you mean kW?)`},
		{"xyzzy", 0, `unknown unit "xyzzy"`},
		{"$M", 0, `ambiguous unit "$M": M stands for a thousand in some trades and a million in others: write M$ (or $MM) for a million, k$ for a thousand`},
		{"€M", 0, `ambiguous unit "€M": M stands for a thousand in some trades and a million in others: write M€ (or €MM) for a million, k€ for a thousand`},
		// Three capitals name a currency only when ISO 4217 lists them.
		{"FTE", 0, `unknown unit "FTE": a count of people has no unit: leave the brackets out or write [1] (person-hours are [h], a cost per person [$])`},
		{"XYZ", 0, `unknown unit "XYZ": not an ISO 4217 currency code; a count has no unit: leave the brackets out, or write [1]`},
		{"$/FTE", 2, `unknown unit "FTE": a count of people has no unit: leave the brackets out or write [1] (person-hours are [h], a cost per person [$])`},
		{"person*h", 0, `unknown unit "person": a count of people has no unit: leave the brackets out or write [1] (person-hours are [h], a cost per person [$])`},
		{"manhours", 0, `unknown unit "manhours": person-hours are hours: write [h] (a count of people has no unit)`},
		{"°C", 0, `temperature scale "°C" has an offset and cannot scale a value: use K for temperature differences`},
		{"ton", 0, `ambiguous unit "ton": write t for the tonne (1000 kg); short and long tons are not supported`},
	} {
		_, err := Parse(c.in)
		var e *Error
		if !errors.As(err, &e) {
			t.Errorf("Parse(%q) error = %v, want *Error", c.in, err)
			continue
		}
		if e.Offset != c.offset || e.Msg != c.msg {
			t.Errorf("Parse(%q) error at %d: %q; want at %d: %q", c.in, e.Offset, e.Msg, c.offset, c.msg)
		}
	}
}

func TestErrorText(t *testing.T) {
	_, err := Parse("kgg")
	if got, want := err.Error(), `offset 0: unknown unit "kgg" (did you mean kg?)`; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
}

// FuzzParse checks that Parse never panics, that its errors are well formed, and that every
// unit it accepts prints to text that parses back to the same unit.
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"kg", "$/kg", "$/h", "kWh", "m^2", "m2", "kg*m/s^2", "$/(kg*h)", "1", "EUR/kg", "%",
		"", "kg/", "^2", "m^x", "(kg", "kgg", "m²", "s⁻¹", "kg·m", "1/s", "k$/yr", "MM$",
		"(m^50)^2", "m^(-2)", "µm*μm/um", "((kg))", "°C", "\xff", "Mt^99",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		u, err := Parse(s)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Parse(%q) error %v is not *Error", s, err)
			}
			if e.Offset < 0 || e.Offset > len(s) || e.Msg == "" {
				t.Fatalf("Parse(%q) error offset %d of %d, message %q", s, e.Offset, len(s), e.Msg)
			}
			return
		}
		if !(u.Factor > 0) || math.IsInf(u.Factor, 0) {
			t.Fatalf("Parse(%q) factor %v", s, u.Factor)
		}
		v, err := Parse(u.String())
		if err != nil || v != u {
			t.Fatalf("Parse(%q) = %#v; its text %q parses to %#v, %v", s, u, u.String(), v, err)
		}
		if q := u.Div(u); !q.Dim.IsDimensionless() {
			t.Fatalf("(%s)/(%s) has dimension %s", u, u, q.Dim)
		}
		if w := Simplest(u.Dim); w.text != "" {
			if x, err := Parse(w.String()); err != nil || x != w {
				t.Fatalf("Simplest(%s) = %q does not parse back: %v", u.Dim, w, err)
			}
		}
	})
}

func benchmarkParse(b *testing.B, s string) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Parse(s); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkParseSymbol(b *testing.B)   { benchmarkParse(b, "kg") }
func BenchmarkParseCompound(b *testing.B) { benchmarkParse(b, "$/(kg*h)") }
func BenchmarkParseLong(b *testing.B)     { benchmarkParse(b, "kg*m^2/(s^3*A)*mol/cd*k$/yr*EUR/$") }
