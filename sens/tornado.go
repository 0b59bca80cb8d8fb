package sens

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// TornadoBar is one input's bar: the output at the low and high ends of the
// input's range with every other input at its baseline.
type TornadoBar struct {
	Name  string  `json:"name"`
	Unit  string  `json:"unit"`
	Value float64 `json:"value"` // the input's baseline
	Low   float64 `json:"low"`
	High  float64 `json:"high"`
	// Source says where the range came from; DefaultRange is set when it is
	// the default ±10%, which outputs should point out.
	Source       RangeSource `json:"source"`
	DefaultRange bool        `json:"default_range"`
	OutputAtLow  float64     `json:"output_at_low"`
	OutputAtHigh float64     `json:"output_at_high"`
	Swing        float64     `json:"swing"` // |output_at_high - output_at_low|
	// SwingShare is the bar's share of the sum of squared swings (see
	// swingShares).
	SwingShare float64 `json:"swing_share"`
	// OutMin and OutMax are the least and greatest output found over the
	// input's range (the ends, the baseline and the points sampled inside),
	// reached at InputAtMin and InputAtMax.
	OutMin     float64 `json:"out_min"`
	OutMax     float64 `json:"out_max"`
	InputAtMin float64 `json:"input_at_min"`
	InputAtMax float64 `json:"input_at_max"`
	// NonMonotone is set when the output rises and falls over the range, so
	// the bar's ends do not show its whole extent.
	NonMonotone bool `json:"non_monotone"`
	// Sampled is set when points inside the range were evaluated; inputs in
	// which the output is proven monotone are not sampled.
	Sampled bool `json:"sampled"`
}

// Spread returns OutMax - OutMin, the extent of the output over the range.
func (b *TornadoBar) Spread() float64 { return b.OutMax - b.OutMin }

// TornadoRest summarises the bars left out by TornadoSettings.Top.
type TornadoRest struct {
	Count int `json:"count"`
	// LargestSwing and LargestSpread are the largest swing and the largest
	// out_max - out_min among them.
	LargestSwing  float64 `json:"largest_swing"`
	LargestSpread float64 `json:"largest_spread"`
	// SwingShare is their share of the sum of squared swings, together.
	SwingShare float64 `json:"swing_share"`
	// OutMin and OutMax are the least and greatest output any of them
	// reaches over its range.
	OutMin float64 `json:"out_min"`
	OutMax float64 `json:"out_max"`
}

// summarise returns the summary of bars left out of a result.
func summarise(bars []TornadoBar) *TornadoRest {
	rest := &TornadoRest{OutMin: math.Inf(1), OutMax: math.Inf(-1)}
	for _, b := range bars {
		rest.add(&TornadoRest{Count: 1, LargestSwing: b.Swing, LargestSpread: b.Spread(), SwingShare: b.SwingShare, OutMin: b.OutMin, OutMax: b.OutMax})
	}
	return rest
}

// add merges the summary o into r.
func (r *TornadoRest) add(o *TornadoRest) {
	r.Count += o.Count
	r.SwingShare += o.SwingShare
	r.LargestSwing = math.Max(r.LargestSwing, o.LargestSwing)
	r.LargestSpread = math.Max(r.LargestSpread, o.LargestSpread)
	r.OutMin, r.OutMax = math.Min(r.OutMin, o.OutMin), math.Max(r.OutMax, o.OutMax)
}

// TornadoResult is the result of the tornado analysis.
type TornadoResult struct {
	Kind     string       `json:"kind"` // "tornado"
	Output   string       `json:"output"`
	Unit     string       `json:"unit"`
	Baseline float64      `json:"baseline"`
	Bars     []TornadoBar `json:"bars"`
	Rest     *TornadoRest `json:"rest,omitempty"`
	// DefaultRanges names every input (shown or summarised) whose range is
	// the default ±10%.
	DefaultRanges []string `json:"default_ranges,omitempty"`
	// NoRange names the inputs among DefaultRanges whose value is 0: ±10% of
	// 0 is no range at all, so their swing is 0 whatever their effect; they
	// need a stated range.
	NoRange []string `json:"no_range,omitempty"`
	// Interior is the number of points sampled inside the range of each
	// sampled input.
	Interior    int `json:"interior"`
	Evaluations int `json:"evaluations"`
	// Steps lists the first step-shaped operations on the output's path
	// (at most StepsShown); StepLines counts the lines that hold one.
	Steps     []string `json:"steps,omitempty"`
	StepLines int      `json:"step_lines,omitempty"`
}

// Shown returns what a table or chart of at most n bars shows: the first n
// bars (all of them when n <= 0 or there are no more) and the summary of the
// bars left out, Rest included (nil when none is left out).
func (r *TornadoResult) Shown(n int) ([]TornadoBar, *TornadoRest) {
	if n <= 0 || len(r.Bars) <= n {
		return r.Bars, r.Rest
	}
	rest := summarise(r.Bars[n:])
	if r.Rest != nil {
		rest.add(r.Rest)
	}
	return r.Bars[:n], rest
}

// TornadoSettings are the settings of Tornado. A nil *TornadoSettings means
// the defaults.
type TornadoSettings struct {
	Settings
	// Top keeps the Top largest bars and summarises the rest; 0 keeps all.
	Top int
	// Interior is the number of equally spaced points sampled inside each
	// range (DefaultInterior when 0; negative turns sampling off).
	Interior int
}

// DefaultInterior is the number of points Tornado samples inside a range.
const DefaultInterior = 9

// Tornado evaluates the output at the low and high end of every input's range
// with the other inputs at their baselines:
//
//	output_at_low_i  = f(x0 with x_i = low_i)
//	output_at_high_i = f(x0 with x_i = high_i)
//	swing_i          = |output_at_high_i - output_at_low_i|
//
// The ends alone can hide a peak or a trough inside the range, so Tornado also
// samples Interior equally spaced points inside each range and reports the
// least and greatest output found (out_min, out_max), refining an extreme
// found inside the range by repeated bisection of its bracket and a final
// parabolic step; an input over which the output rises and falls is marked
// non-monotone. Sampling is skipped only for an input in which the output is
// proven monotone from the model's structure (tape.Cones.Monotone: every
// operation between the input and the output moves with it or against it
// in a known direction, such as a sum, a product with a factor that does not
// depend on the input, max, exp or ceil), since a monotone function is
// least and greatest at the ends of any range. Values decide nothing there:
// an output that agrees with a line at three points and in its slope, such
// as a · (1 − cos(2π · month / 6)) over month 0..12, is still sampled.
//
// Bars are sorted by out_max - out_min descending, ties by name. For a
// monotone input that is its swing, so the order is by swing; an input whose
// peak lies inside its range ranks by the extent of that peak instead of
// dropping to the bottom.
//
// All evaluations run batched through Function.EvalBatch.
func Tornado(p *Problem, s *TornadoSettings) (*TornadoResult, error) {
	if s == nil {
		s = &TornadoSettings{}
	}
	if len(p.Inputs) == 0 {
		return nil, p.errNoInputs()
	}
	set := &s.Settings
	m := s.Interior
	if m == 0 {
		m = DefaultInterior
	}
	if m < 0 {
		m = 0
	}
	k := len(p.Inputs)
	x0 := p.Baseline()
	ev := newBatcher(p.F, x0, set)

	// Stage 1: the baseline and both ends.
	pts := make([]point, 0, 2*k+1)
	pts = append(pts, point{i: -1, j: -1})
	for i, in := range p.Inputs {
		pts = append(pts, point{i: i, vi: in.Low, j: -1}, point{i: i, vi: in.High, j: -1})
	}
	ev.total = len(pts)
	if m > 0 {
		ev.total += m * k / 4 // a guess, corrected once known
	}
	y := make([]float64, len(pts))
	if err := ev.eval(y, pts); err != nil {
		return nil, err
	}
	base := y[0]

	res := &TornadoResult{Kind: "tornado", Output: p.Output, Unit: p.Unit, Baseline: base, Interior: m}
	bars := make([]TornadoBar, k)
	var sample []int
	for i, in := range p.Inputs {
		fl, fh := y[1+2*i], y[2+2*i]
		b := TornadoBar{
			Name: in.Name, Unit: in.Unit, Value: in.Value, Low: in.Low, High: in.High,
			Source: in.Source, DefaultRange: in.Source == RangeDefault,
			OutputAtLow: fl, OutputAtHigh: fh, Swing: math.Abs(fh - fl),
		}
		if b.DefaultRange {
			res.DefaultRanges = append(res.DefaultRanges, in.Name)
			if in.Value == 0 {
				res.NoRange = append(res.NoRange, in.Name)
			}
		}
		bars[i] = b
		if m == 0 || in.Low >= in.High || ev.monotone(i) {
			continue
		}
		sample = append(sample, i)
	}

	// Stage 2: interior points of the inputs not proven monotone, and the
	// midpoint of a range whose baseline is not inside it.
	var inner []xy
	mid := make([]int, k) // index into inner of the midpoint, or -1
	if len(sample) > 0 {
		pts2 := make([]point, 0, (m+1)*len(sample))
		for _, i := range sample {
			in := p.Inputs[i]
			for j := 1; j <= m; j++ {
				pts2 = append(pts2, point{i: i, vi: in.Low + (in.High-in.Low)*float64(j)/float64(m+1), j: -1})
			}
			mid[i] = -1
			if !(in.Low < in.Value && in.Value < in.High) {
				mid[i] = len(pts2)
				pts2 = append(pts2, point{i: i, vi: (in.Low + in.High) / 2, j: -1})
			}
		}
		ev.total = ev.done + len(pts2)
		y2 := make([]float64, len(pts2))
		if err := ev.eval(y2, pts2); err != nil {
			return nil, err
		}
		inner = make([]xy, len(pts2))
		for n, q := range pts2 {
			inner[n] = xy{q.vi, y2[n]}
		}
	}

	// The samples of each input, in order along its range.
	// One allocation for all of them: a model with vector inputs samples
	// hundreds of thousands.
	sampled := make([][]xy, len(sample)) // by position in sample
	all := make([]xy, len(sample)*(m+4))
	at := 0
	for n, i := range sample {
		in := p.Inputs[i]
		xs := all[n*(m+4) : n*(m+4) : (n+1)*(m+4)]
		xs = append(xs, xy{in.Low, bars[i].OutputAtLow})
		xs = append(xs, inner[at:at+m]...)
		at += m
		if mid[i] >= 0 {
			xs = append(xs, inner[mid[i]])
			at++
		}
		xs = append(xs, xy{in.High, bars[i].OutputAtHigh})
		if in.Low < in.Value && in.Value < in.High {
			xs = append(xs, xy{in.Value, base})
		}
		sampled[n] = xs
	}
	for i := range bars {
		b := &bars[i]
		b.OutMin, b.InputAtMin = b.OutputAtLow, b.Low
		b.OutMax, b.InputAtMax = b.OutputAtHigh, b.High
		if b.OutputAtHigh < b.OutputAtLow {
			b.OutMin, b.InputAtMin = b.OutputAtHigh, b.High
			b.OutMax, b.InputAtMax = b.OutputAtLow, b.Low
		}
	}

	// Stage 3: refine extremes found inside a range.
	var ext []*extreme
	for n, i := range sample {
		b := &bars[i]
		b.Sampled = true
		xs := sampled[n]
		// Points of equal abscissa are the same point, of equal output, so
		// their order does not matter.
		slices.SortFunc(xs, func(a, c xy) int {
			switch {
			case a.x < c.x:
				return -1
			case a.x > c.x:
				return 1
			}
			return 0
		})
		xs = dedupe(xs)
		tol := flatTol(xs)
		b.NonMonotone = turns(xs, tol)
		lo, hi := 0, 0
		for j := range xs {
			if xs[j].y < xs[lo].y {
				lo = j
			}
			if xs[j].y > xs[hi].y {
				hi = j
			}
		}
		if xs[lo].y < b.OutMin {
			b.OutMin, b.InputAtMin = xs[lo].y, xs[lo].x
		}
		if xs[hi].y > b.OutMax {
			b.OutMax, b.InputAtMax = xs[hi].y, xs[hi].x
		}
		if lo > 0 && lo < len(xs)-1 && xs[lo].y < math.Min(b.OutputAtLow, b.OutputAtHigh)-tol {
			ext = append(ext, newExtreme(i, -1, xs[lo-1], xs[lo], xs[lo+1], p.Inputs[i]))
		}
		if hi > 0 && hi < len(xs)-1 && xs[hi].y > math.Max(b.OutputAtLow, b.OutputAtHigh)+tol {
			ext = append(ext, newExtreme(i, +1, xs[hi-1], xs[hi], xs[hi+1], p.Inputs[i]))
		}
	}
	if len(ext) > 0 {
		if err := refineExtremes(ev, ext); err != nil {
			return nil, err
		}
		for _, e := range ext {
			b := &bars[e.input]
			if e.sign < 0 && e.b.y < b.OutMin {
				b.OutMin, b.InputAtMin = e.b.y, e.b.x
			}
			if e.sign > 0 && e.b.y > b.OutMax {
				b.OutMax, b.InputAtMax = e.b.y, e.b.x
			}
		}
	}
	ev.finish()
	res.Evaluations = ev.done

	sortBySpread(bars, func(b *TornadoBar) (float64, string) { return b.Spread(), b.Name })
	swingShares(bars)
	if s.Top > 0 && s.Top < len(bars) {
		res.Rest = summarise(bars[s.Top:])
		bars = bars[:s.Top]
	}
	res.Bars = bars
	res.Steps, res.StepLines = p.StepSummary()
	return res, nil
}

// sortKey rounds a non-negative magnitude to 12 significant digits, so that
// values equal but for rounding (1.2 and 1.2000000000000002) rank as a tie
// and fall back to the order by name.
func sortKey(v float64) float64 {
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	e := math.Floor(math.Log10(math.Abs(v))) - 11
	p := math.Pow(10, e)
	return math.Round(v/p) * p
}

type xy struct{ x, y float64 }

// dedupe drops points whose abscissa repeats the one before (xs sorted).
func dedupe(xs []xy) []xy {
	out := xs[:0]
	for j, p := range xs {
		if j > 0 && p.x == out[len(out)-1].x {
			continue
		}
		out = append(out, p)
	}
	return out
}

// flatTol is the tolerance below which differences of outputs count as
// rounding.
func flatTol(xs []xy) float64 {
	var m float64
	for _, p := range xs {
		m = math.Max(m, math.Abs(p.y))
	}
	return 1e-9*m + 1e-300
}

// turns reports whether the sequence of values rises and falls.
func turns(xs []xy, tol float64) bool {
	dir := 0
	for j := 1; j < len(xs); j++ {
		d := xs[j].y - xs[j-1].y
		if math.Abs(d) <= tol {
			continue
		}
		sd := 1
		if d < 0 {
			sd = -1
		}
		if dir != 0 && sd != dir {
			return true
		}
		dir = sd
	}
	return false
}

// extreme is a bracketed interior maximum (sign +1) or minimum (-1) of the
// output along one input: a < b < c with b the best of the three.
type extreme struct {
	input   int
	sign    float64
	a, b, c xy
	tol     float64 // bracket width at which to stop
}

func newExtreme(input int, sign float64, a, b, c xy, in *Input) *extreme {
	return &extreme{input: input, sign: sign, a: a, b: b, c: c, tol: 1e-10 * (in.High - in.Low)}
}

// better reports whether u is a better extreme than v.
func (e *extreme) better(u, v xy) bool { return e.sign*u.y > e.sign*v.y }

// refineExtremes narrows every bracket by halving rounds, each round one
// batched evaluation of the midpoints (a+b)/2 and (b+c)/2 of every bracket,
// then tries the vertex of the parabola through a, b and c.
func refineExtremes(ev *batcher, ext []*extreme) error {
	const rounds = 60
	pts := make([]point, 0, 2*len(ext))
	active := make([]*extreme, 0, len(ext))
	var y []float64
	for r := 0; r < rounds; r++ {
		pts, active = pts[:0], active[:0]
		for _, e := range ext {
			if e.c.x-e.a.x <= e.tol {
				continue
			}
			active = append(active, e)
			pts = append(pts, point{i: e.input, vi: (e.a.x + e.b.x) / 2, j: -1}, point{i: e.input, vi: (e.b.x + e.c.x) / 2, j: -1})
		}
		if len(active) == 0 {
			break
		}
		ev.total = ev.done + len(pts)*(rounds-r) + len(ext)
		y = grow(y, len(pts))
		if err := ev.eval(y, pts); err != nil {
			return err
		}
		for n, e := range active {
			p, q := xy{pts[2*n].vi, y[2*n]}, xy{pts[2*n+1].vi, y[2*n+1]}
			switch {
			case e.better(p, e.b) && !e.better(q, p):
				e.b, e.c = p, e.b
			case e.better(q, e.b):
				e.a, e.b = e.b, q
			default:
				e.a, e.c = p, q
			}
		}
	}
	// A parabolic step: exact for a quadratic, and never accepted unless it
	// improves on b.
	pts = pts[:0]
	active = active[:0]
	for _, e := range ext {
		v, ok := parabolaVertex(e.a, e.b, e.c)
		if ok && v > e.a.x && v < e.c.x && v != e.b.x {
			active = append(active, e)
			pts = append(pts, point{i: e.input, vi: v, j: -1})
		}
	}
	if len(pts) > 0 {
		y = grow(y, len(pts))
		if err := ev.eval(y, pts); err != nil {
			return err
		}
		for n, e := range active {
			if v := (xy{pts[n].vi, y[n]}); e.better(v, e.b) || v.y == e.b.y {
				e.b = v
			}
		}
	}
	return nil
}

// parabolaVertex returns the abscissa of the vertex of the parabola through
// three points.
func parabolaVertex(a, b, c xy) (float64, bool) {
	p := (b.x-a.x)*(b.y-c.y) - (b.x-c.x)*(b.y-a.y)
	q := (b.x-a.x)*(b.x-a.x)*(b.y-c.y) - (b.x-c.x)*(b.x-c.x)*(b.y-a.y)
	if p == 0 {
		return 0, false
	}
	v := b.x - 0.5*q/p
	return v, !math.IsNaN(v) && !math.IsInf(v, 0)
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// errNoInputs is the error of a one-at-a-time analysis of an output that
// depends on no input.
func (p *Problem) errNoInputs() error {
	return fmt.Errorf("%s depends on no input: there is nothing to vary", p.Output)
}

// Input returns the input called name and its index among the problem's
// inputs. An error says why name is not one: a formula, an input the output
// does not depend on, or an undefined name (with a suggestion).
func (p *Problem) Input(name string) (*Input, int, error) {
	for i, in := range p.Inputs {
		if in.Name == name {
			return in, i, nil
		}
	}
	if p.prog != nil {
		switch in, f := p.prog.Lookup(name); {
		case f != nil:
			return nil, -1, fmt.Errorf("%s is a formula, not an input: vary one of the inputs it uses", name)
		case in != nil:
			return nil, -1, fmt.Errorf("%s does not depend on %s: vary one of the inputs it uses", p.Output, name)
		case p.prog.Vector(name) != nil:
			return nil, -1, fmt.Errorf("%s is a vector: vary one of its elements, %s[KEY]", name, name)
		}
		if msg := p.prog.missingElement(name); msg != "" {
			return nil, -1, errors.New(msg)
		}
	}
	names := make([]string, len(p.Inputs))
	for i, in := range p.Inputs {
		names[i] = in.Name
	}
	return nil, -1, fmt.Errorf("undefined input %s%s", name, syntax.DidYouMean(name, names))
}
