package render

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Interactions renders the interaction ranking of an output: the pairs of
// inputs by their mixed second derivative scaled by both range widths, the
// inputs' curvatures on the same scale, where the output is not twice
// differentiable, and the pair map of the strongest inputs.
func Interactions(d *sens.InteractionsResult, o *Options) *Result {
	var vals []float64
	for _, p := range d.Pairs {
		vals = append(vals, p.Scaled)
	}
	for _, c := range d.Curvatures {
		vals = append(vals, c.Scaled)
	}
	col := unit.NewColumn(d.Unit, vals...)
	bw := max(o.width()/4, 8)
	tb := &table{head: []string{"inputs", "∂²" + wrapExpr(d.Output) + "/∂a∂b", "× both widths", "share", ""},
		right: []bool{false, true, true, true, false}, textOnly: 1}
	shown := 0
	for _, p := range d.Pairs {
		if p.Mixed == 0 {
			continue // counted in the note; the JSON keeps them
		}
		shown++
		tb.add(p.A+" × "+p.B, unit.Format(p.Mixed, p.MixedUnit), col.Signed(p.Scaled), share(p.Share), bar(p.Share, bw))
	}
	head := fmt.Sprintf("interactions of %s = %s at the baseline: pairs of inputs ranked by their mixed second derivative times both inputs' range widths (high − low)",
		d.Output, unit.Format(d.Value, d.Unit))
	r := &Result{Kind: "interactions", Data: d, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	switch n := d.PairsNonzero + d.PairsZero; {
	case n == 0:
		r.note(fmt.Sprintf("%s depends on one input only: there is no pair to interact", d.Output))
	case d.PairsNonzero == 0:
		r.note(fmt.Sprintf("no pair of inputs interacts at the baseline: every mixed partial of the %s %s is exactly 0, so the inputs' effects add",
			count(n), plural(n, "pair", "pairs")))
	case d.PairsZero == 0 && shown == d.PairsNonzero:
		if n == 1 {
			r.note("the only pair of inputs interacts at the baseline")
		} else {
			r.note(fmt.Sprintf("all %s pairs of inputs interact at the baseline", count(n)))
		}
	case shown < d.PairsNonzero:
		r.note(fmt.Sprintf("%d of the %s interacting pairs shown (top=N shows more); %s of the %s pairs do not interact (mixed partial exactly 0: their effects add)",
			shown, count(d.PairsNonzero), count(d.PairsZero), count(n)))
	default:
		r.note(fmt.Sprintf("%s of the %s pairs interact at the baseline; the other %s do not (mixed partial exactly 0: their effects add)",
			count(d.PairsNonzero), count(n), count(d.PairsZero)))
	}
	if d.Columns < d.Inputs {
		r.note(fmt.Sprintf("of %s inputs, the %s of largest first-order swing are paired with every input; pairs of two other inputs are not computed",
			count(d.Inputs), count(d.Columns)))
	}
	var cs []string
	for _, c := range d.Curvatures {
		if c.Second != 0 && len(cs) < 8 {
			cs = append(cs, fmt.Sprintf("%s %s", c.Name, col.Signed(c.Scaled)))
		}
	}
	if len(cs) > 0 {
		r.note("curvature, ∂²" + wrapExpr(d.Output) + "/∂x² × width²: " + strings.Join(cs, ", ") + "; the other inputs enter linearly")
	} else {
		r.note("no input has curvature of its own: the output is linear in each input taken alone")
	}
	if len(d.NotSmooth) > 0 {
		r.note(fmt.Sprintf("not twice differentiable at the baseline, so the second derivatives there are the one-sided ones of the branch taken: %s",
			strings.Join(d.NotSmooth, "; ")))
	}
	if len(d.DefaultRanges) > 0 {
		r.note(fmt.Sprintf("widths from the default ±%d%% range: %s", sens.DefaultRangePct, strings.Join(d.DefaultRanges, ", ")))
	}
	r.note("a local measure at the baseline: a pair with a mixed partial of 0 here may still interact elsewhere in its ranges (sobol OUT measures that globally)")
	blank := true
	for _, row := range d.Map.Scaled {
		for _, v := range row {
			blank = blank && v == 0
		}
	}
	if blank {
		// A map of zeros, keyed "≤0 ≤0 ≤0", says nothing the notes do not.
		r.note("no pair map: every mixed partial and curvature it would show is 0")
		return r
	}
	r.attach(&plotting.PairMap{Output: d.Output, Unit: d.Unit, Names: d.Map.Inputs, Z: d.Map.Scaled}, o)
	return r
}

// interactionsTables are the CSV tables of an interactions result: the
// pairs, then the curvatures.
func interactionsTables(d *sens.InteractionsResult) []CSVTable {
	rows := [][]string{{"a", "b", "mixed", "mixed_unit", "scaled", "scaled_unit", "share"}}
	for _, p := range d.Pairs {
		rows = append(rows, []string{p.A, p.B, num(p.Mixed), p.MixedUnit, num(p.Scaled), d.Unit, num(p.Share)})
	}
	cs := [][]string{{"input", "second", "second_unit", "scaled", "scaled_unit"}}
	for _, c := range d.Curvatures {
		cs = append(cs, []string{c.Name, num(c.Second), c.SecondUnit, num(c.Scaled), d.Unit})
	}
	return []CSVTable{{Rows: rows}, {Name: "curvatures", Rows: cs}}
}
