package sens

import (
	"cmp"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"sync"

	"github.com/nudge-dev/nudge/sens/unit"
)

// DriverInput is one input's local effect on an output at the baseline.
type DriverInput struct {
	Name        string  `json:"name"`
	Value       float64 `json:"value"`
	Unit        string  `json:"unit"`
	Partial     float64 `json:"partial"`
	PartialUnit string  `json:"partial_unit"`
	// Elasticity is NaN where it is undefined (the output is 0 at the
	// baseline), which JSON writes as null.
	Elasticity float64 `json:"elasticity"`
	// Share is this input's part of the sum of |elasticity| (0..1), for bars.
	Share float64 `json:"share"`
}

// DriversResult is the result of the drivers analysis.
type DriversResult struct {
	Kind   string        `json:"kind"` // "drivers"
	Output string        `json:"output"`
	Value  float64       `json:"value"`
	Unit   string        `json:"unit"`
	Inputs []DriverInput `json:"inputs"`
	// Steps lists the first step-shaped operations on the output's path,
	// whose derivative is zero ("file:line:col", at most StepsShown), and
	// StepLines counts the lines that hold one.
	Steps     []string `json:"steps,omitempty"`
	StepLines int      `json:"step_lines,omitempty"`

	lineItems // subtotals of a model with vector inputs (drivers_vec.go)
}

// DriversSettings are the settings of Drivers. A nil *DriversSettings means
// the defaults. Drivers takes one gradient, so it reports no progress.
type DriversSettings struct {
	Settings
	// Top keeps the Top inputs of largest |elasticity|; 0 keeps all of a
	// model without vector inputs, and DefaultVectorTop of one with them.
	Top int
	// GroupBy names the column whose values group the elements of vector
	// inputs over a table in the subtotals ("category" or
	// "parts.category"); "" takes the table's first text column after the
	// key.
	GroupBy string
}

// Drivers returns the value of the output at the baseline, its partial
// derivative with respect to every input (one reverse pass), and the
// elasticities
//
//	e_i = ∂y/∂x_i · x_i / y
//
// ranked by |e_i| descending, ties by name. An elasticity is the percentage
// change of the output per percent change of the input; when y = 0 it is
// undefined and reported as NaN (null in JSON, "n/a" in tables), and the
// ranking falls back to |∂y/∂x_i · x_i|. The product and quotient are formed
// without an intermediate overflow (mulDiv), so an input near 1e154 with an
// output near 1e308 still gets its elasticity.
func Drivers(p *Problem, s *DriversSettings) (*DriversResult, error) {
	if s == nil {
		s = &DriversSettings{}
	}
	if err := s.ctx().Err(); err != nil {
		return nil, fmt.Errorf("stopped: %w", err)
	}
	x := p.Baseline()
	g := make([]float64, len(x))
	y, err := p.F.Gradient(g, x)
	if err != nil {
		return nil, err
	}
	d := &DriversResult{Kind: "drivers", Output: p.Output, Value: y, Unit: p.Unit}
	// Rank by index, then describe only the inputs kept: a model of
	// 100,000 elements keeps 30.
	// key ranks the inputs: |e_i|, or |∂y/∂x_i · x_i| where y = 0; its sum
	// gives the shares (the shares of |∂y/∂x_i · x_i| are the same either
	// way, and |e_i| overflows less).
	div := math.Abs(y)
	if y == 0 {
		div = 1
	}
	key := make([]float64, len(p.Inputs))
	var sum float64
	for i, in := range p.Inputs {
		key[i] = math.Abs(mulDiv(g[i], in.Value, div))
		sum += key[i]
	}
	if math.IsInf(sum, 0) {
		// Sum the keys scaled by the largest, then scale back: the shares
		// come out of the ratios.
		big := 0.0
		for _, k := range key {
			big = math.Max(big, k)
		}
		sum = 0
		for _, k := range key {
			sum += k / big
		}
		sum *= big
	}
	// Names are unique, so the order is total and need not be stable.
	before := func(a, b int) int {
		if c := cmp.Compare(key[b], key[a]); c != 0 {
			return c
		}
		return strings.Compare(p.Inputs[a].Name, p.Inputs[b].Name)
	}
	top := s.Top
	if top == 0 && p.hasVectors() {
		top = DefaultVectorTop
	}
	kept := topInputs(len(key), top, before)
	partialUnits := map[string]string{}
	for _, i := range kept {
		in := p.Inputs[i]
		pu, ok := partialUnits[in.Unit]
		if !ok {
			pu = PartialUnit(p.Unit, in.Unit, in)
			partialUnits[in.Unit] = pu
		}
		di := DriverInput{Name: in.Name, Value: in.Value, Unit: in.Unit, Partial: g[i], PartialUnit: pu}
		di.Elasticity = math.NaN()
		if y != 0 {
			di.Elasticity = mulDiv(g[i], in.Value, y)
		}
		if sum > 0 {
			di.Share = key[i] / sum
		}
		d.Inputs = append(d.Inputs, di)
	}
	if err := d.subtotals(p, s, g, y, div, sum, kept); err != nil {
		return nil, err
	}
	if y == 0 {
		// Elasticities are undefined at an output of 0: the subtotals'
		// sums of them too.
		if d.Rest != nil {
			d.Rest.Elasticity, d.Rest.MaxElasticity = math.NaN(), math.NaN()
		}
		for _, ts := range [][]DriverSubtotal{d.Columns, d.Groups} {
			for i := range ts {
				ts[i].Elasticity = math.NaN()
			}
		}
	}
	d.Steps, d.StepLines = p.StepSummary()
	return d, nil
}

// MarshalJSON writes an undefined elasticity (NaN) as null.
func (d DriverInput) MarshalJSON() ([]byte, error) {
	v := struct {
		Name        string   `json:"name"`
		Value       float64  `json:"value"`
		Unit        string   `json:"unit"`
		Partial     float64  `json:"partial"`
		PartialUnit string   `json:"partial_unit"`
		Elasticity  *float64 `json:"elasticity"`
		Share       float64  `json:"share"`
	}{d.Name, d.Value, d.Unit, d.Partial, d.PartialUnit, orNull(d.Elasticity), d.Share}
	return json.Marshal(v)
}

// MarshalJSON writes an undefined elasticity (NaN) as null.
func (t DriverSubtotal) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Name       string   `json:"name"`
		Count      int      `json:"count"`
		Elasticity *float64 `json:"elasticity"`
		Effect     float64  `json:"effect"`
		Share      float64  `json:"share"`
	}{t.Name, t.Count, orNull(t.Elasticity), t.Effect, t.Share})
}

// MarshalJSON writes an undefined elasticity (NaN) as null.
func (r DriverRest) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Count         int      `json:"count"`
		MaxElasticity *float64 `json:"max_elasticity"`
		Elasticity    *float64 `json:"elasticity"`
	}{r.Count, orNull(r.MaxElasticity), orNull(r.Elasticity)})
}

// orNull returns nil for NaN, which JSON writes as null, else &v.
func orNull(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}

// mulDiv returns a·b/c without overflowing or underflowing in between: the
// product is formed on the numbers' fractions and their binary exponents
// added apart, so only a result beyond the float64 range is ±Inf or 0.
func mulDiv(a, b, c float64) float64 {
	if q := a * b; !math.IsInf(q, 0) && (q != 0 || a == 0 || b == 0) {
		if r := q / c; !math.IsInf(r, 0) && (r != 0 || q == 0) {
			return r
		}
	}
	fa, ea := math.Frexp(a)
	fb, eb := math.Frexp(b)
	fc, ec := math.Frexp(c)
	return math.Ldexp(fa*fb/fc, ea+eb-ec)
}

// PartialUnit returns the unit of ∂out/∂in, in the output's display unit per
// the input's own unit, simplified when that changes nothing ("kg" for $ per
// $/kg; "$/h" for $ per h).
func PartialUnit(out, inUnit string, in *Input) string {
	if in != nil && in.u != nil && in.u.Factor != 0 && !in.u.Dim.IsDimensionless() {
		if s, ok := simplifyPartial(out, in); ok {
			return s
		}
	}
	switch {
	case inUnit == "":
		return out
	case out == "":
		return "1/" + wrapUnit(inUnit)
	}
	return out + "/" + wrapUnit(inUnit)
}

func wrapUnit(u string) string {
	for _, r := range u {
		if r == '/' || r == '*' || r == '·' || r == ' ' {
			return "(" + u + ")"
		}
	}
	return u
}

// simplifyPartial names the unit of ∂out/∂in by the simplest unit of its
// dimension when that unit has the same scale (so the number is unchanged).
func simplifyPartial(out string, in *Input) (string, bool) {
	ou := unit.One()
	if out != "" {
		u, err := unit.Parse(out)
		if err != nil {
			return "", false
		}
		ou = u.In(in.u.Rates())
	}
	// The same choice as a formula's display unit: $ per ($/h) is h.
	u := combinedUnit(&ou, in.u, false)
	if u == nil {
		return "", false
	}
	text := unitText(*u)
	if len(text) > len(out+"/"+wrapUnit(in.Unit)) {
		return "", false
	}
	return text, true
}

var (
	namedOnce  sync.Once
	namedUnits []unit.Unit
)

// namedUnit finds a single unit symbol with the dimension and scale of q.
func namedUnit(q unit.Unit) (string, bool) {
	namedOnce.Do(func() {
		for _, s := range unit.Symbols() {
			if u, err := unit.Parse(s); err == nil {
				namedUnits = append(namedUnits, u)
			}
		}
	})
	best := ""
	for _, u := range namedUnits {
		if u.Dim.Equal(q.Dim) && math.Abs(u.Factor-q.Factor) <= 1e-12*math.Abs(q.Factor) {
			if s := u.String(); best == "" || len(s) < len(best) {
				best = s
			}
		}
	}
	return best, best != ""
}
