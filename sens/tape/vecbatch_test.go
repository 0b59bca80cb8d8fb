package tape

import (
	"fmt"
	"slices"
	"testing"
)

// The batched passes of a tape with loop nodes (ForwardBatch,
// ForwardColumns, GradientBatch) agree with Eval and Gradient to the bit
// and report their errors at the same sample, both in blocks of samples
// (200 lines) and sample by sample (3,000 lines: a tape too long for a
// useful block), and allocate nothing after their first call.
func TestVecBatchPasses(t *testing.T) {
	for _, n := range []int{200, 3000} {
		b := NewBuilder()
		outs, x0, _ := passModel(b, n)
		tp := b.Tape(outs...)
		ref := tp.Clone()
		nIn := len(x0)
		const ns = 11
		xs := make([]float64, ns*nIn)
		for s := range ns {
			x := xs[s*nIn : (s+1)*nIn]
			copy(x, x0)
			for j := range 3 * n {
				x[j] *= 1 + float64((s+j)%7)/16
			}
			if s == 7 {
				// Every line's cost negative: the grouped sums' square
				// roots fail from this sample on (output 12), the other
				// outputs do not.
				for j := n; j < 2*n; j++ {
					x[j] = -x[j]
				}
			}
		}
		cols := make([][]float64, nIn)
		for j := range cols {
			cols[j] = make([]float64, ns)
			for s := range ns {
				cols[j][s] = xs[s*nIn+j]
			}
		}
		out, grads := make([]float64, ns), make([]float64, ns*nIn)
		for i := range tp.NumOutputs() {
			name := fmt.Sprintf("n=%d output %d", n, i)
			fv, gv := make([]float64, ns), make([]float64, ns*nIn)
			wantErr, first := errKey(nil), ns
			for s := range ns {
				var err error
				if fv[s], err = ref.Eval(xs[s*nIn:(s+1)*nIn], i); err != nil {
					wantErr, first = withSample(err, s), s
					break
				}
				if _, err = ref.Gradient(gv[s*nIn:(s+1)*nIn], xs[s*nIn:(s+1)*nIn], i); err != nil {
					t.Fatalf("%s sample %d: Eval succeeds, Gradient fails: %v", name, s, err)
				}
			}
			for pass, run := range []func() error{
				func() error { return tp.ForwardBatch(out, xs, ns, i) },
				func() error { return tp.ForwardColumns(out, cols, ns, i) },
			} {
				clear(out)
				if err := run(); errKey(err) != wantErr {
					t.Errorf("%s pass %d: %s, Eval %s", name, pass, errKey(err), wantErr)
				}
				if !slices.EqualFunc(out[:first], fv[:first], sameBits) {
					t.Errorf("%s pass %d: values differ from Eval's", name, pass)
				}
			}
			if first < ns {
				continue
			}
			if err := tp.GradientBatch(out, grads, xs, ns, i); err != nil {
				t.Errorf("%s: GradientBatch: %v", name, err)
			}
			if !slices.EqualFunc(out, fv, sameBits) || !slices.EqualFunc(grads, gv, sameBits) {
				t.Errorf("%s: GradientBatch differs from Gradient", name)
			}
			for pass, run := range []func() error{
				func() error { return tp.ForwardBatch(out, xs, ns, i) },
				func() error { return tp.ForwardColumns(out, cols, ns, i) },
				func() error { return tp.GradientBatch(out, grads, xs, ns, i) },
			} {
				if a := testing.AllocsPerRun(2, func() { _ = run() }); a != 0 {
					t.Errorf("%s pass %d: %v allocations a call", name, pass, a)
				}
			}
		}
		if w := tp.bw; (n < 1000) != (w >= minBlock) {
			t.Errorf("n=%d: block width %d", n, w)
		}
	}
}
