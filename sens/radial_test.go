package sens

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// radial gives the benchmarks' tape functions the cones of radial designs,
// as a compiled model's Fn has them.
func (f *tapeFunction) radial() (radialSet, error) {
	all := make([]int, f.t.NumInputs())
	for i := range all {
		all[i] = i
	}
	r, err := f.t.Radial(0, all)
	if err != nil {
		return nil, err
	}
	return tapeRadial{r}, nil
}

type tapeRadial struct{ r *tape.Radial }

func (t tapeRadial) eval(fa []float64, fab [][]float64, a, b [][]float64, n int) error {
	return t.r.Eval(fa, fab, a, b, n)
}

// sobolBoth runs Sobol with the cones of radial designs and with every
// point evaluated whole, and returns both results as JSON (or the errors'
// text).
func sobolBoth(t *testing.T, p *Problem, s SobolSettings) (cones, whole string) {
	t.Helper()
	run := func(on bool) string {
		defer func(old bool) { useRadial = old }(useRadial)
		useRadial = on
		ss := s
		r, err := Sobol(p, &ss)
		if err != nil {
			return "error: " + err.Error()
		}
		b, _ := json.Marshal(r)
		return string(b)
	}
	return run(true), run(false)
}

// TestSobolConesSameAsWhole checks that Sobol through the cones of radial
// designs gives the result of evaluating every point whole, to the last
// bit (the JSON of the result, every index and interval in it), on the
// Ishigami function (Ishigami & Homma 1990), the G-function (Saltelli et
// al. 2008), generated models of 20 inputs, a model of formulas whose
// inputs are a few of the program's, a model of line items (whose loop
// nodes have no lane cones: the whole way), and models where some samples
// hit a domain error (the same error, at the same sample, as before), on
// one worker and on three.
func TestSobolConesSameAsWhole(t *testing.T) {
	var g strings.Builder
	var terms []string
	for i, a := range []float64{0, 1, 4.5, 9, 99, 99, 99, 99} {
		fmt.Fprintf(&g, "input x%d = 0.5 ~ uniform(0, 1)\n", i+1)
		terms = append(terms, fmt.Sprintf("(abs(4*x%d - 2) + %g) / (1 + %g)", i+1, a, a))
	}
	g.WriteString("g = " + strings.Join(terms, " * ") + "\n")
	type model struct {
		name  string
		p     *Problem
		cones bool // the model has lane cones
		fails bool // some sample fails
	}
	models := []model{
		{name: "Ishigami", p: problemOf(t, ishigamiModel, "y"), cones: true},
		{name: "G-function", p: problemOf(t, g.String(), "g"), cones: true},
		// A formula that reads only some inputs (a sub-function of the
		// program), with units scaled for display and an if and a max.
		{name: "sub-function", p: problemOf(t, `
input a = 2 [m] ~ uniform(1, 3)
input b = 5 [m] ~ triangular(4, 5, 7)
input c = 3 ~ normal(3, 0.5)
input d = 1 ~ uniform(0, 2)
area = a * b + max(a, c * 1 [m]) * 1 [m]
cost = if(d > 1, area * 12 [$/m^2], area * 10 [$/m^2] + c * 1 [$]) / 1000
`, "cost"), cones: true},
		// ln of a + b - 0.4 fails where a + b < 0.4, in the first chunk.
		{name: "domain error in A", p: problemOf(t, `
input a = 0.5 ~ uniform(0, 1)
input b = 0.5 ~ uniform(0, 1)
input c = 1.5 ~ uniform(1, 2)
y = ln(a + b - 0.4) * c + c
`, "y"), cones: true, fails: true},
		// sqrt(1.9 - c) is NaN in the branch not taken wherever c > 1.9,
		// and fails where a > 0.95 takes it.
		{name: "domain error in a branch", p: problemOf(t, `
input a = 0.5 ~ uniform(0, 1)
input c = 1.5 ~ uniform(1, 2)
y = a * 3 + if(a > 0.95, sqrt(1.9 - c), c)
`, "y"), cones: true, fails: true},
	}
	for seed := range uint64(3) {
		tp, x := tapebench.GenModel(400, 20, seed+11)
		models = append(models, model{name: fmt.Sprintf("generated %d", seed), p: benchProblem(tp, x), cones: true})
	}
	lines, _ := loadBid(t, 40, lineItemModel)
	lp, err := lines.Problem("total")
	if err != nil {
		t.Fatal(err)
	}
	models = append(models, model{name: "line items", p: lp})

	for _, m := range models {
		if got := newRadial(m.p.F.Clone()) != nil; got != m.cones {
			t.Errorf("%s: lane cones %v, want %v", m.name, got, m.cones)
		}
		for _, w := range []int{1, 3} {
			cones, whole := sobolBoth(t, m.p, SobolSettings{N: 700, Seed: 3, Bootstrap: 40, Workers: w})
			if cones != whole {
				t.Errorf("%s, %d workers: through the cones\n%s\nwhole\n%s", m.name, w, cones, whole)
			}
			if fails := strings.HasPrefix(whole, "error: "); fails != m.fails {
				t.Errorf("%s: %s", m.name, whole)
			} else if fails {
				t.Logf("%s, %d workers: %s", m.name, w, whole)
			}
		}
	}
}

// Sobol' indices of the 20-input, 1,000-node model at n = 8192 on one
// worker, through the lane cones against every point evaluated whole: what
// the cones save.
//
//	go test ./sens/ -run '^$' -bench SobolConesVsWhole -benchtime=5x
func BenchmarkSobolConesVsWhole(b *testing.B) {
	t, x := tapebench.GenModel(1000, 20, 5)
	p := benchProblem(t, x)
	const n = 8192
	run := func(on bool) func() error {
		return func() error {
			defer func(old bool) { useRadial = old }(useRadial)
			useRadial = on
			_, err := Sobol(p, &SobolSettings{N: n, Seed: 1, Workers: 1})
			return err
		}
	}
	cpuPair(b, float64(n*(len(x)+2)), "cones", "whole", run(true), run(false))
}
