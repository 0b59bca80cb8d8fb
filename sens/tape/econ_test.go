package tape

import (
	"fmt"
	"math"
	"math/big"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// econFactor evaluates the economy factor op through a one-node tape,
// with its gradient.
func econFactor(t *testing.T, op Op, i, n float64) (v, di, dn float64) {
	t.Helper()
	tp := tapeOneOp(op, []float64{i, n})
	g := make([]float64, 2)
	v, err := tp.Gradient(g, []float64{i, n}, 0)
	if err != nil {
		t.Fatalf("%v(%v, %v): %v", op, i, n, err)
	}
	return v, g[0], g[1]
}

// Values from the standard compound-interest tables printed in
// engineering-economy textbooks (4 to 5 significant figures), e.g. E. L.
// Grant, W. G. Ireson and R. S. Leavenworth, Principles of Engineering
// Economy, appendix D. They were first quoted from memory; the test now
// checks each against a computation: the textbook closed form evaluated in
// 256-bit arithmetic (econBig), rounded to the table's digits, must give the
// table's value.
func TestEconInterestTables(t *testing.T) {
	tests := []struct {
		op   Op
		i, n float64
		want float64
		tol  float64 // half a unit in the table's last digit
	}{
		{OpRecovery, 0.10, 5, 0.26380, 5e-6},       // A/P 10%, 5
		{OpGrowth, 0.08, 10, 2.15892, 5e-6},        // F/P 8%, 10
		{OpAnnuityPV, 0.10, 5, 3.7908, 5e-5},       // P/A 10%, 5
		{OpAnnuityFV, 0.06, 10, 13.1808, 5e-5},     // F/A 6%, 10
		{OpGradientPV, 0.10, 5, 6.8618, 5e-5},      // P/G 10%, 5
		{OpGradientUniform, 0.10, 5, 1.8101, 5e-5}, // A/G 10%, 5
		{OpDiscount, 0.10, 5, 0.62092, 5e-6},       // P/F 10%, 5
		{OpSinking, 0.10, 5, 0.16380, 5e-6},        // A/F 10%, 5
		{OpGrowth, 0.10, 10, 2.5937, 5e-5},         // F/P 10%, 10
		{OpAnnuityPV, 0.08, 10, 6.7101, 5e-5},      // P/A 8%, 10
		{OpRecovery, 0.12, 10, 0.17698, 5e-6},      // A/P 12%, 10
		{OpAnnuityFV, 0.10, 10, 15.9374, 5e-5},     // F/A 10%, 10
	}
	for _, tc := range tests {
		if ref := econBig(tc.op, tc.i, int(tc.n)); math.Abs(ref-tc.want) > tc.tol {
			t.Errorf("table value %v(%v, %v) = %v is not the closed form %.9f rounded", tc.op, tc.i, tc.n, tc.want, ref)
		}
		got, _, _ := econFactor(t, tc.op, tc.i, tc.n)
		if !scalar.EqualWithinAbs(got, tc.want, tc.tol) {
			t.Errorf("%v(%v, %v) = %.6f, table %v", tc.op, tc.i, tc.n, got, tc.want)
		}
		// Second check: the textbook closed form, evaluated in 256-bit
		// arithmetic.
		if ref := econBig(tc.op, tc.i, int(tc.n)); !scalar.EqualWithinRel(got, ref, 1e-14) {
			t.Errorf("%v(%v, %v) = %.17g, closed form %.17g", tc.op, tc.i, tc.n, got, ref)
		}
	}
}

// econBig evaluates the textbook closed form of op for a whole number of
// periods in 256-bit floating point, where even the cancellation near
// i = 0 costs nothing that matters.
func econBig(op Op, i float64, n int) float64 {
	const prec = 256
	nf := func(x float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(x) }
	one := nf(1)
	bi := nf(i)
	g := nf(1) // (1+i)^n
	onePlus := new(big.Float).SetPrec(prec).Add(one, bi)
	for range n {
		g.Mul(g, onePlus)
	}
	gm1 := new(big.Float).SetPrec(prec).Sub(g, one) // (1+i)^n - 1
	bn := nf(float64(n))
	q := func(a, b *big.Float) *big.Float { return new(big.Float).SetPrec(prec).Quo(a, b) }
	m := func(a, b *big.Float) *big.Float { return new(big.Float).SetPrec(prec).Mul(a, b) }
	var r *big.Float
	switch op {
	case OpGrowth:
		r = g
	case OpDiscount:
		r = q(one, g)
	case OpAnnuityFV:
		r = q(gm1, bi)
	case OpAnnuityPV:
		r = q(gm1, m(bi, g))
	case OpRecovery:
		r = q(m(bi, g), gm1)
	case OpSinking:
		r = q(bi, gm1)
	case OpGradientPV:
		num := new(big.Float).SetPrec(prec).Sub(gm1, m(bi, bn))
		r = q(num, m(m(bi, bi), g))
	case OpGradientUniform:
		r = new(big.Float).SetPrec(prec).Sub(q(one, bi), q(bn, gm1))
	}
	f, _ := r.Float64()
	return f
}

var econOps = []Op{OpGrowth, OpDiscount, OpAnnuityPV, OpAnnuityFV, OpRecovery, OpSinking, OpGradientPV, OpGradientUniform}

// The factors against their closed forms over a grid that includes
// tiny rates, negative rates and long horizons.
func TestEconClosedForms(t *testing.T) {
	for _, op := range econOps {
		for _, i := range []float64{-0.5, -0.05, -1e-3, -1e-9, 1e-12, 1e-9, 1e-6, 1e-3, 0.01, 0.05, 0.0999, 0.1, 0.1001, 0.25, 1, 3} {
			for _, n := range []int{1, 2, 5, 10, 30, 120} {
				got := evalOp(op, i, float64(n), 0)
				want := econBig(op, i, n)
				if math.IsInf(want, 0) || want == 0 {
					continue // beyond float64's range
				}
				if !scalar.EqualWithinRel(got, want, 1e-13) {
					t.Errorf("%v(%v, %d) = %.17g, closed form %.17g (rel %.1e)", op, i, n, got, want, math.Abs(got/want-1))
				}
			}
		}
	}
}

// At i = 0 every factor takes its limit (common practice: with no
// interest, n payments are worth n).
func TestEconZeroRateLimits(t *testing.T) {
	for _, n := range []float64{1, 2.5, 5, 12, 40} {
		tests := []struct {
			op   Op
			want float64
		}{
			{OpGrowth, 1}, {OpDiscount, 1},
			{OpAnnuityPV, n}, {OpAnnuityFV, n},
			{OpRecovery, 1 / n}, {OpSinking, 1 / n},
			{OpGradientPV, n * (n - 1) / 2}, {OpGradientUniform, (n - 1) / 2},
		}
		for _, tc := range tests {
			v, di, dn := econFactor(t, tc.op, 0, n)
			if !scalar.EqualWithinAbsOrRel(v, tc.want, 1e-15, 1e-14) {
				t.Errorf("%v(0, %v) = %v, want %v", tc.op, n, v, tc.want)
			}
			if !finite(di) || !finite(dn) {
				t.Errorf("%v(0, %v): derivatives %v %v", tc.op, n, di, dn)
			}
		}
		// Slopes in i at 0, from the binomial series
		// F/A = n + n(n-1)/2 i + ..., P/A = n - n(n+1)/2 i + ...
		if _, di, _ := econFactor(t, OpAnnuityFV, 0, n); !scalar.EqualWithinRel(di, n*(n-1)/2, 1e-13) {
			t.Errorf("d F/A / di at 0, n=%v: %v, want %v", n, di, n*(n-1)/2)
		}
		if _, di, _ := econFactor(t, OpAnnuityPV, 0, n); !scalar.EqualWithinRel(di, -n*(n+1)/2, 1e-13) {
			t.Errorf("d P/A / di at 0, n=%v: %v, want %v", n, di, -n*(n+1)/2)
		}
		if _, di, dn := econFactor(t, OpGrowth, 0, n); di != n || dn != 0 {
			t.Errorf("d F/P at 0, n=%v: %v %v, want %v 0", n, di, dn, n)
		}
	}
}

// Partial derivatives against gonum central differences, across the
// switch between series and closed forms (|i| = 0.1, |u| = 0.5) and at
// fractional n.
func TestEconDerivatives(t *testing.T) {
	var pts [][2]float64
	for _, i := range []float64{-0.3, -0.1001, -0.0999, -0.01, 0, 1e-7, 0.02, 0.0999, 0.1001, 0.2, 0.9} {
		for _, n := range []float64{0.7, 3, 7.5, 25} {
			pts = append(pts, [2]float64{i, n})
		}
		// n where u = n ln(1+i) = ±0.5, the switch of e1 and e2.
		if math.Abs(i) >= 0.01 {
			u := 0.5 / math.Abs(math.Log1p(i))
			pts = append(pts, [2]float64{i, u * (1 - 1e-9)}, [2]float64{i, u * (1 + 1e-9)})
		}
	}
	for _, op := range econOps {
		for _, p := range pts {
			i, n := p[0], p[1]
			v, di, dn := econFactor(t, op, i, n)
			f := func(x []float64) float64 { return evalOp(op, x[0], x[1], 0) }
			ref := tapeFD(f, []float64{i, n}, 1)
			tol := 1e-7 * math.Max(1, math.Abs(v))
			if !scalar.EqualWithinAbsOrRel(di, ref[0], tol, 1e-6) || !scalar.EqualWithinAbsOrRel(dn, ref[1], tol, 1e-6) {
				t.Errorf("%v(%v, %v): grad (%.10g, %.10g), fd (%.10g, %.10g)", op, i, n, di, dn, ref[0], ref[1])
			}
		}
	}
}

// The two sides of each series/closed-form switch agree to rounding.
func TestEconSwitchContinuity(t *testing.T) {
	for _, op := range econOps {
		for _, c := range []struct{ i, n float64 }{
			{0.1, 10}, {-0.1, 10},
			{0.03, 0.5 / math.Log1p(0.03)}, {0.2, 0.5 / math.Log1p(0.2)},
		} {
			var prev [3]float64
			for k, s := range []float64{1 - 1e-12, 1 + 1e-12} {
				i, n := c.i, c.n
				if c.n == 10 {
					i *= s
				} else {
					n *= s
				}
				v, di, dn := econDeriv(op, i, n)
				if k == 1 {
					for j, cur := range [3]float64{v, di, dn} {
						if !scalar.EqualWithinAbsOrRel(cur, prev[j], 1e-12, 1e-10) {
							t.Errorf("%v near (%v, %v): part %d jumps %v -> %v", op, c.i, c.n, j, prev[j], cur)
						}
					}
				}
				prev = [3]float64{v, di, dn}
			}
		}
	}
}

// The 80% unit learning curve (common practice: each doubling of the
// unit number multiplies the unit cost by 0.8).
func TestEconLearningCurve(t *testing.T) {
	if b := math.Log2(0.8); !scalar.EqualWithinAbs(b, -0.321928, 5e-7) {
		t.Errorf("log2(0.8) = %v, want -0.321928", b)
	}
	for _, tc := range []struct{ k, want float64 }{
		{1, 100}, {2, 80}, {4, 64}, {8, 51.2}, {16, 40.96},
	} {
		v, _, _, _ := learnDeriv(100, 0.8, tc.k)
		if got := Learn(100, 0.8, tc.k); !scalar.EqualWithinRel(got, tc.want, 1e-14) || got != v {
			t.Errorf("learn(100, 0.8, %v) = %v, want %v", tc.k, got, tc.want)
		}
	}
	// An exponent of log2(0.8) is the same curve: unit 10 costs
	// 100·10^-0.321928 = 47.65 (common practice).
	if got := Learn(100, 0.8, 10); !scalar.EqualWithinRel(got, 47.65, 1e-4) {
		t.Errorf("learn(100, 0.8, 10) = %v, want 47.65", got)
	}
}

// learn_total against direct summation (compensated, in a loop) for
// whole k, and the recurrence S(k) - S(k-1) = k^b for fractional k.
func TestEconLearnTotal(t *testing.T) {
	for _, rate := range []float64{0.5, 0.7, 0.8, 0.85, 0.9, 0.95, 1, 1.1, 1.5} {
		b := math.Log2(rate)
		var sum, comp float64 // Kahan summation
		for k := 1; k <= 3000; k++ {
			y := math.Pow(float64(k), b) - comp
			s := sum + y
			comp = (s - sum) - y
			sum = s
			if k <= 40 || k%97 == 0 || k == 3000 {
				got := LearnTotal(1, rate, float64(k))
				if !scalar.EqualWithinRel(got, sum, 1e-12) {
					t.Errorf("rate %v: learn_total(1, %v) = %.17g, direct sum %.17g (rel %.1e)", rate, k, got, sum, math.Abs(got/sum-1))
				}
			}
		}
		for _, k := range []float64{2.5, 3.25, 10.3, 15.99, 16.5, 17.2, 100.7, 5432.1} {
			diff := LearnTotal(1, rate, k) - LearnTotal(1, rate, k-1)
			if !scalar.EqualWithinRel(diff, math.Pow(k, b), 1e-11) {
				t.Errorf("rate %v: S(%v) - S(%v) = %.15g, want %.15g", rate, k, k-1, diff, math.Pow(k, b))
			}
		}
	}
	// No learning: the cost of k units is k times the first, for any k.
	for _, k := range []float64{1, 7, 7.3, 123.25} {
		if got := LearnTotal(10, 1, k); !scalar.EqualWithinRel(got, 10*k, 1e-13) {
			t.Errorf("learn_total(10, 1, %v) = %v, want %v", k, got, 10*k)
		}
	}
	// Derivatives against gonum central differences, around the switch
	// at 16 and far out.
	for _, rate := range []float64{0.5, 0.8, 0.95, 1.2} {
		for _, k := range []float64{1.5, 9.7, 15.5, 16.5, 40.2, 1e4 + 0.5} {
			x := []float64{250, rate, k}
			_, d0, d1, d2 := learnTotalDeriv(x[0], x[1], x[2])
			f := func(x []float64) float64 { return LearnTotal(x[0], x[1], x[2]) }
			ref := tapeFD(f, x, 1)
			for j, d := range []float64{d0, d1, d2} {
				if !scalar.EqualWithinAbsOrRel(d, ref[j], 1e-6*f(x)/math.Max(1, x[j]), 1e-6) {
					t.Errorf("learn_total(%v): d/dx%d = %.10g, fd %.10g", x, j, d, ref[j])
				}
			}
		}
	}
	// The derivative in k at a whole k is that of the smooth extension:
	// close to the unit cost of unit k+1/2 (the sum grows by about
	// (k+1/2)^b per unit there).
	_, _, _, dk := learnTotalDeriv(1, 0.8, 100)
	if want := math.Pow(100.5, math.Log2(0.8)); !scalar.EqualWithinRel(dk, want, 1e-4) {
		t.Errorf("dS/dk at 100 = %v, want about %v", dk, want)
	}
}

// The capital-recovery factor on a tape: its value and its partial
// derivatives in the rate and the number of periods.
func ExampleTape_Gradient() {
	b := NewBuilder()
	i, n := b.Input(), b.Input()
	tp := b.Tape(b.Binary(OpRecovery, i, n))
	g := make([]float64, 2)
	v, err := tp.Gradient(g, []float64{0.10, 5}, 0)
	fmt.Printf("A/P at 10%%, 5 periods = %.5f (err %v)\n", v, err)
	fmt.Printf("d/di = %.5f, d/dn = %.5f\n", g[0], g[1])
	// Output:
	// A/P at 10%, 5 periods = 0.26380 (err <nil>)
	// d/di = 0.67391, d/dn = -0.04118
}

// Central differences on the value functions agree with the reverse
// pass's learn partials.
func TestEconLearnUnitDerivatives(t *testing.T) {
	for _, x := range [][]float64{{100, 0.8, 3.3}, {20, 0.92, 150}, {-5, 0.6, 1}} {
		_, d0, d1, d2 := learnDeriv(x[0], x[1], x[2])
		ref := make([]float64, 3)
		for j := range x {
			xx := append([]float64(nil), x...)
			h := 1e-6 * math.Max(1, math.Abs(x[j]))
			if j == 2 && x[2] == 1 {
				// k = 1 is the edge of the domain: a one-sided difference.
				ref[j] = fd.Derivative(func(v float64) float64 { xx[j] = v; return Learn(xx[0], xx[1], xx[2]) }, x[j], &fd.Settings{Formula: fd.Forward, Step: 1e-7})
				continue
			}
			ref[j] = fd.Derivative(func(v float64) float64 { xx[j] = v; return Learn(xx[0], xx[1], xx[2]) }, x[j], &fd.Settings{Formula: fd.Central, Step: h})
		}
		for j, d := range []float64{d0, d1, d2} {
			if !scalar.EqualWithinAbsOrRel(d, ref[j], 1e-6, 1e-5) {
				t.Errorf("learn(%v): d/dx%d = %v, fd %v", x, j, d, ref[j])
			}
		}
	}
}
