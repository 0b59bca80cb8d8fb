package plotting

import (
	"fmt"
	"io"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/nudge-dev/nudge/sens/unit"
)

// Step is one bar of a waterfall: a named part of a change of the output.
type Step struct {
	Name  string
	Value float64
}

// Waterfall is a change of an output from one point to another, told in
// parts: a row per part, top to bottom, each a bar from the running total
// before it to the running total after it (blue where the part lowers the
// output, orange where it raises it), between a diamond at the output's
// value at the start, in the first row, and one at its value at the end,
// in the last. Dashed connectors carry the running total from row to row.
type Waterfall struct {
	Title        string
	Output, Unit string
	// From and To name the two ends ("base", "lean"); Start and End are
	// the output there.
	From, To   string
	Start, End float64
	// Steps are the parts in the order drawn.
	Steps []Step
	// Rest, when set, sums parts left out of Steps ("12 others"), drawn
	// after them in grey.
	Rest *Step
	// Unexplained, when set, is the part of the change no step accounts
	// for (a jump at a step function), drawn last in grey and hatched
	// with a dashed outline.
	Unexplained *Step
}

var _ Chart = (*Waterfall)(nil)

func (wf *Waterfall) heading() string {
	if wf == nil {
		return "Change"
	}
	if t := clean(wf.Title); t != "" {
		return t
	}
	if o := clean(wf.Output); o != "" {
		return "Change of " + o + " in parts"
	}
	return "Change in parts"
}

func (wf *Waterfall) what() string { return "waterfall of " + orDefault(wf.Output, "the output") }

func (wf *Waterfall) check() error {
	if wf == nil {
		return fmt.Errorf("waterfall: no chart (nil): %w", ErrNoData)
	}
	if len(wf.Steps) == 0 {
		return fmt.Errorf("%s has no parts: %w", wf.what(), ErrNoData)
	}
	if err := finite(wf.what(), "start", wf.Start); err != nil {
		return err
	}
	if err := finite(wf.what(), "end", wf.End); err != nil {
		return err
	}
	for i, s := range wf.parts() {
		if err := finite(wf.what(), fmt.Sprintf("part %d (%q)", i+1, s.Name), s.Value); err != nil {
			return err
		}
	}
	return nil
}

// parts returns the steps, the rest and the unexplained part, in the order
// drawn.
func (wf *Waterfall) parts() []Step {
	ps := append([]Step(nil), wf.Steps...)
	if wf.Rest != nil {
		ps = append(ps, *wf.Rest)
	}
	if wf.Unexplained != nil {
		ps = append(ps, *wf.Unexplained)
	}
	return ps
}

// Validate implements Chart.
func (wf *Waterfall) Validate() error { return wf.check() }

// WriteSVG implements Chart.
func (wf *Waterfall) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, wf, o) }

// WritePNG implements Chart.
func (wf *Waterfall) WritePNG(w io.Writer, o *Options) error { return writePNG(w, wf, o) }

// SVG implements Chart.
func (wf *Waterfall) SVG() string { return svgString(wf) }

// PNG implements Chart.
func (wf *Waterfall) PNG() []byte { return pngBytes(wf) }

// HTML implements Chart.
func (wf *Waterfall) HTML() string { return htmlString(wf) }

func (wf *Waterfall) frame() *frame {
	u := clean(wf.Unit)
	f := &frame{
		title: wf.heading(),
		subtitle: fmt.Sprintf("From %s (%s) to %s (%s): each part moves the running total",
			orDefault(clean(wf.From), "start"), unit.Format(wf.Start, u), orDefault(clean(wf.To), "end"), unit.Format(wf.End, u)),
		legend: []legendEntry{
			{label: "lowers the output", thumb: swatchThumb(colLow)},
			{label: "raises the output", thumb: swatchThumb(colHigh)},
		},
	}
	if wf.Rest != nil || wf.Unexplained != nil {
		f.legend = append(f.legend, legendEntry{label: "summed or unexplained", thumb: swatchThumb(colNeutral)})
	}
	return f
}

func (wf *Waterfall) rows() int { return len(wf.parts()) + 2 }

func (wf *Waterfall) height(w vg.Length) vg.Length {
	hd, ft := wf.frame().heights(w)
	n := wf.rows()
	return max(hd+ft+vg.Length(n)*rowHeight(n)+60, 5.5*vg.Centimeter)
}

func (wf *Waterfall) names() []string {
	names := []string{truncate(orDefault(clean(wf.From), "start"), maxNameRunes)}
	for _, s := range wf.parts() {
		names = append(names, truncate(orDefault(clean(s.Name), "(unnamed)"), maxNameRunes))
	}
	return append(names, truncate(orDefault(clean(wf.To), "end"), maxNameRunes))
}

func (wf *Waterfall) draw(dc draw.Canvas) {
	body := wf.frame().draw(dc)
	p := newPlot()
	bars := &WaterfallBars{Start: wf.Start, End: wf.End, Steps: wf.Steps, Unit: clean(wf.Unit)}
	if wf.Rest != nil {
		bars.Summed = append(bars.Summed, *wf.Rest)
	}
	if wf.Unexplained != nil {
		bars.Summed = append(bars.Summed, *wf.Unexplained)
	}
	grid := plotter.NewGrid()
	grid.Horizontal.Width = 0
	grid.Vertical = lineStyle(colGrid, widthGrid)
	p.Add(grid, bars)
	p.Y.Tick.Marker = nameTicks(wf.names())
	p.Y.Tick.Label = textStyle(sizeTick, colInk, false, draw.XRight, draw.YCenter)
	hideAxisLine(&p.Y)
	p.Y.Padding = 8
	p.X.Label.Text = axisTitle(orDefault(wf.Output, "output"), wf.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (wf *Waterfall) caption() string {
	u := clean(wf.Unit)
	var parts []string
	for _, s := range wf.parts() {
		parts = append(parts, fmt.Sprintf("%s %s", orDefault(clean(s.Name), "(unnamed)"), unit.Signed(s.Value, u)))
	}
	return fmt.Sprintf("Change of %s from %s %s to %s %s, in parts: %s.", orDefault(clean(wf.Output), "the output"),
		orDefault(clean(wf.From), "start"), unit.Format(wf.Start, u), orDefault(clean(wf.To), "end"), unit.Format(wf.End, u), strings.Join(parts, "; "))
}

// WaterfallBars draws a waterfall's marks: with m = len(Steps) +
// len(Summed) parts, row 0 (at y = m+1) holds a diamond at Start, row i
// the bar of part i from the running total before it to the one after it,
// with its value labelled at the far end, and row m+1 (at y = 0) a diamond
// at End. Summed parts are drawn in grey.
type WaterfallBars struct {
	Start, End float64
	Steps      []Step
	Summed     []Step
	Unit       string
}

var (
	_ plot.Plotter    = (*WaterfallBars)(nil)
	_ plot.DataRanger = (*WaterfallBars)(nil)
)

func (wb *WaterfallBars) parts() []Step {
	return append(append([]Step(nil), wb.Steps...), wb.Summed...)
}

// DataRange implements plot.DataRanger.
func (wb *WaterfallBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	vals := []float64{wb.Start, wb.End}
	run := wb.Start
	for _, s := range wb.parts() {
		run += s.Value
		vals = append(vals, run)
	}
	lo, hi := extent(vals...)
	pad := 0.18 * (hi - lo) // room for the labels
	xmin, xmax = widen(lo-pad, hi+pad)
	return xmin, xmax, -0.5, float64(len(wb.parts())+2) - 0.5
}

// Plot implements plot.Plotter.
func (wb *WaterfallBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	parts := wb.parts()
	n := len(parts) + 2
	rowH := vg.Length(math.Abs(float64(trY(1) - trY(0))))
	th := rowH * 0.6
	y := func(row int) vg.Length { return trY(float64(n - 1 - row)) }
	connector := lineStyle(colRefLine, widthGrid, 2, 2)
	lab := textStyle(sizeLabel, colInk, false, draw.XLeft, draw.YCenter)
	diamond := func(row int, v float64) {
		r := th / 2.4
		pt := vg.Point{X: trX(v), Y: y(row)}
		drawDiamond(c, pt, r)
		c.FillText(lab, vg.Point{X: pt.X + r + 3, Y: pt.Y}, unit.Format(v, wb.Unit))
	}
	diamond(0, wb.Start)
	run := wb.Start
	for i, s := range parts {
		row := i + 1
		next := run + s.Value
		x0, x1 := trX(run), trX(next)
		// The connector from the row above at the running total.
		c.StrokeLine2(connector, x0, y(row-1)-th/2, x0, y(row)+th/2)
		col := colHigh
		if s.Value < 0 {
			col = colLow
		}
		if i >= len(wb.Steps) {
			col = colNeutral
		}
		lo, hi := min(x0, x1), max(x0, x1)
		if hi-lo < 1 {
			hi = lo + 1
		}
		fillBar(c, lo, hi, y(row), th, col)
		sty := lab
		dx := vg.Length(4)
		at := hi
		if s.Value < 0 {
			sty.XAlign, dx, at = draw.XRight, -4, lo
		}
		c.FillText(sty, vg.Point{X: at + dx, Y: y(row)}, unit.Signed(s.Value, wb.Unit))
		run = next
	}
	c.StrokeLine2(connector, trX(run), y(n-2)-th/2, trX(run), y(n-1)+th/2)
	diamond(n-1, wb.End)
}

// drawDiamond fills a diamond of half-diagonal r centred on pt.
func drawDiamond(c draw.Canvas, pt vg.Point, r vg.Length) {
	var path vg.Path
	path.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	path.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	path.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	path.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	path.Close()
	c.SetColor(colInk)
	c.Fill(path)
}

// Text draws the waterfall as rows over a common track from the smallest
// running total to the largest: ◆ marks the ends, a bar of ▒ (lowering)
// or █ (raising) spans each part, ░ a summed or unexplained one.
func (wf *Waterfall) Text(width int) string {
	if err := wf.check(); err != nil {
		return textMessage(wf.heading(), err)
	}
	width = textWidth(width)
	u := clean(wf.Unit)
	parts := wf.parts()
	names := wf.names()
	vals := []float64{wf.Start, wf.End}
	run := wf.Start
	for _, s := range parts {
		run += s.Value
		vals = append(vals, run)
	}
	col := unit.NewColumn(u, append(vals, func() []float64 {
		var vs []float64
		for _, s := range parts {
			vs = append(vs, s.Value)
		}
		return vs
	}()...)...)
	labels := []string{col.Format(wf.Start)}
	for _, s := range parts {
		labels = append(labels, col.Signed(s.Value))
	}
	labels = append(labels, col.Format(wf.End))
	nameW, valW := 8, 5
	for i, nm := range names {
		nameW = max(nameW, runeLen(nm))
		valW = max(valW, runeLen(labels[i]))
	}
	nameW = min(nameW, max(8, width/4))
	track := max(10, width-nameW-valW-3)
	lo, hi := extent(vals...)
	cell := func(v float64) int {
		if hi == lo {
			return track / 2
		}
		return min(track-1, max(0, int(math.Round((v-lo)/(hi-lo)*float64(track-1)))))
	}
	var b strings.Builder
	b.WriteString(Wrap(wf.heading(), width) + "\n")
	b.WriteString(Wrap(fmt.Sprintf("%s from %s to %s", axisTitle(orDefault(wf.Output, "output"), u),
		orDefault(clean(wf.From), "start"), orDefault(clean(wf.To), "end")), width) + "\n")
	line := func(name string, r []rune, label string) {
		b.WriteString(padRight(truncate(name, nameW), nameW) + " " + string(r) + " " + padLeft(label, valW) + "\n")
	}
	mark := func(v float64) []rune {
		r := []rune(strings.Repeat(" ", track))
		r[cell(v)] = '◆'
		return r
	}
	line(names[0], mark(wf.Start), labels[0])
	run = wf.Start
	for i, s := range parts {
		r := []rune(strings.Repeat(" ", track))
		a, z := cell(run), cell(run+s.Value)
		if a > z {
			a, z = z, a
		}
		fill := '█'
		switch {
		case i >= len(wf.Steps):
			fill = '░'
		case s.Value < 0:
			fill = '▒'
		}
		for j := a; j <= z; j++ {
			r[j] = fill
		}
		line(names[i+1], r, labels[i+1])
		run += s.Value
	}
	line(names[len(names)-1], mark(wf.End), labels[len(labels)-1])
	return b.String()
}
