package render

import (
	_ "embed"
	"encoding/json"
	"fmt"
	"html"
	"strings"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/unit"
)

// ExploreScript is the what-if panel's script: the evaluator of a compiled
// output's listing (sens.Listing) and the panel of sliders around it. It is
// written into every panel's HTML, so a page needs nothing else: no network,
// no other script; a report of many panels carries it once (ScriptOnce).
//
//go:embed explore.js
var ExploreScript string

// ScriptOnce is the attribute that marks a script element of an output as
// one a page needs once, however many outputs carry it: a page that gathers
// outputs (the report of nudge run, kernel/report) writes each such element
// once, at the end of its body, where it sets up every output it serves.
// An output shown on its own (one cell's HTML in a notebook) keeps its copy
// and works as it is.
const ScriptOnce = "data-nudge-once"

// exploreStyle is the panel's look, scoped to its classes.
const exploreStyle = `<style>
.nudge-explore{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;font-size:13px;max-width:620px;border:1px solid #c9d8d3;border-radius:6px;padding:10px 14px;margin:6px 0;background:#fbfdfc}
.nudge-explore-head{font-size:16px;margin-bottom:4px}
.nudge-explore-value{font-weight:600;color:#1f4f45}
.nudge-explore-delta{color:#555;font-size:12px}
.nudge-explore-error{color:#8a3b12;margin:2px 0;min-height:0}
.nudge-explore-grid{display:grid;grid-template-columns:max-content max-content minmax(140px,1fr) max-content max-content;gap:4px 8px;align-items:center;margin:6px 0}
.nudge-explore-label{font-weight:600}
.nudge-explore-end{color:#666;font-size:11px}
.nudge-explore-slider{width:100%;accent-color:#2f6f62}
.nudge-explore-box{width:8em;font:inherit;text-align:right}
.nudge-explore-reset{font:inherit;font-size:12px;margin:2px 0 6px}
.nudge-explore-note{color:#555;font-size:11px}
.nudge-explore table{border-collapse:collapse}
.nudge-explore td,.nudge-explore th{padding:1px 8px;text-align:right}
@media print{.nudge-explore-grid,.nudge-explore-reset,.nudge-explore-trust{display:none}.nudge-explore-static{display:block!important}}
</style>`

// exploreTrust is shown where the panel's script does not run.
const exploreTrust = "The sliders of this panel run in the page's own script, which has not run here. " +
	"In Jupyter, trust the notebook (classic Notebook: File > Trust Notebook; JupyterLab: the command Trust Notebook) " +
	"or run the cell again; a report written by nudge shows them when opened in a browser. Until then, the values at the baseline:"

// Explore renders a what-if panel: in HTML, the sliders, the output and its
// tornado bars, recomputed in the page by the panel's script from the
// compiled output it carries; in text (and in HTML where scripts do not
// run), the inputs' ranges and the output at their ends.
func Explore(e *sens.ExploreResult, o *Options) *Result {
	var outs []float64
	for _, in := range e.Inputs {
		outs = append(outs, in.OutputAtLow, in.OutputAtHigh)
	}
	out := unit.NewColumn(e.Unit, outs...)
	tb := &table{head: []string{"input", "low", "baseline", "high", "range from", e.Output + " at low", e.Output + " at high"},
		right: []bool{false, true, true, true, false, true, true}}
	var noRange []string
	for _, in := range e.Inputs {
		tb.add(in.Name, unit.Format(in.Low, in.Unit), unit.Format(in.Value, in.Unit), unit.Format(in.High, in.Unit),
			rangeFrom(in.Source), out.Format(in.OutputAtLow), out.Format(in.OutputAtHigh))
		if in.Low == in.High {
			noRange = append(noRange, in.Name)
		}
	}
	which := fmt.Sprintf("the %s %s with the largest swings", count(len(e.Inputs)), plural(len(e.Inputs), "input", "inputs"))
	if e.Chosen {
		which = fmt.Sprintf("the %s %s asked for", count(len(e.Inputs)), plural(len(e.Inputs), "input", "inputs"))
	}
	head := fmt.Sprintf("what-if panel of %s: %s at the baseline; sliders for %s", e.Output, unit.Format(e.Value, e.Unit), which)
	held := ""
	if e.Held > 0 {
		held = fmt.Sprintf("%s other %s of %s %s at %s baseline.", count(e.Held), plural(e.Held, "input", "inputs"), e.Output, plural(e.Held, "stays", "stay"), plural(e.Held, "its", "their"))
	}
	if len(noRange) > 0 {
		// A slider over an empty range cannot move: say so, as the
		// tornado does for the zero swing.
		held = strings.TrimSpace(held + " " + fmt.Sprintf("No range: %s %s 0 with no range or distribution, so ±%d%% of the value is no range and %s slider cannot move; state a range to explore %s.",
			strings.Join(noRange, ", "), plural(len(noRange), "is", "are"), sens.DefaultRangePct, plural(len(noRange), "its", "their"), plural(len(noRange), "it", "them")))
	}
	text := o.wrap(head) + "\n" + tb.text()
	if held != "" {
		text += o.wrap(held) + "\n"
	}
	r := &Result{Kind: "explore", Data: e, Caution: true, width: o.width(), text: text}
	if e.Listing == nil {
		r.html = tb.html(head)
		if held != "" {
			r.html += `<p class="nudge-note">` + html.EscapeString(held) + `</p>`
		}
		r.note("No sliders: " + e.NoPanel + ".")
		return r
	}
	r.text += o.wrap("The sliders move in a notebook, or in an HTML report opened in a browser; here, the values at the baseline.") + "\n"

	var b strings.Builder
	b.WriteString(`<div class="nudge-explore">`)
	b.WriteString(exploreStyle)
	b.WriteString(`<script type="application/json" class="nudge-explore-data">`)
	b.Write(exploreData(e))
	b.WriteString(`</script><div class="nudge-explore-static"><p class="nudge-note nudge-explore-trust">`)
	b.WriteString(html.EscapeString(exploreTrust))
	b.WriteString(`</p>`)
	b.WriteString(tb.html(head))
	b.WriteString(`</div>`)
	if held != "" {
		b.WriteString(`<p class="nudge-explore-note">` + html.EscapeString(held) + `</p>`)
	}
	// The script is marked to be written once in a page that gathers many
	// outputs (ScriptOnce): every copy is the same, and one sets up every
	// panel in the page.
	b.WriteString(`</div><script ` + ScriptOnce + `="nudge-explore">`)
	b.WriteString(ExploreScript)
	b.WriteString(`</script>`)
	r.html = b.String()
	return r
}

// exploreData is the panel's data, JSON that is safe inside a <script>
// element (encoding/json writes <, > and & as escapes): the output, its unit
// and baseline, the sliders, and the listing with the factor to the output's
// unit and the source places of its operations.
func exploreData(e *sens.ExploreResult) []byte {
	type slider struct {
		Name  string  `json:"name"`
		Unit  string  `json:"unit"`
		Value float64 `json:"value"`
		Low   float64 `json:"low"`
		High  float64 `json:"high"`
	}
	d := struct {
		Output  string          `json:"output"`
		Unit    string          `json:"unit"`
		Base    float64         `json:"base"`
		Inputs  []slider        `json:"inputs"`
		Scale   float64         `json:"scale"`
		Out     int             `json:"out"`
		Where   []string        `json:"where"`
		Listing json.RawMessage `json:"listing"`
	}{Output: e.Output, Unit: e.Unit, Base: e.Value, Scale: e.Listing.Scale, Out: e.Listing.Out, Where: e.Listing.Where}
	for _, in := range e.Inputs {
		d.Inputs = append(d.Inputs, slider{in.Name, in.Unit, in.Value, in.Low, in.High})
	}
	d.Listing = e.Listing.AppendJSON(nil)
	b, err := json.Marshal(d)
	if err != nil {
		// Only a non-finite number can fail, and a result holds none.
		return []byte(`{"error":` + fmt.Sprintf("%q", err.Error()) + `}`)
	}
	return b
}
