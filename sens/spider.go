package sens

import (
	"fmt"
	"math"
	"sort"
)

// SpiderPoint is the output with one input changed by Pct percent.
type SpiderPoint struct {
	Pct    float64 `json:"pct"`
	Input  float64 `json:"input"`
	Output float64 `json:"output"`
}

// SpiderLine is one input's line: the output against the percentage change of
// that input, the others at their baselines.
type SpiderLine struct {
	Name   string        `json:"name"`
	Unit   string        `json:"unit"`
	Value  float64       `json:"value"`
	Points []SpiderPoint `json:"points"`
	// Spread is the greatest minus the least output on the line.
	Spread float64 `json:"spread"`
	// ZeroValue is set when the input's baseline is 0, which no percentage
	// changes: its line is flat.
	ZeroValue bool `json:"zero_value,omitempty"`
}

// SpiderResult is the result of the spider analysis.
type SpiderResult struct {
	Kind     string  `json:"kind"` // "spider"
	Output   string  `json:"output"`
	Unit     string  `json:"unit"`
	Baseline float64 `json:"baseline"`
	// SpanPct is P of the span -P%..+P%.
	SpanPct float64 `json:"span_pct"`
	// Inputs holds one line per input, by spread descending, ties by name.
	Inputs      []SpiderLine `json:"inputs"`
	Evaluations int          `json:"evaluations"`
}

// DefaultSpiderPct and DefaultSpiderPoints are Spider's defaults.
const (
	DefaultSpiderPct    = 30
	DefaultSpiderPoints = 13
)

// Spider evaluates the output as each input in turn moves from -pct% to
// +pct% of its baseline, the others held at their baselines:
//
//	y_i(q) = f(x0 with x_i = x0_i · (1 + q/100)),  q = -pct .. +pct
//
// on points equally spaced percentages (an even count is raised by one so that
// 0% is one of them). Every line passes through the baseline output at 0%,
// which is evaluated once and shared. pct <= 0 and points <= 0 mean the
// defaults (±30%, 13 points); points below 3 are raised to 3.
func Spider(p *Problem, pct float64, points int, s *Settings) (*SpiderResult, error) {
	if pct <= 0 {
		pct = DefaultSpiderPct
	}
	if math.IsNaN(pct) || math.IsInf(pct, 0) {
		return nil, fmt.Errorf("spider: span %v%% is not a finite number", pct)
	}
	if points <= 0 {
		points = DefaultSpiderPoints
	}
	points = max(points, 3)
	if points%2 == 0 {
		points++
	}
	half := points / 2
	pcts := make([]float64, points)
	for j := range pcts {
		pcts[j] = pct * float64(j-half) / float64(half)
	}
	pcts[half] = 0

	x0 := p.Baseline()
	ev := newBatcher(p.F, x0, s)
	pts := []point{{i: -1, j: -1}}
	for i, in := range p.Inputs {
		if in.Value == 0 {
			continue
		}
		for j, q := range pcts {
			if j != half {
				pts = append(pts, point{i: i, vi: in.Value * (1 + q/100), j: -1})
			}
		}
	}
	ev.total = len(pts)
	y := make([]float64, len(pts))
	if err := ev.eval(y, pts); err != nil {
		return nil, err
	}
	ev.finish()
	base := y[0]
	res := &SpiderResult{Kind: "spider", Output: p.Output, Unit: p.Unit, Baseline: base, SpanPct: pct, Evaluations: ev.done}
	n := 1
	for _, in := range p.Inputs {
		line := SpiderLine{Name: in.Name, Unit: in.Unit, Value: in.Value, Points: make([]SpiderPoint, points)}
		lo, hi := base, base
		for j, q := range pcts {
			sp := SpiderPoint{Pct: q, Input: in.Value * (1 + q/100), Output: base}
			if j == half {
				sp.Input = in.Value
			} else if in.Value != 0 {
				sp.Output = y[n]
				n++
			}
			line.Points[j] = sp
			lo, hi = math.Min(lo, sp.Output), math.Max(hi, sp.Output)
		}
		line.Spread = hi - lo
		line.ZeroValue = in.Value == 0
		res.Inputs = append(res.Inputs, line)
	}
	sort.SliceStable(res.Inputs, func(a, b int) bool {
		if sa, sb := sortKey(res.Inputs[a].Spread), sortKey(res.Inputs[b].Spread); sa != sb {
			return sa > sb
		}
		return res.Inputs[a].Name < res.Inputs[b].Name
	})
	return res, nil
}
