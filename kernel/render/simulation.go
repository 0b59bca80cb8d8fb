package render

import (
	"fmt"
	"math"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Simulation renders a Monte Carlo simulation: the statistics of the output,
// the chance of exceeding a threshold, each input's rank correlation with the
// output (what drives the spread), the rank correlations imposed between
// inputs, notes on inputs drawn over their range and on samples that failed,
// and the histogram with its cumulative curve, P10, P50 and P90 marked.
func Simulation(s *sens.SimulationResult, o *Options) *Result {
	col := unit.NewColumn(s.Unit, s.Mean, s.StderrMean, s.SD, s.Min, s.P05, s.P10, s.P50, s.P90, s.P95, s.Max, s.Baseline)
	head := fmt.Sprintf("simulation of %s: %s samples (seed %d)", s.Output, count(s.N), s.Seed)
	if s.Failed > 0 {
		head += fmt.Sprintf(", of which %s could not be evaluated (%s)", count(s.Failed), Probability(float64(s.Failed)/float64(s.N)))
	}
	st := &table{head: []string{"statistic", s.Output}, right: []bool{false, true}}
	st.add("mean", col.Format(s.Mean))
	st.add("standard error of the mean", col.Format(s.StderrMean))
	st.add("standard deviation", col.Format(s.SD))
	st.add("minimum", col.Format(s.Min))
	for _, q := range []struct {
		name string
		v    float64
	}{{"P5", s.P05}, {"P10", s.P10}, {"P50 (median)", s.P50}, {"P90", s.P90}, {"P95", s.P95}} {
		st.add(q.name, col.Format(q.v))
	}
	st.add("maximum", col.Format(s.Max))
	st.add("baseline value", fmt.Sprintf("%s (P%.0f)", col.Format(s.Baseline), s.BaselinePercentile))
	if s.Above != nil {
		st.add("P("+s.Output+" > "+unit.Format(*s.Above, s.Unit)+")", Probability(*s.PAbove)+" ± "+Probability(*s.PAboveStderr))
	}
	r := &Result{Kind: "simulation", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + st.text(), html: st.html(head)}

	dt := &table{head: []string{"input", "rank correlation with " + s.Output, ""}, right: []bool{false, true, false}, textOnly: 1}
	shown := s.RankCorrelations[:min(len(s.RankCorrelations), maxTableRows)]
	rho := unit.Fixed("", 3)
	for _, rc := range shown {
		dt.add(rc.Name, rho.Signed(rc.Spearman), bar(math.Abs(rc.Spearman), 16))
	}
	driveHead := "what drives the spread: Spearman rank correlation of each input with " + s.Output
	r.text += "\n" + o.wrap(driveHead) + "\n" + dt.text()
	r.html += dt.html(driveHead)
	if rest := len(s.RankCorrelations) - len(shown); rest > 0 {
		r.note(fmt.Sprintf("… and %s more inputs, each with |rank correlation| at most %s", count(rest), rho.Format(math.Abs(s.RankCorrelations[len(shown)].Spearman))))
	}
	if len(s.Correlations) > 0 {
		ct := &table{head: []string{"inputs", "rank correlation asked for", "achieved"}, right: []bool{false, true, true}}
		for _, c := range s.Correlations {
			ct.add(c.Inputs[0]+", "+c.Inputs[1], rho.Signed(c.Requested), rho.Signed(c.Achieved))
		}
		corrHead := "rank correlations imposed between inputs (Iman–Conover)"
		r.text += "\n" + o.wrap(corrHead) + "\n" + ct.text()
		r.html += ct.html(corrHead)
	}
	if len(s.UniformFromRange) > 0 {
		r.note(sens.RangeNotice(s.UniformFromRange) + ".")
	}
	if ff := s.FirstFailure; ff != nil {
		r.note(fmt.Sprintf("%s samples could not be evaluated; the first, sample %d: %s", count(s.Failed), ff.Sample, ff.Message))
	}
	ch := &plotting.Distribution{Title: "Simulated distribution of " + s.Output, Output: s.Output, Unit: s.Unit, Samples: s.Samples,
		Markers: []plotting.Marker{{Label: "P10", Value: s.P10}, {Label: "P50", Value: s.P50}, {Label: "P90", Value: s.P90}}}
	if s.Above != nil && *s.Above >= s.Min && *s.Above <= s.Max {
		ch.Markers = append(ch.Markers, plotting.Marker{Label: "threshold", Value: *s.Above})
	}
	r.attach(ch, o)
	return r
}

// Probability writes a probability as a percentage with enough digits:
// "43.61%", "0.0123%", "0%".
func Probability(p float64) string {
	switch {
	case p == 0:
		return "0%"
	case p < 0.001:
		return fmt.Sprintf("%.3g%%", 100*p)
	}
	return fmt.Sprintf("%.2f%%", 100*p)
}
