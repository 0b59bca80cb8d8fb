package sens

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"
	"sort"

	"gonum.org/v1/gonum/floats"

	"github.com/nudge-dev/nudge/sens/qmc"
)

// SobolSettings are the settings of Sobol. A nil *SobolSettings means the
// defaults.
type SobolSettings struct {
	Settings
	// N is the number of base samples (DefaultSobolN when 0); the analysis
	// evaluates the output N·(k+2) times for k inputs. A power of two suits
	// the Sobol' sequence best.
	N int
	// Seed chooses the random digital shift of the Sobol' points and the
	// bootstrap resamples.
	Seed uint64
	// Bootstrap is the number of bootstrap resamples for the confidence
	// intervals (DefaultBootstrap when 0).
	Bootstrap int
	// Confidence is the level of the intervals (0.95 when 0).
	Confidence float64
	// Workers is the number of goroutines (GOMAXPROCS when 0); it changes
	// the time taken, never the result.
	Workers int
}

// Defaults of Sobol.
const (
	DefaultSobolN    = 4096
	DefaultBootstrap = 500
)

// maxSobolOutputs bounds the outputs Sobol keeps for its bootstrap (N·(k+2)
// values, 256 MiB).
const maxSobolOutputs = 1 << 25

// SobolResult is the result of Sobol.
type SobolResult struct {
	Kind   string `json:"kind"` // "sobol"
	Output string `json:"output"`
	Unit   string `json:"unit"`
	N      int    `json:"n"`
	Seed   uint64 `json:"seed"`
	// Mean and Variance are the output's mean and variance over the 2N
	// base samples.
	Mean     float64 `json:"mean"`
	Variance float64 `json:"variance"`
	// Inputs are sorted by total-order index descending, ties by name.
	Inputs []SobolIndex `json:"inputs"`
	// SumFirstOrder is Σ S_i: 1 for an additive model, less with
	// interactions.
	SumFirstOrder float64 `json:"sum_first_order"`
	Evaluations   int     `json:"evaluations"` // N·(k+2)
	Bootstrap     int     `json:"bootstrap"`
	Confidence    float64 `json:"confidence"`
	// Unsettled lists neighbours in the ranking whose total-order intervals
	// overlap, with the n that would separate them.
	Unsettled []UnsettledPair `json:"unsettled,omitempty"`
	// UniformFromRange names the inputs with a range but no distribution,
	// sampled uniformly over the range.
	UniformFromRange []string `json:"uniform_from_range,omitempty"`
	// IgnoredCorrelations counts the declared rank correlations among the
	// inputs, which these indices (defined for independent inputs) leave out.
	IgnoredCorrelations int `json:"ignored_correlations,omitempty"`
}

// SobolIndex is one input's first-order and total-order Sobol' indices
// with their bootstrap confidence intervals.
type SobolIndex struct {
	Name         string     `json:"name"`
	FirstOrder   float64    `json:"first_order"`
	TotalOrder   float64    `json:"total_order"`
	FirstOrderCI [2]float64 `json:"first_order_ci"`
	TotalOrderCI [2]float64 `json:"total_order_ci"`
}

// UnsettledPair is two inputs whose order in the ranking the sample cannot
// tell: their total-order intervals overlap. SettleN is the n (a power of
// two) at which intervals narrowing as 1/√n would stop overlapping, or 0
// when that is more than maxSettleFactor times n (the indices are
// practically equal).
type UnsettledPair struct {
	Inputs  [2]string `json:"inputs"`
	SettleN int       `json:"settle_n"`
}

// unsettledFloor is the total-order index below which the order of inputs
// is not worth settling.
const unsettledFloor = 0.05

// maxSettleFactor bounds the n Sobol suggests, as a multiple of the n
// used.
const maxSettleFactor = 64

// Sobol estimates every input's first-order and total-order Sobol' index of
// the output, with the inputs drawn independently from their distributions
// (an input with only a range uniformly over it). From two N × k matrices A
// and B of quasi-random samples, and A_B^i, A with its column i from B:
//
//	V    = var(f(A), f(B))
//	S_i  = (1/N) Σ_j (f(B)_j - f0) (f(A_B^i)_j - f(A)_j) / V     (Saltelli et al. 2010)
//	ST_i = (1/2N) Σ_j (f(A)_j - f(A_B^i)_j)² / V                 (Jansen 1999)
//
// N·(k+2) evaluations in all, batched and spread over Workers goroutines.
// A_B^i differs from A in column i only, so a compiled model evaluates it
// through input i's cone over A's values, lane by lane (sens/radial.go),
// with the bits of evaluating every point whole; a chunk of rows with a
// failing point is evaluated again whole, so that the error reported is
// the one it always was (the first of the chunk's A, then B, then each
// A_B^i in turn).
// Subtracting the mean f0 from f(B) leaves S_i's estimator unbiased and
// lowers its variance (Sobol' 2001). The points are the first N of a 2k-
// dimensional Sobol' sequence (Joe & Kuo 2008 direction numbers; A takes
// the first k coordinates, B the others) under a random digital shift
// chosen by Seed, mapped to each input's distribution by its quantile
// function. Confidence intervals are bootstrap percentiles over Bootstrap
// resamples of the N rows. Declared rank correlations are left out (the
// indices are defined for independent inputs) and counted in the result.
//
// References:
//   - A. Saltelli, P. Annoni, I. Azzini, F. Campolongo, M. Ratto and
//     S. Tarantola, Variance based sensitivity analysis of model output.
//     Design and estimator for the total sensitivity index, Comput. Phys.
//     Commun. 181 (2010) 259-270.
//   - M. J. W. Jansen, Analysis of variance designs for model output,
//     Comput. Phys. Commun. 117 (1999) 35-43.
//   - I. M. Sobol', Global sensitivity indices for nonlinear mathematical
//     models and their Monte Carlo estimates, Math. Comput. Simul. 55
//     (2001) 271-280.
//   - A. Saltelli et al., Global Sensitivity Analysis: The Primer, Wiley,
//     2008.
func Sobol(p *Problem, s *SobolSettings) (*SobolResult, error) {
	if s == nil {
		s = &SobolSettings{}
	}
	n, nboot, conf := s.N, s.Bootstrap, s.Confidence
	if n == 0 {
		n = DefaultSobolN
	}
	if nboot == 0 {
		nboot = DefaultBootstrap
	}
	if conf == 0 {
		conf = 0.95
	}
	switch {
	case n < 2:
		return nil, fmt.Errorf("sobol needs n of at least 2, got %d", n)
	case n > qmc.MaxPoints:
		return nil, fmt.Errorf("sobol: n = %d is beyond the 2^32 points of the Sobol' sequence", n)
	case nboot < 1:
		return nil, fmt.Errorf("sobol needs at least 1 bootstrap resample, got %d", nboot)
	case !(conf > 0 && conf < 1):
		return nil, fmt.Errorf("sobol: the confidence level must lie between 0 and 1, got %g", conf)
	}
	sd, err := samplingDists(p, "sobol")
	if err != nil {
		return nil, err
	}
	k := len(p.Inputs)
	if 2*k > qmc.MaxDim {
		return nil, fmt.Errorf("sobol %s: %d inputs need a Sobol' sequence of %d dimensions, beyond the %d of the Joe & Kuo table: rank the inputs with screen %s, whose cost does not grow with the number of inputs",
			p.Output, k, 2*k, qmc.MaxDim, p.Output)
	}
	if n*(k+2) > maxSobolOutputs {
		return nil, fmt.Errorf("sobol %s: n = %d on %d inputs would keep %d outputs for the bootstrap, more than %d: lower n, or rank the inputs with screen %s",
			p.Output, n, k, n*(k+2), maxSobolOutputs, p.Output)
	}
	res := &SobolResult{Kind: "sobol", Output: p.Output, Unit: p.Unit, N: n, Seed: s.Seed,
		Evaluations: n * (k + 2), Bootstrap: nboot, Confidence: conf,
		UniformFromRange: sd.fromRange, IgnoredCorrelations: len(p.Correlations)}
	pr := &progress{s: &s.Settings, total: n*(k+2) + n*k*nboot/(4*(k+2)) + 1}

	// The digital shift: one random 32-bit word per dimension.
	var pcg rand.PCG
	seedStream(&pcg, s.Seed, streamShift, 0, 0)
	shift := make([]uint32, 2*k)
	for d := range shift {
		shift[d] = uint32(pcg.Uint64() >> 32)
	}

	// The quantile function of each input; for n of a few thousand and more,
	// the PERT's through its table.
	quantile := make([]func(float64) float64, k)
	for i, d := range sd.dists {
		quantile[i] = d.Quantile
		if n >= betaCells/2 {
			quantile[i] = fastQuantile(d)
		}
	}

	// fa[j], fb[j] and fab[j*k+i] = f(A_B^i)_j.
	fa, fb := make([]float64, n), make([]float64, n)
	fab := make([]float64, n*k)
	cs := chunkRows(k)
	nChunks := (n + cs - 1) / cs
	type worker struct {
		f    Function
		seq  *qmc.Sobol
		bits []uint32
		a, b [][]float64 // columns of A and B in the inputs' units
		cols [][]float64 // A with one column from B
		y    []float64
		rows []float64 // for a Function that takes rows only
		rad  radialSet // nil: every point evaluated whole
		fab  [][]float64
	}
	workers := make([]*worker, min(workerCount(s.Workers), nChunks))
	for w := range workers {
		seq, err := qmc.NewSobol(2 * k)
		if err != nil {
			return nil, err
		}
		wk := &worker{f: p.F.Clone(), seq: seq, bits: make([]uint32, 2*k),
			a: make([][]float64, k), b: make([][]float64, k), cols: make([][]float64, k), y: make([]float64, cs)}
		buf := make([]float64, 2*k*cs)
		for i := range k {
			wk.a[i] = buf[2*i*cs : (2*i+1)*cs : (2*i+1)*cs]
			wk.b[i] = buf[(2*i+1)*cs : (2*i+2)*cs : (2*i+2)*cs]
		}
		if wk.rad = newRadial(wk.f); wk.rad != nil {
			wk.fab = make([][]float64, k)
			fbuf := make([]float64, k*cs)
			for i := range k {
				wk.fab[i] = fbuf[i*cs : (i+1)*cs : (i+1)*cs]
			}
		}
		workers[w] = wk
	}
	ctx := s.ctx()
	err = runChunks(pr, len(workers), nChunks, func(w, c int) error {
		wk := workers[w]
		base := c * cs
		m := min(cs, n-base)
		wk.seq.Seek(uint64(base))
		for j := range m {
			wk.seq.NextBits(wk.bits)
			for i, q := range quantile {
				wk.a[i][j] = q(unitFraction(wk.bits[i] ^ shift[i]))
				wk.b[i][j] = q(unitFraction(wk.bits[k+i] ^ shift[k+i]))
			}
		}
		// A and the A_B^i through the cones of a compiled model, lane by
		// lane over A's values; any failure sends the chunk the whole way
		// below, which reports it as it always has.
		if wk.rad != nil && wk.rad.eval(fa[base:base+m], wk.fab, wk.a, wk.b, m) == nil {
			if err := columnEval(wk.f, fb[base:base+m], wk.b, m, &wk.rows); err != nil {
				return err
			}
			for i, col := range wk.fab {
				for j, v := range col[:m] {
					fab[(base+j)*k+i] = v
				}
			}
			pr.add(m * (k + 2))
			return nil
		}
		if err := columnEval(wk.f, fa[base:base+m], wk.a, m, &wk.rows); err != nil {
			return err
		}
		if err := columnEval(wk.f, fb[base:base+m], wk.b, m, &wk.rows); err != nil {
			return err
		}
		// A_B^i: A with column i from B, read in place.
		copy(wk.cols, wk.a)
		for i := range k {
			if err := ctx.Err(); err != nil {
				return err
			}
			wk.cols[i] = wk.b[i]
			if err := columnEval(wk.f, wk.y[:m], wk.cols, m, &wk.rows); err != nil {
				return err
			}
			wk.cols[i] = wk.a[i]
			for j, v := range wk.y[:m] {
				fab[(base+j)*k+i] = v
			}
		}
		pr.add(m * (k + 2))
		return nil
	})
	if err != nil {
		return nil, err
	}

	est := newSobolTerms(fa, fb, fab, k)
	res.Mean = est.f0
	first, total, v := est.indices()
	res.Variance = v
	if !(v > 0) {
		return nil, fmt.Errorf("sobol %s: the output does not vary over the samples (variance %g), so it has no indices", p.Output, v)
	}

	// Bootstrap: resample the N rows with replacement, a block of
	// resamples at a time: each resample draws its rows from a stream of
	// its own, and the block sums every row's terms into each resample
	// that drew it, as often as it drew it, in one pass over the rows.
	bf := make([][]float64, nboot) // first-order indices of each resample
	bt := make([][]float64, nboot)
	per := bootBlock(n)
	perBoot := max(1, n*k/(4*(k+2)))
	err = runChunks(pr, len(workers), (nboot+per-1)/per, func(w, blk int) error {
		r0 := blk * per
		r1 := min(nboot, r0+per)
		cnt := make([]uint16, n*(r1-r0))
		var pcg rand.PCG
		for r := r0; r < r1; r++ {
			seedStream(&pcg, s.Seed, streamBootstrap, uint64(r), 0)
			rnd := rand.New(&pcg)
			for range n {
				cnt[rnd.IntN(n)*(r1-r0)+r-r0]++
			}
		}
		f, t, _ := est.resampled(cnt, r1-r0)
		copy(bf[r0:r1], f)
		copy(bt[r0:r1], t)
		pr.add(perBoot * (r1 - r0))
		return nil
	})
	if err != nil {
		return nil, err
	}
	lo, hi := (1-conf)/2, 1-(1-conf)/2
	col := make([]float64, nboot)
	interval := func(get func(r int) float64) [2]float64 {
		for r := range col {
			col[r] = get(r)
		}
		slices.Sort(col)
		return [2]float64{percentile(col, lo), percentile(col, hi)}
	}
	res.Inputs = make([]SobolIndex, k)
	for i, in := range p.Inputs {
		res.Inputs[i] = SobolIndex{Name: in.Name, FirstOrder: first[i], TotalOrder: total[i],
			FirstOrderCI: interval(func(r int) float64 { return bf[r][i] }),
			TotalOrderCI: interval(func(r int) float64 { return bt[r][i] })}
		res.SumFirstOrder += first[i]
	}
	sort.SliceStable(res.Inputs, func(a, b int) bool {
		x, y := res.Inputs[a], res.Inputs[b]
		if x.TotalOrder != y.TotalOrder {
			return x.TotalOrder > y.TotalOrder
		}
		return x.Name < y.Name
	})
	res.Unsettled = unsettled(res.Inputs, n)
	pr.report()
	return res, nil
}

// unsettled returns the neighbours in the ranking by total-order index whose
// intervals overlap, among the inputs whose interval reaches
// unsettledFloor. Intervals narrow as 1/√n, so the pair separates at
//
//	n' = n ((h_a + h_b) / (T_a - T_b))²
//
// with h the half-widths: rounded up to a power of two, or 0 beyond
// maxSettleFactor·n.
func unsettled(ix []SobolIndex, n int) []UnsettledPair {
	var out []UnsettledPair
	for i := 0; i+1 < len(ix); i++ {
		a, b := ix[i], ix[i+1]
		if a.TotalOrderCI[1] < unsettledFloor {
			break
		}
		if a.TotalOrderCI[0] > b.TotalOrderCI[1] {
			continue
		}
		ha := (a.TotalOrderCI[1] - a.TotalOrderCI[0]) / 2
		hb := (b.TotalOrderCI[1] - b.TotalOrderCI[0]) / 2
		gap := a.TotalOrder - b.TotalOrder
		settle := 0
		if gap > 0 {
			need := float64(n) * math.Pow((ha+hb)/gap, 2)
			if need <= maxSettleFactor*float64(n) {
				settle = 1 << bits.Len(uint(math.Ceil(need))-1)
				settle = max(settle, 2*n)
			}
		}
		out = append(out, UnsettledPair{Inputs: [2]string{a.Name, b.Name}, SettleN: settle})
	}
	return out
}

// percentile returns the p-quantile of sorted xs by linear interpolation
// between order statistics.
func percentile(sorted []float64, p float64) float64 {
	h := float64(len(sorted)-1) * p
	i := int(h)
	if i+1 >= len(sorted) {
		return sorted[len(sorted)-1]
	}
	return sorted[i] + (h-float64(i))*(sorted[i+1]-sorted[i])
}

// sobolTerms holds the per-row terms of the Sobol' estimators, so that a
// bootstrap resample sums them instead of recomputing them. Row j holds
//
//	terms[j·2k + i]     = (f(B)_j - f0) (f(A_B^i)_j - f(A)_j)
//	terms[j·2k + k + i] = (f(A)_j - f(A_B^i)_j)² / 2
//
// with f0 the mean of f(A) and f(B) over all rows.
type sobolTerms struct {
	n, k   int
	f0     float64
	fa, fb []float64 // centred on f0
	terms  []float64
}

func newSobolTerms(fa, fb, fab []float64, k int) *sobolTerms {
	n := len(fa)
	var sum float64
	for j := range n {
		sum += fa[j] + fb[j]
	}
	t := &sobolTerms{n: n, k: k, f0: sum / float64(2*n),
		fa: make([]float64, n), fb: make([]float64, n), terms: make([]float64, 2*n*k)}
	for j := range n {
		a, b := fa[j]-t.f0, fb[j]-t.f0
		t.fa[j], t.fb[j] = a, b
		row := t.terms[2*j*k : 2*(j+1)*k]
		for i := range k {
			d := fab[j*k+i] - fa[j]
			row[i] = b * d
			row[k+i] = d * d / 2
		}
	}
	return t
}

// indices returns the first-order and total-order indices and the variance
// over every row.
func (t *sobolTerms) indices() (first, total []float64, v float64) {
	k := t.k
	acc := make([]float64, 2*k)
	var s1, s2 float64
	for j := range t.n {
		a, b := t.fa[j], t.fb[j]
		s1 += a + b
		s2 += a*a + b*b
		floats.Add(acc, t.terms[2*j*k:2*(j+1)*k])
	}
	return t.normalise(acc, s1, s2, t.n)
}

// resampled returns the indices and variance of each of r resamples of
// the rows: cnt[j·r + q] is how often resample q drew row j (the counts
// of each resample sum to n). Each resample adds a row's terms once for
// every draw of it, in the order of the rows.
func (t *sobolTerms) resampled(cnt []uint16, r int) (first, total [][]float64, v []float64) {
	k := t.k
	acc := make([]float64, r*2*k)
	s1, s2 := make([]float64, r), make([]float64, r)
	for j := range t.n {
		a, b := t.fa[j], t.fb[j]
		sa, sb := a+b, a*a+b*b
		row := t.terms[2*j*k : 2*(j+1)*k]
		for q, c := range cnt[j*r : (j+1)*r] {
			if c == 0 {
				continue
			}
			dst := acc[q*2*k : (q+1)*2*k]
			for ; c > 0; c-- {
				s1[q] += sa
				s2[q] += sb
				floats.Add(dst, row) // gonum's vector kernel
			}
		}
	}
	first, total, v = make([][]float64, r), make([][]float64, r), make([]float64, r)
	for q := range r {
		first[q], total[q], v[q] = t.normalise(acc[q*2*k:(q+1)*2*k], s1[q], s2[q], t.n)
	}
	return first, total, v
}

// normalise turns the sums of m rows' terms in acc (s1 and s2 the sums of
// the centred outputs and of their squares) into the indices and the
// variance.
func (t *sobolTerms) normalise(acc []float64, s1, s2 float64, m int) (first, total []float64, v float64) {
	k := t.k
	nn := float64(2 * m)
	mean := s1 / nn
	v = (s2 - nn*mean*mean) / (nn - 1)
	floats.Scale(1/(float64(m)*v), acc)
	return acc[:k:k], acc[k : 2*k : 2*k], v
}

// bootBlock returns how many bootstrap resamples of n rows are summed in
// one pass over the rows: 16, fewer for a large n, so that their draw
// counts (2 bytes a row and resample) stay within 4 MiB.
func bootBlock(n int) int { return max(1, min(16, (1<<21)/max(n, 1))) }

// unitFraction maps a 32-bit fraction to the middle of its cell, strictly
// inside (0, 1), so that every quantile function is finite there.
func unitFraction(x uint32) float64 { return (float64(x) + 0.5) * 0x1p-32 }
