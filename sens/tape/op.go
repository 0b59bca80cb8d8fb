package tape

import "strconv"

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
	// and is reported by the reverse pass if a nonzero adjoint reaches it.
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
	// at x = 0: the value sqrt(0) = 0 is fine, and the reverse pass
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
	// reverse pass only if a nonzero adjoint reaches the node).
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

	// opLoop, opLane and opVec are the loop nodes of vec.go: a loop node
	// (one operation over a whole vector), an element of its result, and
	// the Builder's handle of a vector.
	opLoop
	opLane
	opVec

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
	opLoop:            {name: "loop"},
	opLane:            {name: "element", arity: 1},
	opVec:             {name: "vector"},
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
