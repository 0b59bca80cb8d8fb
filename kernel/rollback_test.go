package kernel

import (
	"context"
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
