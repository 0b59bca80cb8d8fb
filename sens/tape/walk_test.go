package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestWalkAgreesWithTape walks random formulas along random paths, one
// input changed a step (to values that include domain errors), and checks
// every point against evalRef (the full pass): the same value to the last
// bit, and the same error; after an error the walk starts again.
func TestWalkAgreesWithTape(t *testing.T) {
	const nIn = 4
	g := &rgen{rng: rand.New(rand.NewPCG(41, 42)), nIn: nIn}
	rng := rand.New(rand.NewPCG(43, 44))
	var steps, failing int
	for f := range 1500 {
		tp := g.expr(5).tape(nIn, int32(f))
		w, err := tp.Walk(0)
		if err != nil {
			t.Fatal(err)
		}
		draw := func() float64 { return math.Round((rng.Float64()*6-3)*100) / 100 }
		x := make([]float64, nIn)
		started := false
		for s := 0; s < 40; s++ {
			var got float64
			var err error
			if !started {
				for j := range x {
					x[j] = draw()
				}
				got, err = w.Start(x)
			} else {
				i := rng.IntN(nIn)
				x[i] = draw()
				got, err = w.Step(i, x[i])
				steps++
			}
			want, bad, wantErr := evalRef(tp, [][]float64{slices.Clone(x)}, 0)
			var de *DomainError
			switch {
			case bad < 0 && err != nil:
				t.Fatalf("formula %d, point %d: error %v, reference none", f, s, err)
			case bad >= 0 && !errors.As(err, &de):
				t.Fatalf("formula %d, point %d: no error, reference %v", f, s, wantErr)
			case bad >= 0:
				failing++
				if de.Pos != wantErr.Pos || de.Op != wantErr.Op || de.Msg != wantErr.Msg || !slices.Equal(de.Args, wantErr.Args) {
					t.Fatalf("formula %d, point %d: error %v, reference %v", f, s, de, wantErr)
				}
				started = false
				continue
			}
			if math.Float64bits(got) != math.Float64bits(want[0]) {
				t.Fatalf("formula %d, point %d: %v, reference %v", f, s, got, want[0])
			}
			started = true
		}
	}
	t.Logf("%d steps, %d points failing", steps, failing)
	if failing < 1000 || steps < 30000 {
		t.Errorf("the test covers too little: %d steps, %d failing", steps, failing)
	}
}
