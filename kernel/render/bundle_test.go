package render

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

// A result that fits keeps its whole JSON in the notebook: the same bytes as
// `nudge exec --json` prints.
func TestBundleJSONWhole(t *testing.T) {
	d, err := sens.Drivers(problem(t, "input a = 3\ninput x = 4\ny = a * x^2.5\n", "y"), nil)
	if err != nil {
		t.Fatal(err)
	}
	r := Drivers(d, nil)
	if got, want := string(r.BundleJSON()), string(r.JSON()); got != want {
		t.Errorf("bundle JSON %s, want %s", got, want)
	}
	if strings.Contains(r.Bundle()["text/plain"].(string), "Jupyter keeps") {
		t.Error("a whole result says it was cut")
	}
}

// A 1,000 × 1,000 sweep (the grid that once wrote a 167 MB notebook) keeps
// at most MaxBundleJSON bytes of JSON, its table stays small, and the JSON
// says what it left out and how to get it. (The heat map is left out here, to
// keep the race detector's run short; the live tests save a notebook of such
// a sweep, chart and all, under 1 MB.)
func TestBundleOfLargeSweep(t *testing.T) {
	// The result as sens.Sweep2D makes it, of y = a + b over a 1..2 and
	// b 1..3 (built here, so that the race detector's run stays short).
	s := &sens.Sweep2DResult{Kind: "sweep", Dims: 2, Output: "y", Baseline: 3}
	for _, ax := range []sens.SweepAxis{{Name: "a", Low: 1, High: 2, N: 1000, Baseline: 1}, {Name: "b", Low: 1, High: 3, N: 1000, Baseline: 2}} {
		for k := range ax.N {
			ax.Values = append(ax.Values, ax.Low+(ax.High-ax.Low)*float64(k)/float64(ax.N-1))
		}
		s.Inputs = append(s.Inputs, ax)
	}
	for _, y := range s.Inputs[1].Values {
		for _, x := range s.Inputs[0].Values {
			s.Points = append(s.Points, sens.GridPoint{X: x, Y: y, Output: x + y})
		}
	}
	s.Min, s.Max = 2, 5
	r := Sweep2D(s, noCharts)
	b := r.Bundle()
	obj := b[ResultMIME].(json.RawMessage)
	if len(obj) > MaxBundleJSON {
		t.Errorf("bundle JSON of %d bytes, more than %d", len(obj), MaxBundleJSON)
	}
	var got struct {
		Kind      string `json:"kind"`
		Points    []sens.GridPoint
		Inputs    []sens.SweepAxis
		Truncated []cut  `json:"truncated"`
		Note      string `json:"truncated_note"`
	}
	if err := json.Unmarshal(obj, &got); err != nil {
		t.Fatal(err)
	}
	if got.Kind != "sweep" || len(got.Points) == 0 || len(got.Points) >= 1e6 || len(got.Inputs) != 2 || len(got.Inputs[0].Values) != 1000 {
		t.Errorf("kind %q, %d points, %d inputs", got.Kind, len(got.Points), len(got.Inputs))
	}
	if len(got.Truncated) != 1 || got.Truncated[0] != (cut{Field: "points", Kept: len(got.Points), Total: 1e6}) {
		t.Errorf("truncated %+v", got.Truncated)
	}
	// The kept points are the first ones of the grid, as they were.
	if got.Points[1] != s.Points[1] {
		t.Errorf("point 1 is %+v, want %+v", got.Points[1], s.Points[1])
	}
	for _, w := range []string{"nudge exec --json", "nudge exec --csv DIR", "of the 1,000,000 points", "256 KiB"} {
		if !strings.Contains(got.Note, w) || !strings.Contains(b["text/plain"].(string), w) || !strings.Contains(b["text/html"].(string), w) {
			t.Errorf("the note %q (or the text or HTML) lacks %q", got.Note, w)
		}
	}
	if h, txt := len(b["text/html"].(string)), len(b["text/plain"].(string)); h > 16<<10 || txt > 16<<10 {
		t.Errorf("HTML of %d bytes, text of %d", h, txt)
	}
	// The result itself, and so `nudge exec --json`, keeps every point.
	if len(s.Points) != 1e6 {
		t.Errorf("the result holds %d points", len(s.Points))
	}
}

// Lists inside the elements of a list are cut too, and named by their path.
func TestBundleCutsNestedLists(t *testing.T) {
	var src strings.Builder
	src.WriteString("y = 0")
	for i := range 200 {
		fmt.Fprintf(&src, " + x%d", i)
	}
	src.WriteString("\n")
	for i := range 200 {
		fmt.Fprintf(&src, "input x%d = %d\n", i, i+1)
	}
	s, err := sens.Spider(problem(t, src.String(), "y"), &sens.SpiderSettings{Points: 301})
	if err != nil {
		t.Fatal(err)
	}
	r := Spider(s, noCharts)
	var got struct {
		Truncated []cut `json:"truncated"`
	}
	obj := r.BundleJSON()
	if err := json.Unmarshal(obj, &got); err != nil || len(obj) > MaxBundleJSON {
		t.Fatalf("%d bytes: %v", len(obj), err)
	}
	fields := map[string]int{}
	for _, c := range got.Truncated {
		fields[c.Field] = c.Total
	}
	if fields["inputs"] != 200 || fields["inputs[].points"] != 301 {
		t.Errorf("truncated %+v", got.Truncated)
	}
}

// Every table shows at most 30 rows and counts the rest, in the text and the
// HTML, whatever renders it.
func TestTablesAreCapped(t *testing.T) {
	c := &sens.CompareResult{Kind: "compare", Output: "y", Unit: "$", Baseline: 1}
	for i := range 100 {
		c.Scenarios = append(c.Scenarios, sens.ScenarioValue{Name: fmt.Sprintf("s%03d", i), Value: float64(i), Delta: float64(i) - 1})
	}
	r := Compare(c, nil)
	h := r.Bundle()["text/html"].(string)
	if n := strings.Count(h, "<tr>"); n != 1+30 || !strings.Contains(h, "… and 70 more rows") {
		t.Errorf("HTML has %d plain rows:\n%s", n, h)
	}
	if !strings.Contains(r.Text(), "s029") || strings.Contains(r.Text(), "s030") || !strings.Contains(r.Text(), "… and 70 more rows") {
		t.Errorf("text:\n%s", r.Text())
	}
}
