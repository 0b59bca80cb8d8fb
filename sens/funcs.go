package sens

import (
	"fmt"
	"math"
	"strconv"
)

// Op is one operation of an evaluation tape.
//
// Each operation documents its derivative convention where the
// derivative is not the textbook one: at kinks, steps and the edge of
// its domain.
type Op uint8

const (
	// OpInvalid is the zero Op; no tape node carries it.
	OpInvalid Op = iota
	// OpInput is an input of the tape; inputs are numbered in the order
	// Builder.Input was called.
	OpInput
	// OpConst is a constant.
	OpConst

	// OpAdd is x + y.
	OpAdd
	// OpSub is x - y.
	OpSub
	// OpMul is x * y.
	OpMul
	// OpDiv is x / y; y = 0 is a domain error ("division by zero").
	OpDiv
	// OpPow is x^y with y a value. A negative x is allowed when y is an
	// integer; the partial derivative in y, x^y ln x, is then undefined
	// and is reported by the reverse sweep if a nonzero adjoint reaches it.
	// At x = 0 the partial in y is taken as 0 (its limit from the right),
	// and the partial in x, y x^(y-1), is infinite for 0 < y < 1.
	OpPow
	// OpPowConst is x^c with c a constant; the builder chooses it for
	// x ^ constant. It is defined for a negative x when c is an integer.
	OpPowConst
	// OpSquare is x*x; the builder chooses it for x ^ 2.
	OpSquare
	// OpNeg is -x.
	OpNeg
	// OpSqrt is the square root. Its derivative 1/(2 sqrt x) is infinite
	// at x = 0: the value sqrt(0) = 0 is fine, and the reverse sweep
	// reports a domain error only if a nonzero adjoint reaches that node.
	OpSqrt
	// OpExp is e^x.
	OpExp
	// OpLn is the natural logarithm; x <= 0 is a domain error.
	OpLn
	// OpLog10 is the base-10 logarithm; x <= 0 is a domain error.
	OpLog10
	// OpAbs is |x|; its derivative at 0 is taken as 0 (a subgradient).
	OpAbs
	// OpFloor rounds down; derivative 0 (a step function).
	OpFloor
	// OpCeil rounds up; derivative 0 (a step function).
	OpCeil
	// OpRound rounds half away from zero; derivative 0 (a step function).
	OpRound
	// OpSin is the sine (radians).
	OpSin
	// OpCos is the cosine (radians).
	OpCos
	// OpTan is the tangent (radians); derivative 1 + tan²x.
	OpTan
	// OpAsin is the arc sine; |x| > 1 is a domain error, and its
	// derivative 1/sqrt(1-x²) is infinite at x = ±1 (reported by the
	// reverse sweep only if a nonzero adjoint reaches the node).
	OpAsin
	// OpAcos is the arc cosine; as OpAsin.
	OpAcos
	// OpAtan is the arc tangent.
	OpAtan
	// OpMin is the smaller of x and y. On a tie the value and the whole
	// adjoint go to the first argument.
	OpMin
	// OpMax is the larger of x and y. On a tie the value and the whole
	// adjoint go to the first argument.
	OpMax
	// OpLt is 1 if x < y, else 0; derivative 0 (a step).
	OpLt
	// OpLe is 1 if x <= y, else 0; derivative 0 (a step).
	OpLe
	// OpGt is 1 if x > y, else 0; derivative 0 (a step).
	OpGt
	// OpGe is 1 if x >= y, else 0; derivative 0 (a step).
	OpGe
	// OpEq is 1 if x == y exactly, else 0; derivative 0 (a step).
	OpEq
	// OpNe is 1 if x != y, else 0; derivative 0 (a step).
	OpNe
	// OpAnd is 1 if both x and y are nonzero, else 0; derivative 0.
	OpAnd
	// OpOr is 1 if x or y is nonzero, else 0; derivative 0.
	OpOr
	// OpNot is 1 if x is 0, else 0; derivative 0.
	OpNot
	// OpIf is (cond, a, b): a if cond is nonzero, else b. Both branches
	// are evaluated, but a non-finite value in the branch not taken is
	// not an error. The derivative follows the branch taken; cond gets 0.
	OpIf

	// OpGrowth is growth(i, n), the single-payment compound-amount
	// factor (F/P), with i the rate per period as a decimal (0.08 for 8%)
	// and n the number of periods:
	//
	//	growth(i, n) = (1+i)^n
	//
	// The rate must exceed -1; n may be any real number. Exact partial
	// derivatives in both i and n: n (1+i)^(n-1) and (1+i)^n ln(1+i).
	OpGrowth
	// OpDiscount is discount(i, n), the single-payment present-worth
	// factor (P/F):
	//
	//	discount(i, n) = (1+i)^-n
	OpDiscount
	// OpAnnuityPV is annuity_pv(i, n), the uniform-series present-worth
	// factor (P/A); its limit at i = 0 is n:
	//
	//	annuity_pv(i, n) = ((1+i)^n - 1) / (i (1+i)^n)
	OpAnnuityPV
	// OpAnnuityFV is annuity_fv(i, n), the uniform-series compound-amount
	// factor (F/A); its limit at i = 0 is n:
	//
	//	annuity_fv(i, n) = ((1+i)^n - 1) / i
	OpAnnuityFV
	// OpRecovery is recovery(i, n), the capital-recovery factor (A/P); its
	// limit at i = 0 is 1/n, and n = 0 is a domain error:
	//
	//	recovery(i, n) = i (1+i)^n / ((1+i)^n - 1)
	OpRecovery
	// OpSinking is sinking(i, n), the sinking-fund factor (A/F); its
	// limit at i = 0 is 1/n, and n = 0 is a domain error:
	//
	//	sinking(i, n) = i / ((1+i)^n - 1)
	OpSinking
	// OpGradientPV is gradient_pv(i, n), the present worth of the
	// arithmetic gradient 0, 1, ..., n-1 paid at the ends of periods
	// 1..n (P/G); its limit at i = 0 is n(n-1)/2:
	//
	//	gradient_pv(i, n) = ((1+i)^n - i n - 1) / (i² (1+i)^n)
	OpGradientPV
	// OpGradientUniform is gradient_uniform(i, n), the uniform series
	// equivalent to that gradient (A/G); its limit at i = 0 is (n-1)/2:
	//
	//	gradient_uniform(i, n) = 1/i - n / ((1+i)^n - 1)
	OpGradientUniform
	// OpLearn is learn(first, rate, k), the cost of unit k on a unit
	// learning curve (unit theory): every doubling of the unit number
	// multiplies the unit cost by rate (0.8 for an 80% curve).
	//
	//	learn(first, rate, k) = first · k^b,  b = log2(rate)
	//
	// rate must be positive and k at least 1; k may be fractional.
	OpLearn
	// OpLearnTotal is learn_total(first, rate, k), the cumulative cost of
	// units 1..k on the same curve:
	//
	//	learn_total(first, rate, k) = first · Σ_{j=1..k} j^b,  b = log2(rate)
	//
	// The sum is exact for whole k up to 16. Beyond that, and for
	// fractional k, it is the smooth extension S(k) = ζ(-b) - ζ(-b, k+1)
	// (Hurwitz zeta), which satisfies S(k) - S(k-1) = k^b for every real
	// k, computed by the Euler–Maclaurin formula with four Bernoulli
	// terms from j = 16 on (relative error below 1e-12 for 0.1 <= rate <= 2).
	// The derivative in k is that of the smooth extension.
	//
	// References:
	//   - M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions,
	//     formula 23.1.30 (Euler–Maclaurin summation formula).
	OpLearnTotal

	// opArg is a tape-internal node that carries the third argument of
	// the three-argument operation just before it.
	opArg

	numOps
)

// opMeta describes an Op.
type opMeta struct {
	name  string // function name or operator symbol
	arity int8   // number of arguments
	infix bool   // printed between its operands
	step  bool   // piecewise constant: derivative 0 where it exists
	// guard: the operation can turn a non-finite operand into a finite
	// result (1/Inf = 0, min(x, Inf) = x, the branch an if does not take),
	// so its operands are checked where it is evaluated.
	guard bool
}

var opMetas = [numOps]opMeta{
	OpInvalid:         {name: "invalid"},
	OpInput:           {name: "input"},
	OpConst:           {name: "constant"},
	OpAdd:             {name: "+", arity: 2, infix: true},
	OpSub:             {name: "-", arity: 2, infix: true},
	OpMul:             {name: "*", arity: 2, infix: true},
	OpDiv:             {name: "/", arity: 2, infix: true, guard: true},
	OpPow:             {name: "^", arity: 2, infix: true, guard: true},
	OpPowConst:        {name: "^", arity: 2, infix: true, guard: true},
	OpSquare:          {name: "^2", arity: 1},
	OpNeg:             {name: "unary -", arity: 1},
	OpSqrt:            {name: "sqrt", arity: 1},
	OpExp:             {name: "exp", arity: 1, guard: true},
	OpLn:              {name: "ln", arity: 1},
	OpLog10:           {name: "log10", arity: 1},
	OpAbs:             {name: "abs", arity: 1},
	OpFloor:           {name: "floor", arity: 1, step: true},
	OpCeil:            {name: "ceil", arity: 1, step: true},
	OpRound:           {name: "round", arity: 1, step: true},
	OpSin:             {name: "sin", arity: 1},
	OpCos:             {name: "cos", arity: 1},
	OpTan:             {name: "tan", arity: 1},
	OpAsin:            {name: "asin", arity: 1},
	OpAcos:            {name: "acos", arity: 1},
	OpAtan:            {name: "atan", arity: 1, guard: true},
	OpMin:             {name: "min", arity: 2, guard: true},
	OpMax:             {name: "max", arity: 2, guard: true},
	OpLt:              {name: "<", arity: 2, infix: true, step: true, guard: true},
	OpLe:              {name: "<=", arity: 2, infix: true, step: true, guard: true},
	OpGt:              {name: ">", arity: 2, infix: true, step: true, guard: true},
	OpGe:              {name: ">=", arity: 2, infix: true, step: true, guard: true},
	OpEq:              {name: "==", arity: 2, infix: true, step: true, guard: true},
	OpNe:              {name: "!=", arity: 2, infix: true, step: true, guard: true},
	OpAnd:             {name: "and", arity: 2, infix: true, step: true, guard: true},
	OpOr:              {name: "or", arity: 2, infix: true, step: true, guard: true},
	OpNot:             {name: "not", arity: 1, step: true, guard: true},
	OpIf:              {name: "if", arity: 3, step: true, guard: true},
	OpGrowth:          {name: "growth", arity: 2, guard: true},
	OpDiscount:        {name: "discount", arity: 2, guard: true},
	OpAnnuityPV:       {name: "annuity_pv", arity: 2, guard: true},
	OpAnnuityFV:       {name: "annuity_fv", arity: 2, guard: true},
	OpRecovery:        {name: "recovery", arity: 2, guard: true},
	OpSinking:         {name: "sinking", arity: 2, guard: true},
	OpGradientPV:      {name: "gradient_pv", arity: 2, guard: true},
	OpGradientUniform: {name: "gradient_uniform", arity: 2, guard: true},
	OpLearn:           {name: "learn", arity: 3, guard: true},
	OpLearnTotal:      {name: "learn_total", arity: 3, guard: true},
	opArg:             {name: "argument"},
}

// String returns the operator symbol or function name of op.
func (op Op) String() string {
	if op < numOps {
		return opMetas[op].name
	}
	return "op(" + strconv.Itoa(int(op)) + ")"
}

// Arity returns the number of arguments op takes (0 for inputs and
// constants).
func (op Op) Arity() int {
	if op < numOps {
		return int(opMetas[op].arity)
	}
	return 0
}

// IsStep reports whether op is piecewise constant, with derivative 0
// wherever it exists: floor, ceil, round, the comparisons, and, or, not
// and if (whose result jumps when its condition flips).
func (op Op) IsStep() bool { return op < numOps && opMetas[op].step }

// FuncInfo describes a built-in function of the model language.
type FuncInfo struct {
	Name     string // name in the model language
	Args     int    // number of arguments; the minimum when Variadic
	Variadic bool   // takes Args or more arguments, folded left (Builder.Fold)
	Op       Op     // the tape operation
	Sig      string // call signature, e.g. "recovery(i, n)"
	Doc      string // one line
	Example  string // "call = value", checked by the tests
}

// Functions lists every built-in function, in the order a completion
// menu shows them. The constant pi is the compiler's.
var Functions = []FuncInfo{
	{Name: "sqrt", Args: 1, Op: OpSqrt, Sig: "sqrt(x)", Doc: "square root; x must not be negative", Example: "sqrt(2) = 1.4142135623731"},
	{Name: "exp", Args: 1, Op: OpExp, Sig: "exp(x)", Doc: "e raised to x", Example: "exp(1) = 2.718281828459"},
	{Name: "ln", Args: 1, Op: OpLn, Sig: "ln(x)", Doc: "natural logarithm; x must be positive", Example: "ln(10) = 2.302585092994"},
	{Name: "log10", Args: 1, Op: OpLog10, Sig: "log10(x)", Doc: "base-10 logarithm; x must be positive", Example: "log10(1000) = 3"},
	{Name: "abs", Args: 1, Op: OpAbs, Sig: "abs(x)", Doc: "absolute value (derivative 0 at x = 0)", Example: "abs(-2.5) = 2.5"},
	{Name: "min", Args: 2, Variadic: true, Op: OpMin, Sig: "min(x, y, ...)", Doc: "smallest argument (a tie credits the first)", Example: "min(3, 1, 2) = 1"},
	{Name: "max", Args: 2, Variadic: true, Op: OpMax, Sig: "max(x, y, ...)", Doc: "largest argument (a tie credits the first)", Example: "max(3, 1, 2) = 3"},
	{Name: "floor", Args: 1, Op: OpFloor, Sig: "floor(x)", Doc: "largest integer not above x (a step: derivative 0)", Example: "floor(2.7) = 2"},
	{Name: "ceil", Args: 1, Op: OpCeil, Sig: "ceil(x)", Doc: "smallest integer not below x (a step: derivative 0)", Example: "ceil(2.1) = 3"},
	{Name: "round", Args: 1, Op: OpRound, Sig: "round(x)", Doc: "nearest integer, halves away from zero (a step: derivative 0)", Example: "round(2.5) = 3"},
	{Name: "if", Args: 3, Op: OpIf, Sig: "if(cond, a, b)", Doc: "a where cond is true (nonzero), else b; the derivative follows the branch taken", Example: "if(1, 10, 20) = 10"},
	{Name: "sin", Args: 1, Op: OpSin, Sig: "sin(x)", Doc: "sine of x in radians", Example: "sin(0.5) = 0.4794255386042"},
	{Name: "cos", Args: 1, Op: OpCos, Sig: "cos(x)", Doc: "cosine of x in radians", Example: "cos(0.5) = 0.8775825618904"},
	{Name: "tan", Args: 1, Op: OpTan, Sig: "tan(x)", Doc: "tangent of x in radians", Example: "tan(0.5) = 0.5463024898438"},
	{Name: "asin", Args: 1, Op: OpAsin, Sig: "asin(x)", Doc: "arc sine in radians; -1 <= x <= 1", Example: "asin(0.5) = 0.5235987755983"},
	{Name: "acos", Args: 1, Op: OpAcos, Sig: "acos(x)", Doc: "arc cosine in radians; -1 <= x <= 1", Example: "acos(0.5) = 1.0471975511966"},
	{Name: "atan", Args: 1, Op: OpAtan, Sig: "atan(x)", Doc: "arc tangent in radians", Example: "atan(1) = 0.7853981633974"},
	{Name: "growth", Args: 2, Op: OpGrowth, Sig: "growth(i, n)", Doc: "compound amount of 1 after n periods at rate i: (1+i)^n (F/P)", Example: "growth(0.08, 10) = 2.158924997"},
	{Name: "discount", Args: 2, Op: OpDiscount, Sig: "discount(i, n)", Doc: "present worth of 1 due in n periods at rate i: (1+i)^-n (P/F)", Example: "discount(0.1, 5) = 0.6209213231"},
	{Name: "annuity_pv", Args: 2, Op: OpAnnuityPV, Sig: "annuity_pv(i, n)", Doc: "present worth of 1 per period for n periods (P/A)", Example: "annuity_pv(0.1, 5) = 3.790786769"},
	{Name: "annuity_fv", Args: 2, Op: OpAnnuityFV, Sig: "annuity_fv(i, n)", Doc: "future worth of 1 per period for n periods (F/A)", Example: "annuity_fv(0.06, 10) = 13.18079494"},
	{Name: "recovery", Args: 2, Op: OpRecovery, Sig: "recovery(i, n)", Doc: "uniform payment per period that repays 1 over n periods (A/P)", Example: "recovery(0.1, 5) = 0.2637974808"},
	{Name: "sinking", Args: 2, Op: OpSinking, Sig: "sinking(i, n)", Doc: "uniform deposit per period that grows to 1 in n periods (A/F)", Example: "sinking(0.1, 5) = 0.1637974808"},
	{Name: "gradient_pv", Args: 2, Op: OpGradientPV, Sig: "gradient_pv(i, n)", Doc: "present worth of payments 0, 1, ..., n-1 at the ends of periods 1..n (P/G)", Example: "gradient_pv(0.1, 5) = 6.861801541"},
	{Name: "gradient_uniform", Args: 2, Op: OpGradientUniform, Sig: "gradient_uniform(i, n)", Doc: "uniform series equal in worth to payments 0, 1, ..., n-1 (A/G)", Example: "gradient_uniform(0.1, 5) = 1.81012596"},
	{Name: "learn", Args: 3, Op: OpLearn, Sig: "learn(first, rate, k)", Doc: "cost of unit k when each doubling of units multiplies unit cost by rate", Example: "learn(100, 0.8, 4) = 64"},
	{Name: "learn_total", Args: 3, Op: OpLearnTotal, Sig: "learn_total(first, rate, k)", Doc: "cumulative cost of units 1..k on the same unit learning curve", Example: "learn_total(100, 0.8, 4) = 314.2103703"},
}

// LookupFunc returns the built-in function called name.
func LookupFunc(name string) (FuncInfo, bool) {
	for _, f := range Functions {
		if f.Name == name {
			return f, true
		}
	}
	return FuncInfo{}, false
}

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
// folding uses it, and so do the sweeps for operations without a
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
		return econGrowth(x, y)
	case OpDiscount:
		return econDiscount(x, y)
	case OpAnnuityPV:
		return econAnnuityPV(x, y)
	case OpAnnuityFV:
		return econAnnuityFV(x, y)
	case OpRecovery:
		return econRecovery(x, y)
	case OpSinking:
		return econSinking(x, y)
	case OpGradientPV:
		return econGradientPV(x, y)
	case OpGradientUniform:
		return econGradientUniform(x, y)
	case OpLearn:
		return learnUnit(x, y, z)
	case OpLearnTotal:
		return learnCumulative(x, y, z)
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
		_, dx, dy, dz = learnCumulativeDeriv(x, y, z)
		return dx, dy, dz
	}
	// Steps, comparisons, logic: derivative 0.
	return 0, 0, 0
}

// num formats a number for a message.
func num(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

// domainMsg explains why op applied to args gave the non-finite value v.
func domainMsg(op Op, args []float64, v float64) string {
	arg := func(i int) float64 {
		if i < len(args) {
			return args[i]
		}
		return math.NaN()
	}
	x, y := arg(0), arg(1)
	switch op {
	case OpInput:
		return "input is " + num(v)
	case OpConst:
		return "constant is " + num(v)
	case OpDiv:
		if y == 0 {
			return "division by zero"
		}
	case OpPow, OpPowConst:
		if x < 0 && y != math.Trunc(y) {
			return fmt.Sprintf("negative number (%s) raised to a non-integer power (%s)", num(x), num(y))
		}
		if x == 0 && y < 0 {
			return fmt.Sprintf("zero raised to a negative power (%s)", num(y))
		}
	case OpSqrt:
		if x < 0 {
			return "square root of a negative number (" + num(x) + ")"
		}
	case OpLn, OpLog10:
		if x < 0 {
			return op.String() + " of a negative number (" + num(x) + ")"
		}
		if x == 0 {
			return op.String() + " of zero"
		}
	case OpAsin, OpAcos:
		if math.Abs(x) > 1 {
			return op.String() + " of a number outside [-1, 1] (" + num(x) + ")"
		}
	case OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform:
		if !(x > -1) {
			return op.String() + ": interest rate must be greater than -1 (-100%), got " + num(x)
		}
		if y == 0 && (op == OpRecovery || op == OpSinking) {
			return op.String() + ": undefined for n = 0 (division by zero)"
		}
	case OpLearn, OpLearnTotal:
		if !(y > 0) {
			return op.String() + ": learning rate must be positive, got " + num(y)
		}
		if !(arg(2) >= 1) {
			return op.String() + ": unit number must be at least 1, got " + num(arg(2))
		}
	}
	switch {
	case math.IsInf(v, 1):
		return "overflow to +Inf"
	case math.IsInf(v, -1):
		return "overflow to -Inf"
	}
	return "result is NaN"
}

// derivMsg explains why a partial derivative of op at args is not
// finite.
func derivMsg(op Op, args []float64) string {
	x := math.NaN()
	if len(args) > 0 {
		x = args[0]
	}
	switch op {
	case OpSqrt:
		if x == 0 {
			return "derivative of sqrt is infinite at 0"
		}
	case OpAsin, OpAcos:
		if math.Abs(x) == 1 {
			return "derivative of " + op.String() + " is infinite at " + num(x)
		}
	case OpPow, OpPowConst:
		y := args[1]
		if x == 0 && y < 1 {
			return fmt.Sprintf("derivative of x^y is infinite at x = 0 (y = %s)", num(y))
		}
		if x < 0 && op == OpPow {
			return fmt.Sprintf("x^y has no derivative in y for a negative x (%s)", num(x))
		}
	}
	return "derivative of " + op.String() + " is not finite here"
}
