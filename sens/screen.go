package sens

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// ScreenSettings are the settings of Screen. A nil *ScreenSettings means
// the defaults.
type ScreenSettings struct {
	Settings
	// N is the number of samples (DefaultScreenN when 0).
	N int
	// Seed chooses the random samples.
	Seed uint64
	// Workers is the number of goroutines (GOMAXPROCS when 0); it changes
	// the time taken, never the result.
	Workers int
}

// DefaultScreenN is the number of samples Screen draws by default.
const DefaultScreenN = 1000

// ScreenResult is the result of Screen.
type ScreenResult struct {
	Kind   string `json:"kind"` // "screening"
	Output string `json:"output"`
	Unit   string `json:"unit"`
	N      int    `json:"n"`
	Seed   uint64 `json:"seed"`
	// Mean and Variance are the output's over the samples.
	Mean     float64 `json:"mean"`
	Variance float64 `json:"variance"`
	// Inputs are sorted by total-order bound descending (before it is
	// capped at 1), ties by name.
	Inputs []ScreenInput `json:"inputs"`
	// Gradients is the number of gradient evaluations (one forward and one
	// reverse pass each), N.
	Gradients int `json:"gradients"`
	// UniformFromRange names the inputs with a range but no distribution,
	// sampled uniformly over the range.
	UniformFromRange []string `json:"uniform_from_range,omitempty"`
	// IgnoredCorrelations counts the declared rank correlations among the
	// inputs, which the bound (defined for independent inputs) leaves out.
	IgnoredCorrelations int `json:"ignored_correlations,omitempty"`
}

// ScreenInput is one input's derivative-based measure and the bound it
// gives on the input's total-order Sobol' index.
type ScreenInput struct {
	Name string `json:"name"`
	// DGSM is E[(∂f/∂x_i)²], in the output's unit squared per the input's
	// unit squared (DGSMUnit).
	DGSM     float64 `json:"dgsm"`
	DGSMUnit string  `json:"dgsm_unit"`
	// Poincare is the Poincaré constant C_i of the input's distribution (in
	// the input's unit squared), and Scaled the bound before capping,
	// C_i ν_i / V.
	Poincare float64 `json:"poincare_constant"`
	Scaled   float64 `json:"scaled"`
	// TotalOrderBound is min(1, Scaled): ST_i ≤ TotalOrderBound.
	TotalOrderBound float64 `json:"total_order_bound"`
}

// Screen ranks inputs by derivative-based global sensitivity measures:
// N samples of the inputs from their distributions (an input with only a
// range uniformly over it), and at each the gradient of the output by one
// forward and one reverse pass, so the cost does not grow with the number
// of inputs. For each input,
//
//	ν_i = E[(∂f/∂x_i)²],   ST_i ≤ C_i ν_i / V
//
// with V the output's variance and C_i the Poincaré constant of the input's
// distribution: (b-a)²/π² for uniform(a, b) or a range (Sobol' &
// Kucherenko 2009); σ² for normal(μ, σ) (Lamboni et al. 2013); for the
// triangular and PERT, whose densities are log-concave on [a, b],
// (b-a)²/π² (Payne & Weinberger 1960); for truncnormal the smaller of σ²
// and (b-a)²/π². A lognormal input is measured in its normal variable
// z = ln x, where C = 1 and ∂f/∂z = σ_ln x ∂f/∂x. The bound is exact for a
// linear model in normal inputs and within 12/π² for uniform ones. Samples
// are drawn in chunks from streams of their own and summed in a fixed
// order, so a seed gives the same result whatever GOMAXPROCS is.
//
// References:
//   - I. M. Sobol' and S. Kucherenko, Derivative based global sensitivity
//     measures and their link with global sensitivity indices, Math.
//     Comput. Simul. 79 (2009) 3009-3017.
//   - M. Lamboni, B. Iooss, A.-L. Popelin and F. Gamboa, Derivative-based
//     global sensitivity measures: general links with Sobol' indices and
//     numerical tests, Math. Comput. Simul. 87 (2013) 45-54.
//   - L. E. Payne and H. F. Weinberger, An optimal Poincaré inequality for
//     convex domains, Arch. Rational Mech. Anal. 5 (1960) 286-292 (from
//     memory: the constant diameter²/π² for a log-concave weight on an
//     interval).
func Screen(p *Problem, s *ScreenSettings) (*ScreenResult, error) {
	if s == nil {
		s = &ScreenSettings{}
	}
	n := s.N
	if n == 0 {
		n = DefaultScreenN
	}
	if n < 2 {
		return nil, fmt.Errorf("screen needs at least 2 samples, got %d", n)
	}
	sd, err := samplingDists(p, "screen")
	if err != nil {
		return nil, err
	}
	k := len(p.Inputs)
	res := &ScreenResult{Kind: "screening", Output: p.Output, Unit: p.Unit, N: n, Seed: s.Seed, Gradients: n,
		UniformFromRange: sd.fromRange, IgnoredCorrelations: len(p.Correlations)}
	pr := &progress{s: &s.Settings, total: n}
	// lnSD[i] is σ of ln x for a lognormal input (measured in z = ln x), 0
	// otherwise.
	lnSD := make([]float64, k)
	for i, d := range sd.dists {
		if ln, ok := d.(lognormalDist); ok {
			lnSD[i] = ln.Sigma
		}
	}

	// Samples are drawn in chunks (one random stream per chunk and input)
	// and summed in groups of consecutive chunks, each group in sample order;
	// groups are added in group order.
	cs := chunkRows(k)
	nChunks := (n + cs - 1) / cs
	groups := max(1, min(64, nChunks, maxKeptFloats/(2*max(k, 1))))
	perGroup := (nChunks + groups - 1) / groups
	groups = (nChunks + perGroup - 1) / perGroup
	sum := make([][]float64, groups)   // Σ (∂f/∂x_i)²
	sumLn := make([][]float64, groups) // Σ (x_i ∂f/∂x_i)², for lognormal inputs
	y := make([]float64, n)
	type worker struct {
		f  Function
		d  *drawer
		xs []float64
		g  []float64 // gradients of a batch, row by row
		v  []float64 // values of a batch
	}
	// Gradients are taken screenBatch samples at a time through
	// GradientBatch (the tape's batched reverse pass), with a check for
	// cancellation between batches.
	const screenBatch = 16
	workers := make([]*worker, min(workerCount(s.Workers), groups))
	for w := range workers {
		workers[w] = &worker{f: p.F.Clone(), d: newDrawer(sd.dists, s.Seed, streamScreen, cs), xs: make([]float64, cs*k),
			g: make([]float64, screenBatch*k), v: make([]float64, screenBatch)}
	}
	ctx := s.ctx()
	err = runChunks(pr, len(workers), groups, func(w, gi int) error {
		wk := workers[w]
		acc, accLn := make([]float64, k), make([]float64, k)
		for c := gi * perGroup; c < min(nChunks, (gi+1)*perGroup); c++ {
			if err := ctx.Err(); err != nil {
				return err
			}
			base := c * cs
			m := min(cs, n-base)
			for i := range k {
				scatter(wk.xs, wk.d.draw(c, i, m), i, k)
			}
			for j0 := 0; j0 < m; j0 += screenBatch {
				if j0 > 0 && ctx.Err() != nil {
					return ctx.Err()
				}
				nb := min(screenBatch, m-j0)
				if err := GradientBatch(wk.f, wk.v[:nb], wk.g[:nb*k], wk.xs[j0*k:(j0+nb)*k], nb); err != nil {
					return err
				}
				for b := range nb {
					j := j0 + b
					x := wk.xs[j*k : (j+1)*k]
					y[base+j] = wk.v[b]
					for i, d := range wk.g[b*k : (b+1)*k] {
						acc[i] += d * d
						if lnSD[i] != 0 {
							dz := x[i] * d
							accLn[i] += dz * dz
						}
					}
				}
			}
			pr.add(m)
		}
		sum[gi], sumLn[gi] = acc, accLn
		return nil
	})
	if err != nil {
		return nil, err
	}
	var mean, ss float64
	for _, v := range y {
		mean += v
	}
	mean /= float64(n)
	for _, v := range y {
		ss += (v - mean) * (v - mean)
	}
	res.Mean, res.Variance = mean, ss/float64(n-1)
	if !(res.Variance > 0) {
		return nil, fmt.Errorf("screen %s: the output does not vary over the samples (variance %g), so no input matters", p.Output, res.Variance)
	}
	res.Inputs = make([]ScreenInput, k)
	for i, in := range p.Inputs {
		var nu, nuLn float64
		for g := range groups {
			nu += sum[g][i]
			nuLn += sumLn[g][i]
		}
		nu /= float64(n)
		nuLn /= float64(n)
		c := poincare(sd.dists[i])
		scaled := c * nu / res.Variance
		switch {
		case c == 0:
			scaled = 1
		case lnSD[i] != 0:
			// in z = ln x: ν_z = σ² E[(x ∂f/∂x)²], C = 1
			scaled = lnSD[i] * lnSD[i] * nuLn / res.Variance
		}
		res.Inputs[i] = ScreenInput{Name: in.Name, DGSM: nu, DGSMUnit: squaredPartialUnit(p.Unit, in),
			Poincare: c, Scaled: scaled, TotalOrderBound: math.Min(1, scaled)}
	}
	sort.SliceStable(res.Inputs, func(a, b int) bool {
		x, y := res.Inputs[a], res.Inputs[b]
		if x.Scaled != y.Scaled {
			return x.Scaled > y.Scaled
		}
		return x.Name < y.Name
	})
	return res, nil
}

// poincare returns the Poincaré constant of d (see Screen), or 0 for a
// distribution without a known one (a Dist from outside the package), whose
// bound is then the trivial 1.
func poincare(d Dist) float64 {
	sq := func(lo, hi float64) float64 { return (hi - lo) * (hi - lo) / (math.Pi * math.Pi) }
	switch d := d.(type) {
	case uniformDist:
		return sq(d.Min, d.Max)
	case normalDist:
		return d.Sigma * d.Sigma
	case triangularDist:
		return sq(d.low, d.high)
	case pertDist:
		return sq(d.a, d.b)
	case truncNormalDist:
		return math.Min(d.sigma*d.sigma, sq(d.lo, d.hi))
	case lognormalDist:
		return 1 // in its normal variable (see Screen)
	}
	return 0
}

// squaredPartialUnit is the unit of (∂out/∂in)².
func squaredPartialUnit(out string, in *Input) string {
	u := PartialUnit(out, in.Unit, in)
	switch {
	case u == "":
		return ""
	case strings.ContainsAny(u, "/*^ "):
		return "(" + u + ")^2"
	}
	return u + "^2"
}
