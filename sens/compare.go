package sens

import (
	"fmt"
	"math"
)

// BaseName is the name of the baseline case in comparisons.
const BaseName = "base"

// Case is a named set of input values to compare: a scenario, or the baseline
// (X nil).
type Case struct {
	Name string
	X    []float64 // nil means the baseline
}

// CompareSetting is one input a case changes from its baseline.
type CompareSetting struct {
	Name     string  `json:"name"`
	Unit     string  `json:"unit"`
	Value    float64 `json:"value"`
	Baseline float64 `json:"baseline"`
}

// CompareRow is the output under one case.
type CompareRow struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	// Delta is Value minus the baseline output; DeltaPct is Delta as a
	// percentage of |baseline output| (absent when that is 0).
	Delta    float64          `json:"delta"`
	DeltaPct *float64         `json:"delta_pct,omitempty"`
	Changes  []CompareSetting `json:"changes"`
}

// CompareResult is the result of comparing cases.
type CompareResult struct {
	Kind      string       `json:"kind"` // "compare"
	Output    string       `json:"output"`
	Unit      string       `json:"unit"`
	Baseline  float64      `json:"baseline"`
	Scenarios []CompareRow `json:"scenarios"`
}

// Compare evaluates the output under each case, in the order given, in one
// batch, and reports each value against the baseline output:
//
//	delta     = f(x_case) - f(x0)
//	delta_pct = 100 · delta / |f(x0)|
//
// The baseline may be listed anywhere among the cases, or not at all.
func Compare(p *Problem, cases []Case, s *Settings) (*CompareResult, error) {
	x0 := p.Baseline()
	k := len(x0)
	xs := make([]float64, 0, (len(cases)+1)*k)
	xs = append(xs, x0...)
	for _, c := range cases {
		x := c.X
		if x == nil {
			x = x0
		}
		if len(x) != k {
			return nil, fmt.Errorf("case %s has %d input values, want %d", c.Name, len(x), k)
		}
		xs = append(xs, x...)
	}
	n := len(cases) + 1
	if err := s.ctx().Err(); err != nil {
		return nil, fmt.Errorf("stopped: %w", err)
	}
	y := make([]float64, n)
	if err := p.F.EvalBatch(y, xs, n); err != nil {
		return nil, err
	}
	s.progress(n, n)
	res := &CompareResult{Kind: "compare", Output: p.Output, Unit: p.Unit, Baseline: y[0]}
	for j, c := range cases {
		row := CompareRow{Name: c.Name, Value: y[j+1], Delta: y[j+1] - y[0], Changes: []CompareSetting{}}
		if y[0] != 0 {
			pct := 100 * row.Delta / math.Abs(y[0])
			row.DeltaPct = &pct
		}
		for i, in := range p.Inputs {
			if c.X != nil && c.X[i] != x0[i] {
				row.Changes = append(row.Changes, CompareSetting{Name: in.Name, Unit: in.Unit, Value: c.X[i], Baseline: x0[i]})
			}
		}
		res.Scenarios = append(res.Scenarios, row)
	}
	return res, nil
}
