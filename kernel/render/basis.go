package render

import (
	"fmt"
	"strconv"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Basis renders the basis of estimate: a table of the inputs (value, range,
// where the range came from, distribution, line), then the constants and
// the exchange rates.
func Basis(b *sens.BasisResult, o *Options) *Result {
	head := "basis of estimate: every input, its range and where it came from"
	if b.Output != "" {
		head = "basis of estimate of " + b.Output + ": its inputs, their ranges and where they came from"
	}
	tb := &table{head: []string{"input", "value", "low", "high", "range from", "as written", "line"},
		right: []bool{false, true, true, true, false, false, true}}
	for _, in := range b.Inputs {
		written := in.Range
		if in.Distribution != "" {
			if written != "" {
				written += " "
			}
			written += "~ " + in.Distribution
		}
		tb.add(in.Name, unit.Format(in.Value, in.Unit), unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit),
			in.RangeFrom, written, where(in.File, in.Line))
	}
	r := &Result{Kind: "basis", Data: b, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	if len(b.Inputs) == 0 {
		r.note("no inputs")
	}
	if len(b.Constants) > 0 {
		ct := &table{head: []string{"constant", "value", "formula", "line"}, right: []bool{false, true, false, true}}
		for _, c := range b.Constants {
			ct.add(c.Name, unit.Format(c.Value, c.Unit), c.Formula, where(c.File, c.Line))
		}
		r.text += "\n" + ct.text()
		r.html += ct.html("constants: formulas that use no input and never vary")
	}
	for _, x := range b.Rates {
		r.note(fmt.Sprintf("exchange rate: 1 %s = %s (line %d)", x.Code, unit.Format(x.Rate, x.In), x.Pos.Line))
	}
	return r
}

// where writes a declaration's place: "model.nudge:4".
func where(file string, line int) string {
	if file == "" {
		return strconv.Itoa(line)
	}
	return file + ":" + strconv.Itoa(line)
}
