package sens

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// imanConover reorders the samples in cols (one slice of n samples per
// variable) so that their rank correlations approach the target, leaving
// each variable's values (and so its distribution) unchanged:
//
//  1. R is an n × c matrix whose columns are random permutations of the
//     van der Waerden scores Φ⁻¹(i/(n+1)), i = 1..n;
//  2. with E = corr(R) = Q Qᵀ and the target C = P Pᵀ (Cholesky factors),
//     T = R (P Q⁻¹)ᵀ has sample correlation exactly C;
//  3. each variable's samples are rearranged to have the ranks of T's
//     column.
//
// The target holds Pearson correlations of normal scores (scoreCorrelation
// of the wanted Spearman coefficients), so that the rank correlation
// achieved is close to the one asked for. stop is called between the steps
// (each linear or n log n in the samples) and its error returned.
//
// References:
//   - R. L. Iman and W. J. Conover, A distribution-free approach to inducing
//     rank correlation among input variables, Commun. Statist. Simula.
//     Computa. 11 (1982) 311-334.
func imanConover(cols [][]float64, target *mat.SymDense, src rand.Source, stop func() error) error {
	c := len(cols)
	if c == 0 {
		return nil
	}
	n := len(cols[0])
	if n < c+2 {
		return fmt.Errorf("rank correlations among %d inputs need at least %d samples, got %d", c, c+2, n)
	}
	scores := make([]float64, n)
	for i := range scores {
		scores[i] = distuv.UnitNormal.Quantile(float64(i+1) / float64(n+1))
	}
	rnd := rand.New(src)
	r := mat.NewDense(n, c, nil)
	col := make([]float64, n)
	for j := 0; j < c; j++ {
		if err := stop(); err != nil {
			return err
		}
		copy(col, scores)
		rnd.Shuffle(n, func(a, b int) { col[a], col[b] = col[b], col[a] })
		r.SetCol(j, col)
	}
	if err := stop(); err != nil {
		return err
	}
	var e mat.SymDense
	stat.CorrelationMatrix(&e, r, nil)
	var qc, pc mat.Cholesky
	if !qc.Factorize(&e) {
		return fmt.Errorf("the scores of %d samples are too few to impose %d rank correlations: use more samples", n, c)
	}
	if !pc.Factorize(target) {
		return fmt.Errorf("the rank correlations are not consistent (their matrix is not positive definite)")
	}
	var q, p mat.TriDense
	qc.LTo(&q)
	pc.LTo(&p)
	// S = P Q⁻¹ (Q is c × c and lower triangular).
	var qinv mat.TriDense
	if err := qinv.InverseTri(&q); err != nil {
		return err
	}
	var s mat.Dense
	s.Mul(&p, &qinv)
	var t mat.Dense
	t.Mul(r, s.T())
	sorted := make([]float64, n)
	var rk ranker
	for j := 0; j < c; j++ {
		if err := stop(); err != nil {
			return err
		}
		mat.Col(col, j, &t)
		for r, x := range rk.order(cols[j]) {
			sorted[r] = cols[j][x.i]
		}
		if err := stop(); err != nil {
			return err
		}
		for r, x := range rk.order(col) {
			cols[j][x.i] = sorted[r]
		}
	}
	return nil
}

// ranks writes the ranks of xs (1..n, ties given their mean rank) into dst
// and returns it. It sorts by a radix sort on order-preserving keys, in
// time linear in n.
func ranks(dst, xs []float64) []float64 { return new(ranker).ranks(dst, xs) }

// ranker ranks samples, keeping its scratch space from one call to the
// next.
type ranker struct{ a, tmp []keyed }

func (r *ranker) ranks(dst, xs []float64) []float64 { return midranks(dst, r.order(xs)) }

// midranks writes into dst, for the sorted keys a, the rank of each
// (1..n, ties given their mean rank) at the index it came from.
func midranks(dst []float64, a []keyed) []float64 {
	n := len(a)
	for i := 0; i < n; {
		j := i + 1
		for j < n && a[j].key == a[i].key {
			j++
		}
		r := float64(i+j+1) / 2 // mean of ranks i+1..j
		for k := i; k < j; k++ {
			dst[a[k].i] = r
		}
		i = j
	}
	return dst
}

// order returns the indices of xs with their keys, sorted by value (ties
// in index order).
func (r *ranker) order(xs []float64) []keyed {
	n := len(xs)
	if cap(r.a) < n {
		r.a, r.tmp = make([]keyed, n), make([]keyed, n)
	}
	a := r.a[:n]
	for i, x := range xs {
		a[i] = keyed{key: floatKey(x), i: uint32(i)}
	}
	return radixSort(a, r.tmp[:n])
}

// keyed is a sort key and the index it came from.
type keyed struct {
	key uint64
	i   uint32
}

// floatKey maps a float64 to a uint64 with the same order (for numbers;
// -0 sorts before +0).
func floatKey(x float64) uint64 {
	b := math.Float64bits(x)
	if b>>63 == 1 {
		return ^b
	}
	return b | 1<<63
}

// radixSort sorts a by key, stably, using tmp (of the same length) as
// scratch, and returns the sorted slice (a or tmp): a least-significant-
// digit radix sort on the upper four bytes of the keys, skipping the bytes
// all keys share, then a sort of each run of keys equal in those bytes
// (short for samples of a continuous distribution).
func radixSort(a, tmp []keyed) []keyed {
	var count [4][256]int
	for _, x := range a {
		k := x.key >> 32
		for d := range 4 {
			count[d][byte(k>>(8*d))]++
		}
	}
	for d := range 4 {
		c := &count[d]
		shift := 32 + 8*d
		if len(a) > 0 && c[byte(a[0].key>>shift)] == len(a) {
			continue // every key has this byte
		}
		sum := 0
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		for _, x := range a {
			b := byte(x.key >> shift)
			tmp[c[b]] = x
			c[b]++
		}
		a, tmp = tmp, a
	}
	// Runs equal in the upper bytes, in order of the full key: an insertion
	// sort for a short run, a stable sort for a long one (an output that
	// barely varies).
	for i := 0; i < len(a); {
		j := i + 1
		for j < len(a) && a[j].key>>32 == a[i].key>>32 {
			j++
		}
		run := a[i:j]
		if len(run) <= 32 {
			for p := 1; p < len(run); p++ {
				x := run[p]
				q := p
				for q > 0 && run[q-1].key > x.key {
					run[q] = run[q-1]
					q--
				}
				run[q] = x
			}
		} else {
			slices.SortStableFunc(run, func(x, y keyed) int { return cmp.Compare(x.key, y.key) })
		}
		i = j
	}
	return a
}

// spearman returns Spearman's rank correlation of x and y: Pearson's
// correlation of their ranks (gonum has no rank correlation). It is 0 when
// either is constant.
func spearman(x, y []float64) float64 {
	r, _ := spearmanStop(x, y, func() error { return nil })
	return r
}

// spearmanStop is spearman, calling stop between its steps.
func spearmanStop(x, y []float64, stop func() error) (float64, error) {
	var rk ranker
	rx := rk.ranks(make([]float64, len(x)), x)
	if err := stop(); err != nil {
		return 0, err
	}
	ry := rk.ranks(make([]float64, len(y)), y)
	return pearson(rx, ry), nil
}

// pearson returns stat.Correlation, or 0 when either side is constant.
func pearson(x, y []float64) float64 {
	r := stat.Correlation(x, y, nil)
	if math.IsNaN(r) {
		return 0
	}
	return r
}
