package render

import (
	"fmt"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Screening renders derivative-based screening: each input's mean squared
// derivative and the upper bound it gives on the input's total-order index,
// ranked, and the bars of the bounds.
func Screening(s *sens.ScreenResult, o *Options) *Result {
	head := fmt.Sprintf("screening of %s: %s samples, one gradient each; variance %s", s.Output, count(s.N), squared(s.Variance, s.Unit))
	t := &table{head: []string{"input", "mean squared derivative", "bound on total-order index", ""},
		right: []bool{false, true, true, false}, textOnly: 1}
	shown := s.Inputs[:min(len(s.Inputs), maxTableRows)]
	for _, x := range shown {
		t.add(x.Name, unit.Format(x.DGSM, x.DGSMUnit), "≤ "+index3(x.TotalOrderBound), bar(x.TotalOrderBound, 16))
	}
	r := &Result{Kind: "screening", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
	r.note("an input whose bound is small cannot matter, whatever its interactions; a large bound calls for a closer look (sobol on the inputs that remain)")
	if rest := len(s.Inputs) - len(shown); rest > 0 {
		r.note(fmt.Sprintf("… and %s more inputs, each with a bound of at most %s", count(rest), index3(s.Inputs[len(shown)].TotalOrderBound)))
	}
	if len(s.UniformFromRange) > 0 {
		r.note(sens.RangeNotice(s.UniformFromRange) + ".")
	}
	if n := s.IgnoredCorrelations; n > 0 {
		r.note(fmt.Sprintf("the bound assumes independent inputs: %d declared rank %s left out", n, plural(n, "correlation is", "correlations are")))
	}
	ch := &plotting.Indices{Title: "Screening of " + s.Output, Output: s.Output, Series: []string{"bound on total-order index"},
		Axis:     "upper bound on the total-order Sobol' index",
		Subtitle: "Derivative-based upper bound on the share of the variance of " + s.Output + " each input can explain"}
	for _, x := range shown {
		ch.Items = append(ch.Items, plotting.IndexItem{Name: x.Name, Values: []float64{x.TotalOrderBound}})
	}
	r.attach(ch, o)
	return r
}
