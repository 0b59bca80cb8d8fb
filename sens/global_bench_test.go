package sens

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// Benchmarks of the sampling analyses, each against the plain evaluations
// it cannot do without, measured interleaved (tapebench.Pair) so that load on a
// shared machine affects both sides alike:
//
//	go test ./sens/ -run '^$' -bench 'Simulate|SobolIndices|Screen' -benchtime=3x

// cpuPair is tapebench.Pair, reporting also "cpu-ratio": the median over
// the pairs of calls of the ratio of the process's CPU time (every thread,
// the garbage collector's included) spent in a to that spent in ref. Run
// on one worker, it measures the work done, which other processes on a
// loaded machine do not inflate as they do the time.
func cpuPair(b *testing.B, per float64, aName, refName string, a, ref func() error) {
	var ta, tr []float64
	timed := func(f func() error, acc *[]float64) func() error {
		return func() error {
			start := processCPU()
			err := f()
			*acc = append(*acc, float64(processCPU()-start))
			return err
		}
	}
	tapebench.Pair(b, 1, per, aName, refName, timed(a, &ta), timed(ref, &tr))
	if processCPU() < 0 {
		return
	}
	ratio := make([]float64, min(len(ta), len(tr)))
	for i := range ratio {
		ratio[i] = ta[i] / tr[i]
	}
	slices.Sort(ratio)
	b.ReportMetric(ratio[len(ratio)/2], "cpu-ratio")
}

// tapeFunction is a Tape's output 0 as a Function, reading columns in
// place as a compiled model's Fn does.
type tapeFunction struct{ t *tape.Tape }

func (f *tapeFunction) Eval(x []float64) (float64, error) { return f.t.Eval(x, 0) }
func (f *tapeFunction) Gradient(dst, x []float64) (float64, error) {
	return f.t.Gradient(dst, x, 0)
}
func (f *tapeFunction) EvalBatch(dst, xs []float64, n int) error {
	return f.t.ForwardBatch(dst, xs, n, 0)
}
func (f *tapeFunction) EvalColumns(dst []float64, cols [][]float64, n int) error {
	return f.t.ForwardColumns(dst[:n], cols, n, 0)
}
func (f *tapeFunction) Clone() Function { return &tapeFunction{f.t.Clone()} }

// benchProblem makes a problem of a tape whose inputs have baselines x,
// giving the inputs distributions in turn: normal, uniform, triangular,
// PERT and lognormal, each about ±20% of the baseline.
func benchProblem(t *tape.Tape, x []float64) *Problem {
	p := &Problem{Output: "y", F: &tapeFunction{t}}
	for i, v := range x {
		var d Dist
		var err error
		switch i % 5 {
		case 0:
			d, err = NewDist("normal", []float64{v, 0.1 * v})
		case 1:
			d, err = NewDist("uniform", []float64{0.8 * v, 1.2 * v})
		case 2:
			d, err = NewDist("triangular", []float64{0.8 * v, v, 1.3 * v})
		case 3:
			d, err = NewDist("pert", []float64{0.8 * v, v, 1.3 * v})
		case 4:
			d, err = NewDist("lognormal", []float64{v, 0.1 * v})
		}
		if err != nil {
			panic(err)
		}
		p.Inputs = append(p.Inputs, NewInput(string(rune('a'+i%26))+string(rune('0'+i/26%10))+string(rune('0'+i/260)), v, v, v, d))
	}
	return p
}

// plainBatch returns a function that evaluates t at n random samples
// around x (drawn once), in batches of tapebench.BatchN.
func plainBatch(t *tape.Tape, x []float64, n int) func() error {
	k := len(x)
	m := min(n, tapebench.BatchN)
	xs := make([]float64, m*k)
	rng := rand.New(rand.NewPCG(1, 2))
	for s := range m {
		for j, v := range x {
			xs[s*k+j] = v * (0.8 + 0.4*rng.Float64())
		}
	}
	out := make([]float64, m)
	return func() error {
		for done := 0; done < n; done += m {
			c := min(m, n-done)
			if err := t.ForwardBatch(out[:c], xs[:c*k], c, 0); err != nil {
				return err
			}
		}
		return nil
	}
}

// Simulate on the cost model (17 inputs of five distributions), one
// worker, against the batched forward pass over as many samples: the
// per-sample cost of sampling, statistics and the rank-correlation table.
func BenchmarkSimulateVsBatch(b *testing.B) {
	t, x := tapebench.CostModel(false), tapebench.CostBaseline()
	p := benchProblem(t, x)
	const n = 20_000
	sim := func() error { _, err := Simulate(p, &SimulationSettings{N: n, Seed: 1, Workers: 1}); return err }
	cpuPair(b, n, "simulate", "batch", sim, plainBatch(t, x, n))
}

// The same on a 1,000-node model of 20 inputs, where evaluation outweighs
// drawing the inputs.
func BenchmarkSimulateLargeVsBatch(b *testing.B) {
	t, x := tapebench.GenModel(1000, 20, 5)
	p := benchProblem(t, x)
	const n = 20_000
	sim := func() error { _, err := Simulate(p, &SimulationSettings{N: n, Seed: 1, Workers: 1}); return err }
	cpuPair(b, n, "simulate", "batch", sim, plainBatch(t, x, n))
}

// Simulate on the bid's total over 200 line items (403 inputs), 2,000
// samples on one worker, against the batched forward pass of the model over
// as many samples given as rows (EvalBatch, as plainBatch), in chunks of
// Simulate's size.
//
//	go test ./sens/ -run '^$' -bench SimulateLinesVsBatch -benchtime=10x -benchmem
func BenchmarkSimulateLinesVsBatch(b *testing.B) {
	prog, _ := loadBid(b, 200, lineItemModel)
	p, err := prog.Problem("total")
	if err != nil {
		b.Fatal(err)
	}
	const n = 2000
	k := len(p.Inputs)
	m := chunkRows(k)
	f := p.F.Clone()
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, m*k)
	for s := range m {
		for i, in := range p.Inputs {
			xs[s*k+i] = in.Low + (in.High-in.Low)*rng.Float64()
		}
	}
	out := make([]float64, m)
	batch := func() error {
		for done := 0; done < n; done += m {
			c := min(m, n-done)
			if err := f.EvalBatch(out[:c], xs[:c*k], c); err != nil {
				return err
			}
		}
		return nil
	}
	sim := func() error { _, err := Simulate(p, &SimulationSettings{N: n, Seed: 1, Workers: 1}); return err }
	cpuPair(b, n, "simulate", "batch", sim, batch)
}

// Simulate on one worker against two: the parallel speed-up (ratio, which
// needs two idle cores to show), and the work the second worker adds
// (cpu-ratio, one worker's CPU time over two's: 1 when splitting the
// samples costs nothing, less by the share of work the split adds).
func BenchmarkSimulateParallel(b *testing.B) {
	t, x := tapebench.CostModel(false), tapebench.CostBaseline()
	p := benchProblem(t, x)
	const n = 20_000
	run := func(w int) func() error {
		return func() error { _, err := Simulate(p, &SimulationSettings{N: n, Seed: 1, Workers: w}); return err }
	}
	cpuPair(b, n, "one", "two", run(1), run(2))
}

// Sobol' indices of a 20-input, 1,000-node model at n = 8192 on one worker
// against n·(k+2) plain batched evaluations.
func BenchmarkSobolIndicesVsBatch(b *testing.B) {
	t, x := tapebench.GenModel(1000, 20, 5)
	p := benchProblem(t, x)
	const n = 8192
	evals := n * (len(x) + 2)
	sob := func() error { _, err := Sobol(p, &SobolSettings{N: n, Seed: 1, Workers: 1}); return err }
	cpuPair(b, float64(evals), "sobol", "batch", sob, plainBatch(t, x, evals))
}

// Screening of a 100,000-input, 1e6-node model at n = 1000 on one worker
// against 1,000 plain forward evaluations.
func BenchmarkScreenVsForward(b *testing.B) {
	t, x := tapebench.GenModel(1_000_000, 100_000, 1)
	p := benchProblem(t, x)
	const n = 1000
	scr := func() error { _, err := Screen(p, &ScreenSettings{N: n, Seed: 1, Workers: 1}); return err }
	fwd := func() error {
		for range n {
			if err := t.Forward(x); err != nil {
				return err
			}
		}
		return nil
	}
	tapebench.Pair(b, 1, n, "screen", "forward", scr, fwd)
}

// Ranking 20,000 samples of a normal distribution (the rank correlations of
// Simulate sort every input's samples), per sample.
func BenchmarkRanks(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 20_000)
	for i := range xs {
		xs[i] = 100 + 20*rng.NormFloat64()
	}
	var rk ranker
	dst := make([]float64, len(xs))
	b.ReportAllocs()
	for b.Loop() {
		rk.ranks(dst, xs)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(xs)), "ns/sample")
}
