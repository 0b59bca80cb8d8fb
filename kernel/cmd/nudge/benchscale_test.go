package main

import (
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

// The scale model is a model: it loads, compiles and checks, with the
// number of formula lines asked for, over a quarter as many inputs.
func TestBenchModel(t *testing.T) {
	for _, args := range [][]string{{"bench", "model", "--lines", "2500"}, {"bench", "model", "--lines", "2500", "--if", "--seed", "4"}} {
		code, out, errs := runNudge(args, "")
		if code != 0 {
			t.Fatalf("%v: exit %d, %s", args, code, errs)
		}
		m, err := sens.LoadModel("bid", []byte(out))
		if err != nil {
			t.Fatal(err)
		}
		p, err := m.Compile()
		if err != nil {
			t.Fatal(err)
		}
		if err := p.Check(); err != nil {
			t.Fatal(err)
		}
		if len(p.Formulas) != 2500 || len(p.Inputs) != 625 {
			t.Errorf("%v: %d formulas, %d inputs; want 2500 and 625", args, len(p.Formulas), len(p.Inputs))
		}
		if hasIf := strings.Contains(out, "if("); hasIf != (len(args) > 4) {
			t.Errorf("%v: if in the model: %v", args, hasIf)
		}
	}
}

// nudge bench scale runs every step on a small model and prints each
// figure; the times themselves are not tested.
func TestBenchScale(t *testing.T) {
	code, out, errs := runNudge([]string{"bench", "scale", "--lines", "400", "--repeat", "1", "--if"}, "")
	if code != 0 {
		t.Fatalf("exit %d, %s", code, errs)
	}
	for _, want := range []string{"compile / parse", "tornado total", "exec: model, drivers and tornado"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	code, out, errs = runNudge([]string{"bench", "scale", "--lines", "400", "--compile-only"}, "")
	if code != 0 || !strings.Contains(out, "compile / parse") || strings.Contains(out, "tornado") {
		t.Errorf("--compile-only: exit %d, %s\n%s", code, errs, out)
	}
	if code, _, _ := runNudge([]string{"bench", "scale", "--lines", "2"}, ""); code != 2 {
		t.Errorf("--lines 2: exit %d, want a usage error (2)", code)
	}
}
