package plotting

import (
	"fmt"
	"github.com/nudge-dev/nudge/sens/unit"
	"io"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Marker is a labelled value on a distribution, such as P10, P50, P90 or
// the mean.
type Marker struct {
	Label string
	Value float64
}

// Distribution is the distribution of an output from simulation samples:
// a histogram above the empirical cumulative distribution function, the
// two panels sharing the value axis, with markers across both.
type Distribution struct {
	Title        string
	Output, Unit string
	Samples      []float64
	Markers      []Marker
	// Bins is the number of histogram bins; zero chooses it by the
	// Freedman-Diaconis rule.
	Bins int
}

var _ Chart = (*Distribution)(nil)

func (d *Distribution) heading() string {
	if d == nil {
		return "Distribution"
	}
	if t := clean(d.Title); t != "" {
		return t
	}
	if o := clean(d.Output); o != "" {
		return "Distribution: " + o
	}
	return "Distribution"
}

func (d *Distribution) check() error {
	if d == nil {
		return fmt.Errorf("distribution: no chart (nil): %w", ErrNoData)
	}
	what := "distribution of " + orDefault(d.Output, "the output")
	if len(d.Samples) == 0 {
		return fmt.Errorf("%s has no samples: %w", what, ErrNoData)
	}
	if d.Bins < 0 {
		return fmt.Errorf("%s: negative number of bins %d", what, d.Bins)
	}
	if err := finiteSlice(what, "Samples", d.Samples); err != nil {
		return err
	}
	for i, m := range d.Markers {
		if err := finite(what, fmt.Sprintf("marker %d (%q)", i+1, m.Label), m.Value); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (d *Distribution) Validate() error { return d.check() }

// WriteSVG implements Chart.
func (d *Distribution) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, d, o) }

// WritePNG implements Chart.
func (d *Distribution) WritePNG(w io.Writer, o *Options) error { return writePNG(w, d, o) }

// SVG implements Chart.
func (d *Distribution) SVG() string { return svgString(d) }

// PNG implements Chart.
func (d *Distribution) PNG() []byte { return pngBytes(d) }

// HTML implements Chart.
func (d *Distribution) HTML() string { return htmlString(d) }

// quantile returns the p-quantile of sorted xs by linear interpolation
// between order statistics (definition 7 of Hyndman and Fan 1996).
//
//	h = (n-1) p,  Q(p) = x[floor h] + (h - floor h) (x[floor h + 1] - x[floor h])
//
// References:
//   - Hyndman, R. J. and Fan, Y. (1996). Sample quantiles in statistical
//     packages. The American Statistician 50(4), 361-365.
func quantile(xs []float64, p float64) float64 {
	if len(xs) == 1 {
		return xs[0]
	}
	h := float64(len(xs)-1) * p
	i := int(math.Floor(h))
	if i >= len(xs)-1 {
		return xs[len(xs)-1]
	}
	return xs[i] + (h-float64(i))*(xs[i+1]-xs[i])
}

// binCount chooses the number of histogram bins for sorted xs by the
// Freedman-Diaconis rule, falling back to Sturges' rule when the
// interquartile range is zero, and keeps it between 1 and 60.
//
//	width = 2 IQR n^(-1/3),  bins = ceil((max - min) / width)
//	Sturges: bins = ceil(log2 n) + 1
//
// References:
//   - Freedman, D. and Diaconis, P. (1981). On the histogram as a density
//     estimator: L2 theory. Zeitschrift für Wahrscheinlichkeitstheorie und
//     verwandte Gebiete 57, 453-476.
//   - Sturges, H. A. (1926). The choice of a class interval. Journal of the
//     American Statistical Association 21, 65-66.
func binCount(xs []float64) int {
	n := len(xs)
	lo, hi := xs[0], xs[n-1]
	if n < 2 || hi == lo {
		return 1
	}
	iqr := quantile(xs, 0.75) - quantile(xs, 0.25)
	var k int
	if iqr > 0 {
		w := 2 * iqr / math.Cbrt(float64(n))
		k = int(math.Ceil((hi - lo) / w))
	} else {
		k = int(math.Ceil(math.Log2(float64(n)))) + 1
	}
	return max(1, min(60, k))
}

// histogram bins xs into about k bins of a round width (see niceStep)
// whose edges are multiples of the width, covering [lo, hi], and weights
// each bin by its share of the samples in percent. A sample on an inner
// edge falls in the bin above it; one on the top edge in the last bin.
func histogram(xs []float64, k int, lo, hi float64) []plotter.HistogramBin {
	w := niceStep((hi - lo) / float64(k))
	start := math.Floor(lo/w) * w
	n := max(1, int(math.Ceil((hi-start)/w-1e-9)))
	bins := make([]plotter.HistogramBin, n)
	for i := range bins {
		bins[i].Min = start + float64(i)*w
		bins[i].Max = start + float64(i+1)*w
	}
	share := 100 / float64(len(xs))
	for _, x := range xs {
		i := int(math.Floor((x - start) / w))
		i = max(0, min(n-1, i))
		bins[i].Weight += share
	}
	return bins
}

// sortedSamples returns a sorted copy of the samples and the histogram's
// range (widened when every sample is equal).
func (d *Distribution) sortedSamples() (xs []float64, lo, hi float64) {
	xs = slices.Clone(d.Samples)
	slices.Sort(xs)
	lo, hi = widen(xs[0], xs[len(xs)-1])
	return xs, lo, hi
}

func (d *Distribution) bins() int {
	if d.Bins > 0 {
		return d.Bins
	}
	xs, _, _ := d.sortedSamples()
	return binCount(xs)
}

func (d *Distribution) frame() *frame {
	u := clean(d.Unit)
	xs, _, _ := d.sortedSamples()
	var sum float64
	for _, x := range xs {
		sum += x
	}
	f := &frame{
		title: d.heading(),
		subtitle: fmt.Sprintf("%s samples; mean %s, median %s", unit.Format(float64(len(xs)), ""),
			unit.Format(sum/float64(len(xs)), u), unit.Format(quantile(xs, 0.5), u)),
		legend: []legendEntry{
			{label: "share of samples per bin", thumb: swatchThumb(colLow)},
			{label: "cumulative share", thumb: lineThumb(lineStyle(colInk, widthLine), nil)},
		},
	}
	if len(d.Markers) > 0 {
		var parts []string
		for _, m := range d.Markers {
			parts = append(parts, orDefault(m.Label, "marker")+" "+unit.Format(m.Value, u))
		}
		f.legend = append(f.legend, legendEntry{label: "markers", thumb: lineThumb(markerLineStyle(), nil)})
		f.notes = append(f.notes, strings.Join(parts, " · "))
	}
	return f
}

func (d *Distribution) height(w vg.Length) vg.Length {
	hd, ft := d.frame().heights(w)
	return hd + ft + w*0.62
}

func markerLineStyle() draw.LineStyle { return lineStyle(colInk, widthWhisker, 4, 2.5) }

func (d *Distribution) draw(c draw.Canvas) {
	body := d.frame().draw(c)
	xs, lo, hi := d.sortedSamples()
	bins := histogram(xs, d.bins(), lo, hi)

	hist := newPlot()
	hgrid := plotter.NewGrid()
	hgrid.Vertical.Width = 0
	hgrid.Horizontal = lineStyle(colGrid, widthGrid)
	h := &plotter.Histogram{Bins: bins, Width: bins[0].Max - bins[0].Min, FillColor: colLow, LineStyle: lineStyle(colBackground, 0.5)}
	ml := NewMarkerLines(d.Markers)
	ml.Labels = true
	hist.Add(hgrid, h, ml)
	hist.Y.Label.Text = "samples [%]"
	hist.Y.Min = 0
	hist.Y.Padding = 0

	cdf := newPlot()
	cgrid := plotter.NewGrid()
	cgrid.Vertical = lineStyle(colGrid, widthGrid)
	cgrid.Horizontal = lineStyle(colGrid, widthGrid)
	e := NewECDF(xs)
	cdf.Add(cgrid, e, NewMarkerLines(d.Markers))
	cdf.Y.Label.Text = "cumulative [%]"
	cdf.Y.Tick.Marker = niceTicks{N: 5}
	cdf.X.Label.Text = axisTitle(orDefault(d.Output, "output"), d.Unit)

	xmin, xmax := math.Min(hist.X.Min, cdf.X.Min), math.Max(hist.X.Max, cdf.X.Max)
	hist.X.Min, hist.X.Max, cdf.X.Min, cdf.X.Max = xmin, xmax, xmin, xmax

	split := body.Min.Y + (body.Max.Y-body.Min.Y)*0.42
	top := body
	top.Min.Y = split + 4
	bottom := body
	bottom.Max.Y = split - 4
	fitTicks(cdf, bottom)
	// The value axis is labelled once, under the lower panel.
	hist.X.Tick.Marker = unlabeledTicks{cdf.X.Tick.Marker}
	hist.X.Tick.Length = 0
	fitTicks(hist, top)

	// Line the two data areas up on the left and right.
	dt, db := hist.DataCanvas(top), cdf.DataCanvas(bottom)
	if dx := dt.Min.X - db.Min.X; dx > 0 {
		bottom.Min.X += dx
	} else {
		top.Min.X -= dx
	}
	if dx := dt.Max.X - db.Max.X; dx < 0 {
		bottom.Max.X += dx
	} else {
		top.Max.X -= dx
	}
	hist.Draw(top)
	cdf.Draw(bottom)
}

func (d *Distribution) caption() string {
	u := clean(d.Unit)
	xs, _, _ := d.sortedSamples()
	var b strings.Builder
	fmt.Fprintf(&b, "Distribution of %s from %s samples: a histogram (share of samples per bin) above the empirical cumulative distribution. ",
		orDefault(d.Output, "the output"), unit.Format(float64(len(xs)), ""))
	fmt.Fprintf(&b, "Samples range from %s to %s. ", unit.Format(xs[0], u), unit.Format(xs[len(xs)-1], u))
	if len(d.Markers) > 0 {
		var parts []string
		for _, m := range d.Markers {
			parts = append(parts, orDefault(m.Label, "marker")+" "+unit.Format(m.Value, u))
		}
		b.WriteString("Dashed lines: " + strings.Join(parts, ", ") + ". ")
	}
	b.WriteString("The result holds only for the distributions assumed for the inputs.")
	return b.String()
}

// ECDF draws the empirical cumulative distribution function of sorted
// samples, in percent: the share of samples at or below each value. Above
// MaxPoints samples the curve is drawn through MaxPoints evenly spaced
// order statistics, which no screen can tell apart from the full steps.
type ECDF struct {
	// Sorted holds the samples in ascending order.
	Sorted    []float64
	LineStyle draw.LineStyle
	MaxPoints int
}

var (
	_ plot.Plotter    = (*ECDF)(nil)
	_ plot.DataRanger = (*ECDF)(nil)
)

// NewECDF returns an ECDF of sorted samples in the package's theme.
func NewECDF(sorted []float64) *ECDF {
	return &ECDF{Sorted: sorted, LineStyle: lineStyle(colInk, widthLine), MaxPoints: 1000}
}

// DataRange implements plot.DataRanger.
func (e *ECDF) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = widen(e.Sorted[0], e.Sorted[len(e.Sorted)-1])
	return xmin, xmax, 0, 100
}

// Plot implements plot.Plotter.
func (e *ECDF) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(e.Sorted)
	var pts []vg.Point
	if n <= e.MaxPoints {
		// Exact steps: 0 before the first sample, k/n from the k-th on.
		pts = append(pts, vg.Point{X: trX(p.X.Min), Y: trY(0)})
		for k, x := range e.Sorted {
			pts = append(pts,
				vg.Point{X: trX(x), Y: trY(100 * float64(k) / float64(n))},
				vg.Point{X: trX(x), Y: trY(100 * float64(k+1) / float64(n))})
		}
		pts = append(pts, vg.Point{X: trX(p.X.Max), Y: trY(100)})
	} else {
		pts = append(pts, vg.Point{X: trX(p.X.Min), Y: trY(0)}, vg.Point{X: trX(e.Sorted[0]), Y: trY(0)})
		m := e.MaxPoints
		for i := range m {
			k := int(math.Round(float64(i) * float64(n-1) / float64(m-1)))
			pts = append(pts, vg.Point{X: trX(e.Sorted[k]), Y: trY(100 * float64(k+1) / float64(n))})
		}
		pts = append(pts, vg.Point{X: trX(p.X.Max), Y: trY(100)})
	}
	c.StrokeLines(e.LineStyle, c.ClipLinesXY(pts)...)
}

// MarkerLines draws each marker as a vertical dashed line across the plot,
// with its label above the top edge when Labels is set (labels that would
// overlap are moved to a second row).
type MarkerLines struct {
	Markers    []Marker
	Labels     bool
	LineStyle  draw.LineStyle
	LabelStyle text.Style
}

var (
	_ plot.Plotter    = (*MarkerLines)(nil)
	_ plot.DataRanger = (*MarkerLines)(nil)
	_ plot.GlyphBoxer = (*MarkerLines)(nil)
)

// NewMarkerLines returns MarkerLines in the package's theme, without labels.
func NewMarkerLines(ms []Marker) *MarkerLines {
	return &MarkerLines{
		Markers:    ms,
		LineStyle:  markerLineStyle(),
		LabelStyle: textStyle(sizeLabel, colInk, false, draw.XCenter, draw.YBottom),
	}
}

// DataRange implements plot.DataRanger: the markers' values along x, and
// nothing along y.
func (ml *MarkerLines) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax, ymin, ymax = math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, m := range ml.Markers {
		xmin, xmax = math.Min(xmin, m.Value), math.Max(xmax, m.Value)
	}
	return
}

// Plot implements plot.Plotter.
func (ml *MarkerLines) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	rowH := ml.LabelStyle.Height("Xg") + 1
	var lastRight [2]vg.Length
	lastRight[0], lastRight[1] = vg.Length(math.Inf(-1)), vg.Length(math.Inf(-1))
	for _, m := range ml.Markers {
		x := trX(m.Value)
		c.StrokeLine2(ml.LineStyle, x, c.Min.Y, x, c.Max.Y)
		if !ml.Labels {
			continue
		}
		label := clean(m.Label)
		w := ml.LabelStyle.Width(label)
		row := 0
		if x-w/2 < lastRight[0]+3 {
			row = 1
		}
		lastRight[row] = x + w/2
		c.FillText(ml.LabelStyle, vg.Point{X: x, Y: c.Max.Y + 2 + vg.Length(row)*rowH}, label)
	}
}

// GlyphBoxes implements plot.GlyphBoxer: two rows of room for labels.
func (ml *MarkerLines) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	if !ml.Labels {
		return nil
	}
	var boxes []plot.GlyphBox
	rowH := ml.LabelStyle.Height("Xg") + 1
	for _, m := range ml.Markers {
		r := ml.LabelStyle.Rectangle(clean(m.Label))
		r.Max.Y += 2 + rowH
		boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(m.Value), Y: 1, Rectangle: r})
	}
	return boxes
}

// Text draws the distribution as a table of at most 15 bins: each bin's
// range, a bar for its share of the samples, the share and the cumulative
// share, with markers noted beside the bin that holds them.
func (d *Distribution) Text(width int) string {
	if err := d.check(); err != nil {
		return textMessage(d.heading(), err)
	}
	width = textWidth(width)
	u := clean(d.Unit)
	xs, lo, hi := d.sortedSamples()
	// Round bin widths can give more bins than asked for: ask for fewer
	// until the table has at most 15 rows.
	var bins []plotter.HistogramBin
	for k := min(15, d.bins()); k >= 1; k-- {
		if bins = histogram(xs, k, lo, hi); len(bins) <= 15 {
			break
		}
	}

	ranges := make([]string, len(bins))
	notes := make([]string, len(bins))
	rangeW, noteW := 5, 0
	var top float64
	for i, b := range bins {
		ranges[i] = unit.Format(b.Min, "") + " – " + unit.Format(b.Max, "")
		rangeW = max(rangeW, runeLen(ranges[i]))
		top = math.Max(top, b.Weight)
	}
	for _, m := range d.Markers {
		i := int(math.Floor((m.Value - bins[0].Min) / (bins[0].Max - bins[0].Min)))
		if i < 0 || i >= len(bins) {
			continue
		}
		if notes[i] == "" {
			notes[i] = "◀ "
		} else {
			notes[i] += ", "
		}
		notes[i] += orDefault(m.Label, "marker")
	}
	for _, n := range notes {
		noteW = max(noteW, runeLen(n))
	}
	noteW = min(noteW, 20)
	const pctW = 7
	barW := max(8, width-rangeW-2*pctW-noteW-4)

	var b strings.Builder
	b.WriteString(Wrap(d.heading(), width) + "\n")
	sum := 0.0
	for _, x := range xs {
		sum += x
	}
	b.WriteString(Wrap(fmt.Sprintf("%s, %s samples, mean %s", axisTitle(orDefault(d.Output, "output"), u),
		unit.Format(float64(len(xs)), ""), unit.Format(sum/float64(len(xs)), u)), width) + "\n")
	b.WriteString(padRight("bin", rangeW) + " " + strings.Repeat(" ", barW) + " " + padLeft("share", pctW) + " " + padLeft("cum.", pctW) + " " + strings.Repeat(" ", noteW) + "\n")
	cum := 0.0
	for i, bin := range bins {
		cum += bin.Weight
		bar := barRight(bin.Weight/top*float64(barW), barW)
		b.WriteString(padRight(ranges[i], rangeW) + " " + string(bar) + " " +
			padLeft(fmt.Sprintf("%.1f%%", bin.Weight), pctW) + " " + padLeft(fmt.Sprintf("%.1f%%", math.Min(cum, 100)), pctW) + " " + padRight(notes[i], noteW) + "\n")
	}
	if len(d.Markers) > 0 {
		var parts []string
		for _, m := range d.Markers {
			parts = append(parts, orDefault(m.Label, "marker")+" "+unit.Format(m.Value, u))
		}
		b.WriteString(Wrap(strings.Join(parts, " · "), width) + "\n")
	}
	return b.String()
}
