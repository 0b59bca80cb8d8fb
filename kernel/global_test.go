package kernel

import (
	"context"
	"encoding/json"
	"fmt"
	"runtime"
	"strings"
	"testing"
)

// An invented shop model with a distribution or range on every input and
// one rank correlation.
const uncertainModel = `
input units   = 1000                 (800..1300)
input mass    = 12 [kg]              (-5%..+8%)
input hours   = 1.5 [h]              ~ triangular(1.2, 1.5, 2.1)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input tooling = 50000 [$]            ~ lognormal(50000, 8000)
spearman steel, rate = 0.6

unit_cost = mass * steel + hours * rate
total     = units * unit_cost + tooling  [$]
`

func newUncertain(t *testing.T) *Interp {
	in := New()
	run(t, in, uncertainModel)
	return in
}

// hasFields fails unless the object has every key.
func hasFields(t *testing.T, obj map[string]any, keys ...string) {
	t.Helper()
	for _, k := range keys {
		if _, ok := obj[k]; !ok {
			t.Errorf("%s object lacks %q", obj["kind"], k)
		}
	}
}

func TestSimulateCommand(t *testing.T) {
	in := newUncertain(t)
	s := run(t, in, "simulate total n=5000 seed=3 above=160000")
	if len(s.results) != 1 {
		t.Fatalf("%d results", len(s.results))
	}
	r := s.results[0]
	obj := object(t, r)
	hasFields(t, obj, "output", "n", "seed", "mean", "sd", "p05", "p10", "p50", "p90", "p95", "stderr_mean",
		"min", "max", "above", "p_above", "p_above_stderr", "rank_correlations", "correlations", "uniform_from_range", "failed")
	if obj["kind"] != "simulation" || obj["n"] != 5000.0 || obj["seed"] != 3.0 || obj["unit"] != "$" {
		t.Errorf("object %v", obj)
	}
	for _, want := range []string{"simulation of total: 5,000 samples (seed 3)", "P(total > $160,000)", "what drives the spread",
		"units", "rank correlations imposed between inputs", "steel, rate", "units, mass have a range but no distribution"} {
		if !strings.Contains(r.Text(), want) {
			t.Errorf("text lacks %q:\n%s", want, r.Text())
		}
	}
	if !r.Caution || len(r.SVG()) == 0 || !strings.Contains(r.HTML(), "<table") || !strings.Contains(r.SVG(), "P90") {
		t.Errorf("caution %v, svg %d bytes, html %q", r.Caution, len(r.SVG()), r.HTML()[:min(80, len(r.HTML()))])
	}
	// The range notice goes to stderr once per compilation.
	if n := strings.Count(s.stderr.String(), "sampled uniformly over the range"); n != 1 {
		t.Errorf("notice %d times: %s", n, s.stderr.String())
	}
	s = run(t, in, "simulate total n=100")
	if strings.Contains(s.stderr.String(), "sampled uniformly") {
		t.Errorf("notice repeated: %s", s.stderr.String())
	}
	if _, ok := s.progress["simulate@cell 3:1:1"]; !ok {
		t.Errorf("no progress reported: %v", s.progress)
	}
}

func TestGlobalCommands(t *testing.T) {
	in := newUncertain(t)
	for _, tc := range []struct {
		src, kind string
		fields    []string
		text      []string
	}{
		{"sobol total n=512 seed=2", "sobol", []string{"output", "n", "seed", "variance", "inputs"},
			[]string{"Sobol' indices of total: n = 512 (4,096 evaluations)", "first-order indices sum to", "1 declared rank correlation is left out"}},
		{"morris total r=10 seed=2", "morris", []string{"output", "r", "inputs"},
			[]string{"elementary effects on total: 10 trajectories on a grid of 4 levels (70 evaluations)", "mu*"}},
		{"screen total n=300 seed=2", "screening", []string{"output", "n", "inputs"},
			[]string{"screening of total: 300 samples", "bound on total-order index"}},
	} {
		s := run(t, in, tc.src)
		r := s.results[0]
		obj := object(t, r)
		if obj["kind"] != tc.kind {
			t.Errorf("%s: kind %v", tc.src, obj["kind"])
		}
		hasFields(t, obj, tc.fields...)
		ins := obj["inputs"].([]any)
		if len(ins) != 6 {
			t.Errorf("%s: %d inputs", tc.src, len(ins))
		}
		first := ins[0].(map[string]any)
		switch tc.kind {
		case "sobol":
			hasFields(t, first, "name", "first_order", "total_order", "first_order_ci", "total_order_ci")
		case "morris":
			hasFields(t, first, "name", "mu", "mu_star", "sigma")
		case "screening":
			hasFields(t, first, "name", "dgsm", "total_order_bound")
		}
		// Headings and notes wrap at the session's width: compare words.
		words := strings.Join(strings.Fields(r.Text()), " ")
		for _, want := range tc.text {
			if !strings.Contains(words, want) {
				t.Errorf("%s: text lacks %q:\n%s", tc.src, want, r.Text())
			}
		}
		if !r.Caution || len(r.SVG()) == 0 {
			t.Errorf("%s: caution %v, svg %d bytes", tc.src, r.Caution, len(r.SVG()))
		}
	}
}

// TestGlobalSameJSONAnyProcs: through the interpreter too, a seed gives the
// same JSON at GOMAXPROCS 1 and 2.
func TestGlobalSameJSONAnyProcs(t *testing.T) {
	for _, cmd := range []string{"simulate total n=3000 seed=9", "sobol total n=256 seed=9", "morris total r=8 seed=9", "screen total n=200 seed=9"} {
		out := func(procs int) string {
			defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
			in := newUncertain(t)
			return string(run(t, in, cmd).results[0].JSON())
		}
		if one, two := out(1), out(2); one != two {
			t.Errorf("%s: GOMAXPROCS 1 and 2 differ", cmd)
		}
	}
}

// TestGlobalInterrupted cancels each analysis at its first progress report:
// it stops with an interruption, shows nothing, and the model is as before.
func TestGlobalInterrupted(t *testing.T) {
	// Progress is reported every 100 ms: each analysis must run longer than
	// that at its largest count, so the output sums 40 more inputs.
	var wide strings.Builder
	wide.WriteString("input extra = 1\nwide = total")
	for i := range 40 {
		fmt.Fprintf(&wide, " + e%d", i)
	}
	wide.WriteString("\n")
	for i := range 40 {
		fmt.Fprintf(&wide, "input e%d = 1 [$] (0..2)\n", i)
	}
	for _, cmd := range []string{"simulate wide n=1000000", "sobol wide n=500000", "morris wide r=100000", "screen wide n=1000000"} {
		in := newUncertain(t)
		before, _ := json.Marshal(in.Model.Names())
		ctx, cancel := context.WithCancel(context.Background())
		s := &analysisSink{}
		err := in.Execute(ctx, "", wide.String()+cmd, &cancelSink{analysisSink: s, cancel: cancel})
		if err == nil || !strings.Contains(err.Error(), "interrupted") {
			t.Errorf("%s: error %v, want an interruption", cmd, err)
		}
		if len(s.results) != 0 {
			t.Errorf("%s: an interrupted analysis showed %d results", cmd, len(s.results))
		}
		for id, p := range s.progress {
			if p[0] >= p[1] {
				t.Errorf("%s: progress %s ran to the end (%d of %d)", cmd, id, p[0], p[1])
			}
		}
		if after, _ := json.Marshal(in.Model.Names()); string(after) != string(before) {
			t.Errorf("%s: model changed: %s -> %s", cmd, before, after)
		}
	}
}

func TestSpearmanChecked(t *testing.T) {
	in := newUncertain(t)
	// A cell ending with a correlation is checked at once, and rolled back.
	err := in.Execute(context.Background(), "", "spearman hours, rate = 1.5", &analysisSink{})
	if err == nil || !strings.Contains(err.Error(), "1:24: a rank correlation lies strictly between -1 and 1, found 1.5") {
		t.Fatalf("got %v", err)
	}
	s := run(t, in, "simulate total n=500")
	if obj := object(t, s.results[0]); len(obj["correlations"].([]any)) != 1 {
		t.Errorf("the failed correlation stayed: %v", obj["correlations"])
	}
}
