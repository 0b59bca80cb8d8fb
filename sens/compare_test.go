package sens

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestCompare(t *testing.T) {
	src := `
input hours = 1.5 [h] (±20%)
input rate = 60 [$/h]
input units = 1000
cost = units * hours * rate
scenario lean: hours = 72 [min], rate = 55
scenario rush: units = 1500
`
	m, err := LoadModel("test", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	p, err := prog.Problem("cost")
	if err != nil {
		t.Fatal(err)
	}
	var scenarios []*Scenario
	for _, name := range []string{"lean", BaseName, "rush"} {
		scenarios = append(scenarios, m.Scenario(name)) // nil for the baseline
	}
	r, err := Compare(p, &CompareSettings{Scenarios: scenarios})
	if err != nil {
		t.Fatal(err)
	}
	// By hand: base 1000·1.5·60 = 90,000; lean 1000·1.2·55 = 66,000
	// (72 min = 1.2 h); rush 1500·1.5·60 = 135,000.
	want := []struct {
		name         string
		value, delta float64
		pct          float64
		changes      int
	}{
		{"lean", 66000, -24000, -24000.0 / 90000 * 100, 2},
		{"base", 90000, 0, 0, 0},
		{"rush", 135000, 45000, 50, 1},
	}
	if r.Baseline != 90000 || len(r.Scenarios) != 3 {
		t.Fatalf("result %+v", r)
	}
	for j, w := range want {
		g := r.Scenarios[j]
		if g.Name != w.name || !scalar.EqualWithinAbsOrRel(g.Value, w.value, 1e-9, 1e-12) ||
			!scalar.EqualWithinAbsOrRel(g.Delta, w.delta, 1e-9, 1e-12) || g.DeltaPct == nil ||
			!scalar.EqualWithinAbsOrRel(*g.DeltaPct, w.pct, 1e-9, 1e-12) || len(g.Changes) != w.changes {
			t.Errorf("row %d = %+v, want %+v", j, g, w)
		}
	}
	if c := r.Scenarios[0].Changes[0]; c.Name != "hours" || !scalar.EqualWithinAbsOrRel(c.Value, 1.2, 1e-12, 1e-12) || c.Baseline != 1.5 || c.Unit != "h" {
		t.Errorf("lean change %+v, want hours 1.5 -> 1.2 h", c)
	}
	// A problem built by hand has no program to read a scenario's settings.
	byHand := &Problem{Output: "cost", F: p.F, Inputs: p.Inputs}
	if _, err := Compare(byHand, &CompareSettings{Scenarios: scenarios}); err == nil {
		t.Error("a scenario of a problem built by hand: no error")
	}
}
