package sens

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestGradientBatch checks GradientBatch against one Gradient a point, to
// the last bit, for a compiled formula of every input and for one of some
// inputs, and that a domain error names its point's inputs.
func TestGradientBatch(t *testing.T) {
	p := compileSrc(t, `
input a = 2 [h] (1..3)
input b = 60 [$/h] (50..70)
input c = 4 (1..9)
input unused = 1
y = a * b * ln(c) + sqrt(c) * (1 [$])
z = a * b / (c - 5)
`)
	rng := rand.New(rand.NewPCG(1, 2))
	for _, name := range []string{"y", "z"} {
		pr, err := p.Problem(name)
		if err != nil {
			t.Fatal(err)
		}
		dim := len(pr.Inputs)
		const n = 300
		xs := make([]float64, n*dim)
		for s := 0; s < n; s++ {
			for i, in := range pr.Inputs {
				xs[s*dim+i] = in.Low + (in.High-in.Low)*rng.Float64()
			}
		}
		if name == "z" {
			xs[7*dim+2] = 5 // c - 5 = 0 at point 7
		}
		dst, grads := make([]float64, n), make([]float64, n*dim)
		err = GradientBatch(pr.F, dst, grads, xs, n)
		g := make([]float64, dim)
		for s := 0; s < n; s++ {
			y, gerr := pr.F.Gradient(g, xs[s*dim:(s+1)*dim])
			if gerr != nil {
				if err == nil || err.Error() != gerr.Error() {
					t.Errorf("%s, point %d: batched error %v, Gradient %v", name, s, err, gerr)
				}
				break
			}
			if err != nil {
				continue // the failing point's block is not filled in
			}
			if math.Float64bits(dst[s]) != math.Float64bits(y) {
				t.Fatalf("%s, point %d: batched %v, Gradient %v", name, s, dst[s], y)
			}
			for i := range g {
				if math.Float64bits(grads[s*dim+i]) != math.Float64bits(g[i]) {
					t.Fatalf("%s, point %d: batched gradient %v, Gradient %v", name, s, grads[s*dim:(s+1)*dim], g)
				}
			}
		}
		if name == "z" && err == nil {
			t.Errorf("z: no error at the point where c = 5")
		}
	}
}
