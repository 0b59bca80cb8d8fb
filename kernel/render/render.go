// Package render turns the results of nudge's analyses into what a person
// reads: an aligned text table with a Unicode chart for terminals, an HTML
// table with the chart as a figure for notebooks, the JSON object of the
// result contract (`nudge exec --json`), and the chart as SVG and PNG.
//
// It is the one renderer of nudge: the kernel shows every result through it,
// and a Go program calls it directly. A *Result has the methods HTML, SVG and
// PNG that a Go notebook kernel such as gophernotes looks for, so a result
// shows inline there:
//
//	d, err := sens.Drivers(pr, nil)
//	...
//	render.Drivers(d, nil) // the last value of a cell: shown as a table
//
// Every number is written by sens/unit's one quantity formatter, so a value
// reads the same in a table, a chart and a message; a column of money takes
// one number of decimals for the whole column.
package render

import (
	"encoding/json"
	"html"
	"strings"

	"github.com/nudge-dev/nudge/plotting"
)

// Caution is the one-line caution shown with analysis results.
const Caution = "Caution: Results describe the model, not the world: they hold only within the stated ranges and distributions, one-at-a-time charts miss interactions, and a cost model is not a quote."

// Options say how results are drawn. A nil *Options means the defaults.
type Options struct {
	// Width is the width of text output in columns (100 when 0): text
	// charts are drawn to it, and headings and notes wrap at words to it.
	// Aligned tables are as wide as their cells.
	Width int
	// PNG draws the HTML figure as a PNG image rather than an SVG, for
	// reports and mail readers that show no SVG; Result.PNG returns it.
	PNG bool
	// NoCharts leaves out the SVG, the PNG and the HTML figure: charts are
	// drawn as Unicode text only, in the HTML as in the text.
	NoCharts bool
	// Lines is the most lines a spider chart draws (8 when 0); a note
	// names the inputs left out.
	Lines int
}

func (o *Options) lines() int {
	if o == nil || o.Lines <= 0 {
		return maxSpiderLines
	}
	return o.Lines
}

func (o *Options) width() int {
	if o == nil || o.Width <= 0 {
		return DefaultWidth
	}
	return o.Width
}

// DefaultWidth is the width of text output when Options say none.
const DefaultWidth = 100

// wrap breaks an explanation into lines of the text width, at words.
func (o *Options) wrap(s string) string { return plotting.Wrap(s, o.width()) }

// Display limits: tables and charts show the largest bars or lines and
// summarise the rest; the JSON object always holds every one.
const (
	maxTableRows   = 30
	maxSpiderLines = 8
	maxSweepRows   = 21
	maxGridSide    = 12
)

// Result is one result made presentable: its JSON object and its text, HTML
// and chart.
type Result struct {
	Kind string
	// Data is the result; it marshals to the JSON object with "kind".
	Data any
	// Caution marks results that carry the one-line caution.
	Caution bool
	// File and Line say where the statement that made the result stands,
	// and Command is its verb ("value" for a bare expression): they name
	// exported files.
	File    string
	Line    int
	Command string

	text  string // text/plain: aligned table, Unicode chart
	width int    // the text width notes wrap at (DefaultWidth when 0)
	html  string // the HTML body: table, notes, figure
	svg   []byte
	png   []byte
}

// Text returns the result as text for a terminal: a table and, when the
// result has one, a chart drawn with Unicode characters. It leaves out the
// caution, which a front end shows once.
func (r *Result) Text() string { return r.text }

// HTML returns the result as an HTML fragment: its table, notes and chart,
// and the caution, in a <div> that notebook MathJax leaves alone (a cost
// report is full of dollar signs). It is what a Go notebook kernel shows for
// the result; a Jupyter bundle (Bundle) leaves the caution to the end of the
// cell.
func (r *Result) HTML() string {
	h := r.html
	if r.Caution {
		h += `<p class="nudge-caution" style="font-size:85%;color:#555">` + html.EscapeString(Caution) + `</p>`
	}
	return wrapHTML(h)
}

// wrapHTML puts a result's HTML in the <div> every result has.
func wrapHTML(body string) string {
	return `<div class="nudge-result tex2jax_ignore mathjax_ignore">` + body + `</div>`
}

// SVG returns the chart as an SVG document, or "" when the result has none
// (or charts are off).
func (r *Result) SVG() string { return string(r.svg) }

// PNG returns the chart as a PNG image when Options.PNG asked for one.
func (r *Result) PNG() []byte { return r.png }

// JSON returns the result's JSON object on one line, or an error object
// where the result cannot be encoded (a number that is not finite).
func (r *Result) JSON() []byte {
	b, _ := r.EncodeJSON()
	return b
}

// EncodeJSON is JSON with the encoding error, if any: a front that counts
// failures (the command line's exit status) fails on it.
func (r *Result) EncodeJSON() ([]byte, error) {
	b, err := json.Marshal(r.Data)
	if err != nil {
		obj := map[string]any{"kind": "error", "message": "cannot encode result: " + err.Error()}
		if r.Line > 0 {
			obj["line"] = r.Line
		}
		b, _ = json.Marshal(obj)
	}
	return b, err
}

// message returns a result that is a line of text, such as a definition.
func message(kind string, data any, text string) *Result {
	return &Result{Kind: kind, Data: data, text: text,
		html: `<p class="nudge-value">` + html.EscapeString(text) + `</p>`}
}

// Preformatted returns a result that is text laid out already, such as the
// command reference: shown as it is, in a <pre> block in HTML.
func Preformatted(kind string, data any, text string) *Result {
	return &Result{Kind: kind, Data: data, text: text,
		html: `<pre class="nudge-text">` + html.EscapeString(text) + `</pre>`}
}

// attach adds a chart to r: its Unicode form to the text, and to the HTML
// after the table either the same Unicode chart (charts text) or the chart
// drawn as an image, SVG or with Options.PNG a PNG. The image is stored once,
// in the HTML, since a notebook shows one representation of a result.
func (r *Result) attach(ch plotting.Chart, o *Options) {
	if ch == nil || ch.Validate() != nil {
		return
	}
	txt := ch.Text(o.width())
	r.text += "\n" + txt
	if o != nil && o.NoCharts {
		r.html += `<pre class="nudge-chart-text" role="img" aria-label="` + html.EscapeString(plotting.AltText(ch)) + `">` +
			html.EscapeString(strings.TrimRight(txt, "\n")) + `</pre>`
		return
	}
	svg := ch.SVG()
	r.svg = []byte(svg)
	if o != nil && o.PNG {
		r.png = ch.PNG()
		r.html += plotting.FigureImageHTML(ch, "image/png", r.png)
		return
	}
	r.html += plotting.FigureHTML(ch, svg)
}

// note adds a line of text under the table, in the text and the HTML.
func (r *Result) note(line string) {
	w := r.width
	if w <= 0 {
		w = DefaultWidth
	}
	r.text += plotting.Wrap(line, w) + "\n"
	r.html += `<p class="nudge-note">` + html.EscapeString(line) + `</p>`
}
