package tape

// Internal helpers for the external tests (models_test.go).

var (
	FDGradient  = tapeFD
	OutputFunc  = tapeFunc
	BatchAgrees = tapeBatchAgrees
)

const MinBlock = minBlock

// BlockWidth returns the width of t's blocks of samples: below MinBlock, the
// batched passes run sample by sample.
func (t *Tape) BlockWidth() int { return t.bw }

// GradientByNodes is Gradient as it was before reverseChain, for the
// benchmark that compares them: Eval, then the pass node by node, each
// adjoint set back to 0 once read (the inputs' and constants' cleared
// first), which is what a long tape ran.
func (t *Tape) GradientByNodes(dst, x []float64, i int) (float64, error) {
	f, err := t.Eval(x, i)
	if err != nil {
		return f, err
	}
	p := t.p
	out, end := int(p.outs[i]), p.end(i)
	if t.adjUsed {
		clear(t.adj)
		t.adjUsed = false
	} else {
		clear(t.adj[:p.start])
	}
	g := t.adj[:end]
	g[out] = 1
	p.reverseNodes(g, t.vals[:end], t.adj, dst, out, true, nil)
	p.inputAdjoints(dst, g)
	if !allFinite(dst) {
		return t.Gradient(dst, x, i)
	}
	return f, nil
}
