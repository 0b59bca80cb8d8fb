package tape

import "math"

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return x-x == 0 }

// evalOp returns op applied to x, y and z (unused arguments are
// ignored). It is the reference definition of every operation: constant
// folding uses it, and so do the passes for operations without a
// hand-written loop.
func evalOp(op Op, x, y, z float64) float64 {
	switch op {
	case OpAdd:
		return x + y
	case OpSub:
		return x - y
	case OpMul:
		return x * y
	case OpDiv:
		return x / y
	case OpPow, OpPowConst:
		return math.Pow(x, y)
	case OpSquare:
		return x * x
	case OpNeg:
		return -x
	case OpSqrt:
		return math.Sqrt(x)
	case OpExp:
		return math.Exp(x)
	case OpLn:
		return math.Log(x)
	case OpLog10:
		return math.Log10(x)
	case OpAbs:
		return math.Abs(x)
	case OpFloor:
		return math.Floor(x)
	case OpCeil:
		return math.Ceil(x)
	case OpRound:
		return math.Round(x)
	case OpSin:
		return math.Sin(x)
	case OpCos:
		return math.Cos(x)
	case OpTan:
		return math.Tan(x)
	case OpAsin:
		return math.Asin(x)
	case OpAcos:
		return math.Acos(x)
	case OpAtan:
		return math.Atan(x)
	case OpMin:
		if x <= y {
			return x
		}
		return y
	case OpMax:
		if x >= y {
			return x
		}
		return y
	case OpLt:
		return b2f(x < y)
	case OpLe:
		return b2f(x <= y)
	case OpGt:
		return b2f(x > y)
	case OpGe:
		return b2f(x >= y)
	case OpEq:
		return b2f(x == y)
	case OpNe:
		return b2f(x != y)
	case OpAnd:
		return b2f(x != 0 && y != 0)
	case OpOr:
		return b2f(x != 0 || y != 0)
	case OpNot:
		return b2f(x == 0)
	case OpIf:
		if x != 0 {
			return y
		}
		return z
	case OpGrowth:
		return Growth(x, y)
	case OpDiscount:
		return Discount(x, y)
	case OpAnnuityPV:
		return AnnuityPV(x, y)
	case OpAnnuityFV:
		return AnnuityFV(x, y)
	case OpRecovery:
		return Recovery(x, y)
	case OpSinking:
		return Sinking(x, y)
	case OpGradientPV:
		return GradientPV(x, y)
	case OpGradientUniform:
		return GradientUniform(x, y)
	case OpLearn:
		return Learn(x, y, z)
	case OpLearnTotal:
		return LearnTotal(x, y, z)
	}
	return math.NaN()
}

// deriv returns the partial derivatives of op at (x, y, z), whose value
// is v, following the conventions documented on each Op. Arguments the
// op does not take get 0.
func deriv(op Op, x, y, z, v float64) (dx, dy, dz float64) {
	switch op {
	case OpAdd:
		return 1, 1, 0
	case OpSub:
		return 1, -1, 0
	case OpMul:
		return y, x, 0
	case OpDiv:
		return 1 / y, -v / y, 0
	case OpPow, OpPowConst:
		if y != 0 {
			dx = y * math.Pow(x, y-1)
		}
		if op == OpPow && v != 0 {
			dy = v * math.Log(x)
		}
		return dx, dy, 0
	case OpSquare:
		return 2 * x, 0, 0
	case OpNeg:
		return -1, 0, 0
	case OpSqrt:
		return 0.5 / v, 0, 0
	case OpExp:
		return v, 0, 0
	case OpLn:
		return 1 / x, 0, 0
	case OpLog10:
		return 1 / (x * math.Ln10), 0, 0
	case OpAbs:
		switch {
		case x > 0:
			return 1, 0, 0
		case x < 0:
			return -1, 0, 0
		}
		return 0, 0, 0
	case OpSin:
		return math.Cos(x), 0, 0
	case OpCos:
		return -math.Sin(x), 0, 0
	case OpTan:
		return 1 + v*v, 0, 0
	case OpAsin:
		return 1 / math.Sqrt(1-x*x), 0, 0
	case OpAcos:
		return -1 / math.Sqrt(1-x*x), 0, 0
	case OpAtan:
		return 1 / (1 + x*x), 0, 0
	case OpMin:
		if x <= y {
			return 1, 0, 0
		}
		return 0, 1, 0
	case OpMax:
		if x >= y {
			return 1, 0, 0
		}
		return 0, 1, 0
	case OpIf:
		if x != 0 {
			return 0, 1, 0
		}
		return 0, 0, 1
	case OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform:
		_, dx, dy = econDeriv(op, x, y)
		return dx, dy, 0
	case OpLearn:
		_, dx, dy, dz = learnDeriv(x, y, z)
		return dx, dy, dz
	case OpLearnTotal:
		_, dx, dy, dz = learnTotalDeriv(x, y, z)
		return dx, dy, dz
	}
	// Steps, comparisons, logic: derivative 0.
	return 0, 0, 0
}
