package render

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Sobol renders Sobol' indices: each input's first-order and total-order
// index with its bootstrap interval, ranked by total order, notes on
// interactions, on a ranking the sample cannot settle and on correlations
// left out, and the index bars with their intervals.
func Sobol(s *sens.SobolResult, o *Options) *Result {
	head := fmt.Sprintf("Sobol' indices of %s: n = %s (%s evaluations), variance %s; %.0f%% bootstrap intervals from %s resamples",
		s.Output, count(s.N), count(s.Evaluations), squared(s.Variance, s.Unit), 100*s.Confidence, count(s.Bootstrap))
	t := &table{head: []string{"input", "first order", "interval", "total order", "interval", ""},
		right: []bool{false, true, true, true, true, false}, textOnly: 1}
	shown := s.Inputs[:min(len(s.Inputs), maxTableRows)]
	iv := func(ci [2]float64) string { return "[" + index3(ci[0]) + ", " + index3(ci[1]) + "]" }
	for _, x := range shown {
		t.add(x.Name, index3(x.FirstOrder), iv(x.FirstOrderCI), index3(x.TotalOrder), iv(x.TotalOrderCI), bar(x.TotalOrder, 16))
	}
	r := &Result{Kind: "sobol", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
	r.note(fmt.Sprintf("first-order indices sum to %s: %s", index3(s.SumFirstOrder), interactions(s.SumFirstOrder)))
	if rest := len(s.Inputs) - len(shown); rest > 0 {
		r.note(fmt.Sprintf("… and %s more inputs, each with a total-order index at most %s", count(rest), index3(s.Inputs[len(shown)].TotalOrder)))
	}
	if len(s.Unsettled) > 0 {
		r.note(Unsettled(s.Unsettled, s.Confidence))
	}
	if len(s.UniformFromRange) > 0 {
		r.note(sens.RangeNotice(s.UniformFromRange) + ".")
	}
	if n := s.IgnoredCorrelations; n > 0 {
		r.note(fmt.Sprintf("the indices assume independent inputs: %d declared rank %s left out", n, plural(n, "correlation is", "correlations are")))
	}
	ch := &plotting.Indices{Title: "Sobol' indices of " + s.Output, Output: s.Output, Series: []string{"first order", "total order"},
		Interval: fmt.Sprintf("%.0f%% bootstrap interval", 100*s.Confidence), Axis: "Sobol' index"}
	for _, x := range shown {
		ch.Items = append(ch.Items, plotting.IndexItem{Name: x.Name, Values: []float64{x.FirstOrder, x.TotalOrder},
			Lo: []float64{x.FirstOrderCI[0], x.TotalOrderCI[0]}, Hi: []float64{x.FirstOrderCI[1], x.TotalOrderCI[1]}})
	}
	r.attach(ch, o)
	return r
}

// Unsettled says which neighbours in a ranking by total-order index the
// sample cannot order: those a larger n would separate, with the n that
// separates them all, and those practically tied.
func Unsettled(us []sens.UnsettledPair, conf float64) string {
	var apart, tied []string
	settle := 0
	for _, u := range us {
		pair := u.Inputs[0] + " and " + u.Inputs[1]
		if u.SettleN == 0 {
			tied = append(tied, pair)
			continue
		}
		apart = append(apart, pair)
		settle = max(settle, u.SettleN)
	}
	var parts []string
	if len(apart) > 0 {
		parts = append(parts, fmt.Sprintf("the order of %s is not settled (their %.0f%% intervals of the total-order index overlap): n=%s would settle it",
			strings.Join(apart, ", "), 100*conf, count(settle)))
	}
	if len(tied) > 0 {
		parts = append(parts, fmt.Sprintf("%s are too close to order at any practical n: their total-order indices may be equal", strings.Join(tied, ", ")))
	}
	return strings.Join(parts, "; ")
}

// index3 writes an index with three decimals, without the sign of a
// negative value that rounds to zero.
func index3(v float64) string { return unit.Fixed("", 3).Format(v) }

// interactions reads the sum of the first-order indices.
func interactions(sum float64) string {
	if sum > 0.95 {
		return "the output is close to additive in its inputs"
	}
	return fmt.Sprintf("about %.0f%% of the variance comes from interactions between inputs", 100*(1-sum))
}

// squared writes a variance with its unit squared: "4,799 k$^2", "12 (kg/h)^2".
func squared(v float64, u string) string {
	switch {
	case u == "":
		return unit.Format(v, "")
	case strings.ContainsAny(u, "/*^ "):
		return unit.Format(v, "") + " (" + u + ")^2"
	}
	return unit.Format(v, "") + " " + u + "^2"
}
