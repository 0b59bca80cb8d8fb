package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"image"
	"io"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// HeatMap is a 2-D sweep: the output over a grid of two inputs, drawn as a
// colour map with a colour bar, the baseline point marked, and a contour
// where the output equals an optional target.
type HeatMap struct {
	Title        string
	Output, Unit string
	// XName and XUnit name the first input (across), YName and YUnit the
	// second (up).
	XName, XUnit string
	YName, YUnit string
	// X and Y are the grid's coordinates, each strictly increasing.
	X, Y []float64
	// Z[j][i] is the output at (X[i], Y[j]): one row per Y value.
	Z [][]float64
	// BaselineX and BaselineY are the inputs' baseline values, marked when
	// inside the grid.
	BaselineX, BaselineY float64
	// Target, when not nil, is an output level drawn as a contour.
	Target *float64
	// KnownContour, when true, says that Contour holds the contour at
	// Target as the analysis placed it (its points on grid edges refined and
	// verified on the model): it is drawn as given instead of a contour
	// interpolated from the grid, so the chart shows what the text and the
	// JSON list. Each line is a list of (x, y) points. Jumps are points of
	// it where the output jumps past the target (a step or a pole) rather
	// than equalling it: each is marked with a cross.
	KnownContour bool
	Contour      [][][2]float64
	Jumps        [][2]float64
}

var _ Chart = (*HeatMap)(nil)

func (h *HeatMap) heading() string {
	if h == nil {
		return "Heat map"
	}
	if t := clean(h.Title); t != "" {
		return t
	}
	o := clean(h.Output)
	x, y := clean(h.XName), clean(h.YName)
	switch {
	case o != "" && x != "" && y != "":
		return "Sweep: " + o + " over " + x + " and " + y
	case o != "":
		return "Sweep: " + o
	}
	return "Heat map"
}

func (h *HeatMap) check() error {
	if h == nil {
		return fmt.Errorf("heat map: no chart (nil): %w", ErrNoData)
	}
	what := "heat map of " + orDefault(h.Output, "the output")
	if len(h.X) < 2 || len(h.Y) < 2 {
		return fmt.Errorf("%s needs at least 2 values of each input, has %d by %d: %w", what, len(h.X), len(h.Y), ErrNoData)
	}
	if len(h.Z) != len(h.Y) {
		return fmt.Errorf("%s: Z has %d rows but Y has %d values", what, len(h.Z), len(h.Y))
	}
	for j, row := range h.Z {
		if len(row) != len(h.X) {
			return fmt.Errorf("%s: Z row %d has %d values but X has %d", what, j, len(row), len(h.X))
		}
		if err := finiteSlice(what, fmt.Sprintf("Z[%d]", j), row); err != nil {
			return err
		}
	}
	for _, f := range []struct {
		name string
		vs   []float64
	}{{"X", h.X}, {"Y", h.Y}} {
		if err := finiteSlice(what, f.name, f.vs); err != nil {
			return err
		}
		if err := increasing(what, f.name, f.vs); err != nil {
			return err
		}
	}
	if err := finite(what, "baseline X", h.BaselineX); err != nil {
		return err
	}
	if err := finite(what, "baseline Y", h.BaselineY); err != nil {
		return err
	}
	if h.Target != nil {
		if err := finite(what, "target", *h.Target); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (h *HeatMap) Validate() error { return h.check() }

// WriteSVG implements Chart.
func (h *HeatMap) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, h, o) }

// WritePNG implements Chart.
func (h *HeatMap) WritePNG(w io.Writer, o *Options) error { return writePNG(w, h, o) }

// SVG implements Chart.
func (h *HeatMap) SVG() string { return svgString(h) }

// PNG implements Chart.
func (h *HeatMap) PNG() []byte { return pngBytes(h) }

// HTML implements Chart.
func (h *HeatMap) HTML() string { return htmlString(h) }

// Grid returns the data as a plotter.GridXYZ for gonum/plot's HeatMap and
// Contour: column c is X[c], row r is Y[r].
func (h *HeatMap) Grid() plotter.GridXYZ { return gridXYZ{x: h.X, y: h.Y, z: h.Z} }

// gridXYZ adapts row-major Z[r][c] to plotter.GridXYZ.
type gridXYZ struct {
	x, y []float64
	z    [][]float64
}

func (g gridXYZ) Dims() (c, r int)   { return len(g.x), len(g.y) }
func (g gridXYZ) Z(c, r int) float64 { return g.z[r][c] }
func (g gridXYZ) X(c int) float64    { return g.x[c] }
func (g gridXYZ) Y(r int) float64    { return g.y[r] }
func (g gridXYZ) zRange() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, row := range g.z {
		a, b := extent(row...)
		lo, hi = math.Min(lo, a), math.Max(hi, b)
	}
	return lo, hi
}

// targetInRange reports whether the target lies strictly between the
// grid's smallest and largest output, so that a contour exists.
func (h *HeatMap) targetInRange() bool {
	if h.Target == nil {
		return false
	}
	lo, hi := gridXYZ{z: h.Z}.zRange()
	return lo < *h.Target && *h.Target < hi
}

// targetReached reports whether the target lies between the grid's
// smallest and largest output, ends included: an output level at the
// target (a plateau) reaches it without a contour.
func (h *HeatMap) targetReached() bool {
	if h.Target == nil {
		return false
	}
	lo, hi := gridXYZ{z: h.Z}.zRange()
	return lo <= *h.Target && *h.Target <= hi
}

func (h *HeatMap) baselineInside() bool {
	return h.X[0] <= h.BaselineX && h.BaselineX <= h.X[len(h.X)-1] &&
		h.Y[0] <= h.BaselineY && h.BaselineY <= h.Y[len(h.Y)-1]
}

func (h *HeatMap) frame() *frame {
	u := clean(h.Unit)
	f := &frame{
		title: h.heading(),
		subtitle: fmt.Sprintf("Output over a grid of %s and %s, the other inputs at baseline",
			orDefault(h.XName, "x"), orDefault(h.YName, "y")),
	}
	if h.baselineInside() {
		f.legend = append(f.legend, legendEntry{label: "baseline", thumb: glyphThumb(baselineGlyph())})
	}
	if h.Target != nil {
		t := *h.Target
		if h.targetInRange() {
			f.legend = append(f.legend, legendEntry{label: "target " + unit.Format(t, u), thumb: contourThumb()})
			if h.KnownContour && len(h.Jumps) > 0 {
				f.legend = append(f.legend, legendEntry{label: "jumps past the target", thumb: glyphThumb(jumpGlyph())})
			}
		} else if h.targetReached() {
			f.notes = append(f.notes, fmt.Sprintf("The target %s is reached only where %s is level at it, so no contour line is drawn.",
				unit.Format(t, u), orDefault(h.Output, "the output")))
		} else {
			lo, hi := gridXYZ{z: h.Z}.zRange()
			f.notes = append(f.notes, fmt.Sprintf("The target %s is not reached on this grid: %s runs from %s to %s.",
				unit.Format(t, u), orDefault(h.Output, "the output"), unit.Format(lo, u), unit.Format(hi, u)))
		}
	}
	return f
}

// jumpGlyph marks a point of a contour where the output jumps past the
// target rather than equalling it.
func jumpGlyph() draw.GlyphStyle {
	return draw.GlyphStyle{Color: colInk, Radius: 3.6, Shape: draw.CrossGlyph{}}
}

func contourThumb() func(c draw.Canvas) {
	return func(c draw.Canvas) {
		y := (c.Min.Y + c.Max.Y) / 2
		c.StrokeLine2(lineStyle(colMuted, widthHalo), c.Min.X, y, c.Max.X, y)
		c.StrokeLine2(contourStyle(), c.Min.X, y, c.Max.X, y)
	}
}

func contourStyle() draw.LineStyle { return lineStyle(colInk, widthContour) }

func (h *HeatMap) height(w vg.Length) vg.Length {
	hd, ft := h.frame().heights(w)
	return hd + ft + w*0.58
}

var styColorBarTitle = textStyle(sizeAxis, colInk, false, draw.XLeft, draw.YBottom)

const (
	colorBarWidth = vg.Length(11)
	colorBarGap   = vg.Length(14) // between the heat map and the colour bar
)

func (h *HeatMap) draw(c draw.Canvas) {
	body := h.frame().draw(c)
	// Inputs and outputs near the end of the float64 range (1e300 and up)
	// are drawn divided by a power of ten and labelled with their own
	// values: half a cell beyond the grid, or the width of an axis, would
	// otherwise overflow to +Inf in the chart's coordinates.
	sx, sy := drawScale(h.X), drawScale(h.Y)
	var zall []float64
	for _, row := range h.Z {
		zall = append(zall, row...)
	}
	sz := drawScale(zall)
	z := make([][]float64, len(h.Z))
	for r, row := range h.Z {
		z[r] = scaled(row, sz)
	}
	zlo, zhi := widen(gridXYZ{z: z}.zRange())
	cmap := newRamp(zlo, zhi)

	// The colour bar's column: the bar, its tick labels, and its title on
	// top, which must not be cut.
	ticks := niceTicks{N: 6, Format: scaledFormat(sz)}.Ticks(zlo, zhi)
	tickSty := textStyle(sizeTick, colMuted, false, draw.XLeft, draw.YCenter)
	var labelW vg.Length
	for _, t := range ticks {
		labelW = max(labelW, tickSty.Width(t.Label))
	}
	barTitle := axisTitle(orDefault(h.Output, "output"), h.Unit)
	colW := max(colorBarWidth+4+labelW, min(styColorBarTitle.Width(barTitle), (body.Max.X-body.Min.X)*0.3))
	barTitle = fitText(styColorBarTitle, barTitle, colW)

	heatC := body
	heatC.Max.X -= colW + colorBarGap
	heatC.Max.Y -= styColorBarTitle.Height(barTitle) + 6

	p := newPlot()
	p.X.Tick.Marker = niceTicks{Format: scaledFormat(sx)}
	p.Y.Tick.Marker = niceTicks{Format: scaledFormat(sy)}
	hg := NewHeatGrid(gridXYZ{x: scaled(h.X, sx), y: scaled(h.Y, sy), z: z}, cmap)
	if h.Target != nil {
		hg.Target = *h.Target / sz
	}
	if h.baselineInside() {
		hg.BaselineX, hg.BaselineY = h.BaselineX/sx, h.BaselineY/sy
	}
	if h.KnownContour {
		hg.KnownLines = true
		for _, l := range h.Contour {
			sl := make([][2]float64, len(l))
			for k, q := range l {
				sl[k] = [2]float64{q[0] / sx, q[1] / sy}
			}
			hg.Lines = append(hg.Lines, sl)
		}
		for _, q := range h.Jumps {
			hg.Jumps = append(hg.Jumps, [2]float64{q[0] / sx, q[1] / sy})
		}
	}
	p.Add(hg)
	p.X.Padding, p.Y.Padding = 0, 0
	p.X.Label.Text = axisTitle(orDefault(h.XName, "x"), h.XUnit)
	p.Y.Label.Text = axisTitle(orDefault(h.YName, "y"), h.YUnit)
	fitTicks(p, heatC)
	p.Draw(heatC)

	// Colour bar beside the data area, at the same height.
	dc := p.DataCanvas(heatC)
	bar := vg.Rectangle{
		Min: vg.Point{X: heatC.Max.X + colorBarGap, Y: dc.Min.Y},
		Max: vg.Point{X: heatC.Max.X + colorBarGap + colorBarWidth, Y: dc.Max.Y},
	}
	drawColorBar(c, bar, cmap, ticks, tickSty, hg.Target)
	c.FillText(styColorBarTitle, vg.Point{X: bar.Min.X, Y: bar.Max.Y + 6}, barTitle)
}

// drawScale returns the power of ten the values vs are divided by to be
// drawn: 1 unless the largest |v| is 1e100 or more, else 10^k with
// 10^k <= max |v| < 10^(k+1).
func drawScale(vs []float64) float64 {
	m := 0.0
	for _, v := range vs {
		if !math.IsInf(v, 0) {
			m = math.Max(m, math.Abs(v))
		}
	}
	if !(m >= 1e100) {
		return 1
	}
	return math.Pow(10, math.Floor(math.Log10(m)))
}

// scaled returns vs divided by s (vs itself when s is 1).
func scaled(vs []float64, s float64) []float64 {
	if s == 1 {
		return vs
	}
	out := make([]float64, len(vs))
	for i, v := range vs {
		out[i] = v / s
	}
	return out
}

// scaledFormat labels a tick at v drawn divided by s with its own value, v·s
// (no label where that overflows); nil, the default format, when s is 1.
func scaledFormat(s float64) func(float64) string {
	if s == 1 {
		return nil
	}
	return func(v float64) string {
		w := v * s
		if math.IsInf(w, 0) {
			return ""
		}
		return unit.Format(w, "")
	}
}

// fitText truncates s with an ellipsis until it is no wider than w.
func fitText(sty interface{ Width(string) vg.Length }, s string, w vg.Length) string {
	for n := runeLen(s); n > 1 && sty.Width(s) > w; n-- {
		s = truncate(s, n-1)
	}
	return s
}

// drawColorBar fills r with the colour map from bottom (Min) to top (Max),
// writes the ticks on its right and marks target (unless NaN or outside the
// map's range) across it.
func drawColorBar(c draw.Canvas, r vg.Rectangle, cmap palette.ColorMap, ticks []plot.Tick, sty text.Style, target float64) {
	const steps = 256
	img := image.NewNRGBA(image.Rect(0, 0, 1, steps))
	lo, hi := cmap.Min(), cmap.Max()
	for i := range steps {
		v := lo + (hi-lo)*(float64(i)+0.5)/steps
		col, err := cmap.At(v)
		if err != nil {
			continue
		}
		img.Set(0, steps-1-i, col)
	}
	c.DrawImage(r, img)
	c.SetLineStyle(lineStyle(colGrid, widthAxis))
	c.Stroke(r.Path())

	yOf := func(v float64) vg.Length {
		return r.Min.Y + vg.Length((v-lo)/(hi-lo))*(r.Max.Y-r.Min.Y)
	}
	tickLine := lineStyle(colMuted, widthAxis)
	descent := sty.FontExtents().Descent
	for _, t := range ticks {
		if t.Value < lo || t.Value > hi {
			continue
		}
		y := yOf(t.Value)
		c.StrokeLine2(tickLine, r.Max.X, y, r.Max.X+3, y)
		c.FillText(sty, vg.Point{X: r.Max.X + 5, Y: y + descent}, t.Label)
	}
	if !math.IsNaN(target) && lo < target && target < hi {
		y := yOf(target)
		c.StrokeLine2(lineStyle(colHalo, widthHalo), r.Min.X-3, y, r.Max.X+3, y)
		c.StrokeLine2(contourStyle(), r.Min.X-3, y, r.Max.X+3, y)
	}
}

func (h *HeatMap) caption() string {
	u := clean(h.Unit)
	lo, hi := gridXYZ{z: h.Z}.zRange()
	var b strings.Builder
	fmt.Fprintf(&b, "Heat map of %s over %s from %s to %s (across) and %s from %s to %s (up), the other inputs at baseline; darker is higher, from %s to %s. ",
		orDefault(h.Output, "the output"),
		orDefault(h.XName, "x"), unit.Format(h.X[0], clean(h.XUnit)), unit.Format(h.X[len(h.X)-1], clean(h.XUnit)),
		orDefault(h.YName, "y"), unit.Format(h.Y[0], clean(h.YUnit)), unit.Format(h.Y[len(h.Y)-1], clean(h.YUnit)),
		unit.Format(lo, u), unit.Format(hi, u))
	if h.Target != nil {
		if h.targetInRange() {
			fmt.Fprintf(&b, "The black contour is where the output equals the target %s. ", unit.Format(*h.Target, u))
			if h.KnownContour && len(h.Jumps) > 0 {
				fmt.Fprintf(&b, "Crosses mark %d of its points where the output jumps past the target (a step or a pole) without equalling it. ", len(h.Jumps))
			}
		} else if h.targetReached() {
			fmt.Fprintf(&b, "The output reaches the target %s only where it is level at it. ", unit.Format(*h.Target, u))
		} else {
			fmt.Fprintf(&b, "The target %s is not reached on this grid. ", unit.Format(*h.Target, u))
		}
	}
	return strings.TrimSpace(b.String())
}

// HeatGrid draws a 2-D sweep with gonum/plot's HeatMap (rasterised, so
// the SVG stays small) and, when Target lies inside the colour map's range,
// the contour at Target drawn over a white halo so that it shows on light and
// dark cells alike: Lines as given when KnownLines, else gonum/plot's Contour
// interpolated from the grid. The baseline point is marked unless NaN.
type HeatGrid struct {
	Grid     plotter.GridXYZ
	ColorMap palette.ColorMap
	// Colors is the number of palette steps; 256 when zero.
	Colors int
	// Target is the contour level; NaN for none.
	Target float64
	// BaselineX and BaselineY mark the baseline point; NaN for none.
	BaselineX, BaselineY float64
	// KnownLines, when true, says that Lines is the contour at Target to
	// draw, as (x, y) points, instead of one interpolated from the grid;
	// Jumps are points of it marked with a cross (see HeatMap).
	KnownLines bool
	Lines      [][][2]float64
	Jumps      [][2]float64
}

var (
	_ plot.Plotter    = (*HeatGrid)(nil)
	_ plot.DataRanger = (*HeatGrid)(nil)
)

// NewHeatGrid returns a HeatGrid with no target and no baseline point.
func NewHeatGrid(g plotter.GridXYZ, cmap palette.ColorMap) *HeatGrid {
	return &HeatGrid{Grid: g, ColorMap: cmap, Target: math.NaN(), BaselineX: math.NaN(), BaselineY: math.NaN()}
}

func (hg *HeatGrid) heatMap() *plotter.HeatMap {
	n := hg.Colors
	if n <= 0 {
		n = 256
	}
	hm := plotter.NewHeatMap(hg.Grid, hg.ColorMap.Palette(n))
	hm.Min, hm.Max = hg.ColorMap.Min(), hg.ColorMap.Max()
	hm.Rasterized = true
	return hm
}

// DataRange implements plot.DataRanger: the grid's cells, edge to edge.
func (hg *HeatGrid) DataRange() (xmin, xmax, ymin, ymax float64) {
	return hg.heatMap().DataRange()
}

// Plot implements plot.Plotter.
func (hg *HeatGrid) Plot(c draw.Canvas, p *plot.Plot) {
	hg.heatMap().Plot(c, p)
	lo, hi := math.Inf(1), math.Inf(-1)
	cols, rows := hg.Grid.Dims()
	for i := range cols {
		for j := range rows {
			lo, hi = math.Min(lo, hg.Grid.Z(i, j)), math.Max(hi, hg.Grid.Z(i, j))
		}
	}
	if !math.IsNaN(hg.Target) && lo < hg.Target && hg.Target < hi && hg.KnownLines {
		trX, trY := p.Transforms(&c)
		for _, sty := range []draw.LineStyle{lineStyle(colHalo, widthHalo), contourStyle()} {
			for _, l := range hg.Lines {
				if len(l) < 2 {
					continue
				}
				pts := make([]vg.Point, len(l))
				for k, q := range l {
					pts[k] = vg.Point{X: trX(q[0]), Y: trY(q[1])}
				}
				c.StrokeLines(sty, c.ClipLinesXY(pts)...)
			}
		}
		for _, q := range hg.Jumps {
			drawHaloGlyph(c, jumpGlyph(), vg.Point{X: trX(q[0]), Y: trY(q[1])})
		}
	} else if !math.IsNaN(hg.Target) && lo < hg.Target && hg.Target < hi {
		ct := plotter.NewContour(hg.Grid, []float64{hg.Target}, nil)
		ct.LineStyles = []draw.LineStyle{lineStyle(colHalo, widthHalo)}
		ct.Plot(c, p)
		ct.LineStyles = []draw.LineStyle{contourStyle()}
		ct.Plot(c, p)
	}
	if !math.IsNaN(hg.BaselineX) && !math.IsNaN(hg.BaselineY) {
		trX, trY := p.Transforms(&c)
		drawHaloGlyph(c, baselineGlyph(), vg.Point{X: trX(hg.BaselineX), Y: trY(hg.BaselineY)})
	}
}

// Text draws the heat map as a grid of shades (five levels from blank for
// the lowest fifth to █ for the highest), two columns per cell so cells are
// roughly square, highest Y on top; ● marks the baseline cell. Large grids
// are sampled at evenly spaced rows and columns.
func (h *HeatMap) Text(width int) string {
	if err := h.check(); err != nil {
		return textMessage(h.heading(), err)
	}
	width = textWidth(width)
	u := clean(h.Unit)
	lo, hi := gridXYZ{z: h.Z}.zRange()
	wlo, whi := widen(lo, hi)

	yLabels := make([]string, len(h.Y))
	labelW := 1
	for j, y := range h.Y {
		yLabels[j] = unit.Format(y, clean(h.YUnit))
		labelW = max(labelW, runeLen(yLabels[j]))
	}
	labelW = min(labelW, 14)
	cols := min(len(h.X), max(4, (width-labelW-2)/2))
	rows := min(len(h.Y), 18)
	pick := func(i, k, n int) int {
		if k == 1 {
			return 0
		}
		return int(math.Round(float64(i) * float64(n-1) / float64(k-1)))
	}
	nearest := func(vs []float64, v float64) int {
		best := 0
		for i := range vs {
			if math.Abs(vs[i]-v) < math.Abs(vs[best]-v) {
				best = i
			}
		}
		return best
	}
	colIdx := make([]int, cols)
	for i := range colIdx {
		colIdx[i] = pick(i, cols, len(h.X))
	}
	rowIdx := make([]int, rows)
	for j := range rowIdx {
		rowIdx[j] = pick(j, rows, len(h.Y))
	}
	baseCol, baseRow := -1, -1
	if h.baselineInside() {
		xs := make([]float64, cols)
		for i, ci := range colIdx {
			xs[i] = h.X[ci]
		}
		ys := make([]float64, rows)
		for j, rj := range rowIdx {
			ys[j] = h.Y[rj]
		}
		baseCol, baseRow = nearest(xs, h.BaselineX), nearest(ys, h.BaselineY)
	}

	var b strings.Builder
	b.WriteString(Wrap(h.heading(), width) + "\n")
	b.WriteString(Wrap(fmt.Sprintf("%s; across: %s, up: %s", axisTitle(orDefault(h.Output, "output"), u),
		axisTitle(orDefault(h.XName, "x"), h.XUnit), axisTitle(orDefault(h.YName, "y"), h.YUnit)), width) + "\n")
	for jj := rows - 1; jj >= 0; jj-- {
		rj := rowIdx[jj]
		label := ""
		if jj == rows-1 || jj == 0 || jj == rows/2 {
			label = yLabels[rj]
		}
		var line strings.Builder
		line.WriteString(padLeft(label, labelW) + " ┃")
		for ii, ci := range colIdx {
			r := shade((h.Z[rj][ci] - wlo) / (whi - wlo))
			if ii == baseCol && jj == baseRow {
				line.WriteString("●" + string(r))
				continue
			}
			line.WriteRune(r)
			line.WriteRune(r)
		}
		b.WriteString(line.String() + "\n")
	}
	b.WriteString(strings.Repeat(" ", labelW) + " ┗" + strings.Repeat("━", 2*cols) + "\n")
	b.WriteString(strings.Repeat(" ", labelW+2) + string(scaleLabels(2*cols, []scaleLabel{
		{unit.Format(h.X[0], clean(h.XUnit)), 0, -1},
		{unit.Format(h.X[len(h.X)-1], clean(h.XUnit)), 2*cols - 1, 1},
	})) + "\n")

	// Key: the upper end of the values each shade stands for.
	key := "key:"
	for k := 0; k < len(shades); k++ {
		z := math.Min(wlo+(whi-wlo)*(float64(k)+0.5)/float64(len(shades)-1), hi)
		item := fmt.Sprintf(" %s ≤%s", string(shades[k]), unit.Format(z, ""))
		if k == 0 {
			item = " (blank) ≤" + unit.Format(z, "")
		}
		if runeLen(key)+runeLen(item) > width {
			b.WriteString(key + "\n")
			key = "    "
		}
		key += item
	}
	b.WriteString(key + "\n")
	if h.baselineInside() {
		b.WriteString("● baseline\n")
	}
	if h.Target != nil {
		t := *h.Target
		if h.targetReached() {
			n, above := 0, 0
			for _, row := range h.Z {
				for _, z := range row {
					n++
					if z >= t {
						above++
					}
				}
			}
			b.WriteString(Wrap(fmt.Sprintf("target %s: reached at %d of %d grid points (%s at or above)", unit.Format(t, u), above, n, unit.Format(100*float64(above)/float64(n), "%")), width) + "\n")
		} else {
			b.WriteString(Wrap(fmt.Sprintf("target %s: not reached on this grid (%s to %s)", unit.Format(t, u), unit.Format(lo, u), unit.Format(hi, u)), width) + "\n")
		}
	}
	return b.String()
}
