package linebench

import (
	"sync"
	"testing"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// Run them with
//
//	go test ./sens/linebench/ -run '^$' -bench . -benchtime=20x

var (
	once  sync.Once
	bench *Bench
	err   error
)

func get(b *testing.B) *Bench {
	once.Do(func() { bench, err = New(Lines) })
	if err != nil {
		b.Fatal(err)
	}
	return bench
}

func BenchmarkLoadVsCSV(b *testing.B)         { get(b).LoadVsCSV(b) }
func BenchmarkForwardVsGo(b *testing.B)       { get(b).ForwardVsGo(b) }
func BenchmarkGradientVsForward(b *testing.B) { get(b).GradientVsForward(b) }

// The benchmark's model on a small table: the tape agrees with the Go loop
// (New checks it) and every line's partial derivative is the other factor.
func TestSmallBench(t *testing.T) {
	bn, err := New(500)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := bn.Fn.Gradient(bn.Grad, bn.X); err != nil {
		t.Fatal(err)
	}
	for i := range bn.Qty {
		if bn.Grad[i] != bn.Cost[i] || bn.Grad[len(bn.Qty)+i] != bn.Qty[i] {
			t.Fatalf("line %d: partials %v %v", i, bn.Grad[i], bn.Grad[len(bn.Qty)+i])
		}
	}
}

// The tornado of the roll-up on a table of 10,000 lines (20,000 inputs,
// whose loop nodes have no cones, so every point is a whole evaluation)
// against one forward evaluation: "ratio" is the tornado's cost in forward
// evaluations, at least the 40,001 points it evaluates.
func BenchmarkTornadoVsForward(b *testing.B) {
	bn, err := New(10_000)
	if err != nil {
		b.Fatal(err)
	}
	p, err := bn.Prog.Problem("total")
	if err != nil {
		b.Fatal(err)
	}
	tapebench.Pair(b, 1, 1, "tornado", "forward", func() error { _, err := sens.Tornado(p, nil); return err },
		func() error { _, err := bn.Fn.Eval(bn.X); return err })
}
