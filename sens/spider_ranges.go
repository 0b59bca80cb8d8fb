package sens

import "math"

// spiderRanges is Spider over each input's own range: input i runs from its
// low to its high end, the others at their baselines,
//
//	y_i(x) = f(x0 with x_i = x),  x = low_i .. x0_i .. high_i
//
// on Points values, half of them (rounded up) spaced equally from the low
// end to the baseline and the rest from the baseline to the high end, so the
// baseline is always a point even in an asymmetric range. Each point's Pct is
// the change from the baseline in percent, 100 (x - x0_i) / |x0_i|, so lines
// of different lengths share one axis; an input whose baseline is 0 has Pct
// 0 throughout and is marked ZeroValue.
func spiderRanges(p *Problem, s *SpiderSettings) (*SpiderResult, error) {
	points := s.Points
	if points <= 0 {
		points = DefaultSpiderPoints
	}
	points = max(points, 3)
	if points%2 == 0 {
		points++
	}
	half := points / 2
	x0 := p.Baseline()
	ev := newBatcher(p.F, x0, &s.Settings)
	pts := []point{{i: -1, j: -1}}
	grid := make([][]float64, len(p.Inputs))
	for i, in := range p.Inputs {
		g := make([]float64, points)
		for j := 0; j <= half; j++ {
			g[j] = in.Low + (in.Value-in.Low)*float64(j)/float64(half)
			g[points-1-j] = in.High - (in.High-in.Value)*float64(j)/float64(half)
		}
		g[half] = in.Value
		grid[i] = g
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
	res := &SpiderResult{Kind: "spider", Output: p.Output, Unit: p.Unit, Baseline: base, OwnRanges: true, Evaluations: ev.done}
	n := 1
	for i, in := range p.Inputs {
		line := SpiderLine{Name: in.Name, Unit: in.Unit, Value: in.Value, Low: in.Low, High: in.High, Source: in.Source,
			ZeroValue: in.Value == 0, Points: make([]SpiderPoint, points)}
		lo, hi := base, base
		for j, v := range grid[i] {
			sp := SpiderPoint{Input: v, Output: base}
			if in.Value != 0 {
				sp.Pct = 100 * (v - in.Value) / math.Abs(in.Value)
			}
			if j != half {
				sp.Output = y[n]
				n++
			}
			line.Points[j] = sp
			lo, hi = math.Min(lo, sp.Output), math.Max(hi, sp.Output)
		}
		line.Spread = hi - lo
		res.Inputs = append(res.Inputs, line)
	}
	sortLines(res.Inputs)
	keepTop(res, s.Top)
	return res, nil
}
