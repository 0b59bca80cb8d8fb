package sens

import (
	"encoding/json"
	"fmt"
	"math"
	"runtime"
	"strings"
	"testing"
)

func screenRun(t testing.TB, p *Problem, s *ScreenSettings) *ScreenResult {
	return must[*ScreenResult](t)(Screen(p, s))
}

func screenInput(r *ScreenResult, name string) ScreenInput {
	return named(r.Inputs, func(x ScreenInput) string { return x.Name }, name)
}

// TestScreenLinear: for y = Σ b_i x_i the measure is ν_i = b_i² exactly, and
// the bound C_i b_i² / V equals ST_i = b_i² var_i / V for a normal input
// (C = σ², Lamboni et al. 2013) and is 12/π² times it for a uniform one
// (C = (b-a)²/π², var = (b-a)²/12; Sobol' & Kucherenko 2009). V is the
// sample variance, within a few percent of the exact one at n = 4000.
func TestScreenLinear(t *testing.T) {
	p := problemOf(t, `
input a = 10 ~ normal(10, 2)
input b = 5 ~ uniform(2, 8)
input c = 1 (0..2)
y = 3*a - 2*b + 5*c
`, "y")
	r := screenRun(t, p, &ScreenSettings{N: 4000, Seed: 1})
	v := 9*4 + 4*36/12.0 + 25*4/12.0
	for _, tc := range []struct {
		name  string
		b, vr float64
		ratio float64
	}{{"a", 3, 4, 1}, {"b", -2, 3, 12 / (math.Pi * math.Pi)}, {"c", 5, 4.0 / 12, 12 / (math.Pi * math.Pi)}} {
		x := screenInput(r, tc.name)
		if math.Abs(x.DGSM-tc.b*tc.b) > 1e-9*tc.b*tc.b {
			t.Errorf("ν_%s = %v, want %v", tc.name, x.DGSM, tc.b*tc.b)
		}
		st := tc.b * tc.b * tc.vr / v
		if got := x.Scaled / st; math.Abs(got-tc.ratio) > 0.08*tc.ratio {
			t.Errorf("%s: bound %v / ST %v = %v, want %v", tc.name, x.Scaled, st, got, tc.ratio)
		}
	}
	if math.Abs(r.Variance-v)/v > 0.08 {
		t.Errorf("variance %v, want %v", r.Variance, v)
	}
	if r.Inputs[0].Name != "a" {
		t.Errorf("order %v", r.Inputs)
	}
}

// TestScreenIshigami compares the measures on the Ishigami function with
// their closed forms (derived here from f, x_i uniform on [-π, π]):
//
//	ν_1 = E[cos² x1] E[(1 + b x3⁴)²] = (1 + 2bπ⁴/5 + b²π⁸/9) / 2
//	ν_2 = E[(2a sin x2 cos x2)²] = a²/2
//	ν_3 = E[(4b x3³ sin x1)²] = 8b²π⁶/7
//
// and checks that each bound lies above the analytic total index.
func TestScreenIshigami(t *testing.T) {
	a, b, pi := 7.0, 0.1, math.Pi
	r := screenRun(t, problemOf(t, ishigamiModel, "y"), &ScreenSettings{N: 40000, Seed: 3})
	want := map[string]float64{
		"x1": (1 + 2*b*math.Pow(pi, 4)/5 + b*b*math.Pow(pi, 8)/9) / 2,
		"x2": a * a / 2,
		"x3": 8 * b * b * math.Pow(pi, 6) / 7,
	}
	total := map[string]float64{"x1": 0.5576, "x2": 0.4424, "x3": 0.2437} // Ishigami & Homma 1990
	for name, w := range want {
		x := screenInput(r, name)
		if math.Abs(x.DGSM-w)/w > 0.05 {
			t.Errorf("ν_%s = %v, closed form %v", name, x.DGSM, w)
		}
		if !(x.TotalOrderBound >= total[name]) {
			t.Errorf("bound on ST_%s = %v is below the true %v", name, x.TotalOrderBound, total[name])
		}
	}
}

// TestScreenGFunction: the bound holds on the G-function too (ST from the
// closed form of Saltelli et al. 2008).
func TestScreenGFunction(t *testing.T) {
	as := []float64{0, 1, 4.5, 9, 99, 99, 99, 99}
	var src strings.Builder
	var terms []string
	vi := make([]float64, len(as))
	prod := 1.0
	for i, a := range as {
		fmt.Fprintf(&src, "input x%d = 0.3 ~ uniform(0, 1)\n", i+1)
		terms = append(terms, fmt.Sprintf("(abs(4*x%d - 2) + %g) / (1 + %g)", i+1, a, a))
		vi[i] = 1 / (3 * (1 + a) * (1 + a))
		prod *= 1 + vi[i]
	}
	src.WriteString("g = " + strings.Join(terms, " * ") + "\n")
	r := screenRun(t, problemOf(t, src.String(), "g"), &ScreenSettings{N: 20000, Seed: 5})
	for i := range as {
		st := vi[i] * prod / (1 + vi[i]) / (prod - 1)
		x := screenInput(r, fmt.Sprintf("x%d", i+1))
		if !(x.TotalOrderBound >= st) {
			t.Errorf("x%d: bound %v below ST %v", i+1, x.TotalOrderBound, st)
		}
	}
	if r.Inputs[0].Name != "x1" || r.Inputs[1].Name != "x2" {
		t.Errorf("order %v", r.Inputs)
	}
}

// TestScreenLognormal: a lognormal input is measured in z = ln x. For
// y = b x alone, ST = 1 and the bound σ_z² E[x²]/var(x) =
// ln(1 + s²/m²)(m² + s²)/s² must not fall below it.
func TestScreenLognormal(t *testing.T) {
	r := screenRun(t, problemOf(t, "input x = 1000 ~ lognormal(1000, 250)\ny = 3 * x\n", "y"), &ScreenSettings{N: 20000, Seed: 2})
	want := math.Log1p(0.0625) * (1 + 0.0625) / 0.0625
	if x := r.Inputs[0]; math.Abs(x.Scaled-want)/want > 0.05 || x.TotalOrderBound != 1 {
		t.Errorf("scaled %v, want %v; bound %v", x.Scaled, want, x.TotalOrderBound)
	}
}

func TestScreenSameAnyWorkers(t *testing.T) {
	p := problemOf(t, ishigamiModel, "y")
	run := func(procs int, seed uint64) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		b, err := json.Marshal(screenRun(t, p, &ScreenSettings{N: 3000, Seed: seed}))
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	if one, two := run(1, 5), run(2, 5); one != two {
		t.Errorf("GOMAXPROCS 1 and 2 differ:\n%s\n%s", one, two)
	} else if run(2, 6) == one {
		t.Error("seeds 5 and 6 gave the same result")
	}
	if _, err := Screen(p, &ScreenSettings{N: 1}); err == nil {
		t.Error("n = 1: no error")
	}
}
