package tape

import (
	"fmt"
	"math"
	"strings"
)

// Hessian computes Hessian-vector products of a tape's outputs by
// forward-over-reverse differentiation: the forward pass carries, beside
// each node's value, its tangents along m directions (the directional
// derivatives ẋ_k = ∇x_k · d), and the reverse pass carries, beside each
// node's adjoint g_k = ∂f/∂x_k, its tangents ġ_k = (∇g_k) · d. For an
// operation k = φ(a, b, c) the reverse pass sends back
//
//	g_a += g_k ∂φ/∂a
//	ġ_a += ġ_k ∂φ/∂a + g_k Σ_m ∂²φ/∂a∂m ẋ_m     (m over a, b, c)
//
// and at the inputs ġ = H d. One product costs one forward pass, one
// tangent pass and one reverse pass of twice the work: a small multiple
// of a gradient. m directions share the value and adjoint passes, so the
// whole Hessian of k inputs costs k lanes, run in batches (Columns).
//
// Second derivatives follow the first derivatives' conventions (a kink
// or a step has second derivative 0 on either side). Where the output is
// not twice differentiable at the point (abs at 0, min or max at a tie,
// a step where it jumps, on the path the output takes), the pass records
// a Kink: the numbers are then the one-sided ones of the branch taken,
// and the caller must say so.
//
// A Hessian holds buffers of its own over the tape's program, which it
// does not change; like a Tape it must not be used by two goroutines at
// once, and it uses its tape's value buffer, so it must not run while
// another pass of that tape does.
type Hessian struct {
	t        *Tape
	m        int       // lanes of the buffers
	dv, dg   []float64 // tangents of values and adjoints, node-major: [k*m+s]
	g        []float64 // adjoints
	d        []float64 // the local partials of generic operations, from the tangent pass: [3k+j]
	kinks    []Kink
	cand     []int32 // nodes that may be kinks, found by the tangent pass
	live     []bool
	hasLoops bool
}

// Kink is an operation where the output is not twice differentiable at
// the point of the last pass.
type Kink struct {
	Pos     int32  // source position of the operation (Builder.SetPos)
	Op      Op     // the operation
	Msg     string // "abs at 0 (a kink)", "min of two equal values (3): a kink", ...
	Element int    // for an element of a loop node, 1 + its index; else 0
}

// NewHessian returns a Hessian-vector evaluator of t.
func NewHessian(t *Tape) *Hessian {
	return &Hessian{t: t, hasLoops: len(t.p.loops) > 0}
}

// Tape returns the tape h differentiates.
func (h *Hessian) Tape() *Tape { return h.t }

// Kinks returns the operations of the last call where the output is not
// twice differentiable, in tape order (empty when there are none).
func (h *Hessian) Kinks() []Kink { return h.kinks }

// Lanes returns how many directions one pass should carry on a tape of n
// nodes, at most most: as many as fit a budget of about 32 MB of tangents.
func Lanes(n, most int) int {
	const budget = 32 << 20 / 16 // two tangent buffers of 8 bytes a lane
	m := budget / (n + 1)
	return min(max(m, 1), most)
}

// Vectors evaluates output i at x, its gradient into grad (length
// NumInputs, or nil), and the m products of its Hessian with the
// directions in dirs (m rows of NumInputs, row by row) into hv (the same
// shape): hv[s*n+j] = Σ_l ∂²f/∂x_j∂x_l dirs[s*n+l]. It returns the
// output, or a *DomainError if the output, a derivative or a second
// derivative on the way to it is NaN or ±Inf. Kinks lists where the
// second derivatives are one-sided.
func (h *Hessian) Vectors(hv, grad, x, dirs []float64, m, i int) (float64, error) {
	t := h.t
	p := t.p
	nIn := p.nIn
	if len(dirs) != m*nIn || len(hv) != m*nIn || grad != nil && len(grad) != nIn {
		panic(fmt.Sprintf("tape: Hessian-vector products of %d directions need %d entries, got dirs %d, hv %d", m, m*nIn, len(dirs), len(hv)))
	}
	t.loadInputs(x)
	// The passes run to the output's end, and over every input even when
	// the output is one of them.
	end := max(p.end(i), p.start)
	out := int(p.outs[i])
	if h.m != m || len(h.g) < len(p.ops) {
		n := len(p.ops)
		h.m = m
		h.dv = make([]float64, n*m)
		h.dg = make([]float64, n*m)
		h.g = make([]float64, n)
		h.d = make([]float64, 3*n)
	}
	h.kinks = h.kinks[:0]
	h.cand = h.cand[:0]
	v := t.vals
	dv := h.dv[:end*m]
	// The inputs' tangents are the directions; constants have none.
	for j := range nIn {
		for s := range m {
			dv[j*m+s] = dirs[s*nIn+j]
		}
	}
	clear(dv[nIn*m : p.start*m])
	if h.tangents(v, dv, end) || !finite(v[out]) {
		// A guard saw a NaN or Inf, or the output is one: the scalar pass
		// finds where it arose (its values are the same to the bit).
		if _, err := t.Eval(x, i); err != nil {
			return math.NaN(), err
		}
	}
	f := v[out]
	h.reverse(v, dv, out, end)
	g, dg := h.g, h.dg
	for j := range nIn {
		for s := range m {
			hv[s*nIn+j] = dg[j*m+s]
		}
	}
	if grad != nil {
		copy(grad, g[:nIn])
	}
	if len(h.cand) > 0 {
		h.findKinks(v, out)
	}
	if !allFinite(hv) || grad != nil && !allFinite(grad) {
		return f, h.error(v, g, dg, out)
	}
	return f, nil
}

// tangents runs the forward pass over nodes [start, end), values and
// tangents together: v[k] = φ_k(v[a], ...) and dv[k] = Σ ∂φ_k/∂a dv[a].
// It notes the nodes that may be kinks, and reports whether a guard
// operation saw a non-finite operand (see Tape.run).
func (h *Hessian) tangents(v, dv []float64, end int) (bad bool) {
	if h.m == 1 {
		return h.tangents1(v, dv, end)
	}
	for k := h.t.p.start; k < end; k++ {
		if h.value(v, k) {
			bad = true
		}
		h.tangentNode(v, dv, k)
	}
	return bad
}

// value evaluates node k as the scalar pass does (Tape.run), and reports
// whether it is a guard operation that saw a non-finite operand.
func (h *Hessian) value(v []float64, k int) bool {
	p := h.t.p
	switch p.ops[k] {
	case opArg, opLane:
		return false
	case opLoop:
		return p.loopForward(v, k)
	}
	return p.step(v, int32(k))
}

// tangentNode runs the tangent pass through node k.
func (h *Hessian) tangentNode(v, dv []float64, k int) {
	p := h.t.p
	m := h.m
	{
		op := p.ops[k]
		a, b := int(p.a[k]), int(p.b[k])
		o := dv[k*m : k*m+m]
		da, db := dv[a*m:a*m+m], dv[b*m:b*m+m]
		switch op {
		case OpAdd:
			for s := range o {
				o[s] = da[s] + db[s]
			}
		case OpSub:
			for s := range o {
				o[s] = da[s] - db[s]
			}
		case OpMul:
			x, y := v[a], v[b]
			for s := range o {
				o[s] = da[s]*y + x*db[s]
			}
		case OpDiv:
			y, q := v[b], v[k]
			for s := range o {
				o[s] = (da[s] - q*db[s]) / y
			}
		case OpNeg:
			for s := range o {
				o[s] = -da[s]
			}
		case OpSquare:
			x2 := 2 * v[a]
			for s := range o {
				o[s] = x2 * da[s]
			}
		case opArg, opLane:
			// An opArg carries no value of its own; a lane is filled by its
			// loop node.
		case opLoop:
			h.loopTangents(v, dv, k)
		case OpIf:
			c := int(p.a[k+1])
			src := db
			if v[a] == 0 {
				src = dv[c*m : c*m+m]
			}
			copy(o, src)
			if v[a] == 0 && p.continuous(int32(a)) {
				h.cand = append(h.cand, int32(k))
			}
		default:
			if op.IsStep() {
				clear(o)
				if p.isKink(op, int32(a), int32(b), v) {
					h.cand = append(h.cand, int32(k))
				}
				return
			}
			// min(x, x) and max(x, x) are x: no kink.
			if (op == OpAbs || (op == OpMin || op == OpMax) && a != b) && p.isKink(op, int32(a), int32(b), v) {
				h.cand = append(h.cand, int32(k))
			}
			switch op {
			case OpMin, OpMax:
				src := da
				if op == OpMin && !(v[a] <= v[b]) || op == OpMax && !(v[a] >= v[b]) {
					src = db
				}
				copy(o, src)
				return
			case OpExp:
				e := v[k]
				h.d[3*k] = e
				for s := range o {
					o[s] = e * da[s]
				}
				return
			}
			ar := op.Arity()
			var z float64
			var dc []float64
			if ar == 3 {
				c := int(p.a[k+1])
				z = v[c]
				dc = dv[c*m : c*m+m]
			}
			dx, dy, dz := deriv(op, v[a], v[b], z, v[k])
			if ar < 2 || op == OpPowConst {
				dy = 0
			}
			h.d[3*k], h.d[3*k+1], h.d[3*k+2] = dx, dy, dz
			for s := range o {
				r := dx * da[s]
				if dy != 0 {
					r += dy * db[s]
				}
				if dz != 0 {
					r += dz * dc[s]
				}
				o[s] = r
			}
		}
	}
}

// isKink reports whether op over the slots a and b is at a kink or jump
// at the values v.
func (p *tapeProg) isKink(op Op, a, b int32, v []float64) bool {
	args := [2]int32{a, b}
	return kink(op, v[a], v[b], func(j int) bool { return p.continuous(args[j]) }) != ""
}

// continuous reports whether slot s holds a value that varies
// continuously: not a constant, and not the 0 or 1 of a step.
func (p *tapeProg) continuous(s int32) bool {
	if s >= int32(p.nIn) && s < int32(p.start) {
		return false
	}
	return s < int32(p.start) || !p.ops[s].IsStep()
}

// reverse runs the reverse pass of adjoints and their tangents from
// output node out.
func (h *Hessian) reverse(v, dv []float64, out, end int) {
	p := h.t.p
	m := h.m
	g := h.g[:end]
	dg := h.dg[:end*m]
	clear(g)
	clear(dg)
	g[out] = 1
	if m == 1 {
		h.reverse1(v, dv, out)
		return
	}
	for k := out; k >= p.start; k-- {
		op := p.ops[k]
		if op == opLane || op == opArg {
			continue
		}
		if op == opLoop { // its lanes' adjoints are its own (the first is k's)
			h.loopReverse(v, dv, k)
			continue
		}
		dk := dg[k*m : k*m+m]
		if g[k] == 0 && allZero(dk) {
			continue
		}
		h.reverseNode(v, dv, k)
	}
}

// reverseNode runs the reverse pass of adjoints and their tangents
// through node k, an operation other than a loop node.
func (h *Hessian) reverseNode(v, dv []float64, k int) {
	p := h.t.p
	m := h.m
	g, dg := h.g, h.dg
	op := p.ops[k]
	gk := g[k]
	dk := dg[k*m : k*m+m]
	{
		a, b := int(p.a[k]), int(p.b[k])
		ga, gb := dg[a*m:a*m+m], dg[b*m:b*m+m]
		switch op {
		case OpAdd:
			g[a] += gk
			g[b] += gk
			for s, d := range dk {
				ga[s] += d
			}
			for s, d := range dk {
				gb[s] += d
			}
		case OpSub:
			g[a] += gk
			g[b] -= gk
			for s, d := range dk {
				ga[s] += d
			}
			for s, d := range dk {
				gb[s] -= d
			}
		case OpMul:
			x, y := v[a], v[b]
			g[a] += gk * y
			g[b] += gk * x
			ta, tb := dv[a*m:a*m+m], dv[b*m:b*m+m]
			for s, d := range dk {
				ga[s] += d*y + gk*tb[s]
			}
			for s, d := range dk {
				gb[s] += d*x + gk*ta[s]
			}
		case OpDiv:
			// x/y: partials 1/y and -v/y; second -1/y² (xy) and 2v/y² (yy).
			y, q := v[b], v[k]
			ry := 1 / y
			g[a] += gk * ry
			g[b] -= gk * q * ry
			ta, tb := dv[a*m:a*m+m], dv[b*m:b*m+m]
			c := gk * ry * ry
			for s, d := range dk {
				ga[s] += d*ry - c*tb[s]
			}
			for s, d := range dk {
				gb[s] += -d*q*ry + c*(2*q*tb[s]-ta[s])
			}
		case OpSquare:
			x2 := 2 * v[a]
			g[a] += gk * x2
			ta := dv[a*m : a*m+m]
			for s, d := range dk {
				ga[s] += d*x2 + 2*gk*ta[s]
			}
		case OpMin, OpMax:
			c := a
			if op == OpMin && !(v[a] <= v[b]) || op == OpMax && !(v[a] >= v[b]) {
				c = b
			}
			g[c] += gk
			gc := dg[c*m : c*m+m]
			for s, d := range dk {
				gc[s] += d
			}
		case OpExp:
			e := v[k]
			g[a] += gk * e
			ta := dv[a*m : a*m+m]
			for s, d := range dk {
				ga[s] += (d + gk*ta[s]) * e
			}
		case OpNeg:
			g[a] -= gk
			for s, d := range dk {
				ga[s] -= d
			}
		case OpIf:
			c := b
			if v[a] == 0 {
				c = int(p.a[k+1])
			}
			g[c] += gk
			gc := dg[c*m : c*m+m]
			for s, d := range dk {
				gc[s] += d
			}
		default:
			if op.IsStep() {
				return
			}
			ar := op.Arity()
			args := [3]int{a, b, a}
			var z float64
			if ar == 3 {
				args[2] = int(p.a[k+1])
				z = v[args[2]]
			}
			h.generic(op, ar, args, [3]float64(h.d[3*k:3*k+3]), v[a], v[b], z, v[k], gk, dk, dv, dg, g)
		}
	}
}

// generic sends back the adjoint gk and its tangents dk through an
// operation op of ar arguments at slots args with values x, y, z and
// value val, from its first derivatives d (deriv, kept by the tangent
// pass) and second (second).
func (h *Hessian) generic(op Op, ar int, args [3]int, d [3]float64, x, y, z, val, gk float64, dk, dv, dg, g []float64) {
	m := h.m
	nArg := ar
	if op == OpPowConst {
		nArg = 1 // the exponent is a constant
	}
	var hs hess
	if gk != 0 {
		hs = second(op, x, y, z, val)
	}
	for j := range nArg {
		aj := args[j]
		if gk != 0 {
			g[aj] += gk * d[j]
		}
		gj := dg[aj*m : aj*m+m]
		for s, dd := range dk {
			r := 0.0
			if dd != 0 {
				r = dd * d[j]
			}
			if gk != 0 {
				for l := range nArg {
					if hjl := hs.at(j, l); hjl != 0 {
						r += gk * hjl * dv[args[l]*m+s]
					}
				}
			}
			gj[s] += r
		}
	}
}

func allZero(xs []float64) bool {
	for _, x := range xs {
		if x != 0 {
			return false
		}
	}
	return true
}

// findKinks keeps, of the candidate nodes, those the output's value
// depends on through the branches its ifs take, and whose operands are
// continuous where that matters.
func (h *Hessian) findKinks(v []float64, out int) {
	p := h.t.p
	if cap(h.live) < out+1 {
		h.live = make([]bool, out+1)
	}
	live := h.live[:out+1]
	clear(live)
	live[out] = true
	for k := out; k >= p.start; k-- {
		op := p.ops[k]
		if op == opLoop || op == opLane {
			h0 := k
			if op == opLane {
				h0 = int(p.a[k])
			}
			if live[k] {
				live[h0] = true
			}
			if op == opLoop && live[k] {
				p.loops[p.a[k]].operands(func(first, n int32) {
					for s := first; s < first+n; s++ {
						live[s] = true
					}
				})
			}
			continue
		}
		if !live[k] || op == opArg {
			continue
		}
		a, b := p.a[k], p.b[k]
		if op == OpIf {
			live[a] = true
			if v[a] != 0 {
				live[b] = true
			} else {
				live[p.a[k+1]] = true
			}
			continue
		}
		live[a] = true
		live[b] = true
		if op.Arity() == 3 {
			live[p.a[k+1]] = true
		}
	}
	cont := p.continuous
	for _, k := range h.cand {
		if int(k) > out || !live[k] {
			continue
		}
		if p.ops[k] == opLoop {
			h.loopKinks(v, int(k), cont)
			continue
		}
		op := p.ops[k]
		a, b := p.a[k], p.b[k]
		args := [2]int32{a, b}
		msg := kink(op, v[a], v[b], func(j int) bool { return cont(args[j]) })
		if msg != "" && (op == OpAbs || op == OpMin || op == OpMax || op.IsStep()) {
			if !dependsOnInput(p, a, b) {
				continue
			}
			h.kinks = append(h.kinks, Kink{Pos: p.pos[k], Op: op, Msg: msg})
		}
	}
}

// dependsOnInput reports whether a or b is not a constant: an operation on
// constants alone does not move with the inputs, so its tie is no kink.
func dependsOnInput(p *tapeProg, a, b int32) bool {
	isConst := func(s int32) bool { return s >= int32(p.nIn) && s < int32(p.start) }
	return !isConst(a) || !isConst(b)
}

// error returns the *DomainError of the first node, from the output back,
// whose adjoint, adjoint tangent or local second derivative is not finite
// (an unbounded derivative reached by a nonzero adjoint).
func (h *Hessian) error(v, g, dg []float64, out int) error {
	p := h.t.p
	m := h.m
	for k := p.start; k <= out; k++ {
		op := p.ops[k]
		if op == opArg || op == opLane || op == opLoop || op.IsStep() {
			continue
		}
		bad := !finite(g[k]) || !allFinite(dg[k*m:k*m+m])
		if bad {
			continue // an operand's: found where it arose below
		}
		if g[k] == 0 && allZero(dg[k*m:k*m+m]) {
			continue
		}
		a, b := p.a[k], p.b[k]
		var z float64
		args := []float64{v[a]}
		if op.Arity() >= 2 {
			args = append(args, v[b])
		}
		if op.Arity() == 3 {
			z = v[p.a[k+1]]
			args = append(args, z)
		}
		dx, dy, dz := deriv(op, v[a], v[b], z, v[k])
		hs := second(op, v[a], v[b], z, v[k])
		firstOK := finite(dx) && finite(dy) && finite(dz)
		if firstOK && finite(hs.xx) && finite(hs.xy) && finite(hs.xz) && finite(hs.yy) && finite(hs.yz) && finite(hs.zz) {
			continue
		}
		msg := derivMsg(op, args)
		if firstOK {
			msg = secondMsg(op, args)
		}
		return &DomainError{Pos: p.pos[k], Op: op, Args: args, Msg: msg, Sample: -1, Reverse: true}
	}
	return &DomainError{Pos: p.pos[out], Op: p.ops[out], Msg: "second derivative is not finite", Sample: -1, Reverse: true}
}

// secondMsg explains an operation whose first derivatives are finite at
// args but whose second are not.
func secondMsg(op Op, args []float64) string {
	var xs []string
	for _, a := range args {
		xs = append(xs, num(a))
	}
	at := strings.Join(xs, ", ")
	switch op {
	case OpPow, OpPowConst:
		return fmt.Sprintf("second derivative of x^y is infinite at x = %s (y = %s)", xs[0], xs[1])
	case OpAsin, OpAcos, OpSqrt:
		return fmt.Sprintf("second derivative of %s is infinite at %s", op, at)
	}
	return fmt.Sprintf("second derivative of %s is not finite at (%s)", op, at)
}

// ---- loop nodes (vec.go), element by element

// loopTangents runs the tangent pass through the loop node at k.
func (h *Hessian) loopTangents(v, dv []float64, k int) {
	p := h.t.p
	m := h.m
	l := &p.loops[p.a[k]]
	n := int(l.n)
	x, y, z := int(l.arg[0]), int(l.arg[1]), int(l.arg[2])
	row := func(s int) []float64 { return dv[s*m : s*m+m] }
	switch l.kind {
	case loopMap:
		sx, sy, sz := int(l.step[0]), int(l.step[1]), int(l.step[2])
		op := l.op
		ar := op.Arity()
		for j := range n {
			xi, yi, zi := x+j*sx, y+j*sy, z+j*sz
			o := row(k + j)
			if op.IsStep() && op != OpIf {
				clear(o)
				if p.isKink(op, int32(xi), int32(yi), v) {
					h.addCand(k)
				}
				continue
			}
			if op == OpIf {
				src := yi
				if v[xi] == 0 {
					src = zi
					if p.continuous(int32(xi)) {
						h.addCand(k)
					}
				}
				copy(o, row(src))
				continue
			}
			if (op == OpAbs || op == OpMin || op == OpMax) && p.isKink(op, int32(xi), int32(yi), v) {
				h.addCand(k)
			}
			dx, dy, dz := deriv(op, v[xi], v[yi], v[zi], v[k+j])
			if ar < 2 || op == OpPowConst {
				dy = 0
			}
			if ar < 3 {
				dz = 0
			}
			ta, tb, tc := row(xi), row(yi), row(zi)
			for s := range o {
				r := dx * ta[s]
				if dy != 0 {
					r += dy * tb[s]
				}
				if dz != 0 {
					r += dz * tc[s]
				}
				o[s] = r
			}
		}
	case loopSum, loopDot:
		o := row(k)
		clear(o)
		for j := range n {
			ta := row(x + j)
			if l.kind == loopSum {
				for s := range o {
					o[s] += ta[s]
				}
				continue
			}
			tb := row(y + j)
			xv, yv := v[x+j], v[y+j]
			for s := range o {
				o[s] += ta[s]*yv + xv*tb[s]
			}
		}
	case loopMin, loopMax:
		xs := v[x : x+n]
		bi := l.best(xs)
		copy(row(k), row(x+bi))
		for j, xv := range xs {
			if j != bi && xv == xs[bi] {
				h.addCand(k)
				break
			}
		}
	case loopGather:
		for j, i := range l.idx {
			copy(row(k+j), row(x+int(i)))
		}
	case loopGroup:
		for i, gr := range l.idx {
			o, src := row(k+int(gr)), row(x+i)
			if l.first[gr] == int32(i) {
				copy(o, src)
			} else {
				for s := range o {
					o[s] += src[s]
				}
			}
		}
	}
}

func (h *Hessian) addCand(k int) {
	if n := len(h.cand); n == 0 || h.cand[n-1] != int32(k) {
		h.cand = append(h.cand, int32(k))
	}
}

// loopReverse runs the reverse pass of adjoints and their tangents
// through the loop node at k.
func (h *Hessian) loopReverse(v, dv []float64, k int) {
	p := h.t.p
	m := h.m
	g, dg := h.g, h.dg
	l := &p.loops[p.a[k]]
	n := int(l.n)
	x, y, z := int(l.arg[0]), int(l.arg[1]), int(l.arg[2])
	row := func(s int) []float64 { return dg[s*m : s*m+m] }
	addTo := func(dst int, gk float64, dk []float64) {
		g[dst] += gk
		o := row(dst)
		for s, d := range dk {
			o[s] += d
		}
	}
	switch l.kind {
	case loopMap:
		sx, sy, sz := int(l.step[0]), int(l.step[1]), int(l.step[2])
		op := l.op
		ar := op.Arity()
		for j := n - 1; j >= 0; j-- {
			gk := g[k+j]
			dk := row(k + j)
			if gk == 0 && allZero(dk) {
				continue
			}
			xi, yi, zi := x+j*sx, y+j*sy, z+j*sz
			switch {
			case op == OpIf:
				src := yi
				if v[xi] == 0 {
					src = zi
				}
				addTo(src, gk, dk)
			case op.IsStep():
			default:
				dx, dy, dz := deriv(op, v[xi], v[yi], v[zi], v[k+j])
				h.generic(op, ar, [3]int{xi, yi, zi}, [3]float64{dx, dy, dz}, v[xi], v[yi], v[zi], v[k+j], gk, dk, dv, dg, g)
			}
		}
	case loopSum:
		gk, dk := g[k], row(k)
		for j := n - 1; j >= 0; j-- {
			addTo(x+j, gk, dk)
		}
	case loopDot:
		gk, dk := g[k], row(k)
		for j := n - 1; j >= 0; j-- {
			xi, yi := x+j, y+j
			xv, yv := v[xi], v[yi]
			g[xi] += gk * yv
			g[yi] += gk * xv
			ta, tb := dv[xi*m:xi*m+m], dv[yi*m:yi*m+m]
			ga, gb := row(xi), row(yi)
			for s, d := range dk {
				ga[s] += d*yv + gk*tb[s]
			}
			for s, d := range dk {
				gb[s] += d*xv + gk*ta[s]
			}
		}
	case loopMin, loopMax:
		addTo(x+l.best(v[x:x+n]), g[k], row(k))
	case loopGather:
		for j := n - 1; j >= 0; j-- {
			addTo(x+int(l.idx[j]), g[k+j], row(k+j))
		}
	case loopGroup:
		for i := len(l.idx) - 1; i >= 0; i-- {
			gr := k + int(l.idx[i])
			addTo(x+i, g[gr], row(gr))
		}
	}
}

// loopKinks records the kinks of the loop node at k whose elements the
// output depends on.
func (h *Hessian) loopKinks(v []float64, k int, cont func(int32) bool) {
	p := h.t.p
	l := &p.loops[p.a[k]]
	x, y := int(l.arg[0]), int(l.arg[1])
	switch l.kind {
	case loopMin, loopMax:
		xs := v[x : x+int(l.n)]
		bi := l.best(xs)
		for j, xv := range xs {
			if j != bi && xv == xs[bi] {
				name := "min"
				if l.kind == loopMax {
					name = "max"
				}
				h.kinks = append(h.kinks, Kink{Pos: p.pos[k], Op: OpMin + Op(l.kind-loopMin), Msg: fmt.Sprintf("%s of a vector with a tie (%s, elements %d and %d): a kink", name, num(xs[bi]), bi+1, j+1), Element: j + 1})
				return
			}
		}
	case loopMap:
		sx, sy := int(l.step[0]), int(l.step[1])
		for j := range int(l.n) {
			xi, yi := int32(x+j*sx), int32(y+j*sy)
			args := [2]int32{xi, yi}
			msg := kink(l.op, v[xi], v[yi], func(a int) bool { return cont(args[a]) })
			if msg != "" && dependsOnInput(p, xi, yi) {
				h.kinks = append(h.kinks, Kink{Pos: p.pos[k], Op: l.op, Msg: msg, Element: j + 1})
				return
			}
		}
	}
}
