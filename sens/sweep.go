package sens

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"github.com/nudge-dev/nudge/sens/unit"
)

// SweepAxis is one swept input: its range, the number of points on it, and its
// baseline.
type SweepAxis struct {
	Name     string    `json:"name"`
	Unit     string    `json:"unit"`
	Low      float64   `json:"low"`
	High     float64   `json:"high"`
	N        int       `json:"n"`
	Baseline float64   `json:"baseline"`
	Values   []float64 `json:"values"` // the N points, Low to High
}

// SweepPoint is the output at one value of a 1-D sweep.
type SweepPoint struct {
	X      float64 `json:"x"`
	Output float64 `json:"output"`
}

// Sweep1DResult is the result of a 1-D sweep.
type Sweep1DResult struct {
	Kind     string       `json:"kind"` // "sweep"
	Dims     int          `json:"dims"` // 1
	Output   string       `json:"output"`
	Unit     string       `json:"unit"`
	Baseline float64      `json:"baseline"`
	Input    SweepAxis    `json:"input"`
	Points   []SweepPoint `json:"points"`
	// Target, when given, and the input values where the output equals it:
	// points of the sweep at the target, and between neighbouring points on
	// either side of it, the crossing refined and verified on the model as
	// Breakeven's are (see sweepCrossings).
	Target    *float64  `json:"target,omitempty"`
	Crossings []float64 `json:"crossings,omitempty"`
	// Jumps lists where the output passes the target between neighbouring
	// points by a jump (a step, or a pole) rather than by equalling it.
	Jumps []Jump `json:"jumps,omitempty"`
	// Unresolved lists the spans between neighbouring points on either side
	// of the target where the model failed inside, or the search did not
	// close: a crossing may lie there.
	Unresolved []Unresolved `json:"unresolved,omitempty"`
}

// GridPoint is the output at one point of a 2-D sweep.
type GridPoint struct {
	X      float64 `json:"x"`
	Y      float64 `json:"y"`
	Output float64 `json:"output"`
}

// XY is a point of a contour, in the two inputs' units.
type XY struct {
	X float64 `json:"x"`
	Y float64 `json:"y"`
}

// Sweep2DResult is the result of a 2-D sweep. Points is the grid row by row:
// Points[r*nx+c] is at x = Inputs[0].Values[c], y = Inputs[1].Values[r].
type Sweep2DResult struct {
	Kind     string      `json:"kind"` // "sweep"
	Dims     int         `json:"dims"` // 2
	Output   string      `json:"output"`
	Unit     string      `json:"unit"`
	Baseline float64     `json:"baseline"`
	Inputs   []SweepAxis `json:"inputs"` // x, then y
	Points   []GridPoint `json:"points"`
	Min      float64     `json:"min"`
	Max      float64     `json:"max"`
	// Target, when given, and the contour where the output equals it: a list
	// of polylines, each closed when its first and last points coincide.
	Target  *float64 `json:"target,omitempty"`
	Contour [][]XY   `json:"contour,omitempty"`
	// AtTarget counts the grid points where the output equals the target
	// exactly: where it is level at the target (a plateau, such as a cap by
	// min or max), no contour crosses, yet the target is reached.
	AtTarget int `json:"at_target,omitempty"`
	// ContourJumps lists the points of Contour where the output passes the
	// target along a grid edge by a jump (a step or a pole) rather than by
	// equalling it: there the line marks the jump, not a crossing.
	ContourJumps []XY `json:"contour_jumps,omitempty"`
	// ContourUnverified lists the points of Contour placed by linear
	// interpolation without being verified on the model: the model failed
	// between the edge's ends, or the verification's budget
	// (maxContourEvals evaluations) was spent.
	ContourUnverified []XY `json:"contour_unverified,omitempty"`
}

// Default numbers of points of sweeps.
const (
	DefaultSweep1D = 41
	DefaultSweep2D = 21
)

// Axis is an input to sweep and the range to sweep it over.
type Axis struct {
	Input string
	// Low and High are the range in the input's unit; both zero means the
	// input's stated range.
	Low, High float64
	// N is the number of equally spaced points from Low to High (the
	// sweep's default when 0; at least 2).
	N int
}

// Sweep1DSettings are the settings of Sweep1D. The input is required.
type Sweep1DSettings struct {
	Settings
	Axis
	// Target, when set, asks where the swept line crosses it.
	Target *float64
}

// Sweep2DSettings are the settings of Sweep2D. Both inputs are required.
type Sweep2DSettings struct {
	Settings
	X, Y Axis
	// Target, when set, asks for the contour where the output equals it.
	Target *float64
}

// axis resolves a swept input: its index, its range and its number of
// points.
func (p *Problem) axis(a Axis, defaultN int) (*Input, int, []float64, error) {
	if a.Input == "" {
		return nil, -1, nil, errors.New("a sweep needs an input to vary")
	}
	in, i, err := p.Input(a.Input)
	if err != nil {
		return nil, -1, nil, err
	}
	lo, hi := a.Low, a.High
	if lo == 0 && hi == 0 {
		lo, hi = in.Low, in.High
	}
	if err := checkRange(in, lo, hi); err != nil {
		return nil, -1, nil, err
	}
	n := a.N
	if n <= 0 {
		n = defaultN
	}
	return in, i, linspace(lo, hi, max(n, 2)), nil
}

// Sweep1D evaluates the output at equally spaced values of one input, the
// other inputs at their baselines. With a target, it also reports where the
// line crosses it.
func Sweep1D(p *Problem, s *Sweep1DSettings) (*Sweep1DResult, error) {
	if s == nil {
		s = &Sweep1DSettings{}
	}
	in, i, xs, err := p.axis(s.Axis, DefaultSweep1D)
	if err != nil {
		return nil, err
	}
	n := len(xs)
	pts := []point{{i: -1, j: -1}}
	for _, v := range xs {
		pts = append(pts, point{i: i, vi: v, j: -1})
	}
	ev := newBatcher(p.F, p.Baseline(), &s.Settings)
	ev.total = len(pts)
	y := make([]float64, len(pts))
	if err := ev.eval(y, pts); err != nil {
		return nil, err
	}
	ev.finish()
	res := &Sweep1DResult{Kind: "sweep", Dims: 1, Output: p.Output, Unit: p.Unit, Baseline: y[0],
		Input: SweepAxis{Name: in.Name, Unit: in.Unit, Low: xs[0], High: xs[n-1], N: n, Baseline: in.Value, Values: xs}}
	res.Points = make([]SweepPoint, n)
	for j, v := range xs {
		res.Points[j] = SweepPoint{X: v, Output: y[j+1]}
	}
	if s.Target != nil {
		t := *s.Target
		res.Target = &t
		bs := &bsearch{p: p, i: i, in: in, target: t, ev: ev, set: &s.Settings,
			grad: make([]float64, len(p.Inputs)), x: p.Baseline()}
		if err := bs.sweepCrossings(res); err != nil {
			return nil, err
		}
		ev.finish()
	}
	return res, nil
}

// Sweep2D evaluates the output on a grid of two inputs, the others at their
// baselines. With a target, it also traces the contour where the output
// equals the target by marching squares: each grid cell's corners are classed
// as at or above the target or below it, the crossing on each cell edge is
// placed by linear interpolation, and an ambiguous (saddle) cell is resolved
// by the mean of its four corners. For an output linear in the two inputs the
// contour is exact.
//
// References:
//   - W. E. Lorensen and H. E. Cline, Marching cubes: a high resolution 3D
//     surface construction algorithm, Computer Graphics 21(4), 1987 (the
//     two-dimensional case is marching squares).
func Sweep2D(p *Problem, s *Sweep2DSettings) (*Sweep2DResult, error) {
	if s == nil {
		s = &Sweep2DSettings{}
	}
	inx, ix, xs, err := p.axis(s.X, DefaultSweep2D)
	if err != nil {
		return nil, err
	}
	iny, iy, ys, err := p.axis(s.Y, DefaultSweep2D)
	if err != nil {
		return nil, err
	}
	if ix == iy {
		return nil, fmt.Errorf("a 2-D sweep needs two different inputs, found %s twice", inx.Name)
	}
	nx, ny := len(xs), len(ys)
	pts := make([]point, 0, nx*ny+1)
	pts = append(pts, point{i: -1, j: -1})
	for _, yv := range ys {
		for _, xv := range xs {
			pts = append(pts, point{i: ix, vi: xv, j: iy, vj: yv})
		}
	}
	ev := newBatcher(p.F, p.Baseline(), &s.Settings)
	ev.total = len(pts)
	out := make([]float64, len(pts))
	if err := ev.eval(out, pts); err != nil {
		return nil, err
	}
	ev.finish()
	res := &Sweep2DResult{Kind: "sweep", Dims: 2, Output: p.Output, Unit: p.Unit, Baseline: out[0],
		Inputs: []SweepAxis{
			{Name: inx.Name, Unit: inx.Unit, Low: xs[0], High: xs[nx-1], N: nx, Baseline: inx.Value, Values: xs},
			{Name: iny.Name, Unit: iny.Unit, Low: ys[0], High: ys[ny-1], N: ny, Baseline: iny.Value, Values: ys},
		},
		Points: make([]GridPoint, nx*ny), Min: math.Inf(1), Max: math.Inf(-1)}
	z := out[1:]
	for r, yv := range ys {
		for c, xv := range xs {
			v := z[r*nx+c]
			res.Points[r*nx+c] = GridPoint{X: xv, Y: yv, Output: v}
			res.Min, res.Max = math.Min(res.Min, v), math.Max(res.Max, v)
		}
	}
	if s.Target != nil {
		t := *s.Target
		res.Target = &t
		pl := verifiedPlacer(p, s, ix, iy, xs, ys, z, t, res)
		res.Contour = contour(xs, ys, z, t, pl.place)
		if pl.err != nil {
			return nil, pl.err
		}
		pl.bx.ev.finish()
		for _, v := range z {
			if v == t {
				res.AtTarget++
			}
		}
	}
	return res, nil
}

// sweepCrossings fills res.Crossings, Jumps and Unresolved: the points of
// the sweep exactly at the target; for each pair of neighbouring points on
// either side of it, the bracket refined on the model and verified as
// Breakeven's brackets are (bsearch.refine): a crossing only where the output
// is verified to equal the target, a jump (step or pole) where it passes the
// target without equalling it, and unresolved where the model fails inside or
// the search does not close. A crossing between two points of the sweep
// cannot be told from a step by the two points alone, so it is never placed
// by interpolation.
//
// Between neighbouring points on one side of the target the output may dip
// across it and back (two crossings, or a touch, between two points). Such a
// dip is searched (sweepDips) where the slopes at the two points show the
// output turning towards the target and back between them, and where
// |output - target| is smaller at a point than at both its neighbours (as
// Breakeven's dips) and the slopes showed no dip beside it; it is narrowed to its extreme
// (bsearch.dip) and, where that lies across the target, each side is refined
// and verified as a bracket. A dip that does not show in the slopes at the
// points or in the outputs (a narrow spike between points where the output
// is level) is not found.
func (bs *bsearch) sweepCrossings(res *Sweep1DResult) error {
	pts, t := res.Points, bs.target
	var cross []float64
	solve := func(a, b bpt) error {
		r, err := bs.refine(a, b)
		if err != nil {
			return err
		}
		switch {
		case r.fail != nil:
			res.Unresolved = append(res.Unresolved, bs.failed(r.fail))
		case r.jump != nil:
			res.Jumps = append(res.Jumps, *r.jump)
		case r.unresolved != nil:
			res.Unresolved = append(res.Unresolved, *r.unresolved)
		default:
			cross = append(cross, r.crossing.Value)
		}
		return nil
	}
	for j, a := range pts {
		d := a.Output - t
		if d == 0 {
			cross = append(cross, a.X)
			continue
		}
		if j+1 == len(pts) {
			break
		}
		b := pts[j+1]
		e := b.Output - t
		if e == 0 || (d < 0) == (e < 0) {
			continue
		}
		if err := solve(bpt{x: a.X, y: a.Output, g: d, s: math.NaN()}, bpt{x: b.X, y: b.Output, g: e, s: math.NaN()}); err != nil {
			return err
		}
	}
	if err := bs.sweepDips(res, solve, &cross); err != nil {
		return err
	}
	slices.Sort(cross)
	res.Crossings = nil
	for _, v := range cross {
		if n := len(res.Crossings); n == 0 || !sameRoot(res.Crossings[n-1], v) {
			res.Crossings = append(res.Crossings, v)
		}
	}
	sort.SliceStable(res.Jumps, func(a, b int) bool { return res.Jumps[a].Value < res.Jumps[b].Value })
	sort.SliceStable(res.Unresolved, func(a, b int) bool { return res.Unresolved[a].Low < res.Unresolved[b].Low })
	return nil
}

// failed reports a failure of the model inside a bracket or a dip.
func (bs *bsearch) failed(f *failure) Unresolved {
	return Unresolved{Low: f.a.x, High: f.b.x,
		Reason: fmt.Sprintf("the model fails at %s = %s: %s", bs.in.Name, unit.Format(f.x, bs.in.Unit), evalSentence(f.err))}
}

// maxSweepDipEvals bounds the evaluations spent searching a 1-D sweep's
// dips (the slopes at the points not counted); past it, the dips not yet
// searched are reported together as one Unresolved span.
const maxSweepDipEvals = maxSearchEvals

// maxDipSteps bounds the steps that look for a point of a dip below both
// ends between two points of a sweep.
const maxDipSteps = 60

// sweepDips searches the dips between neighbouring points of a 1-D sweep on
// one side of the target (see sweepCrossings), solving the brackets found
// with solve and adding touches to cross.
func (bs *bsearch) sweepDips(res *Sweep1DResult, solve func(a, b bpt) error, cross *[]float64) error {
	pts, t := res.Points, bs.target
	n := len(pts)
	if n < 2 {
		return nil
	}
	xs := make([]float64, n)
	for j, p := range pts {
		xs[j] = p.X
	}
	sl, err := bs.slopes(xs)
	if err != nil {
		return err
	}
	g := func(j int) float64 { return pts[j].Output - t }
	bp := func(j int) bpt { return bpt{x: pts[j].X, y: pts[j].Output, g: g(j), s: sl[j]} }
	same := func(j int) bool { // points j and j+1 on one side of the target
		return g(j) != 0 && g(j+1) != 0 && (g(j) < 0) == (g(j+1) < 0)
	}
	// turns reports whether the slopes at points j and j+1 show the output
	// turning towards the target after j and away from it before j+1.
	turns := func(j int) bool {
		toward := -math.Copysign(1, g(j)) // the sign of a slope towards the target
		return sl[j]*toward > 0 && sl[j+1]*toward < 0
	}
	known := func(j int) bool { return !math.IsNaN(sl[j]) }
	start := bs.ev.done
	spentLo, spentHi := math.NaN(), math.NaN()
	spent := func(lo, hi float64) bool {
		if bs.ev.done-start < maxSweepDipEvals {
			return false
		}
		if math.IsNaN(spentLo) {
			spentLo = lo
		}
		spentHi = hi
		return true
	}
	search := func(d *extreme) error {
		if spent(d.a.x, d.c.x) {
			return nil
		}
		o, err := bs.dip(d)
		switch {
		case err != nil:
			return err
		case o.fail != nil:
			res.Unresolved = append(res.Unresolved, bs.failed(o.fail))
		case o.touch:
			*cross = append(*cross, d.b.x)
		case o.across:
			if err := solve(o.l, o.m); err != nil {
				return err
			}
			return solve(o.m, o.r)
		}
		return nil
	}
	byPoint := make([]bool, n) // intervals j..j+1 searched from their slopes
	for j := 0; j+1 < n; j++ {
		if !same(j) || !known(j) || !known(j+1) || !turns(j) {
			continue
		}
		byPoint[j] = true
		if spent(xs[j], xs[j+1]) {
			continue
		}
		d, zero, f, err := bs.dipBetween(bp(j), bp(j+1), solve)
		switch {
		case err != nil:
			return err
		case f != nil:
			res.Unresolved = append(res.Unresolved, bs.failed(f))
		case !math.IsNaN(zero):
			*cross = append(*cross, zero)
		case d != nil:
			if err := search(d); err != nil {
				return err
			}
		}
	}
	// A point where |g| is smaller than at both neighbours marks a dip over
	// the two intervals beside it, where the slopes did not show one (a
	// slope not known, or a kink at the point).
	for j := 1; j+1 < n; j++ {
		if !same(j-1) || !same(j) || byPoint[j-1] || byPoint[j] {
			continue
		}
		if a, b, c := math.Abs(g(j-1)), math.Abs(g(j)), math.Abs(g(j+1)); !(b < a && b < c) {
			continue
		}
		sign := -1.0 // g > 0: look for a minimum of the output
		if g(j) < 0 {
			sign = 1
		}
		d := &extreme{input: bs.i, sign: sign, a: xy{xs[j-1], pts[j-1].Output}, b: xy{xs[j], pts[j].Output},
			c: xy{xs[j+1], pts[j+1].Output}, tol: 1e-9 * (xs[j+1] - xs[j-1])}
		if err := search(d); err != nil {
			return err
		}
	}
	if !math.IsNaN(spentLo) {
		res.Unresolved = append(res.Unresolved, Unresolved{Low: spentLo, High: spentHi,
			Reason: fmt.Sprintf("dips between the points not searched: the search reached its limit of %s evaluations", unit.Format(maxSweepDipEvals, ""))})
	}
	return nil
}

// dipBetween looks between a and b, on one side of the target with slopes
// that turn towards it and back (see sweepDips), for a point c of the dip
// nearer the target than both: the dip a, c, b to narrow, returned. A point
// across the target makes two brackets instead, solved at once with solve;
// a point exactly at the target is returned as zero (else NaN). Otherwise
// the side where the slopes still turn is kept, at most maxDipSteps times;
// nothing is returned when no such point is found (the interval closed or a
// slope is 0 or not known). A failure of the model is returned as fail; the
// error is cancellation only.
func (bs *bsearch) dipBetween(a, b bpt, solve func(a, b bpt) error) (d *extreme, zero float64, fail *failure, err error) {
	a0, b0 := a, b
	toward := -math.Copysign(1, a.g)
	for k := 0; k < maxDipSteps && !tight(a.x, b.x); k++ {
		w := b.x - a.x
		// Where the tangents at a and b meet, kept off the ends.
		c := math.NaN()
		if den := a.s - b.s; den != 0 {
			c = (b.y - a.y + a.s*a.x - b.s*b.x) / den
		}
		if !(c >= a.x+w/16 && c <= b.x-w/16) {
			c = midpoint(a.x, b.x)
		}
		p, ferr, err := bs.point(c)
		if err != nil {
			return nil, math.NaN(), nil, err
		}
		if ferr != nil {
			return nil, math.NaN(), &failure{a: xy{a0.x, a0.y}, b: xy{b0.x, b0.y}, x: c, err: ferr}, nil
		}
		if p.g == 0 {
			return nil, p.x, nil, nil
		}
		if (p.g < 0) != (a.g < 0) {
			if err := solve(a, p); err != nil {
				return nil, math.NaN(), nil, err
			}
			return nil, math.NaN(), nil, solve(p, b)
		}
		if math.Abs(p.g) < math.Abs(a.g) && math.Abs(p.g) < math.Abs(b.g) {
			sign := -1.0 // g > 0: look for a minimum of the output
			if a.g < 0 {
				sign = 1
			}
			return &extreme{input: bs.i, sign: sign, a: xy{a.x, a.y}, b: xy{p.x, p.y}, c: xy{b.x, b.y}, tol: 1e-9 * w}, math.NaN(), nil, nil
		}
		switch {
		case p.s*toward > 0: // still turning towards the target: the dip is after p
			a = p
		case p.s*toward < 0:
			b = p
		default:
			return nil, math.NaN(), nil, nil
		}
	}
	return nil, math.NaN(), nil, nil
}

// slopes returns the slope of the output at each value xs of the input (the
// others at their baselines), batched (GradientBatch); NaN where it is not
// known (the derivative is not finite, or the model fails).
func (bs *bsearch) slopes(xs []float64) ([]float64, error) {
	k := len(bs.x)
	chunk := max(1, min(maxBatch, maxBatchFloats/max(k, 1)))
	chunk = min(chunk, len(xs))
	s := make([]float64, len(xs))
	rows := make([]float64, chunk*k)
	grads := make([]float64, chunk*k)
	ys := make([]float64, chunk)
	ctx := bs.set.ctx()
	for start := 0; start < len(xs); start += chunk {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("stopped: %w", err)
		}
		m := min(chunk, len(xs)-start)
		for r := 0; r < m; r++ {
			row := rows[r*k : (r+1)*k]
			copy(row, bs.x)
			row[bs.i] = xs[start+r]
		}
		bs.ev.done += m
		if err := GradientBatch(bs.p.F, ys[:m], grads[:m*k], rows[:m*k], m); err != nil {
			// One point failed: each on its own.
			for r := 0; r < m; r++ {
				p, ferr, err := bs.point(xs[start+r])
				if err != nil {
					return nil, err
				}
				s[start+r] = math.NaN()
				if ferr == nil {
					s[start+r] = p.s
				}
			}
			continue
		}
		for r := 0; r < m; r++ {
			v := grads[r*k+bs.i]
			if math.IsInf(v, 0) {
				v = math.NaN()
			}
			s[start+r] = v
		}
	}
	return s, nil
}

// checkRange checks a range of the input in to vary it over.
func checkRange(in *Input, lo, hi float64) error {
	switch {
	case math.IsNaN(lo) || math.IsNaN(hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0):
		return fmt.Errorf("the range of %s must be finite", in.Name)
	case lo >= hi:
		return fmt.Errorf("the range %s..%s of %s is empty or reversed: write LOW..HIGH with LOW < HIGH", unit.Format(lo, in.Unit), unit.Format(hi, in.Unit), in.Name)
	}
	return nil
}

// linspace returns n equally spaced values from lo to hi, both included.
func linspace(lo, hi float64, n int) []float64 {
	v := make([]float64, n)
	w := hi - lo
	wide := math.IsInf(w*float64(n-1), 0) // w·j would overflow (1e300..1.7e308)
	for j := range v {
		t := float64(j) / float64(n-1)
		switch {
		case math.IsInf(w, 0):
			// The width itself overflows (-1e308..1e308): weight the ends.
			v[j] = lo*(1-t) + hi*t
		case wide:
			v[j] = lo + w*t
		default:
			v[j] = lo + w*float64(j)/float64(n-1)
		}
	}
	v[n-1] = hi
	return v
}

// Contour returns the polylines where the grid function z equals t: z is row
// by row, z[r*len(xs)+c] at (xs[c], ys[r]). Crossings on cell edges are placed
// by linear interpolation; segments that share an edge crossing are joined.
func Contour(xs, ys, z []float64, t float64) [][]XY {
	return contour(xs, ys, z, t, nil)
}

// contour is Contour with the crossing on each edge placed by place, when
// not nil: horiz tells a horizontal edge (r, c)-(r, c+1) from a vertical one
// (r, c)-(r+1, c); lin is the linear interpolation.
func contour(xs, ys, z []float64, t float64, place func(horiz bool, r, c int, lin XY) XY) [][]XY {
	nx, ny := len(xs), len(ys)
	if nx < 2 || ny < 2 || len(z) != nx*ny {
		return nil
	}
	above := func(r, c int) bool { return z[r*nx+c] >= t }
	// Edges are numbered: horizontal edge (r, c)-(r, c+1) is r*(nx-1)+c;
	// vertical edge (r, c)-(r+1, c) is nh + r*nx + c.
	nh := ny * (nx - 1)
	hEdge := func(r, c int) int { return r*(nx-1) + c }
	vEdge := func(r, c int) int { return nh + r*nx + c }
	cross := func(e int) XY {
		if e < nh {
			r, c := e/(nx-1), e%(nx-1)
			a, b := z[r*nx+c], z[r*nx+c+1]
			lin := XY{interp(xs[c], xs[c+1], a, b, t), ys[r]}
			if place != nil {
				return place(true, r, c, lin)
			}
			return lin
		}
		e -= nh
		r, c := e/nx, e%nx
		a, b := z[r*nx+c], z[(r+1)*nx+c]
		lin := XY{xs[c], interp(ys[r], ys[r+1], a, b, t)}
		if place != nil {
			return place(false, r, c, lin)
		}
		return lin
	}
	// Each edge crossing links to at most two others (one per adjacent cell).
	links := map[int][]int{}
	link := func(a, b int) {
		links[a] = append(links[a], b)
		links[b] = append(links[b], a)
	}
	var order []int // edges in the order first linked, for a stable result
	seen := map[int]bool{}
	note := func(es ...int) {
		for _, e := range es {
			if !seen[e] {
				seen[e] = true
				order = append(order, e)
			}
		}
	}
	for r := 0; r+1 < ny; r++ {
		for c := 0; c+1 < nx; c++ {
			// Corners counterclockwise from bottom left: (r,c), (r,c+1),
			// (r+1,c+1), (r+1,c); edges bottom, right, top, left.
			idx := 0
			if above(r, c) {
				idx |= 1
			}
			if above(r, c+1) {
				idx |= 2
			}
			if above(r+1, c+1) {
				idx |= 4
			}
			if above(r+1, c) {
				idx |= 8
			}
			bottom, right, top, left := hEdge(r, c), vEdge(r, c+1), hEdge(r+1, c), vEdge(r, c)
			var segs [][2]int
			switch idx {
			case 0, 15:
			case 1, 14:
				segs = [][2]int{{left, bottom}}
			case 2, 13:
				segs = [][2]int{{bottom, right}}
			case 3, 12:
				segs = [][2]int{{left, right}}
			case 4, 11:
				segs = [][2]int{{right, top}}
			case 6, 9:
				segs = [][2]int{{bottom, top}}
			case 7, 8:
				segs = [][2]int{{left, top}}
			case 5, 10:
				mean := (z[r*nx+c] + z[r*nx+c+1] + z[(r+1)*nx+c+1] + z[(r+1)*nx+c]) / 4
				// idx 5: bottom-left and top-right above. When the centre
				// is above too they join, and the contour cuts off the
				// other two corners.
				join := (mean >= t) == (idx == 5)
				if join {
					segs = [][2]int{{left, top}, {bottom, right}}
				} else {
					segs = [][2]int{{left, bottom}, {right, top}}
				}
			}
			for _, sg := range segs {
				note(sg[0], sg[1])
				link(sg[0], sg[1])
			}
		}
	}
	// Walk chains, starting from open ends first so open lines come out whole.
	used := map[[2]int]bool{}
	key := func(a, b int) [2]int {
		if a > b {
			a, b = b, a
		}
		return [2]int{a, b}
	}
	var lines [][]XY
	walk := func(start int) {
		chain := []int{start}
		cur := start
		for {
			next := -1
			for _, nb := range links[cur] {
				if !used[key(cur, nb)] {
					next = nb
					break
				}
			}
			if next < 0 {
				break
			}
			used[key(cur, next)] = true
			chain = append(chain, next)
			cur = next
		}
		if len(chain) < 2 {
			return
		}
		line := make([]XY, len(chain))
		for j, e := range chain {
			line[j] = cross(e)
		}
		lines = append(lines, line)
	}
	for _, e := range order {
		if len(links[e]) == 1 {
			walk(e)
		}
	}
	for _, e := range order {
		walk(e)
	}
	return lines
}

// interp returns where the line through (a, fa) and (b, fb) takes the value t.
func interp(a, b, fa, fb, t float64) float64 {
	if fa == fb {
		return (a + b) / 2
	}
	if v := a + (b-a)*(t-fa)/(fb-fa); !math.IsInf(v, 0) && !math.IsNaN(v) {
		return v
	}
	// Near the end of the float64 range the product or a difference
	// overflows: halve the outputs and weight the ends instead.
	f := (t/2 - fa/2) / (fb/2 - fa/2)
	return a*(1-f) + b*f
}

// maxContourEvals bounds the evaluations spent verifying a 2-D sweep's
// contour; past it, crossings are placed by linear interpolation and listed
// as unverified.
const maxContourEvals = 50000

// placer places the contour's crossings on grid edges as sweepCrossings does
// on a 1-D sweep: each edge whose ends lie on either side of the target is
// refined along the edge (the other input at the edge's value) and verified;
// a jump is placed where it was found and listed in ContourJumps, so the
// contour does not claim a crossing across it.
type placer struct {
	bx, by *bsearch // searches along x (horizontal edges) and y
	xs, ys []float64
	z      []float64
	res    *Sweep2DResult
	err    error // cancellation
}

func verifiedPlacer(p *Problem, s *Sweep2DSettings, ix, iy int, xs, ys, z []float64, t float64, res *Sweep2DResult) *placer {
	ev := newBatcher(p.F, p.Baseline(), &s.Settings)
	mk := func(i int) *bsearch {
		return &bsearch{p: p, i: i, in: p.Inputs[i], target: t, ev: ev, set: &s.Settings,
			grad: make([]float64, len(p.Inputs)), x: p.Baseline()}
	}
	return &placer{bx: mk(ix), by: mk(iy), xs: xs, ys: ys, z: z, res: res}
}

func (pl *placer) place(horiz bool, r, c int, lin XY) XY {
	nx := len(pl.xs)
	unverified := func() XY {
		pl.res.ContourUnverified = append(pl.res.ContourUnverified, lin)
		return lin
	}
	if pl.err != nil || pl.bx.ev.done >= maxContourEvals {
		return unverified()
	}
	var bs *bsearch
	var a, b bpt
	t := pl.bx.target
	if horiz {
		bs = pl.bx
		bs.x[pl.by.i] = pl.ys[r]
		ya, yb := pl.z[r*nx+c], pl.z[r*nx+c+1]
		a, b = bpt{x: pl.xs[c], y: ya, g: ya - t, s: math.NaN()}, bpt{x: pl.xs[c+1], y: yb, g: yb - t, s: math.NaN()}
	} else {
		bs = pl.by
		bs.x[pl.bx.i] = pl.xs[c]
		ya, yb := pl.z[r*nx+c], pl.z[(r+1)*nx+c]
		a, b = bpt{x: pl.ys[r], y: ya, g: ya - t, s: math.NaN()}, bpt{x: pl.ys[r+1], y: yb, g: yb - t, s: math.NaN()}
	}
	at := func(v float64) XY {
		if horiz {
			return XY{v, lin.Y}
		}
		return XY{lin.X, v}
	}
	// The contour classes a corner at the target with those above it: the
	// crossing is at that corner.
	if a.g == 0 {
		return at(a.x)
	}
	if b.g == 0 {
		return at(b.x)
	}
	if (a.g < 0) == (b.g < 0) {
		return lin
	}
	rf, err := bs.refine(a, b)
	if err != nil {
		pl.err = err
		return lin
	}
	switch {
	case rf.jump != nil:
		p := at(rf.jump.Value)
		pl.res.ContourJumps = append(pl.res.ContourJumps, p)
		return p
	case rf.fail != nil, rf.unresolved != nil:
		return unverified()
	}
	return at(rf.crossing.Value)
}
