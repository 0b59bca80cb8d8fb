package sens

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sort"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"
)

// TestSimulateRankCorrelationsAgainstGonum checks each input's rank
// correlation with the output against Pearson's correlation of the mean
// ranks computed by gonum's stat.Correlation (the definition of Spearman's
// coefficient) from the samples themselves, on a model with an input of
// many ties, an imposed correlation and domain failures (whose samples are
// left out of both).
func TestSimulateRankCorrelationsAgainstGonum(t *testing.T) {
	p := problemOf(t, `
input a = 1 ~ normal(1, 1)
input b = 2 ~ pert(1, 2, 4)
input c = 3 (2..5)
input d = 2 ~ uniform(0, 4)
spearman a, b = 0.5
y = sqrt(a) * b + c^2 + floor(d)
`, "y")
	const n, seed = 4000, 9
	r := simulate(t, p, &SimulationSettings{N: n, Seed: seed})
	if r.Failed == 0 {
		t.Fatal("expected failures: sqrt of a negative a")
	}
	// The inputs' samples, in sample order, from the identity of each
	// (pick never fails), and the output's.
	cols := sampleColumns(t, p, n, seed)
	y := make([]float64, n)
	keep := make([]bool, n)
	for j := range n {
		x := []float64{cols[0][j], cols[1][j], cols[2][j], cols[3][j]}
		v, err := p.F.Eval(x)
		keep[j] = err == nil
		y[j] = v
	}
	valid := func(x []float64) []float64 {
		var out []float64
		for j, v := range x {
			if keep[j] {
				out = append(out, v)
			}
		}
		return out
	}
	yv := valid(y)
	if len(yv) != r.Valid {
		t.Fatalf("%d valid samples recomputed, %d reported", len(yv), r.Valid)
	}
	ry := ranks(make([]float64, len(yv)), yv)
	got := map[string]float64{}
	for _, c := range r.RankCorrelations {
		got[c.Name] = c.Spearman
	}
	// floor(d) takes 4 values: the ties are what the mean ranks are for.
	for i, in := range p.Inputs {
		xv := valid(cols[i])
		want := stat.Correlation(ranks(make([]float64, len(xv)), xv), ry, nil)
		if math.Abs(got[in.Name]-want) > 1e-13 {
			t.Errorf("spearman of %s = %v, gonum on the ranks %v", in.Name, got[in.Name], want)
		}
	}
}

// TestSimulateKeptOrDrawnAgain checks that the samples kept for the rank
// correlations and those drawn again from their streams (a simulation too
// large to keep them) give the same result, bit for bit, at GOMAXPROCS 1
// and 2 and with more workers than inputs.
func TestSimulateKeptOrDrawnAgain(t *testing.T) {
	p := problemOf(t, `
input a = 1 ~ normal(1, 1)
input b = 2 ~ pert(1, 2, 4)
input c = 3 (2..5)
input d = 10 ~ lognormal(10, 2)
input e = 5 ~ triangular(4, 5, 7)
spearman a, b = 0.5
y = sqrt(a) * b + c^2 - d*e
`, "y")
	run := func(procs, workers, kept int) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		defer func(m int) { maxKeptFloats = m }(maxKeptFloats)
		maxKeptFloats = kept
		r := simulate(t, p, &SimulationSettings{N: 2999, Seed: 4, Workers: workers})
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	want := run(1, 0, 1<<23)
	for _, c := range []struct{ procs, workers, kept int }{{2, 0, 1 << 23}, {1, 0, 0}, {2, 0, 0}, {2, 9, 1 << 23}, {2, 9, 0}} {
		if got := run(c.procs, c.workers, c.kept); got != want {
			t.Errorf("GOMAXPROCS %d, %d workers, kept up to %d floats: the result differs\n%s\n%s", c.procs, c.workers, c.kept, got, want)
		}
	}
}

// TestDrawFillSameAsRander checks that drawer.fill, which calls gonum's
// methods directly, draws the same values from the same stream as the
// distuv.Rander of each distribution of the language (and of a Dist from
// outside the package, drawn by inverse transform), and drawInto the same as
// drawTo.
func TestDrawFillSameAsRander(t *testing.T) {
	var dists []Dist
	for _, info := range Distributions {
		params := map[string][]float64{
			"uniform": {40, 80}, "triangular": {0.8, 0.9, 1.2}, "normal": {60, 5},
			"lognormal": {1000, 250}, "pert": {0.8, 0.9, 1.2}, "truncnormal": {60, 10, 45, 90},
		}[info.Name]
		d, err := NewDist(info.Name, params)
		if err != nil {
			t.Fatal(err)
		}
		dists = append(dists, d)
	}
	dists = append(dists, outsideDist{dists[0]})
	const m = 1000
	d := newDrawer(dists, 11, streamSimulate, m)
	into := make([]float64, m)
	for i, dist := range dists {
		got := append([]float64(nil), d.draw(5, i, m)...)
		seedStream(&d.pcg, 11, streamSimulate, 5, uint64(i))
		for j := range m {
			if want := d.r[i].Rand(); got[j] != want {
				t.Fatalf("%s: sample %d is %v, through the Rander %v", dist.Name(), j, got[j], want)
			}
		}
		if err := d.drawInto(into, 5, i, func() error { return nil }); err != nil {
			t.Fatal(err)
		}
		for j := range m {
			if into[j] != got[j] {
				t.Fatalf("%s: drawInto's sample %d is %v, drawTo's %v", dist.Name(), j, into[j], got[j])
			}
		}
	}
}

// outsideDist is a Dist of no type the package knows, so drawn by inverse
// transform.
type outsideDist struct{ Dist }

// TestLinInterpAsGonum checks linInterp against gonum's stat.Quantile with
// stat.LinInterp, bit for bit, on sorted samples of several sizes (ties
// included) at the percentiles Simulate reports and at the ends, and that a
// NaN at either end gives NaN as gonum does.
func TestLinInterpAsGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	for _, n := range []int{1, 2, 3, 7, 20, 99, 1000, 20_000} {
		x := make([]float64, n)
		for j := range x {
			x[j] = math.Round(rng.NormFloat64()*40) / 4
		}
		sort.Float64s(x)
		for _, p := range []float64{0, 0.01, 0.05, 0.10, 0.25, 0.50, 0.90, 0.95, 0.999, 1, float64(n-1) / float64(n), 1 / float64(n)} {
			if got, want := linInterp(p, x), stat.Quantile(p, stat.LinInterp, x, nil); math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("n %d p %v: %v, gonum %v", n, p, got, want)
			}
		}
	}
	for _, x := range [][]float64{{1, 2, math.NaN()}, {math.Copysign(math.NaN(), -1), 1, 2}} {
		if got := linInterp(0.5, x); !math.IsNaN(got) {
			t.Errorf("%v: %v, want NaN", x, got)
		}
	}
}

// TestSimulateStopsInAnyPart cancels simulations after delays spread over
// their length, on more workers than cores, and checks that each returns,
// either its result or an error wrapping context.Canceled: in particular
// an input's rank task waiting for the outputs' ranks, whose task the
// cancellation may leave untaken, stops.
func TestSimulateStopsInAnyPart(t *testing.T) {
	var src strings.Builder
	for i := range 30 {
		fmt.Fprintf(&src, "input x%d = 1 ~ normal(1, 0.1)\n", i)
	}
	src.WriteString("y = x0")
	for i := 1; i < 30; i++ {
		fmt.Fprintf(&src, " + x%d", i)
	}
	p := problemOf(t, src.String()+"\n", "y")
	full := time.Now()
	simulate(t, p, &SimulationSettings{N: 50_000, Seed: 1, Workers: 3})
	length := time.Since(full)
	for step := range 12 {
		ctx, cancel := context.WithCancel(context.Background())
		done := make(chan error, 1)
		go func() {
			_, err := Simulate(p, &SimulationSettings{Settings: Settings{Ctx: ctx}, N: 50_000, Seed: 1, Workers: 3})
			done <- err
		}()
		time.Sleep(length * time.Duration(step) / 10)
		cancel()
		// A goroutine left waiting would hang here (go test's timeout).
		if err := <-done; err != nil && !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled after %d/10 of a run: %v", step, err)
		}
	}
}
