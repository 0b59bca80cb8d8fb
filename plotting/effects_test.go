package plotting

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// sampleEffects returns n inputs with falling mu* and sigma of mixed size.
func sampleEffects(n int) *Effects {
	e := &Effects{Output: "total", Unit: "$"}
	for i := range n {
		mu := 1000 / float64(i+1)
		e.Items = append(e.Items, EffectItem{Name: fmt.Sprintf("input%d", i+1), MuStar: mu, Sigma: mu * float64(i%3) / 2})
	}
	return e
}

func TestEffects(t *testing.T) {
	e := sampleEffects(20)
	doc := parseSVG(t, renderSVGBytes(t, e))
	for i := range MaxLabels {
		if len(doc.find(fmt.Sprintf("input%d", i+1))) != 1 {
			t.Errorf("input%d not named once: %s", i+1, doc.allText())
		}
	}
	if len(doc.find("input13")) != 0 {
		t.Errorf("input13 named beyond MaxLabels")
	}
	for _, want := range []string{"σ = μ*", "μ*, mean |effect| of total [$]", "σ, spread of the effects [$]", "8 more are drawn unnamed"} {
		if !strings.Contains(doc.allText(), want) {
			t.Errorf("effects SVG lacks %q: %s", want, doc.allText())
		}
	}
	// One dot per input, in the first series colour.
	dots := 0
	for _, p := range doc.paths {
		if p.fill() == hexOf(colLow) {
			dots++
		}
	}
	if dots != 20 {
		t.Errorf("%d dots, want 20", dots)
	}
	// The top input sits furthest right.
	var xTop, xMax float64
	for _, p := range doc.paths {
		if p.fill() == hexOf(colLow) {
			x0, _, _, _ := p.bounds()
			xMax = math.Max(xMax, x0)
		}
	}
	label := doc.mustFind(t, "input1")
	xTop = label.x
	if xTop < xMax {
		t.Errorf("input1 label at x %v left of the rightmost dot %v", xTop, xMax)
	}

	txt := e.Text(80)
	if n := strings.Count(txt, "┃"); n != 12 {
		t.Errorf("text has %d grid rows, want 12:\n%s", n, txt)
	}
	for _, want := range []string{"A input1: μ* $1,000, σ $0", "L input12", "… and 8 more inputs, each with μ* at most $76.92"} {
		if !strings.Contains(txt, want) {
			t.Errorf("text lacks %q:\n%s", want, txt)
		}
	}
	// A is at the right end of the bottom row (sigma 0, the largest mu*).
	var bottom string
	for _, l := range textLines(txt) {
		if strings.Contains(l, "$0 ┃") {
			bottom = l
		}
	}
	if !strings.HasSuffix(strings.TrimRight(bottom, " "), "A") {
		t.Errorf("A not at the bottom right: %q", bottom)
	}

	bad := sampleEffects(3)
	bad.Items[1].Sigma = math.NaN()
	if err := bad.Validate(); err == nil || !strings.Contains(err.Error(), "input2") {
		t.Errorf("NaN sigma: %v", err)
	}
	bad.Items[1].Sigma = -1
	if bad.Validate() == nil {
		t.Error("negative sigma accepted")
	}
	if (&Effects{}).Validate() == nil {
		t.Error("no items accepted")
	}
}

func TestIndicesSubtitle(t *testing.T) {
	ix := sampleIndices()
	ix.Subtitle = "Upper bound on each input's total-order index"
	doc := parseSVG(t, renderSVGBytes(t, ix))
	if len(doc.find("Upper bound on each input's total-order index")) != 1 || len(doc.find("Share of the variance")) != 0 {
		t.Errorf("subtitle not replaced: %s", doc.allText())
	}
}
