package report

import (
	"bytes"
	"encoding/base64"
	"encoding/json"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/notebook"
)

func intp(n int) *int { return &n }

func write(t *testing.T, nb *notebook.Notebook) string {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, nb, &Facts{Tool: "nudge test", Source: "t.ipynb"}); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// TestRichestRepresentation: each output shows in its richest form a page
// can show, HTML first and as it is, scripts included (an interactive
// output works in the report), then SVG inline, PNG, markdown, text.
func TestRichestRepresentation(t *testing.T) {
	svg := `<?xml version="1.0"?>` + "\n" + `<!-- a comment --><svg width="10pt" height="5pt" viewBox="0 0 10 5" xmlns="http://www.w3.org/2000/svg"><rect width="10" height="5"/></svg>`
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{{Type: "code", Source: "x", ExecutionCount: intp(1), Outputs: []*notebook.Output{
		{Type: "display_data", Data: map[string]any{"text/html": `<div id="p"></div><script>document.getElementById("p").textContent = 1 < 2;</script>`, "text/plain": "plain one"}},
		{Type: "display_data", Data: map[string]any{"image/svg+xml": svg, "image/png": "iVBORw0KGgo=", "text/plain": "plain two"}},
		{Type: "display_data", Data: map[string]any{"image/png": "iVBO\nRw0KGgo=\n", "text/plain": "plain three"}},
		{Type: "display_data", Data: map[string]any{"text/markdown": "**bold**", "text/plain": "plain four"}},
		{Type: "execute_result", ExecutionCount: intp(1), Data: map[string]any{"text/plain": "a < b"}},
		{Type: "display_data", Data: map[string]any{"text/html": `<figure><img alt="a &amp; b" src="data:image/svg+xml;base64,` + base64.StdEncoding.EncodeToString([]byte(svg)) + `"></figure>`}},
	}}}
	r := write(t, nb)
	for _, want := range []string{
		`<div id="p"></div><script>document.getElementById("p").textContent = 1 < 2;</script>`,
		`<svg class="nudge-svg" role="img" width="10pt"`,
		`src="data:image/png;base64,iVBORw0KGgo="`,
		`<strong>bold</strong>`,
		`a &lt; b`,
		`<svg class="nudge-svg" role="img" aria-label="a &amp; b" width="10pt"`,
	} {
		if !strings.Contains(r, want) {
			t.Errorf("the report lacks %s", want)
		}
	}
	for _, unwanted := range []string{"plain one", "plain two", "plain three", "plain four", "<?xml", "a comment", "data:image/svg+xml"} {
		if strings.Contains(r, unwanted) {
			t.Errorf("the report shows %q", unwanted)
		}
	}
}

// TestCollect finds the data files and seeds in the result objects.
func TestCollect(t *testing.T) {
	obj := func(s string) map[string]any {
		var m map[string]any
		dec := json.NewDecoder(strings.NewReader(s))
		dec.UseNumber()
		if err := dec.Decode(&m); err != nil {
			t.Fatal(err)
		}
		return m
	}
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{
		{Type: "code", ExecutionCount: intp(1), Outputs: []*notebook.Output{
			{Type: "display_data", Data: map[string]any{ResultMIME: obj(`{"kind": "table", "path": "bid.csv", "sha256": "ab"}`)}},
		}},
		{Type: "code", ExecutionCount: intp(2), Outputs: []*notebook.Output{
			{Type: "display_data", Data: map[string]any{ResultMIME: obj(`{"kind": "table", "path": "bid.csv", "sha256": "ab"}`)}},
			{Type: "display_data", Data: map[string]any{ResultMIME: obj(`{"kind": "simulation", "output": "total", "seed": 18446744073709551615}`)}},
			{Type: "display_data", Data: map[string]any{ResultMIME: obj(`{"kind": "table", "path": "bid.csv", "sha256": "cd"}`)}},
		}},
	}
	files, seeds := Collect(nb)
	if len(files) != 2 || files[0] != (File{"bid.csv", "ab", 1}) || files[1] != (File{"bid.csv", "cd", 2}) {
		t.Errorf("files %+v", files)
	}
	if len(seeds) != 1 || seeds[0] != (Seed{2, "simulation", "total", 18446744073709551615}) {
		t.Errorf("seeds %+v", seeds)
	}
}

// TestSections: each markdown cell that opens with a heading of level 1 or
// 2 starts a section, which starts a page in print.
func TestSections(t *testing.T) {
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{
		{Type: "markdown", Source: "# One\ntext"},
		{Type: "markdown", Source: "### not a new part"},
		{Type: "markdown", Source: "## Two"},
		{Type: "raw", Source: "<b>raw</b>"},
	}
	r := write(t, nb)
	if n := strings.Count(r, `<section class="nudge-part">`); n != 2 {
		t.Errorf("%d sections, want 2", n)
	}
	if !strings.Contains(r, "<title>One</title>") || !strings.Contains(r, "&lt;b&gt;raw&lt;/b&gt;") {
		t.Error("no title from the first heading, or the raw cell is not escaped")
	}
	if !strings.Contains(r, ".nudge-part { break-before: page; }") {
		t.Error("no page break between sections in print")
	}
}

// TestScriptOnce: a script element marked data-nudge-once is written once,
// at the end of the body, however many outputs carry it; two different ones
// are both kept, in the order first met; a script not marked stays where it
// is, in each output.
func TestScriptOnce(t *testing.T) {
	a := `<script data-nudge-once="a">var a = 1;</script>`
	a2 := `<script data-nudge-once="a">var a = 2;</script>`
	plain := `<script>var p = 0;</script>`
	out := func(h string) *notebook.Output {
		return &notebook.Output{Type: "display_data", Data: map[string]any{"text/html": h}}
	}
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{
		{Type: "code", Source: "x", ExecutionCount: intp(1), Outputs: []*notebook.Output{out(`<div id="one"></div>` + a + plain)}},
		{Type: "code", Source: "y", ExecutionCount: intp(2), Outputs: []*notebook.Output{out(`<div id="two"></div>` + a), out(`<div id="three"></div>` + a2 + plain)}},
	}
	r := write(t, nb)
	if strings.Count(r, a) != 1 || strings.Count(r, a2) != 1 || strings.Count(r, plain) != 2 {
		t.Errorf("copies: %d of a, %d of a2, %d of the plain script; want 1, 1, 2", strings.Count(r, a), strings.Count(r, a2), strings.Count(r, plain))
	}
	if i, j, k := strings.Index(r, `<div id="three">`), strings.Index(r, a), strings.Index(r, a2); !(i < j && j < k && k < strings.Index(r, "</body>")) {
		t.Errorf("the scripts are not after every output, in order: %d %d %d", i, j, k)
	}
	if !strings.Contains(r, `<div id="one"></div>`+plain) {
		t.Error("the plain script moved")
	}
}
