package tape

import "math"

// Engineering-economy factors for discrete compounding, with exact
// partial derivatives in the rate i and the number of periods n.
//
// Every factor is written in terms of well-conditioned pieces so that it
// is accurate for any rate above -1, tiny rates included, with no special
// case at a threshold:
//
//	L  = ln(1+i)             (log1p)
//	u  = n L                 so (1+i)^n = e^u
//	q  = L / i               -> 1 at i = 0
//	l2 = (i - L) / i²        -> 1/2 at i = 0
//	e1 = (e^u - 1) / u       -> 1 at u = 0
//	e2 = (e^u - 1 - u) / u²  -> 1/2 at u = 0
//
//	F/A = n q e1(u)          P/A = n q e1(-u)
//	A/F = 1 / (F/A)          A/P = 1 / (P/A)
//	P/G = (n² q² e2(u) - n l2) / e^u
//	A/G = (n q² e2(u) - l2) / (q e1(u))
//
// q, l2, e1 and e2 and their derivatives use power series near 0
// (|i| < 0.1, |u| < 0.5), where the closed forms would cancel, and the
// closed forms elsewhere. At i = 0 the factors take their limits
// (P/A = F/A = n, P/G = n(n-1)/2, A/G = (n-1)/2), with no NaN.
//
// References:
//   - E. L. Grant, W. G. Ireson and R. S. Leavenworth, Principles of
//     Engineering Economy, 8th ed., Wiley, 1990, chapter 3 (the
//     compound-interest factors and their tables).

// invFact[k] = 1/k!.
var invFact = func() [24]float64 {
	var f [24]float64
	f[0] = 1
	for k := 1; k < len(f); k++ {
		f[k] = f[k-1] / float64(k)
	}
	return f
}()

// logq returns q = ln(1+i)/i, l2 = (i - ln(1+i))/i² and their
// derivatives in i, for i > -1.
func logq(i float64) (q, dq, l2, dl2 float64) {
	if math.Abs(i) < 0.1 {
		// q  = Σ_{k>=0} (-i)^k/(k+1),  l2 = Σ_{k>=0} (-i)^k/(k+2),
		// and their derivatives term by term; stop when (-i)^k < 1e-18
		// (at most 18 terms, as |i| < 0.1).
		p := 1.0 // (-i)^k
		pm := 0.0
		for k := 0; k < len(recip)-2; k++ {
			q += p * recip[k+1]
			l2 += p * recip[k+2]
			if k > 0 {
				// d/di (-i)^k = -k (-i)^(k-1)
				fk := float64(k)
				dq -= fk * pm * recip[k+1]
				dl2 -= fk * pm * recip[k+2]
			}
			if math.Abs(p) < 1e-18 {
				break
			}
			pm = p
			p *= -i
		}
		return q, dq, l2, dl2
	}
	L := math.Log1p(i)
	q = L / i
	dq = (i/(1+i) - L) / (i * i)
	l2 = (1 - q) / i
	dl2 = -(dq + l2) / i
	return q, dq, l2, dl2
}

// recip[j] = 1/j.
var recip = func() [24]float64 {
	var r [24]float64
	for j := 1; j < len(r); j++ {
		r[j] = 1 / float64(j)
	}
	return r
}()

// logqValue returns q = ln(1+i)/i, the value part of logq, cheaply.
func logqValue(i, L float64) float64 {
	if i == 0 {
		return 1
	}
	return L / i
}

// l2Value returns (i - ln(1+i))/i².
func l2Value(i, L float64) float64 {
	if math.Abs(i) < 0.1 {
		_, _, l2, _ := logq(i)
		return l2
	}
	return (i - L) / (i * i)
}

// expq returns e1 = (e^u - 1)/u, e2 = (e^u - 1 - u)/u² and their
// derivatives in u.
func expq(u float64) (e1, e2, de1, de2 float64) {
	if math.Abs(u) < 0.5 {
		// e1 = Σ u^k/(k+1)!, e2 = Σ u^k/(k+2)! and their derivatives
		// term by term; stop when u^k/(k+1)! < 1e-18 (at most 17 terms,
		// as |u| < 0.5).
		p := 1.0 // u^k
		pm := 0.0
		for k := 0; k < len(invFact)-2; k++ {
			e1 += p * invFact[k+1]
			e2 += p * invFact[k+2]
			if k > 0 {
				fk := float64(k)
				de1 += fk * pm * invFact[k+1]
				de2 += fk * pm * invFact[k+2]
			}
			if math.Abs(p)*invFact[k+1] < 1e-18 {
				break
			}
			pm = p
			p *= u
		}
		return e1, e2, de1, de2
	}
	m := math.Expm1(u)
	e1 = m / u
	e2 = (e1 - 1) / u
	de1 = e1 - e2
	de2 = (e1 - 2*e2) / u
	return e1, e2, de1, de2
}

// e1Value returns (e^u - 1)/u.
func e1Value(u float64) float64 {
	if u == 0 {
		return 1
	}
	return math.Expm1(u) / u
}

// e2Value returns (e^u - 1 - u)/u².
func e2Value(u float64) float64 {
	if math.Abs(u) < 0.5 {
		_, e2, _, _ := expq(u)
		return e2
	}
	return (math.Expm1(u) - u) / (u * u)
}

// Growth returns (1+i)^n, the single-payment compound-amount factor
// (F/P), or NaN when i <= -1.
func Growth(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	return math.Exp(n * math.Log1p(i))
}

// Discount returns (1+i)^-n, the single-payment present-worth factor
// (P/F), or NaN when i <= -1.
func Discount(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	return math.Exp(-n * math.Log1p(i))
}

// AnnuityFV returns ((1+i)^n - 1)/i, the uniform-series
// compound-amount factor (F/A), or NaN when i <= -1.
func AnnuityFV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	return n * logqValue(i, L) * e1Value(n*L)
}

// AnnuityPV returns ((1+i)^n - 1)/(i (1+i)^n), the uniform-series
// present-worth factor (P/A), or NaN when i <= -1.
func AnnuityPV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	return n * logqValue(i, L) * e1Value(-n*L)
}

// Sinking returns i/((1+i)^n - 1), the sinking-fund factor (A/F).
func Sinking(i, n float64) float64 { return 1 / AnnuityFV(i, n) }

// Recovery returns i (1+i)^n/((1+i)^n - 1), the capital-recovery
// factor (A/P).
func Recovery(i, n float64) float64 { return 1 / AnnuityPV(i, n) }

// GradientPV returns ((1+i)^n - i n - 1)/(i² (1+i)^n), the
// arithmetic-gradient present-worth factor (P/G), or NaN when i <= -1.
func GradientPV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	u := n * L
	q := logqValue(i, L)
	return (n*n*q*q*e2Value(u) - n*l2Value(i, L)) / math.Exp(u)
}

// GradientUniform returns 1/i - n/((1+i)^n - 1), the
// arithmetic-gradient uniform-series factor (A/G), or NaN when i <= -1.
func GradientUniform(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	u := n * L
	q := logqValue(i, L)
	return (n*q*q*e2Value(u) - l2Value(i, L)) / (q * e1Value(u))
}

// econDeriv returns the value of the economy factor op at (i, n) and its
// partial derivatives in i and n.
func econDeriv(op Op, i, n float64) (v, di, dn float64) {
	if !(i > -1) {
		nan := math.NaN()
		return nan, nan, nan
	}
	q, dq, l2, dl2 := logq(i)
	L := math.Log1p(i)
	u := n * L
	dui := n / (1 + i) // du/di
	dun := L           // du/dn
	switch op {
	case OpGrowth:
		g := math.Exp(u)
		return g, g * dui, g * dun
	case OpDiscount:
		d := math.Exp(-u)
		return d, -d * dui, -d * dun
	case OpAnnuityFV, OpSinking:
		e1, _, de1, _ := expq(u)
		f := n * q * e1
		fi := n * (dq*e1 + q*de1*dui)
		fn := q * (e1 + n*de1*dun)
		if op == OpSinking {
			return 1 / f, -fi / (f * f), -fn / (f * f)
		}
		return f, fi, fn
	case OpAnnuityPV, OpRecovery:
		e1, _, de1, _ := expq(-u)
		p := n * q * e1
		pi := n * (dq*e1 - q*de1*dui)
		pn := q * (e1 - n*de1*dun)
		if op == OpRecovery {
			return 1 / p, -pi / (p * p), -pn / (p * p)
		}
		return p, pi, pn
	case OpGradientPV:
		_, e2, _, de2 := expq(u)
		h := n*n*q*q*e2 - n*l2
		hi := n*n*(2*q*dq*e2+q*q*de2*dui) - n*dl2
		hn := 2*n*q*q*e2 + n*n*q*q*de2*dun - l2
		g := math.Exp(u)
		// d(h/g) = (dh - h du)/g, since dg/g = du.
		return h / g, (hi - h*dui) / g, (hn - h*dun) / g
	case OpGradientUniform:
		e1, e2, de1, de2 := expq(u)
		num := n*q*q*e2 - l2
		numi := n*(2*q*dq*e2+q*q*de2*dui) - dl2
		numn := q*q*e2 + n*q*q*de2*dun
		den := q * e1
		deni := dq*e1 + q*de1*dui
		denn := q * de1 * dun
		a := num / den
		return a, (numi - a*deni) / den, (numn - a*denn) / den
	}
	nan := math.NaN()
	return nan, nan, nan
}
