package tape

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// hd is a hyper-dual number a + b ε1 + c ε2 + d ε1ε2 with ε1² = ε2² = 0:
// evaluating a formula on hd(x, 1, 0, 0) and hd(y, 0, 1, 0) gives its
// value, both first partials and the exact mixed second partial in d,
// with no step and no truncation error (Fike & Alonso, "The development
// of hyper-dual numbers for exact second-derivative calculations", AIAA
// 2011-886; cited from memory). With both seeds on one variable, d is the second derivative
// in it.
type hd struct{ a, b, c, d float64 }

func hdAdd(x, y hd) hd { return hd{x.a + y.a, x.b + y.b, x.c + y.c, x.d + y.d} }
func hdSub(x, y hd) hd { return hd{x.a - y.a, x.b - y.b, x.c - y.c, x.d - y.d} }
func hdMul(x, y hd) hd {
	return hd{x.a * y.a, x.a*y.b + x.b*y.a, x.a*y.c + x.c*y.a, x.a*y.d + x.b*y.c + x.c*y.b + x.d*y.a}
}

// hdFn applies a scalar function with derivatives f, f', f” at x.a.
func hdFn(x hd, f, f1, f2 float64) hd {
	return hd{f, f1 * x.b, f1 * x.c, f1*x.d + f2*x.b*x.c}
}

func hdInv(x hd) hd        { return hdFn(x, 1/x.a, -1/(x.a*x.a), 2/(x.a*x.a*x.a)) }
func hdDiv(x, y hd) hd     { return hdMul(x, hdInv(y)) }
func hdLog(x hd) hd        { return hdFn(x, math.Log(x.a), 1/x.a, -1/(x.a*x.a)) }
func hdExp(x hd) hd        { e := math.Exp(x.a); return hdFn(x, e, e, e) }
func hdConst(v float64) hd { return hd{a: v} }

// hdPow is x^y = exp(y ln x) for x > 0.
func hdPow(x, y hd) hd { return hdExp(hdMul(y, hdLog(x))) }

// The textbook formulas of the arithmetic-gradient factors and the
// cumulative learning curve, on hyper-dual numbers:
//
//	P/G = ((1+i)^n − i n − 1) / (i² (1+i)^n)
//	A/G = 1/i − n / ((1+i)^n − 1)
//	learn_total = first · Σ_{j=1..k} j^log2(rate), k whole
var hdForms = map[Op]func(x, y, z hd) hd{
	OpGradientPV: func(i, n, _ hd) hd {
		g := hdPow(hdAdd(hdConst(1), i), n)
		num := hdSub(hdSub(g, hdMul(i, n)), hdConst(1))
		return hdDiv(num, hdMul(hdMul(i, i), g))
	},
	OpGradientUniform: func(i, n, _ hd) hd {
		g := hdPow(hdAdd(hdConst(1), i), n)
		return hdSub(hdInv(i), hdDiv(n, hdSub(g, hdConst(1))))
	},
	OpLearnTotal: func(first, rate, k hd) hd {
		b := hdDiv(hdLog(rate), hdConst(math.Ln2))
		s := hdConst(0)
		for j := 1; j <= int(k.a); j++ {
			s = hdAdd(s, hdPow(hdConst(float64(j)), b))
		}
		return hdMul(first, s)
	},
}

// The second derivatives of the factors that second() differences
// numerically, against the exact ones of their textbook formulas on
// hyper-dual numbers, relative 1e-8. learn_total is checked in first and
// rate at whole k, where its sum is the textbook one.
func TestHessianHyperDual(t *testing.T) {
	for _, c := range []struct {
		op  Op
		pts [][]float64
		n   int // arguments differentiated
	}{
		{OpGradientPV, [][]float64{{0.08, 10}, {0.3, 0.7}, {1.5, 40}, {-0.05, 4.5}}, 2},
		{OpGradientUniform, [][]float64{{0.08, 10}, {0.3, 0.7}, {1.5, 40}, {-0.05, 4.5}}, 2},
		{OpLearnTotal, [][]float64{{100, 0.8, 4}, {2.5, 0.9, 12}, {-3, 0.5, 1}, {7, 0.85, 16}}, 2},
	} {
		for _, pt := range c.pts {
			args := [3]float64{}
			copy(args[:], pt)
			h := second(c.op, args[0], args[1], args[2], evalOp(c.op, args[0], args[1], args[2]))
			for j := range c.n {
				for l := range c.n {
					var in [3]hd
					for m := range in {
						in[m] = hd{a: args[m]}
					}
					in[j].b = 1
					in[l].c = 1
					want := hdForms[c.op](in[0], in[1], in[2]).d
					if got := h.at(j, l); !scalar.EqualWithinAbsOrRel(got, want, 1e-9, 1e-8) {
						t.Errorf("%v%v: d2/dx%d dx%d = %.12g, hyper-dual %.12g", c.op, pt, j, l, got, want)
					}
				}
			}
		}
	}
}
