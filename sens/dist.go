package sens

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Dist is a probability distribution of an input, in the input's own unit.
// Sampling is by inverse transform, x = Quantile(u) with u uniform on (0, 1),
// so that low-discrepancy and stratified designs apply to every distribution.
type Dist interface {
	// Name is the distribution's name in the model language ("pert").
	Name() string
	// Params are the parameters as written, in the input's unit.
	Params() []float64
	Quantile(p float64) float64
	CDF(x float64) float64
	Mean() float64
	StdDev() float64
	// Support returns the smallest interval holding all the probability
	// (possibly infinite).
	Support() (lo, hi float64)
}

// DistInfo documents one distribution of the model language.
type DistInfo struct {
	Name    string
	Params  []string
	Doc     string
	Example string
	make    func(p []float64) (Dist, error)
}

// Distributions lists the distributions the model language knows.
var Distributions = []DistInfo{
	{"uniform", []string{"low", "high"}, "every value between low and high equally likely", "~ uniform(40, 80)", newUniform},
	{"triangular", []string{"low", "mode", "high"}, "triangle with its peak at mode", "~ triangular(0.8, 0.9, 1.2)", newTriangular},
	{"normal", []string{"mean", "sd"}, "normal (Gaussian) with mean and standard deviation sd > 0", "~ normal(60, 5)", newNormal},
	{"lognormal", []string{"mean", "sd"}, "lognormal given by the mean and standard deviation of the value itself (not of its log); positive values only", "~ lognormal(1000, 250)", newLognormal},
	{"pert", []string{"low", "mode", "high"}, "beta-PERT: a smooth peaked distribution on [low, high] with its mode at mode (shape 4)", "~ pert(0.8, 0.9, 1.2)", newPERT},
	{"truncnormal", []string{"mean", "sd", "low", "high"}, "normal(mean, sd) cut to [low, high] and renormalised", "~ truncnormal(60, 10, 45, 90)", newTruncNormal},
}

// LookupDist returns the description of a distribution name, or nil.
func LookupDist(name string) *DistInfo {
	for i := range Distributions {
		if Distributions[i].Name == name {
			return &Distributions[i]
		}
	}
	return nil
}

// NewDist builds the named distribution from its parameters.
func NewDist(name string, params []float64) (Dist, error) {
	info := LookupDist(name)
	if info == nil {
		return nil, fmt.Errorf("unknown distribution %s", name)
	}
	if len(params) != len(info.Params) {
		return nil, fmt.Errorf("%s takes %d parameters (%s), got %d", name, len(info.Params), joinNames(info.Params), len(params))
	}
	for i, v := range params {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: parameter %s is not a finite number", name, info.Params[i])
		}
	}
	return info.make(params)
}

func joinNames(s []string) string {
	out := ""
	for i, n := range s {
		if i > 0 {
			out += ", "
		}
		out += n
	}
	return out
}

type uniformDist struct{ distuv.Uniform }

func newUniform(p []float64) (Dist, error) {
	if !(p[0] < p[1]) {
		return nil, fmt.Errorf("uniform needs low < high, got %g and %g", p[0], p[1])
	}
	return uniformDist{distuv.Uniform{Min: p[0], Max: p[1]}}, nil
}
func (d uniformDist) Name() string                { return "uniform" }
func (d uniformDist) Params() []float64           { return []float64{d.Min, d.Max} }
func (d uniformDist) Support() (float64, float64) { return d.Min, d.Max }

type triangularDist struct {
	distuv.Triangle
	low, mode, high float64
}

func newTriangular(p []float64) (Dist, error) {
	low, mode, high := p[0], p[1], p[2]
	if !(low < high) || mode < low || mode > high {
		return nil, fmt.Errorf("triangular needs low <= mode <= high and low < high, got %g, %g, %g", low, mode, high)
	}
	// gonum's order is (low, high, mode).
	return triangularDist{distuv.NewTriangle(low, high, mode, nil), low, mode, high}, nil
}
func (d triangularDist) Name() string                { return "triangular" }
func (d triangularDist) Params() []float64           { return []float64{d.low, d.mode, d.high} }
func (d triangularDist) Support() (float64, float64) { return d.low, d.high }

type normalDist struct{ distuv.Normal }

func newNormal(p []float64) (Dist, error) {
	if !(p[1] > 0) {
		return nil, fmt.Errorf("normal needs sd > 0, got %g", p[1])
	}
	return normalDist{distuv.Normal{Mu: p[0], Sigma: p[1]}}, nil
}
func (d normalDist) Name() string                { return "normal" }
func (d normalDist) Params() []float64           { return []float64{d.Mu, d.Sigma} }
func (d normalDist) Support() (float64, float64) { return math.Inf(-1), math.Inf(1) }

type lognormalDist struct {
	distuv.LogNormal
	mean, sd float64
}

// newLognormal converts the mean m and standard deviation s of the value to the
// parameters of its logarithm:
//
//	sigma² = ln(1 + s²/m²),  mu = ln(m) - sigma²/2
func newLognormal(p []float64) (Dist, error) {
	m, s := p[0], p[1]
	if !(m > 0) || !(s > 0) {
		return nil, fmt.Errorf("lognormal needs mean > 0 and sd > 0, got %g and %g", m, s)
	}
	s2 := math.Log1p(s * s / (m * m))
	return lognormalDist{distuv.LogNormal{Mu: math.Log(m) - s2/2, Sigma: math.Sqrt(s2)}, m, s}, nil
}
func (d lognormalDist) Name() string                { return "lognormal" }
func (d lognormalDist) Params() []float64           { return []float64{d.mean, d.sd} }
func (d lognormalDist) Support() (float64, float64) { return 0, math.Inf(1) }

// pertDist is the beta-PERT distribution on [a, b] with mode m:
//
//	x = a + (b-a)·B,  B ~ Beta(1 + 4(m-a)/(b-a), 1 + 4(b-m)/(b-a))
//
// Its mean is (a + 4m + b)/6.
type pertDist struct {
	beta    distuv.Beta
	a, m, b float64
	table   *betaTable // fast quantiles for sampling designs
}

func newPERT(p []float64) (Dist, error) {
	a, m, b := p[0], p[1], p[2]
	if !(a < b) || m < a || m > b {
		return nil, fmt.Errorf("pert needs low <= mode <= high and low < high, got %g, %g, %g", a, m, b)
	}
	w := b - a
	beta := distuv.Beta{Alpha: 1 + 4*(m-a)/w, Beta: 1 + 4*(b-m)/w}
	return pertDist{beta, a, m, b, newBetaTable(beta)}, nil
}
func (d pertDist) Name() string                { return "pert" }
func (d pertDist) Params() []float64           { return []float64{d.a, d.m, d.b} }
func (d pertDist) Quantile(p float64) float64  { return d.a + (d.b-d.a)*d.beta.Quantile(p) }
func (d pertDist) CDF(x float64) float64       { return d.beta.CDF((x - d.a) / (d.b - d.a)) }
func (d pertDist) Mean() float64               { return d.a + (d.b-d.a)*d.beta.Mean() }
func (d pertDist) StdDev() float64             { return (d.b - d.a) * d.beta.StdDev() }
func (d pertDist) Support() (float64, float64) { return d.a, d.b }

// truncNormalDist is normal(mu, sigma) restricted to [lo, hi]:
//
//	F(x) = (Φ((x-mu)/sigma) - Φ(α)) / (Φ(β) - Φ(α)),  α = (lo-mu)/sigma, β = (hi-mu)/sigma
type truncNormalDist struct {
	mu, sigma, lo, hi float64
	pa, pb            float64 // Φ(α), Φ(β)
}

var stdNormal = distuv.UnitNormal

func newTruncNormal(p []float64) (Dist, error) {
	mu, sigma, lo, hi := p[0], p[1], p[2], p[3]
	if !(sigma > 0) || !(lo < hi) {
		return nil, fmt.Errorf("truncnormal needs sd > 0 and low < high, got sd %g, low %g, high %g", sigma, lo, hi)
	}
	d := truncNormalDist{mu: mu, sigma: sigma, lo: lo, hi: hi,
		pa: stdNormal.CDF((lo - mu) / sigma), pb: stdNormal.CDF((hi - mu) / sigma)}
	if !(d.pb-d.pa > 1e-12) {
		return nil, fmt.Errorf("truncnormal: [%g, %g] holds almost no probability of normal(%g, %g)", lo, hi, mu, sigma)
	}
	return d, nil
}
func (d truncNormalDist) Name() string      { return "truncnormal" }
func (d truncNormalDist) Params() []float64 { return []float64{d.mu, d.sigma, d.lo, d.hi} }
func (d truncNormalDist) Quantile(p float64) float64 {
	x := d.mu + d.sigma*stdNormal.Quantile(d.pa+p*(d.pb-d.pa))
	return math.Min(math.Max(x, d.lo), d.hi)
}
func (d truncNormalDist) CDF(x float64) float64 {
	switch {
	case x <= d.lo:
		return 0
	case x >= d.hi:
		return 1
	}
	return (stdNormal.CDF((x-d.mu)/d.sigma) - d.pa) / (d.pb - d.pa)
}

// Mean and StdDev of the truncated normal, with φ the standard normal density
// and Z = Φ(β) - Φ(α):
//
//	mean = mu + sigma (φ(α) - φ(β)) / Z
//	var  = sigma² [1 + (α φ(α) - β φ(β))/Z - ((φ(α) - φ(β))/Z)²]
//
// References:
//   - Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions, vol. 1, 2nd ed., ch. 13.
func (d truncNormalDist) Mean() float64 {
	a, b := (d.lo-d.mu)/d.sigma, (d.hi-d.mu)/d.sigma
	return d.mu + d.sigma*(stdNormal.Prob(a)-stdNormal.Prob(b))/(d.pb-d.pa)
}
func (d truncNormalDist) StdDev() float64 {
	a, b := (d.lo-d.mu)/d.sigma, (d.hi-d.mu)/d.sigma
	z := d.pb - d.pa
	pa, pb := stdNormal.Prob(a), stdNormal.Prob(b)
	t := (pa - pb) / z
	v := 1 + (a*pa-b*pb)/z - t*t
	return d.sigma * math.Sqrt(math.Max(v, 0))
}
func (d truncNormalDist) Support() (float64, float64) { return d.lo, d.hi }
