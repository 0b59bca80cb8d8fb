package tape

import (
	"math"
	"slices"
	"testing"
)

// The piecewise operations an output depends on, and the piece each takes:
// scalar abs, max, a comparison inside an if, floor, and a vector's max and
// an element-wise abs of a vector (loop nodes of 8 elements). Codes and
// switching values are checked by hand at one point.
func TestBranchCodes(t *testing.T) {
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	v := b.VecInput(8)
	b.SetPos(1)
	ab := b.Unary(OpAbs, b.Binary(OpSub, x, y))
	b.SetPos(2)
	mx := b.Binary(OpMax, x, y)
	b.SetPos(3)
	cond := b.Binary(OpGt, x, b.Const(2))
	b.SetPos(4)
	iff := b.Call(OpIf, cond, x, y)
	b.SetPos(5)
	fl := b.Unary(OpFloor, y)
	b.SetPos(6)
	vmax := b.Reduce(OpMax, v)
	b.SetPos(7)
	vabs := b.Sum(b.Map(OpAbs, v))
	_ = b.Input() // an input the output does not use
	b.SetPos(8)
	unused := b.Unary(OpAbs, x)
	sum := func(s ...Slot) Slot {
		r := s[0]
		for _, q := range s[1:] {
			r = b.Binary(OpAdd, r, q)
		}
		return r
	}
	tp := b.Tape(sum(ab, mx, iff, fl, vmax, vabs), unused)
	bs := tp.Branches(0)
	var pos []int32
	for _, br := range bs {
		pos = append(pos, br.Pos)
	}
	// abs, max, >, if, floor, the vector's max, and 8 elements of the map.
	if want := []int32{1, 2, 3, 4, 5, 6, 7, 7, 7, 7, 7, 7, 7, 7}; !slices.Equal(pos, want) {
		t.Fatalf("positions %v, want %v", pos, want)
	}
	if bs[3].Op != OpIf || !bs[3].Step || bs[1].Step || bs[6].Elem != 0 || bs[13].Elem != 7 || bs[5].Elem != -1 {
		t.Errorf("branches %+v", bs)
	}
	in := []float64{3, 4.5, 1, -2, 9, 0, 5, -9, 2, 1, 7}
	codes, sw := make([]float64, len(bs)), make([]float64, len(bs))
	got, err := tp.BranchCodes(codes, sw, in, bs, 0)
	if err != nil {
		t.Fatal(err)
	}
	// By hand: |3 − 4.5| + max(3, 4.5) + if(3 > 2, 3, 4.5) + floor(4.5) +
	// max(v) + Σ|v| = 1.5 + 4.5 + 3 + 4 + 9 + 29 = 51.
	if got != 51 {
		t.Errorf("output %v, want 51", got)
	}
	nan := math.NaN()
	wantCodes := []float64{-1, 1, 1, 1, 4, 2, 1, -1, 1, 1, 1, -1, 1, 1}
	wantSw := []float64{-1.5, -1.5, 1, nan, nan, nan, 1, -2, 9, 0, 5, -9, 2, 1}
	for i := range bs {
		if codes[i] != wantCodes[i] || !(sw[i] == wantSw[i] || math.IsNaN(sw[i]) && math.IsNaN(wantSw[i])) {
			t.Errorf("branch %d (%v at %d): code %v switch %v, want %v and %v", i, bs[i].Op, bs[i].Pos, codes[i], sw[i], wantCodes[i], wantSw[i])
		}
	}
}
