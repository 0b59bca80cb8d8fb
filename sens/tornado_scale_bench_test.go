package sens

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// The tornado of the scale model's total (tapebench.ScaleModel, the model of
// `nudge bench scale`) against one forward evaluation of the total,
// interleaved: the ratio is the tornado's cost in whole-tape forward
// evaluations, by time (ratio) and by the process's CPU time (cpu-ratio),
// each to be multiplied by 50. 100,000 lines, or NUDGE_SCALE_LINES:
//
//	go test ./sens/ -run '^$' -bench ScaleTornado -benchtime=3x
func benchmarkScaleTornado(b *testing.B, ifs bool) {
	m, err := LoadModel("scale", tapebench.ScaleModel(scaleLines(b), ifs, 1))
	if err != nil {
		b.Fatal(err)
	}
	p, err := m.Compile()
	if err != nil {
		b.Fatal(err)
	}
	pr, err := p.Problem("total")
	if err != nil {
		b.Fatal(err)
	}
	x0 := pr.Baseline()
	var res *TornadoResult
	tornado := func() error {
		var err error
		res, err = Tornado(pr, &TornadoSettings{Top: 10})
		return err
	}
	// Enough forward evaluations to take about as long as a tornado would
	// at the target, so that both sides of a pair see the same load.
	const evals = 50
	forward := func() error {
		for range evals {
			if _, err := pr.F.Eval(x0); err != nil {
				return err
			}
		}
		return nil
	}
	cpuPair(b, 1, "tornado", "forward50", tornado, forward)
	b.ReportMetric(float64(res.Evaluations), "points")
}

func BenchmarkScaleTornado(b *testing.B)   { benchmarkScaleTornado(b, false) }
func BenchmarkScaleTornadoIf(b *testing.B) { benchmarkScaleTornado(b, true) }
