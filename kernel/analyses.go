package kernel

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

func init() {
	commands["tornado"] = (*Interp).tornado
	commands["spider"] = (*Interp).spider
	commands["sweep"] = (*Interp).sweep
	commands["breakeven"] = (*Interp).breakeven
	commands["scenario"] = (*Interp).scenario
	commands["compare"] = (*Interp).compare
}

// Display limits: tables and charts show the largest bars or lines and
// summarise the rest; the JSON object always holds every one.
const (
	maxTableRows   = 30
	maxSpiderLines = 8
	maxSweepRows   = 21
)

// settings returns the analysis settings of a command: the cell's context and
// progress reported to the sink under an id unique to the command.
func settings(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) sens.Settings {
	id := c.Verb + "@" + f.Position(c.VerbPos).String()
	label := c.Verb
	if c.Output != nil {
		label += " " + syntax.String(c.Output)
	}
	return sens.Settings{Ctx: ctx, Progress: func(done, total int) { sink.Progress(id, label, done, total) }}
}

// fv formats a value with its unit, the one rule shared with the charts.
func fv(v float64, u string) string { return plotting.FormatValue(v, u) }

// pct formats a percentage with its sign.
func pct(v float64) string {
	if v == 0 {
		return "0%"
	}
	return fmt.Sprintf("%+.4g%%", v)
}

// signed formats a change with its sign and unit.
func signed(v float64, u string) string {
	if v > 0 {
		return "+" + fv(v, u)
	}
	return fv(v, u)
}

// attach adds a chart to a result: its Unicode form to the text, and unless
// charts are off, its SVG (and PNG) and its HTML figure after the table, since
// a notebook shows the richest of text/html and image/svg+xml, not both.
func (in *Interp) attach(r *Result, ch plotting.Chart) {
	if ch == nil || ch.Validate() != nil {
		return
	}
	r.Text += "\n" + ch.Text(in.Opts.Width)
	if in.Opts.NoCharts {
		return
	}
	svg := ch.SVG()
	r.SVG = []byte(svg)
	if in.Opts.PNG {
		r.PNG = ch.PNG()
	}
	r.HTML += plotting.FigureHTML(ch, svg)
}

// ---- options and constants

// intOption reads a whole-number option of at least lo.
func intOption(f *syntax.File, o *syntax.Option, lo int) (int, error) {
	v, err := constValue(f, o.Value, "", o.Key.Name)
	if err != nil {
		return 0, err
	}
	if v != math.Trunc(v) || v < float64(lo) || v > 1e7 {
		return 0, posErr(f, o.Value.Pos(), "%s must be a whole number from %d to 10,000,000, found %s", o.Key.Name, lo, syntax.String(o.Value))
	}
	return int(v), nil
}

// constValue evaluates x, which must be a constant: a number, optionally with
// a unit, or arithmetic on plain numbers. A number with a unit is converted to
// want (a unit as written; "" for dimensionless), and a plain number is read
// in want.
func constValue(f *syntax.File, x syntax.Expr, want, what string) (float64, error) {
	return sens.Constant(f, x, want, what)
}

// inputOf returns the input an analysis varies, named by id.
func inputOf(f *syntax.File, prog *sens.Program, pr *sens.Problem, id *syntax.Ident) (*sens.Input, error) {
	inp, fm := prog.Lookup(id.Name)
	switch {
	case inp != nil:
		return inp, nil
	case fm != nil:
		return nil, posErr(f, id.Pos(), "%s is a formula, not an input: vary one of the inputs it uses", id.Name)
	}
	names := make([]string, len(pr.Inputs))
	for i, x := range pr.Inputs {
		names[i] = x.Name
	}
	msg := "undefined input " + id.Name
	if s := syntax.Suggest(id.Name, names); s != "" {
		msg += " (did you mean " + s + "?)"
	}
	return nil, posErr(f, id.Pos(), "%s", msg)
}

// span reads an axis's LOW..HIGH in the input's unit.
func span(f *syntax.File, a *syntax.Axis, inp *sens.Input) (lo, hi float64, err error) {
	if lo, err = constValue(f, a.Low, inp.Unit, "the low end of the span of "+inp.Name); err != nil {
		return 0, 0, err
	}
	if hi, err = constValue(f, a.High, inp.Unit, "the high end of the span of "+inp.Name); err != nil {
		return 0, 0, err
	}
	switch {
	case lo > hi:
		return 0, 0, posErr(f, a.Low.Pos(), "the span %s..%s of %s is reversed: write %s..%s", syntax.String(a.Low), syntax.String(a.High), inp.Name, syntax.String(a.High), syntax.String(a.Low))
	case lo == hi:
		return 0, 0, posErr(f, a.Low.Pos(), "the span %s..%s of %s is empty: its ends are equal", syntax.String(a.Low), syntax.String(a.High), inp.Name)
	}
	return lo, hi, nil
}

// ---- tornado

// tornado runs "tornado OUT [top=N]".
func (in *Interp) tornado(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	top, err := topOption(f, c)
	if err != nil {
		return err
	}
	_, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	if len(pr.Inputs) == 0 {
		return posErr(f, c.Output.Pos(), "the model has no inputs to vary")
	}
	t, err := sens.Tornado(pr, &sens.TornadoSettings{Settings: settings(ctx, f, c, sink), Top: top})
	if err != nil {
		return err
	}
	if len(t.DefaultRanges) > 0 {
		warn(sink, "tornado %s: %s %s no range or distribution: the default ±%g%% of the value was used (marked *)",
			t.Output, nameList(t.DefaultRanges, 8), map[bool]string{true: "has", false: "have"}[len(t.DefaultRanges) == 1], 100*sens.DefaultSpan)
	}
	r := in.tornadoResult(t, pr)
	sink.Result(r, false)
	return nil
}

func (in *Interp) tornadoResult(t *sens.TornadoResult, pr *sens.Problem) *Result {
	bars, rest := t.Bars, t.Rest
	if len(bars) > maxTableRows {
		extra := sens.SummariseBars(bars[maxTableRows:])
		if rest != nil {
			extra.Count += rest.Count
			extra.LargestSwing = math.Max(extra.LargestSwing, rest.LargestSwing)
			extra.LargestSpread = math.Max(extra.LargestSpread, rest.LargestSpread)
			extra.OutMin, extra.OutMax = math.Min(extra.OutMin, rest.OutMin), math.Max(extra.OutMax, rest.OutMax)
		}
		bars, rest = bars[:maxTableRows], extra
	}
	tb := &table{head: []string{"input", "low", "high", t.Output + " at low", t.Output + " at high", "swing", "note"},
		right: []bool{false, true, true, true, true, true, false}}
	for _, b := range bars {
		var notes []string
		if b.DefaultRange {
			notes = append(notes, "* default ±10% range")
		}
		if b.NonMonotone {
			notes = append(notes, fmt.Sprintf("† not monotone: %s..%s (min at %s, max at %s)",
				fv(b.OutMin, t.Unit), fv(b.OutMax, t.Unit), fv(b.InputAtMin, b.Unit), fv(b.InputAtMax, b.Unit)))
		}
		tb.add(b.Name, fv(b.Low, b.Unit), fv(b.High, b.Unit), fv(b.OutputAtLow, t.Unit), fv(b.OutputAtHigh, t.Unit), fv(b.Swing, t.Unit), strings.Join(notes, "; "))
	}
	head := fmt.Sprintf("tornado of %s: baseline %s; each input from the low to the high end of its range, the others at baseline\n", t.Output, fv(t.Baseline, t.Unit))
	text := head + tb.text()
	restLine := ""
	if rest != nil {
		restLine = fmt.Sprintf("… and %d more %s, each with a swing of at most %s\n", rest.Count, plural(rest.Count, "input", "inputs"), fv(rest.LargestSwing, t.Unit))
		text += restLine
	}
	r := &Result{Kind: "tornado", Data: t, Text: text, HTML: tb.html(strings.TrimSpace(head)), Caution: true}
	if restLine != "" {
		r.HTML += `<p class="nudge-note">` + htmlEscape(strings.TrimSpace(restLine)) + `</p>`
	}
	ch := &plotting.Tornado{Output: t.Output, Unit: t.Unit, Baseline: t.Baseline}
	for _, b := range bars {
		ch.Bars = append(ch.Bars, plotting.Bar{Name: b.Name, Low: b.Low, High: b.High, InputUnit: b.Unit,
			OutLow: b.OutputAtLow, OutHigh: b.OutputAtHigh, Min: b.OutMin, Max: b.OutMax,
			NonMonotone: b.NonMonotone, DefaultRange: b.DefaultRange})
	}
	if rest != nil {
		ch.Rest = &plotting.Bar{Name: fmt.Sprintf("%d others", rest.Count), OutLow: rest.OutMin, OutHigh: rest.OutMax, Min: rest.OutMin, Max: rest.OutMax}
	}
	in.attach(r, ch)
	return r
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// ---- spider

// spider runs "spider OUT [(±P%)] [points=N]".
func (in *Interp) spider(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	if err := noOptions(f, c, "points"); err != nil {
		return err
	}
	points := 0
	if o := c.Option("points"); o != nil {
		n, err := intOption(f, o, 3)
		if err != nil {
			return err
		}
		points = n
	}
	p := float64(sens.DefaultSpiderPct)
	if r := c.Percent; r != nil {
		if r.Low.Value >= 0 || r.High.Value <= 0 || r.Low.Value != -r.High.Value {
			return posErr(f, r.Lparen, "spider takes a span symmetric about 0%%, such as (±30%%), found (%s..%s)", r.Low.Lit, r.High.Lit)
		}
		if r.High.Value >= 100 {
			return posErr(f, r.High.ValuePos, "a span of ±%s%% would take inputs to zero or below: use less than 100%%", trimNum(r.High.Value))
		}
		p = r.High.Value
	}
	_, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	if len(pr.Inputs) == 0 {
		return posErr(f, c.Output.Pos(), "the model has no inputs to vary")
	}
	s := settings(ctx, f, c, sink)
	res, err := sens.Spider(pr, p, points, &s)
	if err != nil {
		return err
	}
	sink.Result(in.spiderResult(res), false)
	return nil
}

func trimNum(v float64) string { return fmt.Sprintf("%g", v) }

func (in *Interp) spiderResult(s *sens.SpiderResult) *Result {
	lo, hi := -s.SpanPct, s.SpanPct
	tb := &table{head: []string{"input", "baseline", fmt.Sprintf("%s at %s", s.Output, pct(lo)), fmt.Sprintf("%s at %s", s.Output, pct(hi)), "spread", "note"},
		right: []bool{false, true, true, true, true, false}}
	lines := s.Inputs
	if len(lines) > maxTableRows {
		lines = lines[:maxTableRows]
	}
	for _, l := range lines {
		note := ""
		if l.ZeroValue {
			note = "value is 0: a percentage change leaves it at 0"
		}
		first, last := l.Points[0], l.Points[len(l.Points)-1]
		tb.add(l.Name, fv(l.Value, l.Unit), fv(first.Output, s.Unit), fv(last.Output, s.Unit), fv(l.Spread, s.Unit), note)
	}
	head := fmt.Sprintf("spider of %s: baseline %s; each input from %s to %s of its value, the others at baseline\n", s.Output, fv(s.Baseline, s.Unit), pct(lo), pct(hi))
	text := head + tb.text()
	if n := len(s.Inputs) - len(lines); n > 0 {
		text += fmt.Sprintf("… and %d more %s with smaller spreads\n", n, plural(n, "input", "inputs"))
	}
	r := &Result{Kind: "spider", Data: s, Text: text, HTML: tb.html(strings.TrimSpace(head)), Caution: true}
	ch := &plotting.Spider{Output: s.Output, Unit: s.Unit, Baseline: s.Baseline}
	for j, l := range s.Inputs {
		if j == maxSpiderLines {
			break
		}
		sl := plotting.SpiderLine{Name: l.Name}
		for _, pt := range l.Points {
			sl.Pct = append(sl.Pct, pt.Pct)
			sl.Out = append(sl.Out, pt.Output)
		}
		ch.Lines = append(ch.Lines, sl)
	}
	in.attach(r, ch)
	return r
}

// ---- sweep

// sweep runs "sweep OUT over X a..b [and Y c..d] [n=N | steps=N] [target=T]".
func (in *Interp) sweep(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	if err := noOptions(f, c, "n", "steps", "target"); err != nil {
		return err
	}
	prog, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	n := 0
	if o := c.Option("n"); o != nil {
		if n, err = intOption(f, o, 2); err != nil {
			return err
		}
	}
	if o := c.Option("steps"); o != nil {
		if c.Option("n") != nil {
			return posErr(f, o.Key.Pos(), "give either n= (points) or steps= (intervals), not both")
		}
		if n, err = intOption(f, o, 1); err != nil {
			return err
		}
		n++
	}
	var target *float64
	if o := c.Option("target"); o != nil {
		v, err := constValue(f, o.Value, pr.Unit, "the target")
		if err != nil {
			return err
		}
		target = &v
	}
	var inps []*sens.Input
	var los, his []float64
	for _, a := range c.Axes {
		inp, err := inputOf(f, prog, pr, a.Name)
		if err != nil {
			return err
		}
		if len(inps) == 1 && inps[0] == inp {
			return posErr(f, a.Name.Pos(), "a 2-D sweep needs two different inputs: %s is already the first", inp.Name)
		}
		lo, hi, err := span(f, a, inp)
		if err != nil {
			return err
		}
		inps, los, his = append(inps, inp), append(los, lo), append(his, hi)
	}
	s := settings(ctx, f, c, sink)
	if len(inps) == 1 {
		res, err := sens.Sweep1D(pr, inps[0].Name, los[0], his[0], n, target, &s)
		if err != nil {
			return err
		}
		sink.Result(in.sweepResult(res), false)
		return nil
	}
	if n > 1000 {
		o := c.Option("n")
		if o == nil {
			o = c.Option("steps")
		}
		return posErr(f, o.Value.Pos(), "a %d × %d grid is too large: use at most 1,000 points a side", n, n)
	}
	res, err := sens.Sweep2D(pr, inps[0].Name, los[0], his[0], inps[1].Name, los[1], his[1], n, n, target, &s)
	if err != nil {
		return err
	}
	sink.Result(in.sweep2DResult(res), false)
	return nil
}

func (in *Interp) sweepResult(s *sens.SweepResult) *Result {
	ax := s.Input
	tb := &table{head: []string{ax.Name, s.Output}, right: []bool{true, true}}
	step := 1
	if len(s.Points) > maxSweepRows {
		step = (len(s.Points) + maxSweepRows - 2) / (maxSweepRows - 1)
	}
	for j, p := range s.Points {
		if j%step == 0 || j == len(s.Points)-1 {
			tb.add(fv(p.X, ax.Unit), fv(p.Output, s.Unit))
		}
	}
	head := fmt.Sprintf("sweep of %s over %s = %s..%s (%d points; baseline %s gives %s)\n", s.Output, ax.Name,
		fv(ax.Low, ax.Unit), fv(ax.High, ax.Unit), ax.N, fv(ax.Baseline, ax.Unit), fv(s.Baseline, s.Unit))
	text := head + tb.text()
	if step > 1 {
		text += fmt.Sprintf("(every %s point shown; the JSON holds all %d)\n", ordinal(step), len(s.Points))
	}
	if s.Target != nil {
		text += crossingLine(s.Output, *s.Target, s.Unit, ax.Name, ax.Unit, s.Crossings)
	}
	r := &Result{Kind: "sweep", Data: s, Text: text, HTML: tb.html(strings.TrimSpace(head)), Caution: true}
	ch := &plotting.Sweep{Output: s.Output, Unit: s.Unit, Input: ax.Name, InputUnit: ax.Unit,
		BaselineInput: ax.Baseline, Baseline: s.Baseline, Target: s.Target}
	for _, p := range s.Points {
		ch.X = append(ch.X, p.X)
		ch.Y = append(ch.Y, p.Output)
	}
	in.attach(r, ch)
	return r
}

func crossingLine(out string, target float64, unit, input, inUnit string, xs []float64) string {
	if len(xs) == 0 {
		return fmt.Sprintf("%s does not reach %s over this span\n", out, fv(target, unit))
	}
	vals := make([]string, len(xs))
	for j, x := range xs {
		vals[j] = fv(x, inUnit)
	}
	return fmt.Sprintf("%s = %s at %s = %s (linear interpolation between points)\n", out, fv(target, unit), input, strings.Join(vals, ", "))
}

func ordinal(n int) string {
	switch {
	case n%100 >= 11 && n%100 <= 13:
		return fmt.Sprintf("%dth", n)
	case n%10 == 1:
		return fmt.Sprintf("%dst", n)
	case n%10 == 2:
		return fmt.Sprintf("%dnd", n)
	case n%10 == 3:
		return fmt.Sprintf("%drd", n)
	}
	return fmt.Sprintf("%dth", n)
}

func (in *Interp) sweep2DResult(s *sens.Sweep2DResult) *Result {
	ax, ay := s.Inputs[0], s.Inputs[1]
	nx := ax.N
	head := fmt.Sprintf("sweep of %s over %s = %s..%s and %s = %s..%s (%d × %d grid; baseline %s)\n", s.Output,
		ax.Name, fv(ax.Low, ax.Unit), fv(ax.High, ax.Unit), ay.Name, fv(ay.Low, ay.Unit), fv(ay.High, ay.Unit), ax.N, ay.N, fv(s.Baseline, s.Unit))
	minAt, maxAt := s.Points[0], s.Points[0]
	for _, p := range s.Points {
		if p.Output < minAt.Output {
			minAt = p
		}
		if p.Output > maxAt.Output {
			maxAt = p
		}
	}
	text := head + fmt.Sprintf("least %s at %s = %s, %s = %s; greatest %s at %s = %s, %s = %s\n",
		fv(minAt.Output, s.Unit), ax.Name, fv(minAt.X, ax.Unit), ay.Name, fv(minAt.Y, ay.Unit),
		fv(maxAt.Output, s.Unit), ax.Name, fv(maxAt.X, ax.Unit), ay.Name, fv(maxAt.Y, ay.Unit))
	if s.Target != nil {
		npts := 0
		for _, l := range s.Contour {
			npts += len(l)
		}
		if len(s.Contour) == 0 {
			text += fmt.Sprintf("%s does not reach %s on this grid\n", s.Output, fv(*s.Target, s.Unit))
		} else {
			text += fmt.Sprintf("%s = %s along %d contour %s (%d points in the JSON)\n", s.Output, fv(*s.Target, s.Unit),
				len(s.Contour), plural(len(s.Contour), "line", "lines"), npts)
		}
	}
	// HTML: the grid as a table, one row per value of the second input.
	tb := &table{head: []string{ay.Name + " \\ " + ax.Name}, right: []bool{true}}
	for _, x := range ax.Values {
		tb.head = append(tb.head, fv(x, ax.Unit))
		tb.right = append(tb.right, true)
	}
	for r := len(ay.Values) - 1; r >= 0; r-- {
		row := []string{fv(ay.Values[r], ay.Unit)}
		for c := 0; c < nx; c++ {
			row = append(row, fv(s.Points[r*nx+c].Output, s.Unit))
		}
		tb.add(row...)
	}
	r := &Result{Kind: "sweep", Data: s, Text: text, HTML: tb.html(strings.TrimSpace(head)), Caution: true}
	ch := &plotting.HeatMap{Output: s.Output, Unit: s.Unit, XName: ax.Name, XUnit: ax.Unit, YName: ay.Name, YUnit: ay.Unit,
		X: ax.Values, Y: ay.Values, BaselineX: ax.Baseline, BaselineY: ay.Baseline, Target: s.Target}
	for r := range ay.Values {
		row := make([]float64, nx)
		for c := range row {
			row[c] = s.Points[r*nx+c].Output
		}
		ch.Z = append(ch.Z, row)
	}
	in.attach(r, ch)
	return r
}

// ---- breakeven

// breakeven runs "breakeven OUT = T over X [a..b]".
func (in *Interp) breakeven(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	if err := noOptions(f, c); err != nil {
		return err
	}
	prog, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	target, err := constValue(f, c.Target, pr.Unit, "the target")
	if err != nil {
		return err
	}
	a := c.Axes[0]
	inp, err := inputOf(f, prog, pr, a.Name)
	if err != nil {
		return err
	}
	bs := &sens.BreakevenSettings{Settings: settings(ctx, f, c, sink)}
	if a.Low != nil {
		lo, hi, err := span(f, a, inp)
		if err != nil {
			return err
		}
		bs.Bounded, bs.Low, bs.High = true, lo, hi
	}
	res, err := sens.Breakeven(pr, inp.Name, target, bs)
	if err != nil {
		return err
	}
	r := in.breakevenResult(res, inp)
	in.attach(r, breakevenChart(ctx, pr, res))
	sink.Result(r, false)
	return nil
}

func (in *Interp) breakevenResult(b *sens.BreakevenResult, inp *sens.Input) *Result {
	head := fmt.Sprintf("breakeven: %s = %s over %s (baseline %s gives %s; stated range %s..%s)\n", b.Output, fv(b.Target, b.Unit), b.Input,
		fv(b.BaselineInput, b.InputUnit), fv(b.BaselineOutput, b.Unit), fv(b.Low, b.InputUnit), fv(b.High, b.InputUnit))
	text := head
	var tb *table
	if len(b.Crossings) > 0 {
		tb = &table{head: []string{b.Input, "change", "change %", "in range", "slope"}, right: []bool{true, true, true, false, true}}
		for _, c := range b.Crossings {
			p := "—"
			if c.DistancePct != nil {
				p = pct(*c.DistancePct)
			}
			where := "no"
			if c.InRange {
				where = "yes"
			}
			slope := fv(c.Slope, sens.PartialUnit(b.Unit, b.InputUnit, inp))
			if c.Touch {
				slope = "touches"
			}
			tb.add(fv(c.Value, b.InputUnit), signed(c.Distance, b.InputUnit), p, where, slope)
		}
		text += tb.text()
		if len(b.Crossings) > 1 {
			text += fmt.Sprintf("%d crossings; the nearest to the baseline is %s = %s\n", len(b.Crossings), b.Input, fv(*b.Value, b.InputUnit))
		}
	}
	var notes []string
	if b.Message != "" {
		notes = append(notes, b.Message)
	}
	for _, j := range b.Jumps {
		if b.Message != "" {
			break // the message names the first jump
		}
		notes = append(notes, fmt.Sprintf("%s jumps past the target at %s = %s (from %s to %s) without equalling it",
			b.Output, b.Input, fv(j.Value, b.InputUnit), fv(j.Left, b.Unit), fv(j.Right, b.Unit)))
	}
	if b.DomainNote != "" {
		notes = append(notes, "searched "+fv(b.SearchedLow, b.InputUnit)+".."+fv(b.SearchedHigh, b.InputUnit)+": "+b.DomainNote)
	}
	for _, n := range notes {
		text += n + "\n"
	}
	h := ""
	if tb != nil {
		h = tb.html(strings.TrimSpace(head))
	} else {
		h = `<p class="nudge-value">` + htmlEscape(strings.TrimSpace(head)) + `</p>`
	}
	for _, n := range notes {
		h += `<p class="nudge-note">` + htmlEscape(n) + `</p>`
	}
	return &Result{Kind: "breakeven", Data: b, Text: text, HTML: h, Caution: true}
}

// breakevenChart sweeps the output over the stated range widened to take in
// the crossings near it, with the target marked.
func breakevenChart(ctx context.Context, pr *sens.Problem, b *sens.BreakevenResult) plotting.Chart {
	lo, hi := math.Min(b.Low, b.BaselineInput), math.Max(b.High, b.BaselineInput)
	w := hi - lo
	for _, c := range b.Crossings {
		// Widen for crossings within ten range-widths; farther ones would
		// flatten the chart.
		if c.Value >= lo-10*w && c.Value <= hi+10*w {
			lo, hi = math.Min(lo, c.Value), math.Max(hi, c.Value)
		}
	}
	pad := 0.05 * (hi - lo)
	lo, hi = lo-pad, hi+pad
	if !(hi > lo) {
		return nil
	}
	t := b.Target
	s, err := sens.Sweep1D(pr, b.Input, lo, hi, 81, &t, &sens.Settings{Ctx: ctx})
	if err != nil {
		return nil
	}
	ch := &plotting.Sweep{Output: b.Output, Unit: b.Unit, Input: b.Input, InputUnit: b.InputUnit,
		BaselineInput: b.BaselineInput, Baseline: b.BaselineOutput, Target: &t}
	for _, p := range s.Points {
		ch.X = append(ch.X, p.X)
		ch.Y = append(ch.Y, p.Output)
	}
	return ch
}

// ---- scenarios

// ScenarioSetting is one input a scenario sets.
type ScenarioSetting struct {
	Name     string  `json:"name"`
	Unit     string  `json:"unit"`
	Value    float64 `json:"value"`
	Baseline float64 `json:"baseline"`
}

// ScenarioResult is the JSON object of a scenario definition.
type ScenarioResult struct {
	Kind     string            `json:"kind"` // "scenario"
	Name     string            `json:"name"`
	Settings []ScenarioSetting `json:"settings"`
	Replaced bool              `json:"replaced"`
}

// scenario runs "scenario NAME: X = v, ...": it checks the settings against
// the model as it stands and stores the scenario.
func (in *Interp) scenario(_ context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	if err := noOptions(f, c); err != nil {
		return err
	}
	name := c.Name.Name
	if name == sens.BaseName {
		return posErr(f, c.Name.Pos(), "%s is the baseline: choose another scenario name", name)
	}
	seen := map[string]bool{}
	for _, a := range c.Assigns {
		if seen[a.Name.Name] {
			return posErr(f, a.Name.Pos(), "%s is set twice in scenario %s", a.Name.Name, name)
		}
		seen[a.Name.Name] = true
	}
	sc := &sens.Scenario{Name: name, File: f, Stmt: c, Assigns: c.Assigns}
	res := &ScenarioResult{Kind: "scenario", Name: name, Settings: []ScenarioSetting{}}
	prog, err := in.Model.Compile()
	if err != nil {
		// The model does not compile yet (a formula may be declared later in
		// the file): check that each name is a declared input, and leave the
		// values to be checked when the scenario is used.
		for _, a := range c.Assigns {
			d := in.Model.Lookup(a.Name.Name)
			switch {
			case d == nil:
				msg := "undefined input " + a.Name.Name
				if s := syntax.Suggest(a.Name.Name, in.Model.Names()); s != "" {
					msg += " (did you mean " + s + "?)"
				}
				return posErr(f, a.Name.Pos(), "%s", msg)
			case d.Input == nil:
				return posErr(f, a.Name.Pos(), "%s is a formula: a scenario sets inputs only", a.Name.Name)
			}
		}
	} else {
		x, err := prog.ScenarioValues(sc)
		if err != nil {
			return err
		}
		for _, a := range c.Assigns {
			inp, _ := prog.Lookup(a.Name.Name)
			res.Settings = append(res.Settings, ScenarioSetting{Name: inp.Name, Unit: inp.Unit, Value: x[inp.Index()], Baseline: inp.Value})
		}
	}
	res.Replaced = in.Model.DefineScenario(f, c)
	parts := make([]string, 0, len(res.Settings))
	for _, s := range res.Settings {
		parts = append(parts, fmt.Sprintf("%s = %s (baseline %s)", s.Name, fv(s.Value, s.Unit), fv(s.Baseline, s.Unit)))
	}
	verb := "defined"
	if res.Replaced {
		verb = "replaced"
	}
	text := fmt.Sprintf("scenario %s %s", name, verb)
	if len(parts) > 0 {
		text += ": " + strings.Join(parts, ", ")
	}
	sink.Result(&Result{Kind: "scenario", Data: res, Text: text,
		HTML: `<p class="nudge-value">` + htmlEscape(text) + `</p>`}, false)
	return nil
}

// compare runs "compare OUT across NAME, ...", where base is the baseline.
func (in *Interp) compare(ctx context.Context, f *syntax.File, c *syntax.CommandStmt, sink Sink) error {
	if err := noOptions(f, c); err != nil {
		return err
	}
	prog, pr, err := in.problem(f, c.Output, sink)
	if err != nil {
		return err
	}
	known := append([]string{sens.BaseName}, in.Model.ScenarioNames()...)
	seen := map[string]bool{}
	for _, id := range c.Names {
		if seen[id.Name] {
			return posErr(f, id.Pos(), "%s is listed twice", id.Name)
		}
		seen[id.Name] = true
		if id.Name != sens.BaseName && in.Model.Scenario(id.Name) == nil {
			msg := "undefined scenario " + id.Name
			if s := syntax.Suggest(id.Name, known); s != "" {
				msg += " (did you mean " + s + "?)"
			} else if len(known) > 1 {
				msg += " (scenarios: " + strings.Join(known, ", ") + ")"
			} else {
				msg += " (define one first: scenario " + id.Name + ": INPUT = VALUE)"
			}
			return posErr(f, id.Pos(), "%s", msg)
		}
	}
	var cases []sens.Case
	for _, id := range c.Names {
		cs := sens.Case{Name: id.Name}
		if id.Name != sens.BaseName {
			all, err := prog.ScenarioValues(in.Model.Scenario(id.Name))
			if err != nil {
				return err
			}
			cs.X = pr.Project(all)
		}
		cases = append(cases, cs)
	}
	s := settings(ctx, f, c, sink)
	res, err := sens.Compare(pr, cases, &s)
	if err != nil {
		return err
	}
	sink.Result(compareResult(res), false)
	return nil
}

func compareResult(r *sens.CompareResult) *Result {
	tb := &table{head: []string{"scenario", r.Output, "Δ", "Δ %", "changes"}, right: []bool{false, true, true, true, false}}
	for _, s := range r.Scenarios {
		p := "—"
		if s.DeltaPct != nil {
			p = pct(*s.DeltaPct)
		}
		var ch []string
		for _, c := range s.Changes {
			ch = append(ch, fmt.Sprintf("%s = %s", c.Name, fv(c.Value, c.Unit)))
		}
		changes := strings.Join(ch, ", ")
		if s.Name == sens.BaseName {
			changes = "(baseline)"
		}
		tb.add(s.Name, fv(s.Value, r.Unit), signed(s.Delta, r.Unit), p, changes)
	}
	head := fmt.Sprintf("%s across scenarios: Δ against the baseline %s\n", r.Output, fv(r.Baseline, r.Unit))
	return &Result{Kind: "compare", Data: r, Text: head + tb.text(), HTML: tb.html(strings.TrimSpace(head)), Caution: true}
}

func htmlEscape(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;").Replace(s)
}

// nameList joins names for a message, the first max of them and a count of
// the rest: "a, b, c and 4,997 others".
func nameList(names []string, max int) string {
	if len(names) <= max {
		return strings.Join(names, ", ")
	}
	return strings.Join(names[:max], ", ") + " and " + num(float64(len(names)-max)) + " others"
}
