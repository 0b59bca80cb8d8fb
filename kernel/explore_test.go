package kernel

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/render"
)

// TestExploreCommand runs explore through the interpreter: the panel's
// bundle (HTML with the panel's script and data, text, the vendor JSON), its
// sliders the tornado's largest bars, and its errors at their columns.
func TestExploreCommand(t *testing.T) {
	in := newShop(t)
	s := run(t, in, "explore total top=3")
	if len(s.results) != 1 || s.results[0].Kind != "explore" {
		t.Fatalf("results: %+v", s.results)
	}
	r := s.results[0]
	obj := object(t, r)
	ins := obj["inputs"].([]any)
	if len(ins) != 3 || obj["held"].(float64) != 3 || obj["slots"].(float64) < 5 {
		t.Errorf("explore JSON: %v", obj)
	}
	tor := run(t, in, "tornado total top=3").results[0]
	bars := object(t, tor)["bars"].([]any)
	for i := range ins {
		got, want := ins[i].(map[string]any), bars[i].(map[string]any)
		for _, k := range []string{"name", "low", "high", "output_at_low", "output_at_high"} {
			if got[k] != want[k] {
				t.Errorf("slider %d: %s is %v, the tornado's %v", i, k, got[k], want[k])
			}
		}
	}
	// Inputs by name, in the order given.
	s = run(t, in, "explore total over rate, units")
	obj = object(t, s.results[0])
	ins2 := obj["inputs"].([]any)
	if len(ins2) != 2 || ins2[0].(map[string]any)["name"] != "rate" || ins2[1].(map[string]any)["name"] != "units" || obj["chosen"] != true {
		t.Errorf("explore over: %v", obj)
	}
	if !strings.Contains(s.results[0].Text(), "asked for") {
		t.Errorf("explore over: %s", s.results[0].Text())
	}

	b := r.Bundle()
	h, _ := b["text/html"].(string)
	if !strings.Contains(h, render.ExploreScript) || !strings.Contains(h, `class="nudge-explore-data"`) {
		t.Error("the bundle's HTML lacks the panel's script or data")
	}
	if _, ok := b[render.ResultMIME]; !ok || b["application/json"] != nil {
		t.Errorf("bundle types: %v", b)
	}
	if txt := b["text/plain"].(string); !strings.Contains(txt, "what-if panel of total") {
		t.Errorf("text: %s", txt)
	}

	for _, tc := range []struct {
		src       string
		line, col int
		msg       string
	}{
		{"explore totl", 1, 9, "undefined: totl (did you mean total?)"},
		{"explore units", 1, 9, "units is an input"},
		{"explore total top=0", 1, 19, "top must be a whole number from 1"},
		{"explore total n=3", 1, 15, "explore has no option n (options: top)"},
		{"explore total over rat", 1, 20, "undefined input rat (did you mean rate?)"},
		{"explore total over rate, unit_cost", 1, 26, "unit_cost is a formula, not an input"},
		{"explore total over rate, hours, rate", 1, 33, "rate is listed twice"},
		{"explore total over rate top=2", 1, 25, "top=N and over rate both choose the sliders"},
		{"explore unit_cost over units", 1, 24, "unit_cost does not depend on units"},
	} {
		err := in.Execute(context.Background(), "cell", tc.src, &analysisSink{})
		var ce *CellError
		if !errors.As(err, &ce) {
			t.Errorf("%s: error %v, want a CellError", tc.src, err)
			continue
		}
		e := ce.First()
		if e.Pos.Line != tc.line || e.Pos.Column != tc.col || !strings.Contains(e.Msg, tc.msg) {
			t.Errorf("%s: error at %d:%d %q; want %d:%d containing %q", tc.src, e.Pos.Line, e.Pos.Column, e.Msg, tc.line, tc.col, tc.msg)
		}
	}
}

// TestExploreDefaultRanges: a slider over the default ±10% range is flagged
// as the tornado flags it (a warning and the range's source in the table),
// and an input of 0 with no range, whose slider cannot move, is named. By
// hand: fee = 5 $ with no range spans 4.50..5.50 $; spare = 0 $ spans 0..0.
func TestExploreDefaultRanges(t *testing.T) {
	in := New()
	run(t, in, "input fee = 5 [$]\ninput spare = 0 [$]\ninput n = 3 (1..5)\ny = fee * n + spare\n")
	s := run(t, in, "explore y")
	if len(s.results) != 1 {
		t.Fatalf("results: %+v", s.results)
	}
	warns := s.stderr.String()
	for _, w := range []string{"explore y: fee, spare have no range or distribution", "spare is 0 with no range or distribution"} {
		if !strings.Contains(warns, w) {
			t.Errorf("stderr %q lacks %q", warns, w)
		}
	}
	text := s.results[0].Text()
	for _, w := range []string{"range from", "default ±10%", "stated", "$4.50", "$5.50", "No range: spare is 0"} {
		if !strings.Contains(text, w) {
			t.Errorf("text lacks %q:\n%s", w, text)
		}
	}
	if h := s.results[0].Bundle()["text/html"].(string); !strings.Contains(h, "No range: spare is 0") || !strings.Contains(h, "default ±10%") {
		t.Error("the HTML lacks the default range or the note on spare")
	}
}
