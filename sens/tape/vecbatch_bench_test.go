package tape_test

import (
	"fmt"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// The batched forward pass of a tape with loop nodes, a bid's total over
// its lines, given its samples as columns (ForwardColumns, what the
// sampling analyses call) against the same samples as rows (ForwardBatch),
// per sample. The calls are those of Simulate: as many samples a call as
// it draws in a chunk (256 of 200 lines, a pass in blocks; 1 of 100,000
// lines, a tape too long for a useful block, 8 calls), the columns one
// buffer, each column a chunk long. Run them with
//
//	go test ./sens/tape/ -run '^$' -bench VecColumnsVsRows -benchtime=20x -benchmem
func BenchmarkVecColumnsVsRows(b *testing.B) {
	for _, c := range []struct{ lines, samples, calls int }{{200, 256, 1}, {100_000, 1, 8}} {
		b.Run(fmt.Sprintf("lines=%d", c.lines), func(b *testing.B) {
			n := c.lines
			bl := tape.NewBuilder()
			q, u, h := bl.VecInput(n), bl.VecInput(n), bl.VecInput(n)
			rate, markup := bl.Input(), bl.Input()
			line := bl.Map(tape.OpAdd, bl.Map(tape.OpMul, q, u), bl.Map(tape.OpMul, bl.Map(tape.OpMul, q, h), rate))
			t := bl.Tape(bl.Binary(tape.OpMul, bl.Sum(line), bl.Binary(tape.OpAdd, bl.Const(1), markup)))
			k := t.NumInputs()
			ns := c.samples
			xs := make([]float64, ns*k)
			buf := make([]float64, k*ns)
			cols := make([][]float64, k)
			for j := range cols {
				cols[j] = buf[j*ns : (j+1)*ns : (j+1)*ns]
			}
			for s := range ns {
				for j := range k {
					v := 1 + float64((j*7+s*13)%97)/10
					xs[s*k+j], cols[j][s] = v, v
				}
			}
			out := make([]float64, ns)
			tapebench.Pair(b, 1, float64(ns*c.calls), "columns", "rows",
				func() error {
					for range c.calls {
						if err := t.ForwardColumns(out, cols, ns, 0); err != nil {
							return err
						}
					}
					return nil
				},
				func() error {
					for range c.calls {
						if err := t.ForwardBatch(out, xs, ns, 0); err != nil {
							return err
						}
					}
					return nil
				})
		})
	}
}
