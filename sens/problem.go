package sens

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tape"
)

// Function is a scalar function of the inputs, in the user's units: what every
// analysis works on. The compiled model provides one per output (Program.Fn);
// tests and other programs can wrap plain Go functions with FuncOf.
type Function interface {
	// Eval returns f(x).
	Eval(x []float64) (float64, error)
	// Gradient writes ∂f/∂x into dst and returns f(x).
	Gradient(dst, x []float64) (float64, error)
	// EvalBatch evaluates f at n points stored row by row in xs (n × dim) into
	// dst[:n].
	EvalBatch(dst, xs []float64, n int) error
	// Clone returns an independent copy for use on another goroutine.
	Clone() Function
}

// Problem is one output to analyse: the function, its name and unit, and the
// inputs with their baselines, ranges and distributions.
type Problem struct {
	Output string
	Unit   string
	F      Function
	Inputs []*Input
	// Steps lists where step-shaped operations (floor, ceil, round, if,
	// comparisons) lie on the output's path; their derivative is zero.
	// Results and warnings list the first StepsShown of them and a count.
	Steps []syntax.Position
	// Correlations are rank correlations between the inputs, which Simulate
	// imposes (indices into Inputs).
	Correlations []Correlation

	// index maps the problem's inputs to the program's (nil: the same).
	index []int
	// prog is the program the problem was built from; nil for a problem
	// built by hand.
	prog *Program
}

// StepsShown is how many positions of step-shaped operations a result or a
// warning lists; the rest are counted.
const StepsShown = 5

// StepSummary returns the positions of the first StepsShown step-shaped
// operations on the output's path ("file:line:col", one a line) and how
// many lines hold one in all.
func (p *Problem) StepSummary() (first []string, lines int) {
	seen := map[string]bool{}
	for _, s := range p.Steps {
		// One mention per line: if(x > 5, ...) is one step, not two.
		key := fmt.Sprintf("%s:%d", s.Filename, s.Line)
		if seen[key] {
			continue
		}
		seen[key] = true
		if len(first) < StepsShown {
			first = append(first, s.String())
		}
	}
	return first, len(seen)
}

// Project picks the problem's inputs out of a vector of every program input
// (such as Program.ScenarioValues returns).
func (p *Problem) Project(all []float64) []float64 {
	if p.index == nil {
		return all
	}
	x := make([]float64, len(p.index))
	for i, j := range p.index {
		x[i] = all[j]
	}
	return x
}

// Baseline returns the inputs' baseline values.
func (p *Problem) Baseline() []float64 {
	x := make([]float64, len(p.Inputs))
	for i, in := range p.Inputs {
		x[i] = in.Value
	}
	return x
}

// Settings are the common settings of analyses. A nil *Settings means the
// defaults.
type Settings struct {
	// Ctx stops a long analysis early; nil means context.Background().
	Ctx context.Context
	// Progress, when set, is called from time to time with the work done and the
	// work in all (in evaluations).
	Progress func(done, total int)
}

func (s *Settings) ctx() context.Context {
	if s == nil || s.Ctx == nil {
		return context.Background()
	}
	return s.Ctx
}

func (s *Settings) progress(done, total int) {
	if s != nil && s.Progress != nil {
		s.Progress(done, total)
	}
}

// ---- the compiled function of one output

// Fn is one formula of a compiled program as a Function of every input, in the
// inputs' own units, returning the formula in its display unit.
type Fn struct {
	prog  *Program
	tape  *tape.Tape
	f     *Formula
	scale float64 // from the tape's output to the display unit: sc / display factor
}

// Fn returns the formula name as a Function.
func (p *Program) Fn(name string) (*Fn, error) {
	_, f := p.Lookup(name)
	if f == nil {
		if fn, err, ok := p.vectorFn(name); ok {
			return fn, err
		}
		if in, _ := p.Lookup(name); in != nil {
			return nil, fmt.Errorf("%s is an input: analyse a formula that uses it", name)
		}
		return nil, fmt.Errorf("undefined: %s%s", name, syntax.DidYouMean(name, p.Names()))
	}
	sc := f.sc
	if sc == 0 {
		sc = 1 // a formula the scalar compiler did not make (compile_vec.go)
	}
	return &Fn{prog: p, tape: p.tapeOf(f).Clone(), f: f, scale: sc / f.u.Factor}, nil
}

// Problem returns the analysis problem for the formula name.
func (p *Program) Problem(name string) (*Problem, error) {
	fn, err := p.Fn(name)
	if err != nil {
		return nil, err
	}
	pr := &Problem{Output: name, Unit: fn.f.Unit, F: fn, Inputs: p.Inputs, prog: p}
	if deps := p.Deps(fn.f); len(deps) < len(p.Inputs) {
		// Analyse only the inputs the output depends on; the others stay at
		// their baselines.
		pr.index = deps
		pr.Inputs = make([]*Input, len(deps))
		for i, j := range deps {
			pr.Inputs[i] = p.Inputs[j]
		}
		pr.F = &subFn{fn: fn, index: deps, full: p.Baseline()}
	}
	pr.Correlations = p.problemCorrelations(pr)
	for _, s := range p.steps(fn.f) {
		e := p.pos.at(int(s))
		pr.Steps = append(pr.Steps, e.file.Position(e.pos))
	}
	return pr, nil
}

// Formula returns the formula the function evaluates.
func (fn *Fn) Formula() *Formula { return fn.f }

// Clone returns an independent copy.
func (fn *Fn) Clone() Function {
	c := *fn
	c.tape = fn.tape.Clone()
	return &c
}

// Eval returns the formula's value at x.
func (fn *Fn) Eval(x []float64) (float64, error) {
	y, err := fn.tape.Value(x, fn.f.out)
	if err != nil {
		return math.NaN(), fn.prog.evalError(err, x)
	}
	return fn.scaled(y, x)
}

// scaled returns the tape's output y in the formula's display unit, or an
// error where that overflows: the tape checks values in base units, and a
// value finite there (1e303 kg) can be beyond the float64 range in the
// display unit (1e309 mg).
func (fn *Fn) scaled(y float64, x []float64) (float64, error) {
	v := y * fn.scale
	if math.IsInf(v, 0) && !math.IsInf(y, 0) {
		return math.NaN(), fn.overflow(x, "")
	}
	return v, nil
}

// overflow is the error of a value, or of a derivative (what, such as "the
// partial derivative with respect to rate", when not ""), that overflows in
// the display unit (per the unit of each input named in per), placed at the
// formula, with the inputs that led there.
func (fn *Fn) overflow(x []float64, what string, per ...string) error {
	f, p := fn.f, fn.prog
	u := f.Unit
	if u == "" {
		u = "its unit"
	}
	if what == "" {
		what = "the value"
	}
	for _, in := range per {
		u += " per the unit of " + in
	}
	e := &EvalError{Pos: f.Pos(), Formula: f.Name, Msg: what + " overflows when written in " + u + " (beyond about 1.8e+308)"}
	if k := int(fn.tape.OutputPos(f.out)); k >= 0 && k < p.pos.len() && p.pos.at(k).file != nil {
		e.Source = p.pos.at(k).file.Line(e.Pos.Line)
	}
	if x != nil && len(x) == len(p.Inputs) {
		e.Inputs = p.inputsNamed(p.Deps(f), x)
	}
	return e
}

// Gradient writes the partial derivatives into dst and returns the value.
func (fn *Fn) Gradient(dst, x []float64) (float64, error) {
	y, err := fn.tape.Gradient(dst, x, fn.f.out)
	if err != nil {
		return math.NaN(), fn.prog.evalError(err, x)
	}
	if fn.scale != 1 {
		for i := range dst {
			g := dst[i] * fn.scale
			if math.IsInf(g, 0) && !math.IsInf(dst[i], 0) {
				return math.NaN(), fn.overflow(x, "the partial derivative with respect to "+fn.prog.Inputs[i].Name, fn.prog.Inputs[i].Name)
			}
			dst[i] = g
		}
	}
	return fn.scaled(y, x)
}

// EvalBatch evaluates n points.
func (fn *Fn) EvalBatch(dst, xs []float64, n int) error {
	if err := fn.tape.ForwardBatch(dst, xs, n, fn.f.out); err != nil {
		var x []float64
		if de, ok := err.(*tape.DomainError); ok && de.Sample >= 0 && de.Sample < n {
			k := len(fn.prog.Inputs)
			x = xs[de.Sample*k : (de.Sample+1)*k]
		}
		return fn.prog.evalError(err, x)
	}
	if err := fn.scaleAll(dst[:n], xs); err != nil {
		return err
	}
	return nil
}

// scaleAll scales the tape's outputs of a batch of rows xs (one per value,
// every input of the program) to the display unit, or returns the overflow
// error of the first value that overflows there.
func (fn *Fn) scaleAll(dst, xs []float64) error {
	if fn.scale == 1 {
		return nil
	}
	for i, y := range dst {
		v := y * fn.scale
		if math.IsInf(v, 0) && !math.IsInf(y, 0) {
			var x []float64
			if k := len(fn.prog.Inputs); xs != nil && (i+1)*k <= len(xs) {
				x = xs[i*k : (i+1)*k]
			}
			return fn.overflow(x, "")
		}
		dst[i] = v
	}
	return nil
}

// EvalError is a failure during evaluation (a domain error such as the log of a
// negative number), placed at the formula and column that caused it, with the
// input values that led there.
type EvalError struct {
	Pos     syntax.Position
	Formula string
	Msg     string
	Source  string
	Inputs  []string // "rate = -0.5 $/h", the inputs the formula depends on
}

func (e *EvalError) Error() string {
	var b strings.Builder
	if e.Pos.Line > 0 {
		b.WriteString(e.Pos.String() + ": ")
	}
	b.WriteString(e.Msg)
	if e.Formula != "" {
		b.WriteString(" in " + e.Formula)
	}
	if len(e.Inputs) > 0 {
		b.WriteString(" (with " + strings.Join(e.Inputs, ", ") + ")")
	}
	return b.String()
}

// SyntaxError returns e as a positioned error with its source line, for caret
// display.
func (e *EvalError) SyntaxError() *syntax.Error {
	msg := e.Msg
	if e.Formula != "" {
		msg += " in " + e.Formula
	}
	if len(e.Inputs) > 0 {
		msg += " (with " + strings.Join(e.Inputs, ", ") + ")"
	}
	return &syntax.Error{Pos: e.Pos, Msg: msg, Source: e.Source}
}

func (p *Program) evalError(err error, x []float64) error {
	de, ok := err.(*tape.DomainError)
	if !ok {
		return err
	}
	e := &EvalError{Msg: de.Msg}
	if int(de.Pos) >= 0 && int(de.Pos) < p.pos.len() {
		pe := p.pos.at(int(de.Pos))
		e.Pos = pe.file.Position(pe.pos)
		e.Source = pe.file.Line(e.Pos.Line)
		e.Formula = pe.formula
		e.Msg += p.elementOf(de)
		if _, f := p.Lookup(pe.formula); f != nil && x != nil {
			e.Inputs = p.inputsNamed(p.Deps(f), x)
		}
	}
	return e
}

// ---- plain Go functions

// FuncOf wraps a Go function and its gradient as a Function. grad may be nil,
// in which case Gradient uses central differences (for tests and examples).
func FuncOf(dim int, f func(x []float64) float64, grad func(dst, x []float64)) Function {
	return &goFunc{dim: dim, f: f, grad: grad}
}

type goFunc struct {
	dim  int
	f    func([]float64) float64
	grad func(dst, x []float64)
}

func (g *goFunc) Clone() Function { c := *g; return &c }

func (g *goFunc) Eval(x []float64) (float64, error) {
	y := g.f(x)
	if math.IsNaN(y) || math.IsInf(y, 0) {
		return y, fmt.Errorf("function value is %g", y)
	}
	return y, nil
}

func (g *goFunc) Gradient(dst, x []float64) (float64, error) {
	if g.grad != nil {
		g.grad(dst, x)
	} else {
		xx := append([]float64(nil), x...)
		for i := range x {
			h := 1e-6 * math.Max(1, math.Abs(x[i]))
			xx[i] = x[i] + h
			fp := g.f(xx)
			xx[i] = x[i] - h
			fm := g.f(xx)
			xx[i] = x[i]
			dst[i] = (fp - fm) / (2 * h)
		}
	}
	return g.Eval(x)
}

func (g *goFunc) EvalBatch(dst, xs []float64, n int) error {
	for i := 0; i < n; i++ {
		y, err := g.Eval(xs[i*g.dim : (i+1)*g.dim])
		if err != nil {
			return err
		}
		dst[i] = y
	}
	return nil
}

// NewInput returns an input for problems built by hand (tests, examples, other
// programs): a baseline, a range and optionally a distribution.
func NewInput(name string, value, low, high float64, dist Dist) *Input {
	src := RangeExplicit
	if low == high && dist != nil {
		low, high, src = dist.Quantile(0.1), dist.Quantile(0.9), RangeDistribution
	}
	return &Input{Name: name, Value: value, Low: low, High: high, Source: src, Dist: dist}
}

// subFn is a Function of some of a program's inputs, the others held at their
// baselines.
type subFn struct {
	fn    *Fn
	index []int     // sub input i is program input index[i]
	full  []float64 // a full input vector: baselines plus the sub inputs
	grad  []float64 // full gradient
	batch []float64 // full rows for EvalBatch

	gbatch, gfull []float64 // full rows and gradients for GradientBatch

	// For EvalColumns: a column per program input, those of the other
	// inputs in fixed, fixedLen samples long, holding their baselines.
	cols     [][]float64
	fixed    []float64
	fixedLen int
}

func (s *subFn) Clone() Function {
	return &subFn{fn: s.fn.Clone().(*Fn), index: s.index, full: append([]float64(nil), s.full...)}
}

func (s *subFn) scatter(dst, x []float64) {
	for i, j := range s.index {
		dst[j] = x[i]
	}
}

func (s *subFn) Eval(x []float64) (float64, error) {
	s.scatter(s.full, x)
	return s.fn.Eval(s.full)
}

func (s *subFn) Gradient(dst, x []float64) (float64, error) {
	s.scatter(s.full, x)
	if len(s.grad) != len(s.full) {
		s.grad = make([]float64, len(s.full))
	}
	y, err := s.fn.Gradient(s.grad, s.full)
	for i, j := range s.index {
		dst[i] = s.grad[j]
	}
	return y, err
}

func (s *subFn) EvalBatch(dst, xs []float64, n int) error {
	k, all := len(s.index), len(s.full)
	if need := n * all; cap(s.batch) < need {
		s.batch = make([]float64, need)
		for r := 0; r < n; r++ {
			copy(s.batch[r*all:(r+1)*all], s.full)
		}
	} else {
		s.batch = s.batch[:need]
	}
	for r := 0; r < n; r++ {
		row := s.batch[r*all : (r+1)*all]
		for i, j := range s.index {
			row[j] = xs[r*k+i]
		}
	}
	return s.fn.EvalBatch(dst, s.batch, n)
}
