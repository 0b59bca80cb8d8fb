package render

import (
	"fmt"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Sweep1D renders a 1-D sweep: the output at the points of the input's range
// (at most 21, both ends and the one nearest the baseline among them), where
// it crosses the target, and the sweep chart.
func Sweep1D(s *sens.Sweep1DResult, o *Options) *Result {
	ax := s.Input
	near := 0
	for j, p := range s.Points {
		if math.Abs(p.X-ax.Baseline) < math.Abs(s.Points[near].X-ax.Baseline) {
			near = j
		}
	}
	idx := evenIndices(len(s.Points), maxSweepRows, near)
	var xs, ys []float64
	for _, j := range idx {
		xs, ys = append(xs, s.Points[j].X), append(ys, s.Points[j].Output)
	}
	xcol, ycol := unit.NewColumn(ax.Unit, xs...), unit.NewColumn(s.Unit, ys...)
	tb := &table{head: []string{ax.Name, s.Output}, right: []bool{true, true}}
	for j := range idx {
		tb.add(xcol.Format(xs[j]), ycol.Format(ys[j]))
	}
	head := fmt.Sprintf("sweep of %s over %s = %s..%s (%d points; baseline %s gives %s)", s.Output, ax.Name,
		unit.Format(ax.Low, ax.Unit), unit.Format(ax.High, ax.Unit), ax.N, unit.Format(ax.Baseline, ax.Unit), unit.Format(s.Baseline, s.Unit))
	r := &Result{Kind: "sweep", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n" + tb.text(), html: tb.html(head)}
	if len(idx) < len(s.Points) {
		r.note(fmt.Sprintf("(%d of the %d points shown; the JSON holds all of them)", len(idx), len(s.Points)))
	}
	if s.Target != nil {
		r.note(crossingLine(s.Output, *s.Target, s.Unit, ax.Name, ax.Unit, s.Crossings, s.Jumps, s.Unresolved))
	}
	// The chart marks the verified crossings only, not a jump past the
	// target.
	ch := &plotting.Sweep{Output: s.Output, Unit: s.Unit, Input: ax.Name, InputUnit: ax.Unit,
		BaselineInput: ax.Baseline, Baseline: s.Baseline, Target: s.Target, KnownRoots: true, Roots: s.Crossings}
	for _, p := range s.Points {
		ch.X = append(ch.X, p.X)
		ch.Y = append(ch.Y, p.Output)
	}
	r.attach(ch, o)
	return r
}

func crossingLine(out string, target float64, u, input, inUnit string, xs []float64, jumps []sens.Jump, unres []sens.Unresolved) string {
	var parts []string
	if len(xs) > 0 {
		col := unit.NewColumn(inUnit, xs...)
		vals := make([]string, len(xs))
		for j, x := range xs {
			vals[j] = col.Format(x)
		}
		parts = append(parts, fmt.Sprintf("%s = %s at %s = %s (verified on the model)", out, unit.Format(target, u), input, strings.Join(vals, ", ")))
	}
	for _, j := range jumps {
		how := "jumps past"
		if j.Pole {
			how = "passes through a pole past"
		}
		parts = append(parts, fmt.Sprintf("%s %s %s at %s = %s (from %s to %s) without equalling it", out, how, unit.Format(target, u),
			input, unit.Format(j.Value, inUnit), unit.Format(j.Left, u), unit.Format(j.Right, u)))
	}
	for _, x := range unres {
		parts = append(parts, fmt.Sprintf("between %s = %s and %s a crossing may lie: %s", input, unit.Format(x.Low, inUnit), unit.Format(x.High, inUnit), x.Reason))
	}
	if len(parts) == 0 {
		return fmt.Sprintf("%s does not reach %s over this range", out, unit.Format(target, u))
	}
	return strings.Join(parts, "; ")
}

// Sweep2D renders a 2-D sweep: where the output is least and greatest, where
// it equals the target, the grid as a table in the HTML (at most 12 values of
// each input), and the heat map with the target's contour.
func Sweep2D(s *sens.Sweep2DResult, o *Options) *Result {
	ax, ay := s.Inputs[0], s.Inputs[1]
	nx := len(ax.Values)
	head := fmt.Sprintf("sweep of %s over %s = %s..%s and %s = %s..%s (%d × %d grid; baseline %s)", s.Output,
		ax.Name, unit.Format(ax.Low, ax.Unit), unit.Format(ax.High, ax.Unit), ay.Name, unit.Format(ay.Low, ay.Unit), unit.Format(ay.High, ay.Unit),
		ax.N, ay.N, unit.Format(s.Baseline, s.Unit))
	minAt, maxAt := s.Points[0], s.Points[0]
	for _, p := range s.Points {
		if p.Output < minAt.Output {
			minAt = p
		}
		if p.Output > maxAt.Output {
			maxAt = p
		}
	}
	out := unit.NewColumn(s.Unit, minAt.Output, maxAt.Output)
	lines := []string{fmt.Sprintf("least %s at %s = %s, %s = %s; greatest %s at %s = %s, %s = %s",
		out.Format(minAt.Output), ax.Name, unit.Format(minAt.X, ax.Unit), ay.Name, unit.Format(minAt.Y, ay.Unit),
		out.Format(maxAt.Output), ax.Name, unit.Format(maxAt.X, ax.Unit), ay.Name, unit.Format(maxAt.Y, ay.Unit))}
	if s.Target != nil {
		npts := 0
		for _, l := range s.Contour {
			npts += len(l)
		}
		switch {
		case len(s.Contour) == 0 && s.AtTarget > 0:
			lines = append(lines, fmt.Sprintf("%s equals %s at %s of the %s grid points, where it is level at the target (no contour line crosses it)",
				s.Output, unit.Format(*s.Target, s.Unit), count(s.AtTarget), count(len(s.Points))))
		case len(s.Contour) == 0:
			lines = append(lines, fmt.Sprintf("%s does not reach %s on this grid", s.Output, unit.Format(*s.Target, s.Unit)))
		default:
			lines = append(lines, fmt.Sprintf("%s = %s along %d contour %s (%d points in the JSON)", s.Output, unit.Format(*s.Target, s.Unit),
				len(s.Contour), plural(len(s.Contour), "line", "lines"), npts))
		}
		if n := len(s.ContourJumps); n > 0 {
			q := s.ContourJumps[0]
			lines = append(lines, fmt.Sprintf("at %d of the contour's points %s jumps past %s without equalling it (a step or a pole, such as at %s = %s, %s = %s): there the line marks the jump, not a crossing (contour_jumps in the JSON)",
				n, s.Output, unit.Format(*s.Target, s.Unit), ax.Name, unit.Format(q.X, ax.Unit), ay.Name, unit.Format(q.Y, ay.Unit)))
		}
		if n := len(s.ContourUnverified); n > 0 {
			lines = append(lines, fmt.Sprintf("%d of the contour's points are placed by linear interpolation between grid points, not verified on the model (contour_unverified in the JSON)", n))
		}
	}
	// The grid as a table, one row per value of the second input, the
	// highest first.
	cs, rs := evenIndices(nx, maxGridSide), evenIndices(len(ay.Values), maxGridSide)
	var xs, ys, zs []float64
	for _, c := range cs {
		xs = append(xs, ax.Values[c])
	}
	for _, rr := range rs {
		ys = append(ys, ay.Values[rr])
		for _, c := range cs {
			zs = append(zs, s.Points[rr*nx+c].Output)
		}
	}
	xcol, ycol, zcol := unit.NewColumn(ax.Unit, xs...), unit.NewColumn(ay.Unit, ys...), unit.NewColumn(s.Unit, zs...)
	tb := &table{head: []string{ay.Name + " \\ " + ax.Name}, right: []bool{true}}
	for _, x := range xs {
		tb.head = append(tb.head, xcol.Format(x))
		tb.right = append(tb.right, true)
	}
	for k := len(rs) - 1; k >= 0; k-- {
		row := []string{ycol.Format(ys[k])}
		for j := range cs {
			row = append(row, zcol.Format(zs[k*len(cs)+j]))
		}
		tb.add(row...)
	}
	caption := head
	if len(cs) < nx || len(rs) < len(ay.Values) {
		caption += fmt.Sprintf("; %d × %d of the grid points shown, the JSON holds all of them", len(cs), len(rs))
	}
	r := &Result{Kind: "sweep", Data: s, Caution: true, width: o.width(), text: o.wrap(head) + "\n", html: tb.html(caption)}
	for _, l := range lines {
		r.note(l)
	}
	ch := &plotting.HeatMap{Output: s.Output, Unit: s.Unit, XName: ax.Name, XUnit: ax.Unit, YName: ay.Name, YUnit: ay.Unit,
		X: ax.Values, Y: ay.Values, BaselineX: ax.Baseline, BaselineY: ay.Baseline, Target: s.Target}
	if s.Target != nil {
		// The contour as the analysis placed and verified it, with its
		// jumps marked: the chart shows what the text and the JSON list.
		ch.KnownContour = true
		for _, l := range s.Contour {
			pl := make([][2]float64, len(l))
			for k, q := range l {
				pl[k] = [2]float64{q.X, q.Y}
			}
			ch.Contour = append(ch.Contour, pl)
		}
		for _, q := range s.ContourJumps {
			ch.Jumps = append(ch.Jumps, [2]float64{q.X, q.Y})
		}
	}
	for rr := range ay.Values {
		row := make([]float64, nx)
		for c := range row {
			row[c] = s.Points[rr*nx+c].Output
		}
		ch.Z = append(ch.Z, row)
	}
	r.attach(ch, o)
	return r
}
