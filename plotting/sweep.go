package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"io"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Sweep is a 1-D sweep: the output as one input runs over a range, the
// others held at baseline, with the baseline point marked and an optional
// target level whose crossings are marked.
type Sweep struct {
	Title string
	// Output and Unit name the output (y); Input and InputUnit the swept
	// input (x).
	Output, Unit     string
	Input, InputUnit string
	// X holds the input's values, strictly increasing; Y the outputs.
	X, Y []float64
	// BaselineInput and Baseline are the input's baseline value and the
	// output there.
	BaselineInput, Baseline float64
	// Target, when not nil, is an output level to reach.
	Target *float64
	// KnownRoots, when true, says that Roots holds every input value at
	// which the output equals the target, found by the caller (a
	// break-even's verified crossings): the chart marks those that lie in
	// X's span, and no others. Otherwise the crossings are interpolated
	// between the points, which would mark a jump or a pole past the
	// target as a crossing.
	KnownRoots bool
	Roots      []float64
	// Band, when not nil, shades a span of the input, such as its stated
	// range in a break-even chart.
	Band *Band
	// Notes are drawn under the chart.
	Notes []string
}

// Band is a span of a chart's x axis, shaded and named in the legend.
type Band struct {
	Low, High float64
	Label     string
}

// colBand shades a Band: a pale tint of the first series' blue.
var colBand = rgb(0xDC, 0xE8, 0xF4)

var _ Chart = (*Sweep)(nil)

func (s *Sweep) heading() string {
	if s == nil {
		return "Sweep"
	}
	if t := clean(s.Title); t != "" {
		return t
	}
	o, in := clean(s.Output), clean(s.Input)
	switch {
	case o != "" && in != "":
		return "Sweep: " + o + " over " + in
	case o != "":
		return "Sweep: " + o
	}
	return "Sweep"
}

func (s *Sweep) check() error {
	if s == nil {
		return fmt.Errorf("sweep: no chart (nil): %w", ErrNoData)
	}
	what := "sweep of " + orDefault(s.Output, "the output")
	if len(s.X) != len(s.Y) {
		return fmt.Errorf("%s: %d input values but %d outputs", what, len(s.X), len(s.Y))
	}
	if len(s.X) < 2 {
		return fmt.Errorf("%s needs at least 2 points, has %d: %w", what, len(s.X), ErrNoData)
	}
	if err := finiteSlice(what, "X", s.X); err != nil {
		return err
	}
	if err := finiteSlice(what, "Y", s.Y); err != nil {
		return err
	}
	if err := increasing(what, "X", s.X); err != nil {
		return err
	}
	if err := finite(what, "baseline input", s.BaselineInput); err != nil {
		return err
	}
	if err := finite(what, "baseline", s.Baseline); err != nil {
		return err
	}
	if s.Target != nil {
		if err := finite(what, "target", *s.Target); err != nil {
			return err
		}
	}
	if s.Band != nil {
		if err := finiteSlice(what, "band", []float64{s.Band.Low, s.Band.High}); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (s *Sweep) Validate() error { return s.check() }

// WriteSVG implements Chart.
func (s *Sweep) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, s, o) }

// WritePNG implements Chart.
func (s *Sweep) WritePNG(w io.Writer, o *Options) error { return writePNG(w, s, o) }

// SVG implements Chart.
func (s *Sweep) SVG() string { return svgString(s) }

// PNG implements Chart.
func (s *Sweep) PNG() []byte { return pngBytes(s) }

// HTML implements Chart.
func (s *Sweep) HTML() string { return htmlString(s) }

// Crossings returns the input values at which the piecewise-linear curve
// through (X, Y) meets the target, in increasing order; nil without a
// target. A segment whose ends straddle the target contributes the point
// found by linear interpolation,
//
//	x = x0 + (x1 - x0) (t - y0) / (y1 - y0)
//
// and a point lying exactly on the target counts once.
func (s *Sweep) Crossings() []float64 {
	if s == nil || s.Target == nil {
		return nil
	}
	if s.KnownRoots {
		return rootsIn(s.X, s.Roots)
	}
	return crossings(s.X, s.Y, *s.Target)
}

// rootsIn returns the roots within the span of xs, in increasing order,
// each once.
func rootsIn(xs, roots []float64) []float64 {
	if len(xs) == 0 {
		return nil
	}
	lo, hi := xs[0], xs[len(xs)-1]
	var out []float64
	for _, r := range roots {
		if r >= lo && r <= hi {
			out = append(out, r)
		}
	}
	sort.Float64s(out)
	k := 0
	for i, r := range out {
		if i == 0 || r != out[k-1] {
			out[k] = r
			k++
		}
	}
	return out[:k]
}

func crossings(xs, ys []float64, t float64) []float64 {
	var out []float64
	add := func(x float64) {
		if len(out) == 0 || out[len(out)-1] != x {
			out = append(out, x)
		}
	}
	for i := 0; i+1 < len(xs); i++ {
		d0, d1 := ys[i]-t, ys[i+1]-t
		switch {
		case d0 == 0:
			add(xs[i])
		case d0*d1 < 0:
			add(xs[i] + (xs[i+1]-xs[i])*d0/(d0-d1))
		}
	}
	if n := len(xs); n > 0 && ys[n-1] == t {
		add(xs[n-1])
	}
	return out
}

func (s *Sweep) frame() *frame {
	inUnit, u := clean(s.InputUnit), clean(s.Unit)
	in := orDefault(s.Input, "input")
	f := &frame{
		title:    s.heading(),
		subtitle: fmt.Sprintf("Output as %s runs from %s to %s, the other inputs at baseline", in, unit.Format(s.X[0], inUnit), unit.Format(s.X[len(s.X)-1], inUnit)),
	}
	sc := NewSweepCurve(s.X, s.Y)
	f.legend = append(f.legend,
		legendEntry{label: orDefault(s.Output, "output"), thumb: lineThumb(sc.LineStyle, nil)},
		legendEntry{label: fmt.Sprintf("baseline (%s = %s)", in, unit.Format(s.BaselineInput, inUnit)), thumb: glyphThumb(baselineGlyph())},
	)
	if b := s.Band; b != nil {
		f.legend = append(f.legend, legendEntry{label: fmt.Sprintf("%s %s..%s", orDefault(b.Label, "band"), unit.Format(b.Low, inUnit), unit.Format(b.High, inUnit)), thumb: swatchThumb(colBand)})
	}
	if s.Target != nil {
		t := *s.Target
		sc.Target = t
		if _, _, ymin, ymax := sc.DataRange(); ymin <= t && t <= ymax {
			f.legend = append(f.legend, legendEntry{label: "target " + unit.Format(t, u), thumb: lineThumb(targetLineStyle(), nil)})
		}
		xs := s.Crossings()
		if len(xs) > 0 {
			f.legend = append(f.legend, legendEntry{label: "reaches target", thumb: glyphThumb(crossingGlyph())})
			var parts []string
			for _, x := range xs {
				parts = append(parts, unit.Format(x, inUnit))
			}
			how := " (linear interpolation between sweep points)"
			if s.KnownRoots {
				how = ""
			}
			f.notes = append(f.notes, fmt.Sprintf("Reaches the target %s at %s = %s%s.", unit.Format(t, u), in, strings.Join(parts, ", "), how))
		} else {
			lo, hi := extent(s.Y...)
			f.notes = append(f.notes, fmt.Sprintf("The target %s is not reached over this range: %s runs from %s to %s.", unit.Format(t, u), orDefault(s.Output, "the output"), unit.Format(lo, u), unit.Format(hi, u)))
		}
	}
	f.notes = append(f.notes, s.Notes...)
	return f
}

func (s *Sweep) height(w vg.Length) vg.Length {
	hd, ft := s.frame().heights(w)
	return hd + ft + w*0.5
}

func (s *Sweep) draw(c draw.Canvas) {
	body := s.frame().draw(c)
	p := newPlot()
	grid := plotter.NewGrid()
	grid.Vertical = lineStyle(colGrid, widthGrid)
	grid.Horizontal = lineStyle(colGrid, widthGrid)
	sc := NewSweepCurve(s.X, s.Y)
	sc.BaselineInput, sc.Baseline = s.BaselineInput, s.Baseline
	if s.Band != nil {
		sc.BandLow, sc.BandHigh = s.Band.Low, s.Band.High
	}
	if s.Target != nil {
		sc.Target = *s.Target
		sc.KnownRoots, sc.Roots = s.KnownRoots, s.Roots
		sc.CrossingLabel = func(x float64) string { return unit.Format(x, clean(s.InputUnit)) }
	}
	p.Add(grid, sc)
	p.X.Label.Text = axisTitle(orDefault(s.Input, "input"), s.InputUnit)
	p.Y.Label.Text = axisTitle(orDefault(s.Output, "output"), s.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (s *Sweep) caption() string {
	inUnit, u := clean(s.InputUnit), clean(s.Unit)
	in, out := orDefault(s.Input, "the input"), orDefault(s.Output, "the output")
	lo, hi := extent(s.Y...)
	var b strings.Builder
	fmt.Fprintf(&b, "Sweep of %s as %s runs from %s to %s, the other inputs at baseline: %s ranges from %s to %s. ",
		out, in, unit.Format(s.X[0], inUnit), unit.Format(s.X[len(s.X)-1], inUnit), out, unit.Format(lo, u), unit.Format(hi, u))
	fmt.Fprintf(&b, "Baseline: %s = %s gives %s. ", in, unit.Format(s.BaselineInput, inUnit), unit.Format(s.Baseline, u))
	if s.Target != nil {
		xs := s.Crossings()
		if len(xs) == 0 {
			fmt.Fprintf(&b, "The target %s is not reached over this range.", unit.Format(*s.Target, u))
		} else {
			var parts []string
			for _, x := range xs {
				parts = append(parts, unit.Format(x, inUnit))
			}
			fmt.Fprintf(&b, "The target %s is reached at %s = %s.", unit.Format(*s.Target, u), in, strings.Join(parts, ", "))
		}
	}
	return strings.TrimSpace(b.String())
}

func targetLineStyle() draw.LineStyle { return lineStyle(colInk, widthWhisker, 5, 3) }

func crossingGlyph() draw.GlyphStyle {
	return draw.GlyphStyle{Color: colHighText, Radius: 3.6, Shape: draw.RingGlyph{}}
}

// SweepCurve draws a 1-D sweep: the curve through (X, Y), the baseline
// point, and, when Target is not NaN, a dashed target line with a ring at
// every crossing, labelled by CrossingLabel.
type SweepCurve struct {
	X, Y                    []float64
	BaselineInput, Baseline float64
	// Target is the output level to mark; NaN for none.
	Target float64
	// CrossingLabel formats the input value of a crossing; nil writes none.
	CrossingLabel func(x float64) string
	// KnownRoots and Roots, as in Sweep: the crossings to mark, when the
	// caller knows them, instead of those interpolated between points.
	KnownRoots bool
	Roots      []float64
	// BandLow..BandHigh is a span of the input shaded under the curve; NaN
	// for none.
	BandLow, BandHigh float64

	LineStyle  draw.LineStyle
	LabelStyle text.Style
}

var (
	_ plot.Plotter    = (*SweepCurve)(nil)
	_ plot.DataRanger = (*SweepCurve)(nil)
	_ plot.GlyphBoxer = (*SweepCurve)(nil)
)

// NewSweepCurve returns a SweepCurve in the package's theme, with the
// baseline point at NaN (not drawn) and no target.
func NewSweepCurve(x, y []float64) *SweepCurve {
	return &SweepCurve{
		X: x, Y: y,
		BaselineInput: math.NaN(), Baseline: math.NaN(),
		Target:     math.NaN(),
		BandLow:    math.NaN(),
		BandHigh:   math.NaN(),
		LineStyle:  lineStyle(colLow, widthLine),
		LabelStyle: textStyle(sizeLabel, colHighText, false, draw.XCenter, draw.YBottom),
	}
}

func (sc *SweepCurve) hasBaseline() bool {
	return !math.IsNaN(sc.BaselineInput) && !math.IsNaN(sc.Baseline)
}

// DataRange implements plot.DataRanger. The target widens the y range only
// when it lies within 25% of the curve's span, so a far target does not
// flatten the curve; it is then noted rather than drawn.
func (sc *SweepCurve) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = widen(extent(sc.X...))
	ys := append([]float64(nil), sc.Y...)
	if sc.hasBaseline() {
		ys = append(ys, sc.Baseline)
	}
	ymin, ymax = extent(ys...)
	if !math.IsNaN(sc.Target) {
		span := math.Max(ymax-ymin, math.Abs(ymax)*1e-9)
		if sc.Target >= ymin-0.25*span && sc.Target <= ymax+0.25*span {
			ymin, ymax = math.Min(ymin, sc.Target), math.Max(ymax, sc.Target)
		}
	}
	ymin, ymax = widen(ymin, ymax)
	return
}

// Plot implements plot.Plotter.
func (sc *SweepCurve) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	if !math.IsNaN(sc.BandLow) && !math.IsNaN(sc.BandHigh) {
		x0, x1 := max(trX(sc.BandLow), c.Min.X), min(trX(sc.BandHigh), c.Max.X)
		if x1 > x0 {
			c.FillPolygon(colBand, []vg.Point{{X: x0, Y: c.Min.Y}, {X: x1, Y: c.Min.Y}, {X: x1, Y: c.Max.Y}, {X: x0, Y: c.Max.Y}})
		}
	}
	if !math.IsNaN(sc.Target) && p.Y.Min <= sc.Target && sc.Target <= p.Y.Max {
		y := trY(sc.Target)
		c.StrokeLine2(targetLineStyle(), c.Min.X, y, c.Max.X, y)
	}
	line := make([]vg.Point, len(sc.X))
	for i := range sc.X {
		line[i] = vg.Point{X: trX(sc.X[i]), Y: trY(sc.Y[i])}
	}
	c.StrokeLines(sc.LineStyle, c.ClipLinesXY(line)...)
	if sc.hasBaseline() {
		drawHaloGlyph(c, baselineGlyph(), vg.Point{X: trX(sc.BaselineInput), Y: trY(sc.Baseline)})
	}
	if !math.IsNaN(sc.Target) {
		for _, x := range sc.crossings() {
			pt := vg.Point{X: trX(x), Y: trY(sc.Target)}
			drawHaloGlyph(c, crossingGlyph(), pt)
			if sc.CrossingLabel != nil {
				c.FillText(sc.LabelStyle, pt.Add(vg.Point{Y: 6}), sc.CrossingLabel(x))
			}
		}
	}
}

// crossings returns the input values at which the curve meets the target.
func (sc *SweepCurve) crossings() []float64 {
	if sc.KnownRoots {
		return rootsIn(sc.X, sc.Roots)
	}
	return crossings(sc.X, sc.Y, sc.Target)
}

// GlyphBoxes implements plot.GlyphBoxer: room for the markers and the
// crossing labels.
func (sc *SweepCurve) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	var boxes []plot.GlyphBox
	r := vg.Length(5)
	box := vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}}
	if sc.hasBaseline() {
		boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(sc.BaselineInput), Y: p.Y.Norm(sc.Baseline), Rectangle: box})
	}
	if !math.IsNaN(sc.Target) {
		for _, x := range sc.crossings() {
			b := box
			if sc.CrossingLabel != nil {
				b = sc.LabelStyle.Rectangle(sc.CrossingLabel(x)).Add(vg.Point{Y: 6})
				b.Min.Y = -r
			}
			boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(x), Y: p.Y.Norm(sc.Target), Rectangle: b})
		}
	}
	return boxes
}

// Text draws the sweep as a sparkline of the whole curve and a table of at
// most 11 evenly spaced points, with the baseline and any target crossings
// as rows of their own, each with a bar scaled from the smallest output.
func (s *Sweep) Text(width int) string {
	if err := s.check(); err != nil {
		return textMessage(s.heading(), err)
	}
	width = textWidth(width)
	inUnit, u := clean(s.InputUnit), clean(s.Unit)
	in, out := orDefault(s.Input, "input"), orDefault(s.Output, "output")
	lo, hi := extent(s.Y...)
	lo, hi = widen(lo, hi)

	type row struct {
		x, y float64
		note string
	}
	var rows []row
	n := len(s.X)
	k := min(n, 11)
	for i := range k {
		j := 0
		if k > 1 {
			j = int(math.Round(float64(i) * float64(n-1) / float64(k-1)))
		}
		rows = append(rows, row{x: s.X[j], y: s.Y[j]})
	}
	insert := func(r row) {
		for i := range rows {
			if rows[i].x == r.x {
				if rows[i].note == "" {
					rows[i].note = r.note
				}
				return
			}
			if rows[i].x > r.x {
				rows = append(rows[:i], append([]row{r}, rows[i:]...)...)
				return
			}
		}
		rows = append(rows, r)
	}
	insert(row{x: s.BaselineInput, y: s.Baseline, note: "◀ baseline"})
	for _, x := range s.Crossings() {
		insert(row{x: x, y: *s.Target, note: "◀ target"})
	}

	xs, ys := make([]string, len(rows)), make([]string, len(rows))
	xW, yW := runeLen(axisTitle(in, inUnit)), runeLen(axisTitle(out, u))
	var xv, yv []float64
	for _, r := range rows {
		xv, yv = append(xv, r.x), append(yv, r.y)
	}
	xcol, ycol := unit.NewColumn(inUnit, xv...), unit.NewColumn(u, yv...)
	for i, r := range rows {
		xs[i], ys[i] = xcol.Format(r.x), ycol.Format(r.y)
		xW, yW = max(xW, runeLen(xs[i])), max(yW, runeLen(ys[i]))
	}
	xW, yW = min(xW, width/3), min(yW, width/3)
	noteW := runeLen("◀ baseline")
	barW := max(8, width-xW-yW-noteW-3)

	var b strings.Builder
	b.WriteString(Wrap(s.heading(), width) + "\n")
	curve := sparkline(s.Y, lo, hi, width-8)
	b.WriteString("curve  " + curve + "\n")
	if s.Target != nil {
		if len(s.Crossings()) == 0 {
			b.WriteString(Wrap(fmt.Sprintf("target %s not reached: %s runs from %s to %s", unit.Format(*s.Target, u), out, unit.Format(lo, u), unit.Format(hi, u)), width) + "\n")
		} else {
			b.WriteString(Wrap(fmt.Sprintf("target %s reached at the rows marked ◀ target", unit.Format(*s.Target, u)), width) + "\n")
		}
	}
	b.WriteString(padRight(axisTitle(in, inUnit), xW) + " " + padLeft(axisTitle(out, u), yW) + " " + strings.Repeat(" ", barW) + " " + strings.Repeat(" ", noteW) + "\n")
	for i, r := range rows {
		length := (r.y - lo) / (hi - lo) * float64(barW-1)
		bar := barRight(length+1, barW)
		b.WriteString(padRight(xs[i], xW) + " " + padLeft(ys[i], yW) + " " + string(bar) + " " + padRight(r.note, noteW) + "\n")
	}
	return b.String()
}
