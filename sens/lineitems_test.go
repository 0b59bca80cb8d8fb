package sens

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tapebench"
	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// The line-item tests price an invented bid (tapebench.BidCSV) with the
// model below and check every roll-up against the same sums computed here
// from the file read by encoding/csv alone and plain Go loops.

const lineItemModel = `table bid = "bid.csv" key item
input qty      = bid.qty (±5%)
input hours    = bid.hours (bid.hours_low..bid.hours_high)
input steel    = 1.35 [$/kg] (1.2..1.6)
input rate     = 95 [$/h] (85..110)
input overhead = 0.12 (0.08..0.15)
material  = qty * bid.mass * bid.steel_factor * steel
labour    = qty * hours * rate
bought    = qty * bid.buyout
line_cost = material + labour + bought
direct    = sum(line_cost)
total     = direct * (1 + overhead)
labour_total = sum(labour)
fasteners = sum(where(line_cost, bid.category == "fasteners"))
not_paint = sum(where(line_cost, bid.category != "paint"))
by_cat    = subtotal(line_cost, bid.category)
beams     = by_cat[beam]
avg_hours = mean(hours)
most      = max(line_cost)
least     = min(line_cost)
n_bolts   = count(bid.category == "fasteners")
steel_kg  = dot(qty, bid.mass)
`

// bidLine is one line of the bid as read here, independently of sens.
type bidLine struct {
	item, cat                        string
	qty, mass, buyout, hours, factor float64
}

// readBid reads a BidCSV file with encoding/csv and strconv only.
func readBid(t testing.TB, data []byte) []bidLine {
	t.Helper()
	recs, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	f := func(s string) float64 {
		x, err := strconv.ParseFloat(strings.ReplaceAll(s, ",", ""), 64)
		if err != nil {
			t.Fatal(err)
		}
		return x
	}
	var out []bidLine
	for _, r := range recs[1:] {
		out = append(out, bidLine{item: r[0], cat: r[1], qty: f(r[3]), mass: f(r[4]), buyout: f(r[5]), hours: f(r[6]), factor: f(r[9])})
	}
	return out
}

// loadBid writes the bid of n lines and the model into a directory and
// loads the model from there (the table's path is relative to the model
// file).
func loadBid(t testing.TB, n int, model string) (*Program, []bidLine) {
	t.Helper()
	dir := t.TempDir()
	data := tapebench.BidCSV(n, 1)
	if err := os.WriteFile(filepath.Join(dir, "bid.csv"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := LoadModel(filepath.Join(dir, "bid.nudge"), []byte(model))
	if err != nil {
		t.Fatal(err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	if err := p.Check(); err != nil {
		t.Fatal(err)
	}
	return p, readBid(t, data)
}

func value(t testing.TB, p *Program, name string) float64 {
	t.Helper()
	v, err := p.Value(name)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return v.Value
}

const steel, rate, overhead = 1.35, 95.0, 0.12

func lineCost(l bidLine) float64 {
	return l.qty*l.mass*l.factor*steel + l.qty*l.hours*rate + l.qty*l.buyout
}

func TestLineItemRollups(t *testing.T) {
	p, lines := loadBid(t, tapebench.BidDemoLines, lineItemModel)
	var direct, labour, fasteners, notPaint, hours, kg float64
	most, least := math.Inf(-1), math.Inf(1)
	byCat := map[string]float64{}
	bolts := 0
	for _, l := range lines {
		c := lineCost(l)
		direct += c
		labour += l.qty * l.hours * rate
		if l.cat == "fasteners" {
			fasteners += c
			bolts++
		}
		if l.cat != "paint" {
			notPaint += c
		}
		byCat[l.cat] += c
		hours += l.hours
		kg += l.qty * l.mass
		most, least = math.Max(most, c), math.Min(least, c)
	}
	for _, tc := range []struct {
		name string
		want float64
	}{
		{"direct", direct},
		{"total", direct * (1 + overhead)},
		{"labour_total", labour},
		{"fasteners", fasteners},
		{"not_paint", notPaint},
		{"beams", byCat["beam"]},
		{"avg_hours", hours / float64(len(lines))},
		{"most", most},
		{"least", least},
		{"n_bolts", float64(bolts)},
		{"steel_kg", kg},
	} {
		if got := value(t, p, tc.name); !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-9, 1e-12) {
			t.Errorf("%s = %.12g, want %.12g", tc.name, got, tc.want)
		}
	}
	// A vector formula's value: every line, and the groups in the order
	// their values first appear.
	v, err := p.VectorValue("line_cost")
	if err != nil || v.Count != len(lines) || v.Noun != "row" || v.Over != "bid" {
		t.Fatalf("line_cost: %+v %v", v, err)
	}
	for i, l := range lines {
		if v.Keys[i] != l.item || !scalar.EqualWithinAbsOrRel(v.Values[i], lineCost(l), 1e-9, 1e-12) {
			t.Fatalf("line_cost[%s] = %v, want %v (key %s)", l.item, v.Values[i], lineCost(l), v.Keys[i])
		}
	}
	g, err := p.VectorValue("by_cat")
	if err != nil {
		t.Fatal(err)
	}
	var order []string
	for _, c := range tapebench.BidCategories {
		order = append(order, c.Name)
	}
	if !slices.Equal(g.Keys, order) || g.Noun != "group" {
		t.Errorf("groups %v, want %v", g.Keys, order)
	}
	for i, k := range g.Keys {
		if !scalar.EqualWithinAbsOrRel(g.Values[i], byCat[k], 1e-9, 1e-12) {
			t.Errorf("by_cat[%s] = %v, want %v", k, g.Values[i], byCat[k])
		}
	}
	// Elements are inputs of their own, named by key.
	in, _ := p.Lookup("qty[" + lines[7].item + "]")
	if in == nil || in.Value != lines[7].qty || in.Vector != "qty" || in.Key != lines[7].item || in.Low != 0.95*lines[7].qty {
		t.Errorf("qty[%s] = %+v", lines[7].item, in)
	}
}

// Per-line partial derivatives of a roll-up are the other factors of the
// line (calculus, common practice), and a roll-up homogeneous of degree k
// in some inputs has elasticities in them that sum to k (Euler's theorem
// for homogeneous functions).
func TestLineItemPartialsAndEuler(t *testing.T) {
	p, lines := loadBid(t, tapebench.BidDemoLines, lineItemModel)
	pr, err := p.Problem("direct")
	if err != nil {
		t.Fatal(err)
	}
	x := pr.Baseline()
	g := make([]float64, len(x))
	y, err := pr.F.Gradient(g, x)
	if err != nil {
		t.Fatal(err)
	}
	idx := map[string]int{}
	for i, in := range pr.Inputs {
		idx[in.Name] = i
	}
	var dSteel, dRate float64
	for _, l := range lines {
		// ∂direct/∂qty_i = m_i f_i steel + h_i rate + b_i; ∂/∂hours_i = q_i rate.
		want := l.mass*l.factor*steel + l.hours*rate + l.buyout
		if got := g[idx["qty["+l.item+"]"]]; !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-13) {
			t.Fatalf("∂direct/∂qty[%s] = %.15g, want %.15g", l.item, got, want)
		}
		if got := g[idx["hours["+l.item+"]"]]; !scalar.EqualWithinAbsOrRel(got, l.qty*rate, 1e-12, 1e-13) {
			t.Fatalf("∂direct/∂hours[%s] = %.15g, want %.15g", l.item, got, l.qty*rate)
		}
		dSteel += l.qty * l.mass * l.factor
		dRate += l.qty * l.hours
	}
	if got := g[idx["steel"]]; !scalar.EqualWithinAbsOrRel(got, dSteel, 1e-9, 1e-12) {
		t.Errorf("∂direct/∂steel = %v, want %v", got, dSteel)
	}
	if got := g[idx["rate"]]; !scalar.EqualWithinAbsOrRel(got, dRate, 1e-9, 1e-12) {
		t.Errorf("∂direct/∂rate = %v, want %v", got, dRate)
	}
	// direct is homogeneous of degree 1 in the quantities: their
	// elasticities sum to 1.
	sumQ := 0.0
	for i, in := range pr.Inputs {
		if in.Vector == "qty" {
			sumQ += g[i] * x[i] / y
		}
	}
	if !scalar.EqualWithinAbsOrRel(sumQ, 1, 1e-12, 1e-12) {
		t.Errorf("Σ elasticity of direct in qty = %v, want 1", sumQ)
	}
	// labour_total = Σ q_i h_i rate is homogeneous of degree 3 in all of
	// its inputs: its elasticities sum to 3; drivers' subtotals say the
	// same, per vector input and per group.
	lp, err := p.Problem("labour_total")
	if err != nil {
		t.Fatal(err)
	}
	d, err := Drivers(lp, &DriversSettings{Top: 5})
	if err != nil {
		t.Fatal(err)
	}
	var sumAll, sumGroups float64
	for _, c := range d.Columns {
		sumAll += c.Elasticity
		if !scalar.EqualWithinAbsOrRel(c.Elasticity, 1, 1e-12, 1e-12) || c.Count != len(lines) {
			t.Errorf("subtotal of %s: %+v, want Σ elasticity 1 over %d", c.Name, c, len(lines))
		}
	}
	for _, in := range d.Inputs {
		if in.Name == "rate" {
			sumAll += in.Elasticity
		}
	}
	if !scalar.EqualWithinAbsOrRel(sumAll, 3, 1e-12, 1e-12) {
		t.Errorf("Σ elasticities of labour_total = %v, want 3", sumAll)
	}
	if d.GroupBy != "bid.category" || len(d.Groups) != len(tapebench.BidCategories) {
		t.Fatalf("groups by %s: %d", d.GroupBy, len(d.Groups))
	}
	for _, gr := range d.Groups {
		sumGroups += gr.Elasticity
	}
	if !scalar.EqualWithinAbsOrRel(sumGroups, 2, 1e-12, 1e-12) {
		t.Errorf("Σ elasticities over the groups (qty and hours) = %v, want 2", sumGroups)
	}
	if len(d.Inputs) != 5 || d.Rest == nil || d.Rest.Count != len(lp.Inputs)-5 {
		t.Errorf("top 5: %d inputs, rest %+v of %d", len(d.Inputs), d.Rest, len(lp.Inputs))
	}
	// The default keeps 30 of a model with vector inputs.
	if d, _ := Drivers(lp, nil); len(d.Inputs) != DefaultVectorTop {
		t.Errorf("default top: %d inputs", len(d.Inputs))
	}
}

// Reverse mode against gonum central differences on a vector model.
func TestLineItemGradientFD(t *testing.T) {
	p, _ := loadBid(t, 40, lineItemModel)
	for _, out := range []string{"total", "fasteners", "most", "avg_hours", "beams"} {
		pr, err := p.Problem(out)
		if err != nil {
			t.Fatal(err)
		}
		x := pr.Baseline()
		g := make([]float64, len(x))
		if _, err := pr.F.Gradient(g, x); err != nil {
			t.Fatal(err)
		}
		f := func(x []float64) float64 { y, _ := pr.F.Eval(x); return y }
		// The roll-ups are linear or piecewise linear in each input, so central
		// differences with a step of 1e-4 are exact but for rounding.
		want := fd.Gradient(nil, f, x, &fd.Settings{Formula: fd.Central, Step: 1e-4})
		for i := range g {
			if !scalar.EqualWithinAbsOrRel(g[i], want[i], 1e-5, 1e-6) {
				t.Errorf("%s: ∂/∂%s = %v, fd %v", out, pr.Inputs[i].Name, g[i], want[i])
			}
		}
	}
}

// The model compiled with loop nodes and compiled from scalar operations
// gives the same values and gradients to the bit.
func TestLineItemLoopsAgree(t *testing.T) {
	p1, _ := loadBid(t, 120, lineItemModel)
	loopMin = math.MaxInt
	p2, _ := loadBid(t, 120, lineItemModel)
	loopMin = 0
	if p1.TapeLen() >= p2.TapeLen() {
		t.Errorf("tapes of %d and %d slots", p1.TapeLen(), p2.TapeLen())
	}
	for _, f := range p1.Formulas {
		pr1, err1 := p1.Problem(f.Name)
		pr2, err2 := p2.Problem(f.Name)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		x := pr1.Baseline()
		g1, g2 := make([]float64, len(x)), make([]float64, len(x))
		y1, err1 := pr1.F.Gradient(g1, x)
		y2, err2 := pr2.F.Gradient(g2, x)
		if err1 != nil || err2 != nil || math.Float64bits(y1) != math.Float64bits(y2) || !slices.Equal(g1, g2) {
			t.Errorf("%s: loops %v (%v), scalar %v (%v)", f.Name, y1, err1, y2, err2)
		}
	}
}

// A life-cycle cash flow over periods: upkeep escalating at g a period,
// discounted at i, has the present worth of a geometric series,
//
//	P = A (1 - ((1+g)/(1+i))^N) / (i - g),
//
// and its partial in the upkeep of period t is (1+g)^(t-1) (1+i)^-t (sum of
// a geometric series; common practice in engineering economy).
func TestLineItemPeriods(t *testing.T) {
	const src = `periods year = 1..30
input upkeep[year] = 4000 [$] (±25%)
input esc  = 0.025 (0.01..0.04)
input i    = 0.06 (0.04..0.08)
flow = upkeep * growth(esc, year - 1)
pv   = sum(flow * discount(i, year))
`
	m, err := LoadModel("lc.nudge", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	const A, g, i, N = 4000.0, 0.025, 0.06, 30
	want := A * (1 - math.Pow((1+g)/(1+i), N)) / (i - g)
	pr, err := p.Problem("pv")
	if err != nil {
		t.Fatal(err)
	}
	x := pr.Baseline()
	grad := make([]float64, len(x))
	y, err := pr.F.Gradient(grad, x)
	if err != nil || !scalar.EqualWithinAbsOrRel(y, want, 1e-9, 1e-12) {
		t.Fatalf("pv = %v (%v), want %v", y, err, want)
	}
	for t0 := 1; t0 <= N; t0++ {
		j := slices.IndexFunc(pr.Inputs, func(in *Input) bool { return in.Name == "upkeep["+strconv.Itoa(t0)+"]" })
		w := math.Pow(1+g, float64(t0-1)) * math.Pow(1+i, -float64(t0))
		if j < 0 || !scalar.EqualWithinAbsOrRel(grad[j], w, 1e-14, 1e-12) {
			t.Errorf("∂pv/∂upkeep[%d] = %v, want %v", t0, grad[j], w)
		}
	}
	v, err := p.VectorValue("flow")
	if err != nil || v.Count != N || v.Noun != "period" || v.Keys[29] != "30" || !scalar.EqualWithinAbsOrRel(v.Values[29], A*math.Pow(1+g, 29), 1e-9, 1e-12) {
		t.Errorf("flow: %+v %v", v, err)
	}
}

// An element of a vector formula is analysed as a formula of its own.
func TestLineItemElementOutput(t *testing.T) {
	p, lines := loadBid(t, 30, lineItemModel)
	l := lines[3]
	pr, err := p.Problem("line_cost[" + l.item + "]")
	if err != nil {
		t.Fatal(err)
	}
	d, err := Drivers(pr, nil)
	if err != nil || !scalar.EqualWithinAbsOrRel(d.Value, lineCost(l), 1e-9, 1e-12) {
		t.Fatalf("drivers of line_cost[%s]: %v %v, want %v", l.item, d.Value, err, lineCost(l))
	}
	var names []string
	for _, in := range pr.Inputs {
		names = append(names, in.Name)
	}
	slices.Sort(names)
	if want := []string{"hours[" + l.item + "]", "qty[" + l.item + "]", "rate", "steel"}; !slices.Equal(names, want) && !slices.Equal(names, want[:3]) {
		t.Errorf("line_cost[%s] depends on %v", l.item, names)
	}
	if _, err := p.Problem("line_cost"); err == nil || !strings.Contains(err.Error(), "line_cost is a vector of 30 rows") {
		t.Errorf("analysing a vector: %v", err)
	}
}

// The demo notebook's table is the invented bid the tests price, byte for
// byte.
func TestDemoTableIsTheGenerated(t *testing.T) {
	got, err := os.ReadFile("../notebooks/steel_bid.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, tapebench.BidCSV(tapebench.BidDemoLines, 1)) {
		t.Error("notebooks/steel_bid.csv differs from tapebench.BidCSV(BidDemoLines, 1): regenerate it")
	}
}

// TestPointwiseAgreesWithRows checks that the one-at-a-time analyses of a
// model of vectors (whose loop nodes have no cones) give the same results,
// to the last bit, whether the batcher evaluates their points one at a
// time through Eval or as rows through EvalBatch: tornado and spider of a
// roll-up, a maximum and a grouped subtotal.
func TestPointwiseAgreesWithRows(t *testing.T) {
	p, _ := loadBid(t, 150, lineItemModel)
	defer func(d int) { pointwiseDim = d }(pointwiseDim)
	for _, out := range []string{"total", "most", "beams"} {
		pr, err := p.Problem(out)
		if err != nil {
			t.Fatal(err)
		}
		run := func(dim int) string {
			pointwiseDim = dim
			tor, err := Tornado(pr, nil)
			if err != nil {
				t.Fatal(err)
			}
			sp, err := Spider(pr, nil)
			if err != nil {
				t.Fatal(err)
			}
			return string(must[[]byte](t)(json.Marshal(tor))) + string(must[[]byte](t)(json.Marshal(sp)))
		}
		if rows, points := run(math.MaxInt), run(0); rows != points {
			t.Errorf("%s: rows and points differ", out)
		}
	}
}

// TestPointwiseErrorsAgree checks that a point that fails reports the same
// error, formula, column and input values included, whether the batcher
// evaluates the points one at a time or as rows: sqrt(k) at the low end of
// k's range (-1..2), and a total that overflows in its display unit (mg)
// at the high end of m's range.
func TestPointwiseErrorsAgree(t *testing.T) {
	for _, c := range []struct{ model, want string }{
		{`table bid = "bid.csv" key item
input qty = bid.qty (±5%)
input k   = 1 (-1..2)
total = sum(qty) * sqrt(k)
`, "square root of a negative number"},
		{`table bid = "bid.csv" key item
input qty = bid.qty (±5%)
input m   = 1e290 [kg] (1e289..1e300)
total = sum(qty) * m [mg]
`, "overflows when written in mg"},
	} {
		p, _ := loadBid(t, 40, c.model)
		pr, err := p.Problem("total")
		if err != nil {
			t.Fatal(err)
		}
		defer func(d int) { pointwiseDim = d }(pointwiseDim)
		run := func(dim int) string {
			pointwiseDim = dim
			_, err := Tornado(pr, nil)
			if err == nil {
				t.Fatalf("tornado did not fail: want %q", c.want)
			}
			return err.Error()
		}
		rows, points := run(math.MaxInt), run(0)
		if rows != points || !strings.Contains(points, c.want) {
			t.Errorf("rows: %s\npoints: %s", rows, points)
		}
	}
}

// TestMissingElementSuggestsKeys: an element that does not exist is named
// with its vector, and the nearest key when one is close (a dropped digit),
// else the keys' first and last; a number key gets the range, not a guess.
func TestMissingElementSuggestsKeys(t *testing.T) {
	p, _ := loadBid(t, 5, "table bid = \"bid.csv\" key item\ninput hours = bid.hours (±10%)\ntotal = sum(hours)\n")
	keys := p.Vector("hours").Keys
	typo := strings.Replace(keys[2], "-0", "-", 1) // BM-0003 → BM-003
	prob, err := p.Problem("total")
	if err != nil {
		t.Fatal(err)
	}
	_, _, err = prob.Input("hours[" + typo + "]")
	if want := "undefined input hours[" + typo + "]: hours has no row " + typo + " (did you mean hours[" + keys[2] + "]?)"; err == nil || err.Error() != want {
		t.Errorf("typo: %v, want %q", err, want)
	}
	_, _, err = prob.Input("hours[ZZ-1]")
	if want := "undefined input hours[ZZ-1]: hours has no row ZZ-1 (its 5 keys run from " + keys[0] + " to " + keys[4] + ")"; err == nil || err.Error() != want {
		t.Errorf("far: %v, want %q", err, want)
	}
	m, err := LoadModel("test", []byte("periods year = 1..5\ninput hours[year] = 10 [h] (8..12)\ntotal = sum(hours) * (50 [$/h])\nscenario s: hours[7] = 9 [h]\n"))
	if err == nil { // loading checks the scenarios; else the compile does
		_, err = m.Compile()
	}
	if want := "hours has no period 7 (its 5 keys run from 1 to 5)"; err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("period: %v, want %q", err, want)
	}
}
