package tape

import (
	"fmt"
	"math"
)

// loadInputs copies x into the input slots. Inputs are not tested
// here: a NaN or Inf input is caught, like any value, where it reaches
// an output or a guard operation, and reported as the input it is; an
// input the output does not use may be anything.
func (t *Tape) loadInputs(x []float64) {
	p := t.p
	if len(x) != p.nIn {
		panic(fmt.Sprintf("tape: %d inputs given, tape has %d", len(x), p.nIn))
	}
	copy(t.vals[:p.nIn], x)
	t.xin = nil
}

// Forward evaluates every node for the inputs x (len NumInputs). It
// returns nil, or a *DomainError if any output would be NaN or ±Inf.
func (t *Tape) Forward(x []float64) error {
	t.loadInputs(x)
	var bad bool
	if t.code != nil {
		bad = t.runCode(t.code)
	} else {
		bad = t.exec(-1, len(t.vals))
	}
	if !bad {
		ok := true
		for _, o := range t.p.outs {
			ok = ok && finite(t.vals[o])
		}
		if ok {
			return nil
		}
	}
	return t.check(bad, t.p.outs, t.vals, 1, 0, -1)
}

// Eval evaluates the nodes output i needs for the inputs x and returns
// output i, or a *DomainError if it would be NaN or ±Inf. Other outputs
// are left unchecked and may be stale.
func (t *Tape) Eval(x []float64, i int) (float64, error) { return t.eval(x, i, false) }

// Value returns output i at x, or a *DomainError, as Eval does, but reads
// the inputs that only loop nodes use in place from x instead of copying
// them onto the tape (on a roll-up over whole columns of inputs that copy
// is most of the work). The tape's values of those inputs are then stale:
// a Reverse that follows reads them from x, which must not change in
// between; Eval and Forward copy every input again.
func (t *Tape) Value(x []float64, i int) (float64, error) { return t.eval(x, i, true) }

// eval is Eval, or Value when inPlace is set.
func (t *Tape) eval(x []float64, i int, inPlace bool) (float64, error) {
	if inPlace && t.p.direct != nil {
		t.loadShared(x)
	} else {
		t.loadInputs(x)
	}
	out := t.p.outs[i]
	bad := t.exec(i, t.p.end(i))
	if !bad && finite(t.vals[out]) {
		return t.vals[out], nil
	}
	if t.xin != nil {
		// The search for the origin reads every value from the tape; the
		// values it finds there are the same to the bit.
		t.loadInputs(x)
	}
	if err := t.check(bad, t.p.outs[i:i+1], t.vals, 1, 0, -1); err != nil {
		return math.NaN(), err
	}
	return t.vals[out], nil
}

// end returns the end of the nodes output i needs: one past its node,
// past the opArg that follows a three-argument node, and past the lanes
// of a loop node (vec.go).
func (p *tapeProg) end(i int) int { return p.endNode(int(p.outs[i])) }

// exec evaluates the nodes output i needs, or every node for i < 0, up to
// stop (len(vals) or end(i)): by the scalar code (runCode) when the
// tape's operations are all ones it knows, else by run.
func (t *Tape) exec(i, stop int) bool {
	if t.p.plannable() {
		c := t.p.scode(i)
		if i < 0 {
			t.code = c
		}
		return t.runCode(c)
	}
	return t.run(stop)
}

// run evaluates nodes [start, stop) and reports whether a guard
// operation saw a non-finite operand.
//
// Non-finite values are caught without a test on every node: every
// operation that is not a guard (opMeta.guard) turns a NaN or Inf
// operand into a NaN or Inf result, so one that matters either reaches
// an output (checked afterwards) or meets a guard, which tests its
// operands. Only then does check search for where it arose.
func (t *Tape) run(stop int) (bad bool) { return t.runFrom(t.p.start, stop) }

// runFrom is run over the nodes [from, stop).
func (t *Tape) runFrom(from, stop int) (bad bool) {
	p := t.p
	v := t.vals
	ops := p.ops[:stop]
	as := p.a[:stop]
	bs := p.b[:stop]
	k := from
	for k < len(ops) {
		// The cheap operations run in this inner loop, which makes no
		// calls, so its state need not be saved around them; the others
		// leave it for slowOp and come back.
		for ; k < len(ops); k++ {
			x, y := v[as[k]], v[bs[k]]
			var r float64
			switch ops[k] {
			case OpAdd:
				r = x + y
			case OpSub:
				r = x - y
			case OpMul:
				r = x * y
			case OpDiv:
				r = x / y
				if !finite(y) {
					bad = true
				}
			case OpNeg:
				r = -x
			case OpSquare:
				r = x * x
			case OpSqrt:
				r = math.Sqrt(x)
			case OpAbs:
				r = math.Abs(x)
			case OpMin:
				r = y
				if x <= y {
					r = x
				}
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpMax:
				r = y
				if x >= y {
					r = x
				}
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpLt:
				r = b2f(x < y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpGt:
				r = b2f(x > y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpLe:
				r = b2f(x <= y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpGe:
				r = b2f(x >= y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpEq:
				r = b2f(x == y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpNe:
				r = b2f(x != y)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpAnd:
				r = b2f(x != 0 && y != 0)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpOr:
				r = b2f(x != 0 || y != 0)
				if !finite(x) || !finite(y) {
					bad = true
				}
			case OpNot:
				r = b2f(x == 0)
				if !finite(x) {
					bad = true
				}
			case OpIf:
				z := v[as[k+1]]
				r = z
				if x != 0 {
					r = y
				}
				if !finite(x) || !finite(y) || !finite(z) {
					bad = true
				}
			case opArg:
			default:
				goto slow
			}
			v[k] = r
		}
		break
	slow:
		if ops[k] == opLoop { // a loop node fills its lanes too (vec.go)
			if p.loopForwardIn(v, t.xin, k) {
				bad = true
			}
			k += p.loopWidth(k)
			continue
		}
		if t.slowOp(k) {
			bad = true
		}
		k++
	}
	return bad
}

// slowOp evaluates node k, an operation that calls a function, and
// reports whether it is a guard that saw a non-finite operand.
//
//go:noinline
func (t *Tape) slowOp(k int) (bad bool) {
	p := t.p
	v := t.vals
	op := p.ops[k]
	x, y := v[p.a[k]], v[p.b[k]]
	var z float64
	if op.Arity() == 3 {
		z = v[p.a[k+1]]
	}
	v[k] = evalOp(op, x, y, z)
	return opMetas[op].guard && (!finite(x) || !finite(y) || !finite(z))
}

// step evaluates node k over the values v, as run does, and reports
// whether it is a guard operation that saw a non-finite operand. It is the
// scalar pass of a cone (Cones), which runs a few nodes of a long tape.
func (p *tapeProg) step(v []float64, k int32) (bad bool) {
	op := p.ops[k]
	x, y := v[p.a[k]], v[p.b[k]]
	switch op {
	case OpAdd:
		v[k] = x + y
	case OpSub:
		v[k] = x - y
	case OpMul:
		v[k] = x * y
	case OpDiv:
		v[k] = x / y
		return !finite(y)
	case OpNeg:
		v[k] = -x
	default:
		var z float64
		if op.Arity() == 3 {
			z = v[p.a[k+1]]
		}
		v[k] = evalOp(op, x, y, z)
		return opMetas[op].guard && (!finite(x) || !finite(y) || !finite(z))
	}
	return false
}
