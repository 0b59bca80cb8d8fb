package render

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/nudge-dev/nudge/sens"
)

// CSVTable is one table of a result for export: a name ("" for the result's
// main table, else a suffix such as "constants") and rows of cells, the
// first row the header. Numbers are plain ("1234.5", never "$1,234.50"), in
// the units the result shows, and each quantity column is followed by a
// column of its unit.
type CSVTable struct {
	Name string
	Rows [][]string
}

// WriteCSV writes the table with encoding/csv.
func (t *CSVTable) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(t.Rows); err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// Tables returns the tables of a result for export; none for a result
// without one (a print, a rate, help).
func (r *Result) Tables() []CSVTable {
	switch d := r.Data.(type) {
	case *sens.ValueResult:
		return []CSVTable{{Rows: [][]string{{"name", "value", "unit"}, {d.Name, num(d.Value), d.Unit}}}}
	case *sens.VectorResult:
		rows := [][]string{{v0(d.Noun), d.Name, "unit"}}
		for i, k := range d.Keys {
			rows = append(rows, []string{k, num(d.Values[i]), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.TableResult:
		rows := [][]string{{"column", "type", "unit", "min", "max", "distinct"}}
		for _, c := range d.Columns {
			rows = append(rows, []string{c.Name, c.Type, c.Unit, num(c.Min), num(c.Max), strconv.Itoa(c.Distinct)})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.DriversResult:
		rows := [][]string{{"input", "value", "unit", "partial", "partial_unit", "elasticity"}}
		for _, in := range d.Inputs {
			rows = append(rows, []string{in.Name, num(in.Value), in.Unit, num(in.Partial), in.PartialUnit, optNum(in.Elasticity)})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.TornadoResult:
		rows := [][]string{{"input", "low", "high", "input_unit", "range_from", "output_at_low", "output_at_high", "swing", "output_unit", "swing_share", "non_monotone"}}
		for _, b := range d.Bars {
			rows = append(rows, []string{b.Name, num(b.Low), num(b.High), b.Unit, string(b.Source), num(b.OutputAtLow), num(b.OutputAtHigh),
				num(b.Swing), d.Unit, num(b.SwingShare), strconv.FormatBool(b.NonMonotone)})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.ExploreResult:
		rows := [][]string{{"input", "value", "low", "high", "input_unit", "range_from", "output_at_low", "output_at_high", "output_unit"}}
		for _, in := range d.Inputs {
			rows = append(rows, []string{in.Name, num(in.Value), num(in.Low), num(in.High), in.Unit, string(in.Source),
				num(in.OutputAtLow), num(in.OutputAtHigh), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.SpiderResult:
		rows := [][]string{{"input", "pct", "input_value", "input_unit", "output", "output_unit"}}
		for _, l := range d.Inputs {
			for _, p := range l.Points {
				rows = append(rows, []string{l.Name, num(p.Pct), num(p.Input), l.Unit, num(p.Output), d.Unit})
			}
		}
		return []CSVTable{{Rows: rows}}
	case *sens.Sweep1DResult:
		rows := [][]string{{d.Input.Name, "input_unit", d.Output, "output_unit"}}
		for _, p := range d.Points {
			rows = append(rows, []string{num(p.X), d.Input.Unit, num(p.Output), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.Sweep2DResult:
		x, y := d.Inputs[0], d.Inputs[1]
		rows := [][]string{{x.Name, "x_unit", y.Name, "y_unit", d.Output, "output_unit"}}
		for _, p := range d.Points {
			rows = append(rows, []string{num(p.X), x.Unit, num(p.Y), y.Unit, num(p.Output), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.BreakevenResult:
		rows := [][]string{{d.Input, "input_unit", "change", "change_pct", "in_range", "outside_domain", "slope", "slope_unit"}}
		for _, c := range d.Crossings {
			pct := ""
			if c.DistancePct != nil {
				pct = num(*c.DistancePct)
			}
			rows = append(rows, []string{num(c.Value), d.InputUnit, num(c.Distance), pct, strconv.FormatBool(c.InRange),
				strconv.FormatBool(c.OutsideDomain), num(c.Slope), d.SlopeUnit})
		}
		if len(d.Plateaus) > 0 {
			pl := [][]string{{d.Input + "_low", d.Input + "_high", "input_unit", "in_range"}}
			for _, p := range d.Plateaus {
				pl = append(pl, []string{num(p.Low), num(p.High), d.InputUnit, strconv.FormatBool(p.InRange)})
			}
			return []CSVTable{{Rows: rows}, {Name: "plateaus", Rows: pl}}
		}
		return []CSVTable{{Rows: rows}}
	case *sens.CompareResult:
		rows := [][]string{{"scenario", d.Output, "unit", "delta", "delta_pct"}}
		for _, s := range d.Scenarios {
			pct := ""
			if s.DeltaPct != nil {
				pct = num(*s.DeltaPct)
			}
			rows = append(rows, []string{s.Name, num(s.Value), d.Unit, num(s.Delta), pct})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.AttributeResult:
		rows := [][]string{{"input", "from", "to", "input_unit", "contribution", "share_pct", "output_unit"}}
		pct := func(p *float64) string {
			if p == nil {
				return ""
			}
			return num(*p)
		}
		for _, c := range d.Inputs {
			rows = append(rows, []string{c.Name, num(c.From), num(c.To), c.Unit, num(c.Value), pct(c.SharePct), d.Unit})
		}
		if d.Rest != nil {
			rows = append(rows, []string{fmt.Sprintf("(%d others)", d.Rest.Count), "", "", "", num(d.Rest.Value), pct(d.Rest.SharePct), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.ScenarioResult:
		rows := [][]string{{"input", "value", "baseline", "unit"}}
		for _, s := range d.Settings {
			rows = append(rows, []string{s.Name, num(s.Value), num(s.Baseline), s.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.SimulationResult:
		u := d.Unit
		stats := [][]string{{"statistic", "value", "unit"}}
		for _, r := range []struct {
			k string
			v float64
		}{{"mean", d.Mean}, {"sd", d.SD}, {"stderr_mean", d.StderrMean}, {"min", d.Min}, {"p05", d.P05}, {"p10", d.P10},
			{"p50", d.P50}, {"p90", d.P90}, {"p95", d.P95}, {"max", d.Max}, {"baseline", d.Baseline}} {
			stats = append(stats, []string{r.k, num(r.v), u})
		}
		stats = append(stats, []string{"baseline_percentile", num(d.BaselinePercentile), "%"})
		if d.PAbove != nil {
			stats = append(stats, []string{"p_above", num(*d.PAbove), ""})
		}
		rc := [][]string{{"input", "spearman"}}
		for _, c := range d.RankCorrelations {
			rc = append(rc, []string{c.Name, num(c.Spearman)})
		}
		return []CSVTable{{Rows: stats}, {Name: "rank-correlations", Rows: rc}}
	case *sens.SobolResult:
		rows := [][]string{{"input", "first_order", "first_order_lo", "first_order_hi", "total_order", "total_order_lo", "total_order_hi"}}
		for _, x := range d.Inputs {
			rows = append(rows, []string{x.Name, num(x.FirstOrder), num(x.FirstOrderCI[0]), num(x.FirstOrderCI[1]),
				num(x.TotalOrder), num(x.TotalOrderCI[0]), num(x.TotalOrderCI[1])})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.MorrisResult:
		rows := [][]string{{"input", "low", "high", "input_unit", "mu", "mu_star", "sigma", "output_unit"}}
		for _, x := range d.Inputs {
			rows = append(rows, []string{x.Name, num(x.Low), num(x.High), x.Unit, num(x.Mu), num(x.MuStar), num(x.Sigma), d.Unit})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.ScreenResult:
		rows := [][]string{{"input", "dgsm", "dgsm_unit", "total_order_bound"}}
		for _, x := range d.Inputs {
			rows = append(rows, []string{x.Name, num(x.DGSM), x.DGSMUnit, num(x.TotalOrderBound)})
		}
		return []CSVTable{{Rows: rows}}
	case *sens.InteractionsResult:
		return interactionsTables(d)
	case *sens.BasisResult:
		rows := [][]string{{"input", "value", "low", "high", "unit", "range_from", "range", "distribution", "file", "line"}}
		for _, in := range d.Inputs {
			rows = append(rows, []string{in.Name, num(in.Value), num(in.Low), num(in.High), in.Unit, in.RangeFrom, in.Range, in.Distribution, in.File, strconv.Itoa(in.Line)})
		}
		out := []CSVTable{{Rows: rows}}
		if len(d.Constants) > 0 {
			cs := [][]string{{"constant", "value", "unit", "formula", "file", "line"}}
			for _, c := range d.Constants {
				cs = append(cs, []string{c.Name, num(c.Value), c.Unit, c.Formula, c.File, strconv.Itoa(c.Line)})
			}
			out = append(out, CSVTable{Name: "constants", Rows: cs})
		}
		return out
	}
	return nil
}

// num writes a number for export: the shortest text that reads back to it.
func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// optNum writes a number that may be undefined (NaN) as an empty cell.
func optNum(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return num(v)
}

// v0 names a vector's key column: its noun, else "key".
func v0(noun string) string {
	if noun == "" {
		return "key"
	}
	return noun
}
