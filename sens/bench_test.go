package sens

import (
	"sync"
	"testing"
)

// The comparisons report tape-ns, go-ns and their ratio, measured
// interleaved (benchPair). Run them with
//
//	go test ./sens/ -run '^$' -bench . -benchtime=200ms

// Scalar forward: the tape against the same cost model written in Go,
// with the learning curve and economy factors (Cost) and with
// arithmetic only (Arith).
func BenchmarkCostScalar(b *testing.B) {
	benchScalar(b, buildCostModel(false), costModelGo, benchCostBaseline())
}

func BenchmarkArithScalar(b *testing.B) {
	benchScalar(b, buildCostModel(true), arithModelGo, benchCostBaseline())
}

// Batched forward over 4096 samples: the tape's blocked sweep against a
// loop over samples calling the Go function.
func BenchmarkCostBatch(b *testing.B) {
	benchBatch(b, buildCostModel(false), costModelGo, benchSamples(benchBatchN, 7), benchBatchN)
}

func BenchmarkArithBatch(b *testing.B) {
	benchBatch(b, buildCostModel(true), arithModelGo, benchSamples(benchBatchN, 7), benchBatchN)
}

// Batched gradient of the cost model over 4096 samples.
func BenchmarkCostGradientBatch(b *testing.B) {
	benchGradientBatch(b, buildCostModel(false), benchSamples(benchBatchN, 7), benchBatchN)
}

// Gradient (forward + reverse) against forward on generated models of
// 1e3, 1e5 and 1e6 nodes.

var (
	genOnce   [3]sync.Once
	genTapes  [3]*Tape
	genInputs [3][]float64
)

func genSized(i int) (*Tape, []float64) {
	genOnce[i].Do(func() {
		sz := benchSizes[i]
		genTapes[i], genInputs[i] = genModel(sz.nodes, sz.nIn, 1)
	})
	return genTapes[i], genInputs[i]
}

func benchmarkSweeps(b *testing.B, size int) {
	t, x := genSized(size)
	benchSweeps(b, t, x)
}

func BenchmarkSweepsSmall(b *testing.B)  { benchmarkSweeps(b, 0) }
func BenchmarkSweepsMedium(b *testing.B) { benchmarkSweeps(b, 1) }
func BenchmarkSweepsLarge(b *testing.B)  { benchmarkSweeps(b, 2) }

// Reverse mode against gonum fd.Gradient on a model with 10,000 inputs;
// fd needs 20,001 evaluations, so it runs once, and the speed-up is
// reported as a metric.
func BenchmarkReverseVsFD(b *testing.B) {
	t, x := genModel(30_000, 10_000, 3)
	benchReverseVsFD(b, t, x)
}
