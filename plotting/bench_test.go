package plotting

import (
	"fmt"
	"io"
	"testing"
)

func benchTornado(n int) *Tornado {
	t := &Tornado{Output: "total", Unit: "$", Baseline: 1e6}
	for i := range n {
		s := float64(n-i) * 1000
		t.Bars = append(t.Bars, Bar{
			Name: fmt.Sprintf("input_%03d", i), Low: 1, High: 2, InputUnit: "kg",
			OutLow: 1e6 - 0.6*s, OutHigh: 1e6 + 0.4*s, Min: 1e6 - 0.6*s, Max: 1e6 + 0.4*s,
		})
	}
	return t
}

func benchmarkTornadoSVG(b *testing.B, n int) {
	t := benchTornado(n)
	b.ReportAllocs()
	for b.Loop() {
		if err := t.WriteSVG(io.Discard, nil); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkTornadoSVGSmall(b *testing.B)  { benchmarkTornadoSVG(b, 5) }
func BenchmarkTornadoSVGMedium(b *testing.B) { benchmarkTornadoSVG(b, 20) }
func BenchmarkTornadoSVGLarge(b *testing.B)  { benchmarkTornadoSVG(b, 60) }

func benchmarkTornadoPNG(b *testing.B, n int) {
	t := benchTornado(n)
	b.ReportAllocs()
	for b.Loop() {
		if err := t.WritePNG(io.Discard, nil); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkTornadoPNGSmall(b *testing.B)  { benchmarkTornadoPNG(b, 5) }
func BenchmarkTornadoPNGMedium(b *testing.B) { benchmarkTornadoPNG(b, 20) }
func BenchmarkTornadoPNGLarge(b *testing.B)  { benchmarkTornadoPNG(b, 60) }

func BenchmarkHeatMapSVG(b *testing.B) {
	h := sampleHeatMap(90000)
	b.ReportAllocs()
	for b.Loop() {
		if err := h.WriteSVG(io.Discard, nil); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkDistributionSVG(b *testing.B) {
	d := &Distribution{Output: "total", Unit: "$"}
	for i := range 20000 {
		d.Samples = append(d.Samples, float64((i*7919)%20000))
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := d.WriteSVG(io.Discard, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkHeatMapValidate checks a 1,000 × 1,000 grid, the largest a sweep
// computes.
func BenchmarkHeatMapValidate(b *testing.B) {
	h := &HeatMap{Output: "total", XName: "a", YName: "b"}
	for i := range 1000 {
		h.X = append(h.X, float64(i))
		h.Y = append(h.Y, float64(i))
	}
	for _, y := range h.Y {
		row := make([]float64, len(h.X))
		for i, x := range h.X {
			row[i] = x + y
		}
		h.Z = append(h.Z, row)
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := h.Validate(); err != nil {
			b.Fatal(err)
		}
	}
}
