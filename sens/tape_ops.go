package sens

import (
	"fmt"
	"math"
)

// Scalar sweeps.

// loadInputs copies x into the input slots. Inputs are not tested
// here: a NaN or Inf input is caught, like any value, where it reaches
// an output or a guard operation, and reported as the input it is; an
// input the output does not use may be anything.
func (t *Tape) loadInputs(x []float64) {
	p := t.p
	if len(x) != p.nIn {
		panic(fmt.Sprintf("sens: %d inputs given, tape has %d", len(x), p.nIn))
	}
	copy(t.vals[:p.nIn], x)
}

// Forward evaluates every node for the inputs x (len NumInputs). It
// returns nil, or a *DomainError if any output would be NaN or ±Inf.
func (t *Tape) Forward(x []float64) error {
	t.loadInputs(x)
	bad := t.run(len(t.vals))
	return t.check(bad, t.p.outs, t.vals, 1, 0, -1)
}

// Eval evaluates the nodes output i needs for the inputs x and returns
// output i, or a *DomainError if it would be NaN or ±Inf. Other outputs
// are left unchecked and may be stale.
func (t *Tape) Eval(x []float64, i int) (float64, error) {
	t.loadInputs(x)
	out := t.p.outs[i]
	bad := t.run(t.p.end(i))
	if err := t.check(bad, t.p.outs[i:i+1], t.vals, 1, 0, -1); err != nil {
		return math.NaN(), err
	}
	return t.vals[out], nil
}

// end returns the end of the nodes output i needs: one past its node,
// and past the opArg that follows a three-argument node.
func (p *tapeProg) end(i int) int {
	o := int(p.outs[i])
	if p.ops[o].Arity() == 3 {
		return o + 2
	}
	return o + 1
}

// check returns the domain error, if any, behind the outputs outs: bad
// says a guard operation saw a non-finite operand. vals holds node k of
// the sample at vals[k*stride+off].
func (t *Tape) check(bad bool, outs []int32, vals []float64, stride, off, sample int) error {
	if !bad {
		for _, o := range outs {
			if !finite(vals[int(o)*stride+off]) {
				bad = true
				break
			}
		}
		if !bad {
			return nil
		}
	}
	k := t.findOrigin(outs, vals, stride, off)
	if k < 0 {
		return nil // the non-finite values lie in branches not taken
	}
	return t.nodeError(k, vals, stride, off, sample)
}

// findOrigin returns the first node, in evaluation order, that feeds one
// of outs through the branches taken and whose value is not finite; -1 if
// there is none. It uses t.adj as scratch.
func (t *Tape) findOrigin(outs []int32, vals []float64, stride, off int) int {
	p := t.p
	top := int32(-1)
	for _, o := range outs {
		top = max(top, o)
	}
	mark := t.adj[:top+1]
	clear(mark)
	for _, o := range outs {
		mark[o] = 1
	}
	val := func(k int32) float64 { return vals[int(k)*stride+off] }
	for k := int(top); k >= p.start; k-- {
		if mark[k] == 0 {
			continue
		}
		a, b := p.a[k], p.b[k]
		mark[a] = 1
		switch p.ops[k] {
		case OpIf:
			if v := val(a); v != 0 || !finite(v) {
				mark[b] = 1
			} else {
				mark[p.a[k+1]] = 1
			}
		default:
			mark[b] = 1
			if p.ops[k].Arity() == 3 {
				mark[p.a[k+1]] = 1
			}
		}
	}
	for k := range mark {
		if mark[k] != 0 && !finite(val(int32(k))) {
			return k
		}
	}
	return -1
}

// args returns the operand values of node k.
func (t *Tape) args(k int, vals []float64, stride, off int) []float64 {
	p := t.p
	op := p.ops[k]
	v := func(s int32) float64 { return vals[int(s)*stride+off] }
	switch op.Arity() {
	case 1:
		return []float64{v(p.a[k])}
	case 2:
		return []float64{v(p.a[k]), v(p.b[k])}
	case 3:
		return []float64{v(p.a[k]), v(p.b[k]), v(p.a[k+1])}
	}
	return []float64{v(int32(k))}
}

func (t *Tape) nodeError(k int, vals []float64, stride, off, sample int) error {
	p := t.p
	op := p.ops[k]
	args := t.args(k, vals, stride, off)
	msg := domainMsg(op, args, vals[k*stride+off])
	if op == OpInput {
		msg = fmt.Sprintf("input %d is %s", k, num(args[0]))
	}
	return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: msg, Sample: sample}
}

// run evaluates nodes [start, stop) and reports whether a guard
// operation saw a non-finite operand.
//
// Non-finite values are caught without a test on every node: every
// operation that is not a guard (opMeta.guard) turns a NaN or Inf
// operand into a NaN or Inf result, so one that matters either reaches
// an output (checked afterwards) or meets a guard, which tests its
// operands. Only then does check search for where it arose.
func (t *Tape) run(stop int) (bad bool) {
	p := t.p
	v := t.vals
	ops := p.ops[:stop]
	as := p.a[:stop]
	bs := p.b[:stop]
	k := p.start
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

// Reverse runs the reverse (adjoint) sweep for output i over the values
// of the last Forward, Eval or Gradient for that output, and stores
// dst[j] = ∂ output_i / ∂ x_j. dst must have length NumInputs; it is
// returned.
//
// An operation whose adjoint is zero passes nothing back, so an
// unbounded local derivative (sqrt at 0, asin at ±1) matters only where
// it is used: there dst receives ±Inf or NaN. Gradient reports that as a
// *DomainError; Reverse leaves it in dst.
func (t *Tape) Reverse(dst []float64, i int) []float64 {
	p := t.p
	if len(dst) != p.nIn {
		panic(fmt.Sprintf("sens: gradient of length %d, tape has %d inputs", len(dst), p.nIn))
	}
	out := int(p.outs[i])
	end := p.end(i)
	v := t.vals[:end]
	g := t.adj[:end]
	clear(g)
	g[out] = 1
	ops := p.ops[:end]
	as := p.a[:end]
	bs := p.b[:end]
	for k := out; k >= p.start; k-- {
		gk := g[k]
		if gk == 0 {
			continue
		}
		a, b := as[k], bs[k]
		switch ops[k] {
		case OpAdd:
			g[a] += gk
			g[b] += gk
		case OpSub:
			g[a] += gk
			g[b] -= gk
		case OpMul:
			g[a] += gk * v[b]
			g[b] += gk * v[a]
		case OpDiv:
			q := gk / v[b]
			g[a] += q
			g[b] -= q * v[k]
		case OpNeg:
			g[a] -= gk
		case OpSquare:
			g[a] += 2 * gk * v[a]
		case OpSqrt:
			g[a] += gk * 0.5 / v[k]
		case OpExp:
			g[a] += gk * v[k]
		case OpLn:
			g[a] += gk / v[a]
		case OpAbs:
			if x := v[a]; x > 0 {
				g[a] += gk
			} else if x < 0 {
				g[a] -= gk
			}
		case OpMin:
			if v[a] <= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case OpMax:
			if v[a] >= v[b] {
				g[a] += gk
			} else {
				g[b] += gk
			}
		case OpIf:
			if v[a] != 0 {
				g[b] += gk
			} else {
				g[as[k+1]] += gk
			}
		case OpFloor, OpCeil, OpRound, OpLt, OpLe, OpGt, OpGe, OpEq, OpNe, OpAnd, OpOr, OpNot, opArg:
		default:
			op := ops[k]
			ar := op.Arity()
			var z float64
			if ar == 3 {
				z = v[as[k+1]]
			}
			dx, dy, dz := deriv(op, v[a], v[b], z, v[k])
			g[a] += gk * dx
			if ar >= 2 && op != OpPowConst {
				g[b] += gk * dy
			}
			if ar == 3 {
				g[as[k+1]] += gk * dz
			}
		}
	}
	copy(dst, g[:p.nIn])
	return dst
}

// Gradient evaluates output i at x and its gradient: dst[j] = ∂ output_i
// / ∂ x_j. It returns the output, or a *DomainError if the output or a
// derivative on the way to it is NaN or ±Inf.
func (t *Tape) Gradient(dst, x []float64, i int) (float64, error) {
	f, err := t.Eval(x, i)
	if err != nil {
		return f, err
	}
	t.Reverse(dst, i)
	for _, d := range dst {
		if !finite(d) {
			return f, t.reverseError(i, t.vals, t.adj, 1, 0, -1)
		}
	}
	return f, nil
}

// reverseError finds the node whose local derivative made the gradient of
// output i non-finite: the last node, in evaluation order, that has a
// finite, nonzero adjoint and passes a non-finite amount back.
func (t *Tape) reverseError(i int, vals, adj []float64, stride, off, sample int) error {
	p := t.p
	out := int(p.outs[i])
	for k := out; k >= p.start; k-- {
		gk := adj[k*stride+off]
		op := p.ops[k]
		if gk == 0 || !finite(gk) || op.IsStep() || op == opArg {
			continue
		}
		args := t.args(k, vals, stride, off)
		var x, y, z float64
		switch len(args) {
		case 3:
			z = args[2]
			fallthrough
		case 2:
			y = args[1]
			fallthrough
		case 1:
			x = args[0]
		}
		dx, dy, dz := deriv(op, x, y, z, vals[k*stride+off])
		if op == OpPowConst {
			dy = 0
		}
		if !finite(gk*dx) || !finite(gk*dy) || !finite(gk*dz) {
			return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: derivMsg(op, args), Sample: sample, Reverse: true}
		}
	}
	return &DomainError{Pos: p.pos[out], Op: p.ops[out], Msg: "gradient overflows", Sample: sample, Reverse: true}
}

// Batched sweeps.

const (
	// batchBudget bounds the block buffers of the batched sweeps
	// (values and adjoints).
	batchBudget = 4 << 20
	maxBlock    = 256
	// minBlock: below this width a batched sweep runs sample by sample.
	minBlock = 8
)

// blockWidth returns the block width for a tape of n nodes.
func blockWidth(n int) int {
	w := maxBlock
	for w >= minBlock && 16*n*w > batchBudget {
		w /= 2
	}
	return w
}

func (t *Tape) ensureBatch(adj bool) {
	p := t.p
	n := len(p.ops)
	if t.bw == 0 {
		t.bw = blockWidth(n)
		if t.bw < minBlock {
			return
		}
		t.bvals = make([]float64, n*t.bw)
		// Constants are broadcast once; sweeps never write them.
		for k := p.nIn; k < p.start; k++ {
			row := t.bvals[k*t.bw : (k+1)*t.bw]
			for s := range row {
				row[s] = t.vals[k]
			}
		}
	}
	if adj && t.badj == nil && t.bw >= minBlock {
		t.badj = make([]float64, n*t.bw)
	}
}

// loadBlock transposes samples base..base+m-1 of x into the input rows.
// Inputs are not tested here: like any value, a NaN or Inf input is
// caught where it reaches the output or a guard operation, and reported
// as the input it is.
func (t *Tape) loadBlock(x []float64, base, m int) {
	nIn, w := t.p.nIn, t.bw
	xb := x[base*nIn : (base+m)*nIn]
	for j := 0; j < nIn; j++ {
		row := t.bvals[j*w : j*w+m]
		src := xb[j:]
		for s := range row {
			row[s] = src[s*nIn]
		}
	}
}

func checkBatch(x []float64, n, nIn int) {
	if n < 0 || len(x) != n*nIn {
		panic(fmt.Sprintf("sens: batch of %d samples needs %d inputs, got %d", n, n*nIn, len(x)))
	}
}

// ForwardBatch evaluates output i for n samples: x is row-major
// (n × NumInputs) and out receives the n values. It returns a
// *DomainError for the first sample whose output would be NaN or ±Inf,
// with Sample set; out is then filled only up to that sample's block.
//
// Samples are evaluated in blocks, each operation running over a block
// before the next; the block width is chosen so that the block buffers
// stay within a fixed budget (4 MiB), and a tape too long for a useful
// block runs sample by sample.
func (t *Tape) ForwardBatch(out, x []float64, n, i int) error {
	p := t.p
	checkBatch(x, n, p.nIn)
	if len(out) != n {
		panic("sens: ForwardBatch output length differs from n")
	}
	t.ensureBatch(false)
	if t.bw < minBlock {
		for s := 0; s < n; s++ {
			f, err := t.Eval(x[s*p.nIn:(s+1)*p.nIn], i)
			if err != nil {
				err.(*DomainError).Sample = s
				return err
			}
			out[s] = f
		}
		return nil
	}
	w := t.bw
	o := int(p.outs[i])
	outs := p.outs[i : i+1]
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		t.loadBlock(x, base, m)
		bad := t.runBlock(m, p.end(i))
		orow := t.bvals[o*w : o*w+m]
		copy(out[base:base+m], orow)
		if bad || !allFinite(orow) {
			if err := t.checkBlock(bad, outs, base, m); err != nil {
				return err
			}
		}
	}
	return nil
}

// checkBlock reports the first sample of a block whose outputs outs are
// not finite.
func (t *Tape) checkBlock(bad bool, outs []int32, base, m int) error {
	w := t.bw
	for s := 0; s < m; s++ {
		if err := t.check(bad, outs, t.bvals, w, s, base+s); err != nil {
			return err
		}
	}
	return nil
}

// row returns the m values of node k in the current block.
func (t *Tape) row(buf []float64, k int32, m int) []float64 {
	i := int(k) * t.bw
	return buf[i : i+m : i+m]
}

// allFinite reports whether every element of xs is finite. x - x is 0
// for a finite x and NaN otherwise, and a NaN survives a sum, so four
// running sums replace a test per element.
func allFinite(xs []float64) bool {
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(xs); i += 4 {
		x := (*[4]float64)(xs[i:])
		s0 += x[0] - x[0]
		s1 += x[1] - x[1]
		s2 += x[2] - x[2]
		s3 += x[3] - x[3]
	}
	for ; i < len(xs); i++ {
		s0 += xs[i] - xs[i]
	}
	return s0+s1+s2+s3 == 0
}

// runBlock evaluates nodes [start, stop) over the current block of m
// samples; see run.
func (t *Tape) runBlock(m, stop int) (bad bool) {
	p := t.p
	bv := t.bvals
	ops := p.ops[:stop]
	as := p.a[:stop]
	bs := p.b[:stop]
	nIn, start := int32(p.nIn), int32(p.start)
	isConst := func(s int32) bool { return s >= nIn && s < start }
	// computed: a value that may be non-finite (anything but a
	// constant).
	computed := func(s int32) bool { return !isConst(s) }
	for k := p.start; k < stop; k++ {
		op := ops[k]
		if op == opArg {
			continue
		}
		a, b := as[k], bs[k]
		o := t.row(bv, int32(k), m)
		xs := t.row(bv, a, m)[:len(o)]
		ys := t.row(bv, b, m)[:len(o)]
		switch op {
		case OpAdd:
			if isConst(b) {
				c := ys[0]
				for s := range o {
					o[s] = xs[s] + c
				}
			} else {
				for s := range o {
					o[s] = xs[s] + ys[s]
				}
			}
		case OpSub:
			switch {
			case isConst(b):
				c := ys[0]
				for s := range o {
					o[s] = xs[s] - c
				}
			case isConst(a):
				c := xs[0]
				for s := range o {
					o[s] = c - ys[s]
				}
			default:
				for s := range o {
					o[s] = xs[s] - ys[s]
				}
			}
		case OpMul:
			if isConst(b) {
				c := ys[0]
				for s := range o {
					o[s] = xs[s] * c
				}
			} else {
				for s := range o {
					o[s] = xs[s] * ys[s]
				}
			}
		case OpDiv:
			switch {
			case isConst(b):
				c := ys[0]
				for s := range o {
					o[s] = xs[s] / c
				}
			case isConst(a):
				c := xs[0]
				for s := range o {
					o[s] = c / ys[s]
				}
			default:
				for s := range o {
					o[s] = xs[s] / ys[s]
				}
			}
			if computed(b) && !allFinite(ys) {
				bad = true
			}
		case OpNeg:
			for s := range o {
				o[s] = -xs[s]
			}
		case OpSquare:
			for s := range o {
				o[s] = xs[s] * xs[s]
			}
		case OpSqrt:
			for s := range o {
				o[s] = math.Sqrt(xs[s])
			}
		case OpExp:
			for s := range o {
				o[s] = math.Exp(xs[s])
			}
			if computed(a) && !allFinite(xs) {
				bad = true
			}
		case OpLn:
			for s := range o {
				o[s] = math.Log(xs[s])
			}
		case OpAbs:
			for s := range o {
				o[s] = math.Abs(xs[s])
			}
		case OpPowConst:
			c := ys[0]
			for s := range o {
				o[s] = math.Pow(xs[s], c)
			}
			if computed(a) && !allFinite(xs) {
				bad = true
			}
		case OpMin:
			for s := range o {
				x, y := xs[s], ys[s]
				if x <= y {
					o[s] = x
				} else {
					o[s] = y
				}
			}
			if computed(a) && !allFinite(xs) || computed(b) && !allFinite(ys) {
				bad = true
			}
		case OpMax:
			for s := range o {
				x, y := xs[s], ys[s]
				if x >= y {
					o[s] = x
				} else {
					o[s] = y
				}
			}
			if computed(a) && !allFinite(xs) || computed(b) && !allFinite(ys) {
				bad = true
			}
		case OpIf:
			c := as[k+1]
			zs := t.row(bv, c, m)[:len(o)]
			for s := range o {
				if xs[s] != 0 {
					o[s] = ys[s]
				} else {
					o[s] = zs[s]
				}
			}
			if computed(a) && !allFinite(xs) || computed(b) && !allFinite(ys) || computed(c) && !allFinite(zs) {
				bad = true
			}
		default:
			var zs []float64
			if op.Arity() == 3 {
				c := as[k+1]
				zs = t.row(bv, c, m)[:len(o)]
				if computed(c) && !allFinite(zs) {
					bad = true
				}
			}
			vecOp(op, o, xs, ys, zs)
			if opMetas[op].guard && (computed(a) && !allFinite(xs) || computed(b) && !allFinite(ys)) {
				bad = true
			}
		}
	}
	return bad
}

// GradientBatch evaluates output i and its gradient for n samples: x is
// row-major (n × NumInputs), out receives the n values and grads the n
// gradients, row-major (n × NumInputs). Errors are as for ForwardBatch,
// plus those of Gradient.
func (t *Tape) GradientBatch(out, grads, x []float64, n, i int) error {
	p := t.p
	nIn := p.nIn
	checkBatch(x, n, nIn)
	if len(out) != n || len(grads) != n*nIn {
		panic("sens: GradientBatch output lengths differ from n and n*NumInputs")
	}
	t.ensureBatch(true)
	if t.bw < minBlock {
		for s := 0; s < n; s++ {
			f, err := t.Gradient(grads[s*nIn:(s+1)*nIn], x[s*nIn:(s+1)*nIn], i)
			if err != nil {
				err.(*DomainError).Sample = s
				return err
			}
			out[s] = f
		}
		return nil
	}
	w := t.bw
	o := int(p.outs[i])
	outs := p.outs[i : i+1]
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		t.loadBlock(x, base, m)
		bad := t.runBlock(m, p.end(i))
		orow := t.bvals[o*w : o*w+m]
		copy(out[base:base+m], orow)
		if bad || !allFinite(orow) {
			if err := t.checkBlock(bad, outs, base, m); err != nil {
				return err
			}
		}
		t.reverseBlock(m, o)
		for s := 0; s < m; s++ {
			g := grads[(base+s)*nIn : (base+s+1)*nIn]
			ok := true
			for j := range g {
				d := t.badj[j*w+s]
				g[j] = d
				if !finite(d) {
					ok = false
				}
			}
			if !ok {
				return t.reverseError(i, t.bvals, t.badj, w, s, base+s)
			}
		}
	}
	return nil
}

// reverseBlock runs the reverse sweep from node out over the current
// block of m samples. A sample whose adjoint at a node is zero passes
// nothing back from that node, as in Reverse.
func (t *Tape) reverseBlock(m, out int) {
	p := t.p
	w := t.bw
	bv, bg := t.bvals, t.badj
	clear(bg[:(out+1)*w])
	g0 := t.row(bg, int32(out), m)
	for s := range g0 {
		g0[s] = 1
	}
	nIn, start := int32(p.nIn), int32(p.start)
	isConst := func(s int32) bool { return s >= nIn && s < start }
	for k := out; k >= p.start; k-- {
		op := p.ops[k]
		if op.IsStep() && op != OpIf || op == opArg {
			continue
		}
		a, b := p.a[k], p.b[k]
		gk := t.row(bg, int32(k), m)
		ga := t.row(bg, a, m)[:len(gk)]
		gb := t.row(bg, b, m)[:len(gk)]
		xs := t.row(bv, a, m)[:len(gk)]
		ys := t.row(bv, b, m)[:len(gk)]
		vs := t.row(bv, int32(k), m)[:len(gk)]
		switch op {
		case OpAdd:
			if isConst(b) {
				for s, g := range gk {
					ga[s] += g
				}
			} else {
				for s, g := range gk {
					ga[s] += g
					gb[s] += g
				}
			}
		case OpSub:
			for s, g := range gk {
				ga[s] += g
				gb[s] -= g
			}
		case OpMul:
			if isConst(b) {
				c := ys[0]
				for s, g := range gk {
					if g != 0 {
						ga[s] += g * c
					}
				}
			} else {
				for s, g := range gk {
					if g != 0 {
						ga[s] += g * ys[s]
						gb[s] += g * xs[s]
					}
				}
			}
		case OpDiv:
			for s, g := range gk {
				if g != 0 {
					q := g / ys[s]
					ga[s] += q
					gb[s] -= q * vs[s]
				}
			}
		case OpNeg:
			for s, g := range gk {
				ga[s] -= g
			}
		case OpSquare:
			for s, g := range gk {
				if g != 0 {
					ga[s] += 2 * g * xs[s]
				}
			}
		case OpSqrt:
			for s, g := range gk {
				if g != 0 {
					ga[s] += g * 0.5 / vs[s]
				}
			}
		case OpExp:
			for s, g := range gk {
				if g != 0 {
					ga[s] += g * vs[s]
				}
			}
		case OpLn:
			for s, g := range gk {
				if g != 0 {
					ga[s] += g / xs[s]
				}
			}
		case OpMin:
			for s, g := range gk {
				if xs[s] <= ys[s] {
					ga[s] += g
				} else {
					gb[s] += g
				}
			}
		case OpMax:
			for s, g := range gk {
				if xs[s] >= ys[s] {
					ga[s] += g
				} else {
					gb[s] += g
				}
			}
		case OpIf:
			gc := t.row(bg, p.a[k+1], m)[:len(gk)]
			for s, g := range gk {
				if xs[s] != 0 {
					gb[s] += g
				} else {
					gc[s] += g
				}
			}
		default:
			ar := op.Arity()
			if ar == 3 {
				c := p.a[k+1]
				gc := t.row(bg, c, m)[:len(gk)]
				zs := t.row(bv, c, m)[:len(gk)]
				for s, g := range gk {
					if g != 0 {
						dx, dy, dz := deriv(op, xs[s], ys[s], zs[s], vs[s])
						ga[s] += g * dx
						gb[s] += g * dy
						gc[s] += g * dz
					}
				}
				continue
			}
			both := ar == 2 && op != OpPowConst
			for s, g := range gk {
				if g != 0 {
					dx, dy, _ := deriv(op, xs[s], ys[s], 0, vs[s])
					ga[s] += g * dx
					if both {
						gb[s] += g * dy
					}
				}
			}
		}
	}
}

// vecOp sets o[s] = op(x[s], y[s], z[s]) for the operations runBlock has
// no loop of its own for; z is nil unless op takes three arguments.
func vecOp(op Op, o, x, y, z []float64) {
	x, y = x[:len(o)], y[:len(o)]
	switch op {
	case OpFloor:
		for s := range o {
			o[s] = math.Floor(x[s])
		}
	case OpCeil:
		for s := range o {
			o[s] = math.Ceil(x[s])
		}
	case OpRound:
		for s := range o {
			o[s] = math.Round(x[s])
		}
	case OpLt:
		for s := range o {
			o[s] = b2f(x[s] < y[s])
		}
	case OpLe:
		for s := range o {
			o[s] = b2f(x[s] <= y[s])
		}
	case OpGt:
		for s := range o {
			o[s] = b2f(x[s] > y[s])
		}
	case OpGe:
		for s := range o {
			o[s] = b2f(x[s] >= y[s])
		}
	case OpPow:
		for s := range o {
			o[s] = math.Pow(x[s], y[s])
		}
	case OpGrowth:
		for s := range o {
			o[s] = econGrowth(x[s], y[s])
		}
	case OpDiscount:
		for s := range o {
			o[s] = econDiscount(x[s], y[s])
		}
	case OpAnnuityPV:
		for s := range o {
			o[s] = econAnnuityPV(x[s], y[s])
		}
	case OpAnnuityFV:
		for s := range o {
			o[s] = econAnnuityFV(x[s], y[s])
		}
	case OpRecovery:
		for s := range o {
			o[s] = econRecovery(x[s], y[s])
		}
	case OpSinking:
		for s := range o {
			o[s] = econSinking(x[s], y[s])
		}
	case OpLearn:
		z = z[:len(o)]
		for s := range o {
			o[s] = learnUnit(x[s], y[s], z[s])
		}
	default:
		if z == nil {
			for s := range o {
				o[s] = evalOp(op, x[s], y[s], 0)
			}
			return
		}
		z = z[:len(o)]
		for s := range o {
			o[s] = evalOp(op, x[s], y[s], z[s])
		}
	}
}
