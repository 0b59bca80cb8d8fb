package sens

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/nudge-dev/nudge/sens/unit"
)

// Crossing is one value of the input at which the output equals the target.
type Crossing struct {
	Value float64 `json:"value"`
	// Distance is Value minus the input's baseline; DistancePct is that as a
	// percentage of |baseline| (absent when the baseline is 0).
	Distance    float64  `json:"distance"`
	DistancePct *float64 `json:"distance_pct,omitempty"`
	// InRange is set when Value lies within the input's stated range.
	InRange bool `json:"in_range"`
	// Slope is ∂output/∂input at the crossing, in the output's unit per the
	// input's unit; 0 where the output only touches the target.
	Slope float64 `json:"slope"`
	// Touch is set where the output reaches the target without crossing it
	// (a tangent, such as the bottom of a valley).
	Touch bool `json:"touch,omitempty"`
	// OutsideDomain is set where the input would have to change sign from
	// its baseline (a negative price for a positive one): a value outside
	// the input's domain, not only outside its range (see markDomain).
	OutsideDomain bool `json:"outside_domain,omitempty"`
}

// Jump is a place where the output passes the target by a jump (a step
// function, or a pole such as a division by zero) rather than by equalling
// it.
type Jump struct {
	Value float64 `json:"value"`
	// Left and Right are the outputs found just below and just above Value
	// of the input.
	Left  float64 `json:"output_left"`
	Right float64 `json:"output_right"`
}

// BreakevenResult is the result of the break-even analysis.
type BreakevenResult struct {
	Kind           string  `json:"kind"` // "breakeven"
	Output         string  `json:"output"`
	Unit           string  `json:"unit"`
	Target         float64 `json:"target"`
	Input          string  `json:"input"`
	InputUnit      string  `json:"input_unit"`
	BaselineInput  float64 `json:"baseline_input"`
	BaselineOutput float64 `json:"baseline_output"`
	// Low and High are the input's stated range.
	Low    float64     `json:"low"`
	High   float64     `json:"high"`
	Source RangeSource `json:"source"`
	// Value and InRange describe the crossing nearest the baseline; both are
	// absent when there is none.
	Value     *float64   `json:"value,omitempty"`
	InRange   *bool      `json:"in_range,omitempty"`
	Crossings []Crossing `json:"crossings"`
	Jumps     []Jump     `json:"jumps,omitempty"`
	// SearchedLow..SearchedHigh is the part of the input's domain searched;
	// a side that ended at a domain error says why in DomainNote.
	SearchedLow  float64 `json:"searched_low"`
	SearchedHigh float64 `json:"searched_high"`
	DomainNote   string  `json:"domain_note,omitempty"`
	// MinOutput and MaxOutput are the least and greatest output found over
	// the searched part, at MinAt and MaxAt.
	MinOutput float64 `json:"min_output"`
	MinAt     float64 `json:"min_at"`
	MaxOutput float64 `json:"max_output"`
	MaxAt     float64 `json:"max_at"`
	// Flat is set when the output does not change with the input.
	Flat bool `json:"flat,omitempty"`
	// Message explains the result in a sentence when no crossing was found.
	Message string `json:"message,omitempty"`
	// Evaluations counts the evaluations of the search (not those of Curve).
	Evaluations int `json:"evaluations"`
	// Method describes the root finder used, for a chart's note.
	Method string `json:"method"`
	// SlopeUnit is the unit of each crossing's Slope: the output's unit per
	// the input's.
	SlopeUnit string `json:"-"`
	// Curve is the output over the stated range, widened to take in the
	// baseline and the crossings near it, for a chart with the target marked
	// (points where the model fails are left out).
	Curve []SweepPoint `json:"-"`
}

// BreakevenSettings are the settings of Breakeven. Input is required.
type BreakevenSettings struct {
	Settings
	// Input is the input to vary, the others staying at their baselines.
	Input string
	// Target is the value of the output to reach, in its unit.
	Target float64
	// Bounded restricts the search to Low..High instead of the input's whole
	// domain.
	Bounded   bool
	Low, High float64
}

// curvePoints is the number of points of BreakevenResult.Curve.
const curvePoints = 81

// SearchReach is how far Breakeven searches from the baseline, in multiples of
// the input's scale (the larger of |baseline| and the width of its range).
const SearchReach = 1e6

// Breakeven finds every value of one input at which the output equals target,
// the other inputs at their baselines. It scans the input's whole domain:
// a uniform grid across the stated range, then geometric steps outward on
// both sides (each 1.25 times the last) to SearchReach times the input's
// scale, stopping a side at the first domain error, which bounds the domain
// there. Each sign change of
//
//	g(x) = f(x) - target
//
// between grid points is a bracket, and where |g| dips between grid points
// without a sign change the dip is searched for a hidden pair of crossings or
// a touch. Each bracket is refined by Newton's method on the reverse-mode
// derivative,
//
//	x ← x - g(x) / g'(x)
//
// falling back to bisection whenever the Newton step leaves the bracket or
// fails to halve it, so it converges wherever the bracket holds a crossing. A
// bracket that closes on a jump instead of a zero is reported as a Jump.
// Crossings are reported with their distance from the baseline and whether
// they lie in the stated range; when there is none, Message says what the
// output reached instead.
//
// Two crossings closer together than the grid spacing, where |g| does not dip
// at a grid point, can be missed; so can a crossing beyond the search reach.
//
// References:
//   - W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery,
//     Numerical Recipes, 3rd ed., Cambridge University Press, 2007, §9.4
//     (Newton–Raphson safeguarded by bisection).
func Breakeven(p *Problem, s *BreakevenSettings) (*BreakevenResult, error) {
	if s == nil {
		s = &BreakevenSettings{}
	}
	set := &s.Settings
	if s.Input == "" {
		return nil, errors.New("a break-even search needs an input to vary")
	}
	in, i, err := p.Input(s.Input)
	if err != nil {
		return nil, err
	}
	target := s.Target
	if math.IsNaN(target) || math.IsInf(target, 0) {
		return nil, fmt.Errorf("the target must be a finite number")
	}
	x0 := in.Value
	if s.Bounded {
		if err := checkRange(in, s.Low, s.High); err != nil {
			return nil, err
		}
	}
	// Numbers in messages, with their units.
	out := func(v float64) string { return unit.Format(v, p.Unit) }
	inp := func(v float64) string { return unit.Format(v, in.Unit) }
	y0, err := p.F.Eval(p.Baseline())
	if err != nil {
		return nil, err
	}
	grid := breakevenGrid(in, s)
	b := min(sort.SearchFloat64s(grid, x0), len(grid)-1) // grid[b] == x0 unless bounded away from it

	res := &BreakevenResult{Kind: "breakeven", Method: breakevenMethod(s), Output: p.Output, Unit: p.Unit, Target: target,
		Input: in.Name, InputUnit: in.Unit, BaselineInput: x0, BaselineOutput: y0,
		Low: in.Low, High: in.High, Source: in.Source, Crossings: []Crossing{}, SlopeUnit: PartialUnit(p.Unit, in.Unit, in)}
	bs := &bsearch{p: p, i: i, target: target, ev: newBatcher(p.F, p.Baseline(), set), set: set}
	bs.ev.total = len(grid) + 40
	bs.ev.done++ // the baseline
	xs, ys, note, err := bs.scan(grid, b)
	if err != nil {
		return nil, err
	}
	res.DomainNote = note
	res.SearchedLow, res.SearchedHigh = xs[0], xs[len(xs)-1]
	// The least and greatest outputs, and the output closest to the target;
	// of equal values, the one nearest the baseline.
	closest, closestAt := ys[0], xs[0]
	res.MinOutput, res.MinAt, res.MaxOutput, res.MaxAt = ys[0], xs[0], ys[0], xs[0]
	nearer := func(x, than float64) bool { return math.Abs(x-x0) < math.Abs(than-x0) }
	for j := range xs {
		if ys[j] < res.MinOutput || ys[j] == res.MinOutput && nearer(xs[j], res.MinAt) {
			res.MinOutput, res.MinAt = ys[j], xs[j]
		}
		if ys[j] > res.MaxOutput || ys[j] == res.MaxOutput && nearer(xs[j], res.MaxAt) {
			res.MaxOutput, res.MaxAt = ys[j], xs[j]
		}
		if d, dc := math.Abs(ys[j]-target), math.Abs(closest-target); d < dc || d == dc && nearer(xs[j], closestAt) {
			closest, closestAt = ys[j], xs[j]
		}
	}
	ytol := 1e-12 * math.Max(math.Abs(res.MinOutput), math.Abs(res.MaxOutput))
	res.Flat = res.MaxOutput-res.MinOutput <= ytol
	if res.Flat {
		if res.MaxOutput == target {
			res.Message = fmt.Sprintf("%s does not change with %s: it equals the target %s at every value searched", p.Output, in.Name, out(target))
		} else {
			res.Message = fmt.Sprintf("%s does not change with %s over %s..%s: it stays at %s, so it never reaches %s", p.Output, in.Name, inp(xs[0]), inp(xs[len(xs)-1]), out(res.MaxOutput), out(target))
		}
		res.Evaluations = bs.ev.done
		if err := bs.curve(res); err != nil {
			return nil, err
		}
		bs.ev.finish()
		return res, nil
	}

	// Brackets: sign changes between grid points, zeros at grid points, and
	// dips of |g| searched for hidden crossings.
	type bracket struct{ a, b, ga, gb float64 }
	var brs []bracket
	var zeros []Crossing
	g := make([]float64, len(ys))
	for j := range ys {
		g[j] = ys[j] - target
	}
	var dips []*extreme
	for j := range xs {
		if g[j] == 0 {
			zeros = append(zeros, Crossing{Value: xs[j]})
			continue
		}
		if j+1 < len(xs) && g[j+1] != 0 && (g[j] < 0) != (g[j+1] < 0) {
			brs = append(brs, bracket{xs[j], xs[j+1], g[j], g[j+1]})
		}
		if j > 0 && j+1 < len(xs) && g[j-1] != 0 && g[j+1] != 0 &&
			(g[j-1] < 0) == (g[j] < 0) && (g[j+1] < 0) == (g[j] < 0) &&
			math.Abs(g[j]) < math.Abs(g[j-1]) && math.Abs(g[j]) < math.Abs(g[j+1]) {
			sign := -1.0 // g > 0: look for a minimum of the output
			if g[j] < 0 {
				sign = 1
			}
			dips = append(dips, &extreme{input: i, sign: sign, a: xy{xs[j-1], ys[j-1]}, b: xy{xs[j], ys[j]}, c: xy{xs[j+1], ys[j+1]},
				tol: 1e-9 * (xs[j+1] - xs[j-1])})
		}
	}
	if len(dips) > 0 {
		outer := make([][2]xy, len(dips)) // the grid neighbours of each dip
		for n, d := range dips {
			outer[n] = [2]xy{d.a, d.c}
		}
		if err := refineExtremes(bs.ev, dips); err != nil {
			return nil, err
		}
		for n, d := range dips {
			if d.b.y < res.MinOutput {
				res.MinOutput, res.MinAt = d.b.y, d.b.x
			}
			if d.b.y > res.MaxOutput {
				res.MaxOutput, res.MaxAt = d.b.y, d.b.x
			}
			if math.Abs(d.b.y-target) < math.Abs(closest-target) {
				closest, closestAt = d.b.y, d.b.x
			}
			gd := d.b.y - target
			switch {
			case math.Abs(gd) <= 1e-9*max(math.Abs(outer[n][0].y), math.Abs(outer[n][1].y), math.Abs(target)):
				zeros = append(zeros, Crossing{Value: d.b.x, Touch: true})
			case (gd < 0) == (d.sign < 0):
				// The extreme lies across the target: a crossing on each
				// side of it.
				l, r := outer[n][0], outer[n][1]
				brs = append(brs, bracket{l.x, d.b.x, l.y - target, gd}, bracket{d.b.x, r.x, gd, r.y - target})
			}
		}
	}

	for _, br := range brs {
		c, jump, err := bs.refine(br.a, br.b, br.ga, br.gb)
		if err != nil {
			return nil, err
		}
		if jump != nil {
			res.Jumps = append(res.Jumps, *jump)
			continue
		}
		res.Crossings = append(res.Crossings, c)
	}
	for _, z := range zeros {
		if !z.Touch {
			grad := make([]float64, len(p.Inputs))
			x := p.Baseline()
			x[i] = z.Value
			if _, err := p.F.Gradient(grad, x); err == nil {
				z.Slope = grad[i]
			}
			bs.ev.done++
		}
		res.Crossings = append(res.Crossings, z)
	}
	sort.Slice(res.Crossings, func(a, b int) bool { return res.Crossings[a].Value < res.Crossings[b].Value })
	sort.Slice(res.Jumps, func(a, b int) bool { return res.Jumps[a].Value < res.Jumps[b].Value })
	best := -1
	for j := range res.Crossings {
		c := &res.Crossings[j]
		c.Distance = c.Value - x0
		if x0 != 0 {
			pct := 100 * c.Distance / math.Abs(x0)
			c.DistancePct = &pct
		}
		c.InRange = in.Low <= c.Value && c.Value <= in.High
		if best < 0 || math.Abs(c.Distance) < math.Abs(res.Crossings[best].Distance) {
			best = j
		}
	}
	if best >= 0 {
		v, r := res.Crossings[best].Value, res.Crossings[best].InRange
		res.Value, res.InRange = &v, &r
	} else {
		res.Message = fmt.Sprintf("%s never reaches %s over %s = %s..%s: it ranges from %s (at %s = %s) to %s (at %s = %s); the closest is %s at %s = %s",
			p.Output, out(target), in.Name, inp(res.SearchedLow), inp(res.SearchedHigh),
			out(res.MinOutput), in.Name, inp(res.MinAt), out(res.MaxOutput), in.Name, inp(res.MaxAt),
			out(closest), in.Name, inp(closestAt))
		if len(res.Jumps) > 0 {
			res.Message += fmt.Sprintf("; it jumps past the target at %s = %s", in.Name, inp(res.Jumps[0].Value))
		}
	}
	markDomain(res)
	res.Evaluations = bs.ev.done
	if err := bs.curve(res); err != nil {
		return nil, err
	}
	bs.ev.finish()
	return res, nil
}

// breakevenGrid returns the sorted points to scan, the baseline among them.
func breakevenGrid(in *Input, s *BreakevenSettings) []float64 {
	x0 := in.Value
	var g []float64
	if s.Bounded {
		g = linspace(s.Low, s.High, 201)
		if x0 >= s.Low && x0 <= s.High {
			g = append(g, x0)
		}
		return sortUnique(g)
	}
	lo, hi := math.Min(in.Low, x0), math.Max(in.High, x0)
	scale := math.Max(math.Abs(x0), hi-lo)
	if scale == 0 || math.IsNaN(scale) {
		scale = 1
	}
	step := (hi - lo) / 40
	if step <= 0 {
		step = scale / 40
	}
	g = append(g, x0)
	if hi > lo {
		g = append(g, linspace(lo, hi, 41)...)
	}
	reach := SearchReach * scale
	for d, st := step, step; d <= reach*1.25; st *= 1.25 {
		g = append(g, hi+d, lo-d)
		d += st
	}
	return sortUnique(g)
}

func sortUnique(g []float64) []float64 {
	sort.Float64s(g)
	out := g[:0]
	for j, v := range g {
		if j == 0 || v != out[len(out)-1] {
			out = append(out, v)
		}
	}
	return out
}

// bsearch holds the state of one break-even search.
type bsearch struct {
	p      *Problem
	i      int
	target float64
	ev     *batcher
	set    *Settings
	grad   []float64
	x      []float64
}

// scan evaluates the grid, batched. When a point fails (a domain error), each
// side is walked outward from the baseline grid[b] point by point and stops
// at its first failure, which bounds the domain there.
func (bs *bsearch) scan(grid []float64, b int) (xs, ys []float64, note string, err error) {
	pts := make([]point, len(grid))
	for j, v := range grid {
		pts[j] = point{i: bs.i, vi: v, j: -1}
	}
	y := make([]float64, len(grid))
	err = bs.ev.eval(y, pts)
	if err == nil {
		return grid, y, "", nil
	}
	if bs.set.ctx().Err() != nil {
		return nil, nil, "", err
	}
	in := bs.p.Inputs[bs.i]
	x := bs.p.Baseline()
	eval := func(j int) (float64, error) {
		x[bs.i] = grid[j]
		bs.ev.done++
		return bs.p.F.Eval(x)
	}
	y0, err := eval(b)
	if err != nil {
		return nil, nil, "", err
	}
	lo, hi := b, b
	y[b] = y0
	var notes []string
	for j := b + 1; j < len(grid); j++ {
		if err := bs.set.ctx().Err(); err != nil {
			return nil, nil, "", fmt.Errorf("stopped: %w", err)
		}
		v, err := eval(j)
		if err != nil {
			notes = append(notes, fmt.Sprintf("above %s = %s the model fails at %s (%v)", in.Name, unit.Format(grid[j-1], in.Unit), unit.Format(grid[j], in.Unit), err))
			break
		}
		y[j], hi = v, j
	}
	for j := b - 1; j >= 0; j-- {
		if err := bs.set.ctx().Err(); err != nil {
			return nil, nil, "", fmt.Errorf("stopped: %w", err)
		}
		v, err := eval(j)
		if err != nil {
			notes = append(notes, fmt.Sprintf("below %s = %s the model fails at %s (%v)", in.Name, unit.Format(grid[j+1], in.Unit), unit.Format(grid[j], in.Unit), err))
			break
		}
		y[j], lo = v, j
	}
	for j, n := range notes {
		if j > 0 {
			note += "; "
		}
		note += n
	}
	return grid[lo : hi+1], y[lo : hi+1], note, nil
}

// refine finds the crossing in [a, b] (a < b), where g = f - target has
// opposite signs ga and gb at the ends, by Newton's method on the reverse-mode
// derivative safeguarded by bisection (Numerical Recipes' rtsafe): a Newton
// step that would leave the bracket, or that is not less than half the step
// before last, is replaced by a bisection.
func (bs *bsearch) refine(a, b, ga, gb float64) (Crossing, *Jump, error) {
	if bs.grad == nil {
		bs.grad = make([]float64, len(bs.p.Inputs))
		bs.x = bs.p.Baseline()
	}
	ctx := bs.set.ctx()
	gmax := math.Max(math.Abs(ga), math.Abs(gb))
	best, gbest, slope := a, math.Inf(1), 0.0
	var gx, dx float64
	eval := func(x float64) error {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("stopped: %w", err)
		}
		bs.x[bs.i] = x
		y, err := bs.p.F.Gradient(bs.grad, bs.x)
		bs.ev.done++
		if err != nil {
			return err
		}
		gx, dx = y-bs.target, bs.grad[bs.i]
		if math.Abs(gx) < gbest {
			best, gbest, slope = x, math.Abs(gx), dx
		}
		if gx != 0 {
			if (gx < 0) == (ga < 0) {
				a, ga = x, gx
			} else {
				b, gb = x, gx
			}
		}
		return nil
	}
	// Start from the secant point.
	x := a - ga*(b-a)/(gb-ga)
	if !(x > a && x < b) {
		x = a + (b-a)/2
	}
	if err := eval(x); err != nil {
		return Crossing{}, nil, err
	}
	dxold, step := b-a, b-a
	for it := 0; it < 200 && gx != 0; it++ {
		var next float64
		if dx == 0 || ((x-b)*dx-gx)*((x-a)*dx-gx) > 0 || math.Abs(2*gx) > math.Abs(dxold*dx) {
			dxold, step = step, (b-a)/2
			next = a + step
		} else {
			dxold, step = step, gx/dx
			next = x - step
		}
		done := next == x || math.Abs(step) <= 4e-16*math.Abs(next)+1e-300
		x = next
		if err := eval(x); err != nil {
			return Crossing{}, nil, err
		}
		if done || b-a <= 4e-16*math.Max(math.Abs(a), math.Abs(b)) {
			break
		}
	}
	// A bracket that closed on a jump leaves |g| large on both sides.
	if gbest > 1e-6*gmax && gbest > 1e-9*math.Abs(bs.target) {
		return Crossing{}, &Jump{Value: a + (b-a)/2, Left: ga + bs.target, Right: gb + bs.target}, nil
	}
	return Crossing{Value: best, Slope: slope}, nil, nil
}

// curve fills res.Curve: the output at curvePoints equally spaced values over
// the stated range widened to take in the baseline and the crossings within
// ten range widths of it (farther ones would flatten the chart), plus 5% on
// either side, and clipped to the part of the domain searched. A batch that
// fails on a domain error is evaluated point by point and the failing points
// are left out; cancellation is an error.
func (bs *bsearch) curve(res *BreakevenResult) error {
	lo, hi := math.Min(res.Low, res.BaselineInput), math.Max(res.High, res.BaselineInput)
	w := hi - lo
	for _, c := range res.Crossings {
		if c.Value >= lo-10*w && c.Value <= hi+10*w {
			lo, hi = math.Min(lo, c.Value), math.Max(hi, c.Value)
		}
	}
	pad := 0.05 * (hi - lo)
	lo, hi = math.Max(lo-pad, res.SearchedLow), math.Min(hi+pad, res.SearchedHigh)
	if !(hi > lo) {
		return nil
	}
	xs := linspace(lo, hi, curvePoints)
	pts := make([]point, len(xs))
	for j, v := range xs {
		pts[j] = point{i: bs.i, vi: v, j: -1}
	}
	y := make([]float64, len(xs))
	bs.ev.total = bs.ev.done + len(xs)
	err := bs.ev.eval(y, pts)
	if err == nil {
		for j, v := range xs {
			res.Curve = append(res.Curve, SweepPoint{X: v, Output: y[j]})
		}
		return nil
	}
	if e := bs.set.ctx().Err(); e != nil {
		return fmt.Errorf("stopped: %w", e)
	}
	x := bs.p.Baseline()
	for _, v := range xs {
		x[bs.i] = v
		bs.ev.done++
		if yv, err := bs.p.F.Eval(x); err == nil {
			res.Curve = append(res.Curve, SweepPoint{X: v, Output: yv})
		}
	}
	return nil
}
