package sens

import (
	"html"
	"math"
	"sort"
	"strconv"
	"strings"
)

// The HTML methods below let a notebook show a result as a table: a Go
// kernel that displays any value with an HTML() string method renders them
// inline. Each table sits in a <div> that notebook MathJax leaves alone (so a
// "$" is not read as mathematics), names the output, its baseline and unit
// in a caption, and ends with the caution below. The markup is well-formed
// XML (no named entities besides &lt; &gt; &amp;), and every name is escaped.

// Caution is the one-line caution that goes with every result shown to a
// person: under every HTML table here, and under the kernel's results.
const Caution = "Results describe the model, not the world: they hold only within the stated ranges and distributions, one-at-a-time charts miss interactions, and a cost model is not a quote."

// Most rows of a 1-D sweep table and most rows or columns of a 2-D one.
const (
	htmlMaxRows = 25
	htmlMaxGrid = 12
)

// HTML renders the drivers as a table: each input's value, the partial
// derivative of the output with respect to it, and its elasticity.
func (d *Drivers) HTML() string {
	rows := make([][]string, len(d.Inputs))
	for j, in := range d.Inputs {
		e := strconv.FormatFloat(in.Elasticity, 'f', 4, 64)
		if e == "-0.0000" {
			e = "0.0000"
		}
		if in.Elasticity > 0 && !math.IsInf(in.Elasticity, 1) && e != "0.0000" {
			e = "+" + e
		}
		rows[j] = []string{in.Name, htmlNum(in.Value, in.Unit, false), htmlNum(in.Partial, in.PartialUnit, false), e}
	}
	var notes []string
	if len(d.Steps) > 0 {
		notes = append(notes, "Step-shaped operations on the path of "+d.Output+" have a zero derivative: "+strings.Join(d.Steps, ", ")+".")
	}
	return htmlTable("Drivers of "+d.Output+" = "+htmlNum(d.Value, d.Unit, false)+
		": the value of each input, the partial derivative of "+d.Output+" with respect to it, and its elasticity (the % change of "+
		d.Output+" per 1% change of the input), by |elasticity|",
		[]string{"input", "value", "partial", "elasticity"}, rows, notes)
}

// HTML renders the tornado as a table: the output at the low and high end of
// each input's range, the swing, and a note where the range is the default or
// the output turns inside the range.
func (r *TornadoResult) HTML() string {
	rows := make([][]string, len(r.Bars))
	for j, b := range r.Bars {
		var note []string
		if b.DefaultRange {
			note = append(note, "default ±10% range")
		}
		if b.NonMonotone {
			note = append(note, "non-monotone: min "+htmlNum(b.OutMin, r.Unit, false)+" at "+b.Name+" = "+htmlNum(b.InputAtMin, b.Unit, false)+
				", max "+htmlNum(b.OutMax, r.Unit, false)+" at "+b.Name+" = "+htmlNum(b.InputAtMax, b.Unit, false))
		}
		rows[j] = []string{b.Name, htmlNum(b.Low, b.Unit, false), htmlNum(b.High, b.Unit, false),
			htmlNum(b.OutputAtLow, r.Unit, false), htmlNum(b.OutputAtHigh, r.Unit, false), htmlNum(b.Swing, r.Unit, false), strings.Join(note, "; ")}
	}
	var notes []string
	if s := r.Rest; s != nil {
		notes = append(notes, strconv.Itoa(s.Count)+" more inputs not shown: swings up to "+htmlNum(s.LargestSwing, r.Unit, false)+
			", outputs within "+htmlNum(s.OutMin, r.Unit, false)+".."+htmlNum(s.OutMax, r.Unit, false)+".")
	}
	if len(r.DefaultRanges) > 0 && r.Rest != nil {
		notes = append(notes, "No range or distribution given, so ±10% of the value was used for: "+strings.Join(r.DefaultRanges, ", ")+".")
	}
	if len(r.Steps) > 0 {
		notes = append(notes, "Step-shaped operations on the path of "+r.Output+": "+strings.Join(r.Steps, ", ")+".")
	}
	return htmlTable("Tornado of "+r.Output+" (baseline "+htmlNum(r.Baseline, r.Unit, false)+"): "+r.Output+
		" at the low and high end of each input's range, the other inputs at their baselines, by extent",
		[]string{"input", "low", "high", "output at low", "output at high", "swing", "note"}, rows, notes)
}

// HTML renders the spider as a table: the output at -span%, at the baseline
// and at +span% of each input (every point when there are seven or fewer),
// and the spread of each line.
func (r *SpiderResult) HTML() string {
	var cols []int
	if len(r.Inputs) > 0 {
		n := len(r.Inputs[0].Points)
		cols = []int{0, n / 2, n - 1}
		if n <= 7 {
			cols = evenIndices(n, n)
		}
	}
	head := []string{"input"}
	for _, c := range cols {
		if q := r.Inputs[0].Points[c].Pct; q == 0 {
			head = append(head, "baseline")
		} else {
			head = append(head, "at "+htmlNum(q, "%", true))
		}
	}
	head = append(head, "spread")
	rows := make([][]string, len(r.Inputs))
	var zero []string
	for j, l := range r.Inputs {
		row := []string{l.Name}
		for _, c := range cols {
			row = append(row, htmlNum(l.Points[c].Output, r.Unit, false))
		}
		rows[j] = append(row, htmlNum(l.Spread, r.Unit, false))
		if l.ZeroValue {
			zero = append(zero, l.Name)
		}
	}
	var notes []string
	if len(zero) > 0 {
		notes = append(notes, "A percentage of 0 is 0, so these lines are flat: "+strings.Join(zero, ", ")+".")
	}
	return htmlTable("Spider of "+r.Output+" (baseline "+htmlNum(r.Baseline, r.Unit, false)+"): "+r.Output+
		" as each input moves from "+htmlNum(-r.SpanPct, "%", false)+" to "+htmlNum(r.SpanPct, "%", true)+
		" of its baseline, the other inputs at their baselines",
		head, rows, notes)
}

// HTML renders a 1-D sweep as a table of input value and output: every point,
// or at most 25 sampled evenly, always with both ends and the point nearest
// the input's baseline.
func (r *SweepResult) HTML() string {
	in := r.Input
	near := 0
	for j, p := range r.Points {
		if math.Abs(p.X-in.Baseline) < math.Abs(r.Points[near].X-in.Baseline) {
			near = j
		}
	}
	idx := evenIndices(len(r.Points), htmlMaxRows, near)
	rows := make([][]string, len(idx))
	for j, k := range idx {
		rows[j] = []string{htmlNum(r.Points[k].X, in.Unit, false), htmlNum(r.Points[k].Output, r.Unit, false)}
	}
	var notes []string
	if r.Target != nil {
		if len(r.Crossings) == 0 {
			notes = append(notes, r.Output+" does not reach "+htmlNum(*r.Target, r.Unit, false)+" over the sweep.")
		} else {
			xs := make([]string, len(r.Crossings))
			for j, x := range r.Crossings {
				xs[j] = htmlNum(x, in.Unit, false)
			}
			notes = append(notes, r.Output+" = "+htmlNum(*r.Target, r.Unit, false)+" at "+in.Name+" = "+strings.Join(xs, ", ")+
				" (linear interpolation between points).")
		}
	}
	return htmlTable("Sweep of "+r.Output+" over "+in.Name+" = "+htmlNum(in.Low, "", false)+".."+htmlNum(in.High, in.Unit, false)+
		" (baseline "+in.Name+" = "+htmlNum(in.Baseline, in.Unit, false)+" gives "+r.Output+" = "+htmlNum(r.Baseline, r.Unit, false)+
		"): "+r.Output+" at "+strconv.Itoa(len(idx))+" of "+strconv.Itoa(len(r.Points))+" points, the other inputs at their baselines",
		[]string{in.Name, r.Output}, rows, notes)
}

// HTML renders a 2-D sweep as a grid: one row per value of the second input,
// one column per value of the first, at most 12 of each sampled evenly.
func (r *Sweep2DResult) HTML() string {
	if len(r.Inputs) != 2 {
		return htmlTable("Sweep of "+r.Output+": no grid", nil, nil, nil)
	}
	ax, ay := r.Inputs[0], r.Inputs[1]
	nx, ny := len(ax.Values), len(ay.Values)
	cs, rs := evenIndices(nx, htmlMaxGrid), evenIndices(ny, htmlMaxGrid)
	head := []string{ay.Name + " \\ " + ax.Name}
	for _, c := range cs {
		head = append(head, htmlNum(ax.Values[c], ax.Unit, false))
	}
	rows := make([][]string, len(rs))
	for j, k := range rs {
		row := []string{htmlNum(ay.Values[k], ay.Unit, false)}
		for _, c := range cs {
			if k*nx+c < len(r.Points) {
				row = append(row, htmlNum(r.Points[k*nx+c].Output, r.Unit, false))
			}
		}
		rows[j] = row
	}
	notes := []string{r.Output + " over the grid: " + htmlNum(r.Min, r.Unit, false) + " to " + htmlNum(r.Max, r.Unit, false) + "."}
	if r.Target != nil {
		notes = append(notes, "The contour where "+r.Output+" = "+htmlNum(*r.Target, r.Unit, false)+" has "+strconv.Itoa(len(r.Contour))+" line(s).")
	}
	return htmlTable("Sweep of "+r.Output+" (baseline "+htmlNum(r.Baseline, r.Unit, false)+") over "+ax.Name+" (columns, baseline "+
		htmlNum(ax.Baseline, ax.Unit, false)+") and "+ay.Name+" (rows, baseline "+htmlNum(ay.Baseline, ay.Unit, false)+"): "+
		r.Output+" on "+strconv.Itoa(len(cs))+" × "+strconv.Itoa(len(rs))+" of "+strconv.Itoa(nx)+" × "+strconv.Itoa(ny)+
		" grid points, the other inputs at their baselines",
		head, rows, notes)
}

// HTML renders a break-even result as a table of the input values at which
// the output equals the target, or the message when there is none.
func (r *BreakevenResult) HTML() string {
	rows := make([][]string, len(r.Crossings))
	var touch []string
	for j, c := range r.Crossings {
		pct := "n/a (baseline 0)"
		if c.DistancePct != nil {
			pct = htmlNum(*c.DistancePct, "%", true)
		}
		in := "no"
		if c.InRange {
			in = "yes"
		}
		rows[j] = []string{htmlNum(c.Value, r.InputUnit, false), htmlNum(c.Distance, r.InputUnit, true), pct, in}
		if c.Touch {
			touch = append(touch, htmlNum(c.Value, r.InputUnit, false))
		}
	}
	if len(rows) == 0 {
		msg := r.Message
		if msg == "" {
			msg = r.Output + " never reaches the target."
		}
		rows = [][]string{{msg}}
	}
	var notes []string
	if len(touch) > 0 {
		notes = append(notes, r.Output+" touches the target without crossing it at "+r.Input+" = "+strings.Join(touch, ", ")+".")
	}
	for _, jp := range r.Jumps {
		notes = append(notes, r.Output+" jumps past the target at "+r.Input+" = "+htmlNum(jp.Value, r.InputUnit, false)+
			" (from "+htmlNum(jp.Left, r.Unit, false)+" to "+htmlNum(jp.Right, r.Unit, false)+"): a step or a pole, not a crossing.")
	}
	if r.DomainNote != "" {
		notes = append(notes, "Search of "+r.Input+" = "+htmlNum(r.SearchedLow, "", false)+".."+htmlNum(r.SearchedHigh, r.InputUnit, false)+": "+r.DomainNote+".")
	}
	return htmlTable("Break-even of "+r.Output+" = "+htmlNum(r.Target, r.Unit, false)+" over "+r.Input+
		" (baseline "+r.Input+" = "+htmlNum(r.BaselineInput, r.InputUnit, false)+" gives "+htmlNum(r.BaselineOutput, r.Unit, false)+
		"; stated range "+htmlNum(r.Low, "", false)+".."+htmlNum(r.High, r.InputUnit, false)+"): every value of "+r.Input+
		" found at which "+r.Output+" equals the target, the other inputs at their baselines",
		[]string{r.Input, "change from baseline", "change %", "in range"}, rows, notes)
}

// HTML renders a comparison as a table: the output under each case, its
// change from the baseline, and the inputs the case changes.
func (r *CompareResult) HTML() string {
	rows := make([][]string, len(r.Scenarios))
	for j, s := range r.Scenarios {
		pct := "n/a (baseline 0)"
		if s.DeltaPct != nil {
			pct = htmlNum(*s.DeltaPct, "%", true)
		}
		ch := make([]string, len(s.Changes))
		for k, c := range s.Changes {
			ch[k] = c.Name + " " + htmlNum(c.Baseline, "", false) + " → " + htmlNum(c.Value, c.Unit, false)
		}
		rows[j] = []string{s.Name, htmlNum(s.Value, r.Unit, false), htmlNum(s.Delta, r.Unit, true), pct, strings.Join(ch, ", ")}
	}
	return htmlTable("Comparison of "+r.Output+" across cases (baseline "+htmlNum(r.Baseline, r.Unit, false)+"): "+r.Output+
		" under each case and its change from the baseline",
		[]string{"scenario", "value", "delta", "delta %", "changes"}, rows, nil)
}

// htmlTable writes a table with a caption, a header row, data rows, notes
// and the caution, all text escaped, in a <div> that notebook MathJax skips.
// A row shorter than the header spans its last cell over the rest.
func htmlTable(caption string, head []string, rows [][]string, notes []string) string {
	var b strings.Builder
	esc := html.EscapeString
	b.WriteString(`<div class="nudge-result tex2jax_ignore mathjax_ignore">` + "\n")
	b.WriteString(`<table class="nudge-table">` + "\n<caption>" + esc(caption) + "</caption>\n")
	if len(head) > 0 {
		b.WriteString("<thead><tr>")
		for _, h := range head {
			b.WriteString(`<th scope="col">` + esc(h) + "</th>")
		}
		b.WriteString("</tr></thead>\n")
	}
	b.WriteString("<tbody>\n")
	for _, row := range rows {
		b.WriteString("<tr>")
		for j, c := range row {
			if j == len(row)-1 && len(row) < len(head) {
				b.WriteString(`<td colspan="` + strconv.Itoa(len(head)-j) + `">` + esc(c) + "</td>")
			} else {
				b.WriteString("<td>" + esc(c) + "</td>")
			}
		}
		b.WriteString("</tr>\n")
	}
	b.WriteString("</tbody>\n</table>\n")
	for _, n := range notes {
		b.WriteString(`<p class="nudge-note">` + esc(n) + "</p>\n")
	}
	b.WriteString(`<p class="nudge-caution">` + esc(Caution) + "</p>\n</div>")
	return b.String()
}

// htmlNum formats v to 6 significant digits with its unit: thousands grouped
// by commas from 10,000, exponent form below 1e-4 and from 1e15, "$" before
// the number ("-$1,250"), "%" right after it ("12.5%"), any other unit after
// a space ("12 kg"); NaN and ±Inf as such. plus puts "+" before a positive v.
func htmlNum(v float64, unit string, plus bool) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "+Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	}
	var s string
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', 5, 64), 64) // 6 significant digits
	switch a := math.Abs(r); {
	case r == 0:
		s = "0"
	case a < 1e-4 || a >= 1e15:
		m, e, _ := strings.Cut(strconv.FormatFloat(r, 'e', 5, 64), "e")
		if strings.Contains(m, ".") {
			m = strings.TrimRight(strings.TrimRight(m, "0"), ".")
		}
		s = m + "e" + e
	default:
		s = strconv.FormatFloat(r, 'f', -1, 64)
		if a >= 1e4 {
			sign, digits := "", s
			if r < 0 {
				sign, digits = "-", s[1:]
			}
			whole, frac, dot := strings.Cut(digits, ".")
			var g strings.Builder
			for j, d := range whole {
				if j > 0 && (len(whole)-j)%3 == 0 {
					g.WriteByte(',')
				}
				g.WriteRune(d)
			}
			s = sign + g.String()
			if dot {
				s += "." + frac
			}
		}
	}
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	switch unit = strings.TrimSpace(unit); unit {
	case "", "1":
	case "$":
		s = "$" + s
	case "%":
		s += "%"
	default:
		s += " " + unit
	}
	switch {
	case neg:
		return "-" + s
	case plus && r > 0:
		return "+" + s
	}
	return s
}

// evenIndices returns at most limit indices of 0..n-1 evenly spread, both ends
// included, plus every index in keep (the even ones are one fewer for each
// kept index not among them), in ascending order.
func evenIndices(n, limit int, keep ...int) []int {
	if n <= limit {
		idx := make([]int, n)
		for j := range idx {
			idx[j] = j
		}
		return idx
	}
	m := max(limit-len(keep), 2)
	seen := map[int]bool{}
	var idx []int
	add := func(k int) {
		if k >= 0 && k < n && !seen[k] {
			seen[k] = true
			idx = append(idx, k)
		}
	}
	for j := range m {
		add(int(math.Round(float64(j) * float64(n-1) / float64(m-1))))
	}
	for _, k := range keep {
		add(k)
	}
	sort.Ints(idx)
	return idx
}
