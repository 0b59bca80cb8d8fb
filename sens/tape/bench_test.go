package tape_test

import (
	"slices"
	"sync"
	"testing"
	"time"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// The bodies are package tapebench's, which `nudge bench` runs too. The
// comparisons report tape-ns, go-ns and their ratio, measured interleaved
// (tapebench.Pair). Run them with
//
//	go test ./sens/tape/ -run '^$' -bench . -benchtime=200ms

// Scalar forward pass: the tape against the same cost model written in Go,
// with the learning curve and economy factors (Cost) and with arithmetic
// only (Arith).
func BenchmarkCostScalar(b *testing.B) {
	tapebench.ForwardVsGo(b, tapebench.CostModel(false), tapebench.CostModelGo, tapebench.CostBaseline())
}

func BenchmarkArithScalar(b *testing.B) {
	tapebench.ForwardVsGo(b, tapebench.CostModel(true), tapebench.ArithModelGo, tapebench.CostBaseline())
}

// Batched forward pass over 4096 samples: the tape's blocked pass against a
// loop over samples calling the Go function.
func BenchmarkCostBatch(b *testing.B) {
	tapebench.BatchVsGo(b, tapebench.CostModel(false), tapebench.CostModelGo, tapebench.Samples(tapebench.BatchN, 7), tapebench.BatchN)
}

func BenchmarkArithBatch(b *testing.B) {
	tapebench.BatchVsGo(b, tapebench.CostModel(true), tapebench.ArithModelGo, tapebench.Samples(tapebench.BatchN, 7), tapebench.BatchN)
}

// The same with the vector kernels turned off: in a GOEXPERIMENT=simd
// build, ArithBatch and ArithBatchPureGo give both figures in one run.
func BenchmarkArithBatchPureGo(b *testing.B) {
	defer tape.SetVectorKernels(tape.SetVectorKernels(false))
	tapebench.BatchVsGo(b, tapebench.CostModel(true), tapebench.ArithModelGo, tapebench.Samples(tapebench.BatchN, 7), tapebench.BatchN)
}

func BenchmarkCostBatchPureGo(b *testing.B) {
	defer tape.SetVectorKernels(tape.SetVectorKernels(false))
	tapebench.BatchVsGo(b, tapebench.CostModel(false), tapebench.CostModelGo, tapebench.Samples(tapebench.BatchN, 7), tapebench.BatchN)
}

// Batched gradient of the cost model over 4096 samples.
func BenchmarkCostGradientBatch(b *testing.B) {
	tapebench.GradientBatch(b, tapebench.CostModel(false), tapebench.Samples(tapebench.BatchN, 7), tapebench.BatchN)
}

// Gradient (forward and reverse passes) against the forward pass on
// generated models of 1e3, 1e5 and 1e6 nodes.

var (
	genOnce   [3]sync.Once
	genTapes  [3]*tape.Tape
	genInputs [3][]float64
)

func genSized(i int) (*tape.Tape, []float64) {
	genOnce[i].Do(func() {
		sz := tapebench.Sizes[i]
		genTapes[i], genInputs[i] = tapebench.GenModel(sz.Nodes, sz.Inputs, 1)
	})
	return genTapes[i], genInputs[i]
}

func benchmarkPasses(b *testing.B, size int) {
	t, x := genSized(size)
	tapebench.GradientVsForward(b, t, x)
}

// The gradient of 10^6 nodes against the forward pass and against the
// gradient as it was before the long tapes' reverse pass (reverseChain),
// whose pass went node by node through the adjoint buffer
// (GradientByNodes): the three interleaved call by call, each timed by the
// clock and by the process's CPU time, which other processes on a loaded
// machine do not inflate (though they still share its caches). Reports the
// median time of each, in ns, and the medians of the ratios: gradient and
// before over forward, and gradient over before.
//
//	go test ./sens/tape/ -run '^$' -bench GradientLong -benchtime=40x -count=3
func BenchmarkGradientLong(b *testing.B) {
	t, x := genSized(2)
	g := make([]float64, t.NumInputs())
	sides := []func() error{
		func() error { return t.Forward(x) },
		func() error { _, err := t.Gradient(g, x, 0); return err },
		func() error { _, err := t.GradientByNodes(g, x, 0); return err },
	}
	names := []string{"forward", "gradient", "before"}
	want := make([]float64, len(g))
	for i := 2; i >= 1; i-- { // the two gradients agree to the bit
		if err := sides[i](); err != nil {
			b.Fatal(err)
		}
		if i == 2 {
			copy(want, g)
		} else if !slices.Equal(g, want) {
			b.Fatal("the gradient differs from the pass node by node")
		}
	}
	b.ReportAllocs()
	const keep = 1 << 10 // the last rounds' times
	var wall, cpu [3][]float64
	for i := range wall {
		wall[i], cpu[i] = make([]float64, 0, keep), make([]float64, 0, keep)
	}
	for n := 0; b.Loop(); n++ {
		for i, f := range sides {
			s, c := time.Now(), processCPU()
			if err := f(); err != nil {
				b.Fatal(err)
			}
			w, u := float64(time.Since(s)), float64(processCPU()-c)
			if len(wall[i]) < keep {
				wall[i], cpu[i] = append(wall[i], w), append(cpu[i], u)
			} else {
				wall[i][n%keep], cpu[i][n%keep] = w, u
			}
		}
	}
	b.StopTimer()
	med := func(xs []float64) float64 {
		xs = slices.Clone(xs)
		slices.Sort(xs)
		return xs[len(xs)/2]
	}
	ratio := func(ts [3][]float64, i, j int) float64 {
		r := make([]float64, len(ts[i]))
		for k := range r {
			r[k] = ts[i][k] / ts[j][k]
		}
		return med(r)
	}
	for i, n := range names {
		b.ReportMetric(med(wall[i]), n+"-ns")
	}
	b.ReportMetric(ratio(wall, 1, 0), "ratio")
	b.ReportMetric(ratio(wall, 2, 0), "before-ratio")
	b.ReportMetric(ratio(wall, 1, 2), "gradient/before")
	if processCPU() >= 0 {
		for i, n := range names {
			b.ReportMetric(med(cpu[i]), n+"-cpu-ns")
		}
		b.ReportMetric(ratio(cpu, 1, 0), "cpu-ratio")
		b.ReportMetric(ratio(cpu, 2, 0), "before-cpu-ratio")
		b.ReportMetric(ratio(cpu, 1, 2), "cpu-gradient/before")
	}
}

func BenchmarkPassesSmall(b *testing.B)  { benchmarkPasses(b, 0) }
func BenchmarkPassesMedium(b *testing.B) { benchmarkPasses(b, 1) }
func BenchmarkPassesLarge(b *testing.B)  { benchmarkPasses(b, 2) }

// Reverse mode against gonum fd.Gradient on a model with 10,000 inputs; fd
// needs 20,001 evaluations, so it runs once, and the speed-up is reported as
// a metric.
func BenchmarkReverseVsFD(b *testing.B) {
	t, x := tapebench.GenModel(30_000, 10_000, 3)
	tapebench.ReverseVsFD(b, t, x)
}

// A Hessian-vector product (forward-over-reverse) against a gradient on
// the generated models of 1e3 and 1e5 nodes.
func BenchmarkHVPSmall(b *testing.B) {
	t, x := genSized(0)
	tapebench.HVPVsGradient(b, t, x)
}

func BenchmarkHVPMedium(b *testing.B) {
	t, x := genSized(1)
	tapebench.HVPVsGradient(b, t, x)
}
