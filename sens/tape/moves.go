package tape

import (
	"fmt"
	"math"
	"slices"
)

// Moves evaluates one output of a tape at points that differ from a base
// point in one or two inputs, for a tape without cones (see Cones; a tape
// of loop nodes): it loads the base once and, for each point, sets the
// inputs that move, runs the output's nodes and puts the inputs back, so a
// point costs the output's nodes but not a copy of every input. The values
// and errors are those of Eval at the same points, to the last bit: the
// same pass over the same values (no pass writes an input's slot).
//
// A Moves is not safe for concurrent use.
type Moves struct {
	t    *Tape // a clone of its own, its input slots holding the base
	out  int
	base []float64
}

// Moves returns an evaluator of output i around the base inputs x.
func (t *Tape) Moves(x []float64, i int) *Moves {
	c := t.Clone()
	c.loadInputs(x)
	return &Moves{t: c, out: i, base: slices.Clone(x)}
}

// Eval returns output i at the base with input i set to vi and, when
// j >= 0, input j set to vj (i < 0 is the base itself), or the
// *DomainError that Eval would return there.
func (m *Moves) Eval(i int, vi float64, j int, vj float64) (float64, error) {
	t := m.t
	v := t.vals
	if i >= len(m.base) || j >= len(m.base) {
		panic(fmt.Sprintf("tape: input %d or %d moved, tape has %d", i, j, len(m.base)))
	}
	if i >= 0 {
		v[i] = vi
	}
	if j >= 0 {
		v[j] = vj
	}
	bad := t.exec(m.out, t.p.end(m.out))
	err := t.check(bad, t.p.outs[m.out:m.out+1], v, 1, 0, -1)
	y := v[t.p.outs[m.out]]
	if i >= 0 {
		v[i] = m.base[i]
	}
	if j >= 0 {
		v[j] = m.base[j]
	}
	if err != nil {
		return math.NaN(), err
	}
	return y, nil
}
