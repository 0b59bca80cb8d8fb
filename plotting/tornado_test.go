package plotting

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"
)

// An invented bill of a machined part: total cost in dollars.
func sampleTornado() *Tornado {
	return &Tornado{
		Output: "total", Unit: "$", Baseline: 1234567,
		Bars: []Bar{
			{Name: "units", Low: 800, High: 1300, OutLow: 1000000, OutHigh: 1580000, Min: 1000000, Max: 1580000},
			{Name: "hours", Low: 1.2, High: 1.8, InputUnit: "h", OutLow: 1150000, OutHigh: 1320000, Min: 1150000, Max: 1320000},
			{Name: "steel", Low: 0.8, High: 1.2, InputUnit: "$/kg", OutLow: 1300000, OutHigh: 1180000, Min: 1180000, Max: 1300000, DefaultRange: true},
			{Name: "mass", Low: 11.4, High: 12.96, InputUnit: "kg", OutLow: 1260000, OutHigh: 1290000, Min: 1230000, Max: 1290000, NonMonotone: true},
			{Name: "tooling", Low: 45000, High: 55000, InputUnit: "$", OutLow: 1229567, OutHigh: 1239567, Min: 1229567, Max: 1239567},
		},
		Rest: &Bar{Name: "12 others", OutLow: 1230000, OutHigh: 1238000, Min: 1230000, Max: 1238000},
	}
}

func TestTornadoSVGStructure(t *testing.T) {
	tor := sampleTornado()
	doc := parseSVG(t, renderSVGBytes(t, tor))

	if got, want := doc.width, DefaultWidth.Points(); math.Abs(got-want) > 0.01 {
		t.Errorf("SVG width = %v pt, want %v", got, want)
	}
	if doc.title != "Tornado: total" {
		t.Errorf("SVG <title> = %q", doc.title)
	}

	// Names top to bottom: a text higher on the page has a smaller y
	// attribute (gonum writes y = -canvas y inside a flipped group).
	names := []string{"units", "hours", "steel *", "mass †", "tooling", "12 others"}
	var ys []float64
	for _, n := range names {
		ys = append(ys, doc.mustFind(t, n).y)
	}
	for i := 1; i < len(ys); i++ {
		if !(ys[i] > ys[i-1]) {
			t.Errorf("name %q (y=%v) is not below %q (y=%v)", names[i], ys[i], names[i-1], ys[i-1])
		}
	}

	// One low-end and one high-end rectangle per input, plus the legend
	// swatch of each colour, which is the topmost.
	low, high := doc.fills(hexOf(colLow)), doc.fills(hexOf(colHigh))
	if len(low) != len(tor.Bars)+1 || len(high) != len(tor.Bars)+1 {
		t.Fatalf("found %d low and %d high rectangles, want %d each (bars + legend)", len(low), len(high), len(tor.Bars)+1)
	}
	rest := doc.fills(hexOf(colNeutral))
	if len(rest) != 2 {
		t.Errorf("found %d grey rectangles for the summary bar, want 2", len(rest))
	}
	// Rectangles in drawing order: legend, then the bars top to bottom, each
	// at the height of its name.
	for i := range tor.Bars {
		for _, set := range [][]svgPath{low, high} {
			_, y0, _, y1 := set[i+1].bounds()
			centre := (y0 + y1) / 2
			// The name's baseline is about a third of its size below the
			// row centre; canvas y = -(y attribute).
			nameY := -ys[i]
			if d := centre - nameY; d < 0 || d > 6 {
				t.Errorf("bar %d centred at y=%v, name baseline at %v: not on one row", i, centre, nameY)
			}
		}
		if _, y0, _, _ := low[0].bounds(); y0 < -ys[0] {
			t.Errorf("legend swatch is not above the bars")
		}
	}

	// The low part of "units" (output falls at the low end) lies left of
	// the high part, which lies right of the baseline.
	lx0, _, lx1, _ := low[1].bounds()
	hx0, _, hx1, _ := high[1].bounds()
	if !(lx1 <= hx0+0.01 && lx0 < lx1 && hx0 < hx1) {
		t.Errorf("units: low part [%v,%v] should be left of high part [%v,%v]", lx0, lx1, hx0, hx1)
	}
	// For steel the output falls at the high end: the parts swap sides.
	sl0, _, _, _ := low[3].bounds()
	_, _, sh1, _ := high[3].bounds()
	if !(sl0 >= sh1-0.01) {
		t.Errorf("steel: low part should be right of high part")
	}

	// Input values with units at the bar ends, axis title, legend, notes.
	for _, s := range []string{
		"800", "1,300", "1.2 h", "1.8 h", "0.8 $/kg", "1.2 $/kg", "11.4 kg", "12.96 kg", "$45,000", "$55,000",
		"total [$]", "baseline $1,234,567", "input at low end", "input at high end", "output min–max over the range",
	} {
		if len(doc.find(s)) == 0 {
			t.Errorf("SVG has no text %q; texts: %s", s, doc.allText())
		}
	}
	if !strings.Contains(doc.allText(), "default range") || !strings.Contains(doc.allText(), "not monotone") {
		t.Errorf("SVG lacks the notes on default ranges and non-monotone inputs")
	}

	// The value labels of each row sit beside its bar: left label right of
	// the names, right label right of the left label.
	if a, b := doc.mustFind(t, "800"), doc.mustFind(t, "1,300"); !(a.x < b.x) || math.Abs(a.y-b.y) > 0.5 {
		t.Errorf("units labels misplaced: 800 at (%v,%v), 1,300 at (%v,%v)", a.x, a.y, b.x, b.y)
	}
}

func TestTornadoFontsNamed(t *testing.T) {
	// gonum/plot v0.17.0 defaults to Liberation Serif; the theme uses
	// Liberation Sans and names metric-compatible fallbacks for browsers.
	svg := string(renderSVGBytes(t, sampleTornado()))
	if !strings.Contains(svg, "font-family:'Liberation Sans',Arimo,Arial,Helvetica,sans-serif") {
		t.Errorf("SVG does not name the font stack")
	}
	if strings.Contains(svg, "font-family:Liberation Serif") || strings.Contains(svg, "@font-face") {
		t.Errorf("SVG uses the serif default or embeds fonts")
	}
	if !strings.Contains(svg, "font-weight:bold") {
		t.Errorf("title is not bold")
	}
}

func TestTornadoPNG(t *testing.T) {
	tor := sampleTornado()
	img := renderPNGImage(t, tor, nil)
	b := img.Bounds()
	// 16 cm at 96 dpi is 604.7 px, rounded by gonum's vgimg to 605.
	if b.Dx() != 605 {
		t.Errorf("PNG width = %d px, want 605", b.Dx())
	}
	wantH := int(float64(tor.height(DefaultWidth).Points())/72*96 + 0.5)
	if b.Dy() != wantH {
		t.Errorf("PNG height = %d px, want %d", b.Dy(), wantH)
	}
	if c := img.At(1, 1); !sameRGB(c, colBackground) {
		t.Errorf("corner pixel = %v, want the background", c)
	}

	// The centre of the first bar's low part, located in the SVG, is blue
	// in the PNG, and its high part orange: both are drawn from the same
	// layout, points converted at 96/72 pixels per point.
	doc := parseSVG(t, renderSVGBytes(t, tor))
	scale := 96.0 / 72
	for _, tc := range []struct {
		path svgPath
		want string
	}{
		{doc.fills(hexOf(colLow))[1], hexOf(colLow)},
		{doc.fills(hexOf(colHigh))[1], hexOf(colHigh)},
	} {
		x0, y0, x1, y1 := tc.path.bounds()
		px := int((x0 + x1) / 2 * scale)
		py := int((doc.height - (y0+y1)/2) * scale)
		if got := hexOf(img.At(px, py)); got != tc.want {
			t.Errorf("pixel (%d,%d) = %s, want %s", px, py, got, tc.want)
		}
	}

	// Options change the size and resolution.
	img = renderPNGImage(t, tor, &Options{Width: 720, Height: 360, DPI: 144})
	if b := img.Bounds(); b.Dx() != 1440 || b.Dy() != 720 {
		t.Errorf("PNG at 10x5 in, 144 dpi = %dx%d px, want 1440x720", b.Dx(), b.Dy())
	}
}

func TestTornadoText(t *testing.T) {
	tor := sampleTornado()
	for _, width := range []int{0, 60, 100, 140} {
		lines := textLines(tor.Text(width))
		var rows []string
		prev := -1
		for _, name := range []string{"units", "hours", "steel *", "mass †", "tooling", "12 others"} {
			i := lineIndex(lines, name)
			if i < 0 {
				t.Fatalf("width %d: no line for %q:\n%s", width, name, tor.Text(width))
			}
			if i != prev+1 && prev >= 0 {
				t.Errorf("width %d: %q on line %d, want %d (one line per bar, in order)", width, name, i, prev+1)
			}
			prev = i
			rows = append(rows, lines[i])
		}
		w := runes(rows[0])
		limit := width
		if limit == 0 {
			limit = 80
		}
		if w > limit {
			t.Errorf("width %d: bar lines are %d columns", width, w)
		}
		// The baseline column is at the same position in every bar row
		// and in the rules above and below.
		col := strings.IndexRune(rows[0], '│')
		col = runes(rows[0][:col])
		for _, r := range rows {
			if runes(r) != w {
				t.Errorf("width %d: line %q has %d columns, want %d", width, r, runes(r), w)
			}
			if []rune(r)[col] != '│' {
				t.Errorf("width %d: baseline column missing in %q", width, r)
			}
		}
		top := lines[lineIndex(lines, "units")-1]
		if []rune(top)[col] != '┬' {
			t.Errorf("width %d: rule above the bars has no ┬ at the baseline column: %q", width, top)
		}
	}
	txt := tor.Text(100)
	for _, s := range []string{"800", "1,300", "1.2 h", "$55,000", "Δ $580,000", "baseline $1,234,567"} {
		if !strings.Contains(txt, s) {
			t.Errorf("text form lacks %q:\n%s", s, txt)
		}
	}
	// units: the bar reaches further left than hours'.
	lines := textLines(txt)
	u, h := lines[lineIndex(lines, "units")], lines[lineIndex(lines, "hours")]
	if strings.IndexRune(u, '█') >= strings.IndexRune(h, '█') {
		t.Errorf("units bar should start left of hours bar:\n%s\n%s", u, h)
	}
}

func TestTornadoEmpty(t *testing.T) {
	tor := &Tornado{Output: "total", Unit: "$", Baseline: 10}
	err := tor.Validate()
	if !errors.Is(err, ErrNoData) || !strings.Contains(err.Error(), "no inputs") {
		t.Fatalf("Validate() = %v, want a no-inputs error wrapping ErrNoData", err)
	}
	var buf bytes.Buffer
	if err := tor.WriteSVG(&buf, nil); err == nil || buf.Len() != 0 {
		t.Errorf("WriteSVG wrote %d bytes, err %v; want nothing and an error", buf.Len(), err)
	}
	if err := tor.WritePNG(&buf, nil); err == nil || buf.Len() != 0 {
		t.Errorf("WritePNG wrote %d bytes, err %v; want nothing and an error", buf.Len(), err)
	}
	// The notebook methods show the reason instead of failing.
	doc := parseSVG(t, []byte(tor.SVG()))
	if !strings.Contains(doc.allText(), "no inputs") {
		t.Errorf("SVG() of an empty tornado does not say why: %s", doc.allText())
	}
	if len(tor.PNG()) == 0 {
		t.Errorf("PNG() of an empty tornado is empty")
	}
	if h := tor.HTML(); !strings.Contains(h, "no inputs") || strings.Contains(h, "<img") {
		t.Errorf("HTML() of an empty tornado = %q", h)
	}
	if txt := tor.Text(80); !strings.Contains(txt, "no inputs") {
		t.Errorf("Text() of an empty tornado = %q", txt)
	}
	var nilT *Tornado
	if err := nilT.Validate(); !errors.Is(err, ErrNoData) {
		t.Errorf("nil tornado: Validate() = %v", err)
	}
	_ = nilT.SVG() // must not panic
}

func TestTornadoNaN(t *testing.T) {
	for _, tc := range []struct {
		field string
		set   func(*Tornado, float64)
	}{
		{"baseline", func(t *Tornado, v float64) { t.Baseline = v }},
		{"low end", func(t *Tornado, v float64) { t.Bars[1].Low = v }},
		{"high end", func(t *Tornado, v float64) { t.Bars[1].High = v }},
		{"output at low end", func(t *Tornado, v float64) { t.Bars[1].OutLow = v }},
		{"output at high end", func(t *Tornado, v float64) { t.Bars[1].OutHigh = v }},
		{"output minimum", func(t *Tornado, v float64) { t.Bars[3].Min = v }},
		{"output maximum", func(t *Tornado, v float64) { t.Bars[3].Max = v }},
		{"summary bar", func(t *Tornado, v float64) { t.Rest.OutHigh = v }},
	} {
		for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
			tor := sampleTornado()
			tc.set(tor, v)
			err := tor.Validate()
			if err == nil || !strings.Contains(err.Error(), tc.field) {
				t.Errorf("%s = %v: Validate() = %v, want an error naming the field", tc.field, v, err)
				continue
			}
			var buf bytes.Buffer
			if tor.WriteSVG(&buf, nil) == nil || tor.WritePNG(&buf, nil) == nil || buf.Len() != 0 {
				t.Errorf("%s = %v: a writer drew the chart", tc.field, v)
			}
			if strings.Contains(tor.SVG(), ">NaN<") {
				t.Errorf("%s = %v: NaN reached the SVG", tc.field, v)
			}
		}
	}
}

func TestTornadoEdgeCases(t *testing.T) {
	long := strings.Repeat("very long input name ", 6)
	cases := map[string]*Tornado{
		"all-zero swings": {Output: "total", Unit: "$", Baseline: 500, Bars: []Bar{
			{Name: "a", Low: 1, High: 2, OutLow: 500, OutHigh: 500, Min: 500, Max: 500},
			{Name: "b", Low: 3, High: 4, OutLow: 500, OutHigh: 500, Min: 500, Max: 500},
		}},
		"zero baseline and swings": {Output: "total", Baseline: 0, Bars: []Bar{{Name: "a", Low: 1, High: 2}}},
		"single input": {Output: "npv", Unit: "$", Baseline: 20, Bars: []Bar{
			{Name: "price", Low: 9, High: 11, InputUnit: "$", OutLow: 10, OutHigh: 30, Min: 10, Max: 30},
		}},
		"long name": {Output: "total", Unit: "$", Baseline: 100, Bars: []Bar{
			{Name: long, Low: 1, High: 2, OutLow: 90, OutHigh: 110, Min: 90, Max: 110},
		}},
		"negative values": {Output: "npv", Unit: "$", Baseline: -1000000, Bars: []Bar{
			{Name: "discount rate", Low: 6, High: 10, InputUnit: "%", OutLow: -800000, OutHigh: -1300000, Min: -1300000, Max: -800000},
			{Name: "capex", Low: 1e6, High: 2e6, InputUnit: "$", OutLow: -900000, OutHigh: -1100000, Min: -1100000, Max: -900000},
		}},
		"only a summary": {Output: "total", Baseline: 1, Rest: &Bar{Name: "3 others", OutLow: 0.5, OutHigh: 1.5}},
	}
	for name, tor := range cases {
		t.Run(name, func(t *testing.T) {
			if err := tor.Validate(); err != nil {
				t.Fatal(err)
			}
			doc := parseSVG(t, renderSVGBytes(t, tor))
			renderPNGImage(t, tor, nil)
			lines := textLines(tor.Text(80))
			var w int
			for _, l := range lines {
				if strings.ContainsRune(l, '│') {
					if w == 0 {
						w = runes(l)
					} else if runes(l) != w {
						t.Errorf("bar lines differ in width: %d and %d", w, runes(l))
					}
				}
			}
			for _, txt := range doc.texts {
				if strings.Contains(txt.content, "NaN") || strings.Contains(txt.content, "Inf") {
					t.Errorf("text %q in SVG", txt.content)
				}
			}
		})
	}

	// A long name is cut with an ellipsis, in the chart and in the text.
	doc := parseSVG(t, renderSVGBytes(t, cases["long name"]))
	found := false
	for _, txt := range doc.texts {
		if strings.HasPrefix(long, strings.TrimSuffix(txt.content, "…")) && strings.HasSuffix(txt.content, "…") {
			found = true
			if runes(txt.content) > maxNameRunes {
				t.Errorf("name %q longer than %d runes", txt.content, maxNameRunes)
			}
		}
	}
	if !found {
		t.Errorf("no truncated name in %s", doc.allText())
	}
	if txt := cases["long name"].Text(60); !strings.Contains(txt, "…") || strings.Contains(txt, long) {
		t.Errorf("text form does not truncate the long name:\n%s", txt)
	}

	// Negative money keeps its sign before the currency symbol.
	neg := cases["negative values"]
	if txt := neg.Text(100); !strings.Contains(txt, "-$1,000,000") || !strings.Contains(txt, "10%") {
		t.Errorf("negative values misformatted:\n%s", txt)
	}
	doc = parseSVG(t, renderSVGBytes(t, neg))
	doc.mustFind(t, "baseline -$1,000,000")
}

func TestTornadoEndLabels(t *testing.T) {
	tb := NewTornadoBars(nil, nil, 100)
	for _, tc := range []struct {
		name            string
		bar             Bar
		lowRight, hiRgt bool
		lowX, highX     float64
	}{
		{"rising", Bar{OutLow: 90, OutHigh: 120}, false, true, 90, 120},
		{"falling", Bar{OutLow: 120, OutHigh: 90}, true, false, 120, 90},
		{"both above, high farther", Bar{OutLow: 105, OutHigh: 130}, false, true, 100, 130},
		{"both below, low farther", Bar{OutLow: 70, OutHigh: 95}, false, true, 70, 100},
		{"no effect", Bar{OutLow: 100, OutHigh: 100}, false, true, 100, 100},
		{"only high moves down", Bar{OutLow: 100, OutHigh: 80}, true, false, 100, 80},
		{"whisker beyond", Bar{OutLow: 90, OutHigh: 120, Min: 85, Max: 125, NonMonotone: true}, false, true, 85, 125},
	} {
		ls := tb.endLabels(tc.bar)
		lo, hi := ls[0], ls[1]
		if lo.right != tc.lowRight || hi.right != tc.hiRgt || lo.x != tc.lowX || hi.x != tc.highX {
			t.Errorf("%s: low label (right=%v at %v), high (right=%v at %v); want (%v at %v), (%v at %v)",
				tc.name, lo.right, lo.x, hi.right, hi.x, tc.lowRight, tc.lowX, tc.hiRgt, tc.highX)
		}
	}
}
