package tape_test

import (
	"sync"
	"testing"

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
