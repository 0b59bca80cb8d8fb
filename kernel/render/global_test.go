package render

import (
	"fmt"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens"
)

func TestSimulation(t *testing.T) {
	// y = 2a with a ~ normal(10, 1): the output is normal(20, 2) (by hand),
	// and P(y > 21) = P(Z > 0.5) = 30.85% (standard normal table).
	pr := problem(t, "input a = 10 [$] ~ normal(10, 1)\ninput b = 1 [$] (0..2)\ny = 2*a + 0*b\n", "y")
	above := 21.0
	s, err := sens.Simulate(pr, &sens.SimulationSettings{N: 2000, Seed: 3, Above: &above})
	if err != nil {
		t.Fatal(err)
	}
	r := Simulation(s, noCharts)
	head := []string{"statistic", "y", "input", "rank correlation with y", "inputs"}
	doc := parseHTML(t, r.HTML())
	if strings.Join(doc.head[:4], "|") != strings.Join(head[:4], "|") {
		t.Errorf("header %q", doc.head)
	}
	checkDoc(t, r, doc.head, 12+2)
	if !strings.HasPrefix(r.Text(), "simulation of y: 2,000 samples (seed 3)\n") {
		t.Errorf("text begins %q", r.Text()[:40])
	}
	if got := cell(t, doc, "mean"); !strings.HasPrefix(got[1], "$19.9") && !strings.HasPrefix(got[1], "$20.0") {
		t.Errorf("mean row %q, want about $20", got)
	}
	// Within three standard errors, √(0.31·0.69/2000) = 1.03%.
	got := cell(t, doc, "P(y > $21)")
	var p, se float64
	if _, err := fmt.Sscanf(got[1], "%f%% ± %f%%", &p, &se); err != nil || p < 30.85-3*1.03 || p > 30.85+3*1.03 || se < 1.0 || se > 1.06 {
		t.Errorf("exceedance row %q", got)
	}
	if got := cell(t, doc, "a"); got[1] != "+1.000" && !strings.HasPrefix(got[1], "+0.99") {
		t.Errorf("a's rank correlation %q, want about +1 (y rises with a alone)", got)
	}
	if !strings.Contains(strings.Join(doc.notes, "\n"), "b has a range but no distribution: sampled uniformly over the range.") {
		t.Errorf("notes %q", doc.notes)
	}
	if !strings.HasPrefix(string(r.JSON()), `{"kind":"simulation"`) {
		t.Errorf("JSON %s", r.JSON())
	}

	// Failures are counted and the first shown.
	pr = problem(t, "input x = 1 ~ uniform(-1, 3)\ny = sqrt(x)\n", "y")
	if s, err = sens.Simulate(pr, &sens.SimulationSettings{N: 400, Seed: 1}); err != nil {
		t.Fatal(err)
	}
	r = Simulation(s, noCharts)
	if !strings.Contains(r.Text(), "could not be evaluated") || !strings.Contains(r.Text(), "square root of a negative number") {
		t.Errorf("failures not shown:\n%s", r.Text())
	}
}

func TestSobolRender(t *testing.T) {
	pr := problem(t, "input a = 0 ~ uniform(-1, 1)\ninput b = 0 ~ uniform(-1, 1)\ny = 3*a + b\n", "y")
	s, err := sens.Sobol(pr, &sens.SobolSettings{N: 512, Seed: 2})
	if err != nil {
		t.Fatal(err)
	}
	r := Sobol(s, noCharts)
	doc := checkDoc(t, r, []string{"input", "first order", "interval", "total order", "interval"}, 2,
		"Sobol' indices of y: n = 512 (2,048 evaluations)", "95% bootstrap intervals from 500 resamples")
	// S_a = 9/10, S_b = 1/10 (linear model, uniform inputs of equal variance).
	if a := cell(t, doc, "a"); a[1] != "0.900" && a[1] != "0.899" && a[1] != "0.901" {
		t.Errorf("a row %q", a)
	}
	if !strings.Contains(strings.Join(doc.notes, "\n"), "the output is close to additive in its inputs") {
		t.Errorf("notes %q", doc.notes)
	}
	if index3(-0.0004) != "0.000" && index3(-0.0004) != "-0.000" {
		t.Errorf("index3(-0.0004) = %q", index3(-0.0004))
	}
	us := []sens.UnsettledPair{{Inputs: [2]string{"a", "b"}, SettleN: 4096}, {Inputs: [2]string{"c", "d"}, SettleN: 0}}
	want := "the order of a and b is not settled (their 95% intervals of the total-order index overlap): n=4,096 would settle it; " +
		"c and d are too close to order at any practical n: their total-order indices may be equal"
	if got := Unsettled(us, 0.95); got != want {
		t.Errorf("Unsettled:\n got %s\nwant %s", got, want)
	}
}

func TestMorrisRender(t *testing.T) {
	// y = 3x - 2z [$] over x in 0..4, z in 1..2: mu* = |b| × range, 12 and
	// 2, sigma 0 (Morris 1991, by construction).
	pr := problem(t, "input x = 1 (0..4)\ninput z = 1.5 (1..2)\ny = (3*x - 2*z) * (1 [$])\n", "y")
	m, err := sens.Morris(pr, &sens.MorrisSettings{R: 5, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	r := Morris(m, noCharts)
	doc := checkDoc(t, r, []string{"input", "range", "mu", "mu*", "sigma"}, 2, "elementary effects on y: 5 trajectories on a grid of 4 levels (15 evaluations)")
	if got := strings.Join(cell(t, doc, "x"), "|"); got != "x|0 .. 4|$12|$12|$0" {
		t.Errorf("x row %q", got)
	}
	if got := strings.Join(cell(t, doc, "z"), "|"); got != "z|1 .. 2|-$2|$2|$0" {
		t.Errorf("z row %q", got)
	}
}

func TestScreeningRender(t *testing.T) {
	// y = 3a + b, a ~ normal(0, 1), b ~ normal(0, 1): ν_a = 9, ν_b = 1 exactly;
	// the bounds are the total indices, 0.9 and 0.1, up to the sample variance.
	pr := problem(t, "input a = 0 ~ normal(0, 1)\ninput b = 0 ~ normal(0, 1)\ny = 3*a + b\n", "y")
	s, err := sens.Screen(pr, &sens.ScreenSettings{N: 500, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	r := Screening(s, noCharts)
	doc := checkDoc(t, r, []string{"input", "mean squared derivative", "bound on total-order index"}, 2, "screening of y: 500 samples")
	if a := cell(t, doc, "a"); a[1] != "9" || !strings.HasPrefix(a[2], "≤ 0.") {
		t.Errorf("a row %q", a)
	}
}

// TestSamplingTextWraps: the sampling analyses' headings and notes wrap at
// the text width as every other result's do (README: headings, notes and
// text charts wrap at words to it); aligned tables keep their own width.
func TestSamplingTextWraps(t *testing.T) {
	pr := problem(t, "input a = 10 [$] (8..12)\ninput b = 3 (2..5)\ny = a * b\n", "y")
	const w = 40
	o := &Options{NoCharts: true, Width: w}
	sim, err := sens.Simulate(pr, &sens.SimulationSettings{N: 200, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	sob, err := sens.Sobol(pr, &sens.SobolSettings{N: 64, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	mor, err := sens.Morris(pr, &sens.MorrisSettings{R: 4, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	scr, err := sens.Screen(pr, &sens.ScreenSettings{N: 20, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range []*Result{Simulation(sim, o), Sobol(sob, o), Morris(mor, o), Screening(scr, o)} {
		for _, line := range strings.Split(r.Text(), "\n") {
			if strings.ContainsAny(line, "│─") || strings.Contains(line, "  ") {
				continue // a table's rows and rules
			}
			if n := len([]rune(line)); n > w {
				t.Errorf("%s: a line of %d runes at width %d: %q", r.Kind, n, w, line)
			}
		}
	}
}

// TestScenarioTextWraps: a scenario of many settings wraps at the width.
func TestScenarioTextWraps(t *testing.T) {
	s := &sens.ScenarioResult{Kind: "scenario", Name: "lean"}
	for i := range 8 {
		s.Settings = append(s.Settings, sens.ScenarioSetting{Name: fmt.Sprintf("input_%d", i), Unit: "$", Value: 12, Baseline: 10})
	}
	text := Scenario(s, &Options{Width: 50}).Text()
	for _, line := range strings.Split(strings.TrimRight(text, "\n"), "\n") {
		if n := len([]rune(line)); n > 50 {
			t.Errorf("a line of %d runes at width 50: %q", n, line)
		}
	}
	if !strings.Contains(strings.Join(strings.Fields(text), " "), "input_7 = $12 (baseline $10)") {
		t.Errorf("text:\n%s", text)
	}
}
