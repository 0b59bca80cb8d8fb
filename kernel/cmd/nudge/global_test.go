package main

import (
	"bufio"
	"encoding/json"
	"runtime"
	"strings"
	"testing"
)

const globalModel = `input units = 1000 (800..1300)
input steel = 0.9 [$/kg] ~ pert(0.8, 0.9, 1.2)
input rate = 60 [$/h] ~ normal(60, 5)
input hours = 1.5 [h] ~ triangular(1.2, 1.5, 2.1)
spearman steel, rate = 0.5
total = units * (12 [kg] * steel + hours * rate) [$]
simulate total n=4000 seed=7 above=150000
sobol total n=256 seed=7
morris total r=10 seed=7
screen total n=200 seed=7
`

// TestExecGlobalJSON checks the JSON objects of DESIGN.md for the sampling
// analyses through nudge exec --json, and that the output is the same at
// GOMAXPROCS 1 and 2.
func TestExecGlobalJSON(t *testing.T) {
	exec := func(procs int) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		code, out, errs := runNudge([]string{"exec", "--json", "-"}, globalModel)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		return out
	}
	out := exec(1)
	if two := exec(2); two != out {
		t.Errorf("GOMAXPROCS 1 and 2 give different JSON")
	}
	want := map[string][]string{
		"simulation": {"output", "n", "seed", "mean", "sd", "p05", "p10", "p50", "p90", "p95", "stderr_mean", "p_above", "p_above_stderr"},
		"sobol":      {"output", "n", "seed", "variance", "inputs"},
		"morris":     {"output", "r", "inputs"},
		"screening":  {"output", "n", "inputs"},
	}
	var kinds []string
	sc := bufio.NewScanner(strings.NewReader(out))
	sc.Buffer(nil, 1<<20)
	for sc.Scan() {
		var obj map[string]any
		if err := json.Unmarshal(sc.Bytes(), &obj); err != nil {
			t.Fatalf("not JSON: %v", err)
		}
		kind := obj["kind"].(string)
		kinds = append(kinds, kind)
		for _, k := range want[kind] {
			if _, ok := obj[k]; !ok {
				t.Errorf("%s lacks %q", kind, k)
			}
		}
	}
	if got := strings.Join(kinds, ","); got != "simulation,sobol,morris,screening" {
		t.Errorf("kinds %s", got)
	}
	// A bad option is a JSON error with its line and column.
	code, out, _ := runNudge([]string{"exec", "--json", "-"}, globalModel[:strings.Index(globalModel, "simulate")]+"simulate total n=0\n")
	var obj map[string]any
	if code != 1 || json.Unmarshal([]byte(strings.TrimSpace(out)), &obj) != nil || obj["kind"] != "error" || obj["line"] != 7.0 || obj["column"] != 18.0 {
		t.Errorf("n=0: exit %d, %s", code, out)
	}
}
