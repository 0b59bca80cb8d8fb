package plotting

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"
)

func sampleSpider() *Spider {
	pct := []float64{-30, -20, -10, 0, 10, 20, 30}
	line := func(name string, f func(p float64) float64) SpiderLine {
		l := SpiderLine{Name: name, Pct: slices.Clone(pct)}
		for _, p := range pct {
			l.Out = append(l.Out, f(p))
		}
		return l
	}
	return &Spider{Output: "total", Unit: "$", Baseline: 1000, Lines: []SpiderLine{
		line("units", func(p float64) float64 { return 1000 + 10*p }),
		line("hours", func(p float64) float64 { return 1000 + 4*p }),
		line("steel", func(p float64) float64 { return 1000 - 3*p }),
		line("mass", func(p float64) float64 { return 1000 + 0.1*p*p }),
	}}
}

func TestSpider(t *testing.T) {
	s := sampleSpider()
	doc := parseSVG(t, renderSVGBytes(t, s))
	for _, want := range []string{"units", "hours", "steel", "mass", "-30%", "0%", "+30%", "change in input [%]", "total [$]"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("spider SVG lacks %q: %s", want, doc.allText())
		}
	}
	// Each line is one stroke in its series colour, through the baseline.
	for i := range s.Lines {
		var strokes []svgPath
		for _, p := range doc.paths {
			if p.stroke() == hexOf(seriesColors[i]) && p.strokeWidth() == "1.6" && len(p.pts) == 7 {
				strokes = append(strokes, p)
			}
		}
		if len(strokes) != 1 {
			t.Errorf("line %d: %d strokes of 7 points in its colour, want 1", i, len(strokes))
			continue
		}
		// Points are equally spaced in x (10% steps) and the middle one is
		// at the same height for every line: the baseline.
		pts := strokes[0].pts
		if !scalar.EqualWithinAbs(pts[1][0]-pts[0][0], pts[6][0]-pts[5][0], 0.02) {
			t.Errorf("line %d: x steps differ", i)
		}
	}
	img := renderPNGImage(t, s, nil)
	if img.Bounds().Dx() != 605 {
		t.Errorf("PNG width %d", img.Bounds().Dx())
	}

	lines := textLines(s.Text(80))
	prev, width := -1, 0
	for _, name := range []string{"units", "hours", "steel", "mass"} {
		i := lineIndex(lines, name)
		if i != prev+1 && prev >= 0 || i < 0 {
			t.Errorf("spider text: %q on line %d after %d", name, i, prev)
		}
		prev = i
		if width == 0 {
			width = runes(lines[i])
		} else if runes(lines[i]) != width {
			t.Errorf("spider text rows differ in width")
		}
	}
	txt := s.Text(80)
	for _, want := range []string{"at -30%", "at +30%", "$700", "$1,300", "$600"} {
		if !strings.Contains(txt, want) {
			t.Errorf("spider text lacks %q:\n%s", want, txt)
		}
	}

	bad := sampleSpider()
	bad.Lines[2].Out[1] = math.NaN()
	if err := bad.Validate(); err == nil || !strings.Contains(err.Error(), `"steel"`) {
		t.Errorf("NaN output: Validate() = %v", err)
	}
	bad = sampleSpider()
	bad.Lines[0].Pct = bad.Lines[0].Pct[:3]
	if err := bad.Validate(); err == nil {
		t.Errorf("mismatched lengths accepted")
	}
	if err := (&Spider{Output: "total"}).Validate(); !errors.Is(err, ErrNoData) {
		t.Errorf("empty spider: %v", err)
	}
}

func TestSpiderLinesMeetAtBaseline(t *testing.T) {
	s := sampleSpider()
	doc := parseSVG(t, renderSVGBytes(t, s))
	var mids [][2]float64
	for _, p := range doc.paths {
		if p.strokeWidth() == "1.6" && len(p.pts) == 7 {
			mids = append(mids, p.pts[3])
		}
	}
	if len(mids) != len(s.Lines) {
		t.Fatalf("found %d lines", len(mids))
	}
	for _, m := range mids[1:] {
		if !scalar.EqualWithinAbs(m[0], mids[0][0], 0.01) || !scalar.EqualWithinAbs(m[1], mids[0][1], 0.01) {
			t.Errorf("lines do not meet at 0%%: %v vs %v", m, mids[0])
		}
	}
}

func TestSweepCrossings(t *testing.T) {
	f := func(x float64) float64 { return 2*x + 1 }
	var xs, ys []float64
	for x := 0.0; x <= 4; x++ {
		xs, ys = append(xs, x), append(ys, f(x))
	}
	for _, tc := range []struct {
		x, y   []float64
		target float64
		want   []float64
	}{
		// A straight line meets y = 6 where 2x + 1 = 6 (exact).
		{xs, ys, 6, []float64{2.5}},
		// A grid point on the target counts once.
		{xs, ys, 5, []float64{2}},
		{xs, ys, 1, []float64{0}},
		{xs, ys, 9, []float64{4}},
		{xs, ys, 20, nil},
		// A parabola y = (x-2)^2 on integer points meets 1 at x = 1 and 3,
		// and touches 0 at x = 2.
		{[]float64{0, 1, 2, 3, 4}, []float64{4, 1, 0, 1, 4}, 1, []float64{1, 3}},
		{[]float64{0, 1, 2, 3, 4}, []float64{4, 1, 0, 1, 4}, 0, []float64{2}},
		{[]float64{0, 1, 2, 3, 4}, []float64{4, 1, 0, 1, 4}, 2.5, []float64{0.5, 3.5}},
	} {
		s := &Sweep{X: tc.x, Y: tc.y, Target: &tc.target}
		got := s.Crossings()
		if len(got) != len(tc.want) {
			t.Errorf("target %v: crossings %v, want %v", tc.target, got, tc.want)
			continue
		}
		for i := range got {
			if !scalar.EqualWithinAbsOrRel(got[i], tc.want[i], 1e-12, 1e-12) {
				t.Errorf("target %v: crossings %v, want %v", tc.target, got, tc.want)
			}
		}
	}
	if (&Sweep{X: xs, Y: ys}).Crossings() != nil {
		t.Errorf("crossings without a target")
	}
}

func TestSweep(t *testing.T) {
	var xs, ys []float64
	for r := 40.0; r <= 80; r += 2 {
		xs, ys = append(xs, r), append(ys, 1000*r)
	}
	target := 62500.0
	s := &Sweep{Output: "total", Unit: "$", Input: "rate", InputUnit: "$/h", X: xs, Y: ys, BaselineInput: 60, Baseline: 60000, Target: &target}
	doc := parseSVG(t, renderSVGBytes(t, s))
	for _, want := range []string{"rate [$/h]", "total [$]", "62.5 $/h", "target $62,500", "baseline (rate = 60 $/h)", "reaches target"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("sweep SVG lacks %q: %s", want, doc.allText())
		}
	}
	// The target line: a dashed ink stroke across the data area.
	dashed := 0
	for _, p := range doc.paths {
		if p.stroke() == hexOf(colInk) && strings.Contains(p.style, "stroke-dasharray:5,3") && len(p.pts) == 2 {
			dashed++
		}
	}
	if dashed != 2 { // the line and its legend picture
		t.Errorf("found %d dashed target strokes, want 2", dashed)
	}
	txt := s.Text(80)
	lines := textLines(txt)
	bi, ti := lineIndex(lines, "60 $/h"), lineIndex(lines, "62.5 $/h")
	if bi < 0 || ti != bi+1 || !strings.Contains(lines[bi], "baseline") || !strings.Contains(lines[ti], "target") {
		t.Errorf("sweep text lacks the baseline row before the target row:\n%s", txt)
	}

	far := 1e9
	s.Target = &far
	doc = parseSVG(t, renderSVGBytes(t, s))
	if !strings.Contains(doc.allText(), "not reached") || len(doc.find("target $1,000,000,000")) != 0 {
		t.Errorf("far target: want a note and no line; texts %s", doc.allText())
	}
	if !strings.Contains(s.Text(80), "not reached") {
		t.Errorf("text form does not say the target is not reached")
	}

	for name, bad := range map[string]*Sweep{
		"decreasing X": {X: []float64{1, 0}, Y: []float64{1, 2}},
		"repeated X":   {X: []float64{1, 1}, Y: []float64{1, 2}},
		"NaN Y":        {X: []float64{0, 1}, Y: []float64{1, math.NaN()}},
		"one point":    {X: []float64{0}, Y: []float64{1}},
		"NaN target":   {X: []float64{0, 1}, Y: []float64{1, 2}, Target: new(math.NaN())},
	} {
		if bad.Validate() == nil {
			t.Errorf("%s accepted", name)
		}
	}
}

func sampleHeatMap(target float64) *HeatMap {
	h := &HeatMap{Output: "total", Unit: "$", XName: "rate", XUnit: "$/h", YName: "hours", YUnit: "h",
		BaselineX: 60, BaselineY: 1.5, Target: &target}
	for x := 40.0; x <= 80; x += 4 {
		h.X = append(h.X, x)
	}
	for y := 1.0; y <= 2.0001; y += 0.1 {
		h.Y = append(h.Y, y)
	}
	for _, y := range h.Y {
		row := make([]float64, len(h.X))
		for i, x := range h.X {
			row[i] = 1000 * x * y
		}
		h.Z = append(h.Z, row)
	}
	return h
}

// contourPaths returns the long ink strokes of the contour.
func contourPaths(doc *svgDoc) []svgPath {
	var out []svgPath
	for _, p := range doc.paths {
		if p.stroke() == hexOf(colInk) && p.strokeWidth() == "1.6" && len(p.pts) > 4 {
			out = append(out, p)
		}
	}
	return out
}

func TestHeatMapContour(t *testing.T) {
	in := sampleHeatMap(90000) // within 40,000..160,000
	doc := parseSVG(t, renderSVGBytes(t, in))
	if n := len(contourPaths(doc)); n != 1 {
		t.Errorf("target in range: %d contour strokes, want 1", n)
	}
	for _, want := range []string{"rate [$/h]", "hours [h]", "total [$]", "target $90,000", "baseline"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("heat map SVG lacks %q: %s", want, doc.allText())
		}
	}
	// The heat map and the colour bar are PNG images, labelled as such.
	if svg := string(renderSVGBytes(t, in)); strings.Count(svg, `<image preserveAspectRatio="none" `) != 2 ||
		strings.Count(svg, `xlink:href="data:image/png;base64,`) != 2 {
		t.Errorf("heat map SVG does not hold two PNG images")
	}

	out := sampleHeatMap(500000)
	doc = parseSVG(t, renderSVGBytes(t, out))
	if n := len(contourPaths(doc)); n != 0 {
		t.Errorf("target out of range: %d contour strokes, want 0", n)
	}
	if !strings.Contains(doc.allText(), "not reached") {
		t.Errorf("target out of range is not noted: %s", doc.allText())
	}

	img := renderPNGImage(t, in, nil)
	if img.Bounds().Dx() != 605 {
		t.Errorf("PNG width %d", img.Bounds().Dx())
	}
}

func TestHeatGridContourOnLevelSet(t *testing.T) {
	// For z = x + y the level set z = t is the line x + y = t, and linear
	// interpolation along grid edges finds it exactly (common practice).
	h := &HeatMap{}
	for v := 0.0; v <= 10; v++ {
		h.X = append(h.X, v)
		h.Y = append(h.Y, v)
	}
	for _, y := range h.Y {
		row := make([]float64, len(h.X))
		for i, x := range h.X {
			row[i] = x + y
		}
		h.Z = append(h.Z, row)
	}
	const target = 7.3
	hg := NewHeatGrid(h.Grid(), newRamp(0, 20))
	hg.Target = target
	rec, toData := drawHeatGrid(hg)
	var strokes int
	var width vg.Length
	for _, a := range rec.Actions {
		if w, ok := a.(*recorder.SetLineWidth); ok {
			width = w.Width
		}
		s, ok := a.(*recorder.Stroke)
		if !ok || width <= 0 { // hidden axes stroke with zero width
			continue
		}
		strokes++
		for _, comp := range s.Path {
			if comp.Type != vg.MoveComp && comp.Type != vg.LineComp {
				continue
			}
			x, y := toData(comp.Pos)
			if !scalar.EqualWithinAbs(x+y, target, 1e-9) {
				t.Errorf("contour point (%v, %v): x + y = %v, want %v", x, y, x+y, target)
			}
		}
	}
	if strokes != 2 { // halo and line
		t.Errorf("%d strokes, want 2 (halo and line)", strokes)
	}
}

func TestHeatMapText(t *testing.T) {
	h := sampleHeatMap(90000)
	lines := textLines(h.Text(60))
	var grid []string
	for _, l := range lines {
		if strings.Contains(l, "┃") {
			grid = append(grid, l)
		}
	}
	if len(grid) != len(h.Y) {
		t.Fatalf("heat map text has %d grid rows, want %d:\n%s", len(grid), len(h.Y), h.Text(60))
	}
	w := runes(grid[0])
	for _, g := range grid {
		if runes(g) != w {
			t.Errorf("grid rows differ in width")
		}
	}
	// z = 1000 x y: darkest at the top right, blank at the bottom left.
	top, bottom := []rune(grid[0]), []rune(grid[len(grid)-1])
	if top[len(top)-1] != '█' || bottom[len(bottom)-2*len(h.X)] != ' ' {
		t.Errorf("shading not ordered:\n%s\n%s", grid[0], grid[len(grid)-1])
	}
	if !strings.Contains(h.Text(60), "●") || !strings.Contains(h.Text(80), "target $90,000") {
		t.Errorf("heat map text lacks the baseline mark or the target line:\n%s", h.Text(80))
	}
	bad := sampleHeatMap(1)
	bad.Z[2] = bad.Z[2][:3]
	if bad.Validate() == nil {
		t.Errorf("ragged Z accepted")
	}
	bad = sampleHeatMap(1)
	bad.Z[1][1] = math.Inf(1)
	if err := bad.Validate(); err == nil || !strings.Contains(err.Error(), "Z[1]") {
		t.Errorf("infinite Z: %v", err)
	}
}

func TestHeatMapFlat(t *testing.T) {
	h := sampleHeatMap(5)
	for _, row := range h.Z {
		for i := range row {
			row[i] = 5
		}
	}
	doc := parseSVG(t, renderSVGBytes(t, h))
	renderPNGImage(t, h, nil)
	// A grid level at the target reaches it everywhere, without a contour
	// line (issue 8, item 17: it used to say "not reached").
	n := fmt.Sprint(len(h.X) * len(h.Y))
	if text := h.Text(80); strings.Contains(text, "not reached") || !strings.Contains(text, "reached at "+n+" of "+n+" grid points") {
		t.Errorf("flat grid at the target:\n%s", text)
	}
	if n := len(contourPaths(doc)); n != 0 || strings.Contains(doc.allText(), "not reached") || !strings.Contains(doc.allText(), "level at it") {
		t.Errorf("flat grid: %d contour strokes; text %s", n, doc.allText())
	}
}

// TestHeatMapNearFloatLimit: inputs and outputs near the end of the float64
// range (issue 8, item 17) are drawn without a coordinate that overflows to
// ±Inf or is NaN, with the axes labelled in the inputs' own values.
func TestHeatMapNearFloatLimit(t *testing.T) {
	xs := []float64{-1.7e308, -8.5e307, 0, 8.5e307, 1.7e308}
	ys := []float64{1e300, 4.25e307, 8.5e307, 1.275e308, 1.7e308}
	h := &HeatMap{Output: "z", XName: "a", YName: "b", X: xs, Y: ys, BaselineX: 0, BaselineY: 1e300}
	target := 0.0
	h.Target = &target
	for _, y := range ys {
		row := make([]float64, len(xs))
		for c, x := range xs {
			row[c] = x/2 + y/4 - 2e307 // from about -1e308 to 1.2e308
		}
		h.Z = append(h.Z, row)
	}
	svg := string(renderSVGBytes(t, h))
	for _, bad := range []string{"Inf", "NaN"} {
		if strings.Contains(svg, bad) {
			t.Errorf("the SVG holds %s", bad)
		}
	}
	doc := parseSVG(t, []byte(svg))
	for _, want := range []string{"1e+308", "-1e+308"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("no tick labelled %s: %s", want, doc.allText())
		}
	}
	if n := len(contourPaths(doc)); n != 1 {
		t.Errorf("%d contour strokes, want 1", n)
	}
	renderPNGImage(t, h, nil)
}

func TestQuantileAndBins(t *testing.T) {
	// Definition 7 of Hyndman and Fan (1996): for 1, 2, 3, 4 the quartiles
	// are 1.75 and 3.25 and the median 2.5.
	xs := []float64{1, 2, 3, 4}
	for _, tc := range []struct{ p, want float64 }{{0, 1}, {0.25, 1.75}, {0.5, 2.5}, {0.75, 3.25}, {1, 4}} {
		if got := quantile(xs, tc.p); !scalar.EqualWithinAbs(got, tc.want, 1e-12) {
			t.Errorf("quantile(%v) = %v, want %v", tc.p, got, tc.want)
		}
	}
	// Freedman-Diaconis for 0, 1, ..., 999: IQR = 499.5, width =
	// 2 * 499.5 / 1000^(1/3) = 99.9, so ceil(999 / 99.9) = 10 bins.
	var u []float64
	for i := range 1000 {
		u = append(u, float64(i))
	}
	if got := binCount(u); got != 10 {
		t.Errorf("binCount(0..999) = %d, want 10", got)
	}
	// Zero IQR falls back to Sturges: ceil(log2 100) + 1 = 8.
	same := make([]float64, 100)
	same[99] = 1
	if got := binCount(same); got != 8 {
		t.Errorf("binCount with zero IQR = %d, want 8", got)
	}
	bins := histogram(u, 10, 0, 999)
	var total float64
	for _, b := range bins {
		total += b.Weight
	}
	if !scalar.EqualWithinAbs(total, 100, 1e-9) || bins[0].Min != 0 || bins[0].Max != 100 {
		t.Errorf("histogram: total %v%%, first bin [%v, %v]", total, bins[0].Min, bins[0].Max)
	}
}

func sampleDistribution() *Distribution {
	d := &Distribution{Output: "total", Unit: "$"}
	for i := range 2000 {
		// A deterministic triangular-looking sample: sums of two uniforms.
		u := float64(i%40) / 40
		v := float64(i/40) / 50
		d.Samples = append(d.Samples, 1000+500*(u+v))
	}
	d.Markers = []Marker{{"P10", 1220}, {"P50", 1490}, {"mean", 1495}, {"P90", 1770}}
	return d
}

func TestDistribution(t *testing.T) {
	d := sampleDistribution()
	doc := parseSVG(t, renderSVGBytes(t, d))
	for _, want := range []string{"P10", "P50", "mean", "P90", "samples [%]", "cumulative [%]", "total [$]"} {
		if len(doc.find(want)) == 0 {
			t.Errorf("distribution SVG lacks %q: %s", want, doc.allText())
		}
	}
	bars := doc.fills(hexOf(colLow))
	if len(bars) < 5 {
		t.Errorf("only %d histogram bars", len(bars))
	}
	// Dashed marker lines in both panels.
	var markers int
	for _, p := range doc.paths {
		if strings.Contains(p.style, "stroke-dasharray:4,2.5") && len(p.pts) == 2 {
			markers++
		}
	}
	if markers != 2*len(d.Markers)+1 { // + legend picture
		t.Errorf("%d marker strokes, want %d", markers, 2*len(d.Markers)+1)
	}
	img := renderPNGImage(t, d, nil)
	if img.Bounds().Dx() != 605 {
		t.Errorf("PNG width %d", img.Bounds().Dx())
	}

	txt := d.Text(80)
	lines := textLines(txt)
	var rows []string
	for _, l := range lines {
		if strings.Contains(l, " – ") {
			rows = append(rows, l)
		}
	}
	if len(rows) < 5 || len(rows) > 16 {
		t.Errorf("%d bin rows:\n%s", len(rows), txt)
	}
	for _, r := range rows {
		if runes(r) != runes(rows[0]) {
			t.Errorf("bin rows differ in width:\n%s", txt)
			break
		}
	}
	if !strings.HasSuffix(strings.TrimRight(rows[len(rows)-1], " "), "100.0%") {
		t.Errorf("cumulative share does not end at 100%%: %q", rows[len(rows)-1])
	}
	if !strings.Contains(txt, "◀ P50, mean") {
		t.Errorf("markers not placed in the table:\n%s", txt)
	}

	one := &Distribution{Output: "x", Samples: []float64{3, 3, 3}}
	parseSVG(t, renderSVGBytes(t, one))
	if !strings.Contains(one.Text(80), "100.0%") {
		t.Errorf("equal samples:\n%s", one.Text(80))
	}
	bad := sampleDistribution()
	bad.Samples[17] = math.NaN()
	if err := bad.Validate(); err == nil || !strings.Contains(err.Error(), "Samples[17]") {
		t.Errorf("NaN sample: %v", err)
	}
	if err := (&Distribution{}).Validate(); !errors.Is(err, ErrNoData) {
		t.Errorf("no samples: %v", err)
	}
}

func sampleIndices() *Indices {
	// First- and total-order indices of the Ishigami function with a = 7,
	// b = 0.1 (Ishigami and Homma 1990), with invented intervals.
	return &Indices{
		Title: "Sobol' indices", Output: "y", Series: []string{"first order", "total order"}, Interval: "95% confidence interval",
		Items: []IndexItem{
			{Name: "x1", Values: []float64{0.3139, 0.5576}, Lo: []float64{0.29, 0.53}, Hi: []float64{0.34, 0.59}},
			{Name: "x2", Values: []float64{0.4424, 0.4424}, Lo: []float64{0.41, 0.42}, Hi: []float64{0.47, 0.46}},
			{Name: "x3", Values: []float64{0, 0.2437}, Lo: []float64{-0.02, 0.22}, Hi: []float64{0.02, 0.27}},
		},
	}
}

func TestIndices(t *testing.T) {
	ix := sampleIndices()
	doc := parseSVG(t, renderSVGBytes(t, ix))
	first, total := doc.fills(hexOf(seriesColors[0])), doc.fills(hexOf(seriesColors[1]))
	if len(first) != 4 || len(total) != 4 {
		t.Fatalf("%d first-order and %d total-order rectangles, want 3 + legend each", len(first), len(total))
	}
	var ys []float64
	for _, n := range []string{"x1", "x2", "x3"} {
		ys = append(ys, doc.mustFind(t, n).y)
	}
	if !(ys[0] < ys[1] && ys[1] < ys[2]) {
		t.Errorf("names not top to bottom: %v", ys)
	}
	// In each group the first-order bar sits above the total-order bar,
	// and its length is proportional to its value.
	_, _, x1a, y1a := first[1].bounds()
	x0b, _, x1b, y1b := total[1].bounds()
	if !(y1a > y1b) {
		t.Errorf("first-order bar is not above the total-order bar")
	}
	if r := (x1a - x0b) / (x1b - x0b); !scalar.EqualWithinAbs(r, 0.3139/0.5576, 1e-3) {
		t.Errorf("bar lengths ratio %v, want %v", r, 0.3139/0.5576)
	}
	whiskers := 0
	for _, p := range doc.paths {
		// gonum omits stroke-width when it is the SVG default of 1.
		if p.stroke() == hexOf(colInk) && p.strokeWidth() == "" {
			whiskers++
		}
	}
	if whiskers != 3*(2*3)+3 { // 3 strokes per whisker, 6 whiskers, legend
		t.Errorf("%d whisker strokes", whiskers)
	}
	txt := ix.Text(100)
	lines := textLines(txt)
	for i, n := range []string{"x1", "x2", "x3"} {
		if j := lineIndex(lines, n); j != lineIndex(lines, "x1")+i {
			t.Errorf("row %q at line %d", n, j)
		}
	}
	if !strings.Contains(txt, "0.5576 [0.53, 0.59]") {
		t.Errorf("index text lacks a value with its interval:\n%s", txt)
	}
	bad := sampleIndices()
	bad.Items[1].Hi = nil
	if bad.Validate() == nil {
		t.Errorf("half interval accepted")
	}
	bad = sampleIndices()
	bad.Items[0].Values = bad.Items[0].Values[:1]
	if bad.Validate() == nil {
		t.Errorf("missing value accepted")
	}
}

func TestScatter(t *testing.T) {
	s := &Scatter{XName: "rate", XUnit: "$/h", YName: "total", YUnit: "$"}
	for i := range 5000 {
		x := float64(i % 100)
		s.X = append(s.X, x)
		s.Y = append(s.Y, 3*x+float64(i%7))
	}
	doc := parseSVG(t, renderSVGBytes(t, s))
	dots := 0
	for _, p := range doc.paths {
		// Only the dots are translucent.
		if strings.Contains(p.style, "fill-opacity:") {
			dots++
		}
	}
	if dots != 1667 { // every 3rd of 5,000 points
		t.Errorf("%d dots, want 1667", dots)
	}
	if !strings.Contains(doc.allText(), "every 3rd sample") {
		t.Errorf("thinning not stated: %s", doc.allText())
	}
	// Pearson's r of y = 3x + e with e independent of x is near 1.
	if r := correlation(s.X, s.Y); !(r > 0.99) {
		t.Errorf("correlation %v", r)
	}
	if r := correlation([]float64{1, 2, 3}, []float64{3, 2, 1}); !scalar.EqualWithinAbs(r, -1, 1e-12) {
		t.Errorf("correlation of a falling line = %v, want -1", r)
	}
	txt := s.Text(80)
	if n := strings.Count(txt, "┃"); n != 12 {
		t.Errorf("scatter text has %d grid rows, want 12", n)
	}
	if (&Scatter{X: []float64{1}, Y: []float64{math.NaN()}}).Validate() == nil {
		t.Errorf("NaN accepted")
	}
	if got := fmt.Sprint(ordinal(1), ordinal(2), ordinal(3), ordinal(11), ordinal(22)); got != "1st2nd3rd11th22nd" {
		t.Errorf("ordinals %s", got)
	}
}

// The contour a caller gives (KnownLines) is drawn as given, not
// interpolated from the grid: for z = x² + y² on a grid of step 1, the level
// 4 is the circle of radius 2 (common practice), which interpolation along
// grid edges misses by up to 0.1; the given points on the circle are drawn,
// and each jump is marked.
func TestHeatGridKnownContour(t *testing.T) {
	h := &HeatMap{}
	for v := 0.0; v <= 3; v++ {
		h.X = append(h.X, v)
		h.Y = append(h.Y, v)
	}
	for _, y := range h.Y {
		row := make([]float64, len(h.X))
		for i, x := range h.X {
			row[i] = x*x + y*y
		}
		h.Z = append(h.Z, row)
	}
	var line [][2]float64
	for k := 0; k <= 8; k++ {
		a := math.Pi / 2 * float64(k) / 8
		line = append(line, [2]float64{2 * math.Cos(a), 2 * math.Sin(a)})
	}
	hg := NewHeatGrid(h.Grid(), newRamp(0, 20))
	hg.Target = 4
	hg.KnownLines, hg.Lines = true, [][][2]float64{line}
	rec, toData := drawHeatGrid(hg)
	var strokes, points int
	var width vg.Length
	for _, a := range rec.Actions {
		if w, ok := a.(*recorder.SetLineWidth); ok {
			width = w.Width
		}
		s, ok := a.(*recorder.Stroke)
		if !ok || width <= 0 {
			continue
		}
		strokes++
		for _, comp := range s.Path {
			if comp.Type != vg.MoveComp && comp.Type != vg.LineComp {
				continue
			}
			points++
			x, y := toData(comp.Pos)
			// The drawing's own rounding: points of a 100-point canvas.
			if r := math.Hypot(x, y); !scalar.EqualWithinAbs(r, 2, 1e-6) {
				t.Errorf("contour point (%v, %v) at radius %v, want 2", x, y, r)
			}
		}
	}
	if strokes != 2 || points != 2*len(line) { // halo and line
		t.Errorf("%d strokes of %d points, want 2 of %d", strokes, points, 2*len(line))
	}
}

// drawHeatGrid draws hg alone, without axes or padding, on a 100 × 100
// recording canvas, and returns the recording with the map from a point
// of the canvas back to the data's coordinates.
func drawHeatGrid(hg *HeatGrid) (*recorder.Canvas, func(vg.Point) (x, y float64)) {
	p := plot.New()
	p.Add(hg)
	p.HideAxes()
	p.X.Padding, p.Y.Padding = 0, 0
	rec := &recorder.Canvas{}
	c := draw.NewCanvas(rec, 100, 100)
	p.Draw(c)
	dc := p.DataCanvas(c)
	return rec, func(pt vg.Point) (x, y float64) {
		x = p.X.Min + float64((pt.X-dc.Min.X)/(dc.Max.X-dc.Min.X))*(p.X.Max-p.X.Min)
		y = p.Y.Min + float64((pt.Y-dc.Min.Y)/(dc.Max.Y-dc.Min.Y))*(p.Y.Max-p.Y.Min)
		return
	}
}
