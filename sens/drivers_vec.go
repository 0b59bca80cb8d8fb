package sens

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// DefaultVectorTop is how many inputs drivers keeps, by default, of a
// model with vector inputs; the subtotals cover them all.
const DefaultVectorTop = 30

// DriverSubtotal sums the local effects of a set of elements: the elements
// of one vector input, or those of one group.
type DriverSubtotal struct {
	Name  string `json:"name"`
	Count int    `json:"count"`
	// Elasticity is the sum of the elements' elasticities: the percentage
	// change of the output when every one of them changes by 1%.
	Elasticity float64 `json:"elasticity"`
	// Effect is the sum of ∂y/∂x_i · x_i, in the output's unit: the first
	// order change of the output when every element doubles.
	Effect float64 `json:"effect"`
	// Share is the elements' part of the sum of |∂y/∂x_i · x_i| over all
	// inputs (0..1).
	Share float64 `json:"share"`
}

// DriverRest summarises the inputs that Top leaves out of a drivers
// result.
type DriverRest struct {
	Count int `json:"count"`
	// MaxElasticity is the largest |elasticity| among them, Elasticity the
	// sum of their elasticities.
	MaxElasticity float64 `json:"max_elasticity"`
	Elasticity    float64 `json:"elasticity"`
}

// lineItems is the part of a DriversResult about vector inputs.
type lineItems struct {
	// Columns sums the elements of each vector input, every element
	// counted (those Top leaves out too).
	Columns []DriverSubtotal `json:"columns,omitempty"`
	// GroupBy is the column whose values group the elements of the vector
	// inputs over its table; Groups sums them by value, one group per
	// value in the order they first appear.
	GroupBy string           `json:"group_by,omitempty"`
	Groups  []DriverSubtotal `json:"groups,omitempty"`
	// Rest summarises the inputs Top leaves out.
	Rest *DriverRest `json:"rest,omitempty"`
}

// hasVectors reports whether any input of p is an element of a vector.
func (p *Problem) hasVectors() bool {
	for _, in := range p.Inputs {
		if in.Vector != "" {
			return true
		}
	}
	return false
}

// topInputs returns the first top of n inputs (all of them when top is 0
// or more than n) in the order cmp gives, keeping only the best top while
// it looks through them: a model of 100,000 lines keeps 30 without sorting
// the rest.
func topInputs(n, top int, cmp func(a, b int) int) []int {
	if top <= 0 || top >= n {
		all := make([]int, n)
		for i := range all {
			all[i] = i
		}
		slices.SortFunc(all, cmp)
		return all
	}
	best := make([]int, 0, top+1)
	for i := range n {
		if len(best) == top && cmp(i, best[top-1]) >= 0 {
			continue
		}
		j, _ := slices.BinarySearchFunc(best, i, cmp)
		best = slices.Insert(best, j, i)
		if len(best) > top {
			best = best[:top]
		}
	}
	return best
}

// subtotals fills the subtotals of a drivers result from the gradient g
// at the baseline, where the output is y and sum is Σ |g_i x_i| / div; kept
// lists the inputs Top keeps.
func (d *DriversResult) subtotals(p *Problem, s *DriversSettings, g []float64, y, div, sum float64, kept []int) error {
	if len(kept) < len(p.Inputs) {
		in := make([]bool, len(p.Inputs))
		for _, i := range kept {
			in[i] = true
		}
		r := &DriverRest{Count: len(p.Inputs) - len(kept)}
		for i, k := range in {
			if !k && y != 0 {
				e := mulDiv(g[i], p.Inputs[i].Value, y)
				r.Elasticity += e
				r.MaxElasticity = math.Max(r.MaxElasticity, math.Abs(e))
			}
		}
		d.Rest = r
	}
	if !p.hasVectors() || p.prog == nil {
		if s.GroupBy != "" {
			return fmt.Errorf("group=%s: %s depends on no vector input, so there is nothing to group", s.GroupBy, p.Output)
		}
		return nil
	}
	add := func(t *DriverSubtotal, i int) {
		e := g[i] * p.Inputs[i].Value
		t.Count++
		t.Effect += e
		if y != 0 {
			t.Elasticity += e / y
		}
		if sum > 0 {
			t.Share += math.Abs(mulDiv(g[i], p.Inputs[i].Value, div)) / sum
		}
	}
	col := map[string]int{}
	last, k := "", -1 // the elements of a vector come one after another
	for i, in := range p.Inputs {
		if in.Vector == "" {
			continue
		}
		if in.Vector != last {
			var ok bool
			if k, ok = col[in.Vector]; !ok {
				k = len(d.Columns)
				col[in.Vector] = k
				d.Columns = append(d.Columns, DriverSubtotal{Name: in.Vector})
			}
			last = in.Vector
		}
		add(&d.Columns[k], i)
	}
	// Groups: by a text column of the table of the first vector input over
	// one.
	var table *Table
	for _, in := range p.Inputs {
		if v := p.prog.Vector(in.Vector); v != nil && v.Table != nil {
			table = v.Table
			break
		}
	}
	by, err := groupColumn(table, s.GroupBy)
	if err != nil || by == nil {
		return err
	}
	d.GroupBy = table.Name + "." + by.Name
	// The group of each row, in the order the values first appear among
	// the inputs.
	var gr grouper
	rowGroup := make([]int32, len(table.Keys))
	for i := range rowGroup {
		rowGroup[i] = -1
	}
	var v *Vector
	for i, in := range p.Inputs {
		if v == nil || in.Vector != v.Name {
			v = p.prog.Vector(in.Vector)
		}
		if v == nil || v.Table != table {
			continue
		}
		row := v.Row(in.elem)
		if rowGroup[row] < 0 {
			k, isNew := gr.id(by.Text[row])
			if isNew {
				d.Groups = append(d.Groups, DriverSubtotal{Name: gr.keys[k]})
			}
			rowGroup[row] = int32(k)
		}
		add(&d.Groups[rowGroup[row]], i)
	}
	return nil
}

// groupColumn returns the column of t named by (with or without the
// table's name), or, when by is "", the first text column after the key;
// nil when there is none.
func groupColumn(t *Table, by string) (*Column, error) {
	if t == nil {
		if by != "" {
			return nil, fmt.Errorf("group=%s: no vector input of the output is over a table", by)
		}
		return nil, nil
	}
	if by == "" {
		for _, c := range t.Columns {
			if c.IsText() && c.Name != t.Key {
				return c, nil
			}
		}
		return nil, nil
	}
	name := strings.TrimPrefix(by, t.Name+".")
	c := t.Column(name)
	switch {
	case c == nil:
		return nil, fmt.Errorf("group=%s: table %s has no column %s%s", by, t.Name, name, syntax.DidYouMean(name, t.ColumnNames()))
	case !c.IsText():
		return nil, fmt.Errorf("group=%s: %s.%s holds numbers; group by a text column", by, t.Name, name)
	}
	return c, nil
}
