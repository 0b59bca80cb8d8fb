package render

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Attribution renders the attribution of a change of an output to its
// inputs: each changed input's values at the two ends, its contribution and
// its share of the change, the residual and where the path is not smooth,
// with a waterfall chart from the output at one end to the other.
func Attribution(a *sens.AttributeResult, o *Options) *Result {
	shown := a.Inputs
	var hidden []sens.Contribution // beyond the table's rows: summed in the chart
	if len(shown) > maxTableRows {
		shown, hidden = shown[:maxTableRows], shown[maxTableRows:]
	}
	vals := []float64{a.ValueFrom, a.ValueTo, a.Change, a.Residual}
	for _, c := range a.Inputs {
		vals = append(vals, c.Value)
	}
	out := unit.NewColumn(a.Unit, vals...)
	var shares []float64
	for _, c := range a.Inputs {
		if c.SharePct != nil {
			shares = append(shares, *c.SharePct)
		}
	}
	if a.Rest != nil && a.Rest.SharePct != nil {
		shares = append(shares, *a.Rest.SharePct)
	}
	// One number of decimals for the whole column, as for money.
	pcts := unit.Aligned("%", shares...)
	pctOf := func(p *float64) string {
		if p == nil {
			return "—"
		}
		return pcts.Signed(*p)
	}
	tb := &table{head: []string{"input", a.From, a.To, "contribution", "% of change"}, right: []bool{false, true, true, true, true}}
	for _, c := range a.Inputs {
		tb.add(c.Name, unit.Format(c.From, c.Unit), unit.Format(c.To, c.Unit), out.Signed(c.Value), pctOf(c.SharePct))
	}
	if a.Rest != nil {
		tb.add(fmt.Sprintf("%s other %s", count(a.Rest.Count), plural(a.Rest.Count, "input", "inputs")), "", "", out.Signed(a.Rest.Value), pctOf(a.Rest.SharePct))
	}
	head := fmt.Sprintf("attribution of %s from %s (%s) to %s (%s): a change of %s, split among the inputs by integrating each one's partial derivative along the straight path between them",
		a.Output, a.From, out.Format(a.ValueFrom), a.To, out.Format(a.ValueTo), out.Signed(a.Change))
	r := &Result{Kind: "attribution", Data: a, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	if a.Unchanged > 0 {
		r.note(fmt.Sprintf("%s %s of %s %s the same at both ends: each contributes 0", count(a.Unchanged),
			plural(a.Unchanged, "input", "inputs"), a.Output, plural(a.Unchanged, "is", "are")))
	}
	r.note(residualNote(a, out))
	for _, br := range a.Breaks {
		r.note(breakNote(br, out))
	}
	if !a.Quadrature.Converged {
		r.note("the quadrature stopped refining panels narrower than 1e-9 of the path before they met their tolerance: the output is not smooth there")
	}

	ch := &plotting.Waterfall{Output: a.Output, Unit: a.Unit, From: a.From, To: a.To, Start: a.ValueFrom, End: a.ValueTo}
	for _, c := range shown {
		ch.Steps = append(ch.Steps, plotting.Step{Name: c.Name, Value: c.Value})
	}
	rest, restN := 0.0, 0
	for _, c := range hidden {
		rest += c.Value
		restN++
	}
	if a.Rest != nil {
		rest += a.Rest.Value
		restN += a.Rest.Count
	}
	if restN > 0 {
		ch.Rest = &plotting.Step{Name: count(restN) + " " + plural(restN, "other", "others"), Value: rest}
	}
	if !a.Met {
		ch.Unexplained = &plotting.Step{Name: "unexplained", Value: a.Residual}
	}
	r.attach(ch, o)
	return r
}

// residualNote says what the contributions leave unexplained, always.
func residualNote(a *sens.AttributeResult, out unit.Column) string {
	rel := "0"
	switch {
	case a.ResidualRel >= 1e-3:
		rel = strconv.FormatFloat(a.ResidualRel, 'g', 2, 64) // 0.57, not 5.7e-01
	case a.ResidualRel > 0:
		rel = strconv.FormatFloat(a.ResidualRel, 'e', 1, 64)
	}
	// The residual is written with its own digits, not the column's: a
	// money column's cents would show a residual of 1e-12 $ as $0.00. The
	// one formatter puts the unit where it goes ($ before the number).
	res := unit.Format(a.Residual, a.Unit)
	s := fmt.Sprintf("residual (change less the sum of the contributions): %s, %s of the change (target %s): ",
		res, rel, strconv.FormatFloat(a.Target, 'g', -1, 64))
	switch {
	case a.Met && a.ResidualRel > a.Target:
		s += "within the rounding of the output's value"
	case a.Met:
		s += "met"
	case a.Jumps != 0:
		s += fmt.Sprintf("not met: the output jumps by %s in all at steps on the path, which no input's derivative sees", out.Signed(a.Jumps))
	default:
		s += "not met"
	}
	return s + fmt.Sprintf("; Gauss–Legendre quadrature on %s %s of the path, %s gradients", count(a.Quadrature.Panels),
		plural(a.Quadrature.Panels, "panel", "panels"), count(a.Quadrature.Gradients))
}

// breakNote says where the path crosses a kink or a step.
func breakNote(br sens.PathBreak, out unit.Column) string {
	where := "at " + strconv.FormatFloat(math.Round(1000*br.T)/10, 'f', -1, 64) + "% of the way"
	if len(br.At) > 0 {
		where += " (" + strings.Join(br.At, ", ")
		if br.Count > len(br.At) {
			where += fmt.Sprintf(" and %s more", count(br.Count-len(br.At)))
		}
		where += ")"
	}
	if br.Kind == "step" {
		return fmt.Sprintf("the output jumps by %s %s: a step, not differentiable there; the jump stays in the residual", out.Signed(br.Jump), where)
	}
	return "the output bends " + where + ": a kink, where the path is split so that the quadrature stays exact on each side"
}
