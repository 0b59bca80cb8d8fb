package sens

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
	"testing"
)

// htmlDoc is what a test reads back from an HTML table.
type htmlDoc struct {
	class   string // of the outer <div>
	caption string
	head    []string
	rows    [][]string
	span    map[[2]int]string // colspan by (row, cell)
	notes   []string          // text of every <p>
}

// parseHTML reads h back with a strict XML decoder that knows no HTML
// entities, so a named entity such as &nbsp; or an unclosed tag fails it.
func parseHTML(t *testing.T, h string) htmlDoc {
	t.Helper()
	dec := xml.NewDecoder(strings.NewReader("<root>" + h + "</root>"))
	dec.Strict = true
	var doc htmlDoc
	doc.span = map[[2]int]string{}
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
					if a.Name.Local == "class" {
						doc.class = a.Value
					}
				}
			case "tbody":
				inBody = true
			case "tr":
				if inBody {
					doc.rows = append(doc.rows, nil)
				}
			case "td":
				for _, a := range tk.Attr {
					if a.Name.Local == "colspan" {
						doc.span[[2]int{len(doc.rows) - 1, len(doc.rows[len(doc.rows)-1])}] = a.Value
					}
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

// checkDoc checks what every table shares: the wrapper that notebook MathJax
// skips, a caption, the header, the number of rows, and the caution.
func checkDoc(t *testing.T, h string, head []string, rows int, caption ...string) htmlDoc {
	t.Helper()
	d := parseHTML(t, h)
	if d.class != "nudge-result tex2jax_ignore mathjax_ignore" {
		t.Errorf("wrapper class %q", d.class)
	}
	if strings.Join(d.head, "|") != strings.Join(head, "|") {
		t.Errorf("header %q, want %q", d.head, head)
	}
	if len(d.rows) != rows {
		t.Errorf("%d data rows, want %d:\n%s", len(d.rows), rows, h)
	}
	for _, c := range caption {
		if !strings.Contains(d.caption, c) {
			t.Errorf("caption %q lacks %q", d.caption, c)
		}
	}
	if len(d.notes) == 0 || d.notes[len(d.notes)-1] != Caution {
		t.Errorf("the last paragraph is not the caution: %q", d.notes)
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

func htmlProblem(t *testing.T, src, out string) *Problem {
	t.Helper()
	p, err := compileSrc(t, src).Problem(out)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestHTMLNum(t *testing.T) {
	// The number format of the HTML tables: 6 significant digits, commas from
	// 10,000, exponent form below 1e-4 and from 1e15, "$" before the number
	// and "%" right after it (common practice in cost reports), other units
	// after a space.
	for _, tc := range []struct {
		v    float64
		unit string
		plus bool
		want string
	}{
		{0, "", false, "0"},
		{math.Copysign(0, -1), "$", true, "$0"},
		{1.5, "", false, "1.5"},
		{2.0 / 3, "", false, "0.666667"},
		{1234.5, "kg", false, "1234.5 kg"},
		{9999.4, "", false, "9999.4"},
		{9999.9999, "", false, "10,000"},
		{12345.678, "", false, "12,345.7"},
		{-1234567, "$", false, "-$1,234,570"},
		{45000, "$", true, "+$45,000"},
		{123456789012, "", false, "123,457,000,000"},
		{1e15, "", false, "1e+15"},
		{-2.5e17, "$", false, "-$2.5e+17"},
		{1.5e-5, "", false, "1.5e-05"},
		{1e-4, "", false, "0.0001"},
		{0.000123456789, "", false, "0.000123457"},
		{12, "%", false, "12%"},
		{-26.666666666, "%", true, "-26.6667%"},
		{50, "%", true, "+50%"},
		{60, "$/h", false, "60 $/h"},
		{3, "1", false, "3"},
		{7, "EUR", false, "7 EUR"},
		{math.NaN(), "$", false, "NaN"},
		{math.Inf(1), "kg", false, "+Inf"},
		{math.Inf(-1), "", false, "-Inf"},
	} {
		if got := htmlNum(tc.v, tc.unit, tc.plus); got != tc.want {
			t.Errorf("htmlNum(%v, %q, %v) = %q, want %q", tc.v, tc.unit, tc.plus, got, tc.want)
		}
	}
}

func TestDriversHTML(t *testing.T) {
	// y = a·x^2.5: the elasticity of a·x^b in x is b and in a is 1 (common
	// practice; DESIGN.md's reference list). At a = 3, x = 4: y = 3·32 = 96,
	// ∂y/∂x = 2.5·3·4^1.5 = 60, ∂y/∂a = 32 (by hand).
	d, err := ComputeDrivers(htmlProblem(t, "input a = 3\ninput x = 4\ny = a * x^2.5\n", "y"))
	if err != nil {
		t.Fatal(err)
	}
	h := d.HTML()
	doc := checkDoc(t, h, []string{"input", "value", "partial", "elasticity"}, 2, "Drivers of y = 96", "elasticity")
	if got := strings.Join(cell(t, doc, "x"), "|"); got != "x|4|60|+2.5000" {
		t.Errorf("x row %q", got)
	}
	if got := strings.Join(cell(t, doc, "a"), "|"); got != "a|3|32|+1.0000" {
		t.Errorf("a row %q", got)
	}
	if doc.rows[0][0] != "x" {
		t.Errorf("rows %q: x (elasticity 2.5) should come first", doc.rows)
	}

	// A name is text, never markup.
	d.Inputs[0].Name = `<script>alert("x")</script>`
	h = d.HTML()
	if strings.Contains(h, "<script>") {
		t.Errorf("unescaped name in\n%s", h)
	}
	if doc := parseHTML(t, h); doc.rows[0][0] != `<script>alert("x")</script>` {
		t.Errorf("escaped name reads back as %q", doc.rows[0][0])
	}
}

func TestTornadoHTML(t *testing.T) {
	// y = c + (x - 2)² over x in 0..4 and c = 10 with no range (the default
	// ±10%, 9..11). By hand: the ends of x give 10 + 4 = 14 both, the
	// minimum 10 is at x = 2 inside the range (non-monotone, swing 0,
	// spread 4); c gives 9 + 1 = 10 and 11 + 1 = 12 (swing 2).
	r, err := Tornado(htmlProblem(t, "input x = 1 (0..4)\ninput c = 10\ny = c + (x - 2)^2\n", "y"), nil)
	if err != nil {
		t.Fatal(err)
	}
	doc := checkDoc(t, r.HTML(), []string{"input", "low", "high", "output at low", "output at high", "swing", "note"}, 2,
		"Tornado of y (baseline 11)")
	x := cell(t, doc, "x")
	if strings.Join(x[:6], "|") != "x|0|4|14|14|0" || !strings.HasPrefix(x[6], "non-monotone: min 10 at x = 2, max 14 at x = ") {
		t.Errorf("x row %q", x)
	}
	if c := cell(t, doc, "c"); strings.Join(c, "|") != "c|9|11|10|12|2|default ±10% range" {
		t.Errorf("c row %q", c)
	}
}

func TestSpiderHTML(t *testing.T) {
	// y = 2a + b at a = 10, b = 5: baseline 25; a at ±30% gives 14 + 5 = 19
	// and 26 + 5 = 31, b gives 20 + 3.5 = 23.5 and 20 + 6.5 = 26.5 (by hand).
	p := htmlProblem(t, "input a = 10\ninput b = 5\ny = 2*a + b\n", "y")
	r, err := Spider(p, 30, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc := checkDoc(t, r.HTML(), []string{"input", "at -30%", "baseline", "at +30%", "spread"}, 2,
		"Spider of y (baseline 25)", "-30% to +30%")
	if got := strings.Join(cell(t, doc, "a"), "|"); got != "a|19|25|31|12" {
		t.Errorf("a row %q", got)
	}
	if got := strings.Join(cell(t, doc, "b"), "|"); got != "b|23.5|25|26.5|3" {
		t.Errorf("b row %q", got)
	}
	// Five points are all shown.
	r, err = Spider(p, 10, 5, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc = checkDoc(t, r.HTML(), []string{"input", "at -10%", "at -5%", "baseline", "at +5%", "at +10%", "spread"}, 2)
	if got := strings.Join(cell(t, doc, "a"), "|"); got != "a|23|24|25|26|27|4" {
		t.Errorf("a row %q", got)
	}
}

func TestSweepHTML(t *testing.T) {
	// y = 3x + 1 with x = 37: 101 points over 0..100 are cut to at most 25
	// rows that keep both ends (y = 1 and 301) and the baseline (x = 37,
	// y = 112), which the even spacing alone would miss (by hand).
	p := htmlProblem(t, "input x = 37 [kg] (30..40)\ny = 1 [$] + 3 [$/kg] * x\n", "y")
	r, err := Sweep1D(p, "x", 0, 100, 101, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	h := r.HTML()
	doc := parseHTML(t, h)
	if n := len(doc.rows); n > 25 || n < 20 {
		t.Errorf("%d rows, want 20..25", n)
	}
	checkDoc(t, h, []string{"x", "y"}, len(doc.rows), "Sweep of y over x = 0..100 kg", "x = 37 kg gives y = $112", "of 101 points")
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
	r, err = Sweep1D(p, "x", 0, 40, 5, &target, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc = checkDoc(t, r.HTML(), []string{"x", "y"}, 5)
	if !strings.Contains(strings.Join(doc.notes, " "), "y = $100 at x = 33 kg") {
		t.Errorf("notes %q lack the crossing", doc.notes)
	}
}

func TestSweep2DHTML(t *testing.T) {
	// z = x + 10y over x in 0..20 (21 points, cut to 12 columns) and y in
	// 0..4 (5 points, all rows). By hand: the corners are 0, 20, 40 and 60.
	p := htmlProblem(t, "input x = 5\ninput y = 1\nz = x + 10*y\n", "z")
	r, err := Sweep2D(p, "x", 0, 20, "y", 0, 4, 21, 5, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc := parseHTML(t, r.HTML())
	if len(doc.head) != 13 || doc.head[0] != `y \ x` || doc.head[1] != "0" || doc.head[12] != "20" {
		t.Fatalf("header %q: want the corner and 12 x values from 0 to 20", doc.head)
	}
	checkDoc(t, r.HTML(), doc.head, 5, "Sweep of z (baseline 15)", "12 × 5 of 21 × 5")
	first, last := doc.rows[0], doc.rows[4]
	if len(first) != 13 || first[0] != "0" || first[1] != "0" || first[12] != "20" ||
		last[0] != "4" || last[1] != "40" || last[12] != "60" {
		t.Errorf("rows %q ... %q", first, last)
	}
	for _, row := range doc.rows {
		if len(row) != 13 {
			t.Errorf("row %q has %d cells, want 13", row, len(row))
		}
	}
}

func TestBreakevenHTML(t *testing.T) {
	// (x - 2)(x - 5) = 0 at x = 2 and x = 5 (roots of the factored
	// quadratic). From the baseline x = 3 with range 0..4: x = 2 is -1
	// (-33.3333%) and in range, x = 5 is +2 (+66.6667%) and out of range.
	p := htmlProblem(t, "input x = 3 [h] (0..4)\ny = (x - 2 [h]) * (x - 5 [h])\n", "y")
	r, err := Breakeven(p, "x", 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	doc := checkDoc(t, r.HTML(), []string{"x", "change from baseline", "change %", "in range"}, 2,
		"Break-even of y = 0", "baseline x = 3 h", "range 0..4 h")
	if got := strings.Join(doc.rows[0], "|"); got != "2 h|-1 h|-33.3333%|yes" {
		t.Errorf("first crossing %q", got)
	}
	if got := strings.Join(doc.rows[1], "|"); got != "5 h|+2 h|+66.6667%|no" {
		t.Errorf("second crossing %q", got)
	}

	// x² + 1 never reaches 0 (it is at least 1): one row carries the message
	// across all four columns.
	r, err = Breakeven(htmlProblem(t, "input x = 3 (0..4)\ny = x^2 + 1\n", "y"), "x", 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Message == "" {
		t.Fatal("no message")
	}
	doc = checkDoc(t, r.HTML(), []string{"x", "change from baseline", "change %", "in range"}, 1)
	if len(doc.rows[0]) != 1 || doc.rows[0][0] != r.Message || doc.span[[2]int{0, 0}] != "4" {
		t.Errorf("row %q (colspan %q), want the message %q over 4 columns", doc.rows[0], doc.span[[2]int{0, 0}], r.Message)
	}
}

func TestCompareHTML(t *testing.T) {
	// Base 1000·1.5·60 = 90,000; lean 1000·1.2·55 = 66,000 (-24,000,
	// -26.6667%); rush 1500·1.5·60 = 135,000 (+45,000, +50%), by hand.
	prog := compileSrc(t, "input hours = 1.5 [h]\ninput rate = 60 [$/h]\ninput units = 1000\ncost = units * hours * rate\n")
	p, err := prog.Problem("cost")
	if err != nil {
		t.Fatal(err)
	}
	x0 := prog.Baseline()
	lean := []float64{1.2, 55, 1000}
	rush := []float64{1.5, 60, 1500}
	if len(x0) != 3 || x0[0] != 1.5 || x0[1] != 60 || x0[2] != 1000 {
		t.Fatalf("baseline %v, want hours, rate, units", x0)
	}
	evil := `<script>alert(1)</script>`
	r, err := Compare(p, []Case{{Name: BaseName}, {Name: "lean", X: lean}, {Name: evil, X: rush}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	h := r.HTML()
	if strings.Contains(h, "<script>") {
		t.Errorf("unescaped case name in\n%s", h)
	}
	doc := checkDoc(t, h, []string{"scenario", "value", "delta", "delta %", "changes"}, 3, "Comparison of cost", "baseline $90,000")
	for _, want := range []string{
		"base|$90,000|$0|0%|",
		"lean|$66,000|-$24,000|-26.6667%|hours 1.5 → 1.2 h, rate 60 → 55 $/h",
		evil + "|$135,000|+$45,000|+50%|units 1000 → 1500",
	} {
		name, _, _ := strings.Cut(want, "|")
		if got := strings.Join(cell(t, doc, name), "|"); got != want {
			t.Errorf("row %q, want %q", got, want)
		}
	}
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

// A cost of hours·(rate + 10 $/h) at 2 h and 60 $/h is $140; its partial
// derivatives are 70 $/h and 2 h, its elasticities 1 in hours and 120/140 in
// rate (by hand).
func ExampleDrivers_HTML() {
	m, err := LoadModel("example", []byte(`
input hours = 2 [h]
input rate  = 60 [$/h]
cost = hours * (rate + 10 [$/h])
`))
	if err != nil {
		fmt.Println(err)
		return
	}
	prog, err := m.Compile()
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := prog.Problem("cost")
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := ComputeDrivers(p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(d.HTML())
	// Output:
	// <div class="nudge-result tex2jax_ignore mathjax_ignore">
	// <table class="nudge-table">
	// <caption>Drivers of cost = $140: the value of each input, the partial derivative of cost with respect to it, and its elasticity (the % change of cost per 1% change of the input), by |elasticity|</caption>
	// <thead><tr><th scope="col">input</th><th scope="col">value</th><th scope="col">partial</th><th scope="col">elasticity</th></tr></thead>
	// <tbody>
	// <tr><td>hours</td><td>2 h</td><td>70 $/h</td><td>+1.0000</td></tr>
	// <tr><td>rate</td><td>60 $/h</td><td>2 h</td><td>+0.8571</td></tr>
	// </tbody>
	// </table>
	// <p class="nudge-caution">Results describe the model, not the world: they hold only within the stated ranges and distributions, one-at-a-time charts miss interactions, and a cost model is not a quote.</p>
	// </div>
}
