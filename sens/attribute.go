package sens

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/nudge-dev/nudge/sens/tape"
	"gonum.org/v1/gonum/integrate/quad"
)

// AttributeSettings are the settings of Attribute. A nil *AttributeSettings
// is an error: attribution needs two points.
type AttributeSettings struct {
	Settings
	// From and To are the scenarios at the ends of the path; nil (or a
	// scenario named BaseName) is the baseline.
	From, To *Scenario
	// FromPoint and ToPoint, when set, are the ends themselves, one value
	// per input of the problem in its own unit, in place of From and To
	// (which then only name them, if set).
	FromPoint, ToPoint []float64
	// Top keeps the Top largest contributions and sums the rest (0: all).
	Top int
	// Target is the relative residual to reach (DefaultAttributeTarget when
	// 0): see AttributeResult.ResidualRel.
	Target float64
}

// DefaultAttributeTarget is the relative residual attribution refines its
// quadrature to.
const DefaultAttributeTarget = 1e-9

// Contribution is one input's share of a change of the output.
type Contribution struct {
	Name string `json:"name"`
	Unit string `json:"unit"`
	// From and To are the input's values at the ends of the path, in its
	// unit.
	From float64 `json:"from"`
	To   float64 `json:"to"`
	// Value is the input's contribution, in the output's unit; SharePct is
	// it as a percentage of the change (absent when the change is 0).
	Value    float64  `json:"contribution"`
	SharePct *float64 `json:"share_pct,omitempty"`
}

// ContributionRest sums the contributions a Top setting leaves out.
type ContributionRest struct {
	Count    int      `json:"count"`
	Value    float64  `json:"contribution"`
	SharePct *float64 `json:"share_pct,omitempty"`
}

// PathBreak is a point of the path where the output is not differentiable:
// a piecewise operation (abs, min, max, if, a comparison, floor...)
// changes piece there.
type PathBreak struct {
	// T is where it lies, as the fraction of the way from From to To.
	T float64 `json:"t"`
	// Kind is "kink" (the output bends: its derivative jumps, and the
	// quadrature is split there) or "step" (the output itself jumps, by
	// Jump, which no input's derivative sees).
	Kind string  `json:"kind"`
	Jump float64 `json:"jump"`
	// At names the operations that change piece there ("model.nudge:4:9
	// max in cost"), at most StepsShown of them; Count counts them all.
	At    []string `json:"at"`
	Count int      `json:"count"`
}

// AttributeQuadrature describes how the integrals were computed.
type AttributeQuadrature struct {
	Rule      string `json:"rule"`      // "Gauss-Legendre"
	Nodes     int    `json:"nodes"`     // points of the highest rule
	Check     int    `json:"check"`     // points of the rule that estimates its error
	Panels    int    `json:"panels"`    // panels of the path in the accepted sums
	Gradients int    `json:"gradients"` // gradients evaluated, in batches
	Points    int    `json:"points"`    // values evaluated to compare pieces and find breaks
	Converged bool   `json:"converged"` // every panel met its tolerance
}

// AttributeResult attributes the change of an output between two points to
// its inputs.
type AttributeResult struct {
	Kind   string `json:"kind"` // "attribution"
	Output string `json:"output"`
	Unit   string `json:"unit"`
	From   string `json:"from"`
	To     string `json:"to"`
	// ValueFrom and ValueTo are the output at the ends; Change is their
	// difference, ValueTo - ValueFrom.
	ValueFrom float64 `json:"value_from"`
	ValueTo   float64 `json:"value_to"`
	Change    float64 `json:"change"`
	// Inputs are the inputs the two points set differently, sorted by
	// |contribution| descending, ties by name.
	Inputs []Contribution    `json:"inputs"`
	Rest   *ContributionRest `json:"rest,omitempty"`
	// Unchanged counts the inputs of the output the two points set alike:
	// each contributes exactly 0.
	Unchanged int `json:"unchanged"`
	// Residual is Change minus the sum of every contribution: what the
	// attribution leaves unexplained. ResidualRel is |Residual| over the
	// larger of |Change| and the largest |contribution|; Met says whether
	// it is within Target (or within the rounding of the output's value,
	// RoundingLevel, when that is larger).
	Residual      float64 `json:"residual"`
	ResidualRel   float64 `json:"residual_rel"`
	Target        float64 `json:"target"`
	RoundingLevel float64 `json:"rounding_level"`
	Met           bool    `json:"met"`
	// Jumps is the sum of the output's jumps at the steps of the path
	// (Breaks of kind "step"), the part of Residual that no derivative sees.
	Jumps      float64             `json:"jumps"`
	Breaks     []PathBreak         `json:"breaks"`
	Quadrature AttributeQuadrature `json:"quadrature"`
}

// ErrNoChange is returned by Attribute when the two points set every input
// of the output alike.
var ErrNoChange = errors.New("nothing changes")

// Attribute splits the change of the output between two points a and b
// among the inputs by the path integral of each input's partial derivative
// along the straight line from a to b (the Aumann–Shapley attribution):
//
//	c_i = (b_i - a_i) ∫₀¹ ∂f/∂x_i(a + t(b - a)) dt,   Σ c_i = f(b) - f(a)
//
// The contributions add up to the change wherever f is continuous on the
// path. They are exact for a linear f (c_i = coefficient × Δx_i), give a
// product x·y the share (x1 − x0)(y0 + y1)/2 for x, and for a multilinear
// f (sums of products of distinct inputs) equal the Shapley values of the
// game whose players switch their inputs from a to b (Owen 1972).
//
// The integrals are taken by Gauss–Legendre quadrature on batched reverse
// sweeps (GradientBatch): on each panel a rule and a lower one (3 and 2
// points, then 8 and 4), accepted when they agree input by input to a
// tolerance set by Target, else the panel is halved. Where a piecewise
// operation (abs, min, max, if, a comparison, floor...) changes piece on
// the path, the path is split there (found by interpolation and bisection,
// to about 1e-13 of its length), so the quadrature never straddles a
// kink; a jump of the output at a step is reported in Breaks and left in
// Residual, since no input's derivative sees it. The residual is always
// reported.
//
// References:
//   - R. J. Aumann and L. S. Shapley, Values of Non-Atomic Games,
//     Princeton University Press, 1974.
//   - G. Owen, "Multilinear extensions of games", Management Science 18(5),
//     1972, P64–P79.
func Attribute(p *Problem, s *AttributeSettings) (*AttributeResult, error) {
	if s == nil {
		return nil, errors.New("attribute needs two points: the settings are nil")
	}
	k := len(p.Inputs)
	a, b, err := attributeEnds(p, s)
	if err != nil {
		return nil, err
	}
	target := s.Target
	if target <= 0 {
		target = DefaultAttributeTarget
	}
	res := &AttributeResult{
		Kind: "attribution", Output: p.Output, Unit: p.Unit,
		From: scenarioName(s.From), To: scenarioName(s.To),
		Inputs: []Contribution{}, Breaks: []PathBreak{}, Target: target,
	}
	var changed []int
	for i := range k {
		if a[i] != b[i] {
			changed = append(changed, i)
		}
	}
	if len(changed) == 0 {
		return nil, fmt.Errorf("%s and %s set every input of %s alike: %w", res.From, res.To, p.Output, ErrNoChange)
	}
	res.Unchanged = k - len(changed)

	w := &pathWalk{p: p, s: s, a: a, b: b, changed: changed, k: k}
	w.init()
	if err := w.run(); err != nil {
		return nil, err
	}
	res.ValueFrom, res.ValueTo = w.f0, w.f1
	res.Change = w.f1 - w.f0
	res.Breaks = append(res.Breaks, mergeBreaks(w.breaks)...)
	for _, br := range res.Breaks {
		if br.Kind == "step" {
			res.Jumps += br.Jump
		}
	}
	res.Quadrature = AttributeQuadrature{Rule: "Gauss-Legendre", Nodes: attributeNodes, Check: attributeCheck, Panels: w.accepted, Gradients: w.grads, Points: w.points, Converged: w.converged}

	sum, largest := 0.0, 0.0
	for j, i := range changed {
		in := p.Inputs[i]
		c := Contribution{Name: in.Name, Unit: in.Unit, From: a[i], To: b[i], Value: w.total[j]}
		if res.Change != 0 {
			pct := 100 * c.Value / res.Change
			c.SharePct = &pct
		}
		sum += c.Value
		largest = max(largest, math.Abs(c.Value))
		res.Inputs = append(res.Inputs, c)
	}
	res.Residual = res.Change - sum
	if den := max(math.Abs(res.Change), largest); den > 0 {
		res.ResidualRel = math.Abs(res.Residual) / den
	}
	res.RoundingLevel = 8 * 0x1p-52 * max(math.Abs(w.f0), math.Abs(w.f1))
	res.Met = res.ResidualRel <= target || math.Abs(res.Residual) <= res.RoundingLevel
	slices.SortStableFunc(res.Inputs, func(x, y Contribution) int {
		if c := cmp.Compare(math.Abs(y.Value), math.Abs(x.Value)); c != 0 {
			return c
		}
		return cmp.Compare(x.Name, y.Name)
	})
	if s.Top > 0 && len(res.Inputs) > s.Top {
		rest := &ContributionRest{Count: len(res.Inputs) - s.Top}
		for _, c := range res.Inputs[s.Top:] {
			rest.Value += c.Value
		}
		if res.Change != 0 {
			pct := 100 * rest.Value / res.Change
			rest.SharePct = &pct
		}
		res.Inputs, res.Rest = res.Inputs[:s.Top], rest
	}
	return res, nil
}

func scenarioName(sc *Scenario) string {
	if sc == nil {
		return BaseName
	}
	return sc.Name
}

// attributeEnds returns the two ends of the path.
func attributeEnds(p *Problem, s *AttributeSettings) (a, b []float64, err error) {
	point := func(pt []float64, sc *Scenario) ([]float64, error) {
		if pt != nil {
			if len(pt) != len(p.Inputs) {
				return nil, fmt.Errorf("attribute: a point of %d values for %d inputs", len(pt), len(p.Inputs))
			}
			return pt, nil
		}
		x, err := p.scenarioValues(sc)
		if x == nil && err == nil {
			x = p.Baseline()
		}
		return x, err
	}
	if a, err = point(s.FromPoint, s.From); err != nil {
		return nil, nil, err
	}
	if b, err = point(s.ToPoint, s.To); err != nil {
		return nil, nil, err
	}
	for i := range a {
		if !finiteF(a[i]) || !finiteF(b[i]) {
			return nil, nil, fmt.Errorf("attribute: input %s is not finite at an end of the path", p.Inputs[i].Name)
		}
	}
	return a, b, nil
}

func finiteF(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// The quadrature's constants.
const (
	// attributeNodes is the Gauss–Legendre rule of a panel: exact for
	// polynomials of degree 15. The rule of attributeCheck nodes (exact to
	// degree 7) beside it estimates its error: a multilinear model whose
	// terms change at most 8 inputs each is accepted on one panel. A panel
	// is first tried with the 3- and 2-point rules (exact to degrees 5 and
	// 3), which settle the products of up to three changed inputs that
	// cost models are mostly made of in 5 gradients, not 12.
	attributeNodes = 8
	attributeCheck = 4
	// attributeGrid is the number of equal panels on which the pieces of
	// piecewise operations are first compared.
	attributeGrid = 8
	// attributeGap is the width of the interval a break is narrowed to.
	attributeGap = 0x1p-44
	// attributeMinPanel is the narrowest panel the refinement halves.
	attributeMinPanel = 0x1p-30
	// attributeBatch is the most gradients evaluated in one batch, and
	// attributeBatchFloats the most values of their points and gradients.
	attributeBatch       = 240
	attributeBatchFloats = 1 << 21
	// attributeTries is how many interpolated guesses the search for a
	// break makes in a row before it bisects.
	attributeTries = 16
)

// piecewiseFn is a Function that can say which piece of each piecewise
// operation it takes at a point (a compiled formula).
type piecewiseFn interface {
	pieces() []tape.Branch
	pieceCodes(codes, sw, x []float64, bs []tape.Branch) (float64, error)
	piecePlace(b tape.Branch) string
}

func (fn *Fn) pieces() []tape.Branch { return fn.tape.Branches(fn.f.out) }

func (fn *Fn) pieceCodes(codes, sw, x []float64, bs []tape.Branch) (float64, error) {
	y, err := fn.tape.BranchCodes(codes, sw, x, bs, fn.f.out)
	if err != nil {
		return math.NaN(), fn.prog.evalError(err, x)
	}
	return y * fn.scale, nil
}

// piecePlace names a piecewise operation: "file:line:col max in cost".
func (fn *Fn) piecePlace(b tape.Branch) string {
	name := b.Op.String()
	if int(b.Pos) < 0 || int(b.Pos) >= fn.prog.pos.len() {
		return name
	}
	pe := fn.prog.pos.at(int(b.Pos))
	s := pe.file.Position(pe.pos).String() + " " + name
	if pe.formula != "" {
		s += " in " + pe.formula
	}
	if b.Elem >= 0 {
		s += fmt.Sprintf(" (element %d)", b.Elem+1)
	}
	return s
}

func (s *subFn) pieces() []tape.Branch { return s.fn.pieces() }

func (s *subFn) pieceCodes(codes, sw, x []float64, bs []tape.Branch) (float64, error) {
	s.scatter(s.full, x)
	return s.fn.pieceCodes(codes, sw, s.full, bs)
}

func (s *subFn) piecePlace(b tape.Branch) string { return s.fn.piecePlace(b) }

// pathWalk integrates the gradient along the path from a to b.
type pathWalk struct {
	p       *Problem
	s       *AttributeSettings
	a, b    []float64
	changed []int
	k       int

	pw       piecewiseFn // nil when f cannot tell its pieces
	branches []tape.Branch
	rules    [2]rulePair // the first try and the rules after it

	f0, f1    float64
	total     []float64 // the accepted contributions, per changed input
	breaks    []PathBreak
	accepted  int
	grads     int
	points    int
	converged bool
	tol       float64 // a panel's tolerance per unit of width
	x         []float64
}

// end is a point of the path: its place t, f there, and the piece codes
// and switching values there (nil without pieces).
type end struct {
	t, f  float64
	c, sw []float64
}

// rulePair is a Gauss–Legendre rule and a lower one that checks it: their
// nodes and weights on [0, 1].
type rulePair struct {
	x, w []float64 // the rule's nodes, then the checking rule's
	n    int       // the rule's own nodes: x[:n]
}

func newRulePair(n, check int) rulePair {
	r := rulePair{x: make([]float64, n+check), w: make([]float64, n+check), n: n}
	quad.Legendre{}.FixedLocations(r.x[:n], r.w[:n], 0, 1)
	quad.Legendre{}.FixedLocations(r.x[n:], r.w[n:], 0, 1)
	return r
}

// panel is an interval of the path and, once computed, the two rules'
// estimates of each contribution over it.
type panel struct {
	lo, hi end
	level  int       // the rule pair: 0 the first try, 1 the rules after it
	q, e   []float64 // the rule's estimate and the checking rule's, or nil
}

func (pn *panel) width() float64 { return pn.hi.t - pn.lo.t }

func (w *pathWalk) init() {
	w.rules = [2]rulePair{newRulePair(3, 2), newRulePair(attributeNodes, attributeCheck)}
	if pw, ok := w.p.F.(piecewiseFn); ok {
		w.pw = pw
		w.branches = pw.pieces()
	}
	w.total = make([]float64, len(w.changed))
	w.converged = true
	w.x = make([]float64, w.k)
}

// point writes the point at fraction t of the path into x. Each end is
// reproduced exactly: t is measured from the nearer one.
func (w *pathWalk) point(x []float64, t float64) {
	copy(x, w.a)
	for _, i := range w.changed {
		d := w.b[i] - w.a[i]
		if t <= 0.5 {
			x[i] = w.a[i] + t*d
		} else {
			x[i] = w.b[i] - (1-t)*d
		}
	}
}

// at evaluates f, the piece codes and the switching values at t.
func (w *pathWalk) at(t float64) (end, error) {
	if err := w.s.ctx().Err(); err != nil {
		return end{}, fmt.Errorf("stopped: %w", err)
	}
	w.point(w.x, t)
	w.points++
	if w.pw == nil || len(w.branches) == 0 {
		y, err := w.p.F.Eval(w.x)
		return end{t: t, f: y}, w.pathError(err)
	}
	e := end{t: t, c: make([]float64, len(w.branches)), sw: make([]float64, len(w.branches))}
	var err error
	e.f, err = w.pw.pieceCodes(e.c, e.sw, w.x, w.branches)
	return e, w.pathError(err)
}

func (w *pathWalk) run() error {
	// The pieces on a coarse grid (the ends alone when there are none),
	// then every break narrowed down.
	nGrid := attributeGrid
	if len(w.branches) == 0 {
		nGrid = 1
	}
	var smooth []*panel
	var prev end
	for j := 0; j <= nGrid; j++ {
		e, err := w.at(float64(j) / float64(nGrid))
		if err != nil {
			return err
		}
		switch j {
		case 0:
			w.f0 = e.f
		case nGrid:
			w.f1 = e.f
		}
		if j > 0 {
			smooth = append(smooth, &panel{lo: prev, hi: e})
		}
		prev = e
	}
	var err error
	var resolved []*panel
	for _, pn := range smooth {
		if resolved, err = w.resolve(pn, attributeTries, 1, 1, 0, resolved); err != nil {
			return err
		}
	}
	smooth = merge(resolved)
	if err := w.estimate(smooth); err != nil {
		return err
	}
	// A panel's tolerance per unit of width, from the scale of the change
	// and of the first estimates of the contributions.
	scale := math.Abs(w.f1 - w.f0)
	for _, pn := range smooth {
		for _, v := range pn.q {
			scale = max(scale, math.Abs(v))
		}
	}
	if scale == 0 {
		scale = 1
	}
	target := w.s.Target
	if target <= 0 {
		target = DefaultAttributeTarget
	}
	w.tol = target / 20 * scale
	return w.refine(smooth)
}

// resolve narrows down the breaks in pn, a panel whose ends may take
// different pieces, and appends the panels between them to out. Where an
// operation that changes piece has a switching value at both ends of
// opposite signs, it guesses the break by linear interpolation of that
// value (tries such guesses in a row), else it bisects.
//
// A guess leaves one end of the bracket in place, and guesses from an end
// kept again and again would creep up on the break (regula falsi); as in
// the Illinois method, the switching value of an end kept twice in a row
// (kept says which end the last guess kept: -1 lo, 1 hi) is halved for
// the next interpolation (wLo, wHi), so the guesses close in from both
// sides.
func (w *pathWalk) resolve(pn *panel, tries int, wLo, wHi float64, kept int, out []*panel) ([]*panel, error) {
	lo, hi := pn.lo, pn.hi
	if slices.Equal(lo.c, hi.c) {
		return append(out, pn), nil
	}
	width := hi.t - lo.t
	if width <= attributeGap {
		w.addBreak(pn)
		return out, nil
	}
	var cuts []float64
	if tries > 0 {
		for j := range lo.c {
			s0, s1 := wLo*lo.sw[j], wHi*hi.sw[j]
			if lo.c[j] == hi.c[j] || !(s0*s1 <= 0) || s0 == s1 {
				continue
			}
			m := lo.t + width*s0/(s0-s1)
			// A quarter gap inside the ends at least, so the bracket
			// shrinks.
			cuts = []float64{min(max(m, lo.t+attributeGap/4), hi.t-attributeGap/4)}
			break
		}
	}
	// The weights of the ends of each part, and which end each keeps:
	// an end kept twice in a row is halved (Illinois); bisection starts
	// afresh.
	wts := [][2]float64{{1, 1}, {1, 1}}
	keeps := []int{0, 0}
	if cuts == nil {
		cuts, tries = []float64{lo.t + width/2}, 1
	} else {
		tries--
		l, h := wLo, wHi
		if kept == -1 {
			l /= 2
		}
		if kept == 1 {
			h /= 2
		}
		wts, keeps = [][2]float64{{l, 1}, {1, h}}, []int{-1, 1}
	}
	ends := []end{lo}
	for _, t := range cuts {
		e, err := w.at(t)
		if err != nil {
			return nil, err
		}
		ends = append(ends, e)
	}
	ends = append(ends, hi)
	var err error
	for i := 1; i < len(ends); i++ {
		if out, err = w.resolve(&panel{lo: ends[i-1], hi: ends[i]}, tries, wts[i-1][0], wts[i-1][1], keeps[i-1], out); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// addBreak records the break inside the narrow panel pn.
func (w *pathWalk) addBreak(pn *panel) {
	br := PathBreak{T: (pn.lo.t + pn.hi.t) / 2, Kind: "kink", Jump: pn.hi.f - pn.lo.f, At: []string{}}
	// A step operation whose pieces meet (if(x > 5, x, 5)) only bends the
	// output: it is a step of the path when the output jumps by more than
	// its slope moves it across the gap, with a wide margin.
	floor := 1e-11 * max(math.Abs(w.f1-w.f0), 8*0x1p-52*max(math.Abs(w.f0), math.Abs(w.f1)))
	for j, b := range w.branches {
		if pn.lo.c[j] == pn.hi.c[j] {
			continue
		}
		if b.Step && math.Abs(br.Jump) > floor {
			br.Kind = "step"
		}
		if br.Count < StepsShown {
			br.At = append(br.At, w.pw.piecePlace(b))
		}
		br.Count++
	}
	if br.Kind == "kink" {
		br.Jump = 0 // the output is continuous: what it moves across the gap is the slope's, not a jump
	}
	w.breaks = append(w.breaks, br)
}

// mergeBreaks sorts the breaks along the path and joins those that lie
// within a few gaps of each other: one point where several operations
// change piece, found in neighbouring gaps.
func mergeBreaks(bs []PathBreak) []PathBreak {
	slices.SortStableFunc(bs, func(x, y PathBreak) int { return cmp.Compare(x.T, y.T) })
	var out []PathBreak
	for _, br := range bs {
		if n := len(out); n > 0 && br.T-out[n-1].T <= 4*attributeGap {
			last := &out[n-1]
			if br.Kind == "step" {
				last.Kind = "step"
			}
			last.Jump += br.Jump
			for _, at := range br.At {
				if len(last.At) < StepsShown && !slices.Contains(last.At, at) {
					last.At = append(last.At, at)
				}
			}
			last.Count += br.Count
			continue
		}
		out = append(out, br)
	}
	return out
}

// merge joins adjacent panels that take the same pieces (no break between
// them), so a smooth stretch starts as one panel.
func merge(ps []*panel) []*panel {
	var out []*panel
	for _, pn := range ps {
		if n := len(out); n > 0 && out[n-1].hi.t == pn.lo.t && slices.Equal(out[n-1].hi.c, pn.lo.c) {
			out[n-1].hi = pn.hi
			continue
		}
		out = append(out, pn)
	}
	return out
}

// estimate fills both rules' estimates of each panel that has none, from
// gradients evaluated in batches.
func (w *pathWalk) estimate(ps []*panel) error {
	var need []*panel
	for _, pn := range ps {
		if pn.q == nil {
			need = append(need, pn)
		}
	}
	most := max(1, min(attributeBatch, attributeBatchFloats/(2*w.k))) // gradients a batch
	var xs, grads, ys []float64                                       // as long as the largest batch needs
	for lo := 0; lo < len(need); {
		if err := w.s.ctx().Err(); err != nil {
			return fmt.Errorf("stopped: %w", err)
		}
		// As many panels as fit, and at least one.
		hi, m := lo, 0
		for hi < len(need) && (hi == lo || m+len(w.rules[need[hi].level].x) <= most) {
			m += len(w.rules[need[hi].level].x)
			hi++
		}
		if m*w.k > cap(xs) {
			xs, grads, ys = make([]float64, 0, m*w.k), make([]float64, m*w.k), make([]float64, m)
		}
		xs = xs[:m*w.k]
		row := 0
		for _, pn := range need[lo:hi] {
			for _, t := range w.rules[pn.level].x {
				w.point(xs[row*w.k:(row+1)*w.k], pn.lo.t+t*pn.width())
				row++
			}
		}
		if err := GradientBatch(w.p.F, ys[:m], grads[:m*w.k], xs, m); err != nil {
			return w.pathError(err)
		}
		w.grads += m
		w.s.progress(w.grads, w.grads+(len(need)-hi)*len(w.rules[1].x))
		row = 0
		for _, pn := range need[lo:hi] {
			r := w.rules[pn.level]
			pn.q, pn.e = make([]float64, len(w.changed)), make([]float64, len(w.changed))
			for j := range r.x {
				dst := pn.q
				if j >= r.n {
					dst = pn.e
				}
				g := grads[row*w.k : (row+1)*w.k]
				for c, i := range w.changed {
					dst[c] += r.w[j] * g[i]
				}
				row++
			}
			for c, i := range w.changed {
				f := pn.width() * (w.b[i] - w.a[i])
				pn.q[c] *= f
				pn.e[c] *= f
			}
		}
		lo = hi
	}
	return nil
}

// refine accepts each panel whose rules agree, input by input, within
// its tolerance, and halves the others, then adds up the accepted
// estimates.
func (w *pathWalk) refine(ps []*panel) error {
	for len(ps) > 0 {
		var next []*panel
		for _, pn := range ps {
			ok := true
			lim := w.tol * pn.width()
			for c := range w.changed {
				if math.Abs(pn.q[c]-pn.e[c]) > lim {
					ok = false
					break
				}
			}
			if !ok && pn.level == 0 {
				// The first try's rules disagree: the higher ones.
				pn.level, pn.q, pn.e = 1, nil, nil
				next = append(next, pn)
				continue
			}
			if ok || pn.width() <= attributeMinPanel {
				if !ok {
					w.converged = false
				}
				for c := range w.changed {
					w.total[c] += pn.q[c]
				}
				w.accepted++
				continue
			}
			mid, err := w.at(pn.lo.t + pn.width()/2)
			if err != nil {
				return err
			}
			l, r := &panel{lo: pn.lo, hi: mid, level: 1}, &panel{lo: mid, hi: pn.hi, level: 1}
			if slices.Equal(mid.c, pn.lo.c) {
				next = append(next, l, r)
				continue
			}
			// A piece changes and changes back inside the panel: narrow
			// down both breaks and start again on the pieces.
			var sm []*panel
			if sm, err = w.resolve(l, attributeTries, 1, 1, 0, sm); err == nil {
				sm, err = w.resolve(r, attributeTries, 1, 1, 0, sm)
			}
			if err != nil {
				return err
			}
			next = append(next, merge(sm)...)
		}
		if err := w.estimate(next); err != nil {
			return err
		}
		ps = next
	}
	return nil
}

// pathError says that an evaluation on the path failed.
func (w *pathWalk) pathError(err error) error {
	var ee *EvalError
	if errors.As(err, &ee) {
		c := *ee
		c.Msg += " on the path from " + scenarioName(w.s.From) + " to " + scenarioName(w.s.To)
		return &c
	}
	return err
}
