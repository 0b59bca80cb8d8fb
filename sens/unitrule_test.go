package sens

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestTrailingBracket is the table of the trailing-bracket rule (unitrule.go):
// each line, after the inputs m = 2 kg, x = 3 h and r = 50 $/h, is read with
// the unit expected, or fails with the error expected. The values are worked
// by hand: 2 h × 50 $/h + 3 × 12 $ = 136 $, the first example of the rule.
func TestTrailingBracket(t *testing.T) {
	const inputs = "input m = 2 [kg]\ninput x = 3 [h]\ninput r = 50 [$/h]\n"
	for _, tc := range []struct {
		line     string
		value    float64 // in unit
		unit     string
		declared bool   // the bracket was read as the line's declared unit
		err      string // the error expected instead
	}{
		// The two examples.
		{line: "y = m * 3 [$]", err: "4:11: y is declared [$] (currency $) but its formula gives kg (mass): if [$] is the unit of 3, write (3 [$])"},
		{line: "c = 2 [h] * 50 [$/h] + 3 * 12 [$]", value: 136, unit: "$"},
		// Declared units that check, converted for display.
		{line: "z = m * 2 [kg]", value: 4, unit: "kg", declared: true},
		{line: "d = m * 4 [g]", value: 8000, unit: "g", declared: true},
		{line: "e = x * r [k$]", value: 0.15, unit: "k$", declared: true},
		// A declared unit that fails is reported, whatever number ends the line.
		{line: "f = m * x / 1 [h]", err: "4:15: f is declared [h] (time) but its formula gives kg*h (mass × time): if [h] is the unit of 1, write (1 [h])"},
		{line: "g = m * 5 [$/kg]", err: "4:11: g is declared [$/kg] (currency $ per mass) but its formula gives kg (mass): if [$/kg] is the unit of 5, write (5 [$/kg])"},
		{line: "h = x * r [kg]", err: "4:11: h is declared [kg] (mass) but its formula gives $ (currency $)"},
		// Parentheses make the bracket the number's.
		{line: "p = m * (5 [$/kg])", value: 10, unit: "$"},
		{line: "q = r * (x - 30 [min])", value: 125, unit: "$"},
		// Only the number's reading checks: a sum of money and a plain number.
		{line: "s = x * r + 20 [$]", value: 170, unit: "$"},
		{line: "w = x * r - 2 * 10 [$]", value: 130, unit: "$"},
		{line: "v = r * (x + 1 [h]) + 5 [$]", value: 205, unit: "$"},
		// Neither reading checks: the bare reading's error stands.
		{line: "bad = m + 3 [$]", err: "4:9: cannot add m and 3: units kg and 1 do not match (mass vs dimensionless)"},
		// A constant written without units takes the declared unit, as an
		// input's value does.
		{line: "fee = 3 * 12 [$]", value: 36, unit: "$", declared: true},
		{line: "neg = -5 [$]", value: -5, unit: "$", declared: true},
		{line: "g0 = 9.81 [m/s^2]", value: 9.81, unit: "m/s^2", declared: true},
	} {
		t.Run(tc.line, func(t *testing.T) {
			m, err := LoadModel("test", []byte(inputs+tc.line+"\n"))
			if err != nil {
				t.Fatal(err)
			}
			p, err := m.Compile()
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			name, _, _ := strings.Cut(tc.line, " =")
			fn, err := p.Fn(name)
			if err != nil {
				t.Fatal(err)
			}
			y, err := fn.Eval(p.Baseline())
			fm := fn.Formula()
			if err != nil || fm.Unit != tc.unit || fm.Declared != tc.declared || !scalar.EqualWithinAbsOrRel(y, tc.value, 1e-12, 1e-12) {
				t.Errorf("%s = %v %s (declared %v, %v), want %v %s (declared %v)", name, y, fm.Unit, fm.Declared, err, tc.value, tc.unit, tc.declared)
			}
		})
	}
}
