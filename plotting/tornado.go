package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"image/color"
	"io"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Bar is one input of a tornado chart.
type Bar struct {
	// Name of the input.
	Name string
	// Low and High are the ends of the input's range, in InputUnit.
	Low, High float64
	InputUnit string
	// OutLow and OutHigh are the output with the input at its low and high
	// end, the other inputs at baseline.
	OutLow, OutHigh float64
	// Min and Max are the output's extremes over the input's range when
	// the effect is not monotone; otherwise they equal the ends.
	Min, Max float64
	// NonMonotone marks an input whose effect turns within its range; the
	// chart draws a whisker from Min to Max and marks the name with †.
	NonMonotone bool
	// DefaultRange marks an input that had no range or distribution of its
	// own; the chart marks its name with *.
	DefaultRange bool
}

// Tornado is a tornado chart: one horizontal bar per input about a vertical
// line at the baseline output, showing the output with the input at the low
// end (blue part) and at the high end (orange part) of its range.
type Tornado struct {
	Title string
	// Output is the name of the output and Unit its unit.
	Output, Unit string
	// Baseline is the output with every input at its baseline.
	Baseline float64
	// Bars in drawing order, top first: largest swing first.
	Bars []Bar
	// Rest optionally summarises the inputs not drawn ("12 others"): a grey
	// bar from OutLow to OutHigh without input values.
	Rest *Bar
}

var _ Chart = (*Tornado)(nil)

// Marks that follow input names in tornado charts.
const (
	markDefaultRange = "*"
	markNonMonotone  = "†"
	maxNameRunes     = 30
)

func (t *Tornado) heading() string {
	if t == nil {
		return "Tornado"
	}
	if s := clean(t.Title); s != "" {
		return s
	}
	if s := clean(t.Output); s != "" {
		return "Tornado: " + s
	}
	return "Tornado"
}

func (t *Tornado) what() string {
	if t == nil {
		return "tornado"
	}
	return "tornado of " + orDefault(t.Output, "the output")
}

func (t *Tornado) check() error {
	if t == nil {
		return fmt.Errorf("tornado: no chart (nil): %w", ErrNoData)
	}
	what := t.what()
	if len(t.Bars) == 0 && t.Rest == nil {
		return fmt.Errorf("%s has no inputs: %w", what, ErrNoData)
	}
	if err := finite(what, "baseline", t.Baseline); err != nil {
		return err
	}
	check := func(label string, b *Bar) error {
		fields := []struct {
			name string
			v    float64
		}{
			{"low end", b.Low}, {"high end", b.High},
			{"output at low end", b.OutLow}, {"output at high end", b.OutHigh},
			{"output minimum", b.Min}, {"output maximum", b.Max},
		}
		for _, f := range fields {
			if err := finite(what, label+": "+f.name, f.v); err != nil {
				return err
			}
		}
		return nil
	}
	for i := range t.Bars {
		if err := check(fmt.Sprintf("bar %d (%q)", i+1, t.Bars[i].Name), &t.Bars[i]); err != nil {
			return err
		}
	}
	if t.Rest != nil {
		if err := check(fmt.Sprintf("summary bar (%q)", t.Rest.Name), t.Rest); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (t *Tornado) Validate() error { return t.check() }

// WriteSVG implements Chart.
func (t *Tornado) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, t, o) }

// WritePNG implements Chart.
func (t *Tornado) WritePNG(w io.Writer, o *Options) error { return writePNG(w, t, o) }

// SVG implements Chart.
func (t *Tornado) SVG() string { return svgString(t) }

// PNG implements Chart.
func (t *Tornado) PNG() []byte { return pngBytes(t) }

// HTML implements Chart.
func (t *Tornado) HTML() string { return htmlString(t) }

func (t *Tornado) rows() int {
	n := len(t.Bars)
	if t.Rest != nil {
		n++
	}
	return n
}

// names returns the row labels with their marks, top first.
func (t *Tornado) names() []string {
	var names []string
	for _, b := range t.Bars {
		names = append(names, barName(b, maxNameRunes))
	}
	if t.Rest != nil {
		names = append(names, truncate(orDefault(t.Rest.Name, "others"), maxNameRunes))
	}
	return names
}

func barName(b Bar, n int) string {
	marks := ""
	if b.DefaultRange {
		marks += " " + markDefaultRange
	}
	if b.NonMonotone {
		marks += " " + markNonMonotone
	}
	return truncate(orDefault(b.Name, "(unnamed)"), n-runeLen(marks)) + marks
}

func (t *Tornado) flags() (anyDefault, anyNonMonotone bool) {
	for _, b := range t.Bars {
		anyDefault = anyDefault || b.DefaultRange
		anyNonMonotone = anyNonMonotone || b.NonMonotone
	}
	return
}

func (t *Tornado) frame() *frame {
	f := &frame{
		title:    t.heading(),
		subtitle: "Each input moved alone across its range, the others held at baseline",
		legend: []legendEntry{
			{label: "input at low end", thumb: swatchThumb(colLow)},
			{label: "input at high end", thumb: swatchThumb(colHigh)},
		},
	}
	anyDefault, anyNonMonotone := t.flags()
	if anyNonMonotone {
		f.legend = append(f.legend, legendEntry{label: "output min–max over the range", thumb: whiskerThumb()})
	}
	if anyDefault {
		f.notes = append(f.notes, markDefaultRange+" no range or distribution given: a default range was used.")
	}
	if anyNonMonotone {
		f.notes = append(f.notes, markNonMonotone+" effect not monotone over the range: the whisker shows the output's minimum and maximum.")
	}
	return f
}

// rowHeight is the vertical space of one bar.
func rowHeight(rows int) vg.Length {
	if rows > 15 {
		return 16
	}
	return 21
}

func (t *Tornado) height(w vg.Length) vg.Length {
	hd, ft := t.frame().heights(w)
	h := hd + ft + vg.Length(t.rows())*rowHeight(t.rows()) + 60
	return max(h, 5.5*vg.Centimeter)
}

func (t *Tornado) draw(c draw.Canvas) {
	body := t.frame().draw(c)
	p := newPlot()
	bars := NewTornadoBars(t.Bars, t.Rest, t.Baseline)
	bars.BaselineLabel = "baseline " + unit.Format(t.Baseline, clean(t.Unit))
	grid := plotter.NewGrid()
	grid.Horizontal.Width = 0
	grid.Vertical = lineStyle(colGrid, widthGrid)
	p.Add(grid, bars)
	p.Y.Tick.Marker = bars.NameTicks(t.names())
	p.Y.Tick.Label = textStyle(sizeTick, colInk, false, draw.XRight, draw.YCenter)
	hideAxisLine(&p.Y)
	p.Y.Padding = 8
	p.X.Label.Text = axisTitle(orDefault(t.Output, "output"), t.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (t *Tornado) caption() string {
	var b strings.Builder
	u := clean(t.Unit)
	fmt.Fprintf(&b, "Tornado chart of %s around its baseline %s. ",
		axisTitle(orDefault(t.Output, "the output"), ""), unit.Format(t.Baseline, u))
	b.WriteString("Each bar shows the output with one input at the low end (blue) or the high end (orange) of its range, the other inputs at baseline; the input's values are printed at the bar ends. ")
	if len(t.Bars) > 0 {
		top := t.Bars[0]
		fmt.Fprintf(&b, "Largest effect: %s, from %s to %s. ",
			orDefault(top.Name, "(unnamed)"), unit.Format(top.OutLow, u), unit.Format(top.OutHigh, u))
	}
	anyDefault, anyNonMonotone := t.flags()
	if anyDefault {
		b.WriteString(markDefaultRange + " default range used. ")
	}
	if anyNonMonotone {
		b.WriteString(markNonMonotone + " effect not monotone; whisker shows the output's range. ")
	}
	b.WriteString("One input at a time: interactions between inputs are not shown.")
	return b.String()
}

// TornadoBars draws the bars of a tornado chart. Row i of the n rows (the
// Bars, then Rest) is centred at y = n-1-i, so the first bar is on top; use
// NameTicks for the row labels. Each bar runs from the baseline to OutLow in
// LowColor and from the baseline to OutHigh in HighColor; when both ends lie
// on the same side, the nearer part is drawn narrower on top of the farther
// one. Input values are written at the ends, NonMonotone bars get a whisker
// from Min to Max, and a vertical line marks the baseline.
type TornadoBars struct {
	Bars     []Bar
	Rest     *Bar
	Baseline float64

	// BaselineLabel is written above the top row at the baseline.
	BaselineLabel string

	LowColor, HighColor, RestColor color.Color
	// LowTextColor and HighTextColor colour the input values at the ends.
	LowTextColor, HighTextColor color.Color
	// Thickness of a bar as a fraction of the row height.
	Thickness float64
	// LabelStyle is the style of the input values; its colour and
	// alignment are set per label.
	LabelStyle text.Style
	// BaselineStyle is the style of the baseline line.
	BaselineStyle draw.LineStyle
}

var (
	_ plot.Plotter    = (*TornadoBars)(nil)
	_ plot.DataRanger = (*TornadoBars)(nil)
	_ plot.GlyphBoxer = (*TornadoBars)(nil)
)

// NewTornadoBars returns a TornadoBars in the package's theme.
func NewTornadoBars(bars []Bar, rest *Bar, baseline float64) *TornadoBars {
	return &TornadoBars{
		Bars:          bars,
		Rest:          rest,
		Baseline:      baseline,
		LowColor:      colLow,
		HighColor:     colHigh,
		RestColor:     colNeutral,
		LowTextColor:  colLowText,
		HighTextColor: colHighText,
		Thickness:     0.62,
		LabelStyle:    textStyle(sizeLabel, colInk, false, draw.XLeft, draw.YCenter),
		BaselineStyle: lineStyle(colInk, widthBaseline),
	}
}

func (tb *TornadoBars) rows() []Bar {
	rows := tb.Bars
	if tb.Rest != nil {
		rows = append(rows[:len(rows):len(rows)], *tb.Rest)
	}
	return rows
}

// NameTicks returns ticks that put names[i] beside row i.
func (tb *TornadoBars) NameTicks(names []string) plot.ConstantTicks { return nameTicks(names) }

// DataRange implements plot.DataRanger.
func (tb *TornadoBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	vals := []float64{tb.Baseline}
	for _, b := range tb.rows() {
		vals = append(vals, b.OutLow, b.OutHigh)
		if b.NonMonotone {
			vals = append(vals, b.Min, b.Max)
		}
	}
	xmin, xmax = widen(extent(vals...))
	n := float64(len(tb.rows()))
	return xmin, xmax, -0.5, n - 0.5
}

// endLabel is an input value written beside a bar.
type endLabel struct {
	text   string
	x      float64 // data position the label is anchored at
	right  bool    // the label lies right of x
	isHigh bool
}

const labelPad = vg.Length(3)

// endLabels places the two input values of b. A value goes outside its end
// of the bar (beyond the whisker, if any); when both ends lie on one side
// of the baseline, the nearer end's value goes on the other side.
func (tb *TornadoBars) endLabels(b Bar) []endLabel {
	lo := endLabel{text: unit.Format(b.Low, clean(b.InputUnit)), x: b.OutLow}
	hi := endLabel{text: unit.Format(b.High, clean(b.InputUnit)), x: b.OutHigh, isHigh: true}
	dl, dh := b.OutLow-tb.Baseline, b.OutHigh-tb.Baseline
	switch {
	case dl*dh > 0:
		far, near := &lo, &hi
		if math.Abs(dh) > math.Abs(dl) {
			far, near = &hi, &lo
		}
		far.right = far.x > tb.Baseline
		near.right = !far.right
		near.x = tb.Baseline
	case dl == 0 && dh == 0:
		lo.right, hi.right = false, true
	case dl == 0:
		hi.right = dh > 0
		lo.right = !hi.right
	case dh == 0:
		lo.right = dl > 0
		hi.right = !lo.right
	default:
		lo.right, hi.right = dl > 0, dh > 0
	}
	// Keep labels clear of the whisker and of the other part of the bar.
	reach := []float64{b.OutLow, b.OutHigh, tb.Baseline}
	if b.NonMonotone {
		reach = append(reach, b.Min, b.Max)
	}
	left, right := extent(reach...)
	for _, l := range []*endLabel{&lo, &hi} {
		if l.right {
			l.x = right
		} else {
			l.x = left
		}
	}
	return []endLabel{lo, hi}
}

func (tb *TornadoBars) labelStyle(l endLabel) text.Style {
	sty := tb.LabelStyle
	sty.YAlign = draw.YCenter
	if l.right {
		sty.XAlign = draw.XLeft
	} else {
		sty.XAlign = draw.XRight
	}
	sty.Color = tb.LowTextColor
	if l.isHigh {
		sty.Color = tb.HighTextColor
	}
	return sty
}

func labelOffset(l endLabel) vg.Length {
	if l.right {
		return labelPad
	}
	return -labelPad
}

// Plot implements plot.Plotter.
func (tb *TornadoBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	rows := tb.rows()
	n := len(rows)
	rowH := vg.Length(math.Abs(float64(trY(1) - trY(0))))
	th := rowH * vg.Length(tb.Thickness)
	xb := trX(tb.Baseline)

	for i, b := range rows {
		yc := trY(float64(n - 1 - i))
		isRest := tb.Rest != nil && i == n-1
		lowCol, highCol := tb.LowColor, tb.HighColor
		if isRest {
			lowCol, highCol = tb.RestColor, tb.RestColor
			// A thin rule separates the summary from the inputs above it.
			ys := yc + rowH/2
			c.StrokeLine2(lineStyle(colGrid, widthGrid), c.Min.X, ys, c.Max.X, ys)
		}
		xl, xh := trX(b.OutLow), trX(b.OutHigh)
		dl, dh := b.OutLow-tb.Baseline, b.OutHigh-tb.Baseline
		if dl*dh > 0 {
			farX, farCol, nearX, nearCol := xl, lowCol, xh, highCol
			if math.Abs(dh) > math.Abs(dl) {
				farX, farCol, nearX, nearCol = xh, highCol, xl, lowCol
			}
			fillBar(c, xb, farX, yc, th, farCol)
			fillBar(c, xb, nearX, yc, th*0.5, nearCol)
		} else {
			fillBar(c, xb, xl, yc, th, lowCol)
			fillBar(c, xb, xh, yc, th, highCol)
		}
		if isRest {
			continue
		}
		if b.NonMonotone {
			drawWhisker(c, trX(b.Min), trX(b.Max), yc, th*0.55)
		}
		for _, l := range tb.endLabels(b) {
			sty := tb.labelStyle(l)
			// Raise by the descent, as plot.Axis does for tick labels, so
			// the values line up with the names beside the rows.
			c.FillText(sty, vg.Point{X: trX(l.x) + labelOffset(l), Y: yc + sty.FontExtents().Descent}, l.text)
		}
	}

	c.StrokeLine2(tb.BaselineStyle, xb, c.Min.Y, xb, c.Max.Y)
	if tb.BaselineLabel != "" {
		sty := tb.baselineLabelStyle()
		c.FillText(sty, vg.Point{X: xb, Y: c.Max.Y + 2}, tb.BaselineLabel)
	}
}

func (tb *TornadoBars) baselineLabelStyle() text.Style {
	sty := tb.LabelStyle
	sty.Color = colInk
	sty.XAlign = draw.XCenter
	sty.YAlign = draw.YBottom
	return sty
}

// fillBar fills the rectangle from x0 to x1 (either order) of height h
// centred on y. A bar of zero length draws nothing visible but is still
// emitted, so every bar has its two parts in the output.
func fillBar(c draw.Canvas, x0, x1, y, h vg.Length, col color.Color) {
	if x1 < x0 {
		x0, x1 = x1, x0
	}
	r := vg.Rectangle{Min: vg.Point{X: x0, Y: y - h/2}, Max: vg.Point{X: x1, Y: y + h/2}}
	c.SetColor(col)
	c.Fill(r.Path())
}

// GlyphBoxes implements plot.GlyphBoxer: room for the input values at the
// bar ends and for the baseline label above the top row.
func (tb *TornadoBars) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	var boxes []plot.GlyphBox
	rows := tb.rows()
	n := len(rows)
	for i, b := range rows {
		if tb.Rest != nil && i == n-1 {
			continue
		}
		y := p.Y.Norm(float64(n - 1 - i))
		for _, l := range tb.endLabels(b) {
			r := tb.labelStyle(l).Rectangle(l.text)
			r = r.Add(vg.Point{X: labelOffset(l)})
			// Only the horizontal extent needs room; rows keep the vertical.
			r.Min.Y, r.Max.Y = 0, 0
			boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(l.x), Y: y, Rectangle: r})
		}
	}
	if tb.BaselineLabel != "" {
		r := tb.baselineLabelStyle().Rectangle(tb.BaselineLabel)
		r = r.Add(vg.Point{Y: 2})
		boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(tb.Baseline), Y: 1, Rectangle: r})
	}
	return boxes
}

// Text draws the tornado in lines of at most width columns: a row per bar,
// the baseline as a vertical rule, the input's values at the bar's ends
// (the value at the left end on the left), then the output's swing.
//
//	mass *     10.8 kg ▐██████│████▍    13 kg  Δ 12,000
func (t *Tornado) Text(width int) string {
	if err := t.check(); err != nil {
		return textMessage(t.heading(), err)
	}
	width = textWidth(width)
	u := clean(t.Unit)
	rows := t.Bars
	if t.Rest != nil {
		rows = append(rows[:len(rows):len(rows)], *t.Rest)
	}
	tb := NewTornadoBars(t.Bars, t.Rest, t.Baseline)

	// Column widths.
	nameW := 4
	for _, n := range t.names() {
		nameW = max(nameW, runeLen(n))
	}
	nameW = min(nameW, max(8, width/4))
	var names []string
	for _, b := range t.Bars {
		names = append(names, barName(b, nameW))
	}
	if t.Rest != nil {
		names = append(names, orDefault(t.Rest.Name, "others"))
	}
	leftW, rightW, swingW := 1, 1, 0
	type cells struct{ left, right, swing string }
	rowCells := make([]cells, len(rows))
	swings := make([]float64, len(rows))
	for i, b := range rows {
		swings[i] = math.Abs(b.OutHigh - b.OutLow)
	}
	swingCol := unit.NewColumn(u, swings...)
	for i, b := range rows {
		var rc cells
		if !(t.Rest != nil && i == len(rows)-1) {
			for _, l := range tb.endLabels(b) {
				if l.right {
					rc.right = l.text
				} else {
					rc.left = l.text
				}
			}
		}
		rc.swing = "Δ " + swingCol.Format(swings[i])
		rowCells[i] = rc
		leftW = max(leftW, runeLen(rc.left))
		rightW = max(rightW, runeLen(rc.right))
		swingW = max(swingW, runeLen(rc.swing))
	}
	leftW, rightW, swingW = min(leftW, 14), min(rightW, 14), min(swingW, 16)
	barW := width - nameW - leftW - rightW - swingW - 4
	if barW < 24 {
		swingW = 0
		barW = width - nameW - leftW - rightW - 3
	}
	barW = max(barW, 12)

	xmin, xmax, _, _ := tb.DataRange()
	// The baseline takes one column; both sides share one scale, the
	// largest at which each side's longest bar fits its cells.
	b0 := int(math.Round((t.Baseline - xmin) / (xmax - xmin) * float64(barW-1)))
	b0 = max(0, min(barW-1, b0))
	leftCells, rightCells := b0, barW-1-b0
	scale := math.Inf(1)
	if d := t.Baseline - xmin; d > 0 {
		scale = float64(leftCells) / d
	}
	if d := xmax - t.Baseline; d > 0 {
		scale = math.Min(scale, float64(rightCells)/d)
	}
	if math.IsInf(scale, 1) {
		scale = 0
	}

	var sb strings.Builder
	line := func(name, left string, bar []rune, right, swing string) {
		s := padRight(name, nameW) + " " + padLeft(left, leftW) + " " + string(bar) + " " + padRight(right, rightW)
		if swingW > 0 {
			s += " " + padRight(swing, swingW)
		}
		sb.WriteString(s + "\n")
	}
	sb.WriteString(Wrap(t.heading(), width) + "\n")
	sb.WriteString(Wrap(fmt.Sprintf("%s, baseline %s; one input at a time, its low and high values at the bar ends",
		axisTitle(orDefault(t.Output, "output"), u), unit.Format(t.Baseline, u)), width) + "\n")

	// Scale: the range ends under the bar area, the baseline above its rule.
	line("", "", scaleLabels(barW, []scaleLabel{
		{unit.Format(t.Baseline, ""), b0, 0},
		{unit.Format(xmin, ""), 0, -1},
		{unit.Format(xmax, ""), barW - 1, 1},
	}), "", "")
	rule := func(mid rune) []rune {
		r := []rune(strings.Repeat("─", barW))
		r[b0] = mid
		return r
	}
	line("", "", rule('┬'), "", "")

	for i, b := range rows {
		isRest := t.Rest != nil && i == len(rows)-1
		bar := make([]rune, 0, barW)
		lo, hi := math.Min(b.OutLow, b.OutHigh), math.Max(b.OutLow, b.OutHigh)
		leftLen := math.Max(0, t.Baseline-lo) * scale
		rightLen := math.Max(0, hi-t.Baseline) * scale
		lb, rb := barLeft(leftLen, leftCells), barRight(rightLen, rightCells)
		if isRest {
			lb, rb = shadeBar(lb), shadeBar(rb)
		}
		bar = append(bar, lb...)
		bar = append(bar, '│')
		bar = append(bar, rb...)
		rc := rowCells[i]
		line(names[i], rc.left, bar, rc.right, rc.swing)
	}
	line("", "", rule('┴'), "", "")
	anyDefault, anyNonMonotone := t.flags()
	if anyDefault {
		sb.WriteString(markDefaultRange + " default range used (no range or distribution given)\n")
	}
	if anyNonMonotone {
		sb.WriteString(markNonMonotone + " effect not monotone over the range\n")
	}
	return sb.String()
}

// shadeBar redraws a bar in light shade, for the summary row.
func shadeBar(r []rune) []rune {
	for i, c := range r {
		if c != ' ' {
			r[i] = '░'
		}
	}
	return r
}
