package tape

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestListingFolds builds y = ln(a) * b + exp(c) with a second output that
// only c feeds, and checks what listings keep: the nodes y needs, with the
// parts of the inputs that stay put folded into the values the tape computes
// (the product ln(a) * b is one constant when only c moves).
func TestListingFolds(t *testing.T) {
	b := NewBuilder()
	a, bb, c := b.Input(), b.Input(), b.Input()
	prod := b.Binary(OpMul, b.Unary(OpLn, a), bb)
	y := b.Binary(OpAdd, prod, b.Unary(OpExp, c))
	other := b.Unary(OpSin, c)
	tp := b.Tape(y, other)
	x := []float64{2, 3, 0.5}
	want, err := tp.Eval(x, 0)
	if err != nil {
		t.Fatal(err)
	}

	count := func(L *Listing) (consts, inputs, ops int) {
		for _, e := range L.Entries {
			switch e.Kind {
			case ListConst:
				consts++
			case ListInput:
				inputs++
			case ListOp:
				ops++
			}
		}
		return
	}

	// Nothing moves: the output itself is the one constant.
	L, err := tp.Listing(x, 0, nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(L.Entries) != 1 || L.Entries[0].Kind != ListConst || L.Entries[0].Val != want || L.Out != 0 {
		t.Errorf("nothing free: %+v", L.Entries)
	}

	// Everything moves: three inputs, four operations (ln, *, exp, +), no
	// sin (the other output's).
	L, err = tp.Listing(x, 0, []int{0, 1, 2}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if k, i, o := count(L); k != 0 || i != 3 || o != 4 || L.Out != 6 {
		t.Errorf("all free: %d constants, %d inputs, %d operations, out %d", k, i, o, L.Out)
	}
	js := string(L.AppendJSON(nil))
	if js != `[["in",0],["in",1],["in",2],["ln",0,0],["mul",0,3,1],["exp",0,2],["add",0,4,5]]` {
		t.Errorf("JSON %s", js)
	}

	// Only c moves: ln(a) * b is one constant, ln(a)*b's exact bits.
	L, err = tp.Listing(x, 0, []int{2}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if k, i, o := count(L); k != 1 || i != 1 || o != 2 {
		t.Errorf("c free: %d constants, %d inputs, %d operations: %s", k, i, o, L.AppendJSON(nil))
	}
	if js, p := string(L.AppendJSON(nil)), math.Log(2)*3; js != `[["in",0],`+string(appendNum(nil, p))+`,["exp",0,0],["add",0,1,2]]` {
		t.Errorf("c free: %s, want ln(2)*3 = %v folded", js, p)
	}

	// A limit below the size refuses.
	if _, err := tp.Listing(x, 0, []int{0, 1, 2}, 6); !errors.Is(err, ErrListingTooLarge) {
		t.Errorf("limit 6: %v", err)
	}
	// Non-finite constants are written as strings.
	if s := string(appendNum(nil, math.Inf(-1))) + string(appendNum(nil, math.NaN())); s != `"-Inf""NaN"` {
		t.Errorf("non-finite: %s", s)
	}
	if _, err := tp.Listing(x[:2], 0, nil, 0); err == nil || !strings.Contains(err.Error(), "2 inputs given") {
		t.Errorf("short x: %v", err)
	}
}
