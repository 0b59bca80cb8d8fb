package sens

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats/scalar"
)

// problemOf compiles a model given as text through the parser and compiler
// and returns the problem of output out.
func problemOf(t testing.TB, src, out string) *Problem {
	t.Helper()
	p, err := compileSrc(t, src).Problem(out)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// counting wraps a Function and counts its calls.
type counting struct {
	Function
	evals, batches, points, grads int
}

func (c *counting) Eval(x []float64) (float64, error) { c.evals++; return c.Function.Eval(x) }
func (c *counting) Gradient(dst, x []float64) (float64, error) {
	c.grads++
	return c.Function.Gradient(dst, x)
}
func (c *counting) EvalBatch(dst, xs []float64, n int) error {
	c.batches++
	c.points += n
	return c.Function.EvalBatch(dst, xs, n)
}

func bar(t *testing.T, r *TornadoResult, name string) TornadoBar {
	t.Helper()
	for _, b := range r.Bars {
		if b.Name == name {
			return b
		}
	}
	t.Fatalf("no bar %s", name)
	return TornadoBar{}
}

func TestTornadoMultilinear(t *testing.T) {
	// y = a·b + c·d·e is multilinear: linear in each input alone, so each
	// swing equals the range width times the partial derivative at the
	// baseline, exactly (common practice; the partials are written out by
	// hand below).
	src := `
input a = 2 (1..4)
input b = 3 (2..3.5)
input c = 1.5 (±20%)
input d = 4 (3..6)
input e = 0.5 (-10%..+30%)
y = a*b + c*d*e
`
	p := problemOf(t, src, "y")
	r, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	a, b, c, d, e := 2.0, 3.0, 1.5, 4.0, 0.5
	partial := map[string]float64{"a": b, "b": a, "c": d * e, "d": c * e, "e": c * d}
	width := map[string]float64{"a": 3, "b": 1.5, "c": 0.6, "d": 3, "e": 0.2}
	if !scalar.EqualWithinAbsOrRel(r.Baseline, a*b+c*d*e, 1e-12, 1e-12) {
		t.Errorf("baseline = %v, want %v", r.Baseline, a*b+c*d*e)
	}
	for name, g := range partial {
		br := bar(t, r, name)
		want := math.Abs(g) * width[name]
		if !scalar.EqualWithinAbsOrRel(br.Swing, want, 1e-12, 1e-12) {
			t.Errorf("swing %s = %v, want range × partial = %v", name, br.Swing, want)
		}
		if br.NonMonotone || br.Sampled {
			t.Errorf("%s: non-monotone %v, sampled %v; want a linear input left unsampled", name, br.NonMonotone, br.Sampled)
		}
		if br.OutMin != math.Min(br.OutputAtLow, br.OutputAtHigh) || br.OutMax != math.Max(br.OutputAtLow, br.OutputAtHigh) {
			t.Errorf("%s: out_min/out_max %v/%v differ from the ends", name, br.OutMin, br.OutMax)
		}
	}
	// Order: swing descending; a: 9, b: 3, d: 2.25, e: 1.2, c: 1.2 (tie by name).
	want := []string{"a", "b", "d", "c", "e"}
	for i, br := range r.Bars {
		if br.Name != want[i] {
			t.Fatalf("order %v, want %v", names(r), want)
		}
	}
	// Evaluations: the baseline and two ends per input.
	if r.Evaluations != 11 {
		t.Errorf("%d evaluations, want 11", r.Evaluations)
	}
	// A Function whose structure cannot be seen (here the same function
	// behind a wrapper) proves nothing: every input is sampled, batched,
	// never one Eval per point, and the bars are the same.
	cf := &counting{Function: p.F}
	p.F = cf
	r2, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if cf.evals != 0 || cf.batches != 2 || cf.points != 11+5*DefaultInterior || cf.grads != 0 {
		t.Errorf("evals %d, batches %d, points %d, gradients %d; want 0, 2, %d, 0", cf.evals, cf.batches, cf.points, cf.grads, 11+5*DefaultInterior)
	}
	for i, br := range r2.Bars {
		if o := r.Bars[i]; br.Name != o.Name || br.OutputAtLow != o.OutputAtLow || br.OutputAtHigh != o.OutputAtHigh || br.OutMin != o.OutMin || br.OutMax != o.OutMax || !br.Sampled {
			t.Errorf("bar %d through a wrapper: %+v, want %+v sampled", i, br, o)
		}
	}
}

// TestTornadoSeasonal is the regression test of a linearity shortcut that
// looked at values: y = amp · (1 − cos(2π · month / 6)) over month 0..12 is
// 0 at both ends and at the baseline 6, and so is its derivative there,
// yet 1 − cos θ reaches its maximum 2 at θ = π and 3π (months 3 and 9),
// so y rises to 2 · amp and falls back twice (the cosine's extremes: common
// practice). amp enters as a factor, which the model's structure proves
// affine: it is not sampled.
func TestTornadoSeasonal(t *testing.T) {
	src := `
input amp   = 1000 [$] (800..1200)
input month = 6 (0..12)
y = amp * (1 - cos(2 * pi * month / 6))
`
	p := problemOf(t, src, "y")
	r, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := bar(t, r, "month")
	if !m.Sampled || !m.NonMonotone {
		t.Errorf("month: sampled %v, non-monotone %v; want both", m.Sampled, m.NonMonotone)
	}
	if !scalar.EqualWithinAbsOrRel(m.OutMax, 2000, 1e-6, 1e-9) || math.Abs(m.OutMin) > 1e-9 {
		t.Errorf("month: out_min %v, out_max %v; want 0 and 2 · amp = 2000", m.OutMin, m.OutMax)
	}
	if at := m.InputAtMax; !scalar.EqualWithinAbsOrRel(at, 3, 1e-6, 0) && !scalar.EqualWithinAbsOrRel(at, 9, 1e-6, 0) {
		t.Errorf("month: maximum at %v, want 3 or 9", at)
	}
	if r.Bars[0].Name != "month" {
		t.Errorf("order %v: month's spread of 2000 should rank first", names(r))
	}
	if a := bar(t, r, "amp"); a.Sampled || a.Swing != 0 {
		t.Errorf("amp: sampled %v, swing %v; want an affine input left unsampled, swing 0 (y = 0 at the baseline month)", a.Sampled, a.Swing)
	}
}

func names(r *TornadoResult) []string {
	var s []string
	for _, b := range r.Bars {
		s = append(s, b.Name)
	}
	return s
}

func TestTornadoLinear(t *testing.T) {
	// y = Σ b_i x_i + 7: the tornado bar of x_i has swing |b_i|·(high - low)
	// (common practice), with the output falling from low to high when b_i < 0.
	b := []float64{3, -2, 0.5, -4, 0}
	lo := []float64{0, 1, -2, 10, 0}
	hi := []float64{1, 4, 2, 11, 5}
	var ins []*Input
	for i := range b {
		ins = append(ins, NewInput(fmt.Sprintf("x%d", i), (lo[i]+hi[i])/2, lo[i], hi[i], nil))
	}
	f := FuncOf(len(b), func(x []float64) float64 {
		y := 7.0
		for i := range b {
			y += b[i] * x[i]
		}
		return y
	}, func(dst, x []float64) { copy(dst, b) })
	r, err := Tornado(&Problem{Output: "y", F: f, Inputs: ins}, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"x1", "x3", "x0", "x2", "x4"} // swings 6, 4, 3, 2, 0
	for i, br := range r.Bars {
		if br.Name != want[i] {
			t.Fatalf("order %v, want %v", names(r), want)
		}
	}
	for i := range b {
		br := bar(t, r, fmt.Sprintf("x%d", i))
		if w := math.Abs(b[i]) * (hi[i] - lo[i]); !scalar.EqualWithinAbsOrRel(br.Swing, w, 1e-12, 1e-12) {
			t.Errorf("x%d swing = %v, want |b|·(high-low) = %v", i, br.Swing, w)
		}
		if d := br.OutputAtHigh - br.OutputAtLow; !scalar.EqualWithinAbsOrRel(d, b[i]*(hi[i]-lo[i]), 1e-12, 1e-12) {
			t.Errorf("x%d output_at_high - output_at_low = %v, want %v", i, d, b[i]*(hi[i]-lo[i]))
		}
		// A plain Go function shows no structure to prove linearity from,
		// so every input with a range is sampled, and found monotone.
		if br.Sampled != (lo[i] < hi[i]) || br.NonMonotone {
			t.Errorf("x%d: sampled %v, non-monotone %v; want sampled, monotone", i, br.Sampled, br.NonMonotone)
		}
	}
}

func TestTornadoPowerLaw(t *testing.T) {
	// y = a·x^b: the swing in x is a·|high^b - low^b| and in a is
	// x^b·(high_a - low_a) (direct evaluation of the power law); y is
	// monotone in both, so nothing is flagged even though x is sampled.
	src := `
input a = 2.5 (2..3)
input x = 8 (4..16)
y = a * x^0.75
`
	p := problemOf(t, src, "y")
	r, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	bx, ba := bar(t, r, "x"), bar(t, r, "a")
	if w := 2.5 * (math.Pow(16, 0.75) - math.Pow(4, 0.75)); !scalar.EqualWithinAbsOrRel(bx.Swing, w, 1e-12, 1e-12) {
		t.Errorf("swing x = %v, want %v", bx.Swing, w)
	}
	if w := math.Pow(8, 0.75) * 1; !scalar.EqualWithinAbsOrRel(ba.Swing, w, 1e-12, 1e-12) {
		t.Errorf("swing a = %v, want %v", ba.Swing, w)
	}
	if !bx.Sampled || bx.NonMonotone || ba.Sampled || ba.NonMonotone {
		t.Errorf("x sampled %v non-monotone %v; a sampled %v non-monotone %v; want true false false false", bx.Sampled, bx.NonMonotone, ba.Sampled, ba.NonMonotone)
	}
	if r.Bars[0].Name != "x" {
		t.Errorf("order %v, want x first", names(r))
	}
}

func TestTornadoNonMonotone(t *testing.T) {
	// y = (x - 1)^2 over 0..3: the ends give 1 and 4, but the minimum 0 lies
	// inside at x = 1 (vertex of the parabola).
	for _, tc := range []struct {
		value float64
	}{{2}, {0}, {3}, {1}} {
		src := fmt.Sprintf("input x = %v (0..3)\ninput k = 1 (0.5..1.5)\ny = k * (x - 1)^2\n", tc.value)
		p := problemOf(t, src, "y")
		r, err := Tornado(p, nil)
		if err != nil {
			t.Fatal(err)
		}
		b := bar(t, r, "x")
		if !b.NonMonotone {
			t.Errorf("baseline %v: x not flagged non-monotone", tc.value)
		}
		if !scalar.EqualWithinAbsOrRel(b.OutMin, 0, 1e-12, 0) || !scalar.EqualWithinAbsOrRel(b.InputAtMin, 1, 1e-6, 0) {
			t.Errorf("baseline %v: minimum %v at x = %v, want 0 at 1", tc.value, b.OutMin, b.InputAtMin)
		}
		if b.OutMax != 4 || b.InputAtMax != 3 || b.OutputAtLow != 1 || b.OutputAtHigh != 4 || b.Swing != 3 {
			t.Errorf("baseline %v: bar %+v", tc.value, b)
		}
		if kb := bar(t, r, "k"); kb.NonMonotone {
			t.Errorf("k flagged non-monotone")
		}
	}
}

func TestTornadoInteriorOff(t *testing.T) {
	// With sampling off only the ends are evaluated, and the trough of
	// (x - 1)² inside 0..3 goes unseen.
	p := problemOf(t, "input x = 2 (0..3)\ny = (x - 1)^2\n", "y")
	r, err := Tornado(p, &TornadoSettings{Interior: -1, Top: 5})
	if err != nil {
		t.Fatal(err)
	}
	b := r.Bars[0]
	if b.Sampled || b.NonMonotone || b.OutMin != 1 || r.Evaluations != 3 || r.Rest != nil {
		t.Errorf("bar %+v, %d evaluations, rest %+v", b, r.Evaluations, r.Rest)
	}
}

func TestTornadoHiddenPeakRanks(t *testing.T) {
	// y = 10 - 40·(x - 0.5)^2 + z over x in 0..1 and z in 0..3: the ends of x
	// give equal outputs (swing 0), but the output spans 10 over x's range,
	// so x must rank first, not last.
	ins := []*Input{NewInput("x", 0.2, 0, 1, nil), NewInput("z", 1, 0, 3, nil)}
	f := FuncOf(2, func(x []float64) float64 { return 10 - 40*(x[0]-0.5)*(x[0]-0.5) + x[1] }, nil)
	r, err := Tornado(&Problem{Output: "y", F: f, Inputs: ins}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b := r.Bars[0]
	if b.Name != "x" || b.Swing != 0 || !b.NonMonotone || !scalar.EqualWithinAbsOrRel(b.Spread(), 10, 1e-9, 0) {
		t.Errorf("first bar %+v; want x with swing 0, spread 10, non-monotone", b)
	}
	if !scalar.EqualWithinAbsOrRel(b.InputAtMax, 0.5, 1e-6, 0) {
		t.Errorf("peak at %v, want 0.5", b.InputAtMax)
	}
}

func TestTornadoDefaultRangeAndTop(t *testing.T) {
	src := `
input a = 10
input b = 2 (1..3)
input c = 5 ~ uniform(0, 10)
input d = 1 (0.9..1.1)
y = a + 3*b + c + d
`
	p := problemOf(t, src, "y")
	r, err := Tornado(p, &TornadoSettings{Top: 2})
	if err != nil {
		t.Fatal(err)
	}
	// Swings: a 2 (default ±10%), b 6, c 8 (10th..90th percentiles of
	// uniform(0, 10): 1..9), d 0.2.
	if got := names(r); strings.Join(got, ",") != "c,b" {
		t.Errorf("top 2 = %v, want c, b", got)
	}
	if r.Rest == nil || r.Rest.Count != 2 || !scalar.EqualWithinAbsOrRel(r.Rest.LargestSwing, 2, 1e-12, 1e-12) {
		t.Errorf("rest = %+v, want 2 more, largest swing 2", r.Rest)
	}
	if len(r.DefaultRanges) != 1 || r.DefaultRanges[0] != "a" {
		t.Errorf("default ranges %v, want [a]", r.DefaultRanges)
	}
	if bc := bar(t, r, "c"); bc.Source != RangeDistribution || bc.DefaultRange ||
		!scalar.EqualWithinAbsOrRel(bc.Low, 1, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(bc.High, 9, 1e-12, 1e-12) {
		t.Errorf("bar c = %+v", bc)
	}
	all, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if ba := bar(t, all, "a"); !ba.DefaultRange || ba.Source != RangeDefault || ba.Low != 9 || ba.High != 11 {
		t.Errorf("bar a = %+v, want the default range 9..11 flagged", ba)
	}
}

func TestTornadoStepsSampleEverything(t *testing.T) {
	// A spike inside x's range that the ends, the baseline and the slope
	// cannot see: with a step-shaped operation on the path, every input is
	// sampled and the spike is found.
	src := `
input x = 2 (0..10)
y = x + if(x > 4.5 and x < 5.5, 100, 0)
`
	p := problemOf(t, src, "y")
	r, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	b := bar(t, r, "x")
	if !b.Sampled || !b.NonMonotone || b.OutMax < 100 {
		t.Errorf("bar %+v; want the spike found", b)
	}
}

func TestTornadoErrors(t *testing.T) {
	// A domain error at a range end names the formula and its position.
	src := "input x = 1 (-1..2)\ny = ln(x)\n"
	p := problemOf(t, src, "y")
	_, err := Tornado(p, nil)
	var ee *EvalError
	if !errors.As(err, &ee) || ee.Pos.Line != 2 || ee.Pos.Column != 5 || ee.Formula != "y" {
		t.Fatalf("error %v; want an EvalError at test:2:5 in y", err)
	}
	// Cancellation stops the analysis.
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	p = problemOf(t, "input x = 1 (0..2)\ny = x^2\n", "y")
	if _, err := Tornado(p, &TornadoSettings{Settings: Settings{Ctx: ctx}}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: error %v", err)
	}
	// Progress ends with done == total.
	var last [2]int
	calls := 0
	_, err = Tornado(p, &TornadoSettings{Settings: Settings{Progress: func(d, n int) { last = [2]int{d, n}; calls++ }}})
	if err != nil || calls == 0 || last[0] != last[1] {
		t.Errorf("progress: %d calls, last %v, err %v", calls, last, err)
	}
}

// bidModel generates a model of k inputs: k/2 line items, each a quantity
// times a rate, in subtotals of 100 items. With nonlinear set, every tenth
// item's quantity enters through an economy-of-scale power, q^0.9.
func bidModel(k int, nonlinear bool) string {
	var b strings.Builder
	items := k / 2
	for i := 0; i < items; i++ {
		fmt.Fprintf(&b, "input q%d = %d (-10%%..+15%%)\n", i, 10+i%7)
		fmt.Fprintf(&b, "input r%d = %d [$] (%d..%d)\n", i, 100+i%13, 90+i%13, 120+i%13)
	}
	var subs []string
	for s := 0; s*100 < items; s++ {
		var terms []string
		for i := s * 100; i < min(items, (s+1)*100); i++ {
			if nonlinear && i%10 == 0 {
				terms = append(terms, fmt.Sprintf("q%d^0.9*r%d", i, i))
			} else {
				terms = append(terms, fmt.Sprintf("q%d*r%d", i, i))
			}
		}
		fmt.Fprintf(&b, "sub%d = %s\n", s, strings.Join(terms, " + "))
		subs = append(subs, fmt.Sprintf("sub%d", s))
	}
	fmt.Fprintf(&b, "total = %s\n", strings.Join(subs, " + "))
	return b.String()
}

func TestTornadoLargeModelEvaluations(t *testing.T) {
	if testing.Short() {
		t.Skip("large model")
	}
	// A tornado of a model affine in each input costs the 2k ends and the
	// baseline.
	p := problemOf(t, bidModel(2000, false), "total")
	r, err := Tornado(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Evaluations != 2*2000+1 || len(r.Bars) != 2000 {
		t.Errorf("%d evaluations, %d bars; want %d, 2000", r.Evaluations, len(r.Bars), 2*2000+1)
	}
}

// benchTornado times a tornado of a k-input model against the reference cost
// of 2k batched forward evaluations (the baseline with one input at a range
// end, in the batch size the tornado uses). The two run alternately in each
// iteration so that a change in the machine's load affects both alike; the
// ratio is reported as x-ref.
func benchTornado(b *testing.B, k int, nonlinear bool) {
	p := problemOf(b, bidModel(k, nonlinear), "total")
	x0 := p.Baseline()
	chunk := max(1, min(maxBatch, maxBatchFloats/k))
	rows := make([]float64, chunk*k)
	for r := 0; r < chunk; r++ {
		copy(rows[r*k:], x0)
	}
	out := make([]float64, chunk)
	reference := func() {
		for start := 0; start < 2*k; start += chunk {
			n := min(chunk, 2*k-start)
			for r := 0; r < n; r++ {
				q := start + r
				in := p.Inputs[q/2]
				v := in.Low
				if q%2 == 1 {
					v = in.High
				}
				rows[r*k+q/2] = v
			}
			if err := p.F.EvalBatch(out[:n], rows[:n*k], n); err != nil {
				b.Fatal(err)
			}
			for r := 0; r < n; r++ {
				q := start + r
				rows[r*k+q/2] = x0[q/2]
			}
		}
	}
	tornado := func() int {
		r, err := Tornado(p, nil)
		if err != nil {
			b.Fatal(err)
		}
		return r.Evaluations
	}
	var tTornado, tRef time.Duration
	var evals int
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		// Alternate which runs first: whichever follows the other finds
		// the caches and the scheduler in a different state.
		t0 := time.Now()
		if i%2 == 0 {
			evals = tornado()
			t1 := time.Now()
			reference()
			tTornado, tRef = tTornado+t1.Sub(t0), tRef+time.Since(t1)
		} else {
			reference()
			t1 := time.Now()
			evals = tornado()
			tRef, tTornado = tRef+t1.Sub(t0), tTornado+time.Since(t1)
		}
	}
	b.ReportMetric(float64(tTornado)/float64(b.N), "tornado-ns/op")
	b.ReportMetric(float64(tRef)/float64(b.N), "ref-ns/op")
	b.ReportMetric(float64(tTornado)/float64(tRef), "x-ref")
	b.ReportMetric(float64(evals)/float64(2*k), "evals/2k")
}

func BenchmarkTornado(b *testing.B) {
	b.Run("linear/inputs=10000", func(b *testing.B) { benchTornado(b, 10000, false) })
	b.Run("mixed/inputs=10000", func(b *testing.B) { benchTornado(b, 10000, true) })
}

// A tornado of y = (x - 1)² + 2z over x in 0..3 and z in 1..2: the ends of
// x give 1 and 4, but the output falls to 0 inside the range.
func ExampleTornado() {
	ins := []*Input{NewInput("x", 2, 0, 3, nil), NewInput("z", 1.5, 1, 2, nil)}
	f := FuncOf(2, func(x []float64) float64 { return (x[0]-1)*(x[0]-1) + 2*x[1] }, nil)
	r, err := Tornado(&Problem{Output: "y", F: f, Inputs: ins}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, b := range r.Bars {
		fmt.Printf("%s: %g..%g gives %.4g..%.4g (swing %.4g); over the range %.4g..%.4g, non-monotone %v\n",
			b.Name, b.Low, b.High, b.OutputAtLow, b.OutputAtHigh, b.Swing, b.OutMin, b.OutMax, b.NonMonotone)
	}
	// Output:
	// x: 0..3 gives 4..7 (swing 3); over the range 3..7, non-monotone true
	// z: 1..2 gives 3..5 (swing 2); over the range 3..5, non-monotone false
}
