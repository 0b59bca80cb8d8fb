package plotting

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The theme: every colour, font size and line width the charts use lives
// here, so that the look can be judged and changed in one place.
//
// Colour choices. The two colours that carry meaning in most charts are a
// blue (input at the low end of its range, first series) and an orange
// (input at the high end, second series). Blue and orange differ along the
// blue-yellow opponent axis, which people with the common red-green colour
// vision deficiencies (deuteranopia, protanopia) keep, and they also differ
// in lightness (CIE L* 45 against 68), so the pair survives greyscale print.
// A red/green pair would collapse for about one man in twelve. The test
// TestThemeColourBlindSafe simulates deuteranopia, protanopia and
// tritanopia (Machado, Oliveira and Fernandes 2009) and checks the CIEDE2000
// difference of every pair that is drawn side by side.
//
// The six series colours (spider lines, index bars) were picked by hand
// after a greedy search that maximised the smallest CIEDE2000 difference
// under normal vision, deuteranopia and protanopia; lines also differ in
// marker shape, so colour is never the only cue.
//
// The sequential ramp of the heat map runs from a pale cream through teal
// and blue to a deep indigo. Its anchors were placed at CIE L* 97, 83, 69,
// 55, 41, 27 and 13, so lightness falls evenly and monotonically; the ramp is
// interpolated in CIELAB. Lightness alone orders the values, so the map reads
// the same under any colour vision deficiency and in greyscale.
var (
	colInk        = rgb(0x22, 0x25, 0x2B) // text, baseline, whiskers
	colMuted      = rgb(0x5F, 0x66, 0x70) // secondary text, axis lines
	colGrid       = rgb(0xE4, 0xE7, 0xEB) // grid lines
	colRefLine    = rgb(0x8A, 0x91, 0x9C) // reference lines (0 %, baseline level)
	colBackground = color.White

	colLow      = rgb(0x2F, 0x6C, 0xA8) // input at low end; first series
	colHigh     = rgb(0xE8, 0x90, 0x3A) // input at high end; second series
	colLowText  = rgb(0x24, 0x55, 0x85) // labels that belong to colLow
	colHighText = rgb(0x9C, 0x58, 0x12) // labels that belong to colHigh
	colNeutral  = rgb(0xAE, 0xB4, 0xBC) // summary bar ("12 others")
	colHalo     = color.White           // halo under contour lines and markers

	// seriesColors colour the lines of a spider chart and the series of an
	// index chart, in this order.
	seriesColors = []color.Color{
		colLow,
		colHigh,
		rgb(0x4D, 0xB6, 0xB4), // teal
		rgb(0x8A, 0x2B, 0x2B), // brick
		rgb(0x23, 0x6E, 0x5E), // deep green
		rgb(0x22, 0x22, 0x3A), // ink blue
	}

	// rampAnchors define the sequential colour ramp of the heat map, from
	// the lowest value to the highest.
	rampAnchors = []color.Color{
		rgb(0xFC, 0xF7, 0xDB),
		rgb(0xBC, 0xD7, 0xAE),
		rgb(0x73, 0xB4, 0xAF),
		rgb(0x3C, 0x8C, 0xB5),
		rgb(0x2D, 0x62, 0xA2),
		rgb(0x31, 0x3A, 0x7A),
		rgb(0x21, 0x1B, 0x46),
	}
)

// Typography. Liberation Sans ships inside gonum/plot and has the metrics of
// Arial, so text measured here fits when a browser substitutes Arial or
// Helvetica for it (the SVG names those as fallbacks). Sizes are in points;
// at the default width of 16 cm a 9 pt label is 12 px on a 96 dpi screen.
var (
	fontSans = font.Font{Typeface: "Liberation", Variant: "Sans"}
	fontBold = boldSans()
)

// boldSans finds the upright bold Liberation Sans in the collection that
// gonum/plot registers, so the package needs no font constants of its own.
func boldSans() font.Font {
	best := fontSans
	for _, f := range liberation.Collection() {
		if f.Font.Variant == fontSans.Variant && f.Font.Style == fontSans.Style && f.Font.Weight > best.Weight {
			best = f.Font
		}
	}
	best.Size = 0
	return best
}

const (
	sizeTitle    = vg.Length(12)
	sizeSubtitle = vg.Length(9)
	sizeAxis     = vg.Length(9.5) // axis titles
	sizeTick     = vg.Length(8.5) // tick labels, input names
	sizeLabel    = vg.Length(8)   // value labels at bar ends
	sizeLegend   = vg.Length(8.5)
	sizeNote     = vg.Length(8)

	widthAxis     = vg.Length(0.6)
	widthGrid     = vg.Length(0.6)
	widthBaseline = vg.Length(1.2)
	widthLine     = vg.Length(1.6) // data lines
	widthWhisker  = vg.Length(1)
	widthContour  = vg.Length(1.6)
	widthHalo     = vg.Length(4)

	margin  = vg.Length(9)   // around the whole figure
	gapText = vg.Length(3.5) // between stacked text rows
)

// Default sizes.
const (
	// DefaultWidth is the width of a chart when Options give none:
	// about 605 pixels at 96 dpi, which fits a notebook column.
	DefaultWidth = 16 * vg.Centimeter
	// DefaultDPI is the resolution of PNG output when Options give none.
	DefaultDPI = 96
	// MinWidth and MinHeight are the smallest sizes drawn; smaller
	// Options are raised to them, since below them the text leaves no
	// room for the data and gonum/plot's layout degenerates.
	MinWidth  = 8 * vg.Centimeter
	MinHeight = 6 * vg.Centimeter
)

func rgb(r, g, b uint8) color.NRGBA { return color.NRGBA{R: r, G: g, B: b, A: 0xFF} }

// textStyle returns a text style in the theme's font.
func textStyle(size vg.Length, col color.Color, bold bool, xa text.XAlignment, ya text.YAlignment) text.Style {
	f := fontSans
	if bold {
		f = fontBold
	}
	return text.Style{
		Color:   col,
		Font:    font.From(f, size),
		XAlign:  xa,
		YAlign:  ya,
		Handler: plot.DefaultTextHandler,
	}
}

func lineStyle(col color.Color, w vg.Length, dashes ...vg.Length) draw.LineStyle {
	return draw.LineStyle{Color: col, Width: w, Dashes: dashes}
}

// newPlot returns a plot.Plot dressed in the theme: Liberation Sans, thin
// muted axes, short ticks, labels formatted by unit.Format, no title (the
// figure draws its own header) and no background (the figure paints it).
func newPlot() *plot.Plot {
	p := plot.New()
	p.BackgroundColor = nil
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.LineStyle = lineStyle(colMuted, widthAxis)
		a.Tick.LineStyle = lineStyle(colMuted, widthAxis)
		a.Tick.Length = 3
		a.Tick.Marker = niceTicks{}
		a.Label.TextStyle = textStyle(sizeAxis, colInk, false, draw.XCenter, draw.YBottom)
		a.Label.Padding = 4
		a.Padding = 4
	}
	p.X.Tick.Label = textStyle(sizeTick, colMuted, false, draw.XCenter, draw.YTop)
	p.Y.Tick.Label = textStyle(sizeTick, colMuted, false, draw.XRight, draw.YCenter)
	return p
}

// hideAxisLine keeps an axis' tick labels but drops its line and ticks.
func hideAxisLine(a *plot.Axis) {
	a.LineStyle.Width = 0
	a.Tick.Length = 0
	a.Tick.LineStyle.Width = 0
}
