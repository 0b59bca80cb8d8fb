package tape_test

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// The shapes of a roll-up over 100,000 lines, each the only output of its
// tape and over inputs it all reads: the gradient (every line's partials)
// against the forward pass (Value, what Fn.Eval runs). Run them with
//
//	go test ./sens/tape/ -run '^$' -bench RollUp -benchtime=200x -count=3
func benchRollUp(b *testing.B, vecs int, shape func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot) {
	const n = 100_000
	bl := tape.NewBuilder()
	v := make([]tape.Slot, vecs)
	for i := range v {
		v[i] = bl.VecInput(n)
	}
	k := bl.Input()
	t := bl.Tape(shape(bl, v, k))
	x := make([]float64, vecs*n+1)
	for j := range x {
		x[j] = 1 + float64(j%97)/10
	}
	g := make([]float64, len(x))
	tapebench.Pair(b, 4, 1, "gradient", "forward", func() error { _, err := t.Gradient(g, x, 0); return err },
		func() error { _, err := t.Value(x, 0); return err })
}

// Σ q c, the roll-up.
func BenchmarkRollUpDot(b *testing.B) {
	benchRollUp(b, 2, func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot { return bl.Dot(v[0], v[1]) })
}

// k Σ q c, a roll-up inside a formula.
func BenchmarkRollUpDotTimesScalar(b *testing.B) {
	benchRollUp(b, 2, func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot {
		return bl.Binary(tape.OpMul, bl.Dot(v[0], v[1]), k)
	})
}

// Σ q c (1 + m), a markup on the roll-up, its factor built after it.
func BenchmarkRollUpDotTimesMarkup(b *testing.B) {
	benchRollUp(b, 2, func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot {
		d := bl.Dot(v[0], v[1])
		return bl.Binary(tape.OpMul, d, bl.Binary(tape.OpAdd, bl.Const(1), k))
	})
}

// Σ q c k, a markup on every line.
func BenchmarkRollUpProductByScalar(b *testing.B) {
	benchRollUp(b, 2, func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot {
		return bl.Sum(bl.Map(tape.OpMul, bl.Map(tape.OpMul, v[0], v[1]), k))
	})
}

// Σ (q c + w), a cost added on every line.
func BenchmarkRollUpProductPlus(b *testing.B) {
	benchRollUp(b, 3, func(bl *tape.Builder, v []tape.Slot, k tape.Slot) tape.Slot {
		return bl.Binary(tape.OpMul, bl.Sum(bl.Map(tape.OpAdd, bl.Map(tape.OpMul, v[0], v[1]), v[2])), k)
	})
}
