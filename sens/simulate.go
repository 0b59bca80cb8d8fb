package sens

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"sync"

	"gonum.org/v1/gonum/stat"
)

// SimulationSettings are the settings of Simulate. A nil *SimulationSettings
// means the defaults.
type SimulationSettings struct {
	Settings
	// N is the number of samples (DefaultSimulationN when 0).
	N int
	// Seed chooses the random numbers; the same seed gives the same result.
	Seed uint64
	// Above, when not nil, asks for the probability that the output exceeds
	// *Above.
	Above *float64
	// Workers is the number of goroutines (GOMAXPROCS when 0). It changes
	// the time taken, never the result.
	Workers int
}

// DefaultSimulationN is the number of samples Simulate draws by default.
const DefaultSimulationN = 10000

// SimulationResult is the result of Simulate: statistics of the output over
// the samples that evaluated without error.
type SimulationResult struct {
	Kind   string `json:"kind"` // "simulation"
	Output string `json:"output"`
	Unit   string `json:"unit"`
	N      int    `json:"n"` // samples drawn
	Seed   uint64 `json:"seed"`
	// Valid is the number of samples the statistics are over: N less those
	// that failed.
	Valid      int     `json:"valid"`
	Mean       float64 `json:"mean"`
	SD         float64 `json:"sd"`
	StderrMean float64 `json:"stderr_mean"` // sd / √valid
	Min        float64 `json:"min"`
	P05        float64 `json:"p05"`
	P10        float64 `json:"p10"`
	P50        float64 `json:"p50"`
	P90        float64 `json:"p90"`
	P95        float64 `json:"p95"`
	Max        float64 `json:"max"`
	// Baseline is the output at the inputs' baselines and BaselinePercentile
	// the percentage of samples at or below it.
	Baseline           float64 `json:"baseline"`
	BaselinePercentile float64 `json:"baseline_percentile"`
	// Above, PAbove and PAboveStderr are the threshold asked for, the
	// fraction of samples above it and that fraction's standard error,
	// √(p(1-p)/valid).
	Above        *float64 `json:"above,omitempty"`
	PAbove       *float64 `json:"p_above,omitempty"`
	PAboveStderr *float64 `json:"p_above_stderr,omitempty"`
	// Failed counts the samples where the model could not be evaluated (a
	// domain error such as the log of a negative number); FirstFailure is
	// the first of them in sample order.
	Failed       int            `json:"failed"`
	FirstFailure *SampleFailure `json:"first_failure,omitempty"`
	// RankCorrelations is each input's Spearman rank correlation with the
	// output: what drives the spread. Sorted by |spearman| descending, ties
	// by name.
	RankCorrelations []RankCorrelation `json:"rank_correlations"`
	// Correlations are the rank correlations imposed between inputs, as
	// asked for and as achieved in the samples.
	Correlations []CorrelationCheck `json:"correlations,omitempty"`
	// UniformFromRange names the inputs that have a range but no
	// distribution, sampled uniformly over the range.
	UniformFromRange []string `json:"uniform_from_range,omitempty"`
	Evaluations      int      `json:"evaluations"`

	// Samples holds the output of every valid sample in sample order, for
	// charts.
	Samples []float64 `json:"-"`
}

// RankCorrelation is one input's rank correlation with the output.
type RankCorrelation struct {
	Name     string  `json:"name"`
	Spearman float64 `json:"spearman"`
}

// CorrelationCheck is an imposed rank correlation between two inputs.
type CorrelationCheck struct {
	Inputs    [2]string `json:"inputs"`
	Requested float64   `json:"requested"`
	Achieved  float64   `json:"achieved"`
}

// SampleFailure is a sample the model could not evaluate.
type SampleFailure struct {
	Sample  int    `json:"sample"` // 0-based
	Message string `json:"message"`
	// At is where the failure arose, "file:line:col", when known.
	At string `json:"at,omitempty"`
	// Inputs holds the sample's input values (at most maxFailureInputs).
	Inputs []SampleValue `json:"inputs"`
}

// SampleValue is an input's value in a sample.
type SampleValue struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

const maxFailureInputs = 50

// maxKeptFloats bounds the memory Simulate spends keeping every input's
// samples for the rank correlations (64 MiB); beyond it they are drawn again
// from their streams. A variable so that a test can take both paths.
var maxKeptFloats = 1 << 23

// chunkRows returns the number of samples per chunk for k inputs: at most
// 256 (the width of the tape's batched pass), fewer when k is large so that
// a chunk's rows stay within 2 MiB.
func chunkRows(k int) int {
	return max(1, min(256, (1<<18)/max(k, 1)))
}

// Simulate draws N samples of the inputs from their distributions (an input
// with only a range uniformly over it), imposes the problem's rank
// correlations by the method of Iman and Conover (1982), and evaluates the
// output at each sample in batches, on Workers goroutines:
//
//	mean = Σ y / n,  sd² = Σ (y - mean)² / (n-1),  stderr_mean = sd / √n
//	P(y > T) ≈ p = #{y > T} / n,  stderr = √(p (1-p) / n)
//
// Quantiles interpolate linearly between order statistics (gonum's
// stat.LinInterp). Each chunk of samples draws every input from a random
// stream of its own, seeded from (Seed, chunk, input), and results are
// combined in chunk order: the result is the same, bit for bit, whatever
// the number of goroutines. Samples where the model fails to evaluate are
// counted and the first reported, never silently dropped.
//
// The rank correlation of each input with the output (Spearman's, with
// ties at their mean rank) ranks what drives the output's spread. It is
// summed from each input's sorted samples against the output's centred
// ranks (rankSorter), exactly up to about 10^5 samples; the sort of the
// outputs runs beside the inputs' ranks.
func Simulate(p *Problem, s *SimulationSettings) (*SimulationResult, error) {
	if s == nil {
		s = &SimulationSettings{}
	}
	n := s.N
	if n == 0 {
		n = DefaultSimulationN
	}
	if n < 2 {
		return nil, fmt.Errorf("simulate needs at least 2 samples, got %d", n)
	}
	sd, err := samplingDists(p, "simulate")
	if err != nil {
		return nil, err
	}
	k := len(p.Inputs)
	res := &SimulationResult{Kind: "simulation", Output: p.Output, Unit: p.Unit, N: n, Seed: s.Seed,
		UniformFromRange: sd.fromRange, Evaluations: n}
	pr := &progress{s: &s.Settings, total: n + n/10}

	// stop reports an interrupt between the steps that run on one goroutine.
	ctx := s.ctx()
	stop := func() error {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("stopped: %w", err)
		}
		return nil
	}

	// Correlated inputs are drawn whole and rearranged first.
	corrCol := make([][]float64, k) // nil for an input drawn chunk by chunk
	if len(p.Correlations) > 0 {
		g := newCorrGroup(p.Correlations)
		if !posDef(g.target) {
			if err := checkConsistent(p.Inputs, p.Correlations); err != nil {
				return nil, err
			}
		}
		d := newDrawer(sd.dists, s.Seed, streamCorrelated, 0)
		cols := make([][]float64, len(g.members))
		for gi, i := range g.members {
			cols[gi] = make([]float64, n)
			if err := d.drawInto(cols[gi], 0, i, stop); err != nil {
				return nil, err
			}
			corrCol[i] = cols[gi]
		}
		var pcg rand.PCG
		seedStream(&pcg, s.Seed, streamScores, 0, 0)
		if err := imanConover(cols, g.target, &pcg, stop); err != nil {
			return nil, err
		}
		for _, c := range p.Correlations {
			if err := stop(); err != nil {
				return nil, err
			}
			achieved, err := spearmanStop(corrCol[c.I], corrCol[c.J], stop)
			if err != nil {
				return nil, err
			}
			res.Correlations = append(res.Correlations, CorrelationCheck{
				Inputs:    [2]string{p.Inputs[c.I].Name, p.Inputs[c.J].Name},
				Requested: c.Rho, Achieved: achieved,
			})
		}
	}

	cs := chunkRows(k)
	nChunks := (n + cs - 1) / cs
	// Every input's samples are kept for the rank correlations when they
	// fit, chunk by chunk: a chunk's columns are allocated (and cleared) by
	// the goroutine that draws them, not before the parallel part.
	keep := n*k <= maxKeptFloats
	var kept [][]float64 // kept[c]: chunk c's columns, m apart
	if keep {
		kept = make([][]float64, nChunks)
	}
	// column returns input i's values in chunk c when they are held.
	column := func(c, i int) []float64 {
		base := c * cs
		m := min(cs, n-base)
		switch {
		case corrCol[i] != nil:
			return corrCol[i][base : base+m]
		case keep:
			return kept[c][i*m : (i+1)*m]
		}
		return nil
	}
	type worker struct {
		f    Function
		d    *drawer
		cols [][]float64 // the chunk's column of each input
		buf  []float64   // columns of the inputs not kept, cs apart
		rows []float64   // for a Function that takes rows only
		row  []float64   // one sample, to find failures
		rs   *rankSorter
	}
	workers := make([]*worker, min(workerCount(s.Workers), max(nChunks, k+1)))
	for w := range workers {
		wk := &worker{f: p.F.Clone(), d: newDrawer(sd.dists, s.Seed, streamSimulate, cs),
			cols: make([][]float64, k), row: make([]float64, k), rs: sorterPool.Get().(*rankSorter)}
		workers[w] = wk
	}
	// The buffers go back to their pools however Simulate returns; nothing
	// returned refers to them.
	defer func() {
		for _, wk := range workers {
			sorterPool.Put(wk.rs)
		}
		for _, slab := range kept {
			if slab != nil {
				slabPool.Put(&slab)
			}
		}
	}()
	y := make([]float64, n)
	failed := make([]bool, n)
	failures := make([]*SampleFailure, nChunks) // the first failure of each chunk
	err = runChunks(pr, len(workers), nChunks, func(w, c int) error {
		wk := workers[w]
		base := c * cs
		m := min(cs, n-base)
		if keep {
			kept[c] = getSlab(m * k)
		} else if wk.buf == nil {
			wk.buf = make([]float64, cs*k)
		}
		// Each input's values are drawn into the column they are kept in,
		// and the model reads the columns in place.
		for i := range k {
			col := column(c, i)
			switch {
			case corrCol[i] != nil:
			case keep:
				wk.d.drawTo(col, c, i)
			default:
				col = wk.buf[i*cs : i*cs+m]
				wk.d.drawTo(col, c, i)
			}
			wk.cols[i] = col
		}
		yc := y[base : base+m]
		if err := columnEval(wk.f, yc, wk.cols, m, &wk.rows); err != nil {
			// Some sample failed: evaluate the chunk sample by sample to
			// find every failure and keep every other result.
			row := wk.row
			for j := range m {
				for i, col := range wk.cols {
					row[i] = col[j]
				}
				v, err := wk.f.Eval(row)
				if err != nil {
					failed[base+j] = true
					v = math.NaN()
					if failures[c] == nil {
						failures[c] = sampleFailure(p, base+j, row, err)
					}
				}
				yc[j] = v
			}
		}
		pr.add(m)
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, f := range failures {
		if f != nil {
			res.FirstFailure = f
			break
		}
	}
	vals := y
	for _, f := range failed {
		if f {
			res.Failed++
		}
	}
	if res.Failed > 0 {
		vals = make([]float64, 0, n-res.Failed)
		for j, v := range y {
			if !failed[j] {
				vals = append(vals, v)
			}
		}
	}
	res.Valid = len(vals)
	if res.Valid < 2 {
		return nil, fmt.Errorf("simulate %s: %d of %d samples failed to evaluate; the first: %s", p.Output, res.Failed, n, res.FirstFailure.Message)
	}
	res.Samples = vals

	base, err := p.F.Eval(p.Baseline())
	if err != nil {
		return nil, err
	}
	res.Baseline = base
	if err := stop(); err != nil {
		return nil, err
	}

	// The statistics and what drives the spread, each input's rank
	// correlation with the output, in parallel: task 0 sorts the outputs,
	// which gives both the quantiles and the outputs' ranks, and each other
	// task ranks one input's samples. An input's task waits for the
	// outputs' ranks only after sorting its own samples, and task 0 is the
	// first taken, so no goroutine waits for long and none for ever.
	nv := len(vals)
	ry := make([]float64, nv) // the outputs' ranks less (n+1)/2
	var ssy float64
	yReady := make(chan struct{})
	rc := make([]RankCorrelation, k)
	perInput := max(1, n/10/k)
	err = runChunks(pr, len(workers), k+1, func(w, task int) error {
		wk := workers[w]
		if task == 0 {
			order := wk.rs.order(vals)
			ssy = wk.rs.centredRanks(ry, order)
			close(yReady)
			sorted := make([]float64, nv)
			for r, v := range order {
				sorted[r] = vals[wk.rs.idx(v)]
			}
			summariseSamples(res, vals, sorted, s.Above)
			return nil
		}
		i := task - 1
		keys := wk.rs.keysFor(nv)
		at := 0
		lo, hi := uint64(math.MaxUint64), uint64(0)
		for c := range nChunks {
			x := column(c, i)
			if x == nil {
				x = wk.d.draw(c, i, min(cs, n-c*cs))
			}
			if res.Failed == 0 {
				kc := keys[at : at+len(x)]
				for j, v := range x {
					key := floatKey(v)
					kc[j] = key
					lo, hi = min(lo, key), max(hi, key)
				}
				at += len(x)
				continue
			}
			for j, v := range x {
				if !failed[c*cs+j] {
					key := floatKey(v)
					keys[at] = key
					lo, hi = min(lo, key), max(hi, key)
					at++
				}
			}
		}
		if err := stop(); err != nil {
			return err
		}
		order := wk.rs.sortKeys(nv, lo, hi)
		select {
		case <-yReady:
		case <-ctx.Done():
			return stop()
		}
		dot, ssx := wk.rs.rankDot(order, ry)
		rc[i] = RankCorrelation{Name: p.Inputs[i].Name, Spearman: rankCorrelation(dot, ssx, ssy)}
		pr.add(perInput)
		return nil
	})
	if err != nil {
		return nil, err
	}
	sort.SliceStable(rc, func(a, b int) bool {
		ka, kb := math.Abs(rc[a].Spearman), math.Abs(rc[b].Spearman)
		if ka != kb {
			return ka > kb
		}
		return rc[a].Name < rc[b].Name
	})
	res.RankCorrelations = rc
	return res, nil
}

// summariseSamples fills the statistics of the valid samples vals, given
// also sorted.
func summariseSamples(res *SimulationResult, vals, sorted []float64, above *float64) {
	nv := float64(len(vals))
	res.Mean, res.SD = stat.MeanStdDev(vals, nil)
	res.StderrMean = res.SD / math.Sqrt(nv)
	q := func(p float64) float64 { return linInterp(p, sorted) }
	res.Min, res.Max = sorted[0], sorted[len(sorted)-1]
	res.P05, res.P10, res.P50, res.P90, res.P95 = q(0.05), q(0.10), q(0.50), q(0.90), q(0.95)
	at := sort.SearchFloat64s(sorted, math.Nextafter(res.Baseline, math.Inf(1)))
	res.BaselinePercentile = 100 * float64(at) / nv
	if above != nil {
		t := *above
		cnt := len(sorted) - sort.SearchFloat64s(sorted, math.Nextafter(t, math.Inf(1)))
		p := float64(cnt) / nv
		se := math.Sqrt(p * (1 - p) / nv)
		res.Above, res.PAbove, res.PAboveStderr = &t, &p, &se
	}
}

// linInterp is gonum's stat.Quantile(p, stat.LinInterp, sorted, nil) (the
// sample sorted by floatKey, so that a NaN is at one end or the other),
// without the three passes over the sample that each call of it makes (a
// check for NaN, a check of the order, the scan to the quantile): the
// first i with i+1 >= p·n, then t·x[i-1] + (1-t)·x[i] with t = i+1 - p·n,
// or x[0] when i is 0; NaN when the sample holds a NaN.
func linInterp(p float64, sorted []float64) float64 {
	n := len(sorted)
	if math.IsNaN(sorted[0]) || math.IsNaN(sorted[n-1]) {
		return math.NaN()
	}
	fidx := p * float64(n)
	i := max(int(math.Ceil(fidx))-1, 0)
	if i == 0 {
		return sorted[0]
	}
	t := float64(i+1) - fidx
	return t*sorted[i-1] + (1-t)*sorted[i]
}

// sampleFailure describes a sample that failed to evaluate.
func sampleFailure(p *Problem, sample int, row []float64, err error) *SampleFailure {
	f := &SampleFailure{Sample: sample, Message: err.Error()}
	var ee *EvalError
	if errors.As(err, &ee) && ee.Pos.Line > 0 {
		f.At = ee.Pos.String()
	}
	for i, in := range p.Inputs {
		if i == maxFailureInputs {
			break
		}
		f.Inputs = append(f.Inputs, SampleValue{Name: in.Name, Value: row[i], Unit: in.Unit})
	}
	return f
}

// Simulate's largest buffers, reused from one call to the next (a
// notebook's simulations, a benchmark's rounds) rather than allocated and
// cleared each time: the rank sorters' scratch space and the chunks' kept
// columns, every value of which a chunk writes before it is read.
var (
	sorterPool = sync.Pool{New: func() any { return new(rankSorter) }}
	slabPool   sync.Pool // *[]float64
)

// getSlab returns a slice of n floats from slabPool, or a new one.
func getSlab(n int) []float64 {
	if p, ok := slabPool.Get().(*[]float64); ok && cap(*p) >= n {
		return (*p)[:n]
	}
	return make([]float64, n)
}
