package tape

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"
	"unsafe"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// tapeFD returns gonum's central-difference gradient of f at x. gonum's
// step is absolute, so each coordinate gets its own step
// scale·1e-6·max(1, |x_j|) (fd.Derivative on that coordinate).
func tapeFD(f func([]float64) float64, x []float64, scale float64) []float64 {
	g := make([]float64, len(x))
	xx := slices.Clone(x)
	for j := range x {
		h := scale * 1e-6 * math.Max(1, math.Abs(x[j]))
		g[j] = fd.Derivative(func(v float64) float64 {
			xx[j] = v
			r := f(xx)
			xx[j] = x[j]
			return r
		}, x[j], &fd.Settings{Formula: fd.Central, Step: h})
	}
	return g
}

// tapeFunc returns output i of t as a plain function (NaN on a domain
// error), for finite differences.
func tapeFunc(t *Tape, i int) func([]float64) float64 {
	return func(x []float64) float64 {
		v, err := t.Eval(x, i)
		if err != nil {
			return math.NaN()
		}
		return v
	}
}

// Chain-rule facts (common practice).
func TestTapeChainRuleFacts(t *testing.T) {
	// A product node with inputs 4 and 7 gives 28; with an upstream
	// adjoint of 3 it sends back 3·7 = 21 and 3·4 = 12.
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	prod := b.Binary(OpMul, x, y)
	tp := b.Tape(prod, b.Binary(OpMul, b.Const(3), prod))
	if err := tp.Forward([]float64{4, 7}); err != nil {
		t.Fatal(err)
	}
	if got := tp.Output(0); got != 28 {
		t.Errorf("4*7 = %v, want 28", got)
	}
	g := tp.Reverse(make([]float64, 2), 1)
	if g[0] != 21 || g[1] != 12 {
		t.Errorf("adjoints sent back = %v, want [21 12]", g)
	}

	// Squared error (w x - y)² at x = 3, y = 5, w = 2: loss 1, and
	// d/dw = 2 (w x - y) x = 6, d/dx = 2 (w x - y) w = 4, d/dy = -2.
	b = NewBuilder()
	w, xx, yy := b.Input(), b.Input(), b.Input()
	r := b.Binary(OpSub, b.Binary(OpMul, w, xx), yy)
	tp = b.Tape(b.Binary(OpPow, r, b.Const(2)))
	g = make([]float64, 3)
	loss, err := tp.Gradient(g, []float64{2, 3, 5}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if loss != 1 || g[0] != 6 || g[1] != 4 || g[2] != -2 {
		t.Errorf("squared error: loss %v grad %v, want 1 [6 4 -2]", loss, g)
	}
}

// opCase is an operation and points inside its domain, away from kinks
// and steps.
type opCase struct {
	op  Op
	pts [][]float64
}

var tapeOpCases = []opCase{
	{OpAdd, [][]float64{{1, 2}, {-3.5, 0.25}, {1e3, -7}}},
	{OpSub, [][]float64{{1, 2}, {-3.5, 0.25}, {1e3, -7}}},
	{OpMul, [][]float64{{1.5, 2}, {-3.5, 0.25}, {1e3, -7}}},
	{OpDiv, [][]float64{{1.5, 2}, {-3.5, 0.25}, {1e3, -7}}},
	{OpPow, [][]float64{{1.5, 2.5}, {0.3, -1.2}, {4, 0.5}}},
	{OpPowConst, [][]float64{{1.5, 2.5}, {0.3, -1.2}, {-2, 3}, {-1.5, -2}}},
	{OpSquare, [][]float64{{1.5}, {-3}}},
	{OpNeg, [][]float64{{1.5}, {-3}}},
	{OpSqrt, [][]float64{{2}, {0.01}, {1e4}}},
	{OpExp, [][]float64{{1}, {-3}, {10}}},
	{OpLn, [][]float64{{2}, {0.01}, {1e4}}},
	{OpLog10, [][]float64{{2}, {0.01}, {1e4}}},
	{OpAbs, [][]float64{{2}, {-0.5}}},
	{OpSin, [][]float64{{0.3}, {2}, {-5}}},
	{OpCos, [][]float64{{0.3}, {2}, {-5}}},
	{OpTan, [][]float64{{0.3}, {1.2}, {-2}}},
	{OpAsin, [][]float64{{0.3}, {-0.9}}},
	{OpAcos, [][]float64{{0.3}, {-0.9}}},
	{OpAtan, [][]float64{{0.3}, {-20}}},
	{OpMin, [][]float64{{1, 2}, {3, -1}}},
	{OpMax, [][]float64{{1, 2}, {3, -1}}},
	{OpFloor, [][]float64{{1.5}, {-2.3}}},
	{OpCeil, [][]float64{{1.5}, {-2.3}}},
	{OpRound, [][]float64{{1.3}, {-2.7}}},
	{OpLt, [][]float64{{1, 2}, {3, 1}}},
	{OpLe, [][]float64{{1, 2}, {3, 1}}},
	{OpGt, [][]float64{{1, 2}, {3, 1}}},
	{OpGe, [][]float64{{1, 2}, {3, 1}}},
	{OpEq, [][]float64{{1, 2}, {3, 3}}},
	{OpNe, [][]float64{{1, 2}, {3, 3}}},
	{OpAnd, [][]float64{{1, 0}, {1, 1}}},
	{OpOr, [][]float64{{0, 0}, {1, 0}}},
	{OpNot, [][]float64{{0}, {1}}},
	{OpIf, [][]float64{{1, 2.5, -3}, {0, 2.5, -3}}},
	{OpGrowth, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}}},
	{OpDiscount, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}}},
	{OpAnnuityPV, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}}},
	{OpAnnuityFV, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}}},
	{OpRecovery, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}}},
	{OpSinking, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}}},
	{OpGradientPV, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}, {1.5, 40}}},
	{OpGradientUniform, [][]float64{{0.08, 10}, {0.001, 30}, {-0.05, 4.5}, {0, 12}, {0.3, 0.7}, {1.5, 40}}},
	{OpLearn, [][]float64{{100, 0.8, 4}, {2.5, 0.9, 37.5}, {-3, 0.5, 1.2}, {10, 1.1, 1000}}},
	{OpLearnTotal, [][]float64{{100, 0.8, 4.5}, {2.5, 0.9, 37.5}, {-3, 0.5, 1.2}, {10, 1.1, 1000}, {7, 0.85, 15.9}, {7, 0.85, 16.1}}},
}

// tapeOneOp builds a tape computing op on fresh inputs. A constant
// exponent is used for OpPowConst.
func tapeOneOp(op Op, pt []float64) *Tape {
	b := NewBuilder()
	b.SetPos(42)
	if op == OpPowConst {
		return b.Tape(b.Binary(OpPowConst, b.Input(), b.Const(pt[1])))
	}
	args := make([]Slot, len(pt))
	for i := range args {
		args[i] = b.Input()
	}
	if op == OpSquare {
		return b.Tape(b.Binary(OpPow, args[0], b.Const(2)))
	}
	return b.Tape(b.Call(op, args...))
}

func TestTapeOpsAgainstFD(t *testing.T) {
	seen := map[Op]bool{}
	for _, c := range tapeOpCases {
		seen[c.op] = true
		for _, pt := range c.pts {
			tp := tapeOneOp(c.op, pt)
			x := slices.Clone(pt)
			if c.op == OpPowConst {
				x = x[:1]
			}
			// The value against the reference definition.
			var y, z float64
			if len(pt) > 1 {
				y = pt[1]
			}
			if len(pt) > 2 {
				z = pt[2]
			}
			want := evalOp(c.op, pt[0], y, z)
			g := make([]float64, len(x))
			got, err := tp.Gradient(g, x, 0)
			if err != nil {
				t.Errorf("%v%v: %v", c.op, pt, err)
				continue
			}
			if got != want {
				t.Errorf("%v%v = %v, want %v", c.op, pt, got, want)
			}
			// Reverse mode against gonum central differences.
			ref := tapeFD(tapeFunc(tp, 0), x, 1)
			for j := range g {
				if !scalar.EqualWithinAbsOrRel(g[j], ref[j], 1e-7*math.Max(1, math.Abs(got)), 1e-6) {
					t.Errorf("%v%v: d/dx%d = %.10g, fd %.10g", c.op, pt, j, g[j], ref[j])
				}
			}
			// The batched passes agree with the scalar ones.
			const n = 3
			xs := make([]float64, 0, n*len(x))
			for s := 0; s < n; s++ {
				xs = append(xs, x...)
			}
			out, gs := make([]float64, n), make([]float64, n*len(x))
			if err := tp.GradientBatch(out, gs, xs, n, 0); err != nil {
				t.Errorf("%v%v batched: %v", c.op, pt, err)
				continue
			}
			for s := 0; s < n; s++ {
				if out[s] != got || !slices.Equal(gs[s*len(x):(s+1)*len(x)], g) {
					t.Errorf("%v%v batched sample %d: %v %v, scalar %v %v", c.op, pt, s, out[s], gs[s*len(x):(s+1)*len(x)], got, g)
				}
			}
		}
	}
	for op := OpAdd; op < opArg; op++ {
		if !seen[op] {
			t.Errorf("no derivative check for %v", op)
		}
	}
}

// The conventions at kinks and ties (Op docs).
func TestTapeConventions(t *testing.T) {
	tests := []struct {
		op   Op
		x    []float64
		want []float64 // gradient
	}{
		{OpAbs, []float64{0}, []float64{0}},            // subgradient 0 at 0
		{OpMin, []float64{2, 2}, []float64{1, 0}},      // tie: first argument
		{OpMax, []float64{2, 2}, []float64{1, 0}},      // tie: first argument
		{OpIf, []float64{1, 5, 6}, []float64{0, 1, 0}}, // branch taken; cond gets 0
		{OpIf, []float64{0, 5, 6}, []float64{0, 0, 1}},
		{OpFloor, []float64{2.5}, []float64{0}},
		{OpCeil, []float64{2.5}, []float64{0}},
		{OpRound, []float64{2.5}, []float64{0}},
		{OpLt, []float64{1, 2}, []float64{0, 0}},
		{OpPow, []float64{0, 2}, []float64{0, 0}}, // ∂/∂y at x = 0 is its limit 0
		{OpPow, []float64{0, 1}, []float64{1, 0}},
		{OpSqrt, []float64{4}, []float64{0.25}},
	}
	for _, tc := range tests {
		tp := tapeOneOp(tc.op, tc.x)
		g := make([]float64, len(tc.x))
		if _, err := tp.Gradient(g, tc.x, 0); err != nil {
			t.Errorf("%v%v: %v", tc.op, tc.x, err)
			continue
		}
		if !slices.Equal(g, tc.want) {
			t.Errorf("%v%v: gradient %v, want %v", tc.op, tc.x, g, tc.want)
		}
	}

	// A negative base to a variable integer power has a value but no
	// derivative in the power.
	tp := tapeOneOp(OpPow, []float64{-2, 3})
	var de *DomainError
	if v, err := tp.Gradient(make([]float64, 2), []float64{-2, 3}, 0); v != -8 || !errors.As(err, &de) || !de.Reverse || de.Msg != "x^y has no derivative in y for a negative x (-2)" {
		t.Errorf("(-2)^y at y = 3: %v %v", v, err)
	}

	// Variadic min folds left, so a three-way tie credits the first.
	b := NewBuilder()
	x, y, z := b.Input(), b.Input(), b.Input()
	tp = b.Tape(b.Fold(OpMin, x, y, z))
	g := make([]float64, 3)
	if v, err := tp.Gradient(g, []float64{1, 1, 1}, 0); err != nil || v != 1 || !slices.Equal(g, []float64{1, 0, 0}) {
		t.Errorf("min(1,1,1): %v %v %v", v, g, err)
	}
}

// tapeComposite builds
//
//	f = exp(sin(x0) x1) / (1 + x2²) + x0 x1 / x2 + sqrt(x0 + x2) ln(x1)
func tapeComposite() *Tape {
	b := NewBuilder()
	x0, x1, x2 := b.Input(), b.Input(), b.Input()
	e := b.Unary(OpExp, b.Binary(OpMul, b.Unary(OpSin, x0), x1))
	d := b.Binary(OpAdd, b.Const(1), b.Binary(OpPow, x2, b.Const(2)))
	f := b.Binary(OpAdd, b.Binary(OpDiv, e, d), b.Binary(OpDiv, b.Binary(OpMul, x0, x1), x2))
	f = b.Binary(OpAdd, f, b.Binary(OpMul, b.Unary(OpSqrt, b.Binary(OpAdd, x0, x2)), b.Unary(OpLn, x1)))
	return b.Tape(f)
}

func tapeCompositeC(x []complex128) complex128 {
	return cmplx.Exp(cmplx.Sin(x[0])*x[1])/(1+x[2]*x[2]) + x[0]*x[1]/x[2] + cmplx.Sqrt(x[0]+x[2])*cmplx.Log(x[1])
}

// Complex step: f'(x) = Im f(x + ih)/h with no cancellation, exact to
// rounding for h = 1e-20. Reference: W. Squire and G. Trapp, Using complex
// variables to estimate derivatives of real functions, SIAM Review 40(1),
// 1998.
func TestTapeComplexStep(t *testing.T) {
	tp := tapeComposite()
	for _, x := range [][]float64{{0.7, 1.3, 2.1}, {-0.4, 3, 0.9}, {2, 0.5, 5}} {
		g := make([]float64, 3)
		if _, err := tp.Gradient(g, x, 0); err != nil {
			t.Fatal(err)
		}
		const h = 1e-20
		for j := range x {
			xc := make([]complex128, 3)
			for i := range x {
				xc[i] = complex(x[i], 0)
			}
			xc[j] += complex(0, h)
			want := imag(tapeCompositeC(xc)) / h
			if !scalar.EqualWithinAbsOrRel(g[j], want, 1e-14, 1e-13) {
				t.Errorf("x=%v d/dx%d = %.17g, complex step %.17g", x, j, g[j], want)
			}
		}
	}
}

// Taylor test (common practice): the first-order remainder
// |f(x + h d) - f(x) - h ∇f·d| is O(h²), so it falls by about 4 when h
// halves; a wrong gradient leaves an O(h) remainder that halves.
func TestTapeTaylor(t *testing.T) {
	tp := tapeComposite()
	x := []float64{0.7, 1.3, 2.1}
	d := []float64{0.3, -0.8, 0.5}
	g := make([]float64, 3)
	f0, err := tp.Gradient(g, x, 0)
	if err != nil {
		t.Fatal(err)
	}
	gd := g[0]*d[0] + g[1]*d[1] + g[2]*d[2]
	var prev float64
	for k, h := 0, 1e-2; k < 6; k, h = k+1, h/2 {
		xh := []float64{x[0] + h*d[0], x[1] + h*d[1], x[2] + h*d[2]}
		fh, err := tp.Eval(xh, 0)
		if err != nil {
			t.Fatal(err)
		}
		r := math.Abs(fh - f0 - h*gd)
		if k > 0 {
			if ratio := prev / r; ratio < 3.6 || ratio > 4.4 {
				t.Errorf("h=%g: remainder ratio %.3f, want about 4", h, ratio)
			}
		}
		prev = r
	}
}

// rexpr is a random expression tree for the property test.
type rexpr struct {
	op   Op
	args []*rexpr
	in   int     // OpInput
	c    float64 // OpConst
}

func (e *rexpr) eval(x []float64) float64 {
	switch e.op {
	case OpInput:
		return x[e.in]
	case OpConst:
		return e.c
	}
	var v [3]float64
	for i, a := range e.args {
		v[i] = a.eval(x)
	}
	return evalOp(e.op, v[0], v[1], v[2])
}

// evalChecked evaluates e as the model language means it, the branch
// an if does not take left out, and reports whether every value it met
// was finite.
func (e *rexpr) evalChecked(x []float64) (float64, bool) {
	switch e.op {
	case OpInput:
		return x[e.in], true
	case OpConst:
		return e.c, finite(e.c)
	case OpIf:
		c, ok := e.args[0].evalChecked(x)
		if !ok {
			return c, false
		}
		if c != 0 {
			return e.args[1].evalChecked(x)
		}
		return e.args[2].evalChecked(x)
	}
	var v [3]float64
	for i, a := range e.args {
		var ok bool
		if v[i], ok = a.evalChecked(x); !ok {
			return v[i], false
		}
	}
	r := evalOp(e.op, v[0], v[1], v[2])
	return r, finite(r)
}

func (e *rexpr) build(b *Builder, in []Slot) Slot {
	switch e.op {
	case OpInput:
		return in[e.in]
	case OpConst:
		return b.Const(e.c)
	}
	args := make([]Slot, len(e.args))
	for i, a := range e.args {
		args[i] = a.build(b, in)
	}
	return b.Call(e.op, args...)
}

// rgen draws random expressions that mostly stay inside their domains.
type rgen struct {
	rng *rand.Rand
	nIn int
}

var rgenOps = []Op{
	OpAdd, OpSub, OpMul, OpDiv, OpPow, OpNeg, OpSqrt, OpExp, OpLn, OpLog10, OpAbs,
	OpFloor, OpCeil, OpRound, OpSin, OpCos, OpTan, OpAsin, OpAcos, OpAtan, OpMin, OpMax,
	OpLt, OpLe, OpGt, OpGe, OpEq, OpNe, OpAnd, OpOr, OpNot, OpIf,
	OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform,
	OpLearn, OpLearnTotal,
}

func (g *rgen) leaf() *rexpr {
	if g.rng.IntN(3) == 0 {
		c := math.Round(g.rng.Float64()*60-30) / 10
		if g.rng.IntN(4) == 0 {
			c = float64(g.rng.IntN(4))
		}
		return &rexpr{op: OpConst, c: c}
	}
	return &rexpr{op: OpInput, in: g.rng.IntN(g.nIn)}
}

func node(op Op, args ...*rexpr) *rexpr { return &rexpr{op: op, args: args} }
func kon(c float64) *rexpr              { return &rexpr{op: OpConst, c: c} }

// positive maps e to a positive value most of the time: |e| + 0.5.
func (g *rgen) positive(e *rexpr) *rexpr {
	if g.rng.IntN(10) < 8 {
		return node(OpAdd, node(OpAbs, e), kon(0.5))
	}
	return e
}

// squash maps e into (-1, 1): e / (1 + |e|).
func squash(e *rexpr) *rexpr {
	return node(OpDiv, e, node(OpAdd, kon(1), node(OpAbs, e)))
}

func (g *rgen) expr(depth int) *rexpr {
	if depth == 0 || g.rng.IntN(5) == 0 {
		return g.leaf()
	}
	op := rgenOps[g.rng.IntN(len(rgenOps))]
	sub := func() *rexpr { return g.expr(depth - 1) }
	switch op {
	case OpDiv:
		return node(op, sub(), g.positive(sub()))
	case OpPow:
		if g.rng.IntN(2) == 0 {
			return node(op, sub(), kon(float64(g.rng.IntN(5)-1)))
		}
		return node(op, g.positive(sub()), node(OpMul, squash(sub()), kon(2)))
	case OpSqrt, OpLn, OpLog10:
		return node(op, g.positive(sub()))
	case OpExp:
		return node(op, node(OpMul, squash(sub()), kon(3)))
	case OpTan:
		return node(op, squash(sub()))
	case OpAsin, OpAcos:
		return node(op, node(OpMul, squash(sub()), kon(0.95)))
	case OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform:
		rate := node(OpAdd, kon(0.05), node(OpMul, squash(sub()), kon(0.1)))
		n := node(OpAdd, kon(1), node(OpAbs, sub()))
		return node(op, rate, n)
	case OpLearn, OpLearnTotal:
		rate := node(OpAdd, kon(0.8), node(OpMul, squash(sub()), kon(0.15)))
		k := node(OpAdd, kon(1), node(OpMul, node(OpAbs, sub()), kon(5)))
		return node(op, sub(), rate, k)
	}
	args := make([]*rexpr, op.Arity())
	for i := range args {
		args[i] = sub()
	}
	return node(op, args...)
}

// tapeDecisions records, for every node, the side of each kink or step
// it sits on (the sign of an abs argument, which argument a min or max
// takes, the value of a step op), to tell whether a finite-difference
// stencil crossed one.
func tapeDecisions(tp *Tape, dst []float64) []float64 {
	dst = dst[:0]
	p := tp.p
	v := tp.vals
	for k := p.start; k < len(p.ops); k++ {
		x, y := v[p.a[k]], v[p.b[k]]
		switch op := p.ops[k]; {
		case op == OpAbs:
			dst = append(dst, b2f(x > 0))
		case op == OpMin:
			dst = append(dst, b2f(x <= y))
		case op == OpMax:
			dst = append(dst, b2f(x >= y))
		case op.IsStep():
			dst = append(dst, v[k])
		}
	}
	return dst
}

// The property test: 1,500 random formulas through the Builder; the
// forward value against direct evaluation of the tree, and the reverse
// gradient against gonum central differences, with a tolerance that
// accounts for the finite differences' own error.
// tape records e over nIn inputs, its nodes at position pos.
func (e *rexpr) tape(nIn int, pos int32) *Tape {
	b := NewBuilder()
	in := make([]Slot, nIn)
	for i := range in {
		in[i] = b.Input()
	}
	b.SetPos(pos)
	return b.Tape(e.build(b, in))
}

func TestTapeRandomFormulas(t *testing.T) {
	const total = 1500
	const nIn = 3
	g := &rgen{rng: rand.New(rand.NewPCG(2024, 7)), nIn: nIn}
	var checked, domain, kinks, huge int
	grad := make([]float64, nIn)
	for f := 0; f < total; f++ {
		e := g.expr(4)
		tp := e.tape(nIn, int32(f))
		x := make([]float64, nIn)
		for i := range x {
			x[i] = math.Round((g.rng.Float64()*6-3)*1000) / 1000
		}

		want := e.eval(x)
		_, ok := e.evalChecked(x)
		got, err := tp.Gradient(grad, x, 0)
		var de *DomainError
		if fwdErr := errors.As(err, &de) && !de.Reverse; fwdErr == ok {
			t.Errorf("formula %d at %v: tape error %v, but direct evaluation finite = %v", f, x, err, ok)
		}
		if err != nil {
			if de == nil {
				t.Fatalf("formula %d: %v is not a *DomainError", f, err)
			}
			if de.Pos != int32(f) {
				t.Errorf("formula %d: error at pos %d", f, de.Pos)
			}
			domain++
			continue
		}
		if !scalar.EqualWithinAbsOrRel(got, want, 1e-300, 1e-14) {
			t.Errorf("formula %d: tape %v, direct %v", f, got, want)
		}

		// Scale of the computation, for the rounding part of the
		// tolerance.
		var scale float64
		for _, v := range tp.vals {
			if finite(v) {
				scale = math.Max(scale, math.Abs(v))
			}
		}
		if scale > 1e8 {
			huge++
			continue
		}

		// Skip stencils that cross a kink or a step.
		base := tapeDecisions(tp, nil)
		crossed := false
		var dec []float64
		for j := range x {
			h := 2e-6 * math.Max(1, math.Abs(x[j]))
			for _, s := range []float64{-h, h} {
				xx := slices.Clone(x)
				xx[j] += s
				if _, err := tp.Eval(xx, 0); err != nil {
					crossed = true
					break
				}
				dec = tapeDecisions(tp, dec)
				if !slices.Equal(dec, base) {
					crossed = true
					break
				}
			}
		}
		if crossed {
			kinks++
			continue
		}

		fdg := tapeFD(tapeFunc(tp, 0), x, 1)
		fd2 := tapeFD(tapeFunc(tp, 0), x, 2)
		for j := range x {
			h := 1e-6 * math.Max(1, math.Abs(x[j]))
			// Truncation (Richardson estimate from steps h and 2h) plus
			// rounding (machine epsilon times the scale over h).
			tol := 1e-6*(math.Abs(grad[j])+math.Abs(fdg[j])) + 2*math.Abs(fdg[j]-fd2[j]) + 200*2.2e-16*scale/h + 1e-9
			if math.Abs(grad[j]-fdg[j]) > tol {
				t.Errorf("formula %d at %v: d/dx%d = %.10g, fd %.10g (tol %.2g)", f, x, j, grad[j], fdg[j], tol)
			}
		}
		checked++

		// The batched passes agree with the scalar ones on a few points.
		if f%5 == 0 {
			tapeBatchAgrees(t, tp, x, f)
		}
	}
	t.Logf("%d formulas: %d gradients checked, %d domain errors, %d near a kink or step, %d badly scaled", total, checked, domain, kinks, huge)
	if checked < 1000 {
		t.Errorf("only %d of %d formulas checked", checked, total)
	}
}

// tapeBatchAgrees checks that ForwardBatch and GradientBatch match Eval
// and Gradient on 300 samples near x (more than a block, so the last
// block is partial).
func tapeBatchAgrees(t *testing.T, tp *Tape, x []float64, f int) {
	t.Helper()
	nIn := len(x)
	const n = 300
	xs := make([]float64, n*nIn)
	for s := 0; s < n; s++ {
		for j := range x {
			xs[s*nIn+j] = x[j] * (1 + 1e-4*float64(s%7-3))
		}
	}
	out := make([]float64, n)
	grads := make([]float64, n*nIn)
	errB := tp.GradientBatch(out, grads, xs, n, 0)
	outF := make([]float64, n)
	errF := tp.ForwardBatch(outF, xs, n, 0)
	g := make([]float64, nIn)
	for s := 0; s < n; s++ {
		v, err := tp.Gradient(g, xs[s*nIn:(s+1)*nIn], 0)
		if err != nil {
			var de *DomainError
			if errB == nil || !errors.As(errB, &de) || de.Sample > s {
				t.Errorf("formula %d sample %d: scalar %v, batched %v", f, s, err, errB)
			}
			return
		}
		if errB != nil || errF != nil {
			var de *DomainError
			if errors.As(errB, &de) && de.Sample == s {
				t.Errorf("formula %d sample %d: batched error %v, scalar none", f, s, errB)
				return
			}
		}
		if out[s] != v || outF[s] != v || !slices.Equal(grads[s*nIn:(s+1)*nIn], g) {
			t.Errorf("formula %d sample %d: batched %v %v %v, scalar %v %v", f, s, out[s], outF[s], grads[s*nIn:(s+1)*nIn], v, g)
			return
		}
	}
}

func TestTapeBuilderSimplifies(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	one, zero, negZero := b.Const(1), b.Const(0), b.Const(math.Copysign(0, -1))
	for _, tc := range []struct {
		name string
		got  Slot
		want Slot
	}{
		{"x*1", b.Binary(OpMul, x, one), x},
		{"1*x", b.Binary(OpMul, one, x), x},
		{"x+(-0)", b.Binary(OpAdd, x, negZero), x},
		{"(-0)+x", b.Binary(OpAdd, negZero, x), x},
		{"x-0", b.Binary(OpSub, x, zero), x},
		{"x/1", b.Binary(OpDiv, x, one), x},
		{"x^1", b.Binary(OpPow, x, one), x},
		{"--x", b.Unary(OpNeg, b.Unary(OpNeg, x)), x},
		{"shared constant", b.Const(2.5), b.Const(2.5)},
		{"shared sqrt(x)", b.Unary(OpSqrt, x), b.Unary(OpSqrt, x)},
		{"folded 2*3+1", b.Binary(OpAdd, b.Binary(OpMul, b.Const(2), b.Const(3)), one), b.Const(7)},
		{"folded min(4,3,5)", b.Fold(OpMin, b.Const(4), b.Const(3), b.Const(5)), b.Const(3)},
	} {
		if tc.got != tc.want {
			t.Errorf("%s: slot %d, want %d", tc.name, tc.got, tc.want)
		}
	}
	if s := b.Binary(OpMul, x, zero); s == zero {
		t.Error("x*0 folded to 0; it must stay to report a non-finite x")
	}
	// Signed zeros (IEEE 754): (−0) + (+0) = +0 and (+0) − (+0) = +0, so
	// x + 0, 0 + x and x − (−0) must stay, or a map built of loop nodes
	// and the same map built of scalar operations differ in the sign of
	// a zero (found by FuzzEvalPaths); (−0) − x is −x to the bit.
	for _, tc := range []struct {
		name string
		got  Slot
	}{
		{"x+0", b.Binary(OpAdd, x, zero)},
		{"0+x", b.Binary(OpAdd, zero, x)},
		{"x-(-0)", b.Binary(OpSub, x, negZero)},
		{"0-x", b.Binary(OpSub, zero, x)},
	} {
		if tc.got == x || b.nodes[tc.got].op == OpNeg {
			t.Errorf("%s folded; it is not exact at a zero x", tc.name)
		}
	}
	if s := b.Binary(OpSub, negZero, x); b.nodes[s].op != OpNeg {
		t.Errorf("(-0)-x is %v, want OpNeg", b.nodes[s].op)
	}
	if s := b.Binary(OpPow, x, b.Const(2)); b.nodes[s].op != OpSquare {
		t.Errorf("x^2 is %v, want OpSquare", b.nodes[s].op)
	}
	if s := b.Binary(OpPow, x, b.Const(3)); b.nodes[s].op != OpPowConst {
		t.Errorf("x^3 is %v, want OpPowConst", b.nodes[s].op)
	}
	// A constant expression with no finite value stays a node and fails
	// at evaluation, with its position.
	b.SetPos(77)
	bad := b.Unary(OpLn, b.Const(-1))
	if _, ok := b.IsConst(bad); ok {
		t.Fatal("ln(-1) folded to a constant")
	}
	tp := b.Tape(b.Binary(OpAdd, x, bad))
	var de *DomainError
	if err := tp.Forward([]float64{1}); !errors.As(err, &de) || de.Pos != 77 || de.Msg != "ln of a negative number (-1)" {
		t.Errorf("ln(-1): %v", err)
	}

	// Unused nodes are dropped; inputs keep their numbers.
	b = NewBuilder()
	x0, x1, x2 := b.Input(), b.Input(), b.Input()
	b.Unary(OpExp, x0) // unused
	tp = b.Tape(b.Binary(OpMul, x2, b.Const(3)))
	if tp.Len() != 5 || tp.NumInputs() != 3 {
		t.Errorf("tape has %d nodes and %d inputs, want 5 and 3", tp.Len(), tp.NumInputs())
	}
	_ = x1
	g := make([]float64, 3)
	if v, err := tp.Gradient(g, []float64{1, 2, 4}, 0); err != nil || v != 12 || !slices.Equal(g, []float64{0, 0, 3}) {
		t.Errorf("3*x2: %v %v %v", v, g, err)
	}
}

func TestTapeOutputsThatAreInputsOrConstants(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	tp := b.Tape(x, b.Const(5), b.Binary(OpMul, x, x))
	if err := tp.Forward([]float64{3}); err != nil {
		t.Fatal(err)
	}
	if tp.Output(0) != 3 || tp.Output(1) != 5 || tp.Output(2) != 9 {
		t.Errorf("outputs %v %v %v", tp.Output(0), tp.Output(1), tp.Output(2))
	}
	for i, want := range []float64{1, 0, 6} {
		g := tp.Reverse(make([]float64, 1), i)
		if g[0] != want {
			t.Errorf("output %d: gradient %v, want %v", i, g[0], want)
		}
	}
	out, grads := make([]float64, 2), make([]float64, 2)
	for i, want := range []float64{3, 5, 9} {
		if err := tp.GradientBatch(out, grads, []float64{3, 3}, 2, i); err != nil || out[1] != want {
			t.Errorf("batched output %d: %v %v", i, out, err)
		}
	}
}

// StepOps and InputDeps trace through both branches of an if.
func TestTapeStepOpsAndInputDeps(t *testing.T) {
	b := NewBuilder()
	x, y, z := b.Input(), b.Input(), b.Input()
	b.SetPos(10)
	fl := b.Unary(OpFloor, x)
	b.SetPos(20)
	smooth := b.Binary(OpMul, x, y)
	b.SetPos(30)
	cond := b.Binary(OpGt, x, y)
	b.SetPos(40)
	sel := b.Call(OpIf, cond, smooth, fl)
	b.SetPos(50)
	tp := b.Tape(sel, smooth, b.Binary(OpAdd, smooth, fl), b.Unary(OpExp, z), fl)
	for i, want := range [][]int32{{10, 30, 40}, nil, {10}, nil, {10}} {
		if got := tp.StepOps(i); !slices.Equal(got, want) {
			t.Errorf("StepOps(%d) = %v, want %v", i, got, want)
		}
	}
	for i, want := range [][]int{{0, 1}, {0, 1}, {0, 1}, {2}, {0}} {
		if got := tp.InputDeps(i); !slices.Equal(got, want) {
			t.Errorf("InputDeps(%d) = %v, want %v", i, got, want)
		}
	}
}

// Each domain error names the operation's position and operands.
func TestTapeDomainErrors(t *testing.T) {
	tests := []struct {
		name string
		op   Op
		x    []float64
		msg  string
	}{
		{"ln", OpLn, []float64{-3}, "ln of a negative number (-3)"},
		{"ln0", OpLn, []float64{0}, "ln of zero"},
		{"log10", OpLog10, []float64{-2}, "log10 of a negative number (-2)"},
		{"sqrt", OpSqrt, []float64{-1}, "square root of a negative number (-1)"},
		{"div", OpDiv, []float64{1, 0}, "division by zero"},
		{"div0/0", OpDiv, []float64{0, 0}, "division by zero"},
		{"asin", OpAsin, []float64{1.5}, "asin of a number outside [-1, 1] (1.5)"},
		{"acos", OpAcos, []float64{-2}, "acos of a number outside [-1, 1] (-2)"},
		{"pow", OpPow, []float64{-2, 0.5}, "negative number (-2) raised to a non-integer power (0.5)"},
		{"powc", OpPowConst, []float64{-8, 1.0 / 3}, "negative number (-8) raised to a non-integer power (0.333333)"},
		{"pow0", OpPow, []float64{0, -1}, "zero raised to a negative power (-1)"},
		{"exp", OpExp, []float64{1000}, "overflow to +Inf"},
		{"mul", OpMul, []float64{1e200, -1e200}, "overflow to -Inf"},
		{"growth", OpGrowth, []float64{-1.5, 3}, "growth: interest rate must be greater than -1 (-100%), got -1.5"},
		{"recovery", OpRecovery, []float64{0.1, 0}, "recovery: undefined for n = 0 (division by zero)"},
		{"learn k", OpLearn, []float64{100, 0.8, 0.5}, "learn: unit number must be at least 1, got 0.5"},
		{"learn rate", OpLearnTotal, []float64{100, -0.8, 2}, "learn_total: learning rate must be positive, got -0.8"},
	}
	for _, tc := range tests {
		tp := tapeOneOp(tc.op, tc.x)
		x := tc.x
		if tc.op == OpPowConst {
			x = x[:1]
		}
		for _, run := range []struct {
			name string
			f    func() error
		}{
			{"Forward", func() error { return tp.Forward(x) }},
			{"Gradient", func() error { _, err := tp.Gradient(make([]float64, len(x)), x, 0); return err }},
		} {
			err := run.f()
			var de *DomainError
			if !errors.As(err, &de) {
				t.Errorf("%s %s: error %v, want a *DomainError", tc.name, run.name, err)
				continue
			}
			if de.Pos != 42 || de.Op != tc.op || de.Msg != tc.msg || de.Sample != -1 {
				t.Errorf("%s %s: %+v, want pos 42, op %v, %q", tc.name, run.name, de, tc.op, tc.msg)
			}
			if len(de.Args) != len(tc.x) || de.Args[0] != tc.x[0] {
				t.Errorf("%s %s: args %v, want %v", tc.name, run.name, de.Args, tc.x)
			}
		}
	}
}

// The error is reported where the NaN or Inf arose, even when a later
// operation turns it back into a finite number.
func TestTapeDomainErrorOrigin(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	b.SetPos(1)
	e := b.Unary(OpExp, x) // overflows for x = 1000
	b.SetPos(2)
	inv := b.Binary(OpDiv, b.Const(1), e) // 1/Inf = 0
	b.SetPos(3)
	tp := b.Tape(b.Binary(OpAdd, inv, b.Const(1)))
	var de *DomainError
	if err := tp.Forward([]float64{1000}); !errors.As(err, &de) || de.Pos != 1 || de.Msg != "overflow to +Inf" {
		t.Errorf("1/exp(1000): %v", err)
	}
	if err := tp.Forward([]float64{math.NaN()}); !errors.As(err, &de) || de.Op != OpInput || de.Msg != "input 0 is NaN" {
		t.Errorf("NaN input: %v", err)
	}

	// A comparison or a min does not hide a NaN either.
	b = NewBuilder()
	x = b.Input()
	b.SetPos(5)
	l := b.Unary(OpLn, x)
	b.SetPos(6)
	tp = b.Tape(b.Binary(OpMin, l, b.Const(3)), b.Binary(OpLt, l, b.Const(3)))
	for i := 0; i < 2; i++ {
		if _, err := tp.Eval([]float64{-1}, i); !errors.As(err, &de) || de.Pos != 5 {
			t.Errorf("output %d of ln(-1): %v", i, err)
		}
	}
}

// The branch an if does not take may be NaN; the one it takes may not.
func TestTapeIfGuards(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	b.SetPos(3)
	l := b.Unary(OpLn, x)
	b.SetPos(4)
	sq := b.Unary(OpSqrt, x)
	b.SetPos(5)
	tp := b.Tape(b.Call(OpIf, b.Binary(OpGt, x, b.Const(0)), b.Binary(OpAdd, l, sq), b.Const(0)))
	g := make([]float64, 1)
	v, err := tp.Gradient(g, []float64{-2}, 0)
	if err != nil || v != 0 || g[0] != 0 {
		t.Errorf("if(x>0, ln x + sqrt x, 0) at -2: %v %v %v", v, g, err)
	}
	var de *DomainError
	if err := tp.Forward([]float64{0}); err != nil {
		t.Errorf("at 0: %v", err)
	}
	// Batched, the guarded NaNs of some samples do not fail the others.
	xs := []float64{-2, 1, -1, 4}
	out, grads := make([]float64, 4), make([]float64, 4)
	if err := tp.GradientBatch(out, grads, xs, 4, 0); err != nil {
		t.Fatal(err)
	}
	for s, xv := range xs {
		want, wg := 0.0, 0.0
		if xv > 0 {
			want, wg = math.Log(xv)+math.Sqrt(xv), 1/xv+0.5/math.Sqrt(xv)
		}
		if out[s] != want || !scalar.EqualWithinAbsOrRel(grads[s], wg, 1e-15, 1e-15) {
			t.Errorf("sample %d: %v %v, want %v %v", s, out[s], grads[s], want, wg)
		}
	}

	// The taken branch is checked.
	b = NewBuilder()
	x = b.Input()
	b.SetPos(8)
	l = b.Unary(OpLn, x)
	tp = b.Tape(b.Call(OpIf, b.Binary(OpLt, x, b.Const(0)), l, b.Const(0)))
	if err := tp.Forward([]float64{-2}); !errors.As(err, &de) || de.Pos != 8 {
		t.Errorf("if(x<0, ln x, 0) at -2: %v", err)
	}
}

// sqrt at 0 has value 0 and an infinite derivative: an error of the
// reverse pass only where a nonzero adjoint reaches it.
func TestTapeInfiniteDerivative(t *testing.T) {
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	b.SetPos(9)
	s := b.Unary(OpSqrt, x)
	tp := b.Tape(b.Binary(OpMul, s, y), s)
	g := make([]float64, 2)
	// y = 0: the adjoint of sqrt is 0, so nothing is propagated.
	if v, err := tp.Gradient(g, []float64{0, 0}, 0); err != nil || v != 0 || g[0] != 0 || g[1] != 0 {
		t.Errorf("sqrt(x)*y at (0,0): %v %v %v", v, g, err)
	}
	var de *DomainError
	if _, err := tp.Gradient(g, []float64{0, 2}, 0); !errors.As(err, &de) || de.Pos != 9 || !de.Reverse || de.Msg != "derivative of sqrt is infinite at 0" {
		t.Errorf("sqrt(x)*y at (0,2): %v", err)
	}
	// Forward alone is fine.
	if err := tp.Forward([]float64{0, 2}); err != nil {
		t.Errorf("forward: %v", err)
	}
	// Batched: the sample with x = 0 is named.
	xs := []float64{1, 2, 4, 2, 0, 2, 9, 2}
	out, grads := make([]float64, 4), make([]float64, 8)
	if err := tp.GradientBatch(out, grads, xs, 4, 0); !errors.As(err, &de) || de.Sample != 2 || de.Pos != 9 || !de.Reverse {
		t.Errorf("batched: %v", err)
	}
}

// A batched pass names the failing sample, in the first block, in a
// later block, and on a tape long enough to run sample by sample.
func TestTapeBatchDomainErrorSample(t *testing.T) {
	for _, size := range []int{0, 40_000} {
		b := NewBuilder()
		x := b.Input()
		acc := x
		for b.NumInputs() > 0 && len(b.nodes) < size {
			acc = b.Binary(OpSub, b.Binary(OpAdd, acc, b.Const(0.5)), b.Const(0.5))
		}
		b.SetPos(12)
		tp := b.Tape(b.Unary(OpLn, acc))
		for _, bad := range []int{0, 37, 300, 999} {
			const n = 1000
			xs := make([]float64, n)
			for s := range xs {
				xs[s] = 2 + float64(s)
			}
			xs[bad] = -5
			out, grads := make([]float64, n), make([]float64, n)
			var de *DomainError
			if err := tp.ForwardBatch(out, xs, n, 0); !errors.As(err, &de) || de.Sample != bad || de.Pos != 12 || de.Op != OpLn {
				t.Errorf("size %d, ForwardBatch, bad sample %d: %v", tp.Len(), bad, err)
			}
			if err := tp.GradientBatch(out, grads, xs, n, 0); !errors.As(err, &de) || de.Sample != bad || de.Pos != 12 {
				t.Errorf("size %d, GradientBatch, bad sample %d: %v", tp.Len(), bad, err)
			}
			xs[bad] = math.Inf(1)
			if err := tp.ForwardBatch(out, xs, n, 0); !errors.As(err, &de) || de.Sample != bad || de.Op != OpInput {
				t.Errorf("size %d, Inf input in sample %d: %v", tp.Len(), bad, err)
			}
		}
	}
}

func TestTapeBuilderPanics(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	for name, f := range map[string]func(){
		"unary with a binary op": func() { b.Unary(OpAdd, x) },
		"binary with 3 args op":  func() { b.Binary(OpIf, x, x) },
		"foreign slot":           func() { b.Unary(OpExp, Slot(99)) },
		"call wrong arity":       func() { b.Call(OpLearn, x, x) },
		"pow const needs const":  func() { b.Binary(OpPowConst, x, x) },
		"fold of nothing":        func() { b.Fold(OpMin) },
		"input op":               func() { b.Unary(OpInput, x) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

// TestConstantBits checks that a constant keeps its exact bits in the
// builder's 20-byte node (its value is split over two operand fields) and on
// the tape: signed zeros, the smallest subnormal (2^-1074), the largest
// finite value and a third, each as IEEE 754 binary64 defines its bits, and
// NaN and the infinities through IsConst, and that folding reads them back.
func TestConstantBits(t *testing.T) {
	if n := unsafe.Sizeof(bnode{}); n > 20 {
		t.Errorf("a builder node takes %d bytes, want at most 20", n)
	}
	finite := []float64{0, math.Copysign(0, -1), math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64, math.MaxFloat64, 1.0 / 3}
	special := []float64{math.Inf(1), math.Inf(-1), math.Float64frombits(0x7ff8000000000001), math.Float64frombits(0xfff0000000000003)}
	b := NewBuilder()
	x := b.Input()
	var outs []Slot
	for _, v := range append(append([]float64{}, finite...), special...) {
		s := b.Const(v)
		if got, ok := b.IsConst(s); !ok || math.Float64bits(got) != math.Float64bits(v) {
			t.Errorf("IsConst(Const(%#x)) = %#x, %v", math.Float64bits(v), math.Float64bits(got), ok)
		}
	}
	for _, v := range finite {
		outs = append(outs, b.Binary(OpMul, x, b.Const(v)))
	}
	third := b.Binary(OpMul, b.Const(1.0/3), b.Const(3)) // folded from the two nodes' bits
	if got, ok := b.IsConst(third); !ok || got != 1.0/3*3 {
		t.Errorf("1/3 * 3 folded to %v, %v; want %v", got, ok, 1.0/3*3)
	}
	tp := b.Tape(outs...)
	if err := tp.Forward([]float64{1}); err != nil {
		t.Fatal(err)
	}
	for i, v := range finite {
		if got := tp.Output(i); math.Float64bits(got) != math.Float64bits(v) {
			t.Errorf("1 * %v = %#x on the tape, want %#x", v, math.Float64bits(got), math.Float64bits(v))
		}
	}
}

// The builder's identities keep the sign of a zero: x + 0 at x = −0 and
// 0 − x at x = +0 are +0 (IEEE 754 round to nearest), as evaluated.
func TestTapeBuilderSignedZero(t *testing.T) {
	b := NewBuilder()
	x := b.Input()
	tp := b.Tape(b.Binary(OpAdd, x, b.Const(0)), b.Binary(OpSub, b.Const(0), x),
		b.Binary(OpSub, x, b.Const(math.Copysign(0, -1))))
	for i, in := range []float64{math.Copysign(0, -1), 0, math.Copysign(0, -1)} {
		v, err := tp.Eval([]float64{in}, i)
		if err != nil {
			t.Fatal(err)
		}
		if math.Float64bits(v) != 0 {
			t.Errorf("output %d at x = %v: %v, want +0", i, in, v)
		}
	}
}
