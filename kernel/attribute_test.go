package kernel

import (
	"bytes"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// attribute from the shop's baseline to a scenario: the JSON object, the
// CSV table, the text, and the parts adding up to the change.
func TestAttributeCommand(t *testing.T) {
	in := newShop(t)
	s := run(t, in, "scenario lean: hours = 72 [min], rate = 55\nattribute total from base to lean top=1")
	if len(s.results) != 2 || s.results[1].Kind != "attribution" {
		t.Fatalf("results %v", s.results)
	}
	r := s.results[1]
	m := object(t, r)
	// By hand: total = units (mass steel + hours rate) + tooling, so with
	// units fixed the change is units (h1 r1 − h0 r0) = 1000 (66 − 90) =
	// −24,000 $; hours (a product with rate) contributes units (h1 − h0)
	// (r0 + r1)/2 = 1000 × −0.3 × 57.5 = −17,250 $ and rate 1000 × −5 ×
	// 1.35 = −6,750 $ (the closed form of a product's attribution).
	if m["from"] != "base" || m["to"] != "lean" || !scalar.EqualWithinAbsOrRel(m["change"].(float64), -24000, 1e-6, 1e-12) {
		t.Errorf("object %v", m)
	}
	ins := m["inputs"].([]any)
	first := ins[0].(map[string]any)
	if len(ins) != 1 || first["name"] != "hours" || !scalar.EqualWithinAbsOrRel(first["contribution"].(float64), -17250, 1e-6, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(first["share_pct"].(float64), 100*17250.0/24000, 1e-9, 1e-12) {
		t.Errorf("top=1 keeps hours: %v", ins)
	}
	rest := m["rest"].(map[string]any)
	if rest["count"].(float64) != 1 || !scalar.EqualWithinAbsOrRel(rest["contribution"].(float64), -6750, 1e-6, 1e-12) {
		t.Errorf("rest %v", rest)
	}
	if m["met"] != true || m["unchanged"].(float64) != 4 || len(m["breaks"].([]any)) != 0 {
		t.Errorf("met %v, unchanged %v, breaks %v", m["met"], m["unchanged"], m["breaks"])
	}
	for _, want := range []string{"attribution of total from base ($150,800) to lean", "($126,800)", "hours", "-$17,250", "1 other input", "4 inputs of total are the same", "residual", "met", "Change of total in parts"} {
		if !strings.Contains(r.Text(), want) {
			t.Errorf("text lacks %q:\n%s", want, r.Text())
		}
	}
	if !strings.Contains(string(r.SVG()), "hours") {
		t.Error("no waterfall")
	}
	tabs := r.Tables()
	var buf bytes.Buffer
	if len(tabs) != 1 || tabs[0].WriteCSV(&buf) != nil || !strings.HasPrefix(buf.String(), "input,from,to,input_unit,contribution,share_pct,output_unit\nhours,1.5,1.2,h,-17250") {
		t.Errorf("csv:\n%s", buf.String())
	}
}

// A step on the path is said on stderr and in the result, with its line
// and column, and its jump stays in the residual.
func TestAttributeStepWarning(t *testing.T) {
	in := New()
	s := run(t, in, "input x = 1\ninput y = 2\nf = if(x > 2, 10, 0) + x * y\nscenario s: x = 3\nattribute f from base to s")
	m := object(t, s.results[1])
	if m["met"] != false || !scalar.EqualWithinAbsOrRel(m["jumps"].(float64), 10, 1e-9, 1e-9) {
		t.Errorf("met %v, jumps %v", m["met"], m["jumps"])
	}
	if w := s.stderr.String(); !strings.Contains(w, "attribute f: the output jumps at a step on the path from base to s (cell 1:3:10 > in f)") {
		t.Errorf("stderr %q", w)
	}
	if txt := s.results[1].Text(); !strings.Contains(txt, "the output jumps by +10 at 50% of the way") || !strings.Contains(txt, "unexplained") {
		t.Errorf("text:\n%s", txt)
	}
}

// TestAttributeResidualWritten: the residual is money written as money ($
// before the number, as the one formatter writes it) and its share of the
// change in plain digits where it is large. By hand: y = a·b is bilinear,
// so two Gauss–Legendre points integrate it exactly and the residual is 0;
// z = if(x < 2, 1, 5)·x from x = 1 to 3 changes by 15 − 1 = 14, of which
// the jump at x = 2 (from 2 to 10) is 8, 8/14 = 0.57 of the change.
func TestAttributeResidualWritten(t *testing.T) {
	in := New()
	run(t, in, "input a = 10 [$] (8..12)\ninput b = 3 (2..5)\ny = a * b\nscenario hi: a = 11, b = 4\n")
	// Text wraps to the width: compare with the lines joined.
	joined := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	if text := joined(run(t, in, "attribute y from base to hi").results[0].Text()); !strings.Contains(text, "contributions): $0, 0 of the change") {
		t.Errorf("bilinear:\n%s", text)
	}
	in = New()
	run(t, in, "input x = 1 (0..3)\nz = if(x < 2, 1, 5) * x\nscenario s: x = 3\n")
	if text := joined(run(t, in, "attribute z from base to s").results[0].Text()); !strings.Contains(text, "contributions): 8, 0.57 of the change") {
		t.Errorf("step:\n%s", text)
	}
}

// TestAttributeShareColumnAligned: the "% of change" column takes one
// number of decimals for all its rows. y = a·b, a 10→19, b 3→3.1: a gives
// 9 × (3 + 3.1)/2 = 27.45 and b 0.1 × (10 + 19)/2 = 1.45 of a change of 28.9
// (the closed form of a product's attribution), 94.98% and 5.017%, written
// +94.98% and +5.02%.
func TestAttributeShareColumnAligned(t *testing.T) {
	in := New()
	run(t, in, "input a = 10 [$] (8..20)\ninput b = 3 (2..5)\ny = a * b\nscenario hi: a = 19, b = 3.1\n")
	text := run(t, in, "attribute y from base to hi").results[0].Text()
	if !strings.Contains(text, "+94.98%") || !strings.Contains(text, "+5.02%") {
		t.Errorf("shares:\n%s", text)
	}
}
