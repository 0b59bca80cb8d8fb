package render

import (
	"fmt"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Morris renders elementary effects: each input's range, mu, mu* and sigma
// in the output's unit per whole range, ranked by mu*, and the mu*–sigma
// chart.
func Morris(m *sens.MorrisResult, o *Options) *Result {
	u := m.Unit
	shown := m.Inputs[:min(len(m.Inputs), maxTableRows)]
	var vals []float64
	for _, x := range shown {
		vals = append(vals, x.Mu, x.MuStar, x.Sigma)
	}
	col := unit.NewColumn(u, vals...)
	head := fmt.Sprintf("elementary effects on %s: %d trajectories on a grid of %d levels (%s evaluations); effects in %s per each input's whole range",
		m.Output, m.R, m.Levels, count(m.Evaluations), orWord(u, "the output's unit"))
	t := &table{head: []string{"input", "range", "mu", "mu*", "sigma"}, right: []bool{false, true, true, true, true}}
	for _, x := range shown {
		t.add(x.Name, unit.Format(x.Low, x.Unit)+" .. "+unit.Format(x.High, x.Unit), col.Format(x.Mu), col.Format(x.MuStar), col.Format(x.Sigma))
	}
	r := &Result{Kind: "morris", Data: m, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + t.text(), html: t.html(head)}
	r.note("mu* ranks the inputs by influence; a sigma as large as mu* or larger marks an effect that changes with the other inputs (a curve or an interaction)")
	if rest := len(m.Inputs) - len(shown); rest > 0 {
		r.note(fmt.Sprintf("… and %s more inputs, each with mu* at most %s", count(rest), unit.Format(m.Inputs[len(shown)].MuStar, u)))
	}
	ch := &plotting.Effects{Output: m.Output, Unit: u}
	for _, x := range m.Inputs {
		ch.Items = append(ch.Items, plotting.EffectItem{Name: x.Name, MuStar: x.MuStar, Sigma: x.Sigma})
	}
	r.attach(ch, o)
	return r
}

func orWord(s, def string) string {
	if s == "" {
		return def
	}
	return s
}
