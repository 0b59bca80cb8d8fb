package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestRadialAgreesWithTape checks Radial against run, the tape's
// reference pass, on random formulas at points that include domain
// errors: each base point and each base point with one input replaced
// gives the reference's value to the last bit, and the first failing point
// in Radial's order (block by block: the base points, then input by input)
// is the one reported, with the reference's error.
func TestRadialAgreesWithTape(t *testing.T) {
	const nIn = 4
	g := &rgen{rng: rand.New(rand.NewPCG(91, 17)), nIn: nIn}
	rng := rand.New(rand.NewPCG(8, 9))
	var failing, failBase, failAlt, partial int
	for f := 0; f < 1500; f++ {
		tp := g.expr(5).tape(nIn, int32(f))
		const n = 300 // more than a block of 256, the last one partial
		cols, alt := make([][]float64, nIn), make([][]float64, nIn)
		// Base points in (0, 3], replacements in [-3, 3]: some formulas
		// fail at base points, others only once an input is replaced.
		draw := func(lo float64) float64 { return math.Round((lo+rng.Float64()*(3-lo))*100) / 100 }
		for j := range cols {
			cols[j], alt[j] = make([]float64, n), make([]float64, n)
			for s := range n {
				cols[j][s], alt[j][s] = draw(0.01), draw(-3)
			}
		}
		// Replace inputs 0, 1 and 3: input 2 is not asked for.
		use := slices.Clone(alt)
		use[2] = nil
		r, err := tp.Radial(0, []int{0, 1, 3})
		if err != nil {
			t.Fatalf("formula %d: %v", f, err)
		}
		for i := range nIn {
			if i != 2 && r.ConeSize(i) < tp.Len()-tp.p.start {
				partial++
			}
		}
		dst := make([]float64, n)
		dstAlt := make([][]float64, nIn)
		for _, i := range []int{0, 1, 3} {
			dstAlt[i] = make([]float64, n)
		}
		gotErr := r.Eval(dst, dstAlt, cols, use, n)

		// The reference, in Radial's order.
		points := func(i, lo, hi int) [][]float64 {
			var xs [][]float64
			for s := lo; s < hi; s++ {
				x := make([]float64, nIn)
				for j := range x {
					x[j] = cols[j][s]
				}
				if i >= 0 {
					x[i] = alt[i][s]
				}
				xs = append(xs, x)
			}
			return xs
		}
		var wantErr *DomainError
		wantInput, wantSample := 0, -1
	blocks:
		for lo := 0; lo < n; lo += r.w {
			hi := min(n, lo+r.w)
			for _, i := range []int{-1, 0, 1, 3} {
				want, bad, de := evalRef(tp, points(i, lo, hi), 0)
				got := dst
				if i >= 0 {
					got = dstAlt[i]
				}
				if bad >= 0 {
					wantErr, wantInput, wantSample = de, i, lo+bad
					want = want[:bad]
				}
				for s, v := range want {
					if math.Float64bits(got[lo+s]) != math.Float64bits(v) {
						t.Fatalf("formula %d, input %d, point %d: %v, reference %v", f, i, lo+s, got[lo+s], v)
					}
				}
				if bad >= 0 {
					break blocks
				}
			}
		}
		var re *RadialError
		switch {
		case wantErr == nil && gotErr != nil:
			t.Fatalf("formula %d: error %v, reference none", f, gotErr)
		case wantErr != nil && !errors.As(gotErr, &re):
			t.Fatalf("formula %d: no error, reference %v at input %d, point %d", f, wantErr, wantInput, wantSample)
		case wantErr != nil:
			failing++
			if wantInput < 0 {
				failBase++
			} else {
				failAlt++
			}
			de := re.Err
			if re.Input != wantInput || de.Sample != wantSample || de.Pos != wantErr.Pos || de.Op != wantErr.Op ||
				de.Msg != wantErr.Msg || !slices.Equal(de.Args, wantErr.Args) {
				t.Fatalf("formula %d: error %v at input %d, reference %v at input %d, point %d", f, gotErr, re.Input, wantErr, wantInput, wantSample)
			}
		}
	}
	t.Logf("1500 formulas: %d failing (%d at a base point, %d at a replaced one), %d cones short of the tape", failing, failBase, failAlt, partial)
	if failBase < 30 || failAlt < 30 || partial < 1000 {
		t.Errorf("the test covers too little: %d, %d failing, %d partial cones", failBase, failAlt, partial)
	}
}

// TestRadialNoLoops checks that a tape with loop nodes has no Radial.
func TestRadialNoLoops(t *testing.T) {
	b := NewBuilder()
	v := b.VecInput(12)
	tp := b.Tape(b.Sum(v))
	if _, err := tp.Radial(0, []int{0}); !errors.Is(err, ErrNoCones) {
		t.Errorf("Radial of a tape with loop nodes: %v, want ErrNoCones", err)
	}
}
