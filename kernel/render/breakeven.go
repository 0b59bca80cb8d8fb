package render

import (
	"fmt"
	"html"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Breakeven renders a break-even search: every value of the input where the
// output equals the target, its distance from the baseline, whether it lies in
// the stated range and the slope there; or why there is none; and the output
// over the range with the target marked.
func Breakeven(b *sens.BreakevenResult, o *Options) *Result {
	head := fmt.Sprintf("breakeven: %s = %s over %s (baseline %s gives %s; stated range %s..%s)", b.Output, unit.Format(b.Target, b.Unit), b.Input,
		unit.Format(b.BaselineInput, b.InputUnit), unit.Format(b.BaselineOutput, b.Unit), unit.Format(b.Low, b.InputUnit), unit.Format(b.High, b.InputUnit))
	r := &Result{Kind: "breakeven", Data: b, Caution: true, width: o.width(), text: o.wrap(head) + "\n"}
	if len(b.Crossings) > 0 {
		var vs, ds, ss []float64
		for _, c := range b.Crossings {
			vs, ds, ss = append(vs, c.Value), append(ds, c.Distance), append(ss, c.Slope)
		}
		vcol, dcol, scol := unit.NewColumn(b.InputUnit, vs...), unit.NewColumn(b.InputUnit, ds...), unit.NewColumn(b.SlopeUnit, ss...)
		tb := &table{head: []string{b.Input, "change", "change %", "in range", "slope"}, right: []bool{true, true, true, false, true}}
		for _, c := range b.Crossings {
			p := "—"
			if c.DistancePct != nil {
				p = unit.Signed(*c.DistancePct, "%")
			}
			where := "no"
			if c.InRange {
				where = "yes"
			}
			slope := scol.Format(c.Slope)
			if c.Touch {
				slope = "touches"
			}
			tb.add(vcol.Format(c.Value), dcol.Signed(c.Distance), p, where, slope)
		}
		r.text += tb.text()
		r.html = tb.html(head)
		if len(b.Crossings) > 1 {
			r.note(fmt.Sprintf("%d crossings; the nearest to the baseline is %s = %s", len(b.Crossings), b.Input, unit.Format(*b.Value, b.InputUnit)))
		}
	} else {
		r.html = `<p class="nudge-value">` + html.EscapeString(head) + `</p>`
	}
	if b.Message != "" {
		r.note(b.Message)
	} else {
		for _, j := range b.Jumps {
			r.note(fmt.Sprintf("%s jumps past the target at %s = %s (from %s to %s) without equalling it",
				b.Output, b.Input, unit.Format(j.Value, b.InputUnit), unit.Format(j.Left, b.Unit), unit.Format(j.Right, b.Unit)))
		}
	}
	if b.DomainNote != "" {
		r.note("searched " + unit.Format(b.SearchedLow, b.InputUnit) + ".." + unit.Format(b.SearchedHigh, b.InputUnit) + ": " + b.DomainNote)
	}
	if len(b.Curve) > 1 {
		t := b.Target
		ch := &plotting.Sweep{Output: b.Output, Unit: b.Unit, Input: b.Input, InputUnit: b.InputUnit,
			BaselineInput: b.BaselineInput, Baseline: b.BaselineOutput, Target: &t}
		for _, p := range b.Curve {
			ch.X = append(ch.X, p.X)
			ch.Y = append(ch.Y, p.Output)
		}
		r.attach(ch, o)
	}
	return r
}
