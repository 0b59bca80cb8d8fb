package kernel

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// run executes src in a new interpreter and returns the sink.
func runCell(t *testing.T, src string) (*captureSink, error) {
	t.Helper()
	s := &captureSink{}
	err := New().Execute(context.Background(), "model", src, s)
	return s, err
}

// jsonOf decodes the JSON object of the i-th result.
func jsonOf(t *testing.T, s *captureSink, i int) map[string]any {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(s.results[i].JSON(), &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// TestExchangeRates: currencies mix only under a stated rate; values and
// partials stay in the units written. Worked by hand: 120 EUR + 2 h × 50 $/h
// at 1 EUR = 1.08 $ is 120 + 100/1.08 = 212.59 EUR; ∂total/∂rate is
// 2 h / 1.08 = 1.852 EUR per $/h.
func TestExchangeRates(t *testing.T) {
	const model = "input parts = 120 [EUR]\ninput hours = 2 [h]\ninput rate = 50 [$/h]\ntotal = parts + hours * rate\n"
	_, err := runCell(t, model)
	if err == nil || !strings.Contains(err.Error(), "cannot add parts and hours * rate: units EUR and $ do not match (currency EUR vs currency $): state an exchange rate to mix them, e.g. exchange EUR = 1.1 [$]") {
		t.Fatalf("without a rate: %v", err)
	}
	s, err := runCell(t, "exchange EUR = 1.08 [$]\n"+model+"total\ndrivers total\nscenario cheap: rate = 40 [$/h]\ncompare total across base, cheap\nbreakeven total = 250 [$] over parts")
	if err != nil {
		t.Fatal(err)
	}
	v := jsonOf(t, s, 1)
	if v["unit"] != "EUR" || math.Abs(v["value"].(float64)-(120+100/1.08)) > 1e-9 {
		t.Errorf("total = %v %v", v["value"], v["unit"])
	}
	d := jsonOf(t, s, 2)
	for _, x := range d["inputs"].([]any) {
		in := x.(map[string]any)
		if in["name"] == "rate" && (in["partial_unit"] != "EUR/($/h)" || math.Abs(in["partial"].(float64)-2/1.08) > 1e-12) {
			t.Errorf("∂total/∂rate = %v %v", in["partial"], in["partial_unit"])
		}
	}
	c := jsonOf(t, s, 4)
	if sc := c["scenarios"].([]any)[1].(map[string]any); math.Abs(sc["delta"].(float64)+20/1.08) > 1e-9 {
		t.Errorf("cheap: Δ %v, want %v EUR", sc["delta"], -20/1.08)
	}
	// 250 $ is 231.48 EUR: parts must be 231.48 - 92.59 = 138.89 EUR.
	b := jsonOf(t, s, 5)
	if math.Abs(b["value"].(float64)-(250-100)/1.08) > 1e-6 {
		t.Errorf("break-even parts = %v, want %v", b["value"], 150/1.08)
	}
	for _, tc := range []struct{ src, want string }{
		{"exchange EUR = 1.08", "the rate of EUR must be a constant amount of another currency"},
		{"exchange FTE = 1 [$]", "FTE is not a currency"},
		{"exchange EUR = 1.08 [$]\nexchange $ = 1 [EUR]", "2:10: unexpected character '$'"},
		{"exchange EUR = 1.08 [$]\nexchange USD = 0.9 [EUR]\nexchange EUR = 1 [USD]", "3:10: the exchange rate of EUR is stated twice: first at line 1, column 10"},
		{"exchange USD = 0.9 [EUR]\nexchange EUR = 1 [USD]", "2:16: exchange rates form a cycle: EUR -> USD -> EUR"},
		{"exchange EUR = -1 [$]", "the rate of EUR must be a positive amount of $"},
	} {
		if _, err := runCell(t, tc.src); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: %v, want %q", tc.src, err, tc.want)
		}
	}
}

// TestBasis: every input with value, unit, range, where the range came from
// and its line; constants; rates; and the inputs of one output only.
func TestBasis(t *testing.T) {
	s, err := runCell(t, "exchange EUR = 1.08 [$]\ninput a = 2 [kg] (1..3)\ninput b = 5 [h] (±20%)\ninput c = 0.9 ~ pert(0.8, 0.9, 1.2)\ninput d = 10\ng = 9.81 [m/s^2]\ny = a * b * c * d\nbasis\nbasis y * a")
	if err != nil {
		t.Fatal(err)
	}
	all := jsonOf(t, s, 1)
	ins := all["inputs"].([]any)
	want := []struct {
		name, from, written string
		line                float64
	}{{"a", "stated", "(1..3)", 2}, {"b", "±% of the value", "(±20%)", 3}, {"c", "P10–P90 of the distribution", "pert(0.8, 0.9, 1.2)", 4}, {"d", "default ±10%", "", 5}}
	if len(ins) != len(want) {
		t.Fatalf("inputs %v", ins)
	}
	for i, w := range want {
		in := ins[i].(map[string]any)
		got := in["range"]
		if got == nil {
			got = in["distribution"]
		}
		if got == nil {
			got = ""
		}
		if in["name"] != w.name || in["range_from"] != w.from || got != w.written || in["line"] != w.line {
			t.Errorf("input %d: %v, want %+v", i, in, w)
		}
	}
	if b := ins[1].(map[string]any); b["low"] != 4.0 || b["high"] != 6.0 || b["unit"] != "h" {
		t.Errorf("b: %v", b)
	}
	if cs := all["constants"].([]any); len(cs) != 1 || cs[0].(map[string]any)["name"] != "g" {
		t.Errorf("constants %v", cs)
	}
	if rs := all["rates"].([]any); len(rs) != 1 {
		t.Errorf("rates %v", rs)
	}
	text := s.results[1].Text()
	for _, w := range []string{"P10–P90 of the distribution", "model:4", "exchange rate: 1 EUR = $1.08"} {
		if !strings.Contains(text, w) {
			t.Errorf("basis text lacks %q:\n%s", w, text)
		}
	}
	one := jsonOf(t, s, 2)
	if one["output"] != "y * a" || len(one["inputs"].([]any)) != 4 || len(one["constants"].([]any)) != 0 {
		t.Errorf("basis of y * a: %v", one)
	}
	if _, err := runCell(t, "input a = 1\nbasis b"); err == nil || !strings.Contains(err.Error(), "2:7: undefined: b") {
		t.Errorf("basis of an undefined name: %v", err)
	}
}

// TestHelp: help lists every command of the table with its form; help
// COMMAND gives one command's options; an unknown one suggests a verb.
func TestHelp(t *testing.T) {
	s, err := runCell(t, "help\nhelp sweep")
	if err != nil {
		t.Fatal(err)
	}
	all := s.results[0].Text()
	for v, c := range commands {
		if !strings.Contains(all, c.Usage()) {
			t.Errorf("help lacks %s: %s", v, c.Usage())
		}
	}
	one := s.results[1].Text()
	for _, w := range []string{"sweep OUT over X a..b [and Y c..d] [n=N] [steps=N] [target=T]", "example: sweep total over rate 40..80 and hours 1..2", "steps=N"} {
		if !strings.Contains(one, w) {
			t.Errorf("help sweep lacks %q:\n%s", w, one)
		}
	}
	if _, err := runCell(t, "help tornadoo"); err == nil || !strings.Contains(err.Error(), "no command tornadoo (did you mean tornado?)") {
		t.Errorf("help tornadoo: %v", err)
	}
}
