package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Listing is the compiled output of a problem written out for an evaluator
// outside Go (the kernel's what-if panel evaluates it in a web page): the
// operations between the inputs that move and the output, everything else
// folded into constants (tape.Listing), the factor from the tape's output to
// the output's unit, and where each operation stands in the source.
type Listing struct {
	*tape.Listing
	// Scale multiplies the listing's output into the problem's unit.
	Scale float64
	// Where names, for each of Listing.Pos, the place in the source:
	// "model.nudge:3:12 (unit_cost)".
	Where []string
}

// Listing returns the listing of the problem's output in which the inputs
// free (indices into p.Inputs) move and the others keep their values in x
// (len(p.Inputs), in the inputs' units). A listing of more than limit slots
// (limit > 0) is not made: an error that wraps tape.ErrListingTooLarge.
func (p *Problem) Listing(x []float64, free []int, limit int) (*Listing, error) {
	var fn *Fn
	switch f := p.F.(type) {
	case *Fn:
		fn = f
	case *subFn:
		fn = f.fn
	default:
		return nil, fmt.Errorf("%s is not a compiled formula", p.Output)
	}
	if len(x) != len(p.Inputs) {
		return nil, fmt.Errorf("%d values for %d inputs", len(x), len(p.Inputs))
	}
	full, tfree := x, free
	if p.index != nil {
		full = p.prog.Baseline()
		for i, j := range p.index {
			full[j] = x[i]
		}
		tfree = make([]int, len(free))
		for i, j := range free {
			tfree[i] = p.index[j]
		}
	}
	for _, j := range free {
		if j < 0 || j >= len(p.Inputs) {
			return nil, fmt.Errorf("no input %d", j)
		}
	}
	tl, err := fn.tape.Listing(full, fn.f.out, tfree, limit)
	if err != nil {
		return nil, err
	}
	// The listing's free inputs are the problem's.
	tl.Free = append([]int(nil), free...)
	L := &Listing{Listing: tl, Scale: fn.scale}
	for _, ps := range tl.Pos {
		w := ""
		if int(ps) >= 0 && int(ps) < fn.prog.pos.len() {
			e := fn.prog.pos.at(int(ps))
			w = e.file.Position(e.pos).String()
			if e.formula != "" {
				w += " (" + e.formula + ")"
			}
		}
		L.Where = append(L.Where, w)
	}
	return L, nil
}
