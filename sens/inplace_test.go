package sens

import (
	"errors"
	"strings"
	"testing"
)

// A domain error inside a roll-up whose columns the tape reads in place
// (Fn.Eval and Fn.Gradient, through tape.Value) is reported at its formula,
// line and column, and names the row where it arose: here the square root
// of line 8's quantity, set negative, at the column where sqrt begins in
// the model's text.
func TestInPlaceErrorNamesFormulaAndRow(t *testing.T) {
	const model = `table bid = "bid.csv" key item
input qty = bid.qty (±5%)
input k   = 0 (0..1)
total = sum(sqrt(qty - k))
`
	p, _ := loadBid(t, 40, model)
	pr, err := p.Problem("total")
	if err != nil {
		t.Fatal(err)
	}
	x := pr.Baseline()
	if _, err := pr.F.Eval(x); err != nil {
		t.Fatal(err)
	}
	x[7] = -1 // qty of line 8
	key := p.Vector("qty").Keys[7]
	col := strings.Index(strings.Split(model, "\n")[3], "sqrt") + 1
	for what, f := range map[string]func() error{
		"Eval":     func() error { _, err := pr.F.Eval(x); return err },
		"Gradient": func() error { _, err := pr.F.Gradient(make([]float64, len(x)), x); return err },
	} {
		var ee *EvalError
		if err := f(); !errors.As(err, &ee) || ee.Formula != "total" || ee.Pos.Line != 4 || ee.Pos.Column != col ||
			!strings.Contains(ee.Msg, "square root of a negative number (-1)") || !strings.Contains(ee.Msg, key) {
			t.Errorf("%s: %v (%+v), want the square root at 4:%d of total, in row %s", what, err, ee, col, key)
		}
	}
}
