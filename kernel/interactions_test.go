package kernel

import (
	"context"
	"slices"
	"strings"
	"testing"
)

// The interactions command end to end: the JSON object, the text, the CSV
// tables, the warning where the output is not twice differentiable, and
// completion of its options. The model is an invented machining quote.
func TestInteractionsCommand(t *testing.T) {
	const model = `input hours = 1.5 [h] (1.2..2)
input rate = 60 [$/h] (50..75)
input units = 1000 (800..2300)
input setup = 1000 [$] (±20%)
total = units * hours * rate + max(setup, 1000 [$])
interactions total top=2
`
	s, err := runCell(t, model)
	if err != nil {
		t.Fatal(err)
	}
	m := jsonOf(t, s, 0)
	pairs, _ := m["pairs"].([]any)
	if m["kind"] != "interactions" || len(pairs) != 2 {
		t.Fatalf("kind %v, %d pairs: want interactions, 2", m["kind"], len(pairs))
	}
	// units × hours × rate: ∂²/∂units∂hours = rate = 60 $/h, times widths
	// 1500 × 0.8 = 72,000 $ (by hand).
	first := pairs[0].(map[string]any)
	if first["a"] != "hours" || first["b"] != "units" || first["mixed"] != 60.0 || first["scaled"] != 72000.0 {
		t.Errorf("first pair %v, want hours × units: 60 $/h, 72,000 $", first)
	}
	if ns, _ := m["not_smooth"].([]any); len(ns) != 1 || !strings.Contains(ns[0].(string), "model:5:32: max of two equal values") {
		t.Errorf("not_smooth %v, want the max at 5:32", m["not_smooth"])
	}
	if !strings.Contains(s.stderr.String(), "total is not twice differentiable at the baseline") {
		t.Errorf("no warning on stderr: %q", s.stderr.String())
	}
	txt := s.results[0].Text()
	for _, want := range []string{"hours × units", "+$72,000", "Interactions: total"} {
		if !strings.Contains(txt, want) {
			t.Errorf("text lacks %q:\n%s", want, txt)
		}
	}
	tabs := s.results[0].Tables()
	if len(tabs) != 2 || tabs[0].Rows[0][0] != "a" || tabs[1].Name != "curvatures" || len(tabs[0].Rows) != 3 {
		t.Errorf("CSV tables %v", tabs)
	}

	h := NewHandler(New())
	if err := h.in.Execute(context.Background(), "", model, &captureSink{}); err != nil {
		t.Fatal(err)
	}
	if c := h.Complete("interactions to", 15); !slices.Contains(c.Matches, "total") {
		t.Errorf("completion after the verb: %v", c.Matches)
	}
	if c := h.Complete("interactions total ", 19); !slices.Contains(c.Matches, "top=") || !slices.Contains(c.Matches, "map=") {
		t.Errorf("completion of options: %v", c.Matches)
	}
}

// TestInteractionsCountsInWords: the note on how many pairs interact reads
// right at the edges: one input has no pair, one pair that interacts is
// "the only pair", and all pairs interacting are said to (y = a·b·c: each
// mixed partial is the third input, nonzero at the baseline, by hand).
func TestInteractionsCountsInWords(t *testing.T) {
	for _, tc := range []struct{ model, want, not string }{
		{"input a = 2 (1..3)\ny = 3 * a\n", "y depends on one input only: there is no pair to interact", "0 pairs"},
		{"input a = 2 (1..3)\ninput b = 2 (1..3)\ny = a * b\n", "the only pair of inputs interacts at the baseline", "the other 0"},
		{"input a = 2 (1..3)\ninput b = 2 (1..3)\ninput c = 2 (1..3)\ny = a * b * c\n", "all 3 pairs of inputs interact at the baseline", "the other 0"},
	} {
		in := New()
		run(t, in, tc.model)
		text := strings.Join(strings.Fields(run(t, in, "interactions y").results[0].Text()), " ")
		if !strings.Contains(text, tc.want) || strings.Contains(text, tc.not) {
			t.Errorf("%q:\n%s", tc.model, text)
		}
	}
}

// TestInteractionsNoBlankMap: an output whose inputs neither interact nor
// curve (y = a + b, by hand every second derivative is 0) gets a note, not a
// pair map of zeros keyed "≤0 ≤0 ≤0".
func TestInteractionsNoBlankMap(t *testing.T) {
	in := New()
	run(t, in, "input a = 2 (1..3)\ninput b = 2 (1..3)\ny = a + b\n")
	r := run(t, in, "interactions y").results[0]
	if text := strings.Join(strings.Fields(r.Text()), " "); !strings.Contains(text, "no pair map: every mixed partial and curvature it would show is 0") || strings.Contains(text, "key:") || len(r.SVG()) != 0 {
		t.Errorf("text:\n%s", text)
	}
}
