package sens

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"github.com/nudge-dev/nudge/sens/unit"
)

// MorrisSettings are the settings of Morris. A nil *MorrisSettings means
// the defaults.
type MorrisSettings struct {
	Settings
	// R is the number of trajectories (DefaultMorrisR when 0).
	R int
	// Levels is the number of levels p of the grid, even (DefaultLevels when
	// 0).
	Levels int
	// Seed chooses the trajectories.
	Seed uint64
	// Workers is the number of goroutines (GOMAXPROCS when 0); it changes
	// the time taken, never the result.
	Workers int
}

// Defaults of Morris.
const (
	DefaultMorrisR = 20
	DefaultLevels  = 4
)

// MorrisResult is the result of Morris: each input's elementary effects,
// in the output's unit per the input's whole range.
type MorrisResult struct {
	Kind   string `json:"kind"` // "morris"
	Output string `json:"output"`
	Unit   string `json:"unit"`
	R      int    `json:"r"`
	Levels int    `json:"levels"`
	// Delta is the step, as a fraction of each range: p / (2(p-1)).
	Delta       float64 `json:"delta"`
	Seed        uint64  `json:"seed"`
	Evaluations int     `json:"evaluations"` // R·(k+1)
	// Inputs are sorted by mu* descending, ties by name.
	Inputs []MorrisEffect `json:"inputs"`
}

// MorrisEffect is one input's summary of elementary effects.
type MorrisEffect struct {
	Name string  `json:"name"`
	Unit string  `json:"unit"`
	Low  float64 `json:"low"` // the range the input moves over
	High float64 `json:"high"`
	// Mu is the mean elementary effect, MuStar the mean of their absolute
	// values and Sigma their standard deviation.
	Mu     float64 `json:"mu"`
	MuStar float64 `json:"mu_star"`
	Sigma  float64 `json:"sigma"`
}

// Morris computes elementary effects on a grid of p levels over each
// input's range (low..high: the explicit range, or a distribution's 10th to
// 90th percentiles): R trajectories, each starting from a random grid point
// and moving every input once, in random order, by Delta = p/(2(p-1)) of its
// range. An input's elementary effect on a trajectory is
//
//	EE_i = (f(x + s Δ e_i) - f(x)) / (s Δ),   s = ±1
//
// with x in fractions of the ranges, so that EE_i is in the output's unit per
// the input's whole range: for a linear model, |coefficient| × range. Over
// the R trajectories,
//
//	mu = mean(EE_i),  mu* = mean(|EE_i|),  sigma = sd(EE_i)
//
// Large mu* marks an influential input; large sigma, one whose effect
// depends on where the others are (non-linear or interacting). R·(k+1)
// evaluations, batched and spread over Workers goroutines, one trajectory
// at a time each.
//
// References:
//   - M. D. Morris, Factorial sampling plans for preliminary computational
//     experiments, Technometrics 33 (1991) 161-174.
//   - F. Campolongo, J. Cariboni and A. Saltelli, An effective screening
//     design for sensitivity analysis of large models, Environ. Model.
//     Softw. 22 (2007) 1509-1518 (mu*).
func Morris(p *Problem, s *MorrisSettings) (*MorrisResult, error) {
	if s == nil {
		s = &MorrisSettings{}
	}
	r, levels := s.R, s.Levels
	if r == 0 {
		r = DefaultMorrisR
	}
	if levels == 0 {
		levels = DefaultLevels
	}
	switch {
	case r < 2:
		return nil, fmt.Errorf("morris needs at least 2 trajectories, got %d", r)
	case levels < 2 || levels%2 != 0:
		return nil, fmt.Errorf("morris needs an even number of levels of at least 2, got %d", levels)
	}
	if _, err := samplingDists(p, "morris"); err != nil {
		return nil, err
	}
	k := len(p.Inputs)
	if err := checkKept("morris", p.Output, r, k+1, fmt.Sprintf("r = %s trajectories of %s points", unit.Format(float64(r), ""), unit.Format(float64(k+1), "")), "lower r, or rank the inputs with screen "+p.Output); err != nil {
		return nil, err
	}
	half := levels / 2 // the step in grid levels
	delta := float64(levels) / float64(2*(levels-1))
	res := &MorrisResult{Kind: "morris", Output: p.Output, Unit: p.Unit, R: r, Levels: levels, Delta: delta,
		Seed: s.Seed, Evaluations: r * (k + 1)}
	pr := &progress{s: &s.Settings, total: r * (k + 1)}
	lo, width := make([]float64, k), make([]float64, k)
	for i, in := range p.Inputs {
		lo[i], width[i] = in.Low, in.High-in.Low
	}
	value := func(i, level int) float64 { return lo[i] + width[i]*float64(level)/float64(levels-1) }

	ee := make([][]float64, r) // ee[t][i]
	m := chunkRows(k)
	type worker struct {
		f     Function
		pcg   rand.PCG
		level []int
		order []int
		x     []float64 // the trajectory's point
		rows  []float64
		y     []float64
		walk  walkSet // nil: every point evaluated whole
		start []int   // the trajectory's first levels
	}
	workers := make([]*worker, min(workerCount(s.Workers), r))
	for w := range workers {
		workers[w] = &worker{f: p.F.Clone(), level: make([]int, k), order: make([]int, k), x: make([]float64, k),
			rows: make([]float64, m*k), y: make([]float64, m+1)}
		workers[w].walk = newWalk(workers[w].f)
	}
	ctx := s.ctx()
	err := runChunks(pr, len(workers), r, func(w, t int) error {
		wk := workers[w]
		seedStream(&wk.pcg, s.Seed, streamMorris, uint64(t), 0)
		rnd := rand.New(&wk.pcg)
		for i := range k {
			wk.level[i] = rnd.IntN(levels)
			wk.order[i] = i
		}
		rnd.Shuffle(k, func(a, b int) { wk.order[a], wk.order[b] = wk.order[b], wk.order[a] })
		x := wk.x
		for i := range k {
			x[i] = value(i, wk.level[i])
		}
		ee[t] = make([]float64, k)
		// Through the cones of a compiled model, one step at a time; a
		// trajectory with a failing point is evaluated again whole below,
		// which reports the error as it always has.
		if wk.walk != nil {
			wk.start = append(wk.start[:0], wk.level...)
			if morrisWalk(wk.walk, x, wk.level, wk.order, ee[t], m, half, delta, value, ctx.Err) {
				pr.add(k + 1)
				return nil
			}
			copy(wk.level, wk.start)
			for i := range k {
				x[i] = value(i, wk.level[i])
			}
		}
		// Points 0..k of the trajectory, m at a time: point q+1 is point q
		// with input order[q] moved by one step.
		var prev float64
		for start := 0; start <= k; start += m {
			if err := ctx.Err(); err != nil {
				return err
			}
			cnt := min(m, k+1-start)
			for q := start; q < start+cnt; q++ {
				if q > 0 {
					i := wk.order[q-1]
					if wk.level[i] < half {
						wk.level[i] += half
					} else {
						wk.level[i] -= half
					}
					x[i] = value(i, wk.level[i])
				}
				copy(wk.rows[(q-start)*k:], x)
			}
			if err := wk.f.EvalBatch(wk.y[:cnt], wk.rows[:cnt*k], cnt); err != nil {
				return err
			}
			for q := start; q < start+cnt; q++ {
				yq := wk.y[q-start]
				if q > 0 {
					i := wk.order[q-1]
					step := delta // up
					if wk.level[i] < half {
						step = -delta // it moved down to a lower level
					}
					// The level of i now is its final one; it moved once.
					ee[t][i] = (yq - prev) / step
				}
				prev = yq
			}
			pr.add(cnt)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	res.Inputs = make([]MorrisEffect, k)
	for i, in := range p.Inputs {
		var sum, sumAbs float64
		for t := range r {
			sum += ee[t][i]
			sumAbs += math.Abs(ee[t][i])
		}
		mu := sum / float64(r)
		var ss float64
		for t := range r {
			d := ee[t][i] - mu
			ss += d * d
		}
		sigma := math.Sqrt(ss / float64(r-1))
		if sigma <= 1e-9*sumAbs/float64(r) {
			sigma = 0 // rounding noise of effects that are all equal
		}
		res.Inputs[i] = MorrisEffect{Name: in.Name, Unit: in.Unit, Low: in.Low, High: in.High,
			Mu: mu, MuStar: sumAbs / float64(r), Sigma: sigma}
	}
	sort.SliceStable(res.Inputs, func(a, b int) bool {
		x, y := res.Inputs[a], res.Inputs[b]
		if x.MuStar != y.MuStar {
			return x.MuStar > y.MuStar
		}
		return x.Name < y.Name
	})
	return res, nil
}

// morrisWalk evaluates a trajectory through w, from x at the given levels,
// moving input order[q] at step q+1 as Morris does, and writes each
// input's elementary effect into ee. It returns false when a point fails
// or ctxErr reports a cancellation (checked every m steps): the caller
// then evaluates the trajectory whole, from the levels it started at.
func morrisWalk(w walkSet, x []float64, level, order []int, ee []float64, m, half int, delta float64,
	value func(i, level int) float64, ctxErr func() error) bool {
	prev, err := w.start(x)
	if err != nil {
		return false
	}
	for q, i := range order {
		if (q+1)%m == 0 && ctxErr() != nil {
			return false
		}
		if level[i] < half {
			level[i] += half
		} else {
			level[i] -= half
		}
		x[i] = value(i, level[i])
		y, err := w.step(i, x[i])
		if err != nil {
			return false
		}
		step := delta // up
		if level[i] < half {
			step = -delta // it moved down to a lower level
		}
		ee[i] = (y - prev) / step
		prev = y
	}
	return true
}
