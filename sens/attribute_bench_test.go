package sens

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// Attribution on the scale model (tapebench.ScaleModel: products of inputs,
// one line in ten through max), from the baseline to every input at the
// high end of its range, against one gradient of the total, interleaved:
//
//	go test ./sens/ -run '^$' -bench Attribute -benchtime=5x
//
// The ratio is the cost of an attribution in gradients: at least 24 (one
// 8-point panel and its two halves), more where kinks split the path, plus
// the forward passes that find the kinks.
func benchmarkAttribute(b *testing.B, lines int) {
	m, err := LoadModel("scale", tapebench.ScaleModel(lines, false, 1))
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
	x1 := pr.Baseline()
	for i, in := range pr.Inputs {
		x1[i] = in.High
	}
	var res *AttributeResult
	attr := func() error {
		var err error
		res, err = Attribute(pr, &AttributeSettings{FromPoint: x0, ToPoint: x1})
		return err
	}
	g := make([]float64, len(x0))
	grad := func() error { _, err := pr.F.Gradient(g, x0); return err }
	tapebench.Pair(b, 1, 1, "attribute", "gradient", attr, grad)
	b.ReportMetric(float64(res.Quadrature.Gradients), "gradients")
	b.ReportMetric(float64(len(res.Breaks)), "kinks")
	b.ReportMetric(float64(res.Quadrature.Points), "points")
	if !res.Met {
		b.Errorf("residual %v not met", res.ResidualRel)
	}
}

func BenchmarkAttributeSmall(b *testing.B)  { benchmarkAttribute(b, 1_000) }
func BenchmarkAttributeMedium(b *testing.B) { benchmarkAttribute(b, 10_000) }
func BenchmarkAttributeLarge(b *testing.B)  { benchmarkAttribute(b, 100_000) }
