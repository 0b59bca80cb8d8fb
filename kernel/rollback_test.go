package kernel

import (
	"context"
	"strings"
	"testing"
)

// TestFailedCellKeepsSettings: a cell applies as a whole for every piece
// of session state, not only the model: a failing cell that changed the
// chart mode leaves it as it was (issue 8).
func TestFailedCellKeepsSettings(t *testing.T) {
	in := New()
	ctx := context.Background()
	before := in.Opts
	if err := in.Execute(ctx, "", "charts text\ny = undefined_name * 2", &captureSink{}); err == nil {
		t.Fatal("want an error for an undefined name")
	}
	if in.Opts != before {
		t.Errorf("a failed cell changed the settings: %+v, was %+v", in.Opts, before)
	}
	// The same command in a cell that succeeds does apply.
	if err := in.Execute(ctx, "", "charts text", &captureSink{}); err != nil {
		t.Fatal(err)
	}
	if !in.Opts.NoCharts {
		t.Error("charts text in a good cell did not apply")
	}
}

// TestFailingCellShowsNothingAfterTheError: a cell applies as a whole. When
// the check at its end finds a declaration wrong, the statements after that
// declaration show nothing (their output was held); those before it show
// theirs, as before any failing statement; a cell that passes shows all of
// it, in order.
func TestFailingCellShowsNothingAfterTheError(t *testing.T) {
	texts := func(s *captureSink) string {
		var b strings.Builder
		for _, r := range s.results {
			b.WriteString(r.Text())
		}
		return b.String() + s.stdout.String()
	}
	s, err := runCell(t, "input m = 10 [kg] (5..20)\nprint \"before\"\ny = m * 2 [$/kg]\nscenario s: m = 12 [kg]\nprint \"after\"\n")
	if err == nil || !strings.Contains(err.Error(), "3:11:") {
		t.Fatalf("error %v, want the unit error at 3:11", err)
	}
	if out := texts(s); !strings.Contains(out, "before") || strings.Contains(out, "after") || strings.Contains(out, "scenario s") {
		t.Errorf("a failing cell showed:\n%s", out)
	}
	s, err = runCell(t, "input m = 10 [kg] (5..20)\nprint \"before\"\ny = m * (2 [$/kg])\nscenario s: m = 12 [kg]\nprint \"after\"\n")
	if err != nil {
		t.Fatal(err)
	}
	if out := texts(s); !strings.Contains(out, "before") || !strings.Contains(out, "after") || strings.Index(out, "before") > strings.Index(out, "after") {
		t.Errorf("a sound cell showed:\n%s", out)
	}
}
