package sens

import (
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// BasisInput is one input of the basis of estimate: its value, unit, range
// and distribution, where the range came from, and where it was declared.
type BasisInput struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
	Low   float64 `json:"low"`
	High  float64 `json:"high"`
	// Source is where the range came from; RangeFrom says it in words:
	// "stated", "±% of the value", "P10–P90 of the distribution",
	// "default ±10%".
	Source    RangeSource `json:"source"`
	RangeFrom string      `json:"range_from"`
	// Range and Distribution are as written on the input's line ("" when
	// absent).
	Range        string `json:"range,omitempty"`
	Distribution string `json:"distribution,omitempty"`
	File         string `json:"file"`
	Line         int    `json:"line"`
}

// BasisConstant is a formula that uses no input: a constant of the model,
// which never varies.
type BasisConstant struct {
	Name    string  `json:"name"`
	Value   float64 `json:"value"`
	Unit    string  `json:"unit"`
	Formula string  `json:"formula"`
	File    string  `json:"file"`
	Line    int     `json:"line"`
}

// BasisResult is the basis of estimate: what every input of the model (or
// of one output) is taken to be and where that came from, the constants and
// the exchange rates.
type BasisResult struct {
	Kind      string          `json:"kind"` // "basis"
	Output    string          `json:"output,omitempty"`
	Inputs    []BasisInput    `json:"inputs"`
	Constants []BasisConstant `json:"constants"`
	Rates     []*ExchangeRate `json:"rates"`
}

// RangeFrom says where a range came from, in words for a table.
func RangeFrom(s RangeSource) string {
	switch s {
	case RangeExplicit:
		return "stated"
	case RangePercent:
		return "±% of the value"
	case RangeDistribution:
		return "P10–P90 of the distribution"
	case RangeDefault:
		return fmt.Sprintf("default ±%d%%", DefaultRangePct)
	}
	return string(s)
}

// Basis returns the basis of estimate of the compiled program prog of m:
// every input in the order declared and every constant, or, when output is
// not nil, those output uses (through its formulas).
func (m *Model) Basis(prog *Program, output syntax.Expr) (*BasisResult, error) {
	res := &BasisResult{Kind: "basis", Inputs: []BasisInput{}, Constants: []BasisConstant{}, Rates: prog.Rates}
	if res.Rates == nil {
		res.Rates = []*ExchangeRate{}
	}
	var used map[string]bool
	if output != nil {
		res.Output = syntax.String(output)
		used = m.uses(output)
	}
	for _, in := range prog.Inputs {
		if used != nil && !used[in.Name] {
			continue
		}
		b := BasisInput{Name: in.Name, Value: in.Value, Unit: in.Unit, Low: in.Low, High: in.High, Source: in.Source,
			RangeFrom: RangeFrom(in.Source), File: in.Pos.Filename, Line: in.Pos.Line}
		if d := m.decls[in.Name]; d != nil && d.Input != nil {
			if r := d.Input.Range; r != nil {
				b.Range = rangeText(r)
			}
			if ds := d.Input.Dist; ds != nil {
				args := make([]string, len(ds.Args))
				for i, a := range ds.Args {
					args[i] = syntax.String(a)
				}
				b.Distribution = ds.Name.Name + "(" + strings.Join(args, ", ") + ")"
			}
		}
		res.Inputs = append(res.Inputs, b)
	}
	x := prog.Baseline()
	konst := prog.constants()
	for i, f := range prog.Formulas {
		if !konst[i] || used != nil && !used[f.Name] || m.decls[f.Name] == nil {
			continue
		}
		fn, err := prog.Fn(f.Name)
		if err != nil {
			return nil, err
		}
		v, err := fn.Eval(x)
		if err != nil {
			return nil, err
		}
		pos := f.Pos()
		res.Constants = append(res.Constants, BasisConstant{Name: f.Name, Value: v, Unit: f.Unit, Formula: f.Text(), File: pos.Filename, Line: pos.Line})
	}
	return res, nil
}

// rangeText writes a range as the model language does.
func rangeText(r *syntax.RangeSpec) string {
	if r.Symmetric {
		return "(±" + strings.TrimPrefix(r.High.Lit, "+") + ")"
	}
	return "(" + r.Low.Lit + ".." + r.High.Lit + ")"
}

// uses returns the names x refers to, directly or through formulas. It
// keeps its own list of formulas to visit: a chain of 100,000 formulas
// costs no recursion.
func (m *Model) uses(x syntax.Expr) map[string]bool {
	seen := map[string]bool{}
	todo := []syntax.Expr{x}
	for len(todo) > 0 {
		x := todo[len(todo)-1]
		todo = todo[:len(todo)-1]
		syntax.Walk(x, func(e syntax.Expr) bool {
			id, ok := e.(*syntax.Ident)
			if !ok || seen[id.Name] {
				return true
			}
			seen[id.Name] = true
			if d := m.decls[id.Name]; d != nil && d.Formula != nil {
				todo = append(todo, d.Formula.Value)
			}
			return true
		})
	}
	return seen
}

// constants reports, for each formula, whether it depends on no input,
// with one pass over the program's tape (tape.Constant) for the formulas
// on it.
func (p *Program) constants() []bool {
	var onTape []bool
	out := make([]bool, len(p.Formulas))
	for i, f := range p.Formulas {
		if f.tape != nil {
			out[i] = len(p.Deps(f)) == 0
			continue
		}
		if onTape == nil {
			onTape = p.tape.Constant()
		}
		out[i] = onTape[f.out]
	}
	return out
}
