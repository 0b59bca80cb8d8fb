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
