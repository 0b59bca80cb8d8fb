package sens

import (
	"encoding/json"
	"math"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/nudge-dev/nudge/sens/syntax"
)

func simulate(t testing.TB, p *Problem, s *SimulationSettings) *SimulationResult {
	return must[*SimulationResult](t)(Simulate(p, s))
}

// within reports whether got is within z standard errors se of want.
func within(got, want, se, z float64) bool { return math.Abs(got-want) <= z*se }

// TestSimulateMoments samples each distribution of the language alone and
// compares the sample mean, standard deviation and quantiles with gonum's
// stat/distuv (v0.17.0) and with closed forms, within 4.5 standard errors
// (the standard error of a p-quantile is √(p(1-p)/n) / density).
func TestSimulateMoments(t *testing.T) {
	const n = 200_000
	for _, tc := range []struct {
		decl      string
		ref       distuv.Quantiler // gonum's distribution, nil for PERT and truncnormal
		mean, sd  float64          // closed forms
		meanWhere string
	}{
		// Uniform: mean (a+b)/2, sd (b-a)/√12.
		{"~ uniform(40, 80)", distuv.Uniform{Min: 40, Max: 80}, 60, 40 / math.Sqrt(12), "(a+b)/2"},
		// Triangular: mean (a+m+b)/3, variance (a²+m²+b²-am-ab-mb)/18.
		{"~ triangular(0.8, 0.9, 1.2)", distuv.NewTriangle(0.8, 1.2, 0.9, nil), (0.8 + 0.9 + 1.2) / 3,
			math.Sqrt((0.64 + 0.81 + 1.44 - 0.72 - 0.96 - 1.08) / 18), "(a+m+b)/3"},
		{"~ normal(60, 5)", distuv.Normal{Mu: 60, Sigma: 5}, 60, 5, "mu"},
		// Lognormal by the mean and sd of the value itself.
		{"~ lognormal(1000, 250)", nil, 1000, 250, "the mean given"},
		// PERT: mean (a + 4m + b)/6 (common practice); sd from its Beta form,
		// α = 1 + 4(m-a)/(b-a) = 2, β = 1 + 4(b-m)/(b-a) = 4, and the Beta
		// variance αβ/((α+β)²(α+β+1)).
		{"~ pert(0.8, 0.9, 1.2)", nil, (0.8 + 4*0.9 + 1.2) / 6,
			0.4 * math.Sqrt(2*4/((6*6)*(6+1.0))), "(a+4m+b)/6"},
		// Truncated normal (Johnson, Kotz & Balakrishnan, vol. 1, ch. 13);
		// normal(60, 10) cut to [45, 90]: α = -1.5, β = 3.
		{"~ truncnormal(60, 10, 45, 90)", nil, truncMean(60, 10, -1.5, 3), truncSD(10, -1.5, 3), "mu + sigma (φ(α)-φ(β))/Z"},
	} {
		t.Run(strings.Fields(tc.decl)[1], func(t *testing.T) {
			p := problemOf(t, "input x = "+midOf(tc.decl)+" "+tc.decl+"\ny = x\n", "y")
			r := simulate(t, p, &SimulationSettings{N: n, Seed: 11})
			if r.N != n || r.Valid != n || r.Failed != 0 {
				t.Fatalf("n %d valid %d failed %d", r.N, r.Valid, r.Failed)
			}
			se := tc.sd / math.Sqrt(n)
			if !within(r.Mean, tc.mean, se, 4.5) {
				t.Errorf("mean %v, want %v = %s (se %.3g)", r.Mean, tc.mean, tc.meanWhere, se)
			}
			// The sd of the sample sd is about sd/√(2n) for light tails; the
			// lognormal's heavier tail gets more room.
			if !within(r.SD, tc.sd, tc.sd/math.Sqrt(2*n), 9) {
				t.Errorf("sd %v, want %v", r.SD, tc.sd)
			}
			in := p.Inputs[0]
			if tc.ref != nil && !scalar.EqualWithinRel(in.Dist.Mean(), tc.mean, 1e-12) {
				t.Errorf("Dist.Mean %v, gonum %v", in.Dist.Mean(), tc.mean)
			}
			for _, q := range []struct {
				p   float64
				got float64
			}{{0.05, r.P05}, {0.10, r.P10}, {0.50, r.P50}, {0.90, r.P90}, {0.95, r.P95}} {
				want := in.Dist.Quantile(q.p)
				if tc.ref != nil {
					want = tc.ref.Quantile(q.p) // gonum's own quantile
				}
				// density by a central difference of the quantile function
				dens := 2e-4 / (in.Dist.Quantile(q.p+1e-4) - in.Dist.Quantile(q.p-1e-4))
				qse := math.Sqrt(q.p*(1-q.p)/n) / dens
				if !within(q.got, want, qse, 4.5) {
					t.Errorf("P%02.0f = %v, want %v (se %.3g)", 100*q.p, q.got, want, qse)
				}
			}
			if !(r.Min <= r.P05 && r.P95 <= r.Max) {
				t.Errorf("min %v max %v outside P05 %v..P95 %v", r.Min, r.Max, r.P05, r.P95)
			}
		})
	}
}

// midOf returns a baseline inside the distribution's support: its second
// parameter for triangular and PERT (the mode), else its first.
func midOf(decl string) string {
	args := decl[strings.Index(decl, "(")+1 : strings.Index(decl, ")")]
	f := strings.Split(args, ",")
	if strings.Contains(decl, "triangular") || strings.Contains(decl, "pert") {
		return strings.TrimSpace(f[1])
	}
	if strings.Contains(decl, "uniform") {
		// The middle: a baseline at an end lies outside its own P10..P90.
		a, _ := strconv.ParseFloat(strings.TrimSpace(f[0]), 64)
		b, _ := strconv.ParseFloat(strings.TrimSpace(f[1]), 64)
		return strconv.FormatFloat((a+b)/2, 'g', -1, 64)
	}
	return strings.TrimSpace(f[0])
}

func truncMean(mu, sigma, a, b float64) float64 {
	n := distuv.UnitNormal
	return mu + sigma*(n.Prob(a)-n.Prob(b))/(n.CDF(b)-n.CDF(a))
}

func truncSD(sigma, a, b float64) float64 {
	n := distuv.UnitNormal
	z := n.CDF(b) - n.CDF(a)
	t := (n.Prob(a) - n.Prob(b)) / z
	return sigma * math.Sqrt(1+(a*n.Prob(a)-b*n.Prob(b))/z-t*t)
}

// TestSimulateLinear checks a linear model against its closed form: the mean
// is Σ b_i mean_i and the variance Σ b_i² var_i for independent inputs; the
// output is normal, so P(y > mean + 1.2816 sd) = 0.10 (standard normal
// table), with standard error √(p(1-p)/n).
func TestSimulateLinear(t *testing.T) {
	const n = 100_000
	p := problemOf(t, `
input a = 10 ~ normal(10, 2)
input b = 5 ~ normal(5, 1)
y = 3*a - 4*b + 7
`, "y")
	mean := 3*10.0 - 4*5 + 7
	sd := math.Sqrt(9*4 + 16*1)
	above := mean + 1.2815516*sd
	r := simulate(t, p, &SimulationSettings{N: n, Seed: 3, Above: &above})
	if !within(r.Mean, mean, sd/math.Sqrt(n), 4.5) || !within(r.SD, sd, sd/math.Sqrt(2*n), 4.5) {
		t.Errorf("mean %v sd %v, want %v and %v", r.Mean, r.SD, mean, sd)
	}
	if !scalar.EqualWithinRel(r.StderrMean, r.SD/math.Sqrt(n), 1e-12) {
		t.Errorf("stderr_mean %v, want sd/√n = %v", r.StderrMean, r.SD/math.Sqrt(n))
	}
	pse := math.Sqrt(0.1 * 0.9 / n)
	if r.PAbove == nil || !within(*r.PAbove, 0.10, pse, 4.5) {
		t.Fatalf("p_above %v, want 0.10 ± %v", r.PAbove, pse)
	}
	if !scalar.EqualWithinRel(*r.PAboveStderr, math.Sqrt(*r.PAbove*(1-*r.PAbove)/n), 1e-12) {
		t.Errorf("p_above_stderr %v", *r.PAboveStderr)
	}
	// The baseline (mean) of a symmetric output sits at its median.
	if r.Baseline != mean || !within(r.BaselinePercentile, 50, 100*math.Sqrt(0.25/n), 4.5) {
		t.Errorf("baseline %v at percentile %v", r.Baseline, r.BaselinePercentile)
	}
	// Spearman's rho of a bivariate normal with Pearson r is (6/π) asin(r/2)
	// (Pearson 1907; Kruskal 1958): r = 3·2/√52 for a, -4·1/√52 for b.
	for _, c := range r.RankCorrelations {
		pr := map[string]float64{"a": 6 / sd, "b": -4 / sd}[c.Name]
		want := 6 / math.Pi * math.Asin(pr/2)
		if math.Abs(c.Spearman-want) > 0.01 {
			t.Errorf("spearman of %s = %v, want %v", c.Name, c.Spearman, want)
		}
	}
	if r.RankCorrelations[0].Name != "a" {
		t.Errorf("a drives the spread most, got order %v", r.RankCorrelations)
	}
}

// TestImanConover asks for rank correlations and checks the Spearman
// coefficient achieved at n = 5,000 is within 0.03 of the one asked for, as
// recomputed here from the samples (Iman & Conover 1982 report errors of
// this size), while each input keeps its distribution.
func TestImanConover(t *testing.T) {
	p := problemOf(t, `
input steel = 0.9 ~ pert(0.8, 0.9, 1.2)
input rate = 60 ~ normal(60, 5)
input hours = 1.5 ~ lognormal(1.5, 0.3)
input scrap = 0.05 ~ uniform(0, 0.1)
spearman steel, rate = 0.7
spearman hours, rate = -0.4
spearman scrap, steel = 0.3
cost = steel * 10 + rate * hours + scrap
`, "cost")
	if len(p.Correlations) != 3 {
		t.Fatalf("problem has %d correlations", len(p.Correlations))
	}
	r := simulate(t, p, &SimulationSettings{N: 5000, Seed: 7})
	if len(r.Correlations) != 3 {
		t.Fatalf("result has %d correlations", len(r.Correlations))
	}
	for _, c := range r.Correlations {
		if math.Abs(c.Achieved-c.Requested) > 0.03 {
			t.Errorf("%v: achieved %v, asked for %v", c.Inputs, c.Achieved, c.Requested)
		}
	}
	// Recompute the first from the samples themselves.
	cols := sampleColumns(t, p, 5000, 7)
	if got := spearman(cols[0], cols[1]); math.Abs(got-0.7) > 0.03 || got != r.Correlations[0].Achieved {
		t.Errorf("spearman(steel, rate) from the samples = %v, reported %v", got, r.Correlations[0].Achieved)
	}
	// The marginal of rate is still normal(60, 5).
	m, sd := meanSD(cols[1])
	if !within(m, 60, 5/math.Sqrt(5000), 4.5) || math.Abs(sd-5) > 0.25 {
		t.Errorf("rate after reordering: mean %v sd %v", m, sd)
	}
}

// sampleColumns runs a simulation of the identity of each input and returns
// the samples, in sample order.
func sampleColumns(t *testing.T, p *Problem, n int, seed uint64) [][]float64 {
	cols := make([][]float64, len(p.Inputs))
	for i := range p.Inputs {
		q := *p
		q.F = &pick{f: p.F, i: i}
		q.Output = p.Inputs[i].Name
		cols[i] = simulate(t, &q, &SimulationSettings{N: n, Seed: seed}).Samples
	}
	return cols
}

// pick is the function x_i, with the same inputs as f.
type pick struct {
	f Function
	i int
}

func (p *pick) Eval(x []float64) (float64, error) { return x[p.i], nil }
func (p *pick) Gradient(dst, x []float64) (float64, error) {
	clear(dst)
	dst[p.i] = 1
	return x[p.i], nil
}
func (p *pick) EvalBatch(dst, xs []float64, n int) error {
	k := len(xs) / n
	for j := range n {
		dst[j] = xs[j*k+p.i]
	}
	return nil
}
func (p *pick) Clone() Function { return p }

func meanSD(x []float64) (float64, float64) {
	var s, s2 float64
	for _, v := range x {
		s += v
	}
	m := s / float64(len(x))
	for _, v := range x {
		s2 += (v - m) * (v - m)
	}
	return m, math.Sqrt(s2 / float64(len(x)-1))
}

// TestSimulateSameAnyWorkers checks that a seed gives the same JSON, bit for
// bit, at GOMAXPROCS 1 and 2 and with any number of workers, correlations
// and domain failures included; and that another seed gives another result.
func TestSimulateSameAnyWorkers(t *testing.T) {
	p := problemOf(t, `
input a = 1 ~ normal(1, 1)
input b = 2 ~ pert(1, 2, 4)
input c = 3 (2..5)
spearman a, b = 0.5
y = sqrt(a) * b + c^2
`, "y")
	run := func(procs, workers int, seed uint64) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		r := simulate(t, p, &SimulationSettings{N: 3000, Seed: seed, Workers: workers})
		if r.Failed == 0 {
			t.Fatal("expected failures: sqrt of a negative a")
		}
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	one := run(1, 0, 5)
	if two := run(2, 0, 5); two != one {
		t.Errorf("GOMAXPROCS 1 and 2 differ:\n%s\n%s", one, two)
	}
	if three := run(2, 3, 5); three != one {
		t.Errorf("3 workers differ from 1")
	}
	if other := run(2, 0, 6); other == one {
		t.Error("seeds 5 and 6 gave the same result")
	}
}

// TestSimulateFailures checks that samples where the model fails are
// counted, the first reported with its position and input values, and the
// rest kept: y = sqrt(x) with x ~ uniform(-1, 3) fails for x < 0, a
// quarter of the samples.
func TestSimulateFailures(t *testing.T) {
	const n = 20_000
	p := problemOf(t, "input x = 1 ~ uniform(-1, 3)\ny = sqrt(x)\n", "y")
	r := simulate(t, p, &SimulationSettings{N: n, Seed: 1})
	if r.Failed+r.Valid != n || len(r.Samples) != r.Valid {
		t.Fatalf("failed %d + valid %d != %d", r.Failed, r.Valid, n)
	}
	if frac := float64(r.Failed) / n; !within(frac, 0.25, math.Sqrt(0.25*0.75/n), 4.5) {
		t.Errorf("failed fraction %v, want 0.25", frac)
	}
	f := r.FirstFailure
	if f == nil || f.At != "test:2:5" || len(f.Inputs) != 1 || !(f.Inputs[0].Value < 0) || !strings.Contains(f.Message, "square root of a negative number") {
		t.Fatalf("first failure %+v", f)
	}
	for _, v := range r.Samples {
		if !(v >= 0 && v <= math.Sqrt(3)) {
			t.Fatalf("sample %v outside [0, √3]", v)
		}
	}
}

// TestSampledErrors checks the errors of inputs that cannot be sampled.
func TestSampledErrors(t *testing.T) {
	p := problemOf(t, "input units = 1000 (800..1300)\ninput tooling = 50000 [$]\ntotal = units * 2 [$] + tooling\n", "total")
	_, err := Simulate(p, nil)
	se, ok := err.(syntax.ErrorList)
	if !ok || len(se) != 1 {
		t.Fatalf("got %v (%T), want one positioned error", err, err)
	}
	want := "test:2:7: tooling has neither a distribution nor a range, so simulate cannot vary it: give it one, such as ~ normal(50000, 5000) or (±10%), or hold it fixed by writing it as a formula, tooling = 50000 [$]"
	if se[0].Error() != want || se[0].Source != "input tooling = 50000 [$]" {
		t.Errorf("got  %s\nwant %s\n(source %q)", se[0], want, se[0].Source)
	}
	if _, err := Simulate(p, &SimulationSettings{N: 1}); err == nil {
		t.Error("n = 1: no error")
	}
	// A range alone samples uniformly, and says so.
	p = problemOf(t, "input units = 1000 (800..1300)\ntotal = units * 2\n", "total")
	r := simulate(t, p, &SimulationSettings{N: 1000})
	if len(r.UniformFromRange) != 1 || r.UniformFromRange[0] != "units" || r.Min < 1600 || r.Max > 2600 {
		t.Errorf("uniform_from_range %v, min %v, max %v", r.UniformFromRange, r.Min, r.Max)
	}
}

// TestRanks checks ranks against their definition (1..n, ties at their mean
// rank; common practice for Spearman's coefficient) on samples with ties,
// negative values, values that agree in their upper bytes, and a nearly
// constant output (one long run of equal upper bytes).
func TestRanks(t *testing.T) {
	naive := func(xs []float64) []float64 {
		r := make([]float64, len(xs))
		for i, x := range xs {
			less, eq := 0, 0
			for _, y := range xs {
				if y < x {
					less++
				} else if y == x {
					eq++
				}
			}
			r[i] = float64(less) + float64(eq+1)/2
		}
		return r
	}
	near := make([]float64, 3000)
	for i := range near {
		near[i] = 1e9 + float64((i*7919)%3000)*1e-6
	}
	for _, xs := range [][]float64{
		{3, -1, 2, 2, 0, -0.5, 2, 1e300, -1e-300, 0},
		{1, 1 + 1e-15, 1 - 1e-15, 1, 1 + 2e-15},
		near,
	} {
		got := ranks(make([]float64, len(xs)), xs)
		want := naive(xs)
		for i := range xs {
			if got[i] != want[i] {
				t.Fatalf("rank of %v = %v, want %v", xs[i], got[i], want[i])
			}
		}
	}
}

// rowsOnly hides a Function's EvalColumns, so that the sampling analyses
// pass it rows through EvalBatch.
type rowsOnly struct{ Function }

func (r rowsOnly) Clone() Function { return rowsOnly{r.Function.Clone()} }

// TestColumnsAgreeWithRows checks that Simulate and Sobol give the same
// result, to the last bit, whether the model reads the samples as columns
// (EvalColumns) or as rows (EvalBatch): on an output of every input, with
// a correlation and domain failures, and on an output of some of the
// inputs (the others held at their baselines).
func TestColumnsAgreeWithRows(t *testing.T) {
	prog := compileSrc(t, `
input a = 1 ~ normal(1, 1)
input b = 2 ~ pert(1, 2, 4)
input c = 3 (2..5)
input d = 4 ~ lognormal(4, 0.5)
spearman a, b = 0.5
y = sqrt(a) * b + c^2 + d
z = b * d - c / d
`)
	for _, out := range []string{"y", "z"} {
		p, err := prog.Problem(out)
		if err != nil {
			t.Fatal(err)
		}
		if _, ok := p.F.(columnFunction); !ok {
			t.Fatalf("%s: the compiled function has no EvalColumns", out)
		}
		rows := *p
		rows.F = rowsOnly{p.F}
		for _, workers := range []int{1, 2} {
			s := &SimulationSettings{N: 2000, Seed: 9, Workers: workers}
			got, want := simulate(t, p, s), simulate(t, &rows, s)
			if out == "y" && got.Failed == 0 {
				t.Fatal("expected failures: sqrt of a negative a")
			}
			if g, w := must[[]byte](t)(json.Marshal(got)), must[[]byte](t)(json.Marshal(want)); string(g) != string(w) {
				t.Errorf("simulate %s, %d workers: columns and rows differ:\n%s\n%s", out, workers, g, w)
			}
			if !slices.Equal(got.Samples, want.Samples) {
				t.Errorf("simulate %s: the samples differ", out)
			}
		}
		if out == "y" {
			continue // sobol stops at a failure
		}
		s := &SobolSettings{N: 512, Seed: 3, Workers: 2}
		got := must[*SobolResult](t)(Sobol(p, s))
		want := must[*SobolResult](t)(Sobol(&rows, s))
		if g, w := must[[]byte](t)(json.Marshal(got)), must[[]byte](t)(json.Marshal(want)); string(g) != string(w) {
			t.Errorf("sobol %s: columns and rows differ:\n%s\n%s", out, g, w)
		}
	}
}
