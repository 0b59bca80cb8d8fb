package kernel

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// writeBid writes the invented bid of n lines as bid.csv in a new
// directory and returns the directory.
func writeBid(t *testing.T, n int) string {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "bid.csv"), tapebench.BidCSV(n, 1), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

const bidCell = `table bid = "bid.csv" key item
input qty   = bid.qty (±5%)
input hours = bid.hours (bid.hours_low..bid.hours_high)
input rate  = 95 [$/h] (85..110)
line_cost = qty * (bid.buyout + hours * rate)
total = sum(line_cost)
`

// A table loads relative to the interpreter's directory; a vector shows
// its first rows and a total, never every row; drivers adds subtotals.
func TestLineItemCells(t *testing.T) {
	in := New()
	in.Dir = writeBid(t, 360)
	ctx := context.Background()
	s := &captureSink{}
	if err := in.Execute(ctx, "", bidCell+"line_cost\ndrivers total group=category", s); err != nil {
		t.Fatal(err)
	}
	if len(s.results) != 3 {
		t.Fatalf("%d results", len(s.results))
	}
	tbl, vec, drv := s.results[0], s.results[1], s.results[2]
	if tbl.Kind != "table" || !strings.Contains(tbl.Text(), "table bid loaded: 360 rows from bid.csv, keyed by item") {
		t.Errorf("table result %s: %s", tbl.Kind, tbl.Text())
	}
	lines := strings.Split(strings.TrimSpace(vec.Text()), "\n")
	if vec.Kind != "vector" || len(lines) != 15 || !strings.Contains(vec.Text(), "… 350 more") || !strings.HasPrefix(lines[len(lines)-1], "total") {
		t.Errorf("vector shown in %d lines:\n%s", len(lines), vec.Text())
	}
	var v struct {
		Kind   string
		Count  int
		Values []float64
	}
	if err := json.Unmarshal(vec.JSON(), &v); err != nil || v.Kind != "vector" || v.Count != 360 || len(v.Values) != 360 {
		t.Errorf("vector JSON: %+v %v", v, err)
	}
	var d struct {
		Inputs  []any
		GroupBy string `json:"group_by"`
		Groups  []struct{ Name string }
		Columns []struct {
			Name  string
			Count int
		}
	}
	if err := json.Unmarshal(drv.JSON(), &d); err != nil {
		t.Fatal(err)
	}
	if len(d.Inputs) != 30 || d.GroupBy != "bid.category" || len(d.Groups) != 7 || len(d.Columns) != 2 || d.Columns[0].Count != 360 {
		t.Errorf("drivers: %d inputs, group by %q into %d, columns %+v", len(d.Inputs), d.GroupBy, len(d.Groups), d.Columns)
	}
	if !strings.Contains(drv.Text(), "subtotals by bid.category") || !strings.Contains(drv.Text(), "subtotals by vector input") {
		t.Errorf("drivers text lacks the subtotals:\n%s", drv.Text())
	}
	// An element is shown as a value; an element of a vector formula is
	// analysed like a formula.
	s = &captureSink{}
	if err := in.Execute(ctx, "", "qty[PL-0001]\ndrivers line_cost[PL-0001]", s); err != nil {
		t.Fatal(err)
	}
	if s.results[0].Kind != "value" || !strings.HasPrefix(s.results[0].Text(), "qty[PL-0001] = ") || s.results[1].Kind != "drivers" {
		t.Errorf("elements: %s / %s", s.results[0].Text(), s.results[1].Kind)
	}
}

// A cell that fails leaves the tables as they were: a failed load changes
// nothing, nor does a good load in a cell that fails later.
func TestLineItemFailedLoadChangesNothing(t *testing.T) {
	in := New()
	in.Dir = writeBid(t, 40)
	os.WriteFile(filepath.Join(in.Dir, "bad.csv"), []byte("item,qty [each]\nA,1\nB,two\n"), 0o644)
	ctx := context.Background()
	s := &captureSink{}
	if err := in.Execute(ctx, "", bidCell, s); err != nil {
		t.Fatal(err)
	}
	total := func() string {
		s := &captureSink{}
		if err := in.Execute(ctx, "", "total", s); err != nil {
			t.Fatal(err)
		}
		return s.results[0].Text()
	}
	before := total()
	err := in.Execute(ctx, "", `table bid = "bad.csv" key item`, s)
	if err == nil || !strings.Contains(err.Error(), `bad.csv:3:3: column qty, row B: "two" is not a number`) {
		t.Errorf("bad load: %v", err)
	}
	if got := total(); got != before {
		t.Errorf("after a failed load: %s, before %s", got, before)
	}
	err = in.Execute(ctx, "", "table other = \"bid.csv\"\nx = nope", s)
	if err == nil || in.Model.Lookup("other") != nil {
		t.Errorf("a table loaded in a failed cell stayed: %v", err)
	}
}

// nudge exec reads a table relative to the model file, wherever it runs.
func TestLineItemRunFile(t *testing.T) {
	dir := writeBid(t, 50)
	model := filepath.Join(dir, "bid.nudge")
	if err := os.WriteFile(model, []byte(bidCell+"total\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errs bytes.Buffer
	in := New()
	if err := RunFile(context.Background(), in, model, bidCell+"total\n", &WriterSink{Out: &out, Err: &errs, JSON: true}); err != nil {
		t.Fatalf("%v: %s", err, errs.String())
	}
	if in.Dir != "" {
		t.Errorf("RunFile left the directory at %q", in.Dir)
	}
	kinds := []string{}
	for _, l := range strings.Split(strings.TrimSpace(out.String()), "\n") {
		var o struct{ Kind string }
		json.Unmarshal([]byte(l), &o)
		kinds = append(kinds, o.Kind)
	}
	if strings.Join(kinds, " ") != "table value" {
		t.Errorf("kinds %v", kinds)
	}
}

// Completion offers the functions of vectors and the words of the
// line-item statements; inspection describes a vector.
func TestLineItemCompleteAndInspect(t *testing.T) {
	in := New()
	in.Dir = writeBid(t, 20)
	h := NewHandler(in)
	if err := in.Execute(context.Background(), "", bidCell, &captureSink{}); err != nil {
		t.Fatal(err)
	}
	for code, want := range map[string]string{"x = subt": "subtotal", "tab": "table", "peri": "periods", "x = whe": "where"} {
		if c := h.Complete(code, len(code)); !slices.Contains(c.Matches, want) {
			t.Errorf("%q: matches %v lack %q", code, c.Matches, want)
		}
	}
	for code, want := range map[string]string{
		"line_cost":          "vector formula line_cost: 20 rows over bid, in $",
		"qty":                "vector input qty: 20 rows over bid, in each",
		"x = subtotal(a, b)": "function subtotal(v, column): the sums of v",
	} {
		b, found := h.Inspect(code, 6, 0)
		if !found || !strings.Contains(b.Data["text/plain"].(string), want) {
			t.Errorf("%q: %v, want %q", code, b, want)
		}
	}
}
