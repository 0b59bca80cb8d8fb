package sens

import (
	"encoding/json"
	"fmt"
	"math"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func morrisRun(t testing.TB, p *Problem, s *MorrisSettings) *MorrisResult {
	return must[*MorrisResult](t)(Morris(p, s))
}

// TestMorrisLinear: for a linear model every elementary effect is the
// coefficient times the range, so mu = b·range, mu* = |b|·range and
// sigma = 0 exactly (Morris 1991, by construction), whatever the
// distributions that set the ranges.
func TestMorrisLinear(t *testing.T) {
	p := problemOf(t, `
input a = 10 (8..14)
input b = 5 (±20%)
input c = 1 ~ normal(1, 0.5)
y = 3*a - 2*b + 5*c
`, "y")
	r := morrisRun(t, p, &MorrisSettings{R: 10, Seed: 2})
	in := map[string]*Input{}
	for _, x := range p.Inputs {
		in[x.Name] = x
	}
	coef := map[string]float64{"a": 3, "b": -2, "c": 5}
	for _, e := range r.Inputs {
		rng := in[e.Name].High - in[e.Name].Low
		want := coef[e.Name] * rng
		if !scalar.EqualWithinAbsOrRel(e.Mu, want, 1e-9, 1e-9) || !scalar.EqualWithinAbsOrRel(e.MuStar, math.Abs(want), 1e-9, 1e-9) || e.Sigma != 0 {
			t.Errorf("%s: mu %v mu* %v sigma %v, want mu %v", e.Name, e.Mu, e.MuStar, e.Sigma, want)
		}
	}
	if r.Evaluations != 10*4 || r.Delta != 4.0/6 {
		t.Errorf("evaluations %d delta %v", r.Evaluations, r.Delta)
	}
}

// TestMorrisGFunction: on Sobol's G-function the importance of x_i falls as
// a_i grows, and mu* ranks the inputs in the order of a = (0, 1, 4.5, 9, 99,
// ...) (Campolongo et al. 2007 screen this function); the a = 99 inputs
// have mu* near zero next to x1's.
func TestMorrisGFunction(t *testing.T) {
	as := []float64{0, 1, 4.5, 9, 99, 99, 99, 99}
	var src strings.Builder
	var terms []string
	for i, a := range as {
		fmt.Fprintf(&src, "input x%d = 0.5 ~ uniform(0, 1)\n", i+1)
		terms = append(terms, fmt.Sprintf("(abs(4*x%d - 2) + %g) / (1 + %g)", i+1, a, a))
	}
	src.WriteString("g = " + strings.Join(terms, " * ") + "\n")
	r := morrisRun(t, problemOf(t, src.String(), "g"), &MorrisSettings{R: 50, Seed: 4})
	for i, want := range []string{"x1", "x2", "x3", "x4"} {
		if r.Inputs[i].Name != want {
			t.Fatalf("rank %d: %s, want %s (%+v)", i+1, r.Inputs[i].Name, want, r.Inputs)
		}
	}
	if top, last := r.Inputs[0].MuStar, r.Inputs[7].MuStar; last > 0.05*top {
		t.Errorf("mu* of an a = 99 input %v is not small next to x1's %v", last, top)
	}
}

// TestMorrisIshigami: x3 acts on the Ishigami function only through its
// interaction with x1 (Ishigami & Homma 1990), so its mu is near zero
// while mu* and sigma are not.
func TestMorrisIshigami(t *testing.T) {
	r := morrisRun(t, problemOf(t, ishigamiModel, "y"), &MorrisSettings{R: 100, Seed: 9})
	for _, e := range r.Inputs {
		if e.Name == "x3" && !(math.Abs(e.Mu) < 0.5*e.MuStar && e.Sigma > e.MuStar) {
			t.Errorf("x3: mu %v mu* %v sigma %v", e.Mu, e.MuStar, e.Sigma)
		}
	}
}

func TestMorrisSameAnyWorkersAndErrors(t *testing.T) {
	p := problemOf(t, ishigamiModel, "y")
	run := func(procs int, seed uint64) string {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		b, _ := json.Marshal(morrisRun(t, p, &MorrisSettings{R: 30, Seed: seed}))
		return string(b)
	}
	if one, two := run(1, 5), run(2, 5); one != two {
		t.Errorf("GOMAXPROCS 1 and 2 differ:\n%s\n%s", one, two)
	} else if run(2, 6) == one {
		t.Error("seeds 5 and 6 gave the same result")
	}
	for _, s := range []*MorrisSettings{{R: 1}, {Levels: 3}, {Levels: -2}} {
		if _, err := Morris(p, s); err == nil {
			t.Errorf("%+v: no error", s)
		}
	}
}
