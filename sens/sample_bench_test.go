package sens

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// BenchmarkDrawFill draws a chunk of 256 samples of the cost model's 17
// inputs (five distributions) through drawer.fill against the same draws
// through the distuv.Rander interface, interleaved; per sample:
//
//	go test ./sens/ -run '^$' -bench DrawFill -benchtime=3000x -count=3
func BenchmarkDrawFill(b *testing.B) {
	t, x := tapebench.CostModel(false), tapebench.CostBaseline()
	p := benchProblem(t, x)
	sd, err := samplingDists(p, "simulate")
	if err != nil {
		b.Fatal(err)
	}
	const m = 256
	d := newDrawer(sd.dists, 1, streamSimulate, m)
	col, ref := make([]float64, m), make([]float64, m)
	fill := func() error {
		for i := range sd.dists {
			d.drawTo(col, 0, i)
		}
		return nil
	}
	iface := func() error {
		for i := range sd.dists {
			seedStream(&d.pcg, d.seed, d.purpose, 0, uint64(i))
			r := d.r[i]
			for j := range ref {
				ref[j] = r.Rand()
			}
		}
		return nil
	}
	// The same values either way.
	for i := range sd.dists {
		d.drawTo(col, 3, i)
		seedStream(&d.pcg, d.seed, d.purpose, 3, uint64(i))
		for j := range ref {
			ref[j] = d.r[i].Rand()
		}
		for j := range ref {
			if col[j] != ref[j] {
				b.Fatalf("input %d sample %d: fill %v, the interface %v", i, j, col[j], ref[j])
			}
		}
	}
	cpuPair(b, m, "fill", "interface", fill, iface)
}
