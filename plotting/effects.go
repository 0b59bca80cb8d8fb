package plotting

import (
	"fmt"
	"io"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/nudge-dev/nudge/sens/unit"
)

// EffectItem is one input of an Effects chart: the mean of the absolute
// elementary effects (mu*) and their standard deviation (sigma).
type EffectItem struct {
	Name          string
	MuStar, Sigma float64
}

// Effects is the chart of an elementary-effects screening: each input a
// labelled point at (mu*, sigma), in the output's unit. Far right means
// influential; high up means the input's effect changes with where the
// other inputs are (a curved response or an interaction). A dashed line
// marks sigma = mu*: above it, the effect's spread exceeds its size.
type Effects struct {
	Title        string
	Output, Unit string
	// Items, most influential first: only the first MaxLabels are named
	// on the chart (all are drawn).
	Items []EffectItem
}

// MaxLabels is the number of points an Effects chart names.
const MaxLabels = 12

var _ Chart = (*Effects)(nil)

func (e *Effects) heading() string {
	if e == nil {
		return "Elementary effects"
	}
	if t := clean(e.Title); t != "" {
		return t
	}
	if o := clean(e.Output); o != "" {
		return "Elementary effects on " + o
	}
	return "Elementary effects"
}

func (e *Effects) check() error {
	if e == nil {
		return fmt.Errorf("effects: no chart (nil): %w", ErrNoData)
	}
	what := "effects on " + orDefault(e.Output, "the output")
	if len(e.Items) == 0 {
		return fmt.Errorf("%s has no inputs: %w", what, ErrNoData)
	}
	for i, it := range e.Items {
		label := fmt.Sprintf("item %d (%q)", i+1, it.Name)
		if err := finite(what, label+": MuStar", it.MuStar); err != nil {
			return err
		}
		if err := finite(what, label+": Sigma", it.Sigma); err != nil {
			return err
		}
		if it.MuStar < 0 || it.Sigma < 0 {
			return fmt.Errorf("%s: %s has a negative mu* or sigma", what, label)
		}
	}
	return nil
}

// Validate implements Chart.
func (e *Effects) Validate() error { return e.check() }

// WriteSVG implements Chart.
func (e *Effects) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, e, o) }

// WritePNG implements Chart.
func (e *Effects) WritePNG(w io.Writer, o *Options) error { return writePNG(w, e, o) }

// SVG implements Chart.
func (e *Effects) SVG() string { return svgString(e) }

// PNG implements Chart.
func (e *Effects) PNG() []byte { return pngBytes(e) }

// HTML implements Chart.
func (e *Effects) HTML() string { return htmlString(e) }

func (e *Effects) frame() *frame {
	f := &frame{title: e.heading()}
	f.subtitle = "Right: larger effect; up: effect that changes with the other inputs (curvature or interaction)"
	f.legend = []legendEntry{{label: "σ = μ*", thumb: lineThumb(lineStyle(colRefLine, widthAxis, 4, 2.5), nil)}}
	if len(e.Items) > MaxLabels {
		f.notes = []string{fmt.Sprintf("The %d inputs of largest μ* are named; %d more are drawn unnamed.", MaxLabels, len(e.Items)-MaxLabels)}
	}
	return f
}

func (e *Effects) height(w vg.Length) vg.Length {
	hd, ft := e.frame().heights(w)
	return hd + ft + w*0.55
}

func (e *Effects) draw(c draw.Canvas) {
	body := e.frame().draw(c)
	p := newPlot()
	grid := plotter.NewGrid()
	grid.Vertical = lineStyle(colGrid, widthGrid)
	grid.Horizontal = lineStyle(colGrid, widthGrid)
	ep := NewEffectPoints(e.Items)
	p.Add(grid, ep)
	p.X.Min, p.Y.Min = 0, 0
	p.X.Label.Text = axisTitle("μ*, mean |effect| of "+orDefault(e.Output, "output"), e.Unit)
	p.Y.Label.Text = axisTitle("σ, spread of the effects", e.Unit)
	fitTicks(p, body)
	p.Draw(body)
}

func (e *Effects) caption() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: one point per input at its mean absolute elementary effect (across) and their standard deviation (up), in %s. ",
		e.heading(), orDefault(clean(e.Unit), "the output's unit"))
	top := e.Items[0]
	u := clean(e.Unit)
	fmt.Fprintf(&b, "Most influential: %s (μ* %s, σ %s).", orDefault(top.Name, "(unnamed)"), unit.Format(top.MuStar, u), unit.Format(top.Sigma, u))
	return b.String()
}

// EffectPoints draws each item as a dot at (mu*, sigma), names the first
// Labels of them beside their dots, and draws the dashed line sigma = mu*
// across the plot.
type EffectPoints struct {
	Items      []EffectItem
	Labels     int
	Glyph      draw.GlyphStyle
	LabelStyle text.Style
	LineStyle  draw.LineStyle
}

var (
	_ plot.Plotter    = (*EffectPoints)(nil)
	_ plot.DataRanger = (*EffectPoints)(nil)
	_ plot.GlyphBoxer = (*EffectPoints)(nil)
)

// NewEffectPoints returns EffectPoints in the package's theme.
func NewEffectPoints(items []EffectItem) *EffectPoints {
	return &EffectPoints{
		Items:      items,
		Labels:     MaxLabels,
		Glyph:      draw.GlyphStyle{Color: colLow, Radius: 3, Shape: draw.CircleGlyph{}},
		LabelStyle: textStyle(sizeLabel, colInk, false, draw.XLeft, draw.YCenter),
		LineStyle:  lineStyle(colRefLine, widthAxis, 4, 2.5),
	}
}

// DataRange implements plot.DataRanger: from zero to the largest mu* and
// sigma.
func (ep *EffectPoints) DataRange() (xmin, xmax, ymin, ymax float64) {
	for _, it := range ep.Items {
		xmax, ymax = math.Max(xmax, it.MuStar), math.Max(ymax, it.Sigma)
	}
	if xmax == 0 {
		xmax = 1
	}
	if ymax == 0 {
		ymax = xmax
	}
	return 0, xmax * 1.05, 0, ymax * 1.05
}

// Plot implements plot.Plotter.
func (ep *EffectPoints) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	end := math.Min(p.X.Max, p.Y.Max)
	c.StrokeLines(ep.LineStyle, c.ClipLinesXY([]vg.Point{{X: trX(0), Y: trY(0)}, {X: trX(end), Y: trY(end)}})...)
	for i := len(ep.Items) - 1; i >= 0; i-- { // the most influential on top
		it := ep.Items[i]
		pt := vg.Point{X: trX(it.MuStar), Y: trY(it.Sigma)}
		drawHaloGlyph(c, ep.Glyph, pt)
		if i < ep.Labels {
			c.FillText(ep.LabelStyle, vg.Point{X: pt.X + ep.Glyph.Radius + 2, Y: pt.Y}, truncate(orDefault(it.Name, "(unnamed)"), maxNameRunes))
		}
	}
}

// GlyphBoxes implements plot.GlyphBoxer: room for the dots and the names.
func (ep *EffectPoints) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	var boxes []plot.GlyphBox
	r := ep.Glyph.Radius
	for i, it := range ep.Items {
		box := vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}}
		if i < ep.Labels {
			box.Max.X += 2 + ep.LabelStyle.Width(truncate(orDefault(it.Name, "(unnamed)"), maxNameRunes))
		}
		boxes = append(boxes, plot.GlyphBox{X: p.X.Norm(it.MuStar), Y: p.Y.Norm(it.Sigma), Rectangle: box})
	}
	return boxes
}

// Text draws the chart on a grid of characters: each named input as a
// letter (A for the first) at its place, listed below with its mu* and
// sigma, and dots on the line sigma = mu*.
func (e *Effects) Text(width int) string {
	if err := e.check(); err != nil {
		return textMessage(e.heading(), err)
	}
	width = textWidth(width)
	u := clean(e.Unit)
	ep := NewEffectPoints(e.Items)
	_, xmax, _, ymax := ep.DataRange()
	labels := []string{unit.Format(ymax, u), unit.Format(0, u)}
	labelW := max(runeLen(labels[0]), runeLen(labels[1]))
	cols := max(10, min(60, width-labelW-2))
	rows := 12
	grid := make([][]rune, rows)
	for r := range grid {
		grid[r] = []rune(strings.Repeat(" ", cols))
	}
	cell := func(x, y float64) (int, int) {
		c := int(x / xmax * float64(cols-1))
		r := int(y / ymax * float64(rows-1))
		return max(0, min(cols-1, c)), max(0, min(rows-1, r))
	}
	for c := range cols {
		x := xmax * float64(c) / float64(cols-1)
		if x <= ymax {
			cc, r := cell(x, x)
			grid[r][cc] = '·'
		}
	}
	n := min(len(e.Items), 26, MaxLabels)
	for i := n - 1; i >= 0; i-- {
		c, r := cell(e.Items[i].MuStar, e.Items[i].Sigma)
		grid[r][c] = rune('A' + i)
	}
	var b strings.Builder
	b.WriteString(truncate(e.heading(), width) + "\n")
	b.WriteString(truncate("up: σ (spread of the effects), across: μ* (mean |effect|); · marks σ = μ*", width) + "\n")
	for r := rows - 1; r >= 0; r-- {
		label := ""
		switch r {
		case rows - 1:
			label = labels[0]
		case 0:
			label = labels[1]
		}
		b.WriteString(padLeft(label, labelW) + " ┃" + string(grid[r]) + "\n")
	}
	b.WriteString(strings.Repeat(" ", labelW) + " ┗" + strings.Repeat("━", cols) + "\n")
	b.WriteString(strings.Repeat(" ", labelW+2) + string(scaleLabels(cols, []scaleLabel{
		{unit.Format(0, u), 0, -1},
		{unit.Format(xmax, u), cols - 1, 1},
	})) + "\n")
	for i := range n {
		it := e.Items[i]
		fmt.Fprintf(&b, "%c %s: μ* %s, σ %s\n", 'A'+i, truncate(orDefault(it.Name, "(unnamed)"), maxNameRunes), unit.Format(it.MuStar, u), unit.Format(it.Sigma, u))
	}
	if rest := len(e.Items) - n; rest > 0 {
		fmt.Fprintf(&b, "… and %d more inputs, each with μ* at most %s\n", rest, unit.Format(e.Items[n].MuStar, u))
	}
	return b.String()
}
