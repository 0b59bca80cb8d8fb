package tape

import (
	"fmt"
	"math"
	"strconv"
)

// DomainError reports a NaN or ±Inf found by a pass: where it arose,
// from what, and in which sample of a batched pass.
type DomainError struct {
	Pos     int32     // source position of the operation (Builder.SetPos)
	Op      Op        // the operation
	Args    []float64 // its operand values
	Msg     string    // "ln of a negative number (-3)", "division by zero", ...
	Sample  int       // sample index in a batched pass; -1 otherwise
	Reverse bool      // found by the reverse pass (an unbounded derivative)
	// Element is, for an operation of a loop node, 1 + the index of the
	// element where the value arose; 0 otherwise.
	Element int
}

func (e *DomainError) Error() string {
	if e.Sample >= 0 {
		return fmt.Sprintf("%s (sample %d)", e.Msg, e.Sample)
	}
	return e.Msg
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
