package plotting

import (
	"bytes"
	"encoding/base64"
	"errors"
	"fmt"
	"html"
	"image/color"
	"io"
	"regexp"
	"strconv"
	"strings"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Chart is what every chart of this package offers: output for files and
// writers, the three methods a Go notebook kernel looks for on a value
// (SVG, PNG and HTML, drawn at the default notebook size), and a plain-text
// form for terminals.
type Chart interface {
	// Validate reports why the chart cannot be drawn, or nil.
	Validate() error
	// WriteSVG draws the chart as an SVG document. A nil *Options means
	// the defaults. It returns Validate's error without writing anything.
	WriteSVG(w io.Writer, o *Options) error
	// WritePNG draws the chart as a PNG image.
	WritePNG(w io.Writer, o *Options) error
	// SVG returns the chart as an SVG document at the default size; a chart
	// that fails Validate becomes a small SVG that states the reason.
	SVG() string
	// PNG is like SVG but returns PNG bytes.
	PNG() []byte
	// HTML returns a <figure> holding the SVG as an <img> whose alt text
	// describes the chart in words; text is HTML-escaped.
	HTML() string
	// Text draws the chart with Unicode characters in lines of at most
	// width columns (80 when width <= 0; narrower widths are widened to
	// what the chart needs).
	Text(width int) string
}

// Options sets the size of a rendered chart. A nil *Options, and any zero
// field, means the default.
type Options struct {
	// Width of the chart; DefaultWidth when zero, and at least MinWidth.
	Width vg.Length
	// Height of the chart; when zero each chart picks a height that suits
	// its content and width (a tornado grows with its number of bars). It
	// is at least MinHeight, and enough to leave 4 cm for the plot under
	// the title, legend and notes.
	Height vg.Length
	// DPI is the resolution of PNG output; DefaultDPI when zero.
	DPI int
}

// ErrNoData is wrapped by the error of a chart that has nothing to draw:
// no bars, no lines, no samples.
var ErrNoData = errors.New("nothing to draw")

// chart is the part each chart type implements for the shared renderer.
type chart interface {
	// check returns an error when the chart cannot be drawn.
	check() error
	// heading is the chart's title as drawn, used in messages and alt text.
	heading() string
	// height is the natural height at width w.
	height(w vg.Length) vg.Length
	// draw draws the whole figure on c.
	draw(c draw.Canvas)
	// caption describes the chart in plain text: the end of its alt text.
	caption() string
	// frame returns the title, legend and notes drawn around the plot.
	frame() *frame
}

// minBody is the least height left for the plot under the frame's text.
const minBody = 4 * vg.Centimeter

func (o *Options) resolve(ch chart) (w, h vg.Length, dpi int) {
	if o != nil {
		w, h, dpi = o.Width, o.Height, o.DPI
	}
	if w <= 0 {
		w = DefaultWidth
	}
	w = max(w, MinWidth)
	if h <= 0 {
		h = ch.height(w)
	}
	hd, ft := ch.frame().heights(w)
	h = max(h, MinHeight, hd+ft+minBody)
	if dpi <= 0 {
		dpi = DefaultDPI
	}
	return w, h, dpi
}

func writeSVG(wr io.Writer, ch chart, o *Options) error {
	if err := ch.check(); err != nil {
		return err
	}
	w, h, _ := o.resolve(ch)
	_, err := wr.Write(renderSVG(w, h, ch.heading(), ch.draw))
	return err
}

func writePNG(wr io.Writer, ch chart, o *Options) error {
	if err := ch.check(); err != nil {
		return err
	}
	w, h, dpi := o.resolve(ch)
	return renderPNG(wr, w, h, dpi, ch.draw)
}

func svgString(ch chart) string {
	if err := ch.check(); err != nil {
		m := messageChart{title: ch.heading(), msg: err.Error()}
		return string(renderSVG(DefaultWidth, m.height(DefaultWidth), m.title, m.draw))
	}
	w, h, _ := (*Options)(nil).resolve(ch)
	return string(renderSVG(w, h, ch.heading(), ch.draw))
}

func pngBytes(ch chart) []byte {
	var buf bytes.Buffer
	if err := ch.check(); err != nil {
		m := messageChart{title: ch.heading(), msg: err.Error()}
		if err := renderPNG(&buf, DefaultWidth, m.height(DefaultWidth), DefaultDPI, m.draw); err != nil {
			return nil
		}
		return buf.Bytes()
	}
	w, h, dpi := (*Options)(nil).resolve(ch)
	if err := renderPNG(&buf, w, h, dpi, ch.draw); err != nil {
		return nil
	}
	return buf.Bytes()
}

// htmlString wraps the SVG in an <img> with a data URI: unlike inline SVG it
// survives HTML sanitisers and cannot clash with the page's styles or with
// other charts on the same page. Notebooks run MathJax over HTML output and
// captions are full of dollar signs, so the figure carries the classes that
// MathJax 2 and 3 skip.
func htmlString(ch chart) string {
	if ch.check() != nil {
		return figureHTML(ch, "", nil)
	}
	return figureHTML(ch, "image/svg+xml", []byte(svgString(ch)))
}

// FigureHTML is c.HTML() around an SVG of c already drawn (c.SVG()), so a
// caller that wants both draws the chart once.
func FigureHTML(c Chart, svg string) string {
	return FigureImageHTML(c, "image/svg+xml", []byte(svg))
}

// FigureImageHTML is like FigureHTML for an image of c already drawn in the
// format mime ("image/svg+xml" or "image/png"), such as c.PNG().
func FigureImageHTML(c Chart, mime string, img []byte) string {
	ch, ok := c.(chart)
	if !ok {
		return c.HTML()
	}
	return figureHTML(ch, mime, img)
}

// AltText describes c in words, as its figure's alt text does: the title
// and what the chart shows.
func AltText(c Chart) string {
	ch, ok := c.(chart)
	if !ok {
		return ""
	}
	return altText(ch)
}

func altText(ch chart) string {
	alt := ch.heading()
	if c := ch.caption(); c != "" {
		alt = strings.TrimRight(alt, ".") + ". " + c
	}
	return alt
}

// figureHTML is the <figure> of a chart: the image as a data URI, described
// for screen readers by its alt text (the title and what the chart shows), so
// the description is the image's accessible text rather than a second
// paragraph under it.
func figureHTML(ch chart, mime string, img []byte) string {
	if err := ch.check(); err != nil {
		return `<div class="nudge-chart nudge-chart-error ` + noMathJax + `" style="color:#9C2B12">` +
			html.EscapeString(ch.heading()) + ": " + html.EscapeString(err.Error()) + `</div>`
	}
	var b strings.Builder
	b.WriteString(`<figure class="nudge-chart ` + noMathJax + `" style="margin:0.5em 0">`)
	b.WriteString(`<img style="max-width:100%;height:auto" alt="`)
	b.WriteString(html.EscapeString(altText(ch)))
	b.WriteString(`" src="data:` + mime + `;base64,`)
	b.WriteString(base64.StdEncoding.EncodeToString(img))
	b.WriteString(`"></figure>`)
	return b.String()
}

// noMathJax holds the class names that MathJax 2 and 3 leave alone.
const noMathJax = "tex2jax_ignore mathjax_ignore"

// svgFontFamily is how gonum/plot names the theme's font in SVG, and
// svgFontStack the list a browser should try: Liberation Sans where it is
// installed, else the metric-compatible Arimo or Arial, then Helvetica,
// which is close. Text was measured with Liberation Sans, so any of these
// fits the layout. Fonts are not embedded, which would add about 400 kB to
// every chart.
const (
	svgFontFamily = "font-family:Liberation Sans;"
	svgFontStack  = "font-family:'Liberation Sans',Arimo,Arial,Helvetica,sans-serif;"
)

func renderSVG(w, h vg.Length, title string, drawFn func(draw.Canvas)) []byte {
	c := vgsvg.New(w, h)
	drawFn(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		// Writing to a bytes.Buffer does not fail.
		panic(err)
	}
	out := bytes.ReplaceAll(buf.Bytes(), []byte(svgFontFamily), []byte(svgFontStack))
	// gonum/plot v0.17.0 encodes raster images (heat maps, colour bars) as
	// PNG but labels the data URI image/jpg; strict renderers then drop
	// the image, so give it its true type.
	out = bytes.ReplaceAll(out, []byte(`xlink:href="data:image/jpg;base64,`), []byte(`xlink:href="data:image/png;base64,`))
	// An SVG <image> keeps its aspect ratio unless told otherwise, which
	// would squeeze a 41x21 grid into a square; it must fill its box.
	out = bytes.ReplaceAll(out, []byte(`<image `), []byte(`<image preserveAspectRatio="none" `))
	out = fixTextWidths(out)
	// Give the document a <title> for screen readers and file browsers.
	if i := bytes.Index(out, []byte("<svg ")); i >= 0 {
		if j := bytes.IndexByte(out[i:], '>'); j >= 0 {
			at := i + j + 1
			t := "\n<title>" + html.EscapeString(title) + "</title>"
			out = append(out[:at], append([]byte(t), out[at:]...)...)
		}
	}
	return out
}

func renderPNG(wr io.Writer, w, h vg.Length, dpi int, drawFn func(draw.Canvas)) error {
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi), vgimg.UseBackgroundColor(colBackground))
	drawFn(draw.New(c))
	_, err := vgimg.PngCanvas{Canvas: c}.WriteTo(wr)
	return err
}

// frame draws what every figure shares: background, a title, a subtitle,
// a legend row under them and notes at the foot. body returns the canvas
// left for the plot.
type frame struct {
	title    string
	subtitle string
	legend   []legendEntry
	notes    []string
}

// legendEntry is one item of a legend row: a small picture and a label.
type legendEntry struct {
	label string
	thumb func(c draw.Canvas)
}

var (
	styTitle    = textStyle(sizeTitle, colInk, true, draw.XLeft, draw.YTop)
	stySubtitle = textStyle(sizeSubtitle, colMuted, false, draw.XLeft, draw.YTop)
	styLegend   = textStyle(sizeLegend, colInk, false, draw.XLeft, draw.YCenter)
	styNote     = textStyle(sizeNote, colMuted, false, draw.XLeft, draw.YTop)
)

const (
	thumbWidth = vg.Length(16)
	legendGap  = vg.Length(16) // between legend entries
)

// layout returns the wrapped lines of each text block of the frame, and
// the legend entries of each row, at width w.
func (f *frame) layout(w vg.Length) (title, subtitle []string, legendRows [][]legendEntry, notes []string) {
	inner := w - 2*margin
	if f.title != "" {
		title = wrapText(styTitle, f.title, inner)
	}
	if f.subtitle != "" {
		subtitle = wrapText(stySubtitle, f.subtitle, inner)
	}
	var row []legendEntry
	var x vg.Length
	for _, e := range f.legend {
		ew := thumbWidth + 4 + styLegend.Width(e.label)
		if len(row) > 0 && x+legendGap+ew > inner {
			legendRows = append(legendRows, row)
			row, x = nil, 0
		}
		if len(row) > 0 {
			x += legendGap
		}
		row = append(row, e)
		x += ew
	}
	if len(row) > 0 {
		legendRows = append(legendRows, row)
	}
	for _, n := range f.notes {
		notes = append(notes, wrapText(styNote, n, inner)...)
	}
	return
}

func lineHeight(sty text.Style) vg.Length { return sty.Height("Xg") }

// heights returns the height the frame takes above and below the body at
// width w.
func (f *frame) heights(w vg.Length) (header, footer vg.Length) {
	title, subtitle, rows, notes := f.layout(w)
	header = margin
	header += vg.Length(len(title)) * (lineHeight(styTitle) + 1)
	if len(title) > 0 {
		header += gapText
	}
	header += vg.Length(len(subtitle)) * (lineHeight(stySubtitle) + 1)
	if len(subtitle) > 0 {
		header += gapText
	}
	if len(rows) > 0 {
		header += vg.Length(len(rows))*(lineHeight(styLegend)+gapText) + 2*gapText
	}
	footer = margin
	if len(notes) > 0 {
		footer += vg.Length(len(notes))*(lineHeight(styNote)+1) + gapText
	}
	return header, footer
}

// draw paints the frame on c and returns the canvas left for the body.
func (f *frame) draw(c draw.Canvas) draw.Canvas {
	c.SetColor(colBackground)
	c.Fill(c.Rectangle.Path())

	w := c.Max.X - c.Min.X
	title, subtitle, rows, notes := f.layout(w)
	x := c.Min.X + margin
	y := c.Max.Y - margin
	for _, l := range title {
		c.FillText(styTitle, vg.Point{X: x, Y: y}, l)
		y -= lineHeight(styTitle) + 1
	}
	if len(title) > 0 {
		y -= gapText
	}
	for _, l := range subtitle {
		c.FillText(stySubtitle, vg.Point{X: x, Y: y}, l)
		y -= lineHeight(stySubtitle) + 1
	}
	if len(subtitle) > 0 {
		y -= gapText
	}
	lh := lineHeight(styLegend)
	for _, row := range rows {
		cx := x
		mid := y - lh/2
		for _, e := range row {
			tc := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
				Min: vg.Point{X: cx, Y: mid - lh/2 + 1},
				Max: vg.Point{X: cx + thumbWidth, Y: mid + lh/2 - 1},
			}}
			if e.thumb != nil {
				e.thumb(tc)
			}
			cx += thumbWidth + 4
			c.FillText(styLegend, vg.Point{X: cx, Y: mid}, e.label)
			cx += styLegend.Width(e.label) + legendGap
		}
		y -= lh + gapText
	}
	if len(rows) > 0 {
		y -= 2 * gapText
	}
	top := y

	ny := c.Min.Y + margin + vg.Length(len(notes))*(lineHeight(styNote)+1)
	for _, l := range notes {
		c.FillText(styNote, vg.Point{X: x, Y: ny}, l)
		ny -= lineHeight(styNote) + 1
	}
	bottom := c.Min.Y + margin
	if len(notes) > 0 {
		bottom += vg.Length(len(notes))*(lineHeight(styNote)+1) + gapText
	}
	return draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
		Min: vg.Point{X: c.Min.X + margin, Y: bottom},
		Max: vg.Point{X: c.Max.X - margin, Y: top},
	}}
}

// wrapText breaks s into lines no wider than w, at spaces where it can.
func wrapText(sty text.Style, s string, w vg.Length) []string {
	words := strings.Fields(s)
	if len(words) == 0 {
		return nil
	}
	var lines []string
	cur := words[0]
	for _, word := range words[1:] {
		if sty.Width(cur+" "+word) <= w {
			cur += " " + word
			continue
		}
		lines = append(lines, cur)
		cur = word
	}
	return append(lines, cur)
}

// Legend thumbnails.

func swatchThumb(col color.Color) func(c draw.Canvas) {
	return func(c draw.Canvas) {
		h := c.Max.Y - c.Min.Y
		r := vg.Rectangle{
			Min: vg.Point{X: c.Min.X + 2, Y: c.Min.Y + h*0.1},
			Max: vg.Point{X: c.Max.X - 2, Y: c.Max.Y - h*0.1},
		}
		c.SetColor(col)
		c.Fill(r.Path())
	}
}

func lineThumb(ls draw.LineStyle, glyph *draw.GlyphStyle) func(c draw.Canvas) {
	return func(c draw.Canvas) {
		y := (c.Min.Y + c.Max.Y) / 2
		c.StrokeLine2(ls, c.Min.X, y, c.Max.X, y)
		if glyph != nil {
			c.DrawGlyphNoClip(*glyph, vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: y})
		}
	}
}

func whiskerThumb() func(c draw.Canvas) {
	return func(c draw.Canvas) {
		y := (c.Min.Y + c.Max.Y) / 2
		h := (c.Max.Y - c.Min.Y) / 2
		drawWhisker(c, c.Min.X+2, c.Max.X-2, y, h)
	}
}

func glyphThumb(g draw.GlyphStyle) func(c draw.Canvas) {
	return func(c draw.Canvas) {
		drawHaloGlyph(c, g, c.Center())
	}
}

// drawWhisker draws a horizontal interval from x0 to x1 at height y with
// end caps of height h.
func drawWhisker(c draw.Canvas, x0, x1, y, h vg.Length) {
	ls := lineStyle(colInk, widthWhisker)
	c.StrokeLine2(ls, x0, y, x1, y)
	c.StrokeLine2(ls, x0, y-h/2, x0, y+h/2)
	c.StrokeLine2(ls, x1, y-h/2, x1, y+h/2)
}

// drawHaloGlyph draws a glyph over a slightly larger white disc so that it
// stays visible on lines and coloured areas.
func drawHaloGlyph(c draw.Canvas, g draw.GlyphStyle, pt vg.Point) {
	halo := draw.GlyphStyle{Color: colHalo, Radius: g.Radius + 1.5, Shape: draw.CircleGlyph{}}
	c.DrawGlyphNoClip(halo, pt)
	c.DrawGlyphNoClip(g, pt)
}

// messageChart is drawn in place of a chart that cannot be drawn.
type messageChart struct {
	title, msg string
}

var styMessage = textStyle(sizeAxis, colInk, false, draw.XLeft, draw.YTop)

func (m messageChart) height(w vg.Length) vg.Length {
	f := frame{title: m.title}
	hd, ft := f.heights(w)
	n := len(wrapText(styMessage, m.msg, w-2*margin-12))
	return hd + ft + vg.Length(n)*(lineHeight(styMessage)+1) + 16
}

func (m messageChart) draw(c draw.Canvas) {
	f := frame{title: m.title}
	body := f.draw(c)
	c.SetColor(rgb(0xF4, 0xF5, 0xF7))
	c.Fill(body.Rectangle.Path())
	y := body.Max.Y - 8
	for _, l := range wrapText(styMessage, m.msg, body.Max.X-body.Min.X-12) {
		c.FillText(styMessage, vg.Point{X: body.Min.X + 6, Y: y}, l)
		y -= lineHeight(styMessage) + 1
	}
}

// svgTextElem matches a text element as gonum/plot's SVG canvas writes it: its
// attributes (with the style holding the weight and size) and its content.
var svgTextElem = regexp.MustCompile(`<text ([^>]*?font-weight:(\w+);[^>]*?font-size:([0-9.]+)px;[^>]*)>([^<]*)</text>`)

// fixTextWidths gives every text element the width it was laid out with
// (textLength, spacing and glyphs adjusted): gonum/plot places each label by
// the metrics of Liberation Sans, and a viewer without that font or one of
// its metric twins (Arimo, Arial) would draw wider text that runs into bars
// and neighbours. With the width fixed, any fallback font keeps the layout.
func fixTextWidths(svg []byte) []byte {
	return svgTextElem.ReplaceAllFunc(svg, func(m []byte) []byte {
		sub := svgTextElem.FindSubmatch(m)
		size, err := strconv.ParseFloat(string(sub[3]), 64)
		if err != nil || len(sub[4]) == 0 {
			return m
		}
		f := fontSans
		if string(sub[2]) == "bold" {
			f = fontBold
		}
		f.Size = vg.Length(size)
		text := html.UnescapeString(string(sub[4]))
		face := font.DefaultCache.Lookup(f, f.Size)
		w := face.Width(text)
		if w <= 0 {
			return m
		}
		return []byte(fmt.Sprintf(`<text %s textLength="%.2f" lengthAdjust="spacingAndGlyphs">%s</text>`, sub[1], float64(w), sub[4]))
	})
}
