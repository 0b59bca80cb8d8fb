package sens

import (
	"errors"
	"fmt"
	"math"

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
	// Target, when given, and the input values where the swept line
	// crosses it (linear interpolation between neighbouring points).
	Target    *float64  `json:"target,omitempty"`
	Crossings []float64 `json:"crossings,omitempty"`
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
		res.Crossings = crossings(res.Points, t)
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
		res.Contour = Contour(xs, ys, z, t)
		for _, v := range z {
			if v == t {
				res.AtTarget++
			}
		}
	}
	return res, nil
}

// crossings returns the values where the swept line meets t: points exactly
// at t, and between neighbours on either side of t, linear interpolation.
func crossings(pts []SweepPoint, t float64) []float64 {
	var out []float64
	add := func(v float64) {
		if len(out) == 0 || out[len(out)-1] != v {
			out = append(out, v)
		}
	}
	for j, a := range pts {
		d := a.Output - t
		if d == 0 {
			add(a.X)
			continue
		}
		if j+1 < len(pts) {
			b := pts[j+1]
			if e := b.Output - t; e != 0 && (d < 0) != (e < 0) {
				add(interp(a.X, b.X, a.Output, b.Output, t))
			}
		}
	}
	return out
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
			return XY{interp(xs[c], xs[c+1], a, b, t), ys[r]}
		}
		e -= nh
		r, c := e/nx, e%nx
		a, b := z[r*nx+c], z[(r+1)*nx+c]
		return XY{xs[c], interp(ys[r], ys[r+1], a, b, t)}
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
