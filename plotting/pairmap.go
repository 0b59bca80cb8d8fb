package plotting

import (
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/sens/unit"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// PairMap is a symmetric grid of values over pairs of inputs, such as the
// scaled mixed second derivatives of an output (how strongly each pair of
// inputs acts together), drawn in the heat map's look: one cell a pair,
// shaded by the value's magnitude on the heat map's ramp (darker is
// stronger), with the signed value written in each cell and a colour bar.
// The diagonal holds each input's own term (its curvature).
type PairMap struct {
	Title        string
	Output, Unit string
	// Names are the inputs, first at the top and at the left.
	Names []string
	// Z[i][j] is the value of the pair (Names[i], Names[j]).
	Z [][]float64
}

var _ Chart = (*PairMap)(nil)

func (m *PairMap) heading() string {
	if m == nil {
		return "Pair map"
	}
	if t := clean(m.Title); t != "" {
		return t
	}
	if o := clean(m.Output); o != "" {
		return "Interactions: " + o
	}
	return "Interactions"
}

func (m *PairMap) check() error {
	if m == nil {
		return fmt.Errorf("pair map: no chart (nil): %w", ErrNoData)
	}
	what := "pair map of " + orDefault(m.Output, "the output")
	if len(m.Names) < 2 {
		return fmt.Errorf("%s needs at least 2 inputs, has %d: %w", what, len(m.Names), ErrNoData)
	}
	if len(m.Z) != len(m.Names) {
		return fmt.Errorf("%s: Z has %d rows for %d inputs", what, len(m.Z), len(m.Names))
	}
	for i, row := range m.Z {
		if len(row) != len(m.Names) {
			return fmt.Errorf("%s: Z row %d has %d values for %d inputs", what, i, len(row), len(m.Names))
		}
		if err := finiteSlice(what, fmt.Sprintf("Z[%d]", i), row); err != nil {
			return err
		}
	}
	return nil
}

// Validate implements Chart.
func (m *PairMap) Validate() error { return m.check() }

// WriteSVG implements Chart.
func (m *PairMap) WriteSVG(w io.Writer, o *Options) error { return writeSVG(w, m, o) }

// WritePNG implements Chart.
func (m *PairMap) WritePNG(w io.Writer, o *Options) error { return writePNG(w, m, o) }

// SVG implements Chart.
func (m *PairMap) SVG() string { return svgString(m) }

// PNG implements Chart.
func (m *PairMap) PNG() []byte { return pngBytes(m) }

// HTML implements Chart.
func (m *PairMap) HTML() string { return htmlString(m) }

// most returns the largest magnitude in the grid.
func (m *PairMap) most() float64 {
	hi := 0.0
	for _, row := range m.Z {
		for _, z := range row {
			hi = math.Max(hi, math.Abs(z))
		}
	}
	return hi
}

func (m *PairMap) frame() *frame {
	return &frame{
		title:    m.heading(),
		subtitle: "Mixed second derivative times both inputs' range widths" + unitSuffix(m.Unit) + "; the diagonal is each input's curvature",
		notes:    []string{"Darker is a stronger interaction, of either sign; the number in a cell is signed."},
	}
}

func (m *PairMap) height(w vg.Length) vg.Length {
	hd, ft := m.frame().heights(w)
	return hd + ft + w*0.62
}

// magGrid is |Z| as a plotter.GridXYZ, row 0 at the top: column c is
// input c, row r is input n-1-r.
type magGrid struct{ z [][]float64 }

func (g magGrid) Dims() (c, r int)   { return len(g.z), len(g.z) }
func (g magGrid) Z(c, r int) float64 { return math.Abs(g.z[len(g.z)-1-r][c]) }
func (g magGrid) X(c int) float64    { return float64(c) }
func (g magGrid) Y(r int) float64    { return float64(r) }

// cellLabels writes each cell's signed value at its centre, white on the
// darker half of the ramp.
type cellLabels struct {
	z    [][]float64
	hi   float64
	unit string
}

func (l cellLabels) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(l.z)
	dark := textStyle(sizeLabel, colInk, false, draw.XCenter, draw.YCenter)
	light := textStyle(sizeLabel, colHalo, false, draw.XCenter, draw.YCenter)
	cell := trX(1) - trX(0)
	for i, row := range l.z {
		for j, z := range row {
			s := unit.Format(z, "")
			sty := dark
			if l.hi > 0 && math.Abs(z)/l.hi > 0.55 {
				sty = light
			}
			if sty.Width(s) > cell*0.95 {
				continue // too narrow: the colour bar still tells
			}
			c.FillText(sty, vg.Point{X: trX(float64(j)), Y: trY(float64(n - 1 - i))}, s)
		}
	}
}

func (m *PairMap) draw(c draw.Canvas) {
	body := m.frame().draw(c)
	hi := m.most()
	zlo, zhi := widen(0, hi)
	cmap := newRamp(zlo, zhi)
	ticks := niceTicks{N: 6}.Ticks(zlo, zhi)
	tickSty := textStyle(sizeTick, colMuted, false, draw.XLeft, draw.YCenter)
	var labelW vg.Length
	for _, t := range ticks {
		labelW = max(labelW, tickSty.Width(t.Label))
	}
	barTitle := "|" + axisTitle(orDefault(m.Output, "output"), m.Unit) + "|"
	colW := max(colorBarWidth+4+labelW, min(styColorBarTitle.Width(barTitle), (body.Max.X-body.Min.X)*0.3))
	barTitle = fitText(styColorBarTitle, barTitle, colW)

	heatC := body
	heatC.Max.X -= colW + colorBarGap
	heatC.Max.Y -= styColorBarTitle.Height(barTitle) + 6

	n := len(m.Names)
	p := newPlot()
	// Cells drawn as rectangles, not a scaled raster, so their edges stay
	// sharp.
	hm := plotter.NewHeatMap(magGrid{m.Z}, cmap.Palette(256))
	hm.Min, hm.Max = cmap.Min(), cmap.Max()
	p.Add(hm)
	p.Add(cellLabels{z: m.Z, hi: hi})
	p.X.Padding, p.Y.Padding = 0, 0
	var xt, yt []plot.Tick
	for i, name := range m.Names {
		label := truncate(clean(name), 16)
		xt = append(xt, plot.Tick{Value: float64(i), Label: label})
		yt = append(yt, plot.Tick{Value: float64(n - 1 - i), Label: label})
	}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	if n > 5 {
		p.X.Tick.Label.Rotation = math.Pi / 6
		p.X.Tick.Label.XAlign = draw.XRight
	}
	p.Draw(heatC)

	dc := p.DataCanvas(heatC)
	bar := vg.Rectangle{
		Min: vg.Point{X: heatC.Max.X + colorBarGap, Y: dc.Min.Y},
		Max: vg.Point{X: heatC.Max.X + colorBarGap + colorBarWidth, Y: dc.Max.Y},
	}
	drawColorBar(c, bar, cmap, ticks, tickSty, math.NaN())
	c.FillText(styColorBarTitle, vg.Point{X: bar.Min.X, Y: bar.Max.Y + 6}, barTitle)
}

func (m *PairMap) caption() string {
	var strongest string
	best := -1.0
	for i, row := range m.Z {
		for j, z := range row {
			if j > i && math.Abs(z) > best {
				best = math.Abs(z)
				strongest = fmt.Sprintf("%s and %s (%s)", clean(m.Names[i]), clean(m.Names[j]), unit.Format(z, clean(m.Unit)))
			}
		}
	}
	return fmt.Sprintf("Grid of %d inputs (%s) against each other; each cell is the pair's mixed second derivative of %s times both range widths, shaded by its size, darker is stronger. The strongest pair is %s.",
		len(m.Names), strings.Join(m.Names, ", "), orDefault(m.Output, "the output"), strongest)
}

// Text draws the grid with shades (blank for the weakest fifth to █ for
// the strongest), two columns a cell, rows and columns in the order of
// Names, and a key of the inputs' numbers.
func (m *PairMap) Text(width int) string {
	if err := m.check(); err != nil {
		return textMessage(m.heading(), err)
	}
	width = textWidth(width)
	hi := m.most()
	n := min(len(m.Names), 24)
	labelW := 1
	for _, name := range m.Names[:n] {
		labelW = max(labelW, runeLen(clean(name)))
	}
	labelW = min(labelW, 16)
	var b strings.Builder
	b.WriteString(Wrap(m.heading(), width) + "\n")
	b.WriteString(Wrap(fmt.Sprintf("|%s| of each pair: second derivative times both range widths; columns in the order of the rows", axisTitle(orDefault(m.Output, "output"), m.Unit)), width) + "\n")
	for i := range n {
		var line strings.Builder
		line.WriteString(padLeft(clean(m.Names[i]), labelW) + " ┃")
		for j := range n {
			t := 0.0
			if hi > 0 {
				t = math.Abs(m.Z[i][j]) / hi
			}
			r := shade(t)
			line.WriteRune(r)
			line.WriteRune(r)
		}
		b.WriteString(line.String() + "\n")
	}
	key := "key:"
	for k := range shades {
		z := hi * (float64(k) + 0.5) / float64(len(shades)-1)
		item := fmt.Sprintf(" %s ≤%s", string(shades[k]), unit.Format(math.Min(z, hi), clean(m.Unit)))
		if k == 0 {
			item = " (blank) ≤" + unit.Format(z, clean(m.Unit))
		}
		if runeLen(key)+runeLen(item) > width {
			b.WriteString(key + "\n")
			key = "    "
		}
		key += item
	}
	b.WriteString(key + "\n")
	return b.String()
}

func unitSuffix(u string) string {
	if u = clean(u); u != "" {
		return " (" + u + ")"
	}
	return ""
}
