package linebench

import (
	"sync"
	"testing"
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
