package sens

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"testing"
	"text/tabwriter"
	"time"

	"gonum.org/v1/gonum/diff/fd"
)

// This file holds the benchmark models and bodies shared by
// bench_test.go and RunBench (the CLI's `nudge bench`).

// benchCostInputs are the inputs of the benchmark cost model, an
// invented machined part: name and baseline.
var benchCostInputs = []struct {
	name string
	x    float64
}{
	{"units", 1000}, {"mass", 12}, {"steel", 0.9}, {"scrap", 0.08},
	{"hours", 1.5}, {"rate", 60}, {"learn_rate", 0.85}, {"kwh", 30},
	{"power", 0.12}, {"overhead", 0.35}, {"tooling", 50000},
	{"interest", 0.08}, {"years", 7}, {"machine", 250000},
	{"salvage", 30000}, {"batch", 200}, {"setup", 3},
}

// benchCostBaseline returns the baseline inputs of the cost model.
func benchCostBaseline() []float64 {
	x := make([]float64, len(benchCostInputs))
	for i, in := range benchCostInputs {
		x[i] = in.x
	}
	return x
}

// buildCostModel builds the benchmark cost model; arith replaces the
// learning curve and the economy factors by arithmetic, leaving a model
// of + - * / ceil max if only.
func buildCostModel(arith bool) *Tape {
	b := NewBuilder()
	in := make([]Slot, len(benchCostInputs))
	for i := range in {
		b.SetPos(int32(i))
		in[i] = b.Input()
	}
	units, mass, steel, scrap, hours, rate, lr, kwh := in[0], in[1], in[2], in[3], in[4], in[5], in[6], in[7]
	power, overhead, tooling, irate, years, machine, salvage, batch, setup := in[8], in[9], in[10], in[11], in[12], in[13], in[14], in[15], in[16]
	c := b.Const
	mul := func(x, y Slot) Slot { return b.Binary(OpMul, x, y) }
	add := func(x, y Slot) Slot { return b.Binary(OpAdd, x, y) }
	sub := func(x, y Slot) Slot { return b.Binary(OpSub, x, y) }
	div := func(x, y Slot) Slot { return b.Binary(OpDiv, x, y) }

	b.SetPos(100)
	material := mul(mul(mass, steel), add(c(1), scrap))
	var unitHours, recov, sink Slot
	if arith {
		unitHours = mul(hours, lr)
		recov = add(irate, div(c(1), years))
		sink = div(c(1), years)
	} else {
		unitHours = b.Call(OpLearn, hours, lr, units)
		recov = b.Binary(OpRecovery, irate, years)
		sink = b.Binary(OpSinking, irate, years)
	}
	labour := mul(unitHours, rate)
	setups := b.Unary(OpCeil, div(units, batch))
	setupCost := div(mul(mul(setups, setup), rate), units)
	energy := mul(kwh, power)
	annualCap := sub(mul(machine, recov), mul(salvage, sink))
	capital := div(mul(annualCap, years), units)
	direct := add(add(add(material, labour), setupCost), energy)
	ovh := mul(add(labour, setupCost), overhead)
	unit := add(add(direct, ovh), capital)
	disc := b.Call(OpIf, b.Binary(OpGt, units, c(500)), c(0.03), c(0))
	price := mul(mul(unit, sub(c(1), disc)), c(1.12))
	margin := b.Binary(OpMax, sub(price, unit), c(2))
	total := add(mul(units, add(unit, margin)), tooling)
	return b.Tape(total)
}

// costModelGo is buildCostModel(false) written directly in Go, operation
// for operation, so that the two agree to the last bit.
func costModelGo(x []float64) float64 {
	x = x[:17]
	units, mass, steel, scrap, hours, rate, lr, kwh := x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
	power, overhead, tooling, irate, years, machine, salvage, batch, setup := x[8], x[9], x[10], x[11], x[12], x[13], x[14], x[15], x[16]
	material := mass * steel * (1 + scrap)
	labour := learnUnit(hours, lr, units) * rate
	setupCost := math.Ceil(units/batch) * setup * rate / units
	energy := kwh * power
	annualCap := machine*econRecovery(irate, years) - salvage*econSinking(irate, years)
	capital := annualCap * years / units
	direct := material + labour + setupCost + energy
	ovh := (labour + setupCost) * overhead
	unit := direct + ovh + capital
	disc := 0.0
	if units > 500 {
		disc = 0.03
	}
	price := unit * (1 - disc) * 1.12
	margin := max(price-unit, 2)
	return units*(unit+margin) + tooling
}

// arithModelGo is buildCostModel(true) written directly in Go.
func arithModelGo(x []float64) float64 {
	x = x[:17]
	units, mass, steel, scrap, hours, rate, lr, kwh := x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
	power, overhead, tooling, irate, years, machine, salvage, batch, setup := x[8], x[9], x[10], x[11], x[12], x[13], x[14], x[15], x[16]
	material := mass * steel * (1 + scrap)
	labour := hours * lr * rate
	setupCost := math.Ceil(units/batch) * setup * rate / units
	energy := kwh * power
	annualCap := machine*(irate+1/years) - salvage*(1/years)
	capital := annualCap * years / units
	direct := material + labour + setupCost + energy
	ovh := (labour + setupCost) * overhead
	unit := direct + ovh + capital
	disc := 0.0
	if units > 500 {
		disc = 0.03
	}
	price := unit * (1 - disc) * 1.12
	margin := max(price-unit, 2)
	return units*(unit+margin) + tooling
}

// benchSamples returns n samples of the cost model's inputs, each input
// spread ±20% around its baseline.
func benchSamples(n int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	base := benchCostBaseline()
	x := make([]float64, n*len(base))
	for s := 0; s < n; s++ {
		for j, v := range base {
			x[s*len(base)+j] = v * (0.8 + 0.4*rng.Float64())
		}
	}
	return x
}

// genModel builds a bid of line items, an invented model shape for the
// size benchmarks: about nodes nodes over nIn inputs (values in
// [0.5, 2], also returned), each item one of a few templates that mix
// products, quotients, powers, logs, min/max, if and an occasional
// capital-recovery factor, summed into one total.
func genModel(nodes, nIn int, seed uint64) (*Tape, []float64) {
	rng := rand.New(rand.NewPCG(seed, 2))
	b := NewBuilder()
	in := make([]Slot, nIn)
	x := make([]float64, nIn)
	for j := range in {
		in[j] = b.Input()
		x[j] = 0.5 + 1.5*rng.Float64()
	}
	pick := func() Slot { return in[rng.IntN(nIn)] }
	consts := []float64{0.9, 0.1, 1.05, 0.85, 1.2, 2, 0.5, 10}
	c := func() Slot { return b.Const(consts[rng.IntN(len(consts))]) }
	mul := func(x, y Slot) Slot { return b.Binary(OpMul, x, y) }
	add := func(x, y Slot) Slot { return b.Binary(OpAdd, x, y) }
	total := b.Const(0)
	for item := 0; len(b.nodes) < nodes; item++ {
		b.SetPos(int32(item))
		p, q, r := pick(), pick(), pick()
		var v Slot
		switch k := rng.IntN(100); {
		case k < 25:
			v = mul(mul(p, q), add(c(), mul(r, c())))
		case k < 35:
			v = b.Binary(OpMax, mul(p, q), mul(r, c()))
		case k < 45:
			v = mul(mul(p, b.Binary(OpPow, q, c())), r)
		case k < 55:
			pq := mul(p, q)
			v = b.Call(OpIf, b.Binary(OpGt, p, c()), mul(pq, c()), pq)
		case k < 70:
			v = b.Binary(OpSub, add(b.Binary(OpDiv, p, q), mul(r, c())), mul(q, c()))
		case k < 78:
			v = mul(b.Unary(OpSqrt, mul(p, q)), r)
		case k < 84:
			v = mul(b.Unary(OpExp, b.Unary(OpNeg, p)), mul(q, c()))
		case k < 90:
			v = mul(b.Unary(OpLn, add(p, c())), q)
		case k < 98:
			v = mul(b.Binary(OpMin, p, q), add(r, c()))
		default:
			rate := mul(q, b.Const(0.05))
			v = mul(p, b.Binary(OpRecovery, rate, mul(r, c())))
		}
		total = add(total, v)
	}
	return b.Tape(total), x
}

// Benchmark bodies.

func benchTapeForward(b *testing.B, t *Tape, x []float64) {
	b.ReportAllocs()
	if err := t.Forward(x); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if err := t.Forward(x); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(t.Bytes())/float64(t.Len()), "B/node")
}

func benchTapeGradient(b *testing.B, t *Tape, x []float64) {
	b.ReportAllocs()
	g := make([]float64, t.NumInputs())
	if _, err := t.Gradient(g, x, 0); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := t.Gradient(g, x, 0); err != nil {
			b.Fatal(err)
		}
	}
}

// benchSink keeps hand-written results alive.
var benchSink float64

func benchGo(b *testing.B, f func([]float64) float64, x []float64) {
	b.ReportAllocs()
	for b.Loop() {
		benchSink += f(x)
	}
}

func benchTapeBatch(b *testing.B, t *Tape, x []float64, n int) {
	b.ReportAllocs()
	out := make([]float64, n)
	if err := t.ForwardBatch(out, x, n, 0); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if err := t.ForwardBatch(out, x, n, 0); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/sample")
}

func benchGoBatch(b *testing.B, f func([]float64) float64, x []float64, n int) {
	b.ReportAllocs()
	out := make([]float64, n)
	k := len(x) / n
	for b.Loop() {
		for s := range out {
			out[s] = f(x[s*k : (s+1)*k])
		}
	}
	benchSink += out[0]
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/sample")
}

func benchTapeGradientBatch(b *testing.B, t *Tape, x []float64, n int) {
	b.ReportAllocs()
	out := make([]float64, n)
	g := make([]float64, n*t.NumInputs())
	if err := t.GradientBatch(out, g, x, n, 0); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if err := t.GradientBatch(out, g, x, n, 0); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/sample")
}

// fdGradientTime times one gonum fd.Gradient (central differences, so
// 2 evaluations per input) of output 0 through t.Forward.
func fdGradientTime(t *Tape, x []float64) (time.Duration, []float64) {
	f := func(x []float64) float64 {
		if err := t.Forward(x); err != nil {
			return math.NaN()
		}
		return t.Output(0)
	}
	start := time.Now()
	g := fd.Gradient(nil, f, x, &fd.Settings{Formula: fd.Central, Step: 1e-6})
	return time.Since(start), g
}

// benchBatchN is the batch size of the batched benchmarks.
const benchBatchN = 4096

// Sizes of the generated models: nodes and inputs.
var benchSizes = []struct {
	name       string
	nodes, nIn int
}{
	{"1e3 nodes", 1_000, 100},
	{"1e5 nodes", 100_000, 10_000},
	{"1e6 nodes", 1_000_000, 100_000},
}

// RunBench runs the engine's benchmarks with testing.Benchmark and prints
// a table of ratios to w: the tape interpreter against the same cost
// model written in Go (scalar and batched), the reverse sweep against the
// forward sweep on generated models of 1e3 to 1e6 nodes, reverse mode
// against gonum's central differences on 10,000 inputs, and the tape's
// bytes per node. It takes about half a minute.
func RunBench(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "comparison\ttape\treference\tratio\ttarget\t")
	ns := func(r testing.BenchmarkResult) float64 { return float64(r.T.Nanoseconds()) / float64(r.N) }
	row := func(name string, a, b float64, unit, target string) {
		fmt.Fprintf(tw, "%s\t%.4g %s\t%.4g %s\t%.2f\t%s\t\n", name, a, unit, b, unit, a/b, target)
	}
	var failed error
	fail := func(err error) {
		if err != nil && failed == nil {
			failed = err
		}
	}

	for _, arith := range []bool{false, true} {
		t := buildCostModel(arith)
		goFn, name := costModelGo, "cost model"
		if arith {
			goFn, name = arithModelGo, "arithmetic-only model"
		}
		x := benchCostBaseline()
		fail(t.Forward(x))
		tape := testing.Benchmark(func(b *testing.B) { benchTapeForward(b, t, x) })
		hand := testing.Benchmark(func(b *testing.B) { benchGo(b, goFn, x) })
		target := "<= 2.5"
		if arith {
			target = "(none)"
		}
		row(name+", scalar forward vs Go", ns(tape), ns(hand), "ns", target)

		xs := benchSamples(benchBatchN, 7)
		tape = testing.Benchmark(func(b *testing.B) { benchTapeBatch(b, t, xs, benchBatchN) })
		hand = testing.Benchmark(func(b *testing.B) { benchGoBatch(b, goFn, xs, benchBatchN) })
		target = "<= 1.2"
		if arith {
			target = "(none)"
		}
		row(fmt.Sprintf("%s, batched forward vs Go (per sample, n=%d)", name, benchBatchN),
			ns(tape)/benchBatchN, ns(hand)/benchBatchN, "ns", target)
	}

	var bytesPerNode float64
	for _, sz := range benchSizes {
		t, x := genModel(sz.nodes, sz.nIn, 1)
		fail(t.Forward(x))
		fwd := testing.Benchmark(func(b *testing.B) { benchTapeForward(b, t, x) })
		grad := testing.Benchmark(func(b *testing.B) { benchTapeGradient(b, t, x) })
		row(fmt.Sprintf("gradient vs forward, %d nodes, %d inputs", t.Len(), t.NumInputs()), ns(grad)/1e3, ns(fwd)/1e3, "µs", "<= 3")
		bytesPerNode = max(bytesPerNode, float64(t.Bytes())/float64(t.Len()))
	}

	t, x := genModel(30_000, 10_000, 3)
	fail(t.Forward(x))
	grad := testing.Benchmark(func(b *testing.B) { benchTapeGradient(b, t, x) })
	fdTime, _ := fdGradientTime(t, x)
	fmt.Fprintf(tw, "reverse mode vs fd.Gradient, %d inputs (fd: 20001 evaluations, one run)\t%.4g ms\t%.4g ms\tspeed-up %.0f\t\t\n",
		t.NumInputs(), ns(grad)/1e6, float64(fdTime.Nanoseconds())/1e6, float64(fdTime.Nanoseconds())/ns(grad))
	fmt.Fprintf(tw, "tape bytes per node (largest model)\t%.1f\t\t\t<= 32\t\n", bytesPerNode)
	if err := tw.Flush(); err != nil {
		return err
	}
	return failed
}
