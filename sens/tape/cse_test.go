package tape

import "testing"

// TestSharedAcrossGrowth checks that an operation repeated on the same
// operands is shared however many operations the table has grown through,
// and that operations differing in the operation or an operand are not.
func TestSharedAcrossGrowth(t *testing.T) {
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	const n = 20_000
	first := make([]Slot, n)
	prev := x
	for i := range first {
		// A chain of distinct operations: each depends on the one before.
		prev = b.Binary(OpAdd, prev, y)
		first[i] = b.Binary(OpMul, prev, x)
	}
	size := b.Len()
	prev = x
	for i := range first {
		prev = b.Binary(OpAdd, prev, y)
		if s := b.Binary(OpMul, prev, x); s != first[i] {
			t.Fatalf("operation %d added again as slot %d, want the shared %d", i, s, first[i])
		}
	}
	if b.Len() != size {
		t.Fatalf("repeating every operation grew the builder from %d to %d nodes", size, b.Len())
	}
	// Same operands, other operation; same operation, operands swapped.
	if s := b.Binary(OpSub, first[0], x); s == first[0] || int(s) != size {
		t.Errorf("a subtraction was shared with a product")
	}
	if s := b.Binary(OpDiv, x, first[1]); s == b.Binary(OpDiv, first[1], x) {
		t.Errorf("x/y was shared with y/x")
	}
	if u, v := b.Unary(OpExp, x), b.Unary(OpExp, y); u == v {
		t.Errorf("exp(x) was shared with exp(y)")
	}
	if u, v := b.Unary(OpExp, x), b.Unary(OpExp, x); u != v {
		t.Errorf("exp(x) twice gave slots %d and %d", u, v)
	}
}

// TestSharedAfterTape checks that a builder used again after Tape, which
// releases the table of shared operations, still shares every operation
// added before, each with the first of its equal nodes, and that the tapes
// made before and after agree.
func TestSharedAfterTape(t *testing.T) {
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	var first []Slot
	prev := x
	for i := 0; i < 1000; i++ {
		prev = b.Binary(OpAdd, prev, y)
		first = append(first, b.Binary(OpMul, prev, x), b.Call(OpIf, prev, x, y))
	}
	before := b.Tape(first[len(first)-2])
	size := b.Len()
	prev = x
	for i := 0; i < 1000; i++ {
		prev = b.Binary(OpAdd, prev, y)
		if s := b.Binary(OpMul, prev, x); s != first[2*i] {
			t.Fatalf("product %d added again after Tape as slot %d, want the shared %d", i, s, first[2*i])
		}
		if s := b.Call(OpIf, prev, x, y); s != first[2*i+1] {
			t.Fatalf("if %d added again after Tape as slot %d, want the shared %d", i, s, first[2*i+1])
		}
	}
	if b.Len() != size {
		t.Fatalf("repeating every operation after Tape grew the builder from %d to %d nodes", size, b.Len())
	}
	if s := b.Binary(OpSub, first[0], x); int(s) != size {
		t.Errorf("a new operation after Tape is slot %d, want %d", s, size)
	}
	after := b.Tape(first[len(first)-2])
	for _, tp := range []*Tape{before, after} {
		if err := tp.Forward([]float64{0.5, 0.25}); err != nil {
			t.Fatal(err)
		}
	}
	if before.Output(0) != after.Output(0) || before.Len() != after.Len() {
		t.Errorf("tapes before and after: %v (%d nodes) and %v (%d nodes)", before.Output(0), before.Len(), after.Output(0), after.Len())
	}
}
