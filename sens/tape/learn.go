package tape

import "math"

// Learn returns first · k^log2(rate), the cost of unit k on a unit
// learning curve, or NaN unless rate > 0 and k >= 1.
func Learn(first, rate, k float64) float64 {
	if !(rate > 0) || !(k >= 1) {
		return math.NaN()
	}
	return first * math.Pow(k, math.Log2(rate))
}

// learnDeriv returns Learn and its partial derivatives in first, rate
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

// LearnTotal returns first · S(log2(rate), k), the cumulative cost
// of units 1..k, or NaN unless rate > 0 and k >= 1.
func LearnTotal(first, rate, k float64) float64 {
	if !(rate > 0) || !(k >= 1) || math.IsInf(k, 1) {
		return math.NaN()
	}
	s, _, _ := powerSum(math.Log2(rate), k)
	return first * s
}

// learnTotalDeriv returns LearnTotal and its partial derivatives
// in first, rate and k (the last from the smooth extension in k).
func learnTotalDeriv(first, rate, k float64) (v, dfirst, drate, dk float64) {
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
