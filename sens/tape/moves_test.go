package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestMovesAgreesWithEval checks Moves against Eval, the scalar pass, to
// the last bit on the random vector models of TestLoopsAgreeWithScalarOps
// (loop nodes, which have no cones): every output, one input or two moved,
// to values that include zero, negatives and a NaN, so that some points
// fail; the same values, the same errors, and the base left as it was.
func TestMovesAgreesWithEval(t *testing.T) {
	for seed := range uint64(60) {
		b := NewBuilder()
		outs, x := randomVecModel(b, seed)
		tp := b.Tape(outs...)
		ref := tp.Clone()
		rng := rand.New(rand.NewPCG(seed, 5))
		moved := []float64{0, -1.5, math.NaN(), 1e-300, 3.7}
		for o := range outs {
			m := tp.Moves(x, o)
			for range 40 {
				i, j := rng.IntN(len(x)), -1
				if rng.IntN(3) == 0 {
					j = rng.IntN(len(x))
				}
				vi, vj := moved[rng.IntN(len(moved))], moved[rng.IntN(len(moved))]
				if rng.IntN(2) == 0 {
					vi = x[i] * (0.5 + rng.Float64())
				}
				xp := slices.Clone(x)
				xp[i] = vi
				if j >= 0 {
					xp[j] = vj
				}
				want, wantErr := ref.Eval(xp, o)
				got, err := m.Eval(i, vi, j, vj)
				var de, wde *DomainError
				switch {
				case (err == nil) != (wantErr == nil):
					t.Fatalf("seed %d output %d: error %v, Eval's %v", seed, o, err, wantErr)
				case err != nil:
					if !errors.As(err, &de) || !errors.As(wantErr, &wde) || de.Pos != wde.Pos || de.Msg != wde.Msg || de.Op != wde.Op {
						t.Fatalf("seed %d output %d: error %v, Eval's %v", seed, o, err, wantErr)
					}
				case math.Float64bits(got) != math.Float64bits(want):
					t.Fatalf("seed %d output %d: %v, Eval's %v", seed, o, got, want)
				}
			}
			// The base is restored: the base point gives Eval's value.
			want, _ := ref.Eval(x, o)
			if got, _ := m.Eval(-1, 0, -1, 0); math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("seed %d output %d: base %v, Eval's %v", seed, o, got, want)
			}
		}
	}
}
