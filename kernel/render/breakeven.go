package render

import (
	"fmt"
	"html"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Breakeven renders a break-even search: every value of the input where the
// output equals the target, its distance from the baseline, whether it lies in
// the stated range (or outside the input's domain, where the input would have
// to change sign) and the slope there; or why there is none; and a chart
// titled as a break-even, the output over the range with the target marked
// and the stated range shaded, whose note names the root finder used.
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
			tb.add(distinctText(vcol, c.Value, b), dcol.Signed(c.Distance), p, whereCrossing(b, c), slopeText(scol, c))
		}
		r.text += tb.text()
		r.html = tb.html(head)
		if len(b.Crossings) > 1 && len(b.Plateaus) == 0 {
			// As the table writes it: 1.00001, not 1, beside a pole at 1.
			r.note(fmt.Sprintf("%d crossings; the nearest to the baseline is %s = %s", len(b.Crossings), b.Input, distinctText(vcol, *b.Value, b)))
		}
		for _, c := range b.Crossings {
			if c.OutsideDomain {
				r.note(fmt.Sprintf("%s = %s is outside the domain of %s: it would have to change sign from its baseline %s", b.Input,
					unit.Format(c.Value, b.InputUnit), b.Input, unit.Format(b.BaselineInput, b.InputUnit)))
			}
		}
	} else {
		r.html = `<p class="nudge-value">` + html.EscapeString(head) + `</p>`
	}
	for _, p := range b.Plateaus {
		where := "outside the stated range"
		if p.InRange {
			where = "meeting the stated range"
		}
		switch {
		case p.OpenLow && p.OpenHigh:
			where += "; it goes on at both ends of the search"
		case p.OpenLow:
			where += "; it goes on below, to where the search ended"
		case p.OpenHigh:
			where += "; it goes on above, to where the search ended"
		}
		r.note(fmt.Sprintf("%s = %s on the whole interval %s = %s..%s (a plateau: the output is level at the target there, %s)",
			b.Output, unit.Format(b.Target, b.Unit), b.Input, unit.Format(p.Low, b.InputUnit), unit.Format(p.High, b.InputUnit), where))
	}
	if len(b.Plateaus) > 0 && len(b.Crossings)+len(b.Plateaus) > 1 && b.Value != nil {
		r.note(fmt.Sprintf("the value nearest the baseline where %s = %s is %s = %s", b.Output, unit.Format(b.Target, b.Unit), b.Input, unit.Format(*b.Value, b.InputUnit)))
	}
	if b.Message != "" {
		r.note(b.Message)
	} else {
		for n, j := range b.Jumps {
			if n == maxJumpNotes {
				r.note(fmt.Sprintf("… and %d more jumps past the target (all of them are in the JSON)", len(b.Jumps)-n))
				break
			}
			r.note(jumpText(b, j))
		}
	}
	for n, u := range b.Unresolved {
		if n == maxJumpNotes {
			r.note(fmt.Sprintf("… and %d more parts where the search failed (all of them are in the JSON)", len(b.Unresolved)-n))
			break
		}
		r.note(fmt.Sprintf("between %s = %s and %s the search failed, so a crossing there may be missing: %s", b.Input,
			unit.Format(u.Low, b.InputUnit), unit.Format(u.High, b.InputUnit), u.Reason))
	}
	if b.DomainNote != "" {
		r.note("searched " + unit.Format(b.SearchedLow, b.InputUnit) + ".." + unit.Format(b.SearchedHigh, b.InputUnit) + ": " + b.DomainNote)
	}
	if b.Method != "" {
		r.note(b.Method)
	}
	if len(b.Curve) > 1 {
		t := b.Target
		ch := &plotting.Sweep{Output: b.Output, Unit: b.Unit, Input: b.Input, InputUnit: b.InputUnit,
			Title:         fmt.Sprintf("Break-even: %s = %s over %s", b.Output, unit.Format(b.Target, b.Unit), b.Input),
			BaselineInput: b.BaselineInput, Baseline: b.BaselineOutput, Target: &t,
			Band: &plotting.Band{Low: b.Low, High: b.High, Label: "stated range of " + b.Input},
			// The engine's verified crossings, not the chart's
			// interpolation, which would take a jump or a pole past the
			// target for one.
			KnownRoots: true}
		for _, c := range b.Crossings {
			ch.Roots = append(ch.Roots, c.Value)
		}
		for _, p := range b.Plateaus {
			ch.Roots = append(ch.Roots, p.Low, p.High) // the plateau's ends
		}
		slices.Sort(ch.Roots)
		if b.Method != "" {
			ch.Notes = append(ch.Notes, b.Method)
		}
		for _, p := range b.Curve {
			ch.X = append(ch.X, p.X)
			ch.Y = append(ch.Y, p.Output)
		}
		r.attach(ch, o)
	}
	return r
}

// whereCrossing says whether a crossing lies in the stated range, or
// outside the input's domain.
func whereCrossing(b *sens.BreakevenResult, c sens.Crossing) string {
	switch {
	case c.OutsideDomain && b.BaselineInput > 0:
		return "no: outside the domain (" + b.Input + " < 0)"
	case c.OutsideDomain:
		return "no: outside the domain (" + b.Input + " > 0)"
	case c.InRange:
		return "yes"
	}
	return "no"
}

func slopeText(col unit.Column, c sens.Crossing) string {
	if c.Touch {
		return "touches"
	}
	return col.Format(c.Slope)
}

// maxJumpNotes is how many jumps a break-even's notes describe (tan(x) has
// a pole every π).
const maxJumpNotes = 5

// jumpText describes a jump past the target in the units of the output and
// the input. Where the search found the output running off towards infinity
// (Jump.Pole), the jump is said to be a pole, rather than quoting numbers
// such as 2.1e+17 found next to it; a jump location within a billionth of
// the input's scale of 0 is written as 0.
func jumpText(b *sens.BreakevenResult, j sens.Jump) string {
	x := j.Value
	if in := math.Max(math.Abs(b.BaselineInput), b.High-b.Low); math.Abs(x) < 1e-9*in {
		x = 0
	}
	at := fmt.Sprintf("%s = %s", b.Input, unit.Format(x, b.InputUnit))
	if j.Pole {
		return fmt.Sprintf("%s passes the target at %s through a pole, without equalling it: it runs off towards %s on one side and %s on the other",
			b.Output, at, infinity(j.Left), infinity(j.Right))
	}
	return fmt.Sprintf("%s jumps past the target at %s (from %s to %s) without equalling it",
		b.Output, at, unit.Format(j.Left, b.Unit), unit.Format(j.Right, b.Unit))
}

func infinity(v float64) string {
	if v < 0 {
		return "−∞"
	}
	return "+∞"
}

// distinctText writes a crossing's value by the column's rule, with more
// significant digits where that would print it the same as a jump or
// another crossing of a different value: 1/(price - 5) = 1e6 crosses at
// 5.000001, next to its pole at 5, and "5" would hide the difference.
func distinctText(col unit.Column, v float64, b *sens.BreakevenResult) string {
	s := col.Format(v)
	var clash []float64
	for _, j := range b.Jumps {
		if col.Format(j.Value) == s && j.Value != v {
			clash = append(clash, j.Value)
		}
	}
	for _, c := range b.Crossings {
		if c.Value != v && col.Format(c.Value) == s {
			clash = append(clash, c.Value)
		}
	}
	num := unit.Format(v, "")
	if len(clash) == 0 || !strings.Contains(s, num) {
		return s
	}
	for p := 5; p <= 17; p++ {
		t := strconv.FormatFloat(v, 'g', p, 64)
		apart := true
		for _, w := range clash {
			apart = apart && strconv.FormatFloat(w, 'g', p, 64) != t
		}
		if apart {
			return strings.Replace(s, num, t, 1)
		}
	}
	return s
}
