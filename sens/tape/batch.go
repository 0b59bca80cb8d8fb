package tape

import (
	"fmt"
	"math"
)

const (
	// batchBudget bounds the block buffers of the batched passes
	// (values and adjoints).
	batchBudget = 4 << 20
	maxBlock    = 256
	// minBlock: below this width a batched pass runs sample by sample.
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
		// Constants are broadcast once; passes never write them.
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
		panic(fmt.Sprintf("tape: batch of %d samples needs %d inputs, got %d", n, n*nIn, len(x)))
	}
}

// forwardBlocks is ForwardBatch by the node-major block pass (runBlock),
// for a tape whose operations plans do not know (see plannable): a tape too
// long for a useful block runs sample by sample.
func (t *Tape) forwardBlocks(out, x []float64, n, i int) error {
	t.ensureBatch(false)
	if t.bw < minBlock {
		return t.bySample(out, nil, x, n, i, false)
	}
	for base := 0; base < n; base += t.bw {
		if err := t.forwardBlock(out, x, i, base, min(t.bw, n-base)); err != nil {
			return err
		}
	}
	return nil
}

// columnBlocks is ForwardColumns by the node-major block pass (see
// forwardBlocks): each block's input rows are copied from the columns, and
// a tape too long for a useful block runs sample by sample through Value
// over a row of the tape's own (xrow), so that nothing is allocated per
// call.
func (t *Tape) columnBlocks(out []float64, cols [][]float64, n, i int) error {
	t.ensureBatch(false)
	if t.bw < minBlock {
		if len(t.xrow) != t.p.nIn {
			t.xrow = make([]float64, t.p.nIn)
		}
		x := t.xrow
		for s := range n {
			for j, c := range cols {
				x[j] = c[s]
			}
			f, err := t.eval(x, i, true)
			if err != nil {
				err.(*DomainError).Sample = s
				return err
			}
			out[s] = f
		}
		return nil
	}
	w := t.bw
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		for j, c := range cols {
			copy(t.bvals[j*w:j*w+m], c[base:base+m])
		}
		if err := t.blockOutput(out, i, base, m); err != nil {
			return err
		}
	}
	return nil
}

// bySample runs a batch sample by sample, through Eval or, with grad,
// Gradient: the way of a tape too long for a useful block.
func (t *Tape) bySample(out, grads, x []float64, n, i int, grad bool) error {
	nIn := t.p.nIn
	for s := 0; s < n; s++ {
		var f float64
		var err error
		if grad {
			f, err = t.Gradient(grads[s*nIn:(s+1)*nIn], x[s*nIn:(s+1)*nIn], i)
		} else {
			f, err = t.Eval(x[s*nIn:(s+1)*nIn], i)
		}
		if err != nil {
			err.(*DomainError).Sample = s
			return err
		}
		out[s] = f
	}
	return nil
}

// forwardBlock runs the forward pass for output i over the block of m
// samples that starts at sample base, and stores the outputs in out.
func (t *Tape) forwardBlock(out, x []float64, i, base, m int) error {
	t.loadBlock(x, base, m)
	return t.blockOutput(out, i, base, m)
}

// blockOutput runs the forward pass for output i over the block of m
// samples that starts at sample base, whose inputs are loaded, and stores
// the outputs in out.
func (t *Tape) blockOutput(out []float64, i, base, m int) error {
	p, w := t.p, t.bw
	o := int(p.outs[i])
	bad := t.runBlock(m, p.end(i))
	orow := t.bvals[o*w : o*w+m]
	copy(out[base:base+m], orow)
	if bad || !allFinite(orow) {
		return t.checkBlock(bad, p.outs[i:i+1], base, m)
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
	// computed: a value that may be non-finite (anything but a finite
	// constant: the Builder takes Const(±Inf) and Const(NaN), and a guard
	// operation must report them as Eval does).
	computed := func(s int32) bool { return !isConst(s) || !finite(t.vals[s]) }
	for k := p.start; k < stop; k++ {
		op := ops[k]
		if op == opArg {
			continue
		}
		if op == opLoop { // vec.go
			if t.loopBlock(k, m) {
				bad = true
			}
			k += p.loopWidth(k) - 1
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
	nIn := t.p.nIn
	checkBatch(x, n, nIn)
	if len(out) != n || len(grads) != n*nIn {
		panic("tape: GradientBatch output lengths differ from n and n*NumInputs")
	}
	t.ensureBatch(true)
	if t.bw < minBlock {
		return t.bySample(out, grads, x, n, i, true)
	}
	for base := 0; base < n; base += t.bw {
		m := min(t.bw, n-base)
		if err := t.forwardBlock(out, x, i, base, m); err != nil {
			return err
		}
		if err := t.gradientBlock(grads, i, base, m); err != nil {
			return err
		}
	}
	return nil
}

// gradientBlock runs the reverse pass for output i over the current block
// of m samples, the first of which is sample base, and stores their
// gradients in grads (row-major, n × NumInputs).
func (t *Tape) gradientBlock(grads []float64, i, base, m int) error {
	nIn, w := t.p.nIn, t.bw
	t.reverseBlock(m, int(t.p.outs[i]))
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
	return nil
}

// reverseBlock runs the reverse pass from node out over the current
// block of m samples. A sample whose adjoint at a node is zero passes
// nothing back from that node, as in Reverse.
func (t *Tape) reverseBlock(m, out int) {
	p := t.p
	w := t.bw
	bv, bg := t.bvals, t.badj
	clear(bg[:max(p.endNode(out), p.nIn)*w])
	g0 := t.row(bg, int32(out), m)
	for s := range g0 {
		g0[s] = 1
	}
	nIn, start := int32(p.nIn), int32(p.start)
	isConst := func(s int32) bool { return s >= nIn && s < start }
	for k := out; k >= p.start; k-- {
		op := p.ops[k]
		if op == opLoop || op == opLane { // vec.go
			h := k
			if op == opLane {
				h = int(p.a[k])
			}
			t.loopReverseBlock(h, m)
			k = h
			continue
		}
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
		case OpAbs: // as reverseNodes: nothing passes at 0, not even an infinite adjoint
			for s, g := range gk {
				if x := xs[s]; x > 0 {
					ga[s] += g
				} else if x < 0 {
					ga[s] -= g
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

// vecOp sets o[s] = op(x[s], y[s], z[s]) for the operations the batched
// passes have no loop of their own for; z is nil unless op takes three
// arguments. o may be one of x, y and z.
func vecOp(op Op, o, x, y, z []float64) {
	x, y = x[:len(o)], y[:len(o)]
	switch op {
	case OpSqrt:
		for s := range o {
			o[s] = math.Sqrt(x[s])
		}
	case OpExp:
		for s := range o {
			o[s] = math.Exp(x[s])
		}
	case OpLn:
		for s := range o {
			o[s] = math.Log(x[s])
		}
	case OpAbs:
		for s := range o {
			o[s] = math.Abs(x[s])
		}
	case OpPowConst:
		c := y[0]
		for s := range o {
			o[s] = math.Pow(x[s], c)
		}
	case OpMin:
		for s := range o {
			if a, b := x[s], y[s]; a <= b {
				o[s] = a
			} else {
				o[s] = b
			}
		}
	case OpMax:
		for s := range o {
			if a, b := x[s], y[s]; a >= b {
				o[s] = a
			} else {
				o[s] = b
			}
		}
	case OpIf:
		z = z[:len(o)]
		for s := range o {
			if x[s] != 0 {
				o[s] = y[s]
			} else {
				o[s] = z[s]
			}
		}
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
			o[s] = Growth(x[s], y[s])
		}
	case OpDiscount:
		for s := range o {
			o[s] = Discount(x[s], y[s])
		}
	case OpAnnuityPV:
		for s := range o {
			o[s] = AnnuityPV(x[s], y[s])
		}
	case OpAnnuityFV:
		for s := range o {
			o[s] = AnnuityFV(x[s], y[s])
		}
	case OpRecovery:
		for s := range o {
			o[s] = Recovery(x[s], y[s])
		}
	case OpSinking:
		for s := range o {
			o[s] = Sinking(x[s], y[s])
		}
	case OpLearn:
		z = z[:len(o)]
		for s := range o {
			o[s] = Learn(x[s], y[s], z[s])
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
