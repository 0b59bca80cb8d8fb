package tape_test

import (
	"errors"
	"math"
	"slices"
	"sync"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// Tests on the benchmark models of package tapebench, which imports this
// package, hence an external test package.

func TestTapeNoAllocs(t *testing.T) {
	tp := tapebench.CostModel(false)
	x := tapebench.CostBaseline()
	g := make([]float64, len(x))
	const n = 1000
	xs := tapebench.Samples(n, 3)
	cols := tapebench.Columns(xs, n)
	out, grads := make([]float64, n), make([]float64, n*len(x))
	big, xb := tapebench.GenModel(40_000, 1000, 5) // runs sample by sample
	xbs := make([]float64, 0, 10*len(xb))
	for range 10 {
		xbs = append(xbs, xb...)
	}
	outb, gradsb := make([]float64, 10), make([]float64, 10*len(xb))
	for _, tc := range []struct {
		name string
		f    func() error
	}{
		{"Forward", func() error { return tp.Forward(x) }},
		{"Eval", func() error { _, err := tp.Eval(x, 0); return err }},
		{"Reverse", func() error { tp.Reverse(g, 0); return nil }},
		{"Gradient", func() error { _, err := tp.Gradient(g, x, 0); return err }},
		{"ForwardBatch", func() error { return tp.ForwardBatch(out, xs, n, 0) }},
		{"ForwardColumns", func() error { return tp.ForwardColumns(out, cols, n, 0) }},
		{"GradientBatch", func() error { return tp.GradientBatch(out, grads, xs, n, 0) }},
		{"ForwardBatch long tape", func() error { return big.ForwardBatch(outb, xbs, 10, 0) }},
		{"GradientBatch long tape", func() error { return big.GradientBatch(outb, gradsb, xbs, 10, 0) }},
	} {
		var err error
		allocs := testing.AllocsPerRun(5, func() { err = tc.f() })
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
		}
		if allocs != 0 {
			t.Errorf("%s: %v allocations per call, want 0", tc.name, allocs)
		}
	}
	if tp.BlockWidth() < tape.MinBlock || big.BlockWidth() >= tape.MinBlock {
		t.Errorf("block widths %d and %d: want the blocked path for the cost model and sample by sample for %d nodes", tp.BlockWidth(), big.BlockWidth(), big.Len())
	}
}

// The benchmark's hand-written model is the tape's model, to the bit.
func TestTapeCostModelMatchesGo(t *testing.T) {
	for _, arith := range []bool{false, true} {
		tp := tapebench.CostModel(arith)
		f := tapebench.CostModelGo
		if arith {
			f = tapebench.ArithModelGo
		}
		const n = 500
		xs := tapebench.Samples(n, 11)
		out := make([]float64, n)
		if err := tp.ForwardBatch(out, xs, n, 0); err != nil {
			t.Fatal(err)
		}
		k := tp.NumInputs()
		g := make([]float64, k)
		for s := 0; s < n; s++ {
			x := xs[s*k : (s+1)*k]
			want := f(x)
			if err := tp.Forward(x); err != nil || tp.Output(0) != want || out[s] != want {
				t.Fatalf("arith=%v sample %d: tape %v batched %v, Go %v (%v)", arith, s, tp.Output(0), out[s], want, err)
			}
			if s%50 == 0 {
				if _, err := tp.Gradient(g, x, 0); err != nil {
					t.Fatal(err)
				}
				ref := tape.FDGradient(f, x, 1)
				for j := range g {
					if !scalar.EqualWithinAbsOrRel(g[j], ref[j], 1e-6*math.Abs(want)/math.Max(1, math.Abs(x[j])), 1e-5) {
						t.Errorf("arith=%v sample %d: d/d%s = %v, fd %v", arith, s, tapebench.CostInputs[j].Name, g[j], ref[j])
					}
				}
			}
		}
	}
}

func TestTapeGeneratedModels(t *testing.T) {
	for _, size := range []int{1_000, 30_000} {
		tp, x := tapebench.GenModel(size, size/10, 9)
		if bpn := float64(tp.Bytes()) / float64(tp.Len()); bpn > 32 {
			t.Errorf("%d nodes: %.1f bytes per node, want <= 32", tp.Len(), bpn)
		}
		g := make([]float64, len(x))
		if _, err := tp.Gradient(g, x, 0); err != nil {
			t.Fatal(err)
		}
		// Spot-check a few partials against central differences.
		f := tape.OutputFunc(tp, 0)
		for _, j := range []int{0, len(x) / 3, len(x) - 1} {
			h := 1e-6 * math.Max(1, math.Abs(x[j]))
			xx := slices.Clone(x)
			want := fd.Derivative(func(v float64) float64 { xx[j] = v; return f(xx) }, x[j], &fd.Settings{Formula: fd.Central, Step: h})
			if !scalar.EqualWithinAbsOrRel(g[j], want, 1e-6, 1e-5) {
				t.Errorf("%d nodes: d/dx%d = %v, fd %v", tp.Len(), j, g[j], want)
			}
		}
		tape.BatchAgrees(t, tp, x, size)
	}
}

// Clones share the program and evaluate concurrently (run with -race).
func TestTapeCloneConcurrent(t *testing.T) {
	tp, x := tapebench.GenModel(5_000, 200, 4)
	want := make([]float64, len(x))
	if _, err := tp.Gradient(want, x, 0); err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	errs := make([]error, 4)
	for w := range errs {
		c := tp.Clone()
		wg.Add(1)
		go func() {
			defer wg.Done()
			g := make([]float64, len(x))
			for range 20 {
				if _, err := c.Gradient(g, x, 0); err != nil {
					errs[w] = err
					return
				}
				if !slices.Equal(g, want) {
					errs[w] = errors.New("clone gradient differs")
					return
				}
			}
		}()
	}
	for range 20 { // the original keeps working meanwhile
		if err := tp.Forward(x); err != nil {
			t.Error(err)
		}
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			t.Error(err)
		}
	}
}
