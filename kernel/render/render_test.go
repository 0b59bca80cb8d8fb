package render

import (
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

// htmlDoc is what a test reads back from a result's HTML.
type htmlDoc struct {
	class   string // of the outer <div>
	caption string
	head    []string
	rows    [][]string
	notes   []string // text of every <p>
}

// parseHTML reads h back with a strict XML decoder that knows no HTML
// entities, so a named entity such as &nbsp; or an unclosed tag fails it.
func parseHTML(t *testing.T, h string) htmlDoc {
	t.Helper()
	dec := xml.NewDecoder(strings.NewReader(h))
	dec.Strict = true
	var doc htmlDoc
	var stack []string
	var text strings.Builder
	inBody := false
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("the HTML is not well-formed: %v\n%s", err, h)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			stack = append(stack, tk.Name.Local)
			text.Reset()
			switch tk.Name.Local {
			case "div":
				for _, a := range tk.Attr {
					if a.Name.Local == "class" && doc.class == "" {
						doc.class = a.Value
					}
				}
			case "tbody":
				inBody = true
			case "tr":
				if inBody {
					doc.rows = append(doc.rows, nil)
				}
			}
		case xml.CharData:
			text.Write(tk)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
			switch s := text.String(); tk.Name.Local {
			case "caption":
				doc.caption = s
			case "th":
				doc.head = append(doc.head, s)
			case "td":
				doc.rows[len(doc.rows)-1] = append(doc.rows[len(doc.rows)-1], s)
			case "p":
				doc.notes = append(doc.notes, s)
			case "tbody":
				inBody = false
			}
		}
	}
	if len(stack) != 0 {
		t.Fatalf("unclosed elements %v", stack)
	}
	return doc
}

// checkDoc checks what every result's HTML shares: the wrapper that notebook
// MathJax skips, a caption, the header, the number of rows, and the caution
// last; and that the text shows the same rows.
func checkDoc(t *testing.T, r *Result, head []string, rows int, caption ...string) htmlDoc {
	t.Helper()
	d := parseHTML(t, r.HTML())
	if d.class != "nudge-result tex2jax_ignore mathjax_ignore" {
		t.Errorf("wrapper class %q", d.class)
	}
	if strings.Join(d.head, "|") != strings.Join(head, "|") {
		t.Errorf("header %q, want %q", d.head, head)
	}
	if len(d.rows) != rows {
		t.Errorf("%d data rows, want %d:\n%s", len(d.rows), rows, r.HTML())
	}
	for _, c := range caption {
		if !strings.Contains(d.caption, c) {
			t.Errorf("caption %q lacks %q", d.caption, c)
		}
	}
	if len(d.notes) == 0 || d.notes[len(d.notes)-1] != Caution {
		t.Errorf("the last paragraph is not the caution: %q", d.notes)
	}
	// One set of cells: every row of the HTML reads the same in the text.
	for _, row := range d.rows {
		for _, c := range row {
			if !strings.Contains(r.Text(), c) {
				t.Errorf("the text lacks the cell %q of the HTML:\n%s", c, r.Text())
			}
		}
	}
	return d
}

// cell finds the row whose first cell is first.
func cell(t *testing.T, d htmlDoc, first string) []string {
	t.Helper()
	for _, r := range d.rows {
		if len(r) > 0 && r[0] == first {
			return r
		}
	}
	t.Fatalf("no row %q in %q", first, d.rows)
	return nil
}

func problem(t *testing.T, src, out string) *sens.Problem {
	t.Helper()
	m, err := sens.LoadModel("test", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	p, err := prog.Problem(out)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// noCharts draws text charts only, so that the HTML is a table a strict XML
// reader can check (an <img> is not closed in HTML).
var noCharts = &Options{NoCharts: true}

func TestDrivers(t *testing.T) {
	// y = a·x^2.5: the elasticity of a·x^b in x is b and in a is 1 (common
	// practice; DESIGN.md's reference list). At a = 3, x = 4: y = 3·32 = 96,
	// ∂y/∂x = 2.5·3·4^1.5 = 60, ∂y/∂a = 32 (by hand).
	d, err := sens.Drivers(problem(t, "input a = 3\ninput x = 4\ny = a * x^2.5\n", "y"), nil)
	if err != nil {
		t.Fatal(err)
	}
	r := Drivers(d, noCharts)
	doc := checkDoc(t, r, []string{"input", "value", "∂y/∂input", "elasticity"}, 2, "y = 96 at the baseline", "elasticity")
	if got := strings.Join(cell(t, doc, "x"), "|"); got != "x|4|60|+2.5000" {
		t.Errorf("x row %q", got)
	}
	if got := strings.Join(cell(t, doc, "a"), "|"); got != "a|3|32|+1.0000" {
		t.Errorf("a row %q", got)
	}
	if doc.rows[0][0] != "x" {
		t.Errorf("rows %q: x (elasticity 2.5) should come first", doc.rows)
	}
	if !r.Caution || r.Kind != "drivers" || !strings.HasPrefix(string(r.JSON()), `{"kind":"drivers"`) {
		t.Errorf("kind %s, caution %v, JSON %s", r.Kind, r.Caution, r.JSON())
	}

	// A name is text, never markup.
	d.Inputs[0].Name = `<script>alert("x")</script>`
	h := Drivers(d, noCharts).HTML()
	if strings.Contains(h, "<script>") {
		t.Errorf("unescaped name in\n%s", h)
	}
	if doc := parseHTML(t, h); doc.rows[0][0] != `<script>alert("x")</script>` {
		t.Errorf("escaped name reads back as %q", doc.rows[0][0])
	}
}

func TestTornado(t *testing.T) {
	// y = c + (x - 2)² over x in 0..4 and c = 10 with no range (the default
	// ±10%, 9..11). By hand: the ends of x give 10 + 4 = 14 both, the
	// minimum 10 is at x = 2 inside the range (non-monotone, swing 0,
	// spread 4); c gives 9 + 1 = 10 and 11 + 1 = 12 (swing 2).
	tr, err := sens.Tornado(problem(t, "input x = 1 (0..4)\ninput c = 10\ny = c + (x - 2)^2\n", "y"), nil)
	if err != nil {
		t.Fatal(err)
	}
	r := Tornado(tr, noCharts)
	doc := checkDoc(t, r, []string{"input", "low", "high", "range from", "y at low", "y at high", "swing", "share", "note"}, 2,
		"tornado of y: baseline 11")
	// x swings 0, so c has the whole sum of squared swings.
	x := cell(t, doc, "x")
	if strings.Join(x[:8], "|") != "x|0|4|stated|14|14|0|0%" || !strings.HasPrefix(x[8], "† not monotone: 10..14 (min at 2, max at ") {
		t.Errorf("x row %q", x)
	}
	if c := cell(t, doc, "c"); strings.Join(c, "|") != "c|9|11|default ±10%|10|12|2|100.0%|" {
		t.Errorf("c row %q", c)
	}
	if !strings.Contains(r.Text(), "Tornado: y") || r.SVG() != "" {
		t.Errorf("text chart missing or SVG drawn with charts off:\n%s", r.Text())
	}
	if r = Tornado(tr, &Options{PNG: true}); !strings.Contains(r.SVG(), "<svg") || len(r.PNG()) == 0 ||
		!strings.Contains(r.HTML(), "<figure") {
		t.Errorf("chart: %d bytes of SVG, %d of PNG", len(r.SVG()), len(r.PNG()))
	}
}

func TestTornadoRest(t *testing.T) {
	// 40 inputs x_i = i+1 summed: a table shows 30 bars and sums up the 10
	// smallest, whose largest swing is that of x9, 2·10% of 10 = 2 (by hand).
	var b strings.Builder
	for i := 0; i < 40; i++ {
		fmt.Fprintf(&b, "input x%d = %d\n", i, i+1)
	}
	b.WriteString("y = x0")
	for i := 1; i < 40; i++ {
		fmt.Fprintf(&b, " + x%d", i)
	}
	tr, err := sens.Tornado(problem(t, b.String(), "y"), nil)
	if err != nil {
		t.Fatal(err)
	}
	r := Tornado(tr, noCharts)
	if len(tr.Bars) != 40 || !strings.Contains(r.Text(), "… and 10 more inputs, each with a swing of at most 2") {
		t.Errorf("%d bars in the JSON; text:\n%s", len(tr.Bars), r.Text())
	}
	checkDoc(t, r, []string{"input", "low", "high", "range from", "y at low", "y at high", "swing", "share", "note"}, 30)
}

func TestSpider(t *testing.T) {
	// y = 2a + b at a = 10, b = 5: baseline 25; a at ±30% gives 14 + 5 = 19
	// and 26 + 5 = 31, b gives 20 + 3.5 = 23.5 and 20 + 6.5 = 26.5 (by hand).
	p := problem(t, "input a = 10 [$]\ninput b = 5 [$]\ny = 2*a + b\n", "y")
	s, err := sens.Spider(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc := checkDoc(t, Spider(s, noCharts), []string{"input", "baseline", "y at -30%", "y at +30%", "spread", "note"}, 2,
		"spider of y: baseline $25", "from -30% to +30%")
	// One number of decimals for the money columns: cents, as 23.5 has them.
	if got := strings.Join(cell(t, doc, "a"), "|"); got != "a|$10|$19.00|$31.00|$12.00|" {
		t.Errorf("a row %q", got)
	}
	if got := strings.Join(cell(t, doc, "b"), "|"); got != "b|$5|$23.50|$26.50|$3.00|" {
		t.Errorf("b row %q", got)
	}
}

func TestSweep1D(t *testing.T) {
	// y = 3x + 1 with x = 37: 101 points over 0..100 are cut to at most 21
	// rows that keep both ends (y = 1 and 301) and the baseline (x = 37,
	// y = 112), which the even spacing alone would miss (by hand).
	p := problem(t, "input x = 37 [kg] (30..40)\ny = 1 [$] + 3 [$/kg] * x\n", "y")
	s, err := sens.Sweep1D(p, &sens.Sweep1DSettings{Axis: sens.Axis{Input: "x", Low: 0, High: 100, N: 101}})
	if err != nil {
		t.Fatal(err)
	}
	r := Sweep1D(s, noCharts)
	doc := parseHTML(t, r.HTML())
	if n := len(doc.rows); n > 21 || n < 18 {
		t.Errorf("%d rows, want 18..21", n)
	}
	checkDoc(t, r, []string{"x", "y"}, len(doc.rows), "sweep of y over x = 0 kg..100 kg", "baseline 37 kg gives $112", "101 points")
	if doc.rows[0][0] != "0 kg" || doc.rows[0][1] != "$1" || doc.rows[len(doc.rows)-1][0] != "100 kg" || doc.rows[len(doc.rows)-1][1] != "$301" {
		t.Errorf("ends %q, %q", doc.rows[0], doc.rows[len(doc.rows)-1])
	}
	if got := strings.Join(cell(t, doc, "37 kg"), "|"); got != "37 kg|$112" {
		t.Errorf("baseline row %q", got)
	}
	for j := 1; j < len(doc.rows); j++ {
		if doc.rows[j][0] == doc.rows[j-1][0] {
			t.Errorf("row %q repeated", doc.rows[j])
		}
	}

	// A short sweep shows every point, and where it crosses a target: 3x + 1
	// = 100 at x = 33 (by hand; linear, so interpolation is exact).
	target := 100.0
	s, err = sens.Sweep1D(p, &sens.Sweep1DSettings{Axis: sens.Axis{Input: "x", Low: 0, High: 40, N: 5}, Target: &target})
	if err != nil {
		t.Fatal(err)
	}
	doc = checkDoc(t, Sweep1D(s, noCharts), []string{"x", "y"}, 5)
	if !strings.Contains(strings.Join(doc.notes, " "), "y = $100 at x = 33 kg") {
		t.Errorf("notes %q lack the crossing", doc.notes)
	}
}

func TestSweep2D(t *testing.T) {
	// z = x + 10y over x in 0..20 (21 points, cut to 12 columns) and y in
	// 0..4 (5 points, all rows). By hand: the corners are 0, 20, 40 and 60.
	p := problem(t, "input x = 5\ninput y = 1\nz = x + 10*y\n", "z")
	s, err := sens.Sweep2D(p, &sens.Sweep2DSettings{X: sens.Axis{Input: "x", High: 20, Low: 0, N: 21}, Y: sens.Axis{Input: "y", Low: 0, High: 4, N: 5}})
	if err != nil {
		t.Fatal(err)
	}
	r := Sweep2D(s, noCharts)
	doc := parseHTML(t, r.HTML())
	if len(doc.head) != 13 || doc.head[0] != `y \ x` || doc.head[1] != "0" || doc.head[12] != "20" {
		t.Fatalf("header %q: want the corner and 12 x values from 0 to 20", doc.head)
	}
	if !strings.Contains(doc.caption, "21 × 5 grid; baseline 15") || !strings.Contains(doc.caption, "12 × 5 of the grid points shown") {
		t.Errorf("caption %q", doc.caption)
	}
	// The highest y first, as on a chart.
	first, last := doc.rows[0], doc.rows[4]
	if len(doc.rows) != 5 || first[0] != "4" || first[1] != "40" || first[12] != "60" || last[0] != "0" || last[1] != "0" || last[12] != "20" {
		t.Errorf("rows %q ... %q", first, last)
	}
	if !strings.Contains(r.Text(), "least 0 at x = 0, y = 0; greatest 60 at x = 20, y = 4") {
		t.Errorf("text:\n%s", r.Text())
	}
}

func TestBreakeven(t *testing.T) {
	// (x - 2)(x - 5) = 0 at x = 2 and x = 5 (roots of the factored
	// quadratic). From the baseline x = 3 with range 0..4: x = 2 is -1
	// (-33.33%) and in range, x = 5 is +2 (+66.67%) and out of range.
	p := problem(t, "input x = 3 [h] (0..4)\ny = (x - 2 [h]) * (x - 5 [h])\n", "y")
	b, err := sens.Breakeven(p, &sens.BreakevenSettings{Input: "x"})
	if err != nil {
		t.Fatal(err)
	}
	r := Breakeven(b, noCharts)
	doc := checkDoc(t, r, []string{"x", "change", "change %", "in range", "slope"}, 2,
		"breakeven: y = 0 h^2 over x", "baseline 3 h gives -2 h^2", "stated range 0 h..4 h")
	if got := strings.Join(doc.rows[0], "|"); got != "2 h|-1 h|-33.33%|yes|-3 h" {
		t.Errorf("first crossing %q", got)
	}
	if got := strings.Join(doc.rows[1], "|"); got != "5 h|+2 h|+66.67%|no|3 h" {
		t.Errorf("second crossing %q", got)
	}
	if !strings.Contains(r.Text(), "Break-even: y = 0 h^2 over x") {
		t.Errorf("no chart of the curve:\n%s", r.Text())
	}

	// x² + 1 never reaches 0 (it is at least 1): no table, the message.
	b, err = sens.Breakeven(problem(t, "input x = 3 (0..4)\ny = x^2 + 1\n", "y"), &sens.BreakevenSettings{Input: "x"})
	if err != nil {
		t.Fatal(err)
	}
	doc = parseHTML(t, Breakeven(b, noCharts).HTML())
	if b.Message == "" || len(doc.rows) != 0 || len(doc.notes) != 4 || doc.notes[1] != b.Message || doc.notes[2] != b.Method {
		t.Errorf("notes %q, want the head, the message %q, the root finder and the caution", doc.notes, b.Message)
	}
}

func TestCompare(t *testing.T) {
	// Base 1000·1.5·60 = 90,000; lean 1000·1.2·55 = 66,000 (-24,000,
	// -26.67%); rush 1500·1.5·60 = 135,000 (+45,000, +50%), by hand.
	evil := "<script>alert(1)</script>"
	m, err := sens.LoadModel("test", []byte("input hours = 1.5 [h]\ninput rate = 60 [$/h]\ninput units = 1000\n"+
		"cost = units * hours * rate\nscenario lean: hours = 1.2, rate = 55\nscenario rush: units = 1500\n"))
	if err != nil {
		t.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	p, err := prog.Problem("cost")
	if err != nil {
		t.Fatal(err)
	}
	rush := *m.Scenario("rush")
	rush.Name = evil
	c, err := sens.Compare(p, &sens.CompareSettings{Scenarios: []*sens.Scenario{nil, m.Scenario("lean"), &rush}})
	if err != nil {
		t.Fatal(err)
	}
	r := Compare(c, noCharts)
	if strings.Contains(r.HTML(), "<script>") {
		t.Errorf("unescaped scenario name in\n%s", r.HTML())
	}
	doc := checkDoc(t, r, []string{"scenario", "cost", "Δ", "Δ %", "changes"}, 3, "cost across scenarios", "baseline $90,000")
	for _, want := range []string{
		"base|$90,000|$0|0%|(baseline)",
		"lean|$66,000|-$24,000|-26.67%|hours = 1.2 h, rate = 55 $/h",
		evil + "|$135,000|+$45,000|+50%|units = 1,500",
	} {
		name, _, _ := strings.Cut(want, "|")
		if got := strings.Join(cell(t, doc, name), "|"); got != want {
			t.Errorf("row %q, want %q", got, want)
		}
	}
	// The chart: a bar per scenario (the baseline is its axis), each
	// labelled with its change, below the baseline in the text form's left
	// half and above it in the right.
	r = Compare(c, nil)
	for _, want := range []string{"Scenarios: cost", "-$24,000", "+$45,000", "below the baseline"} {
		if !strings.Contains(r.SVG(), want) {
			t.Errorf("the compare chart lacks %q", want)
		}
	}
	text := r.Text()
	lean := text[strings.LastIndex(text, "\nlean"):]
	lean = lean[:strings.Index(lean[1:], "\n")+1]
	if bar := strings.Index(lean, "█"); bar < 0 || bar > strings.Index(lean, "│") || !strings.HasSuffix(lean, "-$24,000") {
		t.Errorf("lean's text bar %q should lie left of the baseline", lean)
	}
}

func TestBundle(t *testing.T) {
	r := Value(&sens.ValueResult{Kind: "value", Name: "cost", Value: 97.4123, Unit: "$"}, nil)
	if r.Text() != "cost = $97.41" || r.Caution {
		t.Errorf("value %q (caution %v)", r.Text(), r.Caution)
	}
	b := r.Bundle()
	var obj map[string]any
	if err := json.Unmarshal(b[ResultMIME].(json.RawMessage), &obj); err != nil || obj["kind"] != "value" || obj["value"] != 97.4123 {
		t.Errorf("%s %s: %v", ResultMIME, b[ResultMIME], err)
	}
	if b["text/plain"] != "cost = $97.41" || !strings.Contains(b["text/html"].(string), "<b>$97.41</b>") {
		t.Errorf("bundle %v", b)
	}
	// JupyterLab's JSON viewer takes application/json ahead of HTML.
	if len(b) != 3 || b["application/json"] != nil {
		t.Errorf("bundle types %v, want text/plain, text/html and %s", keys(b), ResultMIME)
	}
}

func keys(m map[string]any) []string {
	var k []string
	for s := range m {
		k = append(k, s)
	}
	sort.Strings(k)
	return k
}

func TestEvenIndices(t *testing.T) {
	// Small cases worked by hand: rounding j·(n-1)/(m-1).
	for _, tc := range []struct {
		n, limit int
		keep     []int
		want     string
	}{
		{3, 25, nil, "[0 1 2]"},
		{21, 12, nil, "[0 2 4 5 7 9 11 13 15 16 18 20]"},
		{11, 5, []int{3}, "[0 3 7 10]"},
		{11, 5, []int{5}, "[0 3 5 7 10]"},
	} {
		if got := fmt.Sprint(evenIndices(tc.n, tc.limit, tc.keep...)); got != tc.want {
			t.Errorf("evenIndices(%d, %d, %v) = %s, want %s", tc.n, tc.limit, tc.keep, got, tc.want)
		}
	}
}
