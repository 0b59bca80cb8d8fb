package sens

import (
	"fmt"
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/unit"
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
	// changes: its line is flat (over its own range, its percentages are 0).
	ZeroValue bool `json:"zero_value,omitempty"`
	// Low, High and Source are the input's own range and where it came
	// from, set with OwnRanges.
	Low    float64     `json:"low,omitempty"`
	High   float64     `json:"high,omitempty"`
	Source RangeSource `json:"source,omitempty"`
}

// SpiderResult is the result of the spider analysis.
type SpiderResult struct {
	Kind     string  `json:"kind"` // "spider"
	Output   string  `json:"output"`
	Unit     string  `json:"unit"`
	Baseline float64 `json:"baseline"`
	// RangePct is P of the range -P%..+P%; 0 with OwnRanges.
	RangePct float64 `json:"span_pct"`
	// OwnRanges is set when each input moved over its own range.
	OwnRanges bool `json:"own_ranges,omitempty"`
	// Inputs holds one line per input, by spread descending, ties by name.
	Inputs []SpiderLine `json:"inputs"`
	// Rest summarises the lines left out by SpiderSettings.Top.
	Rest        *SpiderRest `json:"rest,omitempty"`
	Evaluations int         `json:"evaluations"`
}

// SpiderRest summarises the lines left out by SpiderSettings.Top.
type SpiderRest struct {
	Count int `json:"count"`
	// LargestSpread is the largest spread among them.
	LargestSpread float64 `json:"largest_spread"`
}

// SpiderSettings are the settings of Spider. A nil *SpiderSettings means the
// defaults.
type SpiderSettings struct {
	Settings
	// RangePct is P of the range -P%..+P% of each input's baseline, below
	// 100 (DefaultSpiderRangePct when 0).
	RangePct float64
	// Points is the number of equally spaced percentages from -P% to +P%
	// (DefaultSpiderPoints when 0); an even number is raised by one so that
	// 0% is among them, and fewer than 3 are raised to 3.
	Points int
	// Top keeps the Top lines of largest spread and summarises the rest;
	// 0 keeps all.
	Top int
	// OwnRanges moves each input over its own range instead of ±P%
	// (RangePct is then ignored; see spiderRanges).
	OwnRanges bool
}

// DefaultSpiderRangePct and DefaultSpiderPoints are Spider's defaults.
const (
	DefaultSpiderRangePct = 30
	DefaultSpiderPoints   = 13
)

// Spider evaluates the output as each input in turn moves from -P% to +P% of
// its baseline, the others held at their baselines:
//
//	y_i(q) = f(x0 with x_i = x0_i · (1 + q/100)),  q = -P .. +P
//
// on equally spaced percentages. Every line passes through the baseline
// output at 0%, which is evaluated once and shared.
func Spider(p *Problem, s *SpiderSettings) (*SpiderResult, error) {
	if s == nil {
		s = &SpiderSettings{}
	}
	if len(p.Inputs) == 0 {
		return nil, p.errNoInputs()
	}
	if s.OwnRanges {
		return spiderRanges(p, s)
	}
	pct, points := s.RangePct, s.Points
	switch {
	case pct == 0:
		pct = DefaultSpiderRangePct
	case math.IsNaN(pct) || math.IsInf(pct, 0) || pct < 0:
		return nil, fmt.Errorf("spider: the range ±%s is not a positive number", unit.Format(pct, "%"))
	case pct >= 100:
		return nil, fmt.Errorf("a range of ±%s would take inputs to zero or below: use less than 100%%", unit.Format(pct, "%"))
	}
	if points <= 0 {
		points = DefaultSpiderPoints
	}
	points = max(points, 3)
	if points%2 == 0 {
		points++
	}
	if err := checkKept("spider", p.Output, points, len(p.Inputs), fmt.Sprintf("%s points on each of %s inputs", unit.Format(float64(points), ""), unit.Format(float64(len(p.Inputs)), "")), "lower points="); err != nil {
		return nil, err
	}
	half := points / 2
	pcts := make([]float64, points)
	for j := range pcts {
		pcts[j] = pct * float64(j-half) / float64(half)
	}
	pcts[half] = 0
	grid := make([][]float64, len(p.Inputs))
	cells := make([]float64, points*len(p.Inputs)) // every line's values, in one allocation
	for i, in := range p.Inputs {
		if in.Value == 0 {
			continue // no percentage moves it: a flat line
		}
		grid[i] = cells[i*points : (i+1)*points : (i+1)*points]
		for j, q := range pcts {
			grid[i][j] = in.Value * (1 + q/100)
		}
		grid[i][half] = in.Value
	}
	res, err := spiderLines(p, &s.Settings, grid, points, s.Top, func(_, j int) float64 { return pcts[j] })
	if err != nil {
		return nil, err
	}
	res.RangePct = pct
	return res, nil
}

// spiderLines evaluates a spider's lines: grid[i] holds the points values of
// input i, its baseline at the middle (nil for a line that stays at the
// baseline), and pct(i, j) is the percentage change of point j of line i.
// Each line is an input moved alone; the baseline output is evaluated once
// and shared. The lines come sorted by spread, the top kept (all when top
// is 0) and the rest summarised.
func spiderLines(p *Problem, set *Settings, grid [][]float64, points, top int, pct func(i, j int) float64) (*SpiderResult, error) {
	half := points / 2
	x0 := p.Baseline()
	ev := newBatcher(p.F, x0, set)
	npts := 1
	for _, g := range grid {
		if g != nil {
			npts += len(g) - 1
		}
	}
	pts := make([]point, 1, npts)
	pts[0] = point{i: -1, j: -1}
	for i, g := range grid {
		for j, v := range g {
			if j != half {
				pts = append(pts, point{i: i, vi: v, j: -1})
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
	res := &SpiderResult{Kind: "spider", Output: p.Output, Unit: p.Unit, Baseline: base, Evaluations: ev.done}
	n := 1
	res.Inputs = make([]SpiderLine, 0, len(p.Inputs))
	all := make([]SpiderPoint, points*len(p.Inputs)) // every line's points, in one allocation
	for i, in := range p.Inputs {
		line := SpiderLine{Name: in.Name, Unit: in.Unit, Value: in.Value, ZeroValue: in.Value == 0, Points: all[i*points : (i+1)*points : (i+1)*points]}
		lo, hi := base, base
		for j := range points {
			sp := SpiderPoint{Pct: pct(i, j), Input: in.Value, Output: base}
			if grid[i] != nil {
				sp.Input = grid[i][j]
				if j != half {
					sp.Output = y[n]
					n++
				}
			}
			line.Points[j] = sp
			lo, hi = math.Min(lo, sp.Output), math.Max(hi, sp.Output)
		}
		line.Spread = hi - lo
		res.Inputs = append(res.Inputs, line)
	}
	sortLines(res.Inputs)
	keepTop(res, top)
	if len(res.Inputs) < len(p.Inputs) {
		// The lines kept let go of the others' points.
		for i := range res.Inputs {
			res.Inputs[i].Points = slices.Clone(res.Inputs[i].Points)
		}
	}
	return res, nil
}

// sortLines orders spider lines by spread descending, ties by name.
func sortLines(ls []SpiderLine) {
	sortBySpread(ls, func(l *SpiderLine) (float64, string) { return l.Spread, l.Name })
}

// keepTop keeps the top lines of res (sorted) and summarises the rest; top
// 0 keeps all.
func keepTop(res *SpiderResult, top int) {
	if top > 0 && top < len(res.Inputs) {
		res.Rest = &SpiderRest{Count: len(res.Inputs) - top, LargestSpread: res.Inputs[top].Spread}
		res.Inputs = res.Inputs[:top]
	}
}
