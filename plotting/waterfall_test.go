package plotting

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func sampleWaterfall() *Waterfall {
	return &Waterfall{Output: "total", Unit: "$", From: "base", To: "lean", Start: 100, End: 140,
		Steps: []Step{{"steel", 50}, {"hours", -20}, {"rate", 10}}}
}

// Each part is a bar from the running total before it to the one after it:
// on a linear axis the bars' widths are in the ratio of the parts (50 : 20
// : 10), the raising ones orange and the lowering one blue, and the bars
// chain, each starting where the one above ends.
func TestWaterfallBars(t *testing.T) {
	wf := sampleWaterfall()
	doc := parseSVG(t, renderSVGBytes(t, wf))
	for _, want := range []string{"steel", "hours", "rate", "base", "lean", "+$50", "-$20", "+$10", "$100", "$140", "total [$]"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("waterfall SVG lacks %q: %s", want, doc.allText())
		}
	}
	up, down := doc.fills(hexOf(colHigh)), doc.fills(hexOf(colLow))
	// The legend has one swatch of each colour; the bars are the others.
	if len(up) != 3 || len(down) != 2 {
		t.Fatalf("%d orange and %d blue fills, want 2 bars and a swatch, and 1 and a swatch", len(up), len(down))
	}
	widest := func(ps []svgPath) (x0, x1 float64) {
		for _, p := range ps {
			a, _, b, _ := p.bounds()
			if b-a > x1-x0 {
				x0, x1 = a, b
			}
		}
		return
	}
	s0, s1 := widest(up) // steel, 100 -> 150
	h0, h1 := widest(down)
	if !scalar.EqualWithinRel((h1-h0)/(s1-s0), 20.0/50, 1e-3) {
		t.Errorf("hours bar %v wide, steel %v: want the ratio 0.4", h1-h0, s1-s0)
	}
	if !scalar.EqualWithinAbs(h1, s1, 0.05) {
		t.Errorf("hours starts at %v, where steel ends (%v)", h1, s1)
	}
}

func TestWaterfallText(t *testing.T) {
	wf := sampleWaterfall()
	wf.Rest = &Step{Name: "2 others", Value: 1}
	wf.Unexplained = &Step{Name: "unexplained", Value: -1}
	lines := textLines(wf.Text(60))
	if len(lines) != 2+7 {
		t.Fatalf("%d lines:\n%s", len(lines), strings.Join(lines, "\n"))
	}
	for i, want := range []string{"base", "steel", "hours", "rate", "2 others", "unexplained", "lean"} {
		l := lines[2+i]
		if !strings.HasPrefix(l, want) || runes(l) > 60 {
			t.Errorf("line %d %q: want %s first, at most 60 wide", i, l, want)
		}
	}
	if !strings.Contains(lines[2], "◆") || !strings.Contains(lines[8], "◆") || !strings.Contains(lines[3], "█") ||
		!strings.Contains(lines[4], "▒") || !strings.Contains(lines[6], "░") {
		t.Errorf("marks:\n%s", strings.Join(lines, "\n"))
	}
	// The start sits at the left end of the track (100 is the least running
	// total) and steel's bar ends at the right (150 is the greatest).
	if strings.Index(lines[2], "◆") > strings.Index(lines[8], "◆") {
		t.Errorf("start right of end:\n%s", strings.Join(lines, "\n"))
	}
}

func TestWaterfallInvalid(t *testing.T) {
	if err := (&Waterfall{Output: "total"}).Validate(); !errors.Is(err, ErrNoData) {
		t.Errorf("no parts: %v", err)
	}
	wf := sampleWaterfall()
	wf.Steps[1].Value = math.NaN()
	if err := wf.Validate(); err == nil || !strings.Contains(err.Error(), `part 2 ("hours")`) {
		t.Errorf("NaN part: %v", err)
	}
	if !strings.Contains(wf.Text(60), "hours") {
		t.Error("the text of an invalid chart says why")
	}
	if !strings.Contains(AltText(sampleWaterfall()), "steel +$50") {
		t.Errorf("alt text: %s", AltText(sampleWaterfall()))
	}
}
