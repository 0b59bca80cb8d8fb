package tapebench

import "github.com/nudge-dev/nudge/sens/tape"

// HVPVsGradient measures one Hessian-vector product (tape.Hessian.Vectors
// with one direction: forward, tangent and second-order reverse passes)
// against one gradient (t.Gradient: forward and reverse passes), the two
// interleaved (Pair), and reports their ratio. The direction is all ones,
// so every node carries a tangent.
func HVPVsGradient(b B, t *tape.Tape, x []float64) {
	n := t.NumInputs()
	g := make([]float64, n)
	dir := make([]float64, n)
	for j := range dir {
		dir[j] = 1
	}
	hv := make([]float64, n)
	h := tape.NewHessian(t)
	hvp := func() error { _, err := h.Vectors(hv, nil, x, dir, 1, 0); return err }
	grad := func() error { _, err := t.Gradient(g, x, 0); return err }
	Pair(b, chunk(timeOne(hvp)), 1, "hvp", "gradient", hvp, grad)
}
