package kernel

import (
	"encoding/json"
	"html"
	"strings"
)

// Result is one thing a cell shows: the analysis's JSON object (the contract of
// `nudge exec --json`) and its renderings.
type Result struct {
	Kind string
	// Data is the result struct; it marshals to the JSON object with "kind".
	Data any
	Text string // text/plain: aligned table, Unicode bars
	HTML string // text/html
	SVG  []byte // image/svg+xml, optional
	PNG  []byte // image/png, optional
	// Caution marks results that carry the one-line caution.
	Caution bool
}

// JSON returns the result's JSON object on one line.
func (r *Result) JSON() []byte {
	b, err := json.Marshal(r.Data)
	if err != nil {
		b, _ = json.Marshal(map[string]any{"kind": "error", "message": "cannot encode result: " + err.Error()})
	}
	return b
}

// Bundle returns the result as a MIME bundle for Jupyter's display messages.
func (r *Result) Bundle() map[string]any {
	text := r.Text
	h := r.HTML
	if r.Caution {
		text += "\n" + Caution
		h += `<p class="nudge-caution" style="font-size:85%;color:#555">` + html.EscapeString(Caution) + `</p>`
	}
	b := map[string]any{"text/plain": strings.TrimRight(text, "\n")}
	if h != "" {
		// Notebooks run MathJax over HTML output, and a cost report is full of
		// dollar signs: keep it away (class names of MathJax 2 and 3).
		b["text/html"] = `<div class="nudge-result tex2jax_ignore mathjax_ignore">` + h + `</div>`
	}
	if len(r.SVG) > 0 {
		b["image/svg+xml"] = string(r.SVG)
	}
	if len(r.PNG) > 0 {
		b["image/png"] = r.PNG // encoding/json writes []byte as base64, as Jupyter expects
	}
	// Already encoded: the message encoder copies it as it is.
	b["application/json"] = json.RawMessage(r.JSON())
	return b
}

// ErrorObject is the JSON object of a failed statement.
type ErrorObject struct {
	Kind    string `json:"kind"` // "error"
	Message string `json:"message"`
	Line    int    `json:"line"`
	Column  int    `json:"column"`
	File    string `json:"file,omitempty"`
}

// ErrorObjects returns the JSON objects of a cell error, one per error.
func (e *CellError) ErrorObjects() []ErrorObject {
	out := make([]ErrorObject, len(e.Errors))
	for i, x := range e.Errors {
		out[i] = ErrorObject{Kind: "error", Message: x.Msg, Line: x.Pos.Line, Column: x.Pos.Column, File: x.Pos.Filename}
	}
	return out
}
