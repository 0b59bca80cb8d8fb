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
