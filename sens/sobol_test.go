package sens

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func sobolRun(t testing.TB, p *Problem, s *SobolSettings) *SobolResult {
	return must[*SobolResult](t)(Sobol(p, s))
}

func sobolIndex(r *SobolResult, name string) SobolIndex {
	return named(r.Inputs, func(x SobolIndex) string { return x.Name }, name)
}

// checkIndices compares estimated indices with analytic ones: within tol
// absolute, and each analytic value inside the estimate's bootstrap
// interval.
func checkIndices(t *testing.T, r *SobolResult, first, total map[string]float64, tol float64) {
	t.Helper()
	for name, want := range first {
		x := sobolIndex(r, name)
		if math.Abs(x.FirstOrder-want) > tol || want < x.FirstOrderCI[0] || want > x.FirstOrderCI[1] {
			t.Errorf("S_%s = %.4f %v, analytic %.4f", name, x.FirstOrder, x.FirstOrderCI, want)
		}
	}
	for name, want := range total {
		x := sobolIndex(r, name)
		if math.Abs(x.TotalOrder-want) > tol || want < x.TotalOrderCI[0] || want > x.TotalOrderCI[1] {
			t.Errorf("ST_%s = %.4f %v, analytic %.4f", name, x.TotalOrder, x.TotalOrderCI, want)
		}
	}
}

const ishigamiModel = `
input x1 = 0 ~ uniform(-3.141592653589793, 3.141592653589793)
input x2 = 0 ~ uniform(-3.141592653589793, 3.141592653589793)
input x3 = 0 ~ uniform(-3.141592653589793, 3.141592653589793)
y = sin(x1) + 7 * sin(x2)^2 + 0.1 * x3^4 * sin(x1)
`

// TestSobolIshigami checks the Ishigami function (a = 7, b = 0.1) at
// n = 2^14 against its analytic indices (Ishigami & Homma 1990; the variance
// terms as in Sobol' & Levitan 1999):
//
//	V = a²/8 + bπ⁴/5 + b²π⁸/18 + 1/2,  V_1 = (1 + bπ⁴/5)²/2,  V_2 = a²/8,
//	V_13 = b²π⁸ (1/18 - 1/50)
//
// giving S = (0.3139, 0.4424, 0) and ST = (0.5576, 0.4424, 0.2437), the
// values DESIGN.md quotes.
func TestSobolIshigami(t *testing.T) {
	a, b, pi := 7.0, 0.1, math.Pi
	v := a*a/8 + b*math.Pow(pi, 4)/5 + b*b*math.Pow(pi, 8)/18 + 0.5
	v1 := math.Pow(1+b*math.Pow(pi, 4)/5, 2) / 2
	v2 := a * a / 8
	v13 := b * b * math.Pow(pi, 8) * (1.0/18 - 1.0/50)
	first := map[string]float64{"x1": v1 / v, "x2": v2 / v, "x3": 0}
	total := map[string]float64{"x1": (v1 + v13) / v, "x2": v2 / v, "x3": v13 / v}
	for name, want := range map[string]float64{"x1": 0.3139, "x2": 0.4424} {
		if math.Abs(first[name]-want) > 5e-5 {
			t.Fatalf("analytic S_%s = %v, DESIGN.md says %v", name, first[name], want)
		}
	}
	for name, want := range map[string]float64{"x1": 0.5576, "x2": 0.4424, "x3": 0.2437} {
		if math.Abs(total[name]-want) > 5e-5 {
			t.Fatalf("analytic ST_%s = %v, DESIGN.md says %v", name, total[name], want)
		}
	}
	r := sobolRun(t, problemOf(t, ishigamiModel, "y"), &SobolSettings{N: 1 << 14, Seed: 7})
	checkIndices(t, r, first, total, 0.02)
	if r.Evaluations != (1<<14)*5 {
		t.Errorf("evaluations %d, want N(k+2) = %d", r.Evaluations, (1<<14)*5)
	}
	if math.Abs(r.Variance-v)/v > 0.01 {
		t.Errorf("variance %v, analytic %v", r.Variance, v)
	}
	if r.Inputs[0].Name != "x1" || r.Inputs[2].Name != "x3" {
		t.Errorf("ranking by total order: %v", r.Inputs)
	}
}

// TestSobolGFunction checks Sobol's G-function with a = (0, 1, 4.5, 9, 99,
// 99, 99, 99) at n = 2^14 against its closed form (Saltelli et al., Global
// Sensitivity Analysis: The Primer, 2008):
//
//	V_i = 1 / (3 (1 + a_i)²),  V = Π (1 + V_i) - 1,
//	S_i = V_i / V,  ST_i = V_i Π_{j≠i} (1 + V_j) / V
func TestSobolGFunction(t *testing.T) {
	as := []float64{0, 1, 4.5, 9, 99, 99, 99, 99}
	var src strings.Builder
	var terms []string
	for i, a := range as {
		fmt.Fprintf(&src, "input x%d = 0.5 ~ uniform(0, 1)\n", i+1)
		terms = append(terms, fmt.Sprintf("(abs(4*x%d - 2) + %g) / (1 + %g)", i+1, a, a))
	}
	src.WriteString("g = " + strings.Join(terms, " * ") + "\n")
	vi := make([]float64, len(as))
	prod := 1.0
	for i, a := range as {
		vi[i] = 1 / (3 * (1 + a) * (1 + a))
		prod *= 1 + vi[i]
	}
	v := prod - 1
	first, total := map[string]float64{}, map[string]float64{}
	for i := range as {
		name := fmt.Sprintf("x%d", i+1)
		first[name] = vi[i] / v
		total[name] = vi[i] * prod / (1 + vi[i]) / v
	}
	r := sobolRun(t, problemOf(t, src.String(), "g"), &SobolSettings{N: 1 << 14, Seed: 7})
	checkIndices(t, r, first, total, 0.02)
}

// TestSobolLinear checks a linear model, whose indices are known exactly:
// S_i = ST_i = b_i² var_i / Σ_j b_j² var_j (Saltelli et al. 2008, ch. 1),
// with inputs of several distributions (the PERT through its quantile
// table, at this n).
func TestSobolLinear(t *testing.T) {
	p := problemOf(t, `
input a = 10 ~ normal(10, 2)
input b = 5 ~ uniform(2, 8)
input c = 1 ~ triangular(0, 1, 2)
input d = 3 (2..4)
input e = 1 ~ pert(0, 1, 4)
y = 3*a - 2*b + 5*c + 0.5*d + 4*e
`, "y")
	// PERT(0, 1, 4) is 4·Beta(2, 4): variance 16·8/(36·7).
	vars := map[string]float64{"a": 9 * 4, "b": 4 * 36.0 / 12, "c": 25 * (0 + 1 + 4 - 0 - 0 - 2) / 18.0, "d": 0.25 * 4.0 / 12,
		"e": 16 * 16 * 8 / (36 * 7.0)}
	var sum float64
	for _, v := range vars {
		sum += v
	}
	want := map[string]float64{}
	for n, v := range vars {
		want[n] = v / sum
	}
	r := sobolRun(t, p, &SobolSettings{N: 1 << 13, Seed: 3})
	checkIndices(t, r, want, want, 0.01)
	if math.Abs(r.SumFirstOrder-1) > 0.02 {
		t.Errorf("sum of first-order indices %v, want 1 for an additive model", r.SumFirstOrder)
	}
	if len(r.UniformFromRange) != 1 || r.UniformFromRange[0] != "d" {
		t.Errorf("uniform_from_range %v", r.UniformFromRange)
	}
}

// TestSobolUnsettled checks the warning on a ranking the sample cannot
// settle: two inputs with nearly equal indices at a small n.
func TestSobolUnsettled(t *testing.T) {
	p := problemOf(t, `
input a = 0 ~ uniform(-1, 1)
input b = 0 ~ uniform(-1, 1)
input c = 0 ~ uniform(-1, 1)
y = 1.0*a + 1.05*b + 0.2*c + a*b
`, "y")
	r := sobolRun(t, p, &SobolSettings{N: 64, Seed: 1})
	if len(r.Unsettled) == 0 {
		t.Fatalf("no unsettled pair: %+v", r.Inputs)
	}
	u := r.Unsettled[0]
	if u.Inputs != [2]string{"b", "a"} && u.Inputs != [2]string{"a", "b"} {
		t.Errorf("unsettled %v", u.Inputs)
	}
	if u.SettleN != 0 && u.SettleN <= 64 {
		t.Errorf("settle_n %d should exceed n", u.SettleN)
	}
}

// TestSobolSameAnyWorkers: the same seed gives the same JSON at GOMAXPROCS 1
// and 2; another seed another result.
func TestSobolSameAnyWorkers(t *testing.T) {
	p := problemOf(t, ishigamiModel, "y")
	run := func(procs int, seed uint64) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		b, _ := json.Marshal(sobolRun(t, p, &SobolSettings{N: 1000, Seed: seed, Bootstrap: 100}))
		return string(b)
	}
	one := run(1, 5)
	if two := run(2, 5); two != one {
		t.Errorf("GOMAXPROCS 1 and 2 differ:\n%s\n%s", one, two)
	}
	if other := run(2, 6); other == one {
		t.Error("seeds 5 and 6 gave the same result")
	}
}

func TestSobolErrors(t *testing.T) {
	p := problemOf(t, ishigamiModel, "y")
	for _, s := range []*SobolSettings{{N: 1}, {Confidence: 1.5}, {Bootstrap: -1}} {
		if _, err := Sobol(p, s); err == nil {
			t.Errorf("%+v: no error", s)
		}
	}
	// Beyond the table's dimensions: say so, and suggest screen.
	var src strings.Builder
	var names []string
	for i := range 10601 {
		fmt.Fprintf(&src, "input x%d = 0.5 ~ uniform(0, 1)\n", i)
		names = append(names, fmt.Sprintf("x%d", i))
	}
	src.WriteString("y = " + strings.Join(names, " + ") + "\n")
	_, err := Sobol(problemOf(t, src.String(), "y"), nil)
	if err == nil || !strings.Contains(err.Error(), "21202 dimensions, beyond the 21201 of the Joe & Kuo table: rank the inputs with screen y") {
		t.Errorf("got %v", err)
	}
}

// TestSobolResampled checks the block bootstrap's sums against the
// estimators' definition (Saltelli et al. 2010, first order; Jansen 1999,
// total) summed directly over each resample's rows in the order drawn: the
// same numbers, but for the order of the additions (relative 1e-12).
func TestSobolResampled(t *testing.T) {
	const n, k, r = 300, 3, 5
	rng := rand.New(rand.NewPCG(7, 8))
	fa, fb, fab := make([]float64, n), make([]float64, n), make([]float64, n*k)
	for j := range n {
		fa[j], fb[j] = rng.NormFloat64(), rng.NormFloat64()
		for i := range k {
			fab[j*k+i] = fa[j] + float64(i+1)*rng.NormFloat64()
		}
	}
	est := newSobolTerms(fa, fb, fab, k)
	cnt := make([]uint16, n*r)
	draws := make([][]int, r)
	for q := range r {
		for range n {
			j := rng.IntN(n)
			draws[q] = append(draws[q], j)
			cnt[j*r+q]++
		}
	}
	first, total, v := est.resampled(cnt, r)
	for q, rows := range draws {
		// The estimators over the rows drawn, from the centred outputs.
		var s1, s2 float64
		num1, num2 := make([]float64, k), make([]float64, k)
		for _, j := range rows {
			a, b := est.fa[j], est.fb[j]
			s1 += a + b
			s2 += a*a + b*b
			for i := range k {
				d := fab[j*k+i] - fa[j]
				num1[i] += b * d
				num2[i] += d * d / 2
			}
		}
		nn := float64(2 * n)
		want := (s2 - nn*(s1/nn)*(s1/nn)) / (nn - 1)
		if !scalar.EqualWithinRel(v[q], want, 1e-12) {
			t.Fatalf("resample %d: variance %v, want %v", q, v[q], want)
		}
		for i := range k {
			w1, w2 := num1[i]/(n*want), num2[i]/(n*want)
			if !scalar.EqualWithinRel(first[q][i], w1, 1e-12) || !scalar.EqualWithinRel(total[q][i], w2, 1e-12) {
				t.Fatalf("resample %d, input %d: first %v total %v, want %v %v", q, i, first[q][i], total[q][i], w1, w2)
			}
		}
	}
}
