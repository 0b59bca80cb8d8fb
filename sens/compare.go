package sens

import (
	"errors"
	"fmt"
	"math"
)

// BaseName is the name of the baseline among scenarios.
const BaseName = "base"

// ScenarioSetting is one input a scenario sets: its value under the scenario
// and its baseline, in the input's unit.
type ScenarioSetting struct {
	Name     string  `json:"name"`
	Unit     string  `json:"unit"`
	Value    float64 `json:"value"`
	Baseline float64 `json:"baseline"`
}

// ScenarioValue is the output under one scenario.
type ScenarioValue struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	// Delta is Value minus the baseline output; DeltaPct is Delta as a
	// percentage of |baseline output| (absent when that is 0).
	Delta    float64  `json:"delta"`
	DeltaPct *float64 `json:"delta_pct,omitempty"`
	// Changes are the inputs of the output that the scenario moves from
	// their baselines.
	Changes []ScenarioSetting `json:"changes"`
}

// CompareResult is the result of comparing scenarios.
type CompareResult struct {
	Kind      string          `json:"kind"` // "compare"
	Output    string          `json:"output"`
	Unit      string          `json:"unit"`
	Baseline  float64         `json:"baseline"`
	Scenarios []ScenarioValue `json:"scenarios"`
}

// CompareSettings are the settings of Compare. A nil *CompareSettings means
// the baseline alone.
type CompareSettings struct {
	Settings
	// Scenarios are compared in the order given. A nil scenario, or one
	// named BaseName, is the baseline, which may be listed anywhere or not
	// at all.
	Scenarios []*Scenario
}

// Compare evaluates the output under each scenario, in one batch, and
// reports each value against the baseline output:
//
//	delta     = f(x_scenario) - f(x0)
//	delta_pct = 100 · delta / |f(x0)|
//
// A scenario's settings are read by the program the problem was built from
// (Program.ScenarioValues), so errors name the line and column of a bad
// setting.
func Compare(p *Problem, s *CompareSettings) (*CompareResult, error) {
	if s == nil {
		s = &CompareSettings{}
	}
	scenarios := s.Scenarios
	if len(scenarios) == 0 {
		scenarios = []*Scenario{nil}
	}
	x0 := p.Baseline()
	k := len(x0)
	xs := make([]float64, 0, (len(scenarios)+1)*k)
	xs = append(xs, x0...)
	sets := make([][]float64, len(scenarios)) // nil for the baseline
	for j, sc := range scenarios {
		x, err := p.scenarioValues(sc)
		if err != nil {
			return nil, err
		}
		sets[j] = x
		if x == nil {
			x = x0
		}
		xs = append(xs, x...)
	}
	n := len(scenarios) + 1
	if err := s.ctx().Err(); err != nil {
		return nil, fmt.Errorf("stopped: %w", err)
	}
	y := make([]float64, n)
	if err := p.F.EvalBatch(y, xs, n); err != nil {
		return nil, err
	}
	s.progress(n, n)
	res := &CompareResult{Kind: "compare", Output: p.Output, Unit: p.Unit, Baseline: y[0]}
	for j, sc := range scenarios {
		name := BaseName
		if sc != nil {
			name = sc.Name
		}
		row := ScenarioValue{Name: name, Value: y[j+1], Delta: y[j+1] - y[0], Changes: []ScenarioSetting{}}
		if y[0] != 0 {
			pct := 100 * row.Delta / math.Abs(y[0])
			row.DeltaPct = &pct
		}
		for i, in := range p.Inputs {
			if x := sets[j]; x != nil && x[i] != x0[i] {
				row.Changes = append(row.Changes, ScenarioSetting{Name: in.Name, Unit: in.Unit, Value: x[i], Baseline: x0[i]})
			}
		}
		res.Scenarios = append(res.Scenarios, row)
	}
	return res, nil
}

// scenarioValues returns the problem's inputs under the scenario, or nil for
// the baseline.
func (p *Problem) scenarioValues(sc *Scenario) ([]float64, error) {
	if sc == nil || sc.Name == BaseName {
		return nil, nil
	}
	if p.prog == nil {
		return nil, errors.New("scenario " + sc.Name + ": the problem was not built by a Program, which reads the settings")
	}
	all, err := p.prog.ScenarioValues(sc)
	if err != nil {
		return nil, err
	}
	return p.Project(all), nil
}
