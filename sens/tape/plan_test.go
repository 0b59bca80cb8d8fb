package tape

import (
	"errors"
	"testing"
)

// A fused pair whose divisor is a computed row freed at that instruction
// may write its output over the divisor's row: the finite test must read
// the divisor first. exp(1000) overflows to +Inf (IEEE 754 binary64's
// largest finite value is about 1.8e308), and a division by it is a domain
// error that Eval reports; the batched passes must report it too.
func TestFusedDivisorInReusedRow(t *testing.T) {
	build := []func(b *Builder, x, y, z Slot) Slot{
		func(b *Builder, x, y, z Slot) Slot { return b.Binary(OpDiv, b.Binary(OpMul, x, y), z) },
		func(b *Builder, x, y, z Slot) Slot { return b.Binary(OpDiv, b.Binary(OpAdd, x, y), z) },
		func(b *Builder, x, y, z Slot) Slot { return b.Binary(OpAdd, b.Binary(OpDiv, x, z), y) },
		func(b *Builder, x, y, z Slot) Slot { return b.Binary(OpMul, y, b.Binary(OpDiv, x, z)) },
	}
	const n = 8
	for f, g := range build {
		b := NewBuilder()
		x, y, u := b.Input(), b.Input(), b.Input()
		z := b.Unary(OpExp, u)
		tp := b.Tape(g(b, x, y, z))
		row := []float64{1, 2, 1000}
		_, want := tp.Eval(row, 0)
		var de *DomainError
		if !errors.As(want, &de) {
			t.Fatalf("form %d: Eval gives %v, want a domain error", f, want)
		}
		xs := make([]float64, 0, n*3)
		cols := make([][]float64, 3)
		for range n {
			xs = append(xs, row...)
			for j := range cols {
				cols[j] = append(cols[j], row[j])
			}
		}
		out := make([]float64, n)
		if err := tp.ForwardBatch(out, xs, n, 0); !errors.As(err, &de) || de.Msg != want.(*DomainError).Msg {
			t.Errorf("form %d: ForwardBatch gives %v, Eval %v", f, err, want)
		}
		if err := tp.ForwardColumns(out, cols, n, 0); !errors.As(err, &de) || de.Msg != want.(*DomainError).Msg {
			t.Errorf("form %d: ForwardColumns gives %v, Eval %v", f, err, want)
		}
	}
}
