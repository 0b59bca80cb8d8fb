package tape

import (
	"fmt"
	"math"
)

// Second derivatives of the operations: the local Hessian of each
// operation, which the Hessian-vector pass (hvp.go) uses with the first
// derivatives of deriv.

// hess is the symmetric local Hessian of an operation of up to three
// arguments x, y, z: xx, xy, xz, yy, yz, zz. Arguments the operation does
// not take get 0.
type hess struct{ xx, xy, xz, yy, yz, zz float64 }

// at returns the entry of row j and column m (0, 1, 2 for x, y, z).
func (h *hess) at(j, m int) float64 {
	if j > m {
		j, m = m, j
	}
	switch j*3 + m {
	case 0:
		return h.xx
	case 1:
		return h.xy
	case 2:
		return h.xz
	case 4:
		return h.yy
	case 5:
		return h.yz
	case 8:
		return h.zz
	}
	return 0
}

// second returns the second partial derivatives of op at (x, y, z), whose
// value is v, under the conventions of deriv: a step, a kink (abs at 0,
// min and max at a tie) and the branch an if takes have second
// derivative 0 on either side, and kink reports where that is not the
// whole truth. The economy factors other than growth and discount, and
// learn_total, are differentiated numerically (secondFD) from their exact
// first derivatives; every other operation has its closed form.
func second(op Op, x, y, z, v float64) (h hess) {
	switch op {
	case OpMul:
		h.xy = 1
	case OpDiv:
		// x/y: d²/dx dy = -1/y², d²/dy² = 2x/y³.
		h.xy = -1 / (y * y)
		h.yy = 2 * v / (y * y)
	case OpPow, OpPowConst:
		// x^y: y(y-1)x^(y-2); x^(y-1)(1 + y ln x); x^y ln²x.
		if y != 0 && y != 1 {
			h.xx = y * (y - 1) * math.Pow(x, y-2)
		}
		if op == OpPow {
			if x == 0 {
				// The limits from the right: x^(y-1)(1 + y ln x) -> 0 for
				// y > 1, unbounded otherwise; x^y ln²x -> 0 for y > 0.
				if !(y > 1) {
					h.xy = math.Inf(1)
				}
			} else {
				l := math.Log(x)
				h.xy = math.Pow(x, y-1) * (1 + y*l)
				h.yy = v * l * l
			}
		}
	case OpSquare:
		h.xx = 2
	case OpSqrt:
		h.xx = -0.25 / (v * v * v)
	case OpExp:
		h.xx = v
	case OpLn:
		h.xx = -1 / (x * x)
	case OpLog10:
		h.xx = -1 / (x * x * math.Ln10)
	case OpSin, OpCos:
		h.xx = -v
	case OpTan:
		h.xx = 2 * v * (1 + v*v)
	case OpAsin, OpAcos:
		// d/dx (1-x²)^(-1/2) = x (1-x²)^(-3/2); acos is its negative.
		w := 1 - x*x
		h.xx = x / (w * math.Sqrt(w))
		if op == OpAcos {
			h.xx = -h.xx
		}
	case OpAtan:
		w := 1 + x*x
		h.xx = -2 * x / (w * w)
	case OpGrowth:
		// g = (1+i)^n: n(n-1) g/(1+i)²; g (1 + n ln(1+i))/(1+i); g ln²(1+i).
		l := math.Log1p(x)
		p := 1 + x
		h.xx = y * (y - 1) * v / (p * p)
		h.xy = v * (1 + y*l) / p
		h.yy = v * l * l
	case OpDiscount:
		// d = (1+i)^-n: n(n+1) d/(1+i)²; d (n ln(1+i) - 1)/(1+i); d ln²(1+i).
		l := math.Log1p(x)
		p := 1 + x
		h.xx = y * (y + 1) * v / (p * p)
		h.xy = v * (y*l - 1) / p
		h.yy = v * l * l
	case OpLearn:
		// first·k^b, b = log2(rate).
		ln2 := math.Ln2
		b := math.Log2(y)
		lk := math.Log(z)
		p := math.Pow(z, b)
		h.xy = p * lk / (y * ln2)
		h.xz = b * p / z
		h.yy = x * p * lk / (y * y * ln2) * (lk/ln2 - 1)
		h.yz = x * p / z * (b*lk + 1) / (y * ln2)
		h.zz = x * b * (b - 1) * p / (z * z)
	case OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform, OpLearnTotal:
		return secondFD(op, x, y, z)
	}
	// Sums, differences, negation: linear. Steps, comparisons, logic,
	// abs, min, max and if: 0 on either side of a kink or jump.
	return h
}

// secondFD returns the Hessian of op from central differences of its
// exact first derivatives (deriv), refined by one Richardson step, so the
// truncation error is O(h⁴): about 1e-10 relative with the steps used.
// An argument whose domain ends within two steps (a rate near -1, a
// learning rate near 0, a unit number near 1) is differenced one-sidedly,
// away from the edge.
func secondFD(op Op, x, y, z float64) (h hess) {
	args := [3]float64{x, y, z}
	ar := op.Arity()
	var col [3][3]float64 // col[m][j] = ∂ d_j / ∂ arg_m
	for m := range ar {
		a := args[m]
		step := 1e-3 * math.Max(math.Abs(a), 1e-2)
		lo := math.Inf(-1) // the domain's edge below a
		switch {
		case op == OpLearnTotal && m == 1:
			lo = 0
		case op == OpLearnTotal && m == 2:
			lo = 1
		case op != OpLearnTotal && m == 0:
			lo = -1
		}
		if op != OpLearnTotal && m == 0 {
			step = math.Min(step, (1+a)/8)
		}
		d := func(t float64) [3]float64 {
			p := args
			p[m] = t
			dx, dy, dz := deriv(op, p[0], p[1], p[2], evalOp(op, p[0], p[1], p[2]))
			return [3]float64{dx, dy, dz}
		}
		central := a-2*step > lo
		diff := func(s float64) [3]float64 {
			var r [3]float64
			if central {
				p, q := d(a+s), d(a-s)
				for j := range r {
					r[j] = (p[j] - q[j]) / (2 * s)
				}
				return r
			}
			f0, f1, f2 := d(a), d(a+s), d(a+2*s)
			for j := range r {
				r[j] = (-3*f0[j] + 4*f1[j] - f2[j]) / (2 * s)
			}
			return r
		}
		d1, d2 := diff(step), diff(step/2)
		for j := range ar {
			col[m][j] = (4*d2[j] - d1[j]) / 3
		}
	}
	sym := func(j, m int) float64 {
		if j >= ar || m >= ar {
			return 0
		}
		return (col[m][j] + col[j][m]) / 2
	}
	h.xx, h.xy, h.xz = sym(0, 0), sym(0, 1), sym(0, 2)
	h.yy, h.yz, h.zz = sym(1, 1), sym(1, 2), sym(2, 2)
	if op == OpLearnTotal { // linear in first
		h.xx = 0
	}
	return h
}

// kink reports why op at (x, y, z) is not twice differentiable there, or
// "" when it is: abs at 0, min and max at a tie, a step (floor, ceil,
// round, a comparison, and, or, not, if) where it jumps. cont reports
// whether an operand is a continuous value (not the 0 or 1 of a step),
// for and, or, not and the condition of an if, which jump only where such
// an operand crosses 0.
func kink(op Op, x, y float64, cont func(arg int) bool) string {
	switch op {
	case OpAbs:
		if x == 0 {
			return "abs at 0 (a kink)"
		}
	case OpMin, OpMax:
		if x == y {
			return fmt.Sprintf("%s of two equal values (%s): a kink", op, num(x))
		}
	case OpFloor, OpCeil:
		if x == math.Floor(x) {
			return fmt.Sprintf("%s at a whole number (%s), where it jumps", op, num(x))
		}
	case OpRound:
		if f := math.Abs(x); f-math.Floor(f) == 0.5 {
			return fmt.Sprintf("round at a half (%s), where it jumps", num(x))
		}
	case OpLt, OpLe, OpGt, OpGe, OpEq, OpNe:
		if x == y {
			return fmt.Sprintf("comparison %s %s %s of equal values, where it flips", num(x), op, num(y))
		}
	case OpAnd, OpOr:
		if x == 0 && cont(0) || y == 0 && cont(1) {
			return op.String() + " of a value at 0, where it flips"
		}
	case OpNot:
		if x == 0 && cont(0) {
			return "not of a value at 0, where it flips"
		}
	case OpIf:
		if x == 0 && cont(0) {
			return "if whose condition is exactly 0, where it switches branch"
		}
	}
	return ""
}
