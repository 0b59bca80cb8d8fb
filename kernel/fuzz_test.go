package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzExecute runs arbitrary text as whole cells of a session, through the
// interpreter and the text services a front end calls on every key
// (is_complete, completion, inspection): errors are fine; a panic (which
// Execute turns into an "internal error"), an error without a message, or
// a failed cell that changes the model, are not. Each cell is run twice in
// one session (a later cell may redefine what an earlier one declared).
//
// The work of one input is bounded without a clock: the cell's context
// ends after a fixed number of looks (countingCtx), so an analysis asked
// for many samples stops as an interrupted cell does. Tables are read
// from an empty directory.
func FuzzExecute(f *testing.F) {
	seeds := []string{
		shopModel + "drivers total\ntornado total top=3\n",
		shopModel + "spider total (±30%) points=5\nsweep total over rate 40..80 n=5\n",
		shopModel + "scenario lean: hours = 1.2, rate = 55 [$/h]\ncompare total across base, lean\n",
		shopModel + "breakeven total = 160000 over steel\nsimulate total n=200 seed=7\n",
		shopModel + "sobol total n=16 bootstrap=10 seed=1\nmorris total r=4 seed=2\nscreen total n=20\n",
		"input a = 1\ny = a\ninput a = 2\n",
		"input m = 10 [kg]\ny = m * 2 [g]\ny\n(m + 1 [kg]) [t]\nbasis y\nhelp tornado\n",
		"a = b\nb = a\n",
		"x = " + strings.Repeat("@", 100),
		"y = " + strings.Repeat("(", 300),
		"print \"\x1b[2J\"\ncharts text\nreset\n",
	}
	if files, err := filepath.Glob("testdata/errors/*.nudge"); err == nil {
		for _, file := range files {
			if b, err := os.ReadFile(file); err == nil {
				seeds = append(seeds, string(b))
			}
		}
	}
	for _, s := range seeds {
		f.Add(s)
	}
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, src string) {
		in := New()
		in.Dir = dir
		in.Opts.NoCharts = true
		h := NewHandler(in)
		h.IsComplete(src)
		h.Complete(src, len([]rune(src)))
		h.Inspect(src, len([]rune(src))/2, 0)
		for cell := range 2 {
			before, _ := json.Marshal(in.Model.Names())
			ctx := &countingCtx{Context: context.Background()}
			ctx.after.Store(2000)
			err := in.Execute(ctx, "", src, &analysisSink{})
			if err == nil {
				continue
			}
			var ce *CellError
			if !errors.As(err, &ce) {
				t.Fatalf("cell %d: %T %v, want a *CellError", cell, err, err)
			}
			for _, e := range ce.Errors {
				if e.Msg == "" {
					t.Fatalf("cell %d: an error without a message", cell)
				}
				if strings.HasPrefix(e.Msg, "internal error") {
					t.Fatalf("cell %d: %s", cell, e.Msg)
				}
			}
			if after, _ := json.Marshal(in.Model.Names()); string(after) != string(before) {
				t.Fatalf("cell %d failed (%v) but changed the model: %s -> %s", cell, err, before, after)
			}
		}
	})
}
