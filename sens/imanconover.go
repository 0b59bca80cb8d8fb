package sens

import (
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
// achieved is close to the one asked for.
//
// References:
//   - R. L. Iman and W. J. Conover, A distribution-free approach to inducing
//     rank correlation among input variables, Commun. Statist. Simula.
//     Computa. 11 (1982) 311-334.
func imanConover(cols [][]float64, target *mat.SymDense, src rand.Source) error {
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
		copy(col, scores)
		rnd.Shuffle(n, func(a, b int) { col[a], col[b] = col[b], col[a] })
		r.SetCol(j, col)
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
	// S = P Q⁻¹, from S Q = P: solve Qᵀ Sᵀ = Pᵀ.
	var qinv mat.TriDense
	if err := qinv.InverseTri(&q); err != nil {
		return err
	}
	var s mat.Dense
	s.Mul(&p, &qinv)
	var t mat.Dense
	t.Mul(r, s.T())
	idx := make([]int, n)
	sorted := make([]float64, n)
	for j := 0; j < c; j++ {
		mat.Col(col, j, &t)
		for i := range idx {
			idx[i] = i
		}
		slices.SortStableFunc(idx, func(a, b int) int { return cmpFloat(col[a], col[b]) })
		copy(sorted, cols[j])
		slices.Sort(sorted)
		for rank, i := range idx {
			cols[j][i] = sorted[rank]
		}
	}
	return nil
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// ranks writes the ranks of xs (1..n, ties given their mean rank) into dst
// and returns it.
func ranks(dst, xs []float64) []float64 {
	n := len(xs)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int {
		if c := cmpFloat(xs[a], xs[b]); c != 0 {
			return c
		}
		return a - b
	})
	for i := 0; i < n; {
		j := i + 1
		for j < n && xs[idx[j]] == xs[idx[i]] {
			j++
		}
		r := float64(i+j+1) / 2 // mean of ranks i+1..j
		for k := i; k < j; k++ {
			dst[idx[k]] = r
		}
		i = j
	}
	return dst
}

// spearman returns Spearman's rank correlation of x and y: Pearson's
// correlation of their ranks (gonum has no rank correlation). It is 0 when
// either is constant.
func spearman(x, y []float64) float64 {
	rx := ranks(make([]float64, len(x)), x)
	ry := ranks(make([]float64, len(y)), y)
	return pearson(rx, ry)
}

// pearson returns stat.Correlation, or 0 when either side is constant.
func pearson(x, y []float64) float64 {
	r := stat.Correlation(x, y, nil)
	if math.IsNaN(r) {
		return 0
	}
	return r
}
