package sens

import (
	"fmt"
	"math"

	"github.com/nudge-dev/nudge/sens/unit"
)

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
	if err := checkKept("spider", p.Output, points, len(p.Inputs), fmt.Sprintf("%s points on each of %s inputs", unit.Format(float64(points), ""), unit.Format(float64(len(p.Inputs)), "")), "lower points="); err != nil {
		return nil, err
	}
	half := points / 2
	grid := make([][]float64, len(p.Inputs))
	for i, in := range p.Inputs {
		g := make([]float64, points)
		for j := 0; j <= half; j++ {
			g[j] = in.Low + (in.Value-in.Low)*float64(j)/float64(half)
			g[points-1-j] = in.High - (in.High-in.Value)*float64(j)/float64(half)
		}
		g[half] = in.Value
		grid[i] = g
	}
	res, err := spiderLines(p, &s.Settings, grid, points, s.Top, func(i, j int) float64 {
		if x0 := p.Inputs[i].Value; x0 != 0 {
			return 100 * (grid[i][j] - x0) / math.Abs(x0)
		}
		return 0
	})
	if err != nil {
		return nil, err
	}
	res.OwnRanges = true
	for i := range res.Inputs {
		l := &res.Inputs[i]
		in, _, _ := p.Input(l.Name)
		l.Low, l.High, l.Source = in.Low, in.High, in.Source
	}
	return res, nil
}
