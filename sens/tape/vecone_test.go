package tape

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"
	"time"
)

// pairwiseRef is the order of sumOrdered written the other way round, as
// the levels of a tree: the block sums, then the sums of neighbouring
// pairs level by level, each level's complete trees kept; the trees left
// at the right end, one a bit of the number of blocks, added from the
// right.
func pairwiseRef(xs []float64) float64 {
	if len(xs) <= sumBlock {
		return sumLeaf(xs, nil)
	}
	var lv [][]float64
	var blocks []float64
	for lo := 0; lo < len(xs); lo += sumBlock {
		blocks = append(blocks, sumLeaf(xs[lo:min(lo+sumBlock, len(xs))], nil))
	}
	lv = append(lv, blocks)
	for len(lv[len(lv)-1]) >= 2 {
		below := lv[len(lv)-1]
		var up []float64
		for i := 0; i+1 < len(below); i += 2 {
			up = append(up, below[i]+below[i+1])
		}
		lv = append(lv, up)
	}
	var parts []float64
	off := 0
	for h := len(lv) - 1; h >= 0; h-- {
		if len(blocks)>>h&1 == 1 {
			parts = append(parts, lv[h][off>>h])
			off += 1 << h
		}
	}
	r := parts[len(parts)-1]
	for k := len(parts) - 2; k >= 0; k-- {
		r = parts[k] + r
	}
	return r
}

// A long sum is the tree its documentation describes (pairwiseRef, an
// independent layout of it), the sum tree's root is that sum before and
// after updates, a sum of small whole numbers is exact (every partial sum
// is an integer below 2^53, so no addition rounds: IEEE 754), and a sum of
// random terms is within the pairwise summation bound of the exact sum
// (math/big): |error| <= γ_k Σ|x_i|, γ_k = k u / (1 - k u), with k =
// sumBlock/4 + 2 + ceil(log2(blocks)) + 1 additions on a term's path
// (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., eq.
// 4.6 for pairwise summation).
func TestSumTree(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{1, 3, 4, 63, 64, 65, 127, 128, 129, 191, 192, 193, 255, 256, 257, 383, 384, 385, 1000, 128*13 + 5, 128 * 64, 100_000} {
		xs := make([]float64, n)
		for j := range xs {
			xs[j] = (rng.Float64() - 0.3) * math.Pow(10, float64(rng.IntN(7)))
		}
		got := sumOrdered(xs, nil)
		if want := pairwiseRef(xs); math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("n %d: sumOrdered %v, the tree's levels %v", n, got, want)
		}
		if s := sumShape(n, func(lo, hi int) float64 { return sumLeaf(xs[lo:hi], nil) }, func(a, b float64) float64 { return a + b }); s != got {
			t.Errorf("n %d: sumShape %v, sumOrdered %v", n, s, got)
		}
		exact, abs := new(big.Float).SetPrec(2000), 0.0
		for _, x := range xs {
			exact.Add(exact, new(big.Float).SetPrec(2000).SetFloat64(x))
			abs += math.Abs(x)
		}
		e, _ := exact.Float64()
		k := float64(sumBlock/4+3) + math.Ceil(math.Log2(float64(n/sumBlock+1)))
		u := 0x1p-53
		if bound := k * u / (1 - k*u) * abs * 1.01; math.Abs(got-e) > bound {
			t.Errorf("n %d: error %g beyond the bound %g", n, got-e, bound)
		}
		ys := make([]float64, n)
		var whole int64
		for j := range ys {
			ys[j] = float64(rng.IntN(2000) - 500)
			whole += int64(ys[j])
		}
		if got := sumOrdered(ys, nil); got != float64(whole) {
			t.Errorf("n %d: the sum of whole numbers is %v, not %d", n, got, whole)
		}
		// The tree, updated in random blocks and restored.
		tr := newSumTree(xs, nil)
		if r := tr.root(); math.Float64bits(r) != math.Float64bits(got) {
			t.Errorf("n %d: the tree's root %v, sumOrdered %v", n, r, got)
		}
		work := slices.Clone(xs)
		for range 5 {
			j := rng.IntN(n)
			work[j] = rng.Float64() * 1e4
			tr.update(work, nil, j/sumBlock)
			if r, want := tr.root(), sumOrdered(work, nil); math.Float64bits(r) != math.Float64bits(want) {
				t.Errorf("n %d: the updated tree's root %v, sumOrdered %v", n, r, want)
			}
		}
		tr.restore()
		if r := tr.root(); math.Float64bits(r) != math.Float64bits(got) {
			t.Errorf("n %d: the restored tree's root %v, sumOrdered %v", n, r, got)
		}
	}
}

// conesAgree checks the cones of every output of tp around x against
// evalRef (the full pass), to the last bit and the same error, for points
// that change a few inputs, one at a time and in pairs, to values that
// include domain errors.
func conesAgree(t *testing.T, name string, tp *Tape, x []float64, rng *rand.Rand) (cones int) {
	t.Helper()
	nIn := tp.NumInputs()
	for o := range tp.NumOutputs() {
		c, err := tp.Cones(x, o)
		if err != nil {
			continue
		}
		cones++
		for range 4 {
			i := rng.IntN(nIn)
			for _, j := range []int{-1, (i + 1 + rng.IntN(nIn-1)) % nIn} {
				const n = 7
				pts := make([][]float64, n)
				vi, vj := make([]float64, n), make([]float64, n)
				for s := range pts {
					pts[s] = slices.Clone(x)
					vi[s] = x[i] * (1 + 0.2*float64(s-3))
					if s == 6 {
						vi[s] = -3 // out of some operations' domains
					}
					pts[s][i] = vi[s]
					if j >= 0 {
						vj[s] = x[j] * (1 - 0.1*float64(s-3))
						pts[s][j] = vj[s]
					}
				}
				want, bad, wantErr := evalRef(tp, pts, o)
				got := make([]float64, n)
				if d := agree(got, c.Eval(got, i, vi, j, vj, n), want, bad, wantErr); d != "" {
					t.Errorf("%s output %d, cone of inputs %d, %d: %s", name, o, i, j, d)
				}
			}
		}
	}
	return cones
}

// Cones of random vector models (maps of arithmetic, economy and step
// operations with scalars broadcast, sums, dot products, min, max,
// filters and group sums) give the full pass's values to the bit, for
// vectors short and long (long sums take their trees).
func TestVecConesAgreeWithTape(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	var cones int
	for seed := range uint64(120) {
		nmax := 40
		if seed%4 == 0 {
			nmax = 700
		}
		b := NewBuilder()
		outs, x := randomVecModelN(b, seed, nmax)
		tp := b.Tape(outs...)
		if len(tp.p.loops) == 0 {
			continue
		}
		cones += conesAgree(t, fmt.Sprintf("seed %d", seed), tp, x, rng)
	}
	if cones < 500 {
		t.Errorf("%d outputs with cones: the test covers too little", cones)
	}
}

// The loop and scalar builds of long vectors agree to the bit (their sums
// and group sums are laid out as the same tree), values, gradients and
// batched passes.
func TestLongLoopsAgreeWithScalarOps(t *testing.T) {
	for seed := range uint64(12) {
		build := func(b *Builder) ([]Slot, []float64) { return randomVecModelN(b, 1000+seed, 600) }
		b := NewBuilder()
		outs, x := build(b)
		e := NewBuilder()
		e.SetLoopMin(math.MaxInt)
		eouts, _ := build(e)
		loopsAgree(t, fmt.Sprintf("seed %d", 1000+seed), b.Tape(outs...), e.Tape(eouts...), x)
	}
	for _, n := range []int{9, 300, 1030} {
		e := NewBuilder()
		e.SetLoopMin(math.MaxInt)
		tp, x := lineModel(n)
		te, _ := lineModelOf(e, n)
		if len(te.p.loops) != 0 {
			t.Fatal("the scalar build has loop nodes")
		}
		loopsAgree(t, fmt.Sprintf("%d lines", n), tp, te, x)
	}
}

// lineModel builds Σ q_j c_j, Σ q_j, min and max of q and a filtered and
// grouped roll-up over n lines, with a scalar markup broadcast: the
// shapes of a bid.
func lineModel(n int) (*Tape, []float64) {
	return lineModelOf(NewBuilder(), n)
}

// lineModelOf is lineModel built by b.
func lineModelOf(b *Builder, n int) (*Tape, []float64) {
	q, c := b.VecInput(n), b.VecInput(n)
	markup := b.Input()
	rng := rand.New(rand.NewPCG(uint64(n), 5))
	x := make([]float64, 2*n+1)
	for j := range n {
		x[j] = float64(1 + rng.IntN(20))
		x[n+j] = 10 + 90*rng.Float64()
	}
	x[2*n] = 1.1
	line := b.Map(OpMul, q, c)
	var keep, groups []int
	for j := range n {
		if j%3 != 1 {
			keep = append(keep, j)
		}
		groups = append(groups, j%9)
	}
	total := b.Dot(q, c)
	outs := []Slot{
		total,
		b.Binary(OpMul, total, markup),
		b.Sum(b.Map(OpMul, line, markup)),
		b.Reduce(OpMin, q),
		b.Reduce(OpMax, b.Map(OpSub, c, b.Map(OpMul, q, b.Const(3)))),
		b.Sum(b.Gather(line, keep)),
		b.Sum(b.Map(OpSqrt, b.GroupSum(line, groups, 9))),
		b.Sum(b.Map(OpSquare, b.Map(OpSub, q, b.Const(10)))),
	}
	return b.Tape(outs...), x
}

// The shapes of a bid at sizes around the tree's blocks agree with the
// full pass, min and max included when the changed element takes or
// gives up the pick; a bid's roll-up is monotone in every line's inputs
// and a sum of squares around 10 is not.
func TestVecConesLines(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	for _, n := range []int{9, 128, 129, 300, 1030} {
		tp, x := lineModel(n)
		conesAgree(t, fmt.Sprintf("%d lines", n), tp, x, rng)
		// Every element of q, moved below the least and above the
		// greatest, one at a time, and back to its own value.
		c, err := tp.Cones(x, 3)
		if err != nil {
			t.Fatal(err)
		}
		for i := range n {
			vi := []float64{0.5, x[i], 25, x[i] + 1e-9, 1}
			got := make([]float64, len(vi))
			pts := make([][]float64, len(vi))
			for s := range pts {
				pts[s] = slices.Clone(x)
				pts[s][i] = vi[s]
			}
			want, bad, wantErr := evalRef(tp, pts, 3)
			if d := agree(got, c.Eval(got, i, vi, -1, nil, len(vi)), want, bad, wantErr); d != "" {
				t.Fatalf("%d lines, min, element %d: %s", n, i, d)
			}
		}
		for _, o := range []int{0, 1, 2, 5, 6} {
			c, err := tp.Cones(x, o)
			if err != nil {
				t.Fatal(err)
			}
			for _, i := range []int{0, n - 1, n + n/2, 2 * n} {
				if !c.Monotone(i) {
					t.Errorf("%d lines, output %d: not proven monotone in input %d", n, o, i)
				}
			}
		}
		c, err = tp.Cones(x, 7)
		if err != nil {
			t.Fatal(err)
		}
		if c.Monotone(0) {
			t.Errorf("%d lines: a sum of squares proven monotone", n)
		}
	}
}

// BenchmarkSumTree times the sum of 100,000 terms in the order of the
// tape (blocks of sumBlock, added as a tree) against four interleaved
// partial sums over the whole (the order before the tree), interleaved
// in chunks of 16 calls; "ratio" is the median of the chunks' tree /
// lanes (a chunk the scheduler interrupts is an outlier, not the rule).
func BenchmarkSumTree(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 100_000)
	for j := range xs {
		xs[j] = rng.Float64()
	}
	var sink float64
	var ratios []float64
	b.ReportAllocs()
	for b.Loop() {
		t0 := time.Now()
		for range 16 {
			sink += sumOrdered(xs, nil)
		}
		t1 := time.Now()
		for range 16 {
			sink += sum4(xs)
		}
		ratios = append(ratios, float64(t1.Sub(t0))/float64(time.Since(t1)))
	}
	slices.Sort(ratios)
	b.ReportMetric(ratios[len(ratios)/2], "ratio")
	if sink == 0 {
		b.Fatal("no sum")
	}
}
