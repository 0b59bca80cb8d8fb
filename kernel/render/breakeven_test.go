package render

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

// TestBreakevenChartAndDomain: the chart is titled as a break-even, shades
// the stated range and notes the root finder; a crossing at a negative price
// (cost = 2 kg · price + 10 $ = 5 $ at price = -2.5 $/kg, by hand) is flagged
// as outside the input's domain.
func TestBreakevenChartAndDomain(t *testing.T) {
	p := problem(t, "input price = 3 [$/kg] (2..4)\ninput mass = 2 [kg]\ncost = price * mass + (10 [$])\n", "cost")
	b, err := sens.Breakeven(p, &sens.BreakevenSettings{Input: "price", Target: 5})
	if err != nil {
		t.Fatal(err)
	}
	r := Breakeven(b, noCharts)
	doc := checkDoc(t, r, []string{"price", "change", "change %", "in range", "slope"}, 1)
	if row := doc.rows[0]; row[0] != "-2.5 $/kg" || row[3] != "no: outside the domain (price < 0)" {
		t.Errorf("row %q", row)
	}
	svg := Breakeven(b, nil).SVG()
	for _, w := range []string{"Break-even: cost = $5 over price", "stated range of price 2 $/kg..4 $/kg", "Root finder"} {
		if !strings.Contains(svg, w) {
			t.Errorf("the SVG lacks %q", w)
		}
	}
	if text := Breakeven(b, &Options{NoCharts: true, Width: 300}).Text(); !strings.Contains(text, "outside the domain of price: it would have to change sign from its baseline 3 $/kg") {
		t.Errorf("text:\n%s", text)
	}
}

// TestBreakevenPole: y = 1/q never equals -1 for q > 0 and passes it through
// the pole at q = 0; the message says so in words instead of quoting the huge
// values found next to the pole.
func TestBreakevenPole(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input q = 2 (1..3)\ny = 1 / q\n", "y"), &sens.BreakevenSettings{Input: "q", Target: -1})
	if err != nil {
		t.Fatal(err)
	}
	text := Breakeven(b, noCharts).Text()
	if !strings.Contains(text, "through a pole") || strings.Contains(text, "e+") {
		t.Errorf("text:\n%s", text)
	}
}

// TestBreakevenJumpsAndUnresolved (issue 8, items 11 and 12): a step is said
// to jump with the values on either side, a pole to run off to infinity;
// a bracket where the search failed is named with its reason.
func TestBreakevenJumpsAndUnresolved(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input x = 1 (0..3)\ny = if(x < 2, 1, 1e9)\n", "y"), &sens.BreakevenSettings{Input: "x", Target: 5})
	if err != nil {
		t.Fatal(err)
	}
	text := Breakeven(b, &Options{NoCharts: true, Width: 300}).Text()
	if !strings.Contains(text, "jumps past the target at x = 2") || strings.Contains(text, "through a pole") {
		t.Errorf("step:\n%s", text)
	}
	b.Unresolved = []sens.Unresolved{{Low: 1.5, High: 2.5, Reason: "the model fails at x = 2: division by zero in y, line 2, column 7"}}
	text = Breakeven(b, &Options{NoCharts: true, Width: 300}).Text()
	if !strings.Contains(text, "between x = 1.5 and 2.5 the search failed, so a crossing there may be missing: the model fails at x = 2: division by zero") {
		t.Errorf("unresolved:\n%s", text)
	}
}

// TestBreakevenCrossingBesidePole: 1/(price - 5) = 1e6 at price = 5 + 1/1e6
// (solved by hand), next to the pole at 5; the crossing is written with the
// digits that tell it from the pole.
func TestBreakevenCrossingBesidePole(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input price = 4 (3..6)\ny = 1/(price - 5)\n", "y"), &sens.BreakevenSettings{Input: "price", Target: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	text := Breakeven(b, noCharts).Text()
	if !strings.Contains(text, "5.000001 ") || !strings.Contains(text, "through a pole") {
		t.Errorf("text:\n%s", text)
	}
}

// TestBreakevenChartMarksOnlyTrueCrossings: the chart marks the engine's
// verified crossings, not points interpolated between its samples, which
// would take a step or a pole past the target for a crossing. By hand:
// if(x < 2, 1, 1e9) never equals 5 (it jumps from 1 to 1e9 at x = 2), and
// tan(x) = 0 only at multiples of π, while its poles at odd multiples of
// π/2 also change its sign.
func TestBreakevenChartMarksOnlyTrueCrossings(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input x = 1 (0..3)\ny = if(x < 2, 1, 1e9)\n", "y"), &sens.BreakevenSettings{Input: "x", Target: 5})
	if err != nil {
		t.Fatal(err)
	}
	r := Breakeven(b, &Options{NoCharts: true, Width: 200})
	if text := r.Text(); strings.Contains(text, "◀ target") || !strings.Contains(text, "target 5 not reached") {
		t.Errorf("step: the text chart claims a crossing:\n%s", text)
	}
	if svg := Breakeven(b, nil).SVG(); strings.Contains(svg, "Reaches the target") || strings.Contains(svg, "reaches target") {
		t.Error("step: the SVG claims a crossing")
	}

	b, err = sens.Breakeven(problem(t, "input x = 1 (0..3)\ny = tan(x)\n", "y"), &sens.BreakevenSettings{Input: "x", Target: 0})
	if err != nil {
		t.Fatal(err)
	}
	text := Breakeven(b, &Options{NoCharts: true, Width: 200}).Text()
	marked := 0
	for _, line := range strings.Split(text, "\n") {
		if !strings.HasSuffix(strings.TrimSpace(line), "◀ target") || strings.HasPrefix(line, "target ") {
			continue
		}
		marked++
		f := strings.Fields(line)
		x, err := strconv.ParseFloat(strings.ReplaceAll(f[0], ",", ""), 64)
		if err != nil {
			t.Fatalf("row %q: %v", line, err)
		}
		// The row shows x to four significant digits: within 0.05 of kπ.
		if k := math.Round(x / math.Pi); math.Abs(x-k*math.Pi) > 0.05 {
			t.Errorf("tan: row %q marks x = %g, not a multiple of π", line, x)
		}
	}
	if marked == 0 {
		t.Errorf("tan: no crossing marked:\n%s", text)
	}
}

// TestBreakevenNearestWrittenAsTable: the note on the nearest crossing writes
// it with the digits that tell it from the pole beside it, as the table
// does. By hand: 1/(x - 5) + 1/(x - 1) = 1e5 just above each pole, at about
// 1.00001 and 5.00001; the first is nearer the baseline 3.
func TestBreakevenNearestWrittenAsTable(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input x = 3 (2..4)\ny = 1/(x - 5) + 1/(x - 1)\n", "y"), &sens.BreakevenSettings{Input: "x", Target: 1e5})
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Join(strings.Fields(Breakeven(b, noCharts).Text()), " ")
	if !strings.Contains(text, "2 crossings; the nearest to the baseline is x = 1.00001") {
		t.Errorf("text:\n%s", text)
	}
}

// TestBreakevenPlateauWritten: round(10x) = 25 on 2.45 <= x < 2.55 (by
// hand) is one plateau in the text, the HTML and a CSV table of its own, not
// two crossings with slope 0.
func TestBreakevenPlateauWritten(t *testing.T) {
	b, err := sens.Breakeven(problem(t, "input x = 2 (1..3)\ny = round(x*10)\n", "y"), &sens.BreakevenSettings{Input: "x", Target: 25})
	if err != nil {
		t.Fatal(err)
	}
	r := Breakeven(b, &Options{NoCharts: true, Width: 300})
	want := "y = 25 on the whole interval x = 2.45..2.55 (a plateau"
	if text := r.Text(); !strings.Contains(text, want) || strings.Contains(text, "crossings") {
		t.Errorf("text:\n%s", text)
	}
	if h := r.HTML(); !strings.Contains(h, want) {
		t.Errorf("HTML:\n%s", h)
	}
	tabs := r.Tables()
	if len(tabs) != 2 || tabs[1].Name != "plateaus" || len(tabs[1].Rows) != 2 || len(tabs[0].Rows) != 1 {
		t.Fatalf("CSV tables %+v", tabs)
	}
	if lo, _ := strconv.ParseFloat(tabs[1].Rows[1][0], 64); math.Abs(lo-2.45) > 1e-12 {
		t.Errorf("CSV plateau row %q", tabs[1].Rows[1])
	}
}
