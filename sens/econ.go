package sens

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

// econGrowth returns (1+i)^n, the single-payment compound-amount factor
// (F/P), or NaN when i <= -1.
func econGrowth(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	return math.Exp(n * math.Log1p(i))
}

// econDiscount returns (1+i)^-n, the single-payment present-worth factor
// (P/F), or NaN when i <= -1.
func econDiscount(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	return math.Exp(-n * math.Log1p(i))
}

// econAnnuityFV returns ((1+i)^n - 1)/i, the uniform-series
// compound-amount factor (F/A), or NaN when i <= -1.
func econAnnuityFV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	return n * logqValue(i, L) * e1Value(n*L)
}

// econAnnuityPV returns ((1+i)^n - 1)/(i (1+i)^n), the uniform-series
// present-worth factor (P/A), or NaN when i <= -1.
func econAnnuityPV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	return n * logqValue(i, L) * e1Value(-n*L)
}

// econSinking returns i/((1+i)^n - 1), the sinking-fund factor (A/F).
func econSinking(i, n float64) float64 { return 1 / econAnnuityFV(i, n) }

// econRecovery returns i (1+i)^n/((1+i)^n - 1), the capital-recovery
// factor (A/P).
func econRecovery(i, n float64) float64 { return 1 / econAnnuityPV(i, n) }

// econGradientPV returns ((1+i)^n - i n - 1)/(i² (1+i)^n), the
// arithmetic-gradient present-worth factor (P/G), or NaN when i <= -1.
func econGradientPV(i, n float64) float64 {
	if !(i > -1) {
		return math.NaN()
	}
	L := math.Log1p(i)
	u := n * L
	q := logqValue(i, L)
	return (n*n*q*q*e2Value(u) - n*l2Value(i, L)) / math.Exp(u)
}

// econGradientUniform returns 1/i - n/((1+i)^n - 1), the
// arithmetic-gradient uniform-series factor (A/G), or NaN when i <= -1.
func econGradientUniform(i, n float64) float64 {
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

// learnUnit returns first · k^log2(rate), the cost of unit k on a unit
// learning curve, or NaN unless rate > 0 and k >= 1.
func learnUnit(first, rate, k float64) float64 {
	if !(rate > 0) || !(k >= 1) {
		return math.NaN()
	}
	return first * math.Pow(k, math.Log2(rate))
}

// learnDeriv returns learnUnit and its partial derivatives in first, rate
// and k:
//
//	∂/∂first = k^b,  ∂/∂rate = first k^b ln k / (rate ln 2),  ∂/∂k = first b k^(b-1)
func learnDeriv(first, rate, k float64) (v, dfirst, drate, dk float64) {
	if !(rate > 0) || !(k >= 1) {
		nan := math.NaN()
		return nan, nan, nan, nan
	}
	b := math.Log2(rate)
	p := math.Pow(k, b)
	return first * p, p, first * p * math.Log(k) / (rate * math.Ln2), first * b * p / k
}

// learnCumulative returns first · S(log2(rate), k), the cumulative cost
// of units 1..k, or NaN unless rate > 0 and k >= 1.
func learnCumulative(first, rate, k float64) float64 {
	if !(rate > 0) || !(k >= 1) || math.IsInf(k, 1) {
		return math.NaN()
	}
	s, _, _ := powerSum(math.Log2(rate), k)
	return first * s
}

// learnCumulativeDeriv returns learnCumulative and its partial derivatives
// in first, rate and k (the last from the smooth extension in k).
func learnCumulativeDeriv(first, rate, k float64) (v, dfirst, drate, dk float64) {
	if !(rate > 0) || !(k >= 1) || math.IsInf(k, 1) {
		nan := math.NaN()
		return nan, nan, nan, nan
	}
	s, sb, sk := powerSum(math.Log2(rate), k)
	return first * s, s, first * sb / (rate * math.Ln2), first * sk
}

// emM is where the Euler–Maclaurin tail of powerSum starts.
const emM = 16

// lnInt[j] = ln j for j = 1..emM.
var lnInt = func() [emM + 1]float64 {
	var l [emM + 1]float64
	for j := 1; j <= emM; j++ {
		l[j] = math.Log(float64(j))
	}
	return l
}()

// powerSum returns S(b, x) = Σ_{j=1..x} j^b for real x >= 1, extended
// smoothly to fractional x as ζ(-b) - ζ(-b, x+1), with its partial
// derivatives in b and x.
//
// For x below emM it shifts up: S(x) = S(x+N) - Σ_{j=1..N} (x+j)^b with
// x+N >= emM, and S(X) = Σ_{j=1..emM} j^b + T(X) with the tail T from
// the Euler–Maclaurin formula (Abramowitz and Stegun 23.1.30):
//
//	T(X) = ∫_m^X t^b dt + (f(X) - f(m))/2 + Σ_{r=1,3,5,7} B_{r+1}/(r+1)! (f^(r)(X) - f^(r)(m))
//
// with f(t) = t^b and m = emM. Whole x <= emM are summed directly.
func powerSum(b, x float64) (s, sb, sx float64) {
	n := 0
	if x < emM {
		n = int(math.Ceil(emM - x))
	}
	X := x + float64(n)

	// Σ_{j=1..m} j^b and its derivative in b.
	a, ab := 1.0, 0.0
	for j := 2; j <= emM; j++ {
		pj := math.Exp(b * lnInt[j])
		a += pj
		ab += pj * lnInt[j]
	}

	t, tb, tx := emTail(b, X)

	// Σ_{j=1..n} (x+j)^b.
	var d, db, dx float64
	for j := 1; j <= n; j++ {
		y := x + float64(j)
		ly := math.Log(y)
		py := math.Exp(b * ly)
		d += py
		db += py * ly
		dx += b * py / y
	}
	s, sb, sx = a+t-d, ab+tb-db, tx-dx

	if x <= emM && x == math.Trunc(x) {
		// Exact sum for small whole x.
		s, sb = 1, 0
		for j := 2; j <= int(x); j++ {
			pj := math.Exp(b * lnInt[j])
			s += pj
			sb += pj * lnInt[j]
		}
	}
	return s, sb, sx
}

// emCoef[r] = B_{r+1}/(r+1)! for r = 1, 3, 5, 7.
var emCoef = [8]float64{1: 1.0 / 12, 3: -1.0 / 720, 5: 1.0 / 30240, 7: -1.0 / 1209600}

// emTail returns T(X) = Σ_{j=m+1..X} j^b by the Euler–Maclaurin formula
// (m = emM, X >= m), with its partial derivatives in b and X.
func emTail(b, X float64) (t, tb, tx float64) {
	const m = emM
	lm := lnInt[m]
	lX := math.Log(X)
	ell := math.Log(X / m)
	c := b + 1

	// ∫_m^X t^b dt = (X^c - m^c)/c = m^c ℓ e1(c ℓ), ℓ = ln(X/m): no
	// special case at b = -1.
	mc := math.Exp(c * lm)
	e1, _, de1, _ := expq(c * ell)
	t = mc * ell * e1
	tb = mc*lm*ell*e1 + mc*ell*ell*de1
	pX := math.Exp(b * lX) // X^b
	pm := math.Exp(b * lm) // m^b
	tx = pX

	t += (pX - pm) / 2
	tb += (pX*lX - pm*lm) / 2

	// f^(r)(y) = (b)_r y^(b-r), (b)_r the falling factorial.
	ff, dff := 1.0, 0.0 // (b)_r and its derivative in b
	yX, ym := pX, pm    // X^(b-r), m^(b-r)
	for r := 1; r <= 8; r++ {
		dff = dff*(b-float64(r-1)) + ff
		ff *= b - float64(r-1)
		yX /= X
		ym /= m
		if r < 8 && r%2 == 1 {
			cr := emCoef[r]
			t += cr * ff * (yX - ym)
			tb += cr * (dff*(yX-ym) + ff*(yX*lX-ym*lm))
		}
		if r == 1 {
			tx += 0.5 * ff * yX // f'(X)/2
		} else if r%2 == 0 {
			tx += emCoef[r-1] * ff * yX // d/dX f^(r-1)(X) = f^(r)(X)
		}
	}
	return t, tb, tx
}
