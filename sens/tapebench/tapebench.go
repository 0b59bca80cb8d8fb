// Package tapebench holds the benchmark harness of the differentiation
// engine (package tape): an invented cost model built on a tape and written
// again in plain Go, generated models of a thousand to a million nodes, and
// the timing bodies that compare them. `nudge bench` and the benchmarks of
// package tape both run these bodies, so their figures are the same
// measurement.
//
// The bodies take a B, which *testing.B satisfies, so that this package
// does not import testing into the binaries that use it. It is not part of
// the engine: nothing but the benchmarks and `nudge bench` imports it.
package tapebench

import (
	"math"
	"math/rand/v2"
	"slices"
	"time"

	"github.com/nudge-dev/nudge/sens/tape"
	"gonum.org/v1/gonum/diff/fd"
)

// B is the part of *testing.B the benchmark bodies use.
type B interface {
	Loop() bool
	ReportAllocs()
	ReportMetric(n float64, unit string)
	StopTimer()
	Elapsed() time.Duration
	Fatal(args ...any)
}

// CostInputs are the inputs of the benchmark cost model, an invented
// machined part: name and baseline.
var CostInputs = []struct {
	Name string
	X    float64
}{
	{"units", 1000}, {"mass", 12}, {"steel", 0.9}, {"scrap", 0.08},
	{"hours", 1.5}, {"rate", 60}, {"learn_rate", 0.85}, {"kwh", 30},
	{"power", 0.12}, {"overhead", 0.35}, {"tooling", 50000},
	{"interest", 0.08}, {"years", 7}, {"machine", 250000},
	{"salvage", 30000}, {"batch", 200}, {"setup", 3},
}

// CostBaseline returns the baseline inputs of the cost model.
func CostBaseline() []float64 {
	x := make([]float64, len(CostInputs))
	for i, in := range CostInputs {
		x[i] = in.X
	}
	return x
}

// CostModel builds the benchmark cost model; arith replaces the
// learning curve and the economy factors by arithmetic, leaving a model
// of + - * / ceil max if only.
func CostModel(arith bool) *tape.Tape {
	b := tape.NewBuilder()
	in := make([]tape.Slot, len(CostInputs))
	for i := range in {
		b.SetPos(int32(i))
		in[i] = b.Input()
	}
	units, mass, steel, scrap, hours, rate, lr, kwh := in[0], in[1], in[2], in[3], in[4], in[5], in[6], in[7]
	power, overhead, tooling, irate, years, machine, salvage, batch, setup := in[8], in[9], in[10], in[11], in[12], in[13], in[14], in[15], in[16]
	c := b.Const
	mul := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpMul, x, y) }
	add := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpAdd, x, y) }
	sub := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpSub, x, y) }
	div := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpDiv, x, y) }

	b.SetPos(100)
	material := mul(mul(mass, steel), add(c(1), scrap))
	var unitHours, recov, sink tape.Slot
	if arith {
		unitHours = mul(hours, lr)
		recov = add(irate, div(c(1), years))
		sink = div(c(1), years)
	} else {
		unitHours = b.Call(tape.OpLearn, hours, lr, units)
		recov = b.Binary(tape.OpRecovery, irate, years)
		sink = b.Binary(tape.OpSinking, irate, years)
	}
	labour := mul(unitHours, rate)
	setups := b.Unary(tape.OpCeil, div(units, batch))
	setupCost := div(mul(mul(setups, setup), rate), units)
	energy := mul(kwh, power)
	annualCap := sub(mul(machine, recov), mul(salvage, sink))
	capital := div(mul(annualCap, years), units)
	direct := add(add(add(material, labour), setupCost), energy)
	ovh := mul(add(labour, setupCost), overhead)
	unit := add(add(direct, ovh), capital)
	disc := b.Call(tape.OpIf, b.Binary(tape.OpGt, units, c(500)), c(0.03), c(0))
	price := mul(mul(unit, sub(c(1), disc)), c(1.12))
	margin := b.Binary(tape.OpMax, sub(price, unit), c(2))
	total := add(mul(units, add(unit, margin)), tooling)
	return b.Tape(total)
}

// CostModelGo is CostModel(false) written directly in Go, operation
// for operation, so that the two agree to the last bit.
func CostModelGo(x []float64) float64 {
	x = x[:17]
	units, mass, steel, scrap, hours, rate, lr, kwh := x[0], x[1], x[2], x[3], x[4], x[5], x[6], x[7]
	power, overhead, tooling, irate, years, machine, salvage, batch, setup := x[8], x[9], x[10], x[11], x[12], x[13], x[14], x[15], x[16]
	material := mass * steel * (1 + scrap)
	labour := tape.Learn(hours, lr, units) * rate
	setupCost := math.Ceil(units/batch) * setup * rate / units
	energy := kwh * power
	annualCap := machine*tape.Recovery(irate, years) - salvage*tape.Sinking(irate, years)
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

// ArithModelGo is CostModel(true) written directly in Go.
func ArithModelGo(x []float64) float64 {
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

// Samples returns n samples of the cost model's inputs, each input
// spread ±20% around its baseline.
func Samples(n int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	base := CostBaseline()
	x := make([]float64, n*len(base))
	for s := 0; s < n; s++ {
		for j, v := range base {
			x[s*len(base)+j] = v * (0.8 + 0.4*rng.Float64())
		}
	}
	return x
}

// GenModel builds a bid of line items, an invented model shape for the
// size benchmarks: about nodes nodes over nIn inputs (values in
// [0.5, 2], also returned), each item one of a few templates that mix
// products, quotients, powers, logs, min/max, if and an occasional
// capital-recovery factor, summed into one total.
func GenModel(nodes, nIn int, seed uint64) (*tape.Tape, []float64) {
	rng := rand.New(rand.NewPCG(seed, 2))
	b := tape.NewBuilder()
	in := make([]tape.Slot, nIn)
	x := make([]float64, nIn)
	for j := range in {
		in[j] = b.Input()
		x[j] = 0.5 + 1.5*rng.Float64()
	}
	pick := func() tape.Slot { return in[rng.IntN(nIn)] }
	consts := []float64{0.9, 0.1, 1.05, 0.85, 1.2, 2, 0.5, 10}
	c := func() tape.Slot { return b.Const(consts[rng.IntN(len(consts))]) }
	mul := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpMul, x, y) }
	add := func(x, y tape.Slot) tape.Slot { return b.Binary(tape.OpAdd, x, y) }
	total := b.Const(0)
	for item := 0; b.Len() < nodes; item++ {
		b.SetPos(int32(item))
		p, q, r := pick(), pick(), pick()
		var v tape.Slot
		switch k := rng.IntN(100); {
		case k < 25:
			v = mul(mul(p, q), add(c(), mul(r, c())))
		case k < 35:
			v = b.Binary(tape.OpMax, mul(p, q), mul(r, c()))
		case k < 45:
			v = mul(mul(p, b.Binary(tape.OpPow, q, c())), r)
		case k < 55:
			pq := mul(p, q)
			v = b.Call(tape.OpIf, b.Binary(tape.OpGt, p, c()), mul(pq, c()), pq)
		case k < 70:
			v = b.Binary(tape.OpSub, add(b.Binary(tape.OpDiv, p, q), mul(r, c())), mul(q, c()))
		case k < 78:
			v = mul(b.Unary(tape.OpSqrt, mul(p, q)), r)
		case k < 84:
			v = mul(b.Unary(tape.OpExp, b.Unary(tape.OpNeg, p)), mul(q, c()))
		case k < 90:
			v = mul(b.Unary(tape.OpLn, add(p, c())), q)
		case k < 98:
			v = mul(b.Binary(tape.OpMin, p, q), add(r, c()))
		default:
			rate := mul(q, b.Const(0.05))
			v = mul(p, b.Binary(tape.OpRecovery, rate, mul(r, c())))
		}
		total = add(total, v)
	}
	return b.Tape(total), x
}

// Benchmark bodies.
//
// A comparison runs its two sides interleaved, in chunks of about 20 µs
// each, so that a changing load on the machine (other processes on a
// shared machine) affects both alike; it reports the time per call of
// each side and their ratio.

// Pair times a and ref interleaved, k calls to a chunk, and reports
// "a-ns", "ref-ns" (the median time of each per call, divided by per)
// and "ratio" (the median of the chunk pairs' ratios a/ref) under the
// given names; ns/op is the time of a pair of chunks. Medians, because a
// chunk that the scheduler interrupts takes far longer than the others.
func Pair(b B, k int, per float64, aName, refName string, a, ref func() error) {
	b.ReportAllocs()
	if err := a(); err != nil {
		b.Fatal(err)
	}
	if err := ref(); err != nil {
		b.Fatal(err)
	}
	const keep = 1 << 12
	ta := make([]float64, 0, keep)
	tr := make([]float64, 0, keep)
	ratio := make([]float64, 0, keep)
	i := 0
	for b.Loop() {
		start := time.Now()
		for range k {
			if err := a(); err != nil {
				b.Fatal(err)
			}
		}
		mid := time.Now()
		for range k {
			if err := ref(); err != nil {
				b.Fatal(err)
			}
		}
		x, y := float64(mid.Sub(start)), float64(time.Since(mid))
		if len(ta) < keep {
			ta, tr, ratio = append(ta, x), append(tr, y), append(ratio, x/y)
		} else {
			ta[i%keep], tr[i%keep], ratio[i%keep] = x, y, x/y
		}
		i++
	}
	b.StopTimer()
	b.ReportMetric(median(ta)/float64(k)/per, aName+"-ns")
	b.ReportMetric(median(tr)/float64(k)/per, refName+"-ns")
	b.ReportMetric(median(ratio), "ratio")
}

// median returns the median of xs, reordering it.
func median(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	slices.Sort(xs)
	return xs[len(xs)/2]
}

// chunk returns how many calls of about per take 20 µs.
func chunk(per time.Duration) int { return max(1, int(20*time.Microsecond/max(per, 1))) }

// timeOne estimates the time of one call of f.
func timeOne(f func() error) time.Duration {
	start := time.Now()
	n := 0
	for time.Since(start) < time.Millisecond {
		f()
		n++
	}
	return time.Since(start) / time.Duration(n)
}

// benchSink keeps hand-written results alive.
var benchSink float64

// ForwardVsGo compares t.Forward with the hand-written f at x.
func ForwardVsGo(b B, t *tape.Tape, f func([]float64) float64, x []float64) {
	tape := func() error { return t.Forward(x) }
	hand := func() error { benchSink += f(x); return nil }
	Pair(b, chunk(timeOne(tape)), 1, "tape", "go", tape, hand)
	b.ReportMetric(float64(t.Bytes())/float64(t.Len()), "B/node")
}

// BatchVsGo compares t.ForwardColumns over the n samples xs with a loop
// calling f on each sample; the times reported are per sample. The tape
// reads the samples column by column (input j of every sample together),
// the Go loop row by row, each in the layout it works best with.
func BatchVsGo(b B, t *tape.Tape, f func([]float64) float64, xs []float64, n int) {
	out := make([]float64, n)
	k := len(xs) / n
	cols := Columns(xs, n)
	tape := func() error { return t.ForwardColumns(out, cols, n, 0) }
	hand := func() error {
		for s := range out {
			out[s] = f(xs[s*k : (s+1)*k])
		}
		return nil
	}
	Pair(b, chunk(timeOne(tape)), float64(n), "tape", "go", tape, hand)
}

// GradientVsForward compares t.Gradient with t.Forward at x.
func GradientVsForward(b B, t *tape.Tape, x []float64) {
	g := make([]float64, t.NumInputs())
	grad := func() error { _, err := t.Gradient(g, x, 0); return err }
	fwd := func() error { return t.Forward(x) }
	Pair(b, chunk(timeOne(grad)), 1, "gradient", "forward", grad, fwd)
	b.ReportMetric(float64(t.Bytes())/float64(t.Len()), "B/node")
}

// Columns returns the n samples of xs (row-major) column by column.
func Columns(xs []float64, n int) [][]float64 {
	k := len(xs) / n
	cols := make([][]float64, k)
	for j := range cols {
		cols[j] = make([]float64, n)
		for s := range cols[j] {
			cols[j][s] = xs[s*k+j]
		}
	}
	return cols
}

// GradientBatch measures t.GradientBatch per sample.
func GradientBatch(b B, t *tape.Tape, xs []float64, n int) {
	b.ReportAllocs()
	out := make([]float64, n)
	g := make([]float64, n*t.NumInputs())
	if err := t.GradientBatch(out, g, xs, n, 0); err != nil {
		b.Fatal(err)
	}
	calls := 0
	for b.Loop() {
		if err := t.GradientBatch(out, g, xs, n, 0); err != nil {
			b.Fatal(err)
		}
		calls++
	}
	b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(calls*n), "ns/sample")
}

// ReverseVsFD times t.Gradient and reports its speed-up over one
// run of gonum's fd.Gradient (central differences: 2 evaluations per
// input, plus one).
func ReverseVsFD(b B, t *tape.Tape, x []float64) {
	fdTime, _ := fdGradientTime(t, x)
	g := make([]float64, len(x))
	b.ReportAllocs()
	calls := 0
	for b.Loop() {
		if _, err := t.Gradient(g, x, 0); err != nil {
			b.Fatal(err)
		}
		calls++
	}
	per := b.Elapsed().Seconds() / float64(calls)
	b.ReportMetric(fdTime.Seconds()*1e3, "fd-ms")
	b.ReportMetric(per*1e3, "reverse-ms")
	b.ReportMetric(fdTime.Seconds()/per, "speedup")
}

// fdGradientTime times one gonum fd.Gradient (central differences, so
// 2 evaluations per input) of output 0 through t.Forward.
func fdGradientTime(t *tape.Tape, x []float64) (time.Duration, []float64) {
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

// BatchN is the batch size of the batched benchmarks.
const BatchN = 4096

// Sizes of the generated models: nodes and inputs.
var Sizes = []struct {
	Name          string
	Nodes, Inputs int
}{
	{"1e3 nodes", 1_000, 100},
	{"1e5 nodes", 100_000, 10_000},
	{"1e6 nodes", 1_000_000, 100_000},
}
