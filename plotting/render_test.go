package plotting

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"go/parser"
	"go/token"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot/font"
)

// notebookDisplay is the method set a Go notebook kernel looks for to show
// a value as HTML, SVG or PNG.
type notebookDisplay interface {
	HTML() string
	SVG() string
	PNG() []byte
}

func allCharts() map[string]Chart {
	target := 62500.0
	var xs, ys []float64
	for r := 40.0; r <= 80; r += 2 {
		xs, ys = append(xs, r), append(ys, 1000*r)
	}
	return map[string]Chart{
		"tornado":      sampleTornado(),
		"spider":       sampleSpider(),
		"sweep":        &Sweep{Output: "total", Unit: "$", Input: "rate", InputUnit: "$/h", X: xs, Y: ys, BaselineInput: 60, Baseline: 60000, Target: &target},
		"heat map":     sampleHeatMap(90000),
		"distribution": sampleDistribution(),
		"indices":      sampleIndices(),
		"scatter":      &Scatter{XName: "rate", YName: "total", X: xs, Y: ys},
		"effects":      sampleEffects(20),
		"pair map":     samplePairMap(),
	}
}

func TestNotebookMethods(t *testing.T) {
	for name, c := range allCharts() {
		t.Run(name, func(t *testing.T) {
			t.Parallel() // charts are drawn concurrently by a kernel
			nb, ok := c.(notebookDisplay)
			if !ok {
				t.Fatalf("%T lacks the notebook display methods", c)
			}
			doc := parseSVG(t, []byte(nb.SVG()))
			if math.Abs(doc.width-DefaultWidth.Points()) > 0.01 || doc.height <= 0 {
				t.Errorf("SVG size %vx%v pt", doc.width, doc.height)
			}
			img, err := png.Decode(bytes.NewReader(nb.PNG()))
			if err != nil {
				t.Fatalf("PNG(): %v", err)
			}
			// The PNG matches the SVG's size at 96 dpi.
			if w, h := img.Bounds().Dx(), img.Bounds().Dy(); w != 605 || h != int(doc.height/72*96+0.5) {
				t.Errorf("PNG is %dx%d px for an SVG of %vx%v pt", w, h, doc.width, doc.height)
			}
			html := nb.HTML()
			m := regexp.MustCompile(`src="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"`).FindStringSubmatch(html)
			if m == nil {
				t.Fatalf("HTML has no SVG data URI: %.200s", html)
			}
			svg, err := base64.StdEncoding.DecodeString(m[1])
			if err != nil || string(svg) != nb.SVG() {
				t.Errorf("HTML's image is not the chart's SVG (err %v)", err)
			}
			// The description is the image's accessible text, not a
			// paragraph of its own.
			alt := regexp.MustCompile(`alt="([^"]*)"`).FindStringSubmatch(html)
			if alt == nil || len(alt[1]) < 40 || strings.Contains(html, "<figcaption") || strings.Contains(html, "<p") {
				t.Errorf("HTML's image has no description as its alt text: %.300s", html)
			}
			// Captions hold dollar amounts: MathJax must leave them alone.
			if !strings.Contains(html, `class="nudge-chart tex2jax_ignore mathjax_ignore"`) {
				t.Errorf("HTML figure lacks the MathJax-ignore classes")
			}
			if err := c.Validate(); err != nil {
				t.Errorf("Validate: %v", err)
			}
			// Every line of the text form fits the width asked for.
			for _, w := range []int{60, 80, 120} {
				for _, l := range textLines(c.Text(w)) {
					if runes(l) > w {
						t.Errorf("Text(%d) line of %d columns: %q", w, runes(l), l)
					}
				}
			}
		})
	}
}

func TestHTMLEscaping(t *testing.T) {
	tor := sampleTornado()
	tor.Title = `Costs <script>alert("x")</script> & "more"`
	tor.Bars[0].Name = `<b>units</b> & co`
	tor.Output = "total<i>"
	html := tor.HTML()
	if strings.Contains(html, "<script") || strings.Contains(html, "<b>") || strings.Contains(html, "<i>") {
		t.Errorf("HTML has unescaped markup: %s", html[:min(len(html), 300)])
	}
	if !strings.Contains(html, `alt="Costs &lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt; &amp; &#34;more&#34;. `) {
		t.Errorf("alt text not escaped as expected: %s", html[:min(len(html), 300)])
	}
	if !strings.Contains(html, "total&lt;i&gt;") {
		t.Errorf("caption not escaped")
	}
	// The SVG inside stays well-formed and keeps the text.
	doc := parseSVG(t, []byte(tor.SVG()))
	if doc.title != tor.Title {
		t.Errorf("SVG title = %q", doc.title)
	}
	doc.mustFind(t, `<b>units</b> & co`)

	// Control characters would make the XML invalid: they are dropped.
	tor.Title = "bell\x07 and\x00 nul\nline"
	doc = parseSVG(t, []byte(tor.SVG()))
	if doc.title != "bell and nul line" {
		t.Errorf("SVG title = %q", doc.title)
	}
	// An error message is escaped too.
	bad := &Tornado{Output: "<x>"}
	if h := bad.HTML(); strings.Contains(h, "<x>") || !strings.Contains(h, "&lt;x&gt;") {
		t.Errorf("error HTML = %q", h)
	}
}

func TestImportsOnlyPlotAndStdlib(t *testing.T) {
	// DESIGN: plotting takes plain data and imports gonum/plot and the one
	// quantity formatter (sens/unit, a leaf of the standard library); it
	// never imports the engine or the kernel.
	files, err := filepath.Glob("*.go")
	if err != nil {
		t.Fatal(err)
	}
	fset := token.NewFileSet()
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		af, err := parser.ParseFile(fset, f, nil, parser.ImportsOnly)
		if err != nil {
			t.Fatal(err)
		}
		for _, imp := range af.Imports {
			path, _ := strconv.Unquote(imp.Path.Value)
			first := strings.SplitN(path, "/", 2)[0]
			if strings.Contains(first, ".") && !strings.HasPrefix(path, "gonum.org/v1/plot") && path != "github.com/nudge-dev/nudge/sens/unit" {
				t.Errorf("%s imports %s", f, path)
			}
		}
	}
}

func TestOptionsDefaults(t *testing.T) {
	tor := sampleTornado()
	w, h, dpi := (*Options)(nil).resolve(tor)
	if w != DefaultWidth || h != tor.height(DefaultWidth) || dpi != DefaultDPI {
		t.Errorf("nil options resolve to %v, %v, %v", w, h, dpi)
	}
	w, h, dpi = (&Options{Width: 300}).resolve(tor)
	if w != 300 || h != tor.height(300) || dpi != DefaultDPI {
		t.Errorf("width-only options resolve to %v, %v, %v", w, h, dpi)
	}
	// More bars make a taller tornado.
	more := sampleTornado()
	more.Bars = append(more.Bars, more.Bars...)
	if !(more.height(DefaultWidth) > tor.height(DefaultWidth)) {
		t.Errorf("tornado height does not grow with its bars")
	}
	var buf bytes.Buffer
	if err := tor.WriteSVG(&buf, &Options{Width: 400, Height: 300}); err != nil {
		t.Fatal(err)
	}
	if doc := parseSVG(t, buf.Bytes()); doc.width != 400 || doc.height != 300 {
		t.Errorf("SVG %vx%v, want 400x300", doc.width, doc.height)
	}
}

// failWriter fails every write.
type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, os.ErrClosed }

func TestWriteErrors(t *testing.T) {
	tor := sampleTornado()
	if err := tor.WriteSVG(failWriter{}, nil); err == nil {
		t.Errorf("WriteSVG to a failing writer returned nil")
	}
	if err := tor.WritePNG(failWriter{}, nil); err == nil {
		t.Errorf("WritePNG to a failing writer returned nil")
	}
}

func ExampleTornado_Text() {
	t := &Tornado{
		Output: "unit_cost", Unit: "$", Baseline: 100,
		Bars: []Bar{
			{Name: "hours", Low: 1.2, High: 1.8, InputUnit: "h", OutLow: 88, OutHigh: 112, Min: 88, Max: 112},
			{Name: "steel", Low: 0.8, High: 1.2, InputUnit: "$/kg", OutLow: 96, OutHigh: 105, Min: 96, Max: 105, DefaultRange: true},
		},
	}
	// Lines are padded to a common width; trim them for display here.
	for _, line := range strings.Split(strings.TrimSuffix(t.Text(72), "\n"), "\n") {
		fmt.Println(strings.TrimRight(line, " "))
	}
	// Output:
	// Tornado: unit_cost
	// unit_cost [$], baseline $100; one input at a time, its low and high
	//   values at the bar ends
	//                  88                 100               112
	//                  ────────────────────┬───────────────────
	// hours      1.2 h  ███████████████████│███████████████████ 1.8 h    Δ $24
	// steel * 0.8 $/kg              ▐██████│███████▉            1.2 $/kg Δ $9
	//                  ────────────────────┴───────────────────
	// * default range used (no range or distribution given)
}

func ExampleSweep_Crossings() {
	// Output y = (x-2)^2 + 1 sampled at whole numbers; where is it 3?
	target := 3.0
	s := &Sweep{X: []float64{0, 1, 2, 3, 4}, Y: []float64{5, 2, 1, 2, 5}, Target: &target}
	fmt.Println(s.Crossings())
	// Output:
	// [0.6666666666666666 3.3333333333333335]
}

func TestSizesStayFinite(t *testing.T) {
	// Below a certain size gonum/plot's padding turns coordinates
	// infinite, and rasterising an infinite path never ends; Options are
	// raised to MinWidth and MinHeight, and the frame's text always leaves
	// room for the plot.
	charts := allCharts()
	long := sampleTornado()
	for i := range long.Bars {
		long.Bars[i].Name = strings.Repeat("long name ", 5)
		long.Bars[i].Low, long.Bars[i].High = 123456789, 987654321
	}
	charts["long names"] = long
	charts["60 bars"] = benchTornado(60)
	sp := sampleSpider()
	for range 3 {
		sp.Lines = append(sp.Lines, sp.Lines...)
	}
	for i := range sp.Lines {
		sp.Lines[i].Name = strings.Repeat("long line name ", 3)
	}
	charts["32 lines"] = sp
	for name, c := range charts {
		for _, o := range []*Options{{Width: 10, Height: 10}, {Width: MinWidth}, {Width: 300, Height: 120}, {Width: 1500}} {
			var buf bytes.Buffer
			if err := c.WriteSVG(&buf, o); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			doc := parseSVG(t, buf.Bytes())
			if doc.width < MinWidth.Points()-0.01 || doc.height < MinHeight.Points()-0.01 {
				t.Errorf("%s at %+v: %vx%v pt, below the minimum", name, *o, doc.width, doc.height)
			}
			for _, p := range doc.paths {
				if strings.Contains(p.d, "Inf") || strings.Contains(p.d, "NaN") {
					t.Errorf("%s at %+v: non-finite path %.80s", name, *o, p.d)
					break
				}
			}
		}
	}
	img := renderPNGImage(t, charts["60 bars"], &Options{Width: 1, Height: 1})
	if img.Bounds().Dx() != int(MinWidth.Dots(DefaultDPI)+0.5) {
		t.Errorf("tiny PNG is %d px wide", img.Bounds().Dx())
	}
}

// TestTextWidthsFixed: every label in an SVG carries the width it was laid out
// with, so a viewer that substitutes a wider font keeps the layout.
func TestTextWidthsFixed(t *testing.T) {
	tor := &Tornado{Title: "T", Output: "cost", Unit: "$", Baseline: 100, Bars: []Bar{
		{Name: "cycle_time", Low: 30.4, High: 45.6, InputUnit: "min", OutLow: 85, OutHigh: 110, Min: 85, Max: 110},
	}}
	svg := tor.SVG()
	texts := strings.Count(svg, "<text ")
	fixed := strings.Count(svg, `lengthAdjust="spacingAndGlyphs"`)
	if texts == 0 || fixed != texts {
		t.Fatalf("%d of %d text elements carry a fixed width", fixed, texts)
	}
	// "30.4 min" at the value-label size, measured by the same font.
	f := fontSans
	f.Size = sizeLabel
	face := font.DefaultCache.Lookup(f, f.Size)
	want := fmt.Sprintf(`textLength="%.2f" lengthAdjust="spacingAndGlyphs">30.4 min</text>`, float64(face.Width("30.4 min")))
	if !strings.Contains(svg, want) {
		t.Errorf("label 30.4 min lacks %s", want)
	}
}

// TestFigureHTMLFromDrawnSVG: a figure built around an SVG already drawn is the
// chart's own HTML.
func TestFigureHTMLFromDrawnSVG(t *testing.T) {
	sw := &Sweep{Title: "S", Output: "y", Input: "x", X: []float64{1, 2, 3}, Y: []float64{2, 4, 6}, BaselineInput: 2, Baseline: 4}
	if got, want := FigureHTML(sw, sw.SVG()), sw.HTML(); got != want {
		t.Errorf("FigureHTML differs from HTML:\n%s\n%s", got, want)
	}
	bad := &Sweep{Title: "S", Output: "y", Input: "x", X: []float64{1}, Y: []float64{2}}
	if got := FigureHTML(bad, ""); got != bad.HTML() || !strings.Contains(got, "nudge-chart-error") {
		t.Errorf("an invalid chart: %s", got)
	}
}
