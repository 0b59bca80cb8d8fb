package sens

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

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
	// Pole is set where the output runs off towards infinity on approaching
	// Value (a division by a number that passes 0), rather than stepping
	// between two values.
	Pole bool `json:"pole,omitempty"`
}

// Unresolved is a part of the input's domain where the search failed (the
// model could not be evaluated there) and a crossing may have been missed;
// the crossings found elsewhere stand.
type Unresolved struct {
	Low  float64 `json:"low"`
	High float64 `json:"high"`
	// Reason says what failed, in a sentence.
	Reason string `json:"reason"`
}

// Plateau is an interval of the input over which the output is level at the
// target (a step function such as round, or a cap by min or max, at the
// target's value): every value in Low..High reaches it, so its ends are not
// listed as crossings.
type Plateau struct {
	Low  float64 `json:"low"`
	High float64 `json:"high"`
	// InRange is set when the interval meets the input's stated range.
	InRange bool `json:"in_range"`
	// OpenLow and OpenHigh are set when the output equals the target at
	// every point searched beyond that end: the plateau may go on past the
	// part searched.
	OpenLow  bool `json:"open_low,omitempty"`
	OpenHigh bool `json:"open_high,omitempty"`
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
	// Plateaus lists the intervals where the output equals the target
	// throughout (see Plateau); a crossing inside one is not listed. The
	// nearest value (Value) counts them: the point of a plateau nearest the
	// baseline.
	Plateaus []Plateau `json:"plateaus,omitempty"`
	Jumps    []Jump    `json:"jumps,omitempty"`
	// Unresolved lists the brackets whose search failed.
	Unresolved []Unresolved `json:"unresolved,omitempty"`
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
// both sides (each 1.25 times the last, at most maxOutward of them) to
// SearchReach times the input's scale or the end of the float64 range. Every
// point of the grid is evaluated; where the model fails at one point and not
// at its neighbour, the gap between them is bisected towards the failure
// (edge), so the domain's edges are found to the last representable value
// and a crossing between the last point of the grid that succeeds and an
// edge (ln(x) = -3 near 0, exp(x) = 1e300 below its overflow) is found too.
// Each sign change of
//
//	g(x) = f(x) - target
//
// between neighbouring points is a bracket, and where |g| dips between
// points without a sign change the dip is searched for a hidden pair of
// crossings or a touch. Each bracket is refined by Newton's method on the
// reverse-mode derivative,
//
//	x ← x - g(x) / g'(x)
//
// falling back to bisection (between numbers of one sign and widely
// different sizes, at the midpoint of their bit patterns, so that any bracket
// closes within about 130 steps) whenever the Newton step leaves the bracket
// or fails to halve it, until the bracket is a few units in the last place
// wide. A crossing is reported only when it is verified: g is 0 there, or at
// both ends of the final bracket g is within rounding of 0 or within eight
// times what the slope there allows over the bracket's width, and the slope
// has the sign of the change (a pole changes sign against its slope). A sign
// change that fails this is a Jump: a pole where |g| grew as the bracket
// closed, a step otherwise. A touch is reported only where g at the bottom of
// the dip is within what the output varies over the final bracket, or within
// rounding of 0. Where the model fails inside a bracket or a dip, the failure
// is bisected towards from both sides and the new points searched again (at
// most breakevenRounds times); what still fails is reported as Unresolved,
// and the crossings found elsewhere stand.
//
// Crossings are reported with their distance from the baseline and whether
// they lie in the stated range; when there is none, Message says what the
// output reached instead.
//
// Two crossings closer together than the grid spacing, where |g| does not dip
// at a grid point, can be missed; so can a crossing beyond the search reach.
// The work is bounded: at most maxOutward grid steps a side, maxEdgeSteps
// bisections an edge and maxEdgeTotal in all, maxRefine steps a bracket,
// maxSearchEvals evaluations in all (what is left is reported unresolved); the
// context is checked before every evaluation outside a batch.
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

	res := &BreakevenResult{Kind: "breakeven", Method: breakevenMethod(s), Output: p.Output, Unit: p.Unit, Target: target,
		Input: in.Name, InputUnit: in.Unit, BaselineInput: x0, BaselineOutput: y0,
		Low: in.Low, High: in.High, Source: in.Source, Crossings: []Crossing{}, SlopeUnit: PartialUnit(p.Unit, in.Unit, in)}
	bs := &bsearch{p: p, i: i, in: in, target: target, ev: newBatcher(p.F, p.Baseline(), set), set: set,
		grad: make([]float64, len(p.Inputs)), x: p.Baseline()}
	bs.ev.total = len(grid) + 40
	bs.ev.done++ // the baseline
	if err := bs.scan(grid); err != nil {
		return nil, err
	}
	var valid []sample
	for _, v := range bs.smp {
		if v.err == nil {
			valid = append(valid, v)
		}
	}
	if len(valid) == 0 {
		return nil, fmt.Errorf("the model fails at every value of %s searched, %s..%s: %s", in.Name, inp(grid[0]), inp(grid[len(grid)-1]), evalSentence(bs.smp[0].err))
	}
	res.DomainNote = bs.domainNote()
	res.SearchedLow, res.SearchedHigh = valid[0].x, valid[len(valid)-1].x
	// The least and greatest outputs, and the output closest to the target;
	// of equal values, the one nearest the baseline.
	closest, closestAt := valid[0].y, valid[0].x
	res.MinOutput, res.MinAt, res.MaxOutput, res.MaxAt = valid[0].y, valid[0].x, valid[0].y, valid[0].x
	nearer := func(x, than float64) bool { return math.Abs(x-x0) < math.Abs(than-x0) }
	seen := func(x, y float64) {
		if y < res.MinOutput || y == res.MinOutput && nearer(x, res.MinAt) {
			res.MinOutput, res.MinAt = y, x
		}
		if y > res.MaxOutput || y == res.MaxOutput && nearer(x, res.MaxAt) {
			res.MaxOutput, res.MaxAt = y, x
		}
		if d, dc := math.Abs(y-target), math.Abs(closest-target); d < dc || d == dc && nearer(x, closestAt) {
			closest, closestAt = y, x
		}
	}
	for _, v := range valid {
		seen(v.x, v.y)
	}
	ytol := 1e-12 * math.Max(math.Abs(res.MinOutput), math.Abs(res.MaxOutput))
	res.Flat = res.MaxOutput-res.MinOutput <= ytol
	if res.Flat {
		if res.MaxOutput == target {
			res.Message = fmt.Sprintf("%s does not change with %s: it equals the target %s at every value searched", p.Output, in.Name, out(target))
		} else {
			res.Message = fmt.Sprintf("%s does not change with %s over %s..%s: it stays at %s, so it never reaches %s", p.Output, in.Name, inp(res.SearchedLow), inp(res.SearchedHigh), out(res.MaxOutput), out(target))
		}
		res.Evaluations = bs.ev.done
		if err := bs.curve(res); err != nil {
			return nil, err
		}
		bs.ev.finish()
		return res, nil
	}

	var zeros []Crossing
	doneBr := map[[2]float64]bool{}
	doneDip := map[float64]bool{}
	for round := 0; round < breakevenRounds; round++ {
		last := round == breakevenRounds-1
		var fails []failure
		fail := func(f failure) {
			if last {
				res.Unresolved = append(res.Unresolved, Unresolved{Low: f.a.x, High: f.b.x,
					Reason: fmt.Sprintf("the model fails at %s = %s: %s", in.Name, inp(f.x), evalSentence(f.err))})
				return
			}
			fails = append(fails, f)
		}
		solve := func(a, b bpt) error {
			r, err := bs.refine(a, b)
			if err != nil {
				return err
			}
			switch {
			case r.fail != nil:
				fail(*r.fail)
			case r.jump != nil:
				// A later round can bracket a jump or a crossing found
				// before between points its refinement added: keep one.
				if !slices.ContainsFunc(res.Jumps, func(j Jump) bool { return sameRoot(j.Value, r.jump.Value) }) {
					res.Jumps = append(res.Jumps, *r.jump)
				}
			case r.unresolved != nil:
				res.Unresolved = append(res.Unresolved, *r.unresolved)
			default:
				if !slices.ContainsFunc(res.Crossings, func(c Crossing) bool { return sameRoot(c.Value, r.crossing.Value) }) {
					res.Crossings = append(res.Crossings, r.crossing)
				}
				seen(r.crossing.Value, target)
			}
			return nil
		}
		brs, dips := bs.candidates(doneBr, doneDip, &zeros, &res.Jumps, &res.Unresolved)
		if len(brs)+len(dips) == 0 {
			break
		}
		spent := func(lo, hi float64) bool {
			if bs.ev.done < maxSearchEvals {
				return false
			}
			res.Unresolved = append(res.Unresolved, Unresolved{Low: lo, High: hi,
				Reason: fmt.Sprintf("not searched: the search reached its limit of %s evaluations", unit.Format(maxSearchEvals, ""))})
			return true
		}
		for _, d := range dips {
			l, r := d.a, d.c // the neighbours of the dip
			if spent(l.x, r.x) {
				continue
			}
			o, err := bs.dip(d)
			if err != nil {
				return nil, err
			}
			if o.fail != nil {
				fail(*o.fail)
				continue
			}
			seen(d.b.x, d.b.y)
			switch {
			case o.touch:
				zeros = append(zeros, Crossing{Value: d.b.x, Touch: true})
			case o.across:
				if err := solve(o.l, o.m); err != nil {
					return nil, err
				}
				if err := solve(o.m, o.r); err != nil {
					return nil, err
				}
			}
		}
		for _, br := range brs {
			if spent(br[0].x, br[1].x) {
				continue
			}
			if err := solve(br[0], br[1]); err != nil {
				return nil, err
			}
		}
		if len(fails) == 0 {
			break
		}
		// Search towards each failure from both sides; the next round looks
		// at the points found.
		for _, f := range fails {
			if spent(f.a.x, f.b.x) {
				continue
			}
			if err := bs.around(f); err != nil {
				return nil, err
			}
		}
		res.DomainNote = bs.domainNote()
		for _, v := range bs.smp {
			if v.err == nil {
				seen(v.x, v.y)
				res.SearchedLow, res.SearchedHigh = math.Min(res.SearchedLow, v.x), math.Max(res.SearchedHigh, v.x)
			}
		}
	}
	for _, z := range zeros {
		if slices.ContainsFunc(res.Crossings, func(c Crossing) bool { return sameRoot(c.Value, z.Value) }) {
			continue // a sample landed on a crossing refined from a bracket
		}
		if !z.Touch {
			bs.x[i] = z.Value
			if _, err := p.F.Gradient(bs.grad, bs.x); err == nil {
				z.Slope = bs.grad[i]
			}
			bs.ev.done++
		}
		res.Crossings = append(res.Crossings, z)
	}
	sort.Slice(res.Crossings, func(a, b int) bool { return res.Crossings[a].Value < res.Crossings[b].Value })
	sort.Slice(res.Jumps, func(a, b int) bool { return res.Jumps[a].Value < res.Jumps[b].Value })
	sort.Slice(res.Unresolved, func(a, b int) bool { return res.Unresolved[a].Low < res.Unresolved[b].Low })
	if err := bs.plateaus(res); err != nil {
		return nil, err
	}
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
	}
	for _, pl := range res.Plateaus {
		// The plateau's point nearest the baseline.
		v := math.Min(math.Max(x0, pl.Low), pl.High)
		if res.Value == nil || math.Abs(v-x0) < math.Abs(*res.Value-x0) {
			r := in.Low <= v && v <= in.High
			res.Value, res.InRange = &v, &r
		}
	}
	if res.Value == nil {
		res.Message = fmt.Sprintf("%s never reaches %s over %s = %s..%s: it ranges from %s (at %s = %s) to %s (at %s = %s); the closest is %s at %s = %s",
			p.Output, out(target), in.Name, inp(res.SearchedLow), inp(res.SearchedHigh),
			out(res.MinOutput), in.Name, inp(res.MinAt), out(res.MaxOutput), in.Name, inp(res.MaxAt),
			out(closest), in.Name, inp(closestAt))
		if len(res.Jumps) > 0 {
			how := "jumps past the target"
			if res.Jumps[0].Pole {
				how = "passes the target through a pole"
			}
			res.Message += fmt.Sprintf("; it %s at %s = %s", how, in.Name, inp(res.Jumps[0].Value))
		}
		if len(res.Unresolved) > 0 {
			res.Message += fmt.Sprintf("; the search failed between %s = %s and %s, where a crossing may lie", in.Name, inp(res.Unresolved[0].Low), inp(res.Unresolved[0].High))
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

// Bounds on the work of a break-even search.
const (
	// maxOutward bounds the geometric steps of the grid on each side.
	maxOutward = 200
	// edgeHalvings is the number of halvings of the distance to a failure
	// before the search closes on it by the bit patterns' midpoint;
	// maxEdgeSteps bounds both together: enough to reach the neighbouring
	// float64 from any distance.
	edgeHalvings = 60
	maxEdgeSteps = edgeHalvings + 80
	// maxEdgeTotal bounds the evaluations of every edge search together;
	// past it, each edge gets edgeStepsLate bisections.
	maxEdgeTotal  = 20000
	edgeStepsLate = 40
	// maxRefine bounds the steps of one bracket's refinement (bisection
	// alone closes any bracket in about 130).
	maxRefine = 400
	// breakevenRounds bounds the rounds of searching towards failures met
	// inside brackets and dips.
	breakevenRounds = 3
	// maxSearchEvals bounds the evaluations of a whole search: past it, a
	// bracket, dip or failure not yet searched is reported as Unresolved
	// (one already begun finishes: at most maxRefine + 2 more).
	maxSearchEvals = 50000
)

// breakevenGrid returns the sorted points to scan, the baseline among them:
// finite numbers only, however large or small the input's values are.
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
	w := hi - lo
	scale := math.Max(math.Abs(x0), w)
	if math.IsInf(w, 0) {
		scale = math.Max(math.Abs(lo), math.Abs(hi))
	}
	if scale == 0 || math.IsNaN(scale) {
		scale = 1
	}
	step := w / 40
	if !(step > 0) || math.IsInf(step, 0) {
		step = scale / 40
	}
	if step == 0 {
		step = math.SmallestNonzeroFloat64
	}
	g = append(g, x0)
	if hi > lo {
		g = append(g, linspace(lo, hi, 41)...)
	}
	reach := SearchReach * scale // +Inf past the float64 range: the loop ends on its own
	d, st := step, step
	for k := 0; k < maxOutward && d <= reach*1.25; k++ {
		u, l := hi+d, lo-d
		if !math.IsInf(u, 0) {
			g = append(g, u)
		}
		if !math.IsInf(l, 0) {
			g = append(g, l)
		}
		if math.IsInf(u, 0) && math.IsInf(l, 0) {
			break
		}
		if next := st * 1.25; next > st {
			st = next
		} else {
			st = math.Nextafter(st, math.Inf(1)) // a subnormal step that 1.25 does not grow
		}
		if d+st == d {
			break
		}
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

// sample is one point evaluated: the output y at x, or the error there.
type sample struct {
	x, y float64
	err  error
}

// bpt is a point of a bracket: the output y, g = y - target, and the slope
// ∂y/∂x (NaN when not known).
type bpt struct{ x, y, g, s float64 }

// failure is an evaluation that failed at x inside the bracket a..b.
type failure struct {
	a, b xy
	x    float64
	err  error
}

// bsearch holds the state of one break-even search.
type bsearch struct {
	p      *Problem
	i      int
	in     *Input
	target float64
	ev     *batcher
	set    *Settings
	grad   []float64
	x      []float64
	smp    []sample // every point evaluated by the scan and the edge searches, sorted
	edgeN  int      // evaluations spent on edges
}

// value evaluates the output at x (the other inputs at baseline), checking
// for cancellation first.
func (bs *bsearch) value(x float64) (float64, error, error) {
	if err := bs.set.ctx().Err(); err != nil {
		return 0, nil, fmt.Errorf("stopped: %w", err)
	}
	bs.x[bs.i] = x
	bs.ev.done++
	y, err := bs.p.F.Eval(bs.x)
	return y, err, nil
}

// point evaluates the output and its slope at x. A derivative that fails
// (one that is not finite) leaves the value, with the slope unknown (NaN);
// only a value that fails is an error (the second result). The third is
// cancellation.
func (bs *bsearch) point(x float64) (bpt, error, error) {
	if err := bs.set.ctx().Err(); err != nil {
		return bpt{}, nil, fmt.Errorf("stopped: %w", err)
	}
	bs.x[bs.i] = x
	bs.ev.done++
	y, err := bs.p.F.Gradient(bs.grad, bs.x)
	s := bs.grad[bs.i]
	if err != nil {
		bs.ev.done++
		if y, err = bs.p.F.Eval(bs.x); err != nil {
			return bpt{x: x}, err, nil
		}
		s = math.NaN()
	}
	if math.IsInf(s, 0) {
		s = math.NaN()
	}
	return bpt{x: x, y: y, g: y - bs.target, s: s}, nil, nil
}

// scan evaluates the grid, batched; when the batch fails, point by point,
// keeping every failure. Between each point that succeeds and a neighbour
// that fails, it searches towards the failure (edge).
func (bs *bsearch) scan(grid []float64) error {
	pts := make([]point, len(grid))
	for j, v := range grid {
		pts[j] = point{i: bs.i, vi: v, j: -1}
	}
	y := make([]float64, len(grid))
	err := bs.ev.eval(y, pts)
	bs.smp = make([]sample, len(grid))
	if err == nil {
		for j, v := range grid {
			bs.smp[j] = sample{x: v, y: y[j]}
		}
		return nil
	}
	if e := bs.set.ctx().Err(); e != nil {
		return err
	}
	for j, v := range grid {
		y, ferr, err := bs.value(v)
		if err != nil {
			return err
		}
		bs.smp[j] = sample{x: v, y: y, err: ferr}
	}
	grid0 := bs.smp
	bs.smp = append([]sample(nil), grid0...)
	for j := 0; j+1 < len(grid0); j++ {
		a, b := grid0[j], grid0[j+1]
		var err error
		switch {
		case a.err == nil && b.err != nil:
			err = bs.edge(xy{a.x, a.y}, b.x, b.err)
		case a.err != nil && b.err == nil:
			err = bs.edge(xy{b.x, b.y}, a.x, a.err)
		}
		if err != nil {
			return err
		}
	}
	bs.sortSamples()
	return nil
}

func (bs *bsearch) sortSamples() {
	sort.SliceStable(bs.smp, func(a, b int) bool { return bs.smp[a].x < bs.smp[b].x })
	out := bs.smp[:0]
	for j, v := range bs.smp {
		if j > 0 && v.x == out[len(out)-1].x {
			continue
		}
		out = append(out, v)
	}
	bs.smp = out
}

// edge bisects between v, where the model succeeds, and f, where it fails
// with ferr, adding every point evaluated to the samples (unsorted), until
// the two are neighbouring numbers or the step budget is spent.
func (bs *bsearch) edge(v xy, f float64, ferr error) error {
	steps := maxEdgeSteps
	if bs.edgeN >= maxEdgeTotal || bs.ev.done >= maxSearchEvals {
		steps = edgeStepsLate
	}
	for k := 0; k < steps; k++ {
		// Halving the distance first samples every scale near the edge;
		// then the bit patterns' midpoint closes the rest in at most 64
		// steps.
		lo, hi := math.Min(v.x, f), math.Max(v.x, f)
		m := lo/2 + hi/2
		if k >= edgeHalvings {
			m = midpoint(lo, hi)
		}
		if m == v.x || m == f {
			break
		}
		y, merr, err := bs.value(m)
		if err != nil {
			return err
		}
		bs.edgeN++
		bs.smp = append(bs.smp, sample{x: m, y: y, err: merr})
		if merr != nil {
			f, ferr = m, merr
		} else {
			v = xy{m, y}
		}
	}
	_ = ferr
	return nil
}

// around searches towards a failure met inside a bracket or a dip from
// both of its ends.
func (bs *bsearch) around(f failure) error {
	bs.smp = append(bs.smp, sample{x: f.x, err: f.err})
	if err := bs.edge(f.a, f.x, f.err); err != nil {
		return err
	}
	if err := bs.edge(f.b, f.x, f.err); err != nil {
		return err
	}
	bs.sortSamples()
	return nil
}

// midpoint returns a point between a < b: where both have one sign (or
// one is 0) and they differ more than fourfold, the midpoint of their bit
// patterns, which halves the number of representable values between them
// (about the geometric mean for normal numbers), so that any such bracket
// closes in at most 64 steps, from 1e-300..1e300 as from 0..1; 0 where they
// straddle it at different scales; else the arithmetic mean, formed so
// that it cannot overflow.
func midpoint(a, b float64) float64 {
	switch {
	case a >= 0 && b > 4*a:
		return bitsMid(a, b)
	case b <= 0 && a < 4*b:
		return -bitsMid(-b, -a)
	case a < 0 && b > 0 && (b > -4*a || -a > 4*b):
		return 0
	}
	return a/2 + b/2
}

// bitsMid returns the number whose bit pattern is midway between those of
// 0 <= a < b (-0 counts as 0).
func bitsMid(a, b float64) float64 {
	ua, ub := math.Float64bits(math.Abs(a)), math.Float64bits(math.Abs(b))
	return math.Float64frombits(ua/2 + ub/2 + ua&ub&1)
}

// roundoff is the difference of an output y from the target that counts as
// rounding.
func roundoff(y, target float64) float64 {
	return 64 * 0x1p-52 * math.Max(math.Abs(y), math.Abs(target))
}

// candidates returns the brackets (sign changes of g between neighbouring
// points that succeed) and dips of |g| not searched before, adds the points
// where g is 0 to zeros, and the sign changes across a gap where the model
// fails to jumps where |g| grows towards the gap from both sides (a pole),
// else to unres.
func (bs *bsearch) candidates(doneBr map[[2]float64]bool, doneDip map[float64]bool, zeros *[]Crossing, jumps *[]Jump, unres *[]Unresolved) (brs [][2]bpt, dips []*extreme) {
	t := bs.target
	var run []sample // consecutive points that succeed
	flush := func() {
		for j, v := range run {
			g := v.y - t
			if g == 0 {
				if !doneDip[v.x] { // a zero is found once
					doneDip[v.x] = true
					*zeros = append(*zeros, Crossing{Value: v.x})
				}
				continue
			}
			if j+1 < len(run) {
				w := run[j+1]
				if gw := w.y - t; gw != 0 && (g < 0) != (gw < 0) && !doneBr[[2]float64{v.x, w.x}] {
					doneBr[[2]float64{v.x, w.x}] = true
					brs = append(brs, [2]bpt{{x: v.x, y: v.y, g: g, s: math.NaN()}, {x: w.x, y: w.y, g: gw, s: math.NaN()}})
				}
			}
			if j > 0 && j+1 < len(run) && !doneDip[v.x] {
				u, w := run[j-1], run[j+1]
				gu, gw := u.y-t, w.y-t
				if gu != 0 && gw != 0 && (gu < 0) == (g < 0) && (gw < 0) == (g < 0) && math.Abs(g) < math.Abs(gu) && math.Abs(g) < math.Abs(gw) {
					doneDip[v.x] = true
					sign := -1.0 // g > 0: look for a minimum of the output
					if g < 0 {
						sign = 1
					}
					dips = append(dips, &extreme{input: bs.i, sign: sign, a: xy{u.x, u.y}, b: xy{v.x, v.y}, c: xy{w.x, w.y},
						tol: 1e-9 * (w.x - u.x)})
				}
			}
		}
		run = run[:0]
	}
	// Across a gap where the model fails, a sign change is a jump: a pole
	// where |g| grows towards the gap.
	prev := -1 // the last point that succeeds
	gap := false
	for k, v := range bs.smp {
		if v.err != nil {
			flush()
			gap = true
			continue
		}
		if gap && prev >= 0 {
			u := bs.smp[prev]
			gu, gv := u.y-t, v.y-t
			key := [2]float64{u.x, v.x}
			if gu != 0 && gv != 0 && (gu < 0) != (gv < 0) && !doneBr[key] {
				doneBr[key] = true
				c := midpoint(u.x, v.x)
				if bs.grows(prev, -1, c) && bs.grows(k, 1, c) {
					*jumps = append(*jumps, Jump{Value: c, Left: u.y, Right: v.y, Pole: true})
				} else {
					// Not a pole: the output may cross the target where it
					// cannot be evaluated.
					f := bs.smp[prev+1]
					*unres = append(*unres, Unresolved{Low: u.x, High: v.x,
						Reason: fmt.Sprintf("the output changes sign across values where the model fails (at %s = %s: %s)",
							bs.in.Name, unit.Format(f.x, bs.in.Unit), evalSentence(f.err))})
				}
			}
		}
		gap = false
		prev = k
		run = append(run, v)
	}
	flush()
	return brs, dips
}

// grows reports whether |g| grows towards the gap at c next to sample k,
// as towards a pole: at the first point that succeeds at least 16 times as
// far from c (walking away from the gap, dir -1 to smaller x), |g| is less
// than a quarter of |g| at k.
func (bs *bsearch) grows(k, dir int, c float64) bool {
	gk := math.Abs(bs.smp[k].y - bs.target)
	dk := math.Abs(bs.smp[k].x - c)
	for j := k + dir; j >= 0 && j < len(bs.smp) && bs.smp[j].err == nil; j += dir {
		if math.Abs(bs.smp[j].x-c) >= 16*dk {
			return 4*math.Abs(bs.smp[j].y-bs.target) < gk
		}
	}
	return false
}

// extreme narrows the dip e point by point as refineExtremes does (halving
// rounds, then the vertex of a parabola). A failing evaluation ends it with
// the point and its error; the third result is cancellation.
func (bs *bsearch) extreme(e *extreme) (float64, error, error) {
	for r := 0; r < 60 && e.c.x-e.a.x > e.tol; r++ {
		pm, qm := (e.a.x+e.b.x)/2, (e.b.x+e.c.x)/2
		py, ferr, err := bs.value(pm)
		if err != nil || ferr != nil {
			return pm, ferr, err
		}
		qy, ferr, err := bs.value(qm)
		if err != nil || ferr != nil {
			return qm, ferr, err
		}
		p, q := xy{pm, py}, xy{qm, qy}
		switch {
		case e.better(p, e.b) && !e.better(q, p):
			e.b, e.c = p, e.b
		case e.better(q, e.b):
			e.a, e.b = e.b, q
		default:
			e.a, e.c = p, q
		}
	}
	if v, ok := parabolaVertex(e.a, e.b, e.c); ok && v > e.a.x && v < e.c.x && v != e.b.x {
		y, ferr, err := bs.value(v)
		if err != nil {
			return 0, nil, err
		}
		if ferr == nil {
			if p := (xy{v, y}); e.better(p, e.b) || p.y == e.b.y {
				e.b = p
			}
		}
	}
	return 0, nil, nil
}

// dipped is the outcome of searching a dip of |g|: the model failed on the
// way (fail), the output touches the target at the extreme (touch), or the
// extreme lies across the target (across), with a crossing on each side of
// it: the brackets l..m and m..r, l and r the dip's ends, m the extreme.
type dipped struct {
	fail    *failure
	touch   bool
	across  bool
	l, m, r bpt
}

// dip narrows the dip d to its extreme (extreme) and tells whether it
// touches the target or lies across it. A touch is where the target is
// reached within rounding, or within what the output varies over the final
// bracket where that is small beside what it varies across the dip (near a
// pole it is not). The error is cancellation only.
func (bs *bsearch) dip(d *extreme) (dipped, error) {
	t := bs.target
	l, r := d.a, d.c // the neighbours of the dip
	fx, ferr, err := bs.extreme(d)
	if err != nil {
		return dipped{}, err
	}
	if ferr != nil {
		return dipped{fail: &failure{a: l, b: r, x: fx, err: ferr}}, nil
	}
	gd := d.b.y - t
	vary := math.Abs(d.a.y-d.b.y) + math.Abs(d.c.y-d.b.y)
	smooth := vary <= 1e-3*(math.Abs(l.y-d.b.y)+math.Abs(r.y-d.b.y))
	switch {
	case gd == 0 || math.Abs(gd) <= roundoff(d.b.y, t) || smooth && math.Abs(gd) <= 4*vary:
		return dipped{touch: true}, nil
	case (gd < 0) == (d.sign < 0):
		return dipped{across: true,
			l: bpt{x: l.x, y: l.y, g: l.y - t, s: math.NaN()},
			m: bpt{x: d.b.x, y: d.b.y, g: gd, s: math.NaN()},
			r: bpt{x: r.x, y: r.y, g: r.y - t, s: math.NaN()}}, nil
	}
	return dipped{}, nil
}

// refined is the outcome of refining one bracket: a verified crossing, a
// jump, a failure inside the bracket, or a bracket that did not close.
type refined struct {
	crossing   Crossing
	jump       *Jump
	fail       *failure
	unresolved *Unresolved
}

// sameRoot reports whether a and b are one crossing (or jump) found twice:
// equal, or within a relative 1e-12, far below any difference a
// refinement resolves between two roots.
func sameRoot(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

// tight reports whether a < b are close enough that no point between them
// is worth evaluating.
func tight(a, b float64) bool {
	m := midpoint(a, b)
	return m <= a || m >= b || b-a <= 4*0x1p-52*math.Max(math.Abs(a), math.Abs(b))
}

// refine finds the crossing in [a, b] (a.x < b.x), where g = f - target has
// opposite signs at the ends, by Newton's method on the reverse-mode
// derivative safeguarded by bisection (Numerical Recipes' rtsafe): a Newton
// step that would leave the bracket, or that is not less than half the step
// before last, is replaced by a bisection. A Newton step too small to move
// is followed by a probe just past it towards the far end, so the bracket
// closes around the root from both sides. Then it verifies the crossing (see
// Breakeven). The error is cancellation only.
func (bs *bsearch) refine(a, b bpt) (refined, error) {
	a0, b0 := a, b
	var c bpt
	x := a.x - a.g*(b.x-a.x)/(b.g-a.g) // the secant point
	if !(x > a.x && x < b.x) {
		x = midpoint(a.x, b.x)
	}
	dxold, step := b.x-a.x, b.x-a.x
	closed := false
	for it := 0; it < maxRefine; it++ {
		var ferr, err error
		c, ferr, err = bs.point(x)
		if err != nil {
			return refined{}, err
		}
		if ferr != nil {
			return refined{fail: &failure{a: xy{a0.x, a0.y}, b: xy{b0.x, b0.y}, x: x, err: ferr}}, nil
		}
		if c.g == 0 {
			return refined{crossing: Crossing{Value: c.x, Slope: nanTo0(c.s)}}, nil
		}
		if (c.g < 0) == (a.g < 0) {
			a = c
		} else {
			b = c
		}
		if tight(a.x, b.x) {
			closed = true
			break
		}
		next := math.NaN()
		if c.s != 0 && !math.IsNaN(c.s) {
			n := c.x - c.g/c.s
			if n > a.x && n < b.x && math.Abs(2*c.g) <= math.Abs(dxold*c.s) {
				next = n
				dxold, step = step, c.g/c.s
			}
		}
		if math.IsNaN(next) {
			next = midpoint(a.x, b.x)
			dxold, step = step, (b.x-a.x)/2
		}
		if next == c.x {
			// Newton has converged from one side: probe just past it.
			far := b.x
			if c.x == b.x {
				far = a.x
			}
			h := math.Max(4*math.Abs(step), 4*0x1p-52*math.Abs(c.x))
			if h == 0 {
				h = math.SmallestNonzeroFloat64
			}
			next = c.x + math.Copysign(h, far-c.x)
			if !(next > a.x && next < b.x) {
				next = midpoint(a.x, b.x)
			}
		}
		x = next
	}
	if !closed {
		best := a
		if math.Abs(b.g) < math.Abs(a.g) {
			best = b
		}
		if math.Abs(best.g) <= roundoff(best.y, bs.target) {
			return refined{crossing: Crossing{Value: best.x, Slope: nanTo0(best.s)}}, nil
		}
		return refined{unresolved: &Unresolved{Low: a.x, High: b.x,
			Reason: fmt.Sprintf("the search did not close on a crossing within %d steps", maxRefine)}}, nil
	}
	// The slopes at the final ends, where not yet known.
	for _, e := range []*bpt{&a, &b} {
		if math.IsNaN(e.s) {
			p, ferr, err := bs.point(e.x)
			if err != nil {
				return refined{}, err
			}
			if ferr == nil {
				e.s = p.s
			}
		}
	}
	w := b.x - a.x
	dir := 1.0 // the sign of the change of g from a to b
	if b.g < 0 {
		dir = -1
	}
	ok := func(p bpt) bool {
		noise := roundoff(p.y, bs.target)
		if math.Abs(p.g) <= noise {
			return true
		}
		return !math.IsNaN(p.s) && p.s*dir > 0 && math.Abs(p.g) <= 8*math.Abs(p.s)*w+noise
	}
	if ok(a) && ok(b) {
		best := a
		if math.Abs(b.g) < math.Abs(a.g) {
			best = b
		}
		return refined{crossing: Crossing{Value: best.x, Slope: nanTo0(best.s)}}, nil
	}
	// A jump: a pole where |g| grew as the bracket closed.
	pole := math.Min(math.Abs(a.g), math.Abs(b.g)) > 4*math.Max(math.Abs(a0.g), math.Abs(b0.g))
	return refined{jump: &Jump{Value: midpoint(a.x, b.x), Left: a.y, Right: b.y, Pole: pole}}, nil
}

// plateaus replaces the crossings where the output is level at the target
// (slope 0, the output exactly the target just beside them) by the
// intervals where it equals the target: each end is found by bisection
// between the crossing and the nearest sample that differs from the target
// (or fails), to neighbouring numbers; an interval wider than a few units in
// the last place is a plateau, and the crossings inside it are dropped. A
// crossing with the output off the target on both neighbouring numbers costs
// two evaluations.
func (bs *bsearch) plateaus(res *BreakevenResult) error {
	var keep []Crossing
	for _, c := range res.Crossings {
		if slices.ContainsFunc(res.Plateaus, func(p Plateau) bool { return c.Value >= p.Low && c.Value <= p.High }) {
			continue
		}
		if c.Slope != 0 {
			keep = append(keep, c)
			continue
		}
		lo, openLo, err := bs.plateauEdge(c.Value, -1)
		if err != nil {
			return err
		}
		hi, openHi, err := bs.plateauEdge(c.Value, 1)
		if err != nil {
			return err
		}
		if hi-lo <= 64*0x1p-52*math.Max(math.Abs(lo), math.Abs(hi)) {
			keep = append(keep, c)
			continue
		}
		res.Plateaus = append(res.Plateaus, Plateau{Low: lo, High: hi, InRange: lo <= bs.in.High && hi >= bs.in.Low, OpenLow: openLo, OpenHigh: openHi})
	}
	// A crossing kept before a plateau found later may lie inside it.
	res.Crossings = slices.DeleteFunc(append([]Crossing{}, keep...), func(c Crossing) bool {
		return slices.ContainsFunc(res.Plateaus, func(p Plateau) bool { return c.Value >= p.Low && c.Value <= p.High })
	})
	return nil
}

// plateauEdge returns the last value from x in direction dir (-1 or 1) up
// to which the output stays exactly at the target: x itself when it differs
// on the neighbouring number; the end of the samples when every sample that
// way equals it (open).
func (bs *bsearch) plateauEdge(x float64, dir int) (float64, bool, error) {
	at := func(v float64) (bool, error) {
		y, ferr, err := bs.value(v)
		return err == nil && ferr == nil && y == bs.target, err
	}
	next := math.Nextafter(x, math.Inf(dir))
	if eq, err := at(next); err != nil || !eq {
		return x, false, err
	}
	in := next
	out := math.NaN()
	for j := 0; j < len(bs.smp); j++ {
		k := j
		if dir < 0 {
			k = len(bs.smp) - 1 - j
		}
		v := bs.smp[k]
		if float64(dir)*(v.x-in) <= 0 {
			continue
		}
		if v.err != nil || v.y != bs.target {
			out = v.x
			break
		}
		in = v.x
	}
	if math.IsNaN(out) {
		return in, true, nil
	}
	for k := 0; k < maxRefine; k++ {
		lo, hi := math.Min(in, out), math.Max(in, out)
		if m := midpoint(lo, hi); m <= lo || m >= hi {
			break
		}
		m := midpoint(lo, hi)
		eq, err := at(m)
		if err != nil {
			return 0, false, err
		}
		if eq {
			in = m
		} else {
			out = m
		}
	}
	return in, false, nil
}

func nanTo0(v float64) float64 {
	if math.IsNaN(v) {
		return 0
	}
	return v
}

// domainNote describes, in sentences, where the model could not be
// evaluated: below or above the part searched, or in gaps inside it, each
// with the value where it failed and why.
func (bs *bsearch) domainNote() string {
	in := bs.in
	inp := func(v float64) string { return unit.Format(v, in.Unit) }
	var notes []string
	gaps := 0
	for j := 0; j < len(bs.smp); {
		if bs.smp[j].err == nil {
			j++
			continue
		}
		k := j
		for k < len(bs.smp) && bs.smp[k].err != nil {
			k++
		}
		// smp[j:k] fail; smp[j-1] and smp[k] (where they exist) succeed.
		switch {
		case j == 0 && k == len(bs.smp):
		case j == 0:
			f := bs.smp[k-1]
			notes = append(notes, fmt.Sprintf("below %s = %s the model cannot be evaluated (at %s = %s: %s)", in.Name, inp(bs.smp[k].x), in.Name, inp(f.x), evalSentence(f.err)))
		case k == len(bs.smp):
			f := bs.smp[j]
			notes = append(notes, fmt.Sprintf("above %s = %s the model cannot be evaluated (at %s = %s: %s)", in.Name, inp(bs.smp[j-1].x), in.Name, inp(f.x), evalSentence(f.err)))
		default:
			gaps++
			if gaps <= 3 {
				f := bs.smp[j]
				lo, hi := inp(bs.smp[j-1].x), inp(bs.smp[k].x)
				if lo == hi {
					// A gap narrower than the digits shown: not "between 5
					// and 5".
					notes = append(notes, fmt.Sprintf("in a narrow gap around %s = %s the model cannot be evaluated (%s)", in.Name, lo, evalSentence(f.err)))
				} else {
					notes = append(notes, fmt.Sprintf("between %s = %s and %s the model cannot be evaluated (at %s = %s: %s)", in.Name, lo, hi, in.Name, inp(f.x), evalSentence(f.err)))
				}
			}
		}
		j = k
	}
	if gaps > 3 {
		notes = append(notes, fmt.Sprintf("and in %d more gaps", gaps-3))
	}
	return strings.Join(notes, "; ")
}

// evalSentence writes an evaluation error as a clause: what failed, in which
// formula, at which line and column.
func evalSentence(err error) string {
	var ee *EvalError
	if errors.As(err, &ee) {
		s := ee.Msg
		if ee.Formula != "" {
			s += " in " + ee.Formula
		}
		if ee.Pos.Line > 0 {
			s += fmt.Sprintf(", line %d, column %d", ee.Pos.Line, ee.Pos.Column)
		}
		return s
	}
	if err == nil {
		return "no value"
	}
	return err.Error()
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
