package tape

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// fullHessian returns the Hessian of output i of tp at x from
// Hessian.Vectors with the unit directions, all in one batch, and the
// gradient.
func fullHessian(t *testing.T, tp *Tape, x []float64, i int) (f float64, grad []float64, hs [][]float64, kinks []Kink) {
	t.Helper()
	n := len(x)
	dirs := make([]float64, n*n)
	for j := range n {
		dirs[j*n+j] = 1
	}
	hv := make([]float64, n*n)
	grad = make([]float64, n)
	h := NewHessian(tp)
	f, err := h.Vectors(hv, grad, x, dirs, n, i)
	if err != nil {
		t.Fatalf("Vectors at %v: %v", x, err)
	}
	hs = make([][]float64, n)
	for j := range n {
		hs[j] = hv[j*n : (j+1)*n]
	}
	return f, grad, hs, h.Kinks()
}

// fdHessian returns gonum's central-difference Hessian (diff/fd.Hessian)
// of f at x, refined by one Richardson step (4 H(h/2) - H(h))/3, which
// takes its error from O(h²) to O(h⁴). gonum's step is absolute, so the
// coordinates are scaled by s_j = max(|x_j|, floor) first: f(x + s∘u) is
// differenced in u at u = 0 and the entries divided by s_i s_j.
func fdHessian(f func([]float64) float64, x []float64, step, floor float64) [][]float64 {
	n := len(x)
	s := make([]float64, n)
	for j := range x {
		s[j] = math.Max(math.Abs(x[j]), floor)
	}
	xx := make([]float64, n)
	g := func(u []float64) float64 {
		for j := range u {
			xx[j] = x[j] + s[j]*u[j]
		}
		return f(xx)
	}
	var h1, h2 mat.SymDense
	fd.Hessian(&h1, g, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: step})
	fd.Hessian(&h2, g, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: step / 2})
	out := make([][]float64, n)
	for i := range n {
		out[i] = make([]float64, n)
		for j := range n {
			out[i][j] = (4*h2.At(i, j) - h1.At(i, j)) / 3 / (s[i] * s[j])
		}
	}
	return out
}

// Every operation's second derivatives, through the Hessian-vector pass,
// against gonum fd.Hessian at the points of tapeOpCases.
func TestHessianOpsAgainstFD(t *testing.T) {
	for _, c := range tapeOpCases {
		for _, pt := range c.pts {
			tp := tapeOneOp(c.op, pt)
			x := slices.Clone(pt)
			if c.op == OpPowConst {
				x = x[:1]
			}
			f, grad, hs, kinks := fullHessian(t, tp, x, 0)
			if c.op.IsStep() {
				// Piecewise constant: second derivatives 0, and a kink
				// exactly where the step jumps (some of the points).
				for i := range x {
					for j := range x {
						if hs[i][j] != 0 {
							t.Errorf("%v%v: d2/dx%d dx%d = %v, want 0", c.op, pt, i, j, hs[i][j])
						}
					}
				}
				continue
			}
			if len(kinks) > 0 {
				t.Errorf("%v%v: kinks %v away from any kink", c.op, pt, kinks)
			}
			g0 := make([]float64, len(x))
			if _, err := tp.Gradient(g0, x, 0); err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(grad, g0) {
				t.Errorf("%v%v: gradient %v, Gradient gives %v", c.op, pt, grad, g0)
			}
			ref := fdHessian(tapeFunc(tp, 0), x, 1e-3, 1e-2)
			for i := range x {
				for j := range x {
					tol := 1e-5 * math.Max(1, math.Abs(f)) / (math.Max(1e-2, math.Abs(x[i])) * math.Max(1e-2, math.Abs(x[j])))
					if !scalar.EqualWithinAbsOrRel(hs[i][j], ref[i][j], tol, 1e-5) {
						t.Errorf("%v%v: d2/dx%d dx%d = %.10g, fd.Hessian %.10g", c.op, pt, i, j, hs[i][j], ref[i][j])
					}
				}
			}
		}
	}
}

// closedHessian gives, for an operation, its Hessian by the textbook
// rules of differentiation (common practice), written out here
// independently of second().
var closedHessian = map[Op]func(x, y, z float64) [3][3]float64{
	OpAdd: func(x, y, z float64) [3][3]float64 { return [3][3]float64{} },
	OpSub: func(x, y, z float64) [3][3]float64 { return [3][3]float64{} },
	OpMul: func(x, y, z float64) [3][3]float64 { return [3][3]float64{{0, 1}, {1, 0}} },
	OpDiv: func(x, y, z float64) [3][3]float64 {
		return [3][3]float64{{0, -1 / (y * y)}, {-1 / (y * y), 2 * x / (y * y * y)}}
	},
	OpSquare: func(x, y, z float64) [3][3]float64 { return [3][3]float64{{2}} },
	OpNeg:    func(x, y, z float64) [3][3]float64 { return [3][3]float64{} },
	OpSqrt:   func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-0.25 * math.Pow(x, -1.5)}} },
	OpExp:    func(x, y, z float64) [3][3]float64 { return [3][3]float64{{math.Exp(x)}} },
	OpLn:     func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-1 / (x * x)}} },
	OpLog10:  func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-1 / (x * x * math.Log(10))}} },
	OpSin:    func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-math.Sin(x)}} },
	OpCos:    func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-math.Cos(x)}} },
	OpTan: func(x, y, z float64) [3][3]float64 {
		c := math.Cos(x)
		return [3][3]float64{{2 * math.Sin(x) / (c * c * c)}}
	},
	OpAsin:     func(x, y, z float64) [3][3]float64 { return [3][3]float64{{x * math.Pow(1-x*x, -1.5)}} },
	OpAcos:     func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-x * math.Pow(1-x*x, -1.5)}} },
	OpAtan:     func(x, y, z float64) [3][3]float64 { return [3][3]float64{{-2 * x / ((1 + x*x) * (1 + x*x))}} },
	OpPowConst: func(x, y, z float64) [3][3]float64 { return [3][3]float64{{y * (y - 1) * math.Pow(x, y-2)}} },
	OpPow: func(x, y, z float64) [3][3]float64 {
		l := math.Log(x)
		xy := math.Pow(x, y-1) * (1 + y*l)
		return [3][3]float64{{y * (y - 1) * math.Pow(x, y-2), xy}, {xy, math.Pow(x, y) * l * l}}
	},
	// (1+i)^n (F/P).
	OpGrowth: func(i, n, _ float64) [3][3]float64 {
		G, L := math.Pow(1+i, n), math.Log(1+i)
		in := math.Pow(1+i, n-1) * (1 + n*L)
		return [3][3]float64{{n * (n - 1) * math.Pow(1+i, n-2), in}, {in, G * L * L}}
	},
	// (1+i)^-n (P/F).
	OpDiscount: func(i, n, _ float64) [3][3]float64 {
		D, L := math.Pow(1+i, -n), math.Log(1+i)
		in := math.Pow(1+i, -n-1) * (n*L - 1)
		return [3][3]float64{{n * (n + 1) * math.Pow(1+i, -n-2), in}, {in, D * L * L}}
	},
	OpAnnuityFV: func(i, n, _ float64) [3][3]float64 { return annuityFV2(i, n) },
	OpAnnuityPV: func(i, n, _ float64) [3][3]float64 { return annuityPV2(i, n) },
	OpSinking: func(i, n, _ float64) [3][3]float64 {
		return reciprocal2(((math.Pow(1+i, n) - 1) / i), annuityFV1(i, n), annuityFV2(i, n))
	},
	OpRecovery: func(i, n, _ float64) [3][3]float64 {
		return reciprocal2((1-math.Pow(1+i, -n))/i, annuityPV1(i, n), annuityPV2(i, n))
	},
	// first · k^b, b = log2(rate).
	OpLearn: func(F, r, k float64) [3][3]float64 {
		b := math.Log2(r)
		lk, ln2 := math.Log(k), math.Log(2)
		p := math.Pow(k, b)
		fr := p * lk / (r * ln2)
		fk := b * math.Pow(k, b-1)
		rr := F * lk / ln2 * (p*lk/(ln2*r*r) - p/(r*r))
		rk := F / (r * ln2) * (b*math.Pow(k, b-1)*lk + math.Pow(k, b-1))
		kk := F * b * (b - 1) * math.Pow(k, b-2)
		return [3][3]float64{{0, fr, fk}, {fr, rr, rk}, {fk, rk, kk}}
	},
}

// annuityFV1 and annuityFV2: the gradient and Hessian in (i, n) of
// F = ((1+i)^n - 1)/i by the quotient rule.
func annuityFV1(i, n float64) [2]float64 {
	G, L := math.Pow(1+i, n), math.Log(1+i)
	return [2]float64{n*G/((1+i)*i) - (G-1)/(i*i), G * L / i}
}

func annuityFV2(i, n float64) [3][3]float64 {
	G, L := math.Pow(1+i, n), math.Log(1+i)
	Gi, Gii := n*G/(1+i), n*(n-1)*G/((1+i)*(1+i))
	Gn, Gnn, Gin := G*L, G*L*L, G*(1+n*L)/(1+i)
	ii := Gii/i - 2*Gi/(i*i) + 2*(G-1)/(i*i*i)
	in := Gin/i - Gn/(i*i)
	return [3][3]float64{{ii, in}, {in, Gnn / i}}
}

// annuityPV1 and annuityPV2: the same for P = (1 - (1+i)^-n)/i.
func annuityPV1(i, n float64) [2]float64 {
	D, L := math.Pow(1+i, -n), math.Log(1+i)
	Di, Dn := -n*D/(1+i), -D*L
	return [2]float64{-Di/i - (1-D)/(i*i), -Dn / i}
}

func annuityPV2(i, n float64) [3][3]float64 {
	D, L := math.Pow(1+i, -n), math.Log(1+i)
	Di, Dii := -n*D/(1+i), n*(n+1)*D/((1+i)*(1+i))
	Dn, Dnn, Din := -D*L, D*L*L, D*(n*L-1)/(1+i)
	ii := -Dii/i + 2*Di/(i*i) + 2*(1-D)/(i*i*i)
	in := -Din/i + Dn/(i*i)
	return [3][3]float64{{ii, in}, {in, -Dnn / i}}
}

// reciprocal2 is the Hessian of 1/F: -F_ab/F² + 2 F_a F_b / F³.
func reciprocal2(F float64, g [2]float64, h [3][3]float64) [3][3]float64 {
	var r [3][3]float64
	for a := range 2 {
		for b := range 2 {
			r[a][b] = -h[a][b]/(F*F) + 2*g[a]*g[b]/(F*F*F)
		}
	}
	return r
}

// The second derivatives against the closed forms, where the point is
// away from a limit the closed form cannot take (i = 0 for the series
// factors, whose formulas divide by i). The factors without a closed form
// here (gradient_pv, gradient_uniform, learn_total) are checked against
// gonum fd.Hessian only, in TestHessianOpsAgainstFD.
func TestHessianOpsClosedForms(t *testing.T) {
	for _, c := range tapeOpCases {
		want, ok := closedHessian[c.op]
		if !ok {
			continue
		}
		for _, pt := range c.pts {
			var y, z float64
			if len(pt) > 1 {
				y = pt[1]
			}
			if len(pt) > 2 {
				z = pt[2]
			}
			if y == 0 && c.op >= OpAnnuityPV && c.op <= OpSinking || pt[0] == 0 && c.op >= OpAnnuityPV && c.op <= OpSinking {
				continue
			}
			tp := tapeOneOp(c.op, pt)
			x := slices.Clone(pt)
			if c.op == OpPowConst {
				x = x[:1]
			}
			_, _, hs, _ := fullHessian(t, tp, x, 0)
			w := want(pt[0], y, z)
			rel := 1e-12
			if c.op >= OpAnnuityPV && c.op <= OpSinking {
				rel = 1e-8 // numerical differences of exact derivatives; the closed form loses digits to cancellation near i = 0
			}
			for i := range x {
				for j := range x {
					if !scalar.EqualWithinAbsOrRel(hs[i][j], w[i][j], 1e-12, rel) {
						t.Errorf("%v%v: d2/dx%d dx%d = %.15g, closed form %.15g", c.op, pt, i, j, hs[i][j], w[i][j])
					}
				}
			}
		}
	}
}

// randomTape builds a random formula of nIn inputs from smooth operations
// (and the economy and learning functions), for the comparison with
// gonum fd.Hessian.
func randomTape(r *rand.Rand, nIn, nOps int) *Tape {
	b := NewBuilder()
	slots := make([]Slot, 0, nIn+nOps)
	for range nIn {
		slots = append(slots, b.Input())
	}
	pick := func() Slot {
		// Favour recent slots, so the formula is deep.
		if r.IntN(3) == 0 {
			return slots[r.IntN(len(slots))]
		}
		return slots[max(0, len(slots)-1-r.IntN(4))]
	}
	// bounded maps a slot into (0.5, 1.5): keeps every domain happy.
	bounded := func(s Slot) Slot {
		return b.Binary(OpAdd, b.Const(1), b.Binary(OpMul, b.Const(0.5), b.Unary(OpSin, s)))
	}
	for range nOps {
		x, y := pick(), pick()
		var s Slot
		switch r.IntN(12) {
		case 0:
			s = b.Binary(OpAdd, x, y)
		case 1:
			s = b.Binary(OpSub, x, y)
		case 2, 3:
			s = b.Binary(OpMul, x, y)
		case 4:
			s = b.Binary(OpDiv, x, bounded(y))
		case 5:
			s = b.Unary(OpExp, b.Binary(OpMul, b.Const(0.3), b.Unary(OpSin, x)))
		case 6:
			s = b.Unary(OpLn, bounded(x))
		case 7:
			s = b.Binary(OpPow, bounded(x), bounded(y))
		case 8:
			s = b.Unary(OpSqrt, bounded(x))
		case 9:
			s = b.Call(OpAnnuityPV, b.Binary(OpMul, b.Const(0.05), bounded(x)), b.Binary(OpMul, b.Const(10), bounded(y)))
		case 10:
			s = b.Call(OpLearn, x, b.Binary(OpMul, b.Const(0.8), bounded(y)), b.Binary(OpMul, b.Const(5), bounded(x)))
		case 11:
			s = b.Unary(OpAtan, b.Binary(OpMul, x, y))
		}
		slots = append(slots, s)
	}
	return b.Tape(slots[len(slots)-1])
}

// Mixed partials of random formulas against gonum fd.Hessian (relative
// 1e-5), batched in lanes of various widths.
func TestHessianRandomAgainstFD(t *testing.T) {
	r := rand.New(rand.NewPCG(14, 2))
	for trial := range 100 {
		nIn := 2 + r.IntN(4)
		tp := randomTape(r, nIn, 6+r.IntN(20))
		x := make([]float64, nIn)
		for j := range x {
			x[j] = -1.5 + 3*r.Float64()
		}
		f, _, hs, _ := fullHessian(t, tp, x, 0)
		if math.Abs(f) > 1e6 {
			continue
		}
		ref := fdHessian(tapeFunc(tp, 0), x, 2e-4, 1)
		scale := 0.0
		for i := range x {
			for j := range x {
				scale = math.Max(scale, math.Abs(ref[i][j]))
			}
		}
		for i := range x {
			for j := range x {
				if !scalar.EqualWithinAbsOrRel(hs[i][j], ref[i][j], 1e-5*math.Max(1, scale), 1e-5) {
					t.Errorf("trial %d: d2/dx%d dx%d = %.10g, fd.Hessian %.10g", trial, i, j, hs[i][j], ref[i][j])
				}
			}
		}
		// One direction at a time gives the same products as the batch.
		h := NewHessian(tp)
		for j := range x {
			dir := make([]float64, nIn)
			dir[j] = 1
			hv := make([]float64, nIn)
			if _, err := h.Vectors(hv, nil, x, dir, 1, 0); err != nil {
				t.Fatal(err)
			}
			for i := range x {
				if hv[i] != hs[j][i] {
					t.Errorf("trial %d: one lane H[%d][%d] = %v, batched %v", trial, j, i, hv[i], hs[j][i])
				}
			}
		}
	}
}

// Loop nodes (vectors of eight elements or more) give the same second
// derivatives as the scalar operations they stand for.
func TestHessianLoopsAgreeWithScalarOps(t *testing.T) {
	build := func(loopMin int) *Tape {
		b := NewBuilder()
		b.SetLoopMin(loopMin)
		q := b.VecInput(10)
		pr := b.VecInput(10)
		k := b.Input()
		cost := b.Map(OpMul, q, b.Map(OpExp, b.Map(OpMul, pr, k)))
		s := b.Sum(b.Map(OpSquare, cost))
		d := b.Dot(q, pr)
		m := b.Reduce(OpMax, b.Map(OpMul, pr, q))
		return b.Tape(b.Binary(OpAdd, b.Binary(OpAdd, s, b.Binary(OpMul, d, d)), b.Binary(OpMul, m, k)))
	}
	loops, scalars := build(0), build(1000)
	if len(loops.p.loops) == 0 || len(scalars.p.loops) != 0 {
		t.Fatalf("loop nodes: %d and %d, want some and none", len(loops.p.loops), len(scalars.p.loops))
	}
	x := make([]float64, 21)
	for j := range x {
		x[j] = 0.1 + 0.05*float64(j%7) + 0.01*float64(j)
	}
	_, g1, h1, _ := fullHessian(t, loops, x, 0)
	_, g2, h2, _ := fullHessian(t, scalars, x, 0)
	for i := range x {
		if !scalar.EqualWithinAbsOrRel(g1[i], g2[i], 1e-13, 1e-12) {
			t.Errorf("gradient %d: loops %v, scalar operations %v", i, g1[i], g2[i])
		}
		for j := range x {
			if !scalar.EqualWithinAbsOrRel(h1[i][j], h2[i][j], 1e-13, 1e-12) {
				t.Errorf("H[%d][%d]: loops %v, scalar operations %v", i, j, h1[i][j], h2[i][j])
			}
		}
	}
}

// Kinks on the output's path are reported where the output is not twice
// differentiable, and nowhere else.
func TestHessianKinks(t *testing.T) {
	for _, c := range []struct {
		name string
		mk   func(b *Builder, x, y Slot) Slot
		at   []float64
		want string // a part of the message, "" for none
	}{
		{"abs at 0", func(b *Builder, x, y Slot) Slot { return b.Binary(OpMul, b.Unary(OpAbs, x), y) }, []float64{0, 2}, "abs at 0"},
		{"abs away", func(b *Builder, x, y Slot) Slot { return b.Binary(OpMul, b.Unary(OpAbs, x), y) }, []float64{1, 2}, ""},
		{"max tie", func(b *Builder, x, y Slot) Slot { return b.Binary(OpMax, x, y) }, []float64{3, 3}, "max of two equal values"},
		{"floor jump", func(b *Builder, x, y Slot) Slot { return b.Binary(OpMul, b.Unary(OpFloor, x), y) }, []float64{4, 1}, "floor at a whole number"},
		{"if flips", func(b *Builder, x, y Slot) Slot {
			return b.Call(OpIf, b.Binary(OpGt, x, y), b.Binary(OpMul, x, x), y)
		}, []float64{2, 2}, "comparison 2 > 2"},
		{"if away", func(b *Builder, x, y Slot) Slot {
			return b.Call(OpIf, b.Binary(OpGt, x, y), b.Binary(OpMul, x, x), y)
		}, []float64{2, 1}, ""},
		{"kink in the branch not taken", func(b *Builder, x, y Slot) Slot {
			return b.Call(OpIf, b.Binary(OpGt, y, b.Const(0)), y, b.Unary(OpAbs, x))
		}, []float64{0, 1}, ""},
		{"min of a vector with a tie", func(b *Builder, x, y Slot) Slot {
			v := b.Map(OpAdd, b.VecConst([]float64{2, 1, 3, 4, 5, 6, 7, 8, 1}), x)
			return b.Binary(OpMul, b.Reduce(OpMin, v), y)
		}, []float64{0, 1}, "min of a vector with a tie"},
	} {
		b := NewBuilder()
		b.SetPos(7)
		x, y := b.Input(), b.Input()
		tp := b.Tape(c.mk(b, x, y))
		_, _, _, kinks := fullHessian(t, tp, c.at, 0)
		switch {
		case c.want == "" && len(kinks) > 0:
			t.Errorf("%s: kinks %v, want none", c.name, kinks)
		case c.want != "" && (len(kinks) == 0 || !strings.Contains(kinks[0].Msg, c.want)):
			t.Errorf("%s: kinks %v, want %q", c.name, kinks, c.want)
		case c.want != "" && kinks[0].Pos != 7:
			t.Errorf("%s: kink at position %d, want 7", c.name, kinks[0].Pos)
		}
	}
}

// An unbounded second derivative reached by a nonzero adjoint is a domain
// error at its operation.
func TestHessianDomainError(t *testing.T) {
	b := NewBuilder()
	b.SetPos(3)
	x := b.Input()
	tp := b.Tape(b.Binary(OpPowConst, x, b.Const(1.5))) // x^1.5: second derivative 0.75/sqrt(x), unbounded at 0
	h := NewHessian(tp)
	hv := make([]float64, 1)
	_, err := h.Vectors(hv, nil, []float64{0}, []float64{1}, 1, 0)
	var de *DomainError
	if !errorsAs(err, &de) || de.Pos != 3 || de.Msg != "second derivative of x^y is infinite at x = 0 (y = 1.5)" {
		t.Fatalf("x^1.5 at 0: %v, want a domain error at position 3", err)
	}
}

func errorsAs(err error, de **DomainError) bool {
	d, ok := err.(*DomainError)
	if ok {
		*de = d
	}
	return ok
}

// A domain error of the values (ln of a negative number) is the scalar
// pass's error, with its position: the Hessian pass computes values
// itself and defers to Eval for the message.
func TestHessianForwardDomainError(t *testing.T) {
	b := NewBuilder()
	x, y := b.Input(), b.Input()
	b.SetPos(9)
	tp := b.Tape(b.Binary(OpMul, b.Unary(OpLn, x), y))
	h := NewHessian(tp)
	hv := make([]float64, 2)
	_, err := h.Vectors(hv, nil, []float64{-1, 2}, []float64{1, 0}, 1, 0)
	_, want := tp.Eval([]float64{-1, 2}, 0)
	if err == nil || want == nil || err.Error() != want.Error() {
		t.Fatalf("ln(-1): %v, want Eval's %v", err, want)
	}
	// And at a good point afterwards the values are right again.
	f, err := h.Vectors(hv, nil, []float64{math.E, 2}, []float64{1, 0}, 1, 0)
	if err != nil || !scalar.EqualWithinAbsOrRel(f, 2, 1e-15, 1e-15) || !scalar.EqualWithinAbsOrRel(hv[0], -2/(math.E*math.E), 1e-15, 1e-14) || !scalar.EqualWithinAbsOrRel(hv[1], 1/math.E, 1e-15, 1e-14) {
		t.Errorf("ln(e)·2: f %v, H·e1 %v, err %v; want 2, [-2/e², 1/e]", f, hv, err)
	}
}
