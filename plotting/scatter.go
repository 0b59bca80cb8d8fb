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

// Scatter plots sampled values of one input (x) against the output (y).
type Scatter struct {
	Title        string
	XName, XUnit string
	YName, YUnit string
	X, Y         []float64
}

var _ Chart = (*Scatter)(nil)

func (s *Scatter) heading() string {
	if s == nil {
		return "Scatter"
	}
	if t := clean(s.Title); t != "" {
		return t
	}
	x, y := clean(s.XName), clean(s.YName)
	if x != "" && y != "" {
		return "Scatter: " + y + " against " + x
	}
	return "Scatter"
}

func (s *Scatter) check() error {
	if s == nil {
		return fmt.Errorf("scatter: no chart (nil): %w", ErrNoData)
	}
	what := "scatter of " + orDefault(s.YName, "the output")
	if len(s.X) != len(s.Y) {
		return fmt.Errorf("%s: %d x values but %d y values", what, len(s.X), len(s.Y))
	}
	if len(s.X) == 0 {
		return fmt.Errorf("%s has no points: %w", what, ErrNoData)
	}
	if err := finiteSlice(what, "X", s.X); err != nil {
		return err
	}
	return finiteSlice(what, "Y", s.Y)
}

// Validate implements Chart.
func (s *Scatter) Validate() error { return s.check() }

// WriteSVG implements Chart.
func (s *Scatter) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, s, o) }

// WritePNG implements Chart.
func (s *Scatter) WritePNG(w io.Writer, o *Options) error { return writePNG(w, s, o) }

// SVG implements Chart.
func (s *Scatter) SVG() string { return svgString(s) }

// PNG implements Chart.
func (s *Scatter) PNG() []byte { return pngBytes(s) }

// HTML implements Chart.
func (s *Scatter) HTML() string { return htmlString(s) }

// correlation returns Pearson's correlation coefficient of x and y, or NaN
// when either has no spread.
//
//	r = sum (x-mx)(y-my) / sqrt(sum (x-mx)^2 sum (y-my)^2)
func correlation(x, y []float64) float64 {
	n := float64(len(x))
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	var sxy, sxx, syy float64
	for i := range x {
		dx, dy := x[i]-mx, y[i]-my
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return sxy / math.Sqrt(sxx*syy)
}

func (s *Scatter) frame() *frame {
	f := &frame{title: s.heading()}
	sub := unit.Format(float64(len(s.X)), "") + " samples"
	if r := correlation(s.X, s.Y); !math.IsNaN(r) {
		sub += fmt.Sprintf("; Pearson correlation %.2f", r)
	}
	if sp := NewScatterPoints(s.X, s.Y); sp.stride() > 1 {
		sub += fmt.Sprintf("; every %s sample drawn", ordinal(sp.stride()))
	}
	f.subtitle = sub
	return f
}

func ordinal(n int) string {
	suffix := "th"
	switch {
	case n%100 >= 11 && n%100 <= 13:
	case n%10 == 1:
		suffix = "st"
	case n%10 == 2:
		suffix = "nd"
	case n%10 == 3:
		suffix = "rd"
	}
	return fmt.Sprintf("%d%s", n, suffix)
}

func (s *Scatter) height(w vg.Length) vg.Length {
	hd, ft := s.frame().heights(w)
	return hd + ft + w*0.55
}

func (s *Scatter) draw(c draw.Canvas) {
	body := s.frame().draw(c)
	p := newPlot()
	grid := plotter.NewGrid()
	grid.Vertical = lineStyle(colGrid, widthGrid)
	grid.Horizontal = lineStyle(colGrid, widthGrid)
	p.Add(grid, NewScatterPoints(s.X, s.Y))
	p.X.Label.Text = axisTitle(orDefault(s.XName, "input"), s.XUnit)
	p.Y.Label.Text = axisTitle(orDefault(s.YName, "output"), s.YUnit)
	fitTicks(p, body)
	p.Draw(body)
}

func (s *Scatter) caption() string {
	var b strings.Builder
	fmt.Fprintf(&b, "Scatter plot of %s (up) against %s (across), one dot per sample, %s samples",
		orDefault(s.YName, "the output"), orDefault(s.XName, "the input"), unit.Format(float64(len(s.X)), ""))
	if r := correlation(s.X, s.Y); !math.IsNaN(r) {
		fmt.Fprintf(&b, "; Pearson correlation %.2f", r)
	}
	b.WriteString(".")
	return b.String()
}

// ScatterPoints draws translucent dots, so that dense regions read darker.
// Above MaxPoints points only every k-th point is drawn, k the smallest
// stride that fits; simulation samples are independent, so the thinned set
// is still a fair sample.
type ScatterPoints struct {
	X, Y      []float64
	Color     color.Color
	Radius    vg.Length
	MaxPoints int
}

var (
	_ plot.Plotter    = (*ScatterPoints)(nil)
	_ plot.DataRanger = (*ScatterPoints)(nil)
	_ plot.GlyphBoxer = (*ScatterPoints)(nil)
)

// NewScatterPoints returns ScatterPoints in the package's theme.
func NewScatterPoints(x, y []float64) *ScatterPoints {
	c := colLow
	c.A = 0x60
	return &ScatterPoints{X: x, Y: y, Color: c, Radius: 1.7, MaxPoints: 2000}
}

func (sp *ScatterPoints) stride() int {
	if sp.MaxPoints <= 0 || len(sp.X) <= sp.MaxPoints {
		return 1
	}
	return (len(sp.X) + sp.MaxPoints - 1) / sp.MaxPoints
}

// DataRange implements plot.DataRanger.
func (sp *ScatterPoints) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = widen(extent(sp.X...))
	ymin, ymax = widen(extent(sp.Y...))
	return
}

// Plot implements plot.Plotter.
func (sp *ScatterPoints) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	g := draw.GlyphStyle{Color: sp.Color, Radius: sp.Radius, Shape: draw.CircleGlyph{}}
	for i := 0; i < len(sp.X); i += sp.stride() {
		c.DrawGlyph(g, vg.Point{X: trX(sp.X[i]), Y: trY(sp.Y[i])})
	}
}

// GlyphBoxes implements plot.GlyphBoxer: room for the dots at the extremes.
func (sp *ScatterPoints) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	xmin, xmax, ymin, ymax := sp.DataRange()
	r := sp.Radius
	box := vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}}
	return []plot.GlyphBox{
		{X: p.X.Norm(xmin), Y: p.Y.Norm(ymin), Rectangle: box},
		{X: p.X.Norm(xmax), Y: p.Y.Norm(ymax), Rectangle: box},
	}
}

// Text draws the scatter as a density grid: the plane is cut into cells
// (two columns wide, so about square) and each cell shaded by how many
// samples fall in it, from blank for none to █ for the fullest.
func (s *Scatter) Text(width int) string {
	if err := s.check(); err != nil {
		return textMessage(s.heading(), err)
	}
	width = textWidth(width)
	xmin, xmax := widen(extent(s.X...))
	ymin, ymax := widen(extent(s.Y...))
	yUnit := clean(s.YUnit)
	labels := []string{unit.Format(ymax, yUnit), unit.Format(ymin, yUnit)}
	labelW := max(runeLen(labels[0]), runeLen(labels[1]))
	cols := max(4, min(40, (width-labelW-2)/2))
	rows := 12
	counts := make([][]int, rows)
	for j := range counts {
		counts[j] = make([]int, cols)
	}
	top := 0
	for i := range s.X {
		c := int((s.X[i] - xmin) / (xmax - xmin) * float64(cols))
		r := int((s.Y[i] - ymin) / (ymax - ymin) * float64(rows))
		c, r = max(0, min(cols-1, c)), max(0, min(rows-1, r))
		counts[r][c]++
		top = max(top, counts[r][c])
	}
	var b strings.Builder
	b.WriteString(Wrap(s.heading(), width) + "\n")
	sub := unit.Format(float64(len(s.X)), "") + " samples"
	if r := correlation(s.X, s.Y); !math.IsNaN(r) {
		sub += fmt.Sprintf(", Pearson correlation %.2f", r)
	}
	b.WriteString(Wrap(sub+"; up: "+axisTitle(orDefault(s.YName, "output"), s.YUnit)+", across: "+axisTitle(orDefault(s.XName, "input"), s.XUnit), width) + "\n")
	for r := rows - 1; r >= 0; r-- {
		label := ""
		switch r {
		case rows - 1:
			label = labels[0]
		case 0:
			label = labels[1]
		}
		line := padLeft(label, labelW) + " ┃"
		for c := range cols {
			ch := ' '
			if n := counts[r][c]; n > 0 {
				// Any sample shows: the lightest shade is the floor.
				ch = shades[1+int(math.Round(float64(n-1)/float64(max(1, top-1))*float64(len(shades)-2)))]
			}
			line += string(ch) + string(ch)
		}
		b.WriteString(line + "\n")
	}
	b.WriteString(strings.Repeat(" ", labelW) + " ┗" + strings.Repeat("━", 2*cols) + "\n")
	xUnit := clean(s.XUnit)
	b.WriteString(strings.Repeat(" ", labelW+2) + string(scaleLabels(2*cols, []scaleLabel{
		{unit.Format(xmin, xUnit), 0, -1},
		{unit.Format(xmax, xUnit), 2*cols - 1, 1},
	})) + "\n")
	return b.String()
}
