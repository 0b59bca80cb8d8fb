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
	// Width is the width of text charts in columns (60 when 0).
	Width int
	// PNG adds a PNG image of the chart beside the SVG.
	PNG bool
	// NoCharts leaves out the SVG, the PNG and the HTML figure: charts are
	// drawn as Unicode text only.
	NoCharts bool
}

func (o *Options) width() int {
	if o == nil || o.Width <= 0 {
		return 60
	}
	return o.Width
}

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

	text string // text/plain: aligned table, Unicode chart
	html string // the HTML body: table, notes, figure
	svg  []byte
	png  []byte
}

// Text returns the result as text for a terminal: a table and, when the
// result has one, a chart drawn with Unicode characters. It leaves out the
// caution, which a front end shows once.
func (r *Result) Text() string { return r.text }

// HTML returns the result as an HTML fragment: its table, notes and chart, and
// the caution, in a <div> that notebook MathJax leaves alone (a cost report is
// full of dollar signs).
func (r *Result) HTML() string {
	h := r.html
	if r.Caution {
		h += `<p class="nudge-caution" style="font-size:85%;color:#555">` + html.EscapeString(Caution) + `</p>`
	}
	return `<div class="nudge-result tex2jax_ignore mathjax_ignore">` + h + `</div>`
}

// SVG returns the chart as an SVG document, or "" when the result has none
// (or charts are off).
func (r *Result) SVG() string { return string(r.svg) }

// PNG returns the chart as a PNG image when Options.PNG asked for one.
func (r *Result) PNG() []byte { return r.png }

// JSON returns the result's JSON object on one line.
func (r *Result) JSON() []byte {
	b, err := json.Marshal(r.Data)
	if err != nil {
		b, _ = json.Marshal(map[string]any{"kind": "error", "message": "cannot encode result: " + err.Error()})
	}
	return b
}

// Bundle returns the result as a MIME bundle for Jupyter's display messages:
// text/plain (with the caution), text/html, image/svg+xml and image/png when
// drawn, and the JSON object.
func (r *Result) Bundle() map[string]any {
	text := r.text
	if r.Caution {
		text += "\n" + Caution
	}
	b := map[string]any{"text/plain": strings.TrimRight(text, "\n")}
	if r.html != "" {
		b["text/html"] = r.HTML()
	}
	if len(r.svg) > 0 {
		b["image/svg+xml"] = string(r.svg)
	}
	if len(r.png) > 0 {
		b["image/png"] = r.png // encoding/json writes []byte as base64, as Jupyter expects
	}
	// Already encoded: the message encoder copies it as it is.
	b["application/json"] = json.RawMessage(r.JSON())
	return b
}

// message returns a result that is a line of text, such as a definition.
func message(kind string, data any, text string) *Result {
	return &Result{Kind: kind, Data: data, text: text,
		html: `<p class="nudge-value">` + html.EscapeString(text) + `</p>`}
}

// attach adds a chart to r: its Unicode form to the text, and unless charts
// are off, its SVG (and PNG) and its HTML figure after the table, since a
// notebook shows the richest of text/html and image/svg+xml, not both.
func (r *Result) attach(ch plotting.Chart, o *Options) {
	if ch == nil || ch.Validate() != nil {
		return
	}
	r.text += "\n" + ch.Text(o.width())
	if o != nil && o.NoCharts {
		return
	}
	svg := ch.SVG()
	r.svg = []byte(svg)
	if o != nil && o.PNG {
		r.png = ch.PNG()
	}
	r.html += plotting.FigureHTML(ch, svg)
}

// note adds a line of text under the table, in the text and the HTML.
func (r *Result) note(line string) {
	r.text += line + "\n"
	r.html += `<p class="nudge-note">` + html.EscapeString(line) + `</p>`
}
