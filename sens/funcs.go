package sens

import "github.com/nudge-dev/nudge/sens/tape"

// FuncInfo describes a built-in function of the model language: everything
// the compiler needs to check and build a call, and what a completion menu
// shows. Adding a function is one row here plus its operation in package
// tape (evaluation and derivative).
type FuncInfo struct {
	Name     string   // name in the model language
	Args     int      // number of arguments; the minimum when Variadic
	Variadic bool     // takes Args or more arguments, folded left (tape.Builder.Fold)
	Op       tape.Op  // the tape operation
	Units    UnitRule // how the arguments' units give the result's
	Sig      string   // call signature, e.g. "recovery(i, n)"
	Doc      string   // one line
	Example  string   // "call = value", checked by the tests
}

// UnitRule says which units a built-in function accepts and which unit its
// result has.
type UnitRule uint8

// The unit rules of the built-in functions. The zero UnitRule is no rule:
// every row of Functions names one.
const (
	UnitsDimensionless UnitRule = iota + 1 // every argument dimensionless; so is the result
	UnitsSame                              // every argument of one dimension; the result in it
	UnitsSqrt                              // the result in the square root of the argument's unit
	UnitsFirst                             // the result in the first argument's unit; the others dimensionless
	UnitsIf                                // (condition, a, b): a and b of one dimension; the result in it
)

// Functions lists every built-in function, in the order a completion
// menu shows them. The constant pi is the compiler's.
var Functions = []FuncInfo{
	{Name: "sqrt", Args: 1, Op: tape.OpSqrt, Units: UnitsSqrt, Sig: "sqrt(x)", Doc: "square root; x must not be negative", Example: "sqrt(2) = 1.4142135623731"},
	{Name: "exp", Args: 1, Op: tape.OpExp, Units: UnitsDimensionless, Sig: "exp(x)", Doc: "e raised to x", Example: "exp(1) = 2.718281828459"},
	{Name: "ln", Args: 1, Op: tape.OpLn, Units: UnitsDimensionless, Sig: "ln(x)", Doc: "natural logarithm; x must be positive", Example: "ln(10) = 2.302585092994"},
	{Name: "log10", Args: 1, Op: tape.OpLog10, Units: UnitsDimensionless, Sig: "log10(x)", Doc: "base-10 logarithm; x must be positive", Example: "log10(1000) = 3"},
	{Name: "abs", Args: 1, Op: tape.OpAbs, Units: UnitsSame, Sig: "abs(x)", Doc: "absolute value (derivative 0 at x = 0)", Example: "abs(-2.5) = 2.5"},
	{Name: "min", Args: 2, Variadic: true, Op: tape.OpMin, Units: UnitsSame, Sig: "min(x, y, ...)", Doc: "smallest argument (a tie credits the first)", Example: "min(3, 1, 2) = 1"},
	{Name: "max", Args: 2, Variadic: true, Op: tape.OpMax, Units: UnitsSame, Sig: "max(x, y, ...)", Doc: "largest argument (a tie credits the first)", Example: "max(3, 1, 2) = 3"},
	{Name: "floor", Args: 1, Op: tape.OpFloor, Units: UnitsDimensionless, Sig: "floor(x)", Doc: "largest integer not above x (a step: derivative 0)", Example: "floor(2.7) = 2"},
	{Name: "ceil", Args: 1, Op: tape.OpCeil, Units: UnitsDimensionless, Sig: "ceil(x)", Doc: "smallest integer not below x (a step: derivative 0)", Example: "ceil(2.1) = 3"},
	{Name: "round", Args: 1, Op: tape.OpRound, Units: UnitsDimensionless, Sig: "round(x)", Doc: "nearest integer, halves away from zero (a step: derivative 0)", Example: "round(2.5) = 3"},
	{Name: "if", Args: 3, Op: tape.OpIf, Units: UnitsIf, Sig: "if(cond, a, b)", Doc: "a where cond is true (nonzero), else b; the derivative follows the branch taken", Example: "if(1, 10, 20) = 10"},
	{Name: "sin", Args: 1, Op: tape.OpSin, Units: UnitsDimensionless, Sig: "sin(x)", Doc: "sine of x in radians", Example: "sin(0.5) = 0.4794255386042"},
	{Name: "cos", Args: 1, Op: tape.OpCos, Units: UnitsDimensionless, Sig: "cos(x)", Doc: "cosine of x in radians", Example: "cos(0.5) = 0.8775825618904"},
	{Name: "tan", Args: 1, Op: tape.OpTan, Units: UnitsDimensionless, Sig: "tan(x)", Doc: "tangent of x in radians", Example: "tan(0.5) = 0.5463024898438"},
	{Name: "asin", Args: 1, Op: tape.OpAsin, Units: UnitsDimensionless, Sig: "asin(x)", Doc: "arc sine in radians; -1 <= x <= 1", Example: "asin(0.5) = 0.5235987755983"},
	{Name: "acos", Args: 1, Op: tape.OpAcos, Units: UnitsDimensionless, Sig: "acos(x)", Doc: "arc cosine in radians; -1 <= x <= 1", Example: "acos(0.5) = 1.0471975511966"},
	{Name: "atan", Args: 1, Op: tape.OpAtan, Units: UnitsDimensionless, Sig: "atan(x)", Doc: "arc tangent in radians", Example: "atan(1) = 0.7853981633974"},
	{Name: "growth", Args: 2, Op: tape.OpGrowth, Units: UnitsDimensionless, Sig: "growth(i, n)", Doc: "compound amount of 1 after n periods at rate i: (1+i)^n (F/P)", Example: "growth(0.08, 10) = 2.158924997"},
	{Name: "discount", Args: 2, Op: tape.OpDiscount, Units: UnitsDimensionless, Sig: "discount(i, n)", Doc: "present worth of 1 due in n periods at rate i: (1+i)^-n (P/F)", Example: "discount(0.1, 5) = 0.6209213231"},
	{Name: "annuity_pv", Args: 2, Op: tape.OpAnnuityPV, Units: UnitsDimensionless, Sig: "annuity_pv(i, n)", Doc: "present worth of 1 per period for n periods (P/A)", Example: "annuity_pv(0.1, 5) = 3.790786769"},
	{Name: "annuity_fv", Args: 2, Op: tape.OpAnnuityFV, Units: UnitsDimensionless, Sig: "annuity_fv(i, n)", Doc: "future worth of 1 per period for n periods (F/A)", Example: "annuity_fv(0.06, 10) = 13.18079494"},
	{Name: "recovery", Args: 2, Op: tape.OpRecovery, Units: UnitsDimensionless, Sig: "recovery(i, n)", Doc: "uniform payment per period that repays 1 over n periods (A/P)", Example: "recovery(0.1, 5) = 0.2637974808"},
	{Name: "sinking", Args: 2, Op: tape.OpSinking, Units: UnitsDimensionless, Sig: "sinking(i, n)", Doc: "uniform deposit per period that grows to 1 in n periods (A/F)", Example: "sinking(0.1, 5) = 0.1637974808"},
	{Name: "gradient_pv", Args: 2, Op: tape.OpGradientPV, Units: UnitsDimensionless, Sig: "gradient_pv(i, n)", Doc: "present worth of payments 0, 1, ..., n-1 at the ends of periods 1..n (P/G)", Example: "gradient_pv(0.1, 5) = 6.861801541"},
	{Name: "gradient_uniform", Args: 2, Op: tape.OpGradientUniform, Units: UnitsDimensionless, Sig: "gradient_uniform(i, n)", Doc: "uniform series equal in worth to payments 0, 1, ..., n-1 (A/G)", Example: "gradient_uniform(0.1, 5) = 1.81012596"},
	{Name: "learn", Args: 3, Op: tape.OpLearn, Units: UnitsFirst, Sig: "learn(first, rate, k)", Doc: "cost of unit k when each doubling of units multiplies unit cost by rate", Example: "learn(100, 0.8, 4) = 64"},
	{Name: "learn_total", Args: 3, Op: tape.OpLearnTotal, Units: UnitsFirst, Sig: "learn_total(first, rate, k)", Doc: "cumulative cost of units 1..k on the same unit learning curve", Example: "learn_total(100, 0.8, 4) = 314.2103703"},
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
