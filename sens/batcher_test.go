package sens

import (
	"math"
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// TestBatcherConesAgreeWithEval checks the batcher's path through cones
// (a first batch of maxBatch points, then larger ones; sweeps and runs)
// against Fn.Eval, the tape's scalar pass over every node, point by point
// and to the last bit, on the scale model with if and max: points of one
// input at the ends and inside its range, points of two inputs, and the
// baseline, in more points than one batch holds.
func TestBatcherConesAgreeWithEval(t *testing.T) {
	m, err := LoadModel("scale", tapebench.ScaleModel(2000, true, 3))
	if err != nil {
		t.Fatal(err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	pr, err := p.Problem("total")
	if err != nil {
		t.Fatal(err)
	}
	x0 := pr.Baseline()
	var pts []point
	for i, in := range pr.Inputs {
		pts = append(pts, point{i: i, vi: in.Low, j: -1}, point{i: i, vi: (in.Low + in.High) / 2, j: -1}, point{i: i, vi: in.High, j: -1})
		if i%7 == 0 {
			pts = append(pts, point{i: -1, j: -1})
		}
		if k := (i * 13) % len(pr.Inputs); i%5 == 0 && k != i {
			pts = append(pts, point{i: i, vi: in.High, j: k, vj: pr.Inputs[k].Low})
		}
	}
	if len(pts) <= maxBatch {
		t.Fatalf("%d points: the test needs more than one batch", len(pts))
	}
	b := newBatcher(pr.F, x0, &Settings{})
	if b.cones == nil {
		t.Fatal("the scale model has no cones")
	}
	got := make([]float64, len(pts))
	if err := b.eval(got, pts); err != nil {
		t.Fatal(err)
	}
	if b.done != len(pts) {
		t.Errorf("%d points evaluated, want %d", b.done, len(pts))
	}
	x := append([]float64(nil), x0...)
	for s, q := range pts {
		if q.i >= 0 {
			x[q.i] = q.vi
		}
		if q.j >= 0 {
			x[q.j] = q.vj
		}
		want, err := pr.F.Eval(x)
		if err != nil {
			t.Fatal(err)
		}
		if math.Float64bits(got[s]) != math.Float64bits(want) {
			t.Fatalf("point %d (inputs %d, %d): %v, want %v", s, q.i, q.j, got[s], want)
		}
		copy(x, x0)
	}
}
