package render

import (
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

// TestSpiderLinesAndGroups: y = a·b·c·d + e + f, all inputs 1 at ±30%:
// a, b, c and d are factors of one product, so their lines coincide exactly
// (each gives y = 1 + q/100 + 2 at q%) and are drawn as one line named by
// all four; with lines=2 the chart draws that group and the next-widest
// line, e = f (again coinciding), and nothing is left out; with lines=1 a
// note names e and f.
func TestSpiderLinesAndGroups(t *testing.T) {
	p := problem(t, "input a = 1\ninput b = 1\ninput c = 1\ninput d = 1\ninput e = 0.5\ninput f = 0.5\ny = a*b*c*d + e + f\n", "y")
	s, err := sens.Spider(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	r := Spider(s, &Options{Lines: 2})
	if !strings.Contains(r.Text(), "lines that coincide are drawn once: a = b = c = d") || strings.Contains(r.Text(), "not drawn") {
		t.Errorf("lines=2:\n%s", r.Text())
	}
	if !strings.Contains(r.SVG(), "a = b = c = d") || !strings.Contains(r.SVG(), "e = f") {
		t.Error("the SVG legend does not name the coinciding lines together")
	}
	r = Spider(s, &Options{Lines: 1, NoCharts: true})
	if !strings.Contains(r.Text(), "not drawn (the chart shows at most 1 lines): e, f") {
		t.Errorf("lines=1:\n%s", r.Text())
	}
}

// TestSpiderOwnRangesTable: over own ranges the table shows each range and
// where it came from (y = 2a + b, a in 5..20, b = 5 ± 20%: a gives 15 and 45,
// b 24 and 26, by hand).
func TestSpiderOwnRangesTable(t *testing.T) {
	s, err := sens.Spider(problem(t, "input a = 10 (5..20)\ninput b = 5 (±20%)\ny = 2*a + b\n", "y"), &sens.SpiderSettings{OwnRanges: true})
	if err != nil {
		t.Fatal(err)
	}
	r := Spider(s, noCharts)
	doc := checkDoc(t, r, []string{"input", "baseline", "low", "high", "range from", "y at low", "y at high", "spread", "note"}, 2, "each input over its own range")
	if a := cell(t, doc, "a"); strings.Join(a[:8], "|") != "a|10|5|20|stated|15|45|30" {
		t.Errorf("a row %q", a)
	}
	if b := cell(t, doc, "b"); strings.Join(b[:8], "|") != "b|5|4|6|±% stated|24|26|2" {
		t.Errorf("b row %q", b)
	}
}
