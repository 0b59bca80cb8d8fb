package tape

// The passes of one direction (Hessian.m == 1), the Hessian-vector
// product of an analysis that needs one: the arithmetic in plain scalar
// code, everything else through the lane passes' node functions.

// tangents1 is tangents for one direction.
func (h *Hessian) tangents1(v, dv []float64, end int) (bad bool) {
	p := h.t.p
	ops := p.ops[:end]
	as, bs := p.a[:end], p.b[:end]
	for k := p.start; k < len(ops); k++ {
		a, b := as[k], bs[k]
		switch ops[k] {
		case OpAdd:
			v[k] = v[a] + v[b]
			dv[k] = dv[a] + dv[b]
		case OpSub:
			v[k] = v[a] - v[b]
			dv[k] = dv[a] - dv[b]
		case OpMul:
			x, y := v[a], v[b]
			v[k] = x * y
			dv[k] = dv[a]*y + x*dv[b]
		case OpDiv:
			y := v[b]
			q := v[a] / y
			v[k] = q
			dv[k] = (dv[a] - q*dv[b]) / y
			if !finite(y) {
				bad = true
			}
		case OpNeg:
			v[k] = -v[a]
			dv[k] = -dv[a]
		case OpSquare:
			x := v[a]
			v[k] = x * x
			dv[k] = 2 * x * dv[a]
		case opArg, opLane:
		default:
			if h.value(v, k) {
				bad = true
			}
			h.tangentNode(v, dv, k)
		}
	}
	return bad
}

// reverse1 is the loop of reverse for one direction; g and dg are
// cleared and g[out] is 1.
func (h *Hessian) reverse1(v, dv []float64, out int) {
	p := h.t.p
	g, dg := h.g, h.dg
	ops := p.ops[:out+1]
	as, bs := p.a[:out+1], p.b[:out+1]
	for k := out; k >= p.start; k-- {
		op := ops[k]
		gk, dk := g[k], dg[k]
		if gk == 0 && dk == 0 && op != opLoop {
			continue
		}
		a, b := as[k], bs[k]
		switch op {
		case OpAdd:
			g[a] += gk
			g[b] += gk
			dg[a] += dk
			dg[b] += dk
		case OpSub:
			g[a] += gk
			g[b] -= gk
			dg[a] += dk
			dg[b] -= dk
		case OpMul:
			x, y := v[a], v[b]
			g[a] += gk * y
			g[b] += gk * x
			dg[a] += dk*y + gk*dv[b]
			dg[b] += dk*x + gk*dv[a]
		case OpDiv:
			y, q := v[b], v[k]
			ry := 1 / y
			c := gk * ry * ry
			g[a] += gk * ry
			g[b] -= gk * q * ry
			dg[a] += dk*ry - c*dv[b]
			dg[b] += -dk*q*ry + c*(2*q*dv[b]-dv[a])
		case OpNeg:
			g[a] -= gk
			dg[a] -= dk
		case OpSquare:
			x2 := 2 * v[a]
			g[a] += gk * x2
			dg[a] += dk*x2 + 2*gk*dv[a]
		case opArg, opLane:
		case opLoop:
			h.loopReverse(v, dv, k)
		default:
			h.reverseNode(v, dv, k)
		}
	}
}
