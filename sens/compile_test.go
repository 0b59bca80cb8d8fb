package sens

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// compileSrc parses and compiles a model given as text.
func compileSrc(t testing.TB, src string) *Program {
	t.Helper()
	m, err := LoadModel("test", []byte(src))
	if err != nil {
		t.Fatalf("load: %v", err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatalf("compile: %v", err)
	}
	return p
}

func driversOf(t testing.TB, p *Program, out string) *DriversResult {
	t.Helper()
	pr, err := p.Problem(out)
	if err != nil {
		t.Fatal(err)
	}
	d, err := Drivers(pr, nil)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func find(d *DriversResult, name string) DriverInput {
	for _, x := range d.Inputs {
		if x.Name == name {
			return x
		}
	}
	return DriverInput{}
}

// The model of DESIGN.md's language section, checked by hand.
const designModel = `
input units   = 1000                 (800..1300)
input mass    = 12 [kg]              (-5%..+8%)
input hours   = 1.5 [h]              (±20%)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input tooling = 50000 [$]
unit_cost = mass * steel + hours * rate
total     = units * unit_cost + tooling  [$]
`

func TestDesignModelValuesAndUnits(t *testing.T) {
	p := compileSrc(t, designModel)
	d := driversOf(t, p, "total")
	// total = 1000 * (12*0.9 + 1.5*60) + 50000 = 150800 $ (hand arithmetic).
	if !scalar.EqualWithinAbsOrRel(d.Value, 150800, 1e-9, 1e-12) || d.Unit != "$" {
		t.Errorf("total = %v %s, want 150800 $", d.Value, d.Unit)
	}
	for _, tc := range []struct {
		name, unit string
		partial    float64
	}{
		{"steel", "kg", 12000},  // d total/d steel = units*mass = 12000 kg
		{"hours", "$/h", 60000}, // per hour, not per second: units*rate
		{"rate", "h", 1500},     // $ per ($/h) is h: units*hours
		{"units", "$", 100.8},   // unit_cost
		{"tooling", "", 1},
		{"mass", "$/kg", 900},
	} {
		x := find(d, tc.name)
		if !scalar.EqualWithinAbsOrRel(x.Partial, tc.partial, 1e-9, 1e-12) || x.PartialUnit != tc.unit {
			t.Errorf("d total/d %s = %v %q, want %v %q", tc.name, x.Partial, x.PartialUnit, tc.partial, tc.unit)
		}
	}
	// Ranges: explicit, asymmetric percentage, symmetric, distribution (P10/P90), default ±10%.
	in, _ := p.Lookup("mass")
	if !scalar.EqualWithinAbsOrRel(in.Low, 11.4, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(in.High, 12.96, 1e-12, 1e-12) || in.Source != RangePercent {
		t.Errorf("mass range %v..%v (%s)", in.Low, in.High, in.Source)
	}
	in, _ = p.Lookup("tooling")
	if in.Source != RangeDefault || !scalar.EqualWithinAbsOrRel(in.Low, 45000, 1e-9, 1e-12) {
		t.Errorf("tooling range %v..%v (%s)", in.Low, in.High, in.Source)
	}
	in, _ = p.Lookup("rate")
	// normal(60, 5): P10 = 60 - 1.2815516*5 (standard normal table, z0.90 = 1.2815516).
	if in.Source != RangeDistribution || !scalar.EqualWithinAbsOrRel(in.Low, 60-1.2815516*5, 1e-6, 1e-9) {
		t.Errorf("rate range %v..%v (%s)", in.Low, in.High, in.Source)
	}
}

func TestMixedUnitsConvert(t *testing.T) {
	// 90 minutes at 60 $/h is 90 $ (unit conversion, 1 h = 60 min).
	p := compileSrc(t, "input rate = 60 [$/h]\ninput t = 90 [min]\ncost = t * rate\nkw = 2 [kW] * 3 [h] [kWh]\n")
	fn, _ := p.Fn("cost")
	y, err := fn.Eval(p.Baseline())
	if err != nil || !scalar.EqualWithinAbsOrRel(y, 90, 1e-12, 1e-12) || fn.Formula().Unit != "$" {
		t.Errorf("cost = %v %s (%v), want 90 $", y, fn.Formula().Unit, err)
	}
	fn, _ = p.Fn("kw")
	y, _ = fn.Eval(p.Baseline())
	if !scalar.EqualWithinAbsOrRel(y, 6, 1e-12, 1e-12) {
		t.Errorf("2 kW for 3 h = %v kWh, want 6", y)
	}
}

// Elasticity facts (common practice): the elasticity of a*x^b in x is b, and
// the elasticities of a function homogeneous of degree k sum to k.
func TestElasticityFacts(t *testing.T) {
	p := compileSrc(t, "input a = 3\ninput x = 7\ny = a * x^2.5\n")
	d := driversOf(t, p, "y")
	if e := find(d, "x").Elasticity; !scalar.EqualWithinAbsOrRel(e, 2.5, 1e-12, 1e-12) {
		t.Errorf("elasticity of a*x^2.5 in x = %v, want 2.5", e)
	}
	if e := find(d, "a").Elasticity; !scalar.EqualWithinAbsOrRel(e, 1, 1e-12, 1e-12) {
		t.Errorf("elasticity in a = %v, want 1", e)
	}
	// Cobb-Douglas-like function of degree 0.3+0.5+1.2 = 2 plus a ratio of
	// degree 0 times it: f = x^0.3 y^0.5 z^1.2 * (x/y + 2) is homogeneous of degree 2.
	p = compileSrc(t, "input x = 2\ninput y = 5\ninput z = 1.7\nf = x^0.3 * y^0.5 * z^1.2 * (x / y + 2) + sqrt(x^2 * y^2) * z / y * x / z\n")
	d = driversOf(t, p, "f")
	sum := 0.0
	for _, in := range d.Inputs {
		sum += in.Elasticity
	}
	if !scalar.EqualWithinAbsOrRel(sum, 2, 1e-12, 1e-12) {
		t.Errorf("elasticities of a degree-2 homogeneous function sum to %v, want 2", sum)
	}
	// Ranking: by |elasticity| descending, ties by name.
	for i := 1; i < len(d.Inputs); i++ {
		a, b := d.Inputs[i-1], d.Inputs[i]
		if math.Abs(a.Elasticity) < math.Abs(b.Elasticity) || (a.Elasticity == b.Elasticity && a.Name > b.Name) {
			t.Errorf("ranking broken at %s, %s", a.Name, b.Name)
		}
	}
}

// TestCompiledGradientsAgainstFD checks reverse-mode gradients of randomly
// generated model texts, compiled end to end, against gonum's central
// differences (diff/fd, step scaled by max(1, |x|)).
func TestCompiledGradientsAgainstFD(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	checked := 0
	for trial := 0; trial < 300; trial++ {
		k := 2 + rng.IntN(4)
		var b strings.Builder
		names := make([]string, k)
		for i := range names {
			names[i] = string(rune('a' + i))
			b.WriteString("input " + names[i] + " = " + strconv.FormatFloat(0.5+2*rng.Float64(), 'g', 6, 64) + "\n")
		}
		b.WriteString("y = " + randExpr(rng, names, 4) + "\n")
		m, err := LoadModel("gen", []byte(b.String()))
		if err != nil {
			t.Fatalf("generated model does not parse: %v\n%s", err, b.String())
		}
		p, err := m.Compile()
		if err != nil {
			t.Fatalf("generated model does not compile: %v\n%s", err, b.String())
		}
		fn, _ := p.Fn("y")
		x := p.Baseline()
		g := make([]float64, k)
		if _, err := fn.Gradient(g, x); err != nil {
			continue // a domain error at this point: skipped, counted below
		}
		want := fd.Gradient(nil, func(x []float64) float64 { y, _ := fn.Eval(x); return y }, x, &fd.Settings{Formula: fd.Central, Step: 1e-6})
		ok := true
		for i := range g {
			if !scalar.EqualWithinAbsOrRel(g[i], want[i], 1e-5, 1e-4) {
				ok = false
			}
		}
		if !ok && !math.IsNaN(want[0]) {
			t.Errorf("model\n%sgradient %v, fd %v", b.String(), g, want)
		}
		checked++
	}
	if checked < 250 {
		t.Errorf("only %d of 300 generated models were checkable", checked)
	}
}

func randExpr(rng *rand.Rand, names []string, depth int) string {
	if depth == 0 || rng.IntN(4) == 0 {
		if rng.IntN(3) == 0 {
			return strconv.FormatFloat(0.5+rng.Float64()*3, 'g', 6, 64)
		}
		return names[rng.IntN(len(names))]
	}
	a, c := randExpr(rng, names, depth-1), randExpr(rng, names, depth-1)
	switch rng.IntN(9) {
	case 0:
		return a + " + " + c
	case 1:
		return "(" + a + ") - " + c
	case 2:
		return "(" + a + ") * (" + c + ")"
	case 3:
		return "(" + a + ") / (1 + (" + c + ")^2)"
	case 4:
		return "sqrt(1 + (" + a + ")^2)"
	case 5:
		return "exp(-(" + a + ")^2 / 10)"
	case 6:
		return "ln(2 + (" + a + ")^2)"
	case 7:
		return "max(" + a + ", " + c + ")"
	}
	return "recovery(0.05 + 0.01 * (" + a + ")^2 / (1 + (" + a + ")^2), 5 + (" + c + ")^2)"
}

func TestDomainErrorNamesFormulaAndInputs(t *testing.T) {
	p := compileSrc(t, "input r = -0.5\ninput n = 10 [yr]\nx = 3 + ln(r) * (n / 1 [yr])\n")
	err := p.Check()
	ee, ok := err.(*EvalError)
	if !ok {
		t.Fatalf("want an *EvalError, got %v", err)
	}
	if ee.Pos.Line != 3 || ee.Pos.Column != 9 || ee.Formula != "x" || !strings.Contains(ee.Error(), "r = -0.5") || !strings.Contains(ee.Error(), "n = 10 yr") {
		t.Errorf("error %q at %v", ee.Error(), ee.Pos)
	}
}

// TestDisplayUnits: a formula without a declared unit speaks the units it was
// written in (values checked by hand; 1 kWh = 3.6 MJ, 1 h = 60 min).
func TestDisplayUnits(t *testing.T) {
	p := compileSrc(t, `
input x = 3 [h]
input p = 2 [kW]
input d = 120 [km]
input r = 60 [$/h]
input t = 90 [min]
input m = 12 [kg]
sq = (x - 2 [h]) * (x - 5 [h])
e  = p * x
v  = d / x
c  = t * r
k  = m * 2
f  = m * x * 1 [m/s^2] / (1 [h])
`)
	for _, tc := range []struct {
		name, unit string
		value      float64
	}{
		{"sq", "h^2", -2}, {"e", "kWh", 6}, {"v", "km/h", 40}, {"c", "$", 90}, {"k", "kg", 24}, {"f", "N", 36},
	} {
		fn, err := p.Fn(tc.name)
		if err != nil {
			t.Fatal(err)
		}
		y, err := fn.Eval(p.Baseline())
		if err != nil || fn.Formula().Unit != tc.unit || !scalar.EqualWithinAbsOrRel(y, tc.value, 1e-12, 1e-12) {
			t.Errorf("%s = %v %s (%v), want %v %s", tc.name, y, fn.Formula().Unit, err, tc.value, tc.unit)
		}
	}
}

func TestLoadModelRejectsCommands(t *testing.T) {
	m, err := LoadModel("m", []byte("input a = 1\nb = a\nscenario s: a = 2\ndrivers b\nb + 1\n"))
	el, ok := err.(syntax.ErrorList)
	if !ok || len(el) != 2 || el[0].Pos.Line != 4 || el[1].Pos.Line != 5 {
		t.Fatalf("errors %v", err)
	}
	if m.Lookup("b") == nil || m.Scenario("s") == nil {
		t.Error("declarations and scenarios before the commands were not kept")
	}
}

// TestFormulaSource checks Formula.Text and Formula.Pos, which a program
// keeps as a span of the source where the formula is printed as written,
// against the text printed from the parsed formula (syntax.String, and the
// unit in brackets when it is the last number's) and the name's position.
func TestFormulaSource(t *testing.T) {
	src := "input a = 2 [h]\ninput r = 50 [$/h]\n" +
		"c = a * r\n" + // printed as written: a span
		"d =   a*r  +  c\n" + // printed with other spacing: a string of its own
		"fee = a * r + 3 * 12 [$]\n" + // the bracket is the last number's
		"  g = (c) [$]\n"
	p := compileSrc(t, src)
	_, stmts, err := syntax.Parse("test", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range stmts {
		fs, ok := s.(*syntax.FormulaStmt)
		if !ok {
			continue
		}
		_, f := p.Lookup(fs.Name.Name)
		want := syntax.String(fs.Value)
		if fs.Name.Name == "fee" {
			want += " [" + fs.Unit.Text + "]"
		}
		if f.Text() != want {
			t.Errorf("%s: Text %q, want %q", f.Name, f.Text(), want)
		}
		line := strings.Count(src[:strings.Index(src, fs.Name.Name+" =")], "\n") + 1
		col := strings.Index(strings.Split(src, "\n")[line-1], fs.Name.Name) + 1
		if pos := f.Pos(); pos.Filename != "test" || pos.Line != line || pos.Column != col {
			t.Errorf("%s: Pos %v, want test:%d:%d", f.Name, pos, line, col)
		}
		if span := f.text == nil; span != (f.Name != "d") {
			t.Errorf("%s: kept as a span of the source: %v", f.Name, span)
		}
	}
	if (&Formula{}).Text() != "" || (&Formula{}).Pos() != (syntax.Position{}) {
		t.Error("a formula built by hand has a text or a position")
	}
	var fm Formula // a formula of no file (CompileExpr may be given none)
	if fm.setSource(nil, 5, 1, "a + b"); fm.Text() != "a + b" || fm.Pos() != (syntax.Position{}) {
		t.Errorf("no file: Text %q, Pos %v", fm.Text(), fm.Pos())
	}
}
