package sens

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
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

// walk gives them the cones of trajectories.
func (f *tapeFunction) walk() (walkSet, error) {
	w, err := f.t.Walk(0)
	if err != nil {
		return nil, err
	}
	return tapeWalk{w}, nil
}

type tapeWalk struct{ w *tape.Walk }

func (t tapeWalk) start(x []float64) (float64, error)     { return t.w.Start(x) }
func (t tapeWalk) step(i int, v float64) (float64, error) { return t.w.Step(i, v) }

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
// nodes have cones element by element: one Cones moved from row to row),
// and models where some samples hit a domain error (the same error, at the
// same sample, as before), on one worker and on three.
func TestSobolConesSameAsWhole(t *testing.T) {
	models := coneModels(t)
	for _, m := range models {
		if got := newRadial(m.p.F.Clone()) != nil; got != m.cones {
			t.Errorf("%s: lane cones %v, want %v", m.name, got, m.cones)
		}
		if m.cones && !m.fails {
			radialSameAsColumns(t, m.name, m.p)
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
		return withRadial(on, func() error { _, err := Sobol(p, &SobolSettings{N: n, Seed: 1, Workers: 1}); return err })
	}
	cpuPair(b, float64(n*(len(x)+2)), "cones", "whole", run(true), run(false))
}

// coneModel is a model of the tests of the analyses through cones.
type coneModel struct {
	name  string
	p     *Problem
	cones bool // the model has cones (lane cones, or cones per row)
	fails bool // some sample of Sobol's fails
}

// coneModels returns the models on which the analyses through cones are
// compared with every point evaluated whole.
func coneModels(t *testing.T) []coneModel {
	var g strings.Builder
	var terms []string
	for i, a := range []float64{0, 1, 4.5, 9, 99, 99, 99, 99} {
		fmt.Fprintf(&g, "input x%d = 0.5 ~ uniform(0, 1)\n", i+1)
		terms = append(terms, fmt.Sprintf("(abs(4*x%d - 2) + %g) / (1 + %g)", i+1, a, a))
	}
	g.WriteString("g = " + strings.Join(terms, " * ") + "\n")
	models := []coneModel{
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
		models = append(models, coneModel{name: fmt.Sprintf("generated %d", seed), p: benchProblem(tp, x), cones: true})
	}
	lines, _ := loadBid(t, 40, lineItemModel)
	lp, err := lines.Problem("total")
	if err != nil {
		t.Fatal(err)
	}
	models = append(models, coneModel{name: "line items", p: lp, cones: true})

	// A line-item model whose square roots fail where a line's quantity
	// falls 3% below the bid's.
	lf, _ := loadBid(t, 40, lineItemModel+"root = sum(sqrt(qty - 0.97 * bid.qty)) * (1 [$])\n")
	lfp, err := lf.Problem("root")
	if err != nil {
		t.Fatal(err)
	}
	models = append(models, coneModel{name: "line items failing", p: lfp, cones: true, fails: true})

	return models
}

// TestMorrisConesSameAsWhole checks that Morris through the cones of its
// trajectories (tape.Walk) gives the result of evaluating every point
// whole, to the last bit, on the models of TestSobolConesSameAsWhole (a
// model of vectors the whole way), and the same error where a point fails.
func TestMorrisConesSameAsWhole(t *testing.T) {
	for _, m := range coneModels(t) {
		run := func(on bool, w int) string {
			defer func(old bool) { useRadial = old }(useRadial)
			useRadial = on
			r, err := Morris(m.p, &MorrisSettings{R: 40, Seed: 5, Workers: w})
			if err != nil {
				return "error: " + err.Error()
			}
			b, _ := json.Marshal(r)
			return string(b)
		}
		if got := newWalk(m.p.F.Clone()) != nil; got != m.cones {
			t.Errorf("%s: cones of trajectories %v", m.name, got)
		}
		if m.cones && !m.fails {
			walkSameAsEval(t, m.name, m.p)
		}
		for _, w := range []int{1, 3} {
			if cones, whole := run(true, w), run(false, w); cones != whole {
				t.Errorf("%s, %d workers: through the cones\n%s\nwhole\n%s", m.name, w, cones, whole)
			} else if strings.HasPrefix(whole, "error: ") {
				t.Logf("%s, %d workers: %s", m.name, w, whole)
			}
		}
	}
}

// walkSameAsEval walks from every input at the low end of its range to
// every input at the high end, one input a step, twice over, through the
// trajectory evaluator, and checks each point against Eval to the last
// bit, with no point sent the whole way.
func walkSameAsEval(t *testing.T, name string, p *Problem) {
	t.Helper()
	ws, f := newWalk(p.F.Clone()), p.F.Clone()
	x := make([]float64, len(p.Inputs))
	for i, in := range p.Inputs {
		x[i] = in.Low
	}
	check := func(s int, y float64, err error) {
		t.Helper()
		want, werr := f.Eval(x)
		if err != nil || werr != nil || math.Float64bits(y) != math.Float64bits(want) {
			t.Fatalf("%s, point %d: %v %v, Eval %v %v", name, s, y, err, want, werr)
		}
	}
	y, err := ws.start(x)
	check(0, y, err)
	for s := 1; s <= 2*len(x); s++ {
		i := (s - 1) % len(x)
		in := p.Inputs[i]
		x[i] = in.High
		if s > len(x) {
			x[i] = (in.Low + in.High) / 2
		}
		y, err := ws.step(i, x[i])
		check(s, y, err)
	}
}

// radialSameAsColumns evaluates 300 rows of A and of the A_B^i (A and B
// drawn independently, as Sobol's first columns are) through the radial
// evaluator and whole through columnEval, and checks that they agree to
// the last bit with no point sent the whole way.
func radialSameAsColumns(t *testing.T, name string, p *Problem) {
	t.Helper()
	const n = 300
	a, b := sampleColumns(t, p, n, 1), sampleColumns(t, p, n, 2)
	k := len(a)
	f := p.F.Clone()
	rs := newRadial(f)
	fa, fab := make([]float64, n), make([][]float64, k)
	for i := range fab {
		fab[i] = make([]float64, n)
	}
	if err := rs.eval(fa, fab, a, b, n); err != nil {
		t.Errorf("%s: %v", name, err)
		return
	}
	var rows []float64
	want := make([]float64, n)
	cols := slices.Clone(a)
	for i := -1; i < k; i++ {
		got := fa
		if i >= 0 {
			cols[i], got = b[i], fab[i]
		}
		if err := columnEval(p.F.Clone(), want, cols, n, &rows); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for s := range want {
			if math.Float64bits(got[s]) != math.Float64bits(want[s]) {
				t.Fatalf("%s, input %d, row %d: %v, whole %v", name, i, s, got[s], want[s])
			}
		}
		if i >= 0 {
			cols[i] = a[i]
		}
	}
}

// Sobol' indices of the bid's total over 200 line items (403 inputs) at
// n = 256 on one worker, through one Cones moved from row to row against
// every point evaluated whole (batched, through the loop nodes).
//
//	go test ./sens/ -run '^$' -bench SobolLinesConesVsWhole -benchtime=3x
func BenchmarkSobolLinesConesVsWhole(b *testing.B) {
	prog, _ := loadBid(b, 200, lineItemModel)
	p, err := prog.Problem("total")
	if err != nil {
		b.Fatal(err)
	}
	const n = 256
	run := func(on bool) func() error {
		return withRadial(on, func() error { _, err := Sobol(p, &SobolSettings{N: n, Seed: 1, Workers: 1}); return err })
	}
	cpuPair(b, float64(n*(len(p.Inputs)+2)), "cones", "whole", run(true), run(false))
}

// A model whose cones are too large together (every input of a
// generated model reaches half of its long running total) has no lane
// cones: Sobol evaluates its points whole.
func TestRadialTooLarge(t *testing.T) {
	tp, _ := tapebench.GenModel(60_000, 2000, 4)
	all := make([]int, tp.NumInputs())
	for i := range all {
		all[i] = i
	}
	if _, err := tp.Radial(0, all); !errors.Is(err, tape.ErrRadialSize) {
		t.Errorf("Radial of 2,000 inputs of a 60,000-node chain: %v, want ErrRadialSize", err)
	}
	if _, err := tp.Radial(0, all[:3]); err != nil {
		t.Errorf("Radial of 3 of its inputs: %v", err)
	}
}

// Morris on generated 1,000-node models of 20 and of 200 inputs, 400
// trajectories on one worker, through the cones of its trajectories
// against every point evaluated whole (batched, a trajectory at a time).
//
//	go test ./sens/ -run '^$' -bench MorrisConesVsWhole -benchtime=5x
func BenchmarkMorrisConesVsWhole(b *testing.B) {
	for _, k := range []int{20, 200} {
		b.Run(fmt.Sprintf("inputs=%d", k), func(b *testing.B) {
			t, x := tapebench.GenModel(1000, k, 5)
			p := benchProblem(t, x)
			const r = 400
			run := func(on bool) func() error {
				return withRadial(on, func() error { _, err := Morris(p, &MorrisSettings{R: r, Seed: 1, Workers: 1}); return err })
			}
			cpuPair(b, float64(r*(k+1)), "cones", "whole", run(true), run(false))
		})
	}
}

// Morris of the bid's total over 200 line items (403 inputs), 20
// trajectories on one worker, through one Cones moved along each
// trajectory (Cones.Step) against every point evaluated whole.
//
//	go test ./sens/ -run '^$' -bench MorrisLinesConesVsWhole -benchtime=3x
func BenchmarkMorrisLinesConesVsWhole(b *testing.B) {
	prog, _ := loadBid(b, 200, lineItemModel)
	p, err := prog.Problem("total")
	if err != nil {
		b.Fatal(err)
	}
	const r = 20
	run := func(on bool) func() error {
		return withRadial(on, func() error { _, err := Morris(p, &MorrisSettings{R: r, Seed: 1, Workers: 1}); return err })
	}
	cpuPair(b, float64(r*(len(p.Inputs)+1)), "cones", "whole", run(true), run(false))
}

// withRadial returns f run with the lane cones of Sobol and Morris on or
// off (useRadial), the setting restored after each call.
func withRadial(on bool, f func() error) func() error {
	return func() error {
		defer func(old bool) { useRadial = old }(useRadial)
		useRadial = on
		return f()
	}
}
