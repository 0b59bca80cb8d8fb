package sens

import (
	"errors"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// The shop model of the kernel's tests, by hand: total = units·(mass·steel
// + hours·rate) + tooling = 1000·(10.8 + 90) + 50,000 = 150,800.
const shop = `
input units   = 1000                 (800..1300)
input mass    = 12 [kg]              (-5%..+8%)
input hours   = 1.5 [h]              (±20%)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input tooling = 50000 [$]
input spare   = 3
unit_cost = mass * steel + hours * rate
total     = units * unit_cost + tooling  [$]
`

func TestBreakevenMessageUnits(t *testing.T) {
	// total never falls to -$5: it is at least $50,000 (units = 0) over
	// units = 0..2000 and reaches 50,000 + 2000·100.8 = $251,600 (by hand).
	// Numbers in the message carry their units.
	b, err := Breakeven(problemOf(t, shop, "total"), &BreakevenSettings{Input: "units", Target: -5, Bounded: true, Low: 0, High: 2000})
	if err != nil {
		t.Fatal(err)
	}
	want := "total never reaches -$5 over units = 0..2,000: it ranges from $50,000 (at units = 0) to $251,600 (at units = 2,000)"
	if !strings.HasPrefix(b.Message, want) {
		t.Errorf("message %q, want it to start %q", b.Message, want)
	}
	// The whole domain of steel: total = 1000·(12·steel + 90) + 50,000
	// reaches 160,000 at steel = 20/12 $/kg (by hand); the curve for the
	// chart runs over the stated range and takes in that crossing.
	b, err = Breakeven(problemOf(t, shop, "total"), &BreakevenSettings{Input: "steel", Target: 160000})
	if err != nil {
		t.Fatal(err)
	}
	if b.Value == nil || !scalar.EqualWithinAbsOrRel(*b.Value, 20.0/12, 1e-12, 1e-12) || b.SlopeUnit != "kg" {
		t.Fatalf("value %v, slope unit %q", b.Value, b.SlopeUnit)
	}
	if n := len(b.Curve); n != curvePoints || b.Curve[0].X > b.Low || b.Curve[n-1].X < *b.Value {
		t.Errorf("curve of %d points over %v..%v", n, b.Curve[0].X, b.Curve[n-1].X)
	}
	for _, p := range b.Curve {
		if want := 1000*(12*p.X+90) + 50000; !scalar.EqualWithinAbsOrRel(p.Output, want, 1e-9, 1e-12) {
			t.Fatalf("curve point %+v, want output %v", p, want)
		}
	}
}

func TestTornadoShown(t *testing.T) {
	r, err := Tornado(problemOf(t, shop, "total"), &TornadoSettings{Top: 4})
	if err != nil {
		t.Fatal(err)
	}
	all, err := Tornado(problemOf(t, shop, "total"), nil)
	if err != nil {
		t.Fatal(err)
	}
	// Showing 2 of the 4 bars sums up the other 2 and the 2 of Rest: the
	// same summary as a result cut at 2.
	bars, rest := r.Shown(2)
	cut, err := Tornado(problemOf(t, shop, "total"), &TornadoSettings{Top: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(bars) != 2 || *rest != *cut.Rest || rest.Count != 4 {
		t.Errorf("shown %d bars, rest %+v, want %+v", len(bars), rest, cut.Rest)
	}
	if bars, rest := all.Shown(30); len(bars) != 6 || rest != nil {
		t.Errorf("all shown: %d bars, rest %+v", len(bars), rest)
	}
}

func TestDriversTop(t *testing.T) {
	d, err := Drivers(problemOf(t, shop, "total"), &DriversSettings{Top: 2})
	if err != nil {
		t.Fatal(err)
	}
	// Elasticities by hand: units 100,800/150,800 = 0.668; hours and rate
	// 90,000/150,800 = 0.597 each (ties by name: hours first).
	if len(d.Inputs) != 2 || d.Inputs[0].Name != "units" || d.Inputs[1].Name != "hours" {
		t.Errorf("top 2: %+v", d.Inputs)
	}
}

func TestProblemInput(t *testing.T) {
	p := problemOf(t, shop, "total")
	for _, tc := range []struct{ name, err string }{
		{"rate", ""},
		{"rat", "undefined input rat (did you mean rate?)"},
		{"unit_cost", "unit_cost is a formula, not an input: vary one of the inputs it uses"},
		{"spare", "total does not depend on spare: vary one of the inputs it uses"},
	} {
		in, i, err := p.Input(tc.name)
		switch {
		case tc.err == "" && (err != nil || in.Name != tc.name || p.Inputs[i] != in):
			t.Errorf("Input(%s) = %v, %d, %v", tc.name, in, i, err)
		case tc.err != "" && (err == nil || err.Error() != tc.err):
			t.Errorf("Input(%s): error %v, want %q", tc.name, err, tc.err)
		}
	}
	if _, err := compileSrc(t, shop).Problem("totl"); err == nil || err.Error() != "undefined: totl (did you mean total?)" {
		t.Errorf("Problem(totl): %v", err)
	}
	if _, err := compileSrc(t, shop).Problem("rate"); err == nil || !strings.Contains(err.Error(), "rate is an input") {
		t.Errorf("Problem(rate): %v", err)
	}
}

func TestValue(t *testing.T) {
	prog := compileSrc(t, shop)
	for _, tc := range []struct {
		name, unit string
		value      float64
	}{{"total", "$", 150800}, {"rate", "$/h", 60}, {"unit_cost", "$", 100.8}} {
		v, err := prog.Value(tc.name)
		if err != nil || v.Kind != "value" || v.Unit != tc.unit || !scalar.EqualWithinAbsOrRel(v.Value, tc.value, 1e-12, 1e-12) {
			t.Errorf("Value(%s) = %+v, %v", tc.name, v, err)
		}
	}
}

// scenario parses one scenario command.
func scenario(t *testing.T, src string) (*syntax.File, *syntax.CommandStmt) {
	t.Helper()
	f, stmts, err := syntax.Parse("cell", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	return f, stmts[0].(*syntax.CommandStmt)
}

func TestDefineScenario(t *testing.T) {
	m, err := LoadModel("shop", []byte(shop))
	if err != nil {
		t.Fatal(err)
	}
	res, err := m.DefineScenario(scenario(t, "scenario lean: hours = 72 [min], rate = 55"))
	if err != nil {
		t.Fatal(err)
	}
	// 72 min is 1.2 h.
	if res.Replaced || len(res.Settings) != 2 || !scalar.EqualWithinAbsOrRel(res.Settings[0].Value, 1.2, 1e-12, 1e-12) || res.Settings[0].Baseline != 1.5 {
		t.Errorf("lean: %+v", res)
	}
	if res, _ := m.DefineScenario(scenario(t, "scenario lean: hours = 1")); res == nil || !res.Replaced {
		t.Errorf("redefined: %+v", res)
	}
	for _, tc := range []struct{ src, want string }{
		{"scenario base: hours = 1", "cell:1:10: base is the baseline"},
		{"scenario s: hours = 1, hours = 2", "cell:1:24: hours is set twice in scenario s"},
		{"scenario s: hour = 1", "cell:1:13: undefined input hour (did you mean hours?)"},
		{"scenario s: total = 1", "cell:1:13: total is a formula: a scenario sets inputs only"},
		{"scenario s: hours = 1 [kg]", "cell:1:23: the scenario value of hours is in [kg]"},
	} {
		_, err := m.DefineScenario(scenario(t, tc.src))
		var el syntax.ErrorList
		if !errors.As(err, &el) || !strings.HasPrefix(el[0].Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.src, err, tc.want)
		}
	}

	// Before the model compiles (a formula to come uses an undefined name),
	// only the names are checked.
	m2 := NewModel()
	f, stmts, _ := syntax.Parse("cell", []byte("input a = 1\nb = a * c\n"))
	for _, s := range stmts {
		m2.Define(f, s)
	}
	if _, err := m2.DefineScenario(scenario(t, "scenario s: a = 2")); err != nil {
		t.Errorf("scenario of a model that does not compile yet: %v", err)
	}
	if _, err := m2.DefineScenario(scenario(t, "scenario s: aa = 2")); err == nil || !strings.Contains(err.Error(), "undefined input aa (did you mean a?)") {
		t.Errorf("undefined input before compiling: %v", err)
	}

	// Scenarios by name, as compare lists them.
	f, c := scenario(t, "compare total across base, lean, lan")
	if _, err := m.Scenarios(f, c.Names); err == nil || !strings.Contains(err.Error(), "1:34: undefined scenario lan (did you mean lean?)") {
		t.Errorf("undefined scenario: %v", err)
	}
	f, c = scenario(t, "compare total across lean, lean")
	if _, err := m.Scenarios(f, c.Names); err == nil || !strings.Contains(err.Error(), "1:28: lean is listed twice") {
		t.Errorf("listed twice: %v", err)
	}
	f, c = scenario(t, "compare total across base, lean")
	if scs, err := m.Scenarios(f, c.Names); err != nil || len(scs) != 2 || scs[0] != nil || scs[1].Name != "lean" {
		t.Errorf("scenarios %v, %v", scs, err)
	}
}
