package sens

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// rankSamples returns samples of several shapes for the sort's tests: ties,
// signed zeros, infinities, a narrow range (every key sharing most digits),
// a range of many exponents, values equal in their upper bits, and sizes
// around the choice of the number of digits. None is NaN.
func rankSamples() map[string][]float64 {
	rng := rand.New(rand.NewPCG(7, 11))
	gen := func(n int, f func(j int) float64) []float64 {
		x := make([]float64, n)
		for j := range x {
			x[j] = f(j)
		}
		return x
	}
	return map[string][]float64{
		"empty":   {},
		"one":     {3},
		"two":     {2, 1},
		"equal":   gen(1000, func(int) float64 { return 4.5 }),
		"normal":  gen(20_000, func(int) float64 { return 100 + 20*rng.NormFloat64() }),
		"ties":    gen(5000, func(int) float64 { return float64(rng.IntN(40)) - 20 }),
		"halves":  gen(3000, func(int) float64 { return float64(rng.IntN(7)) / 2 }),
		"zeros":   gen(2000, func(int) float64 { return []float64{0, math.Copysign(0, -1), 1, -1}[rng.IntN(4)] }),
		"inf":     gen(1500, func(int) float64 { return []float64{math.Inf(1), math.Inf(-1), rng.Float64()}[rng.IntN(3)] }),
		"narrow":  gen(10_000, func(int) float64 { return 1 + rng.Float64()*1e-12 }),
		"lowbits": gen(10_000, func(int) float64 { return math.Float64frombits(0x3ff0_0000_0000_0000 | rng.Uint64N(64)) }),
		"lost": gen(3000, func(j int) float64 { // key bits below the index's lost in the words
			if j%1000 == 0 {
				return math.Copysign(1e300, float64(j%2000)-1)
			}
			return math.Float64frombits(0x3ff0_0000_0000_0000 | rng.Uint64N(64))
		}),
		"wide":     gen(10_000, func(int) float64 { return math.Exp(rng.NormFloat64()*200) * float64(1-2*rng.IntN(2)) }),
		"outlier":  gen(8000, func(j int) float64 { return map[bool]float64{true: 1e300, false: 1 + rng.Float64()}[j == 17] }),
		"lognorm":  gen(4097, func(int) float64 { return math.Exp(rng.NormFloat64() * 3) }),
		"sorted":   gen(3000, func(j int) float64 { return float64(j) }),
		"reversed": gen(3000, func(j int) float64 { return -float64(j) }),
		"big":      gen(300_000, func(int) float64 { return rng.Float64() }),
	}
}

// TestRankSorterOrder checks the sorter's order against sort.Float64s (Go's
// standard library) on each sample: the values in sorted order are those of
// sort.Float64s, -0 sorts before +0, and equal values keep their index
// order; and the ranks against ranks counted by brute force from the
// standard library's order; and the rank correlation with another sample
// against gonum.
func TestRankSorterOrder(t *testing.T) {
	var rs rankSorter
	rng := rand.New(rand.NewPCG(1, 1))
	for name, xs := range rankSamples() {
		want := append([]float64(nil), xs...)
		sort.Float64s(want)
		w := rs.order(xs)
		if len(w) != len(xs) {
			t.Fatalf("%s: %d words for %d samples", name, len(w), len(xs))
		}
		seen := make([]bool, len(xs))
		for r, v := range w {
			i := rs.idx(v)
			if i >= len(xs) || seen[i] {
				t.Fatalf("%s: index %d repeated or out of range", name, i)
			}
			seen[i] = true
			if xs[i] != want[r] {
				t.Fatalf("%s: position %d holds %v, sort.Float64s %v", name, r, xs[i], want[r])
			}
			if r > 0 {
				prev := rs.idx(w[r-1])
				a, b := floatKey(xs[prev]), floatKey(xs[i])
				if a > b || a == b && prev > i {
					t.Fatalf("%s: positions %d and %d out of order: %v at %d, %v at %d", name, r-1, r, xs[prev], prev, xs[i], i)
				}
			}
		}
		if len(xs) > 3000 {
			continue // brute-force ranks below are quadratic
		}
		// Mean ranks, by brute force: 1 + the number smaller + half the
		// number equal besides itself (equal meaning equal keys).
		ry := make([]float64, len(xs))
		rs.centredRanks(ry, rs.order(xs))
		mid := float64(len(xs)+1) / 2
		for i, x := range xs {
			less, same := 0, 0
			for _, z := range xs {
				switch {
				case floatKey(z) < floatKey(x):
					less++
				case floatKey(z) == floatKey(x):
					same++
				}
			}
			if want := 1 + float64(less) + float64(same-1)/2; ry[i]+mid != want {
				t.Fatalf("%s: rank of sample %d (%v) is %v, counted %v", name, i, x, ry[i]+mid, want)
			}
		}
		// The same sample's rank correlation with another, against gonum's
		// Pearson correlation of the mean ranks.
		if len(xs) < 3 {
			continue
		}
		other := make([]float64, len(xs))
		for j := range other {
			other[j] = rng.NormFloat64()
		}
		var ro rankSorter
		co := make([]float64, len(xs))
		sso := ro.centredRanks(co, ro.sorted(other))
		dot, ssx := rs.rankDot(rs.sorted(xs), co)
		got := rankCorrelation(dot, ssx, sso)
		ref := stat.Correlation(ranks(make([]float64, len(xs)), xs), ranks(make([]float64, len(xs)), other), nil)
		if math.IsNaN(ref) {
			ref = 0 // a constant sample
		}
		if math.Abs(got-ref) > 1e-13 {
			t.Errorf("%s: rank correlation %v, gonum on the ranks %v", name, got, ref)
		}
	}
}

// TestRankCorrelationAgainstGonum checks Spearman's coefficient from the
// sorter's sums against Pearson's correlation of mean ranks by gonum's
// stat.Correlation (the definition of Spearman's coefficient with ties), on
// samples with and without ties.
func TestRankCorrelationAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	const n = 4000
	for _, tied := range []bool{false, true} {
		x, y := make([]float64, n), make([]float64, n)
		for j := range x {
			x[j] = rng.NormFloat64()
			y[j] = x[j]*x[j]*x[j] + rng.NormFloat64()
			if tied {
				x[j] = math.Round(x[j] * 3)
				y[j] = math.Round(y[j])
			}
		}
		var rx, ry rankSorter
		cy := make([]float64, n)
		ssy := ry.centredRanks(cy, ry.order(y))
		dot, ssx := rx.rankDot(rx.order(x), cy)
		got := rankCorrelation(dot, ssx, ssy)
		want := stat.Correlation(ranks(make([]float64, n), x), ranks(make([]float64, n), y), nil)
		if math.Abs(got-want) > 1e-14 || got < 0.5 {
			t.Errorf("tied %v: rank correlation %v, gonum on the ranks %v", tied, got, want)
		}
	}
	var rs rankSorter
	c := []float64{2, 2, 2}
	ss := rs.centredRanks(make([]float64, 3), rs.order(c))
	if ss != 0 || rankCorrelation(0, ss, 2) != 0 {
		t.Errorf("a constant sample: sum of squares %v, correlation %v, want 0", ss, rankCorrelation(0, ss, 2))
	}
}

// BenchmarkRankOrder ranks 20,000 samples of a normal distribution (as
// Simulate ranks each input's samples) through rankSorter, against the
// radix sort of keys and indices (ranker, BenchmarkRanks), interleaved; per
// sample:
//
//	go test ./sens/ -run '^$' -bench RankOrder -benchtime=300x -count=3
func BenchmarkRankOrder(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 20_000)
	for i := range xs {
		xs[i] = 100 + 20*rng.NormFloat64()
	}
	var rs rankSorter
	var rk ranker
	dst := make([]float64, len(xs))
	b.ReportAllocs()
	cpuPair(b, float64(len(xs)), "words", "keyed",
		func() error { rs.centredRanks(dst, rs.sorted(xs)); return nil },
		func() error { rk.ranks(dst, xs); return nil })
}
