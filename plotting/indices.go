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
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// IndexItem is one input of an index chart: a value per series and,
// optionally, an interval per series.
type IndexItem struct {
	Name string
	// Values holds one value per series of the chart.
	Values []float64
	// Lo and Hi hold the interval ends per series; both nil for none.
	Lo, Hi []float64
}

// Indices is a chart of grouped horizontal bars with interval whiskers, such
// as first-order and total-order Sobol' indices with confidence intervals:
// a row per input, a bar per series within the row.
type Indices struct {
	Title string
	// Output names the quantity the indices describe.
	Output string
	// Series names the bars of each row, e.g. "first order", "total order".
	Series []string
	// Items in drawing order, top first.
	Items []IndexItem
	// Interval describes the whiskers, e.g. "95% confidence interval";
	// "interval" when empty.
	Interval string
	// Axis labels the value axis; "index" when empty.
	Axis string
	// Subtitle replaces the default subtitle ("Share of the variance of
	// OUTPUT explained by each input").
	Subtitle string
}

var _ Chart = (*Indices)(nil)

func (ix *Indices) heading() string {
	if ix == nil {
		return "Indices"
	}
	if t := clean(ix.Title); t != "" {
		return t
	}
	if o := clean(ix.Output); o != "" {
		return "Indices: " + o
	}
	return "Indices"
}

func (ix *Indices) hasIntervals() bool {
	for _, it := range ix.Items {
		if it.Lo != nil || it.Hi != nil {
			return true
		}
	}
	return false
}

func (ix *Indices) check() error {
	if ix == nil {
		return fmt.Errorf("indices: no chart (nil): %w", ErrNoData)
	}
	what := "indices of " + orDefault(ix.Output, "the output")
	if len(ix.Items) == 0 {
		return fmt.Errorf("%s has no inputs: %w", what, ErrNoData)
	}
	if len(ix.Series) == 0 {
		return fmt.Errorf("%s has no series: %w", what, ErrNoData)
	}
	ns := len(ix.Series)
	for i, it := range ix.Items {
		label := fmt.Sprintf("item %d (%q)", i+1, it.Name)
		if len(it.Values) != ns {
			return fmt.Errorf("%s: %s has %d values for %d series", what, label, len(it.Values), ns)
		}
		if (it.Lo == nil) != (it.Hi == nil) {
			return fmt.Errorf("%s: %s has only one end of its intervals", what, label)
		}
		if it.Lo != nil && (len(it.Lo) != ns || len(it.Hi) != ns) {
			return fmt.Errorf("%s: %s has %d and %d interval ends for %d series", what, label, len(it.Lo), len(it.Hi), ns)
		}
		for _, f := range []struct {
			name string
			vs   []float64
		}{{"Values", it.Values}, {"Lo", it.Lo}, {"Hi", it.Hi}} {
			if err := finiteSlice(what, label+": "+f.name, f.vs); err != nil {
				return err
			}
		}
	}
	return nil
}

// Validate implements Chart.
func (ix *Indices) Validate() error { return ix.check() }

// WriteSVG implements Chart.
func (ix *Indices) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, ix, o) }

// WritePNG implements Chart.
func (ix *Indices) WritePNG(w io.Writer, o *Options) error { return writePNG(w, ix, o) }

// SVG implements Chart.
func (ix *Indices) SVG() string { return svgString(ix) }

// PNG implements Chart.
func (ix *Indices) PNG() []byte { return pngBytes(ix) }

// HTML implements Chart.
func (ix *Indices) HTML() string { return htmlString(ix) }

func (ix *Indices) frame() *frame {
	f := &frame{title: ix.heading()}
	if o := clean(ix.Output); o != "" {
		f.subtitle = "Share of the variance of " + o + " explained by each input"
	}
	if s := clean(ix.Subtitle); s != "" {
		f.subtitle = s
	}
	ib := NewIndexBars(ix.Items, len(ix.Series))
	for s, name := range ix.Series {
		f.legend = append(f.legend, legendEntry{label: orDefault(name, fmt.Sprintf("series %d", s+1)), thumb: swatchThumb(ib.color(s))})
	}
	if ix.hasIntervals() {
		f.legend = append(f.legend, legendEntry{label: orDefault(ix.Interval, "interval"), thumb: whiskerThumb()})
	}
	return f
}

func (ix *Indices) height(w vg.Length) vg.Length {
	hd, ft := ix.frame().heights(w)
	rowH := vg.Length(8+9*len(ix.Series)) * 1.1
	return max(hd+ft+vg.Length(len(ix.Items))*rowH+50, 5.5*vg.Centimeter)
}

func (ix *Indices) draw(c draw.Canvas) {
	body := ix.frame().draw(c)
	p := newPlot()
	grid := plotter.NewGrid()
	grid.Horizontal.Width = 0
	grid.Vertical = lineStyle(colGrid, widthGrid)
	ib := NewIndexBars(ix.Items, len(ix.Series))
	p.Add(grid, ib)
	var names []string
	for _, it := range ix.Items {
		names = append(names, truncate(orDefault(it.Name, "(unnamed)"), maxNameRunes))
	}
	p.Y.Tick.Marker = nameTicks(names)
	p.Y.Tick.Label = textStyle(sizeTick, colInk, false, draw.XRight, draw.YCenter)
	hideAxisLine(&p.Y)
	p.Y.Padding = 8
	p.X.Label.Text = orDefault(ix.Axis, "index")
	fitTicks(p, body)
	p.Draw(body)
}

func (ix *Indices) caption() string {
	var b strings.Builder
	var series []string
	for s, name := range ix.Series {
		series = append(series, orDefault(name, fmt.Sprintf("series %d", s+1)))
	}
	fmt.Fprintf(&b, "%s: for each input, bars for %s", ix.heading(), strings.Join(series, " and "))
	if ix.hasIntervals() {
		fmt.Fprintf(&b, ", whiskers for the %s", orDefault(ix.Interval, "interval"))
	}
	b.WriteString(". ")
	top := ix.Items[0]
	fmt.Fprintf(&b, "Top input: %s (%s %s).", orDefault(top.Name, "(unnamed)"), orDefault(ix.Series[0], "value"), unit.Format(top.Values[0], ""))
	return b.String()
}

// IndexBars draws grouped horizontal bars: row i of the n Items is centred
// at y = n-1-i (so the first item is on top) and holds one bar per series,
// the first series uppermost, each with a whisker from Lo to Hi when the
// item has intervals. A vertical line marks zero.
type IndexBars struct {
	Items  []IndexItem
	Series int
	Colors []color.Color
	// Thickness of a whole group as a fraction of the row height.
	Thickness float64
}

var (
	_ plot.Plotter    = (*IndexBars)(nil)
	_ plot.DataRanger = (*IndexBars)(nil)
)

// NewIndexBars returns IndexBars in the package's theme.
func NewIndexBars(items []IndexItem, series int) *IndexBars {
	return &IndexBars{Items: items, Series: series, Colors: seriesColors, Thickness: 0.8}
}

func (ib *IndexBars) color(s int) color.Color { return ib.Colors[s%len(ib.Colors)] }

// DataRange implements plot.DataRanger: zero, every value and interval end.
func (ib *IndexBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	vals := []float64{0}
	for _, it := range ib.Items {
		vals = append(vals, it.Values...)
		vals = append(vals, it.Lo...)
		vals = append(vals, it.Hi...)
	}
	xmin, xmax = widen(extent(vals...))
	return xmin, xmax, -0.5, float64(len(ib.Items)) - 0.5
}

// Plot implements plot.Plotter.
func (ib *IndexBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(ib.Items)
	rowH := vg.Length(math.Abs(float64(trY(1) - trY(0))))
	group := rowH * vg.Length(ib.Thickness)
	ns := max(1, ib.Series)
	barH := group / vg.Length(ns)
	x0 := trX(0)
	for i, it := range ib.Items {
		top := trY(float64(n-1-i)) + group/2
		for s := 0; s < ns && s < len(it.Values); s++ {
			yc := top - barH*(vg.Length(s)+0.5)
			fillBar(c, x0, trX(it.Values[s]), yc, barH*0.86, ib.color(s))
			if it.Lo != nil && s < len(it.Lo) && s < len(it.Hi) {
				drawWhisker(c, trX(it.Lo[s]), trX(it.Hi[s]), yc, barH*0.5)
			}
		}
	}
	c.StrokeLine2(lineStyle(colInk, widthAxis), x0, c.Min.Y, x0, c.Max.Y)
}

// Text draws the chart as a table, a row per input and a column per series:
// a bar from zero on a scale common to all cells (a negative value, which
// for an index is estimation noise, has no bar) followed by the value and
// its interval.
func (ix *Indices) Text(width int) string {
	if err := ix.check(); err != nil {
		return textMessage(ix.heading(), err)
	}
	width = textWidth(width)
	ns := len(ix.Series)
	ib := NewIndexBars(ix.Items, ns)
	_, xmax, _, _ := ib.DataRange()

	cell := func(it IndexItem, s int) string {
		v := unit.Format(it.Values[s], "")
		if it.Lo != nil {
			v += " [" + unit.Format(it.Lo[s], "") + ", " + unit.Format(it.Hi[s], "") + "]"
		}
		return v
	}
	nameW, valW := 5, 5
	for _, it := range ix.Items {
		nameW = max(nameW, runeLen(orDefault(it.Name, "(unnamed)")))
		for s := range ns {
			valW = max(valW, runeLen(cell(it, s)))
		}
	}
	nameW = min(nameW, max(8, width/5))
	colW := max(12, (width-nameW)/ns-1)
	barW := max(4, colW-valW-1)
	valW = colW - barW - 1

	var b strings.Builder
	b.WriteString(Wrap(ix.heading(), width) + "\n")
	head := padRight("input", nameW)
	for s, name := range ix.Series {
		head += " " + padRight(orDefault(name, fmt.Sprintf("series %d", s+1)), colW)
	}
	b.WriteString(head + "\n")
	for _, it := range ix.Items {
		line := padRight(orDefault(it.Name, "(unnamed)"), nameW)
		for s := range ns {
			length := math.Max(0, it.Values[s]) / xmax * float64(barW)
			line += " " + string(barRight(length, barW)) + " " + padRight(cell(it, s), valW)
		}
		b.WriteString(line + "\n")
	}
	if ix.hasIntervals() {
		b.WriteString("[lo, hi]: " + orDefault(ix.Interval, "interval") + "\n")
	}
	return b.String()
}
