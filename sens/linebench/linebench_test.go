package linebench

import (
	"math"
	"sync"
	"testing"

	"github.com/nudge-dev/nudge/sens"
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
func BenchmarkTornadoVsForward(b *testing.B)  { get(b).TornadoVsForward(b) }
func BenchmarkCurvedTornado(b *testing.B)     { get(b).CurvedTornadoVsForward(b) }
func BenchmarkSpiderVsForward(b *testing.B)   { get(b).SpiderVsForward(b) }
func BenchmarkSimulateVsForward(b *testing.B) { get(b).SimulateVsForward(b) }
func BenchmarkMarkupGradientVsForward(b *testing.B) {
	get(b).MarkupGradientVsForward(b)
}

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

// The benchmark's tornado on a small table: each bar's ends are the
// roll-up with that one line's quantity or unit cost at the end of its
// range, computed here by a Go loop over the slices (the roll-up is Σ q c:
// moving one factor moves one term; common practice). The tape sums in
// another order, so the two agree to rounding: 1e-12 relative.
func TestSmallBenchTornado(t *testing.T) {
	bn, err := New(500)
	if err != nil {
		t.Fatal(err)
	}
	r, err := sens.Tornado(bn.Total, &sens.TornadoSettings{Top: 40})
	if err != nil {
		t.Fatal(err)
	}
	at := map[string]int{}
	for i, in := range bn.Total.Inputs {
		at[in.Name] = i
	}
	n := len(bn.Qty)
	rollup := func(i int, v float64) float64 {
		s := 0.0
		for j := range bn.Qty {
			q, c := bn.Qty[j], bn.Cost[j]
			switch {
			case i == j:
				q = v
			case i == n+j:
				c = v
			}
			s += q * c
		}
		return s
	}
	for _, b := range r.Bars {
		i, ok := at[b.Name]
		if !ok {
			t.Fatalf("bar %s names no input", b.Name)
		}
		for _, e := range []struct{ x, y float64 }{{b.Low, b.OutputAtLow}, {b.High, b.OutputAtHigh}} {
			if want := rollup(i, e.x); math.Abs(e.y-want) > 1e-12*math.Abs(want) {
				t.Errorf("%s at %v: tornado %v, Go loop %v", b.Name, e.x, e.y, want)
			}
		}
		if b.Sampled {
			t.Errorf("%s: sampled inside its range, though Σ q c is affine in it", b.Name)
		}
	}
	if r.Rest == nil || r.Rest.Count != 2*n-40 {
		t.Errorf("the rest: %+v", r.Rest)
	}
}
