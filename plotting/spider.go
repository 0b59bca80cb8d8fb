package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"image/color"
	"io"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// SpiderLine is the output as one input changes by Pct percent of its
// baseline value, the others held at baseline. Pct and Out have equal
// lengths; the points need not be sorted.
type SpiderLine struct {
	Name     string
	Pct, Out []float64
}

// Spider is a spider chart: a line per input of the output against the
// percentage change of that input. Every line passes through (0, Baseline).
type Spider struct {
	Title        string
	Output, Unit string
	Baseline     float64
	Lines        []SpiderLine
	// OwnRanges says each line runs over its input's own range (drawn as
	// the percentage change from the baseline), not over one percentage
	// range for all.
	OwnRanges bool
	// Notes are drawn under the chart, such as the inputs not drawn.
	Notes []string
}

var _ Chart = (*Spider)(nil)

func (s *Spider) heading() string {
	if s == nil {
		return "Spider"
	}
	if t := clean(s.Title); t != "" {
		return t
	}
	if o := clean(s.Output); o != "" {
		return "Spider: " + o
	}
	return "Spider"
}

func (s *Spider) check() error {
	if s == nil {
		return fmt.Errorf("spider: no chart (nil): %w", ErrNoData)
	}
	what := "spider of " + orDefault(s.Output, "the output")
	if len(s.Lines) == 0 {
		return fmt.Errorf("%s has no inputs: %w", what, ErrNoData)
	}
	if err := finite(what, "baseline", s.Baseline); err != nil {
		return err
	}
	for i, l := range s.Lines {
		label := fmt.Sprintf("line %d (%q)", i+1, l.Name)
		if len(l.Pct) != len(l.Out) {
			return fmt.Errorf("%s: %s has %d percentages but %d outputs", what, label, len(l.Pct), len(l.Out))
		}
		if len(l.Pct) == 0 {
			return fmt.Errorf("%s: %s has no points: %w", what, label, ErrNoData)
		}
		if err := finiteSlice(what, label+": Pct", l.Pct); err != nil {
			return err
		}
		if err := finiteSlice(what, label+": Out", l.Out); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (s *Spider) Validate() error { return s.check() }

// WriteSVG implements Chart.
func (s *Spider) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, s, o) }

// WritePNG implements Chart.
func (s *Spider) WritePNG(w io.Writer, o *Options) error { return writePNG(w, s, o) }

// SVG implements Chart.
func (s *Spider) SVG() string { return svgString(s) }

// PNG implements Chart.
func (s *Spider) PNG() []byte { return pngBytes(s) }

// HTML implements Chart.
func (s *Spider) HTML() string { return htmlString(s) }

func (s *Spider) frame() *frame {
	s = s.view()
	f := &frame{
		title:    s.heading(),
		subtitle: "Output as each input alone changes by a percentage of its baseline value",
		notes:    s.Notes,
	}
	if s.OwnRanges {
		f.subtitle = "Output as each input alone moves over its own range, as a percentage change from its baseline"
	}
	sl := NewSpiderLines(s.Lines)
	for i, l := range s.Lines {
		g := sl.glyph(i)
		f.legend = append(f.legend, legendEntry{
			label: truncate(orDefault(l.Name, "(unnamed)"), 2*maxNameRunes),
			thumb: lineThumb(sl.lineStyle(i), &g),
		})
	}
	f.legend = append(f.legend, legendEntry{label: "baseline " + unit.Format(s.Baseline, clean(s.Unit)), thumb: glyphThumb(baselineGlyph())})
	return f
}

func (s *Spider) height(w vg.Length) vg.Length {
	hd, ft := s.frame().heights(w)
	return hd + ft + w*0.5
}

func (s *Spider) draw(c draw.Canvas) {
	body := s.frame().draw(c)
	s = s.view()
	p := newPlot()
	grid := plotter.NewGrid()
	grid.Vertical = lineStyle(colGrid, widthGrid)
	grid.Horizontal = lineStyle(colGrid, widthGrid)
	sl := NewSpiderLines(s.Lines)
	sl.Baseline = s.Baseline
	p.Add(grid, sl)
	p.X.Tick.Marker = pctTicks()
	p.X.Label.Text = "change in input [%]"
	p.Y.Label.Text = axisTitle(orDefault(s.Output, "output"), s.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (s *Spider) caption() string {
	s = s.view()
	u := clean(s.Unit)
	var b strings.Builder
	fmt.Fprintf(&b, "Spider chart of %s: one line per input showing the output as that input alone changes by a percentage of its baseline value; all lines pass through the baseline %s at 0%%. ",
		orDefault(s.Output, "the output"), unit.Format(s.Baseline, u))
	if i, lo, hi := s.steepest(); i >= 0 {
		fmt.Fprintf(&b, "Widest spread: %s, from %s to %s. ", orDefault(s.Lines[i].Name, "(unnamed)"), unit.Format(lo, u), unit.Format(hi, u))
	}
	b.WriteString("Steeper lines mean greater sensitivity; one input at a time, so interactions are not shown.")
	return b.String()
}

// steepest returns the line with the widest output range.
func (s *Spider) steepest() (idx int, lo, hi float64) {
	idx = -1
	best := -1.0
	for i, l := range s.Lines {
		a, b := extent(l.Out...)
		if b-a > best {
			idx, lo, hi, best = i, a, b, b-a
		}
	}
	return idx, lo, hi
}

// SpiderLines draws the lines of a spider chart: each line in its own
// colour and marker shape (colours repeat after six, shapes after six, so
// twelve lines stay apart), over reference lines at 0% and at Baseline.
type SpiderLines struct {
	Lines []SpiderLine
	// Baseline is the output drawn as a horizontal reference line; NaN
	// hides it.
	Baseline float64
	Colors   []color.Color
	Shapes   []draw.GlyphDrawer
	Width    vg.Length
	Radius   vg.Length
}

var (
	_ plot.Plotter    = (*SpiderLines)(nil)
	_ plot.DataRanger = (*SpiderLines)(nil)
	_ plot.GlyphBoxer = (*SpiderLines)(nil)
)

// seriesShapes are the marker shapes of successive series.
var seriesShapes = []draw.GlyphDrawer{
	draw.CircleGlyph{}, draw.BoxGlyph{}, draw.PyramidGlyph{},
	draw.RingGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{},
}

// NewSpiderLines returns SpiderLines in the package's theme.
func NewSpiderLines(lines []SpiderLine) *SpiderLines {
	return &SpiderLines{
		Lines:    lines,
		Baseline: math.NaN(),
		Colors:   seriesColors,
		Shapes:   seriesShapes,
		Width:    widthLine,
		Radius:   2.6,
	}
}

func (sl *SpiderLines) color(i int) color.Color { return sl.Colors[i%len(sl.Colors)] }

func (sl *SpiderLines) lineStyle(i int) draw.LineStyle {
	ls := lineStyle(sl.color(i), sl.Width)
	// Lines past the first round of colours are dashed.
	if i >= len(sl.Colors) {
		ls.Dashes = []vg.Length{5, 2}
	}
	return ls
}

func (sl *SpiderLines) glyph(i int) draw.GlyphStyle {
	return draw.GlyphStyle{Color: sl.color(i), Radius: sl.Radius, Shape: sl.Shapes[(i/len(sl.Colors)+i)%len(sl.Shapes)]}
}

// sorted returns the points of l ordered by percentage.
func sortedPoints(l SpiderLine) plotter.XYs {
	pts := make(plotter.XYs, len(l.Pct))
	for i := range l.Pct {
		pts[i].X, pts[i].Y = l.Pct[i], l.Out[i]
	}
	sort.SliceStable(pts, func(a, b int) bool { return pts[a].X < pts[b].X })
	return pts
}

// DataRange implements plot.DataRanger.
func (sl *SpiderLines) DataRange() (xmin, xmax, ymin, ymax float64) {
	xs := []float64{0}
	var ys []float64
	if !math.IsNaN(sl.Baseline) {
		ys = append(ys, sl.Baseline)
	}
	for _, l := range sl.Lines {
		xs = append(xs, l.Pct...)
		ys = append(ys, l.Out...)
	}
	xmin, xmax = widen(extent(xs...))
	ymin, ymax = widen(extent(ys...))
	return
}

// Plot implements plot.Plotter.
func (sl *SpiderLines) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	ref := lineStyle(colRefLine, widthAxis, 3, 2)
	x0 := trX(0)
	c.StrokeLines(ref, c.ClipLinesX([]vg.Point{{X: x0, Y: c.Min.Y}, {X: x0, Y: c.Max.Y}})...)
	if !math.IsNaN(sl.Baseline) {
		y0 := trY(sl.Baseline)
		c.StrokeLines(ref, c.ClipLinesY([]vg.Point{{X: c.Min.X, Y: y0}, {X: c.Max.X, Y: y0}})...)
	}
	for i, l := range sl.Lines {
		pts := sortedPoints(l)
		line := make([]vg.Point, len(pts))
		for j, pt := range pts {
			line[j] = vg.Point{X: trX(pt.X), Y: trY(pt.Y)}
		}
		c.StrokeLines(sl.lineStyle(i), c.ClipLinesXY(line)...)
	}
	// Markers go on top of every line. At 0% all lines meet at the
	// baseline, which gets one marker of its own instead of a pile.
	hasBase := !math.IsNaN(sl.Baseline)
	for i, l := range sl.Lines {
		g := sl.glyph(i)
		for _, pt := range sortedPoints(l) {
			if hasBase && pt.X == 0 && pt.Y == sl.Baseline {
				continue
			}
			drawHaloGlyph(c, g, vg.Point{X: trX(pt.X), Y: trY(pt.Y)})
		}
	}
	if hasBase {
		drawHaloGlyph(c, baselineGlyph(), vg.Point{X: trX(0), Y: trY(sl.Baseline)})
	}
}

// baselineGlyph marks the baseline point in spider and sweep charts.
func baselineGlyph() draw.GlyphStyle {
	return draw.GlyphStyle{Color: colInk, Radius: 3.2, Shape: draw.CircleGlyph{}}
}

// GlyphBoxes implements plot.GlyphBoxer: room for the markers.
func (sl *SpiderLines) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	var boxes []plot.GlyphBox
	r := sl.Radius + 1.5
	for _, l := range sl.Lines {
		for i := range l.Pct {
			boxes = append(boxes, plot.GlyphBox{
				X: p.X.Norm(l.Pct[i]), Y: p.Y.Norm(l.Out[i]),
				Rectangle: vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}},
			})
		}
	}
	return boxes
}

// Text draws the spider chart as a table, a row per input: the output at
// the lowest and highest percentage, and a sparkline of the line drawn on
// a scale common to all rows, so steeper inputs show taller swings.
func (s *Spider) Text(width int) string {
	if err := s.check(); err != nil {
		return textMessage(s.heading(), err)
	}
	s = s.view()
	width = textWidth(width)
	u := clean(s.Unit)
	_, _, ylo, yhi := NewSpiderLines(s.Lines).DataRange()

	type row struct{ name, lo, hi, spread string }
	var rows []row
	nameW, valW := 5, 5
	pmin, pmax := math.Inf(1), math.Inf(-1)
	samePct := true
	// The three value columns share one format, so money takes one number
	// of decimals in all of them.
	var vals []float64
	for _, l := range s.Lines {
		ymin, ymax := extent(l.Out...)
		vals = append(vals, ymin, ymax, ymax-ymin)
	}
	col := unit.NewColumn(u, vals...)
	for i, l := range s.Lines {
		pts := sortedPoints(l)
		ymin, ymax := extent(l.Out...)
		r := row{
			name:   orDefault(l.Name, "(unnamed)"),
			lo:     col.Format(pts[0].Y),
			hi:     col.Format(pts[len(pts)-1].Y),
			spread: col.Format(ymax - ymin),
		}
		if i > 0 && (pts[0].X != pmin || pts[len(pts)-1].X != pmax) {
			samePct = false
		}
		pmin, pmax = pts[0].X, pts[len(pts)-1].X
		rows = append(rows, r)
		nameW = max(nameW, runeLen(r.name))
		valW = max(valW, runeLen(r.lo), runeLen(r.hi), runeLen(r.spread))
	}
	nameW = min(nameW, max(8, width/4))
	loHead, hiHead := "at lowest %", "at highest %"
	if samePct {
		loHead, hiHead = "at "+unit.Signed(pmin, "%"), "at "+unit.Signed(pmax, "%")
	}
	valW = max(valW, runeLen(loHead), runeLen(hiHead))
	sparkW := max(8, width-nameW-3*valW-4)

	var b strings.Builder
	b.WriteString(Wrap(s.heading(), width) + "\n")
	how := "each input alone changed by a percentage of its baseline"
	if s.OwnRanges {
		how = "each input alone over its own range"
	}
	b.WriteString(Wrap(fmt.Sprintf("%s, baseline %s; %s", axisTitle(orDefault(s.Output, "output"), u), unit.Format(s.Baseline, u), how), width) + "\n")
	b.WriteString(padRight("input", nameW) + " " + padLeft(loHead, valW) + " " + padLeft(hiHead, valW) + " " + padLeft("max-min", valW) + " " + padRight("shape, common scale", sparkW) + "\n")
	for i, l := range s.Lines {
		pts := sortedPoints(l)
		ys := make([]float64, len(pts))
		for j := range pts {
			ys[j] = pts[j].Y
		}
		r := rows[i]
		// Interpolate short lines so their shape shows; the chart draws
		// straight segments between points too.
		if n := min(sparkW, 16); len(ys) < n && len(ys) > 1 {
			ys = resample(ys, n)
		}
		b.WriteString(padRight(r.name, nameW) + " " + padLeft(r.lo, valW) + " " + padLeft(r.hi, valW) + " " + padLeft(r.spread, valW) + " " + padRight(sparkline(ys, ylo, yhi, sparkW), sparkW) + "\n")
	}
	return b.String()
}

// view returns the chart as drawn: lines that coincide (the same points, the
// outputs equal to 1e-9 of the largest) drawn once, labelled with every name,
// so that none is hidden under another.
func (s *Spider) view() *Spider {
	c := *s
	c.Lines = GroupSpiderLines(s.Lines)
	return &c
}

// GroupSpiderLines merges lines that coincide: the same percentages and
// outputs equal to within 1e-9 of the largest |output|. A merged line is
// named by its lines' names joined by " = ", in their order; the others are
// returned as they are.
func GroupSpiderLines(lines []SpiderLine) []SpiderLine {
	scale := 0.0
	for _, l := range lines {
		for _, y := range l.Out {
			scale = math.Max(scale, math.Abs(y))
		}
	}
	tol := 1e-9 * scale
	same := func(a, b SpiderLine) bool {
		if len(a.Pct) != len(b.Pct) || len(a.Out) != len(b.Out) {
			return false
		}
		for i := range a.Pct {
			if a.Pct[i] != b.Pct[i] || math.Abs(a.Out[i]-b.Out[i]) > tol {
				return false
			}
		}
		return true
	}
	out := make([]SpiderLine, 0, len(lines))
	used := make([]bool, len(lines))
	for i, l := range lines {
		if used[i] {
			continue
		}
		names := []string{orDefault(l.Name, "(unnamed)")}
		for j := i + 1; j < len(lines); j++ {
			if !used[j] && same(l, lines[j]) {
				used[j] = true
				names = append(names, orDefault(lines[j].Name, "(unnamed)"))
			}
		}
		if len(names) > 1 {
			l.Name = strings.Join(names, " = ")
		}
		out = append(out, l)
	}
	return out
}
