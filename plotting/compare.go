package plotting

import (
	"fmt"
	"io"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/nudge-dev/nudge/sens/unit"
)

// Scenario is one bar of a compare chart: the output under a named
// scenario.
type Scenario struct {
	Name  string
	Value float64
}

// Compare is a compare chart: a horizontal bar per scenario from the
// baseline output to the output under that scenario, blue where it lies
// below the baseline and orange above, with the change written at the bar's
// end.
type Compare struct {
	Title        string
	Output, Unit string
	Baseline     float64
	Scenarios    []Scenario
}

var _ Chart = (*Compare)(nil)

func (c *Compare) heading() string {
	if c == nil {
		return "Scenarios"
	}
	if t := clean(c.Title); t != "" {
		return t
	}
	if o := clean(c.Output); o != "" {
		return "Scenarios: " + o
	}
	return "Scenarios"
}

func (c *Compare) check() error {
	if c == nil {
		return fmt.Errorf("compare: no chart (nil): %w", ErrNoData)
	}
	what := "comparison of " + orDefault(c.Output, "the output")
	if len(c.Scenarios) == 0 {
		return fmt.Errorf("%s has no scenarios: %w", what, ErrNoData)
	}
	if err := finite(what, "baseline", c.Baseline); err != nil {
		return err
	}
	for i, s := range c.Scenarios {
		if err := finite(what, fmt.Sprintf("scenario %d (%q)", i+1, s.Name), s.Value); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (c *Compare) Validate() error { return c.check() }

// WriteSVG implements Chart.
func (c *Compare) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, c, o) }

// WritePNG implements Chart.
func (c *Compare) WritePNG(w io.Writer, o *Options) error { return writePNG(w, c, o) }

// SVG implements Chart.
func (c *Compare) SVG() string { return svgString(c) }

// PNG implements Chart.
func (c *Compare) PNG() []byte { return pngBytes(c) }

// HTML implements Chart.
func (c *Compare) HTML() string { return htmlString(c) }

func (c *Compare) frame() *frame {
	return &frame{
		title:    c.heading(),
		subtitle: "The output under each scenario against the baseline " + unit.Format(c.Baseline, clean(c.Unit)),
		legend: []legendEntry{
			{label: "below the baseline", thumb: swatchThumb(colLow)},
			{label: "above the baseline", thumb: swatchThumb(colHigh)},
		},
	}
}

func (c *Compare) height(w vg.Length) vg.Length {
	hd, ft := c.frame().heights(w)
	n := len(c.Scenarios)
	return max(hd+ft+vg.Length(n)*rowHeight(n)+60, 5.5*vg.Centimeter)
}

func (c *Compare) draw(dc draw.Canvas) {
	body := c.frame().draw(dc)
	p := newPlot()
	bars := &CompareBars{Scenarios: c.Scenarios, Baseline: c.Baseline, Unit: clean(c.Unit)}
	grid := plotter.NewGrid()
	grid.Horizontal.Width = 0
	grid.Vertical = lineStyle(colGrid, widthGrid)
	p.Add(grid, bars)
	names := make([]string, len(c.Scenarios))
	for i, s := range c.Scenarios {
		names[i] = truncate(orDefault(s.Name, "(unnamed)"), maxNameRunes)
	}
	p.Y.Tick.Marker = nameTicks(names)
	p.Y.Tick.Label = textStyle(sizeTick, colInk, false, draw.XRight, draw.YCenter)
	hideAxisLine(&p.Y)
	p.Y.Padding = 8
	p.X.Label.Text = axisTitle(orDefault(c.Output, "output"), c.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (c *Compare) caption() string {
	u := clean(c.Unit)
	var parts []string
	for _, s := range c.Scenarios {
		parts = append(parts, fmt.Sprintf("%s %s (%s)", orDefault(s.Name, "(unnamed)"), unit.Format(s.Value, u), unit.Signed(s.Value-c.Baseline, u)))
	}
	return fmt.Sprintf("Scenarios of %s against the baseline %s: %s.", orDefault(c.Output, "the output"), unit.Format(c.Baseline, u), strings.Join(parts, "; "))
}

// CompareBars draws a compare chart's bars: row i of n centred at y = n-1-i,
// each from Baseline to its scenario's value, with the change labelled at
// the far end, and a vertical line at the baseline.
type CompareBars struct {
	Scenarios []Scenario
	Baseline  float64
	Unit      string
}

var (
	_ plot.Plotter    = (*CompareBars)(nil)
	_ plot.DataRanger = (*CompareBars)(nil)
)

// DataRange implements plot.DataRanger.
func (cb *CompareBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	vals := []float64{cb.Baseline}
	for _, s := range cb.Scenarios {
		vals = append(vals, s.Value)
	}
	lo, hi := extent(vals...)
	pad := 0.15 * (hi - lo) // room for the labels
	xmin, xmax = widen(lo-pad, hi+pad)
	return xmin, xmax, -0.5, float64(len(cb.Scenarios)) - 0.5
}

// Plot implements plot.Plotter.
func (cb *CompareBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(cb.Scenarios)
	half := (trY(0.3) - trY(0)) // the bar's half height
	x0 := trX(cb.Baseline)
	for i, s := range cb.Scenarios {
		y := trY(float64(n - 1 - i))
		x1 := trX(s.Value)
		col, align := colHigh, draw.XLeft
		if s.Value < cb.Baseline {
			col, align = colLow, draw.XRight
		}
		lo, hi := min(x0, x1), max(x0, x1)
		if hi-lo < 1 {
			hi = lo + 1
		}
		c.FillPolygon(col, []vg.Point{{X: lo, Y: y - half}, {X: hi, Y: y - half}, {X: hi, Y: y + half}, {X: lo, Y: y + half}})
		label := unit.Signed(s.Value-cb.Baseline, cb.Unit)
		dx := vg.Length(4)
		if align == draw.XRight {
			dx = -4
		}
		c.FillText(textStyle(sizeLabel, colInk, false, align, draw.YCenter), vg.Point{X: x1 + dx, Y: y}, label)
	}
	c.StrokeLine2(lineStyle(colInk, widthAxis), x0, c.Min.Y, x0, c.Max.Y)
}

// Text draws the comparison as rows of bars from a common baseline column:
// below the baseline to the left, above it to the right.
func (c *Compare) Text(width int) string {
	if err := c.check(); err != nil {
		return textMessage(c.heading(), err)
	}
	width = textWidth(width)
	u := clean(c.Unit)
	vals := []float64{c.Baseline}
	for _, s := range c.Scenarios {
		vals = append(vals, s.Value)
	}
	col := unit.NewColumn(u, vals...)
	nameW, valW := 8, 5
	for _, s := range c.Scenarios {
		nameW = max(nameW, runeLen(s.Name))
		valW = max(valW, runeLen(col.Signed(s.Value-c.Baseline)))
	}
	nameW = min(nameW, max(8, width/4))
	barW := max(10, width-nameW-valW-3)
	half := barW / 2
	span := 0.0
	for _, s := range c.Scenarios {
		span = max(span, abs(s.Value-c.Baseline))
	}
	var b strings.Builder
	b.WriteString(Wrap(c.heading(), width) + "\n")
	b.WriteString(Wrap(fmt.Sprintf("%s against the baseline %s", axisTitle(orDefault(c.Output, "output"), u), unit.Format(c.Baseline, u)), width) + "\n")
	for _, s := range c.Scenarios {
		d := s.Value - c.Baseline
		length := 0.0
		if span > 0 {
			length = abs(d) / span * float64(half)
		}
		bar := string(barRight(length, half))
		left, right := strings.Repeat(" ", half), strings.Repeat(" ", half)
		if d < 0 {
			left = reverseBar(bar, half)
		} else {
			right = bar
		}
		b.WriteString(padRight(s.Name, nameW) + " " + left + "│" + right + " " + padLeft(col.Signed(d), valW) + "\n")
	}
	return b.String()
}

// reverseBar turns a bar that grows rightward into one that grows leftward
// from the right edge of a field n wide (whole blocks only, so it reads the
// same either way).
func reverseBar(bar string, n int) string {
	r := []rune(strings.TrimRight(bar, " "))
	for i := range r {
		if r[i] != '█' {
			r[i] = '▐'
		}
	}
	for i, j := 0, len(r)-1; i < j; i, j = i+1, j-1 {
		r[i], r[j] = r[j], r[i]
	}
	return strings.Repeat(" ", max(0, n-len(r))) + string(r)
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
