package sens

import (
	"math"
	"sync"

	"gonum.org/v1/gonum/stat/distuv"
)

// betaTable evaluates the quantile function of a Beta distribution fast:
// gonum's Beta.Quantile inverts the regularised incomplete beta function,
// about 2 µs a call, which dominates the quasi-random designs (Sobol) that
// map every point through it. The table holds Q and its slope
// Q'(u) = 1/pdf(Q(u)) at u_j = j/betaCells and interpolates a cubic
// Hermite polynomial inside each cell. Each cell is checked at its
// midpoint against gonum when the table is built: where the cubic is off by
// more than betaTableTol (near the ends of the support, where Q is not
// smooth), or the slope is not finite, the cell is marked and its calls go
// to gonum. Built once per distribution, on first use (about 8,000 calls of
// gonum's quantile).
type betaTable struct {
	once  sync.Once
	beta  distuv.Beta
	q, dq []float64 // Q and Q' at the cell ends
	exact []bool    // cells answered by gonum
}

const (
	betaCells    = 4096
	betaTableTol = 1e-10 // on the Beta's [0, 1] scale
)

func newBetaTable(b distuv.Beta) *betaTable { return &betaTable{beta: b} }

func (t *betaTable) build() {
	const m = betaCells
	t.q, t.dq, t.exact = make([]float64, m+1), make([]float64, m+1), make([]bool, m)
	for j := range t.q {
		u := float64(j) / m
		t.q[j] = t.beta.Quantile(u)
		t.dq[j] = 1 / t.beta.Prob(t.q[j])
	}
	for j := range t.exact {
		mid := (float64(j) + 0.5) / m
		ok := j > 0 && j < m-1 && isFinite(t.dq[j]) && isFinite(t.dq[j+1])
		t.exact[j] = !ok || math.Abs(t.hermite(j, 0.5)-t.beta.Quantile(mid)) > betaTableTol
	}
}

func isFinite(x float64) bool { return !math.IsInf(x, 0) && !math.IsNaN(x) }

// hermite interpolates in cell j at fraction s of the cell.
func (t *betaTable) hermite(j int, s float64) float64 {
	const h = 1.0 / betaCells
	s2, s3 := s*s, s*s*s
	return (2*s3-3*s2+1)*t.q[j] + (s3-2*s2+s)*h*t.dq[j] + (-2*s3+3*s2)*t.q[j+1] + (s3-s2)*h*t.dq[j+1]
}

// Quantile returns the Beta's p-quantile.
func (t *betaTable) Quantile(p float64) float64 {
	t.once.Do(t.build)
	x := p * betaCells
	j := int(x)
	if j < 0 || j >= betaCells || t.exact[j] {
		return t.beta.Quantile(p)
	}
	return t.hermite(j, x-float64(j))
}

// fastQuantile returns d's quantile function, through the table for a PERT.
// Callers that map many points (n of several thousand) use it.
func fastQuantile(d Dist) func(float64) float64 {
	if p, ok := d.(pertDist); ok {
		w := p.b - p.a
		return func(u float64) float64 { return p.a + w*p.table.Quantile(u) }
	}
	return d.Quantile
}
