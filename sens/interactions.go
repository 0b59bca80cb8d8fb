package sens

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/nudge-dev/nudge/sens/tape"
)

// InteractionPair is the mixed second partial derivative of the output in
// two inputs at the baseline, and the same scaled by both inputs' range
// widths.
type InteractionPair struct {
	A string `json:"a"`
	B string `json:"b"`
	// Mixed is ∂²y/∂a∂b, in MixedUnit (the output's unit per unit of a per
	// unit of b).
	Mixed     float64 `json:"mixed"`
	MixedUnit string  `json:"mixed_unit"`
	// Scaled is Mixed · (high_a − low_a) · (high_b − low_b), in the output's
	// unit: how much a's effect over its range changes across b's range.
	// For a function bilinear in a and b it equals the corner difference
	// y(hi, hi) − y(hi, lo) − y(lo, hi) + y(lo, lo) exactly.
	Scaled float64 `json:"scaled"`
	// Share is |Scaled| over the sum of |Scaled| of all the pairs computed
	// (0..1).
	Share float64 `json:"share"`
}

// Curvature is an input's second partial derivative at the baseline, and
// the same scaled by its range width squared.
type Curvature struct {
	Name string `json:"name"`
	// Second is ∂²y/∂x², in SecondUnit.
	Second     float64 `json:"second"`
	SecondUnit string  `json:"second_unit"`
	// Scaled is Second · (high − low)², in the output's unit: how much the
	// input's slope changes across its range, times the range.
	Scaled float64 `json:"scaled"`
}

// InteractionMap is the grid of scaled second derivatives among the inputs
// of largest interaction, for the heat map: Scaled[i][j] for Inputs i and j
// (the diagonal holds the scaled curvatures).
type InteractionMap struct {
	Inputs []string    `json:"inputs"`
	Scaled [][]float64 `json:"scaled"`
}

// InteractionsResult is the result of Interactions.
type InteractionsResult struct {
	Kind   string  `json:"kind"` // "interactions"
	Output string  `json:"output"`
	Value  float64 `json:"value"`
	Unit   string  `json:"unit"`
	// Pairs are the pairs of distinct inputs, ranked by |Scaled|
	// descending, ties by names; at most Top, and only those of nonzero
	// mixed partial unless fewer than Top are.
	Pairs []InteractionPair `json:"pairs"`
	// Curvatures are the inputs' own second derivatives, ranked the same
	// way, at most Top.
	Curvatures []Curvature `json:"curvatures"`
	// Map is the heat map's grid.
	Map InteractionMap `json:"map"`
	// Inputs is the number of inputs the output depends on; Columns the
	// number whose Hessian columns were computed (all of them up to
	// MaxColumns; beyond that, those of largest first-order swing
	// |∂y/∂x| · width, paired with every input).
	Inputs  int `json:"inputs"`
	Columns int `json:"columns"`
	// PairsNonzero counts the pairs with a nonzero mixed partial among
	// those computed; PairsZero those whose mixed partial is exactly 0 (the
	// inputs do not interact at the baseline).
	PairsNonzero int `json:"pairs_nonzero"`
	PairsZero    int `json:"pairs_zero"`
	// NotSmooth lists where the output is not twice differentiable at the
	// baseline ("file:line:col: message in formula"): there the second
	// derivatives are the one-sided ones of the branch taken.
	NotSmooth []string `json:"not_smooth,omitempty"`
	// DefaultRanges names the inputs whose width is the ±10% default.
	DefaultRanges []string `json:"default_ranges,omitempty"`
	// Steps lists step-shaped operations on the output's path (see
	// DriversResult).
	Steps     []string `json:"steps,omitempty"`
	StepLines int      `json:"step_lines,omitempty"`
}

// InteractionsSettings are the settings of Interactions. A nil
// *InteractionsSettings means the defaults.
type InteractionsSettings struct {
	Settings
	// Top is how many pairs and curvatures to keep (DefaultInteractionsTop
	// when 0).
	Top int
	// MapInputs is how many inputs the heat map shows (DefaultMapInputs
	// when 0).
	MapInputs int
	// MaxColumns bounds the Hessian columns computed, each one
	// Hessian-vector product (DefaultMaxColumns when 0).
	MaxColumns int
}

// Defaults of InteractionsSettings.
const (
	DefaultInteractionsTop = 15
	DefaultMapInputs       = 8
	DefaultMaxColumns      = 400
)

// Interactions ranks the pairs of inputs by how much they act together on
// the output at the baseline. For each pair (i, j) it takes the mixed
// partial derivative ∂²y/∂x_i∂x_j, exact by forward-over-reverse
// differentiation of the model's tape (one Hessian-vector product a
// column, batched), and scales it by both range widths w = high − low:
//
//	I_ij = ∂²y/∂x_i∂x_j · w_i · w_j
//
// I_ij is in the output's unit. For an output that is bilinear in x_i and
// x_j (a quantity times a price) it equals the corner difference
// y(hi_i, hi_j) − y(hi_i, lo_j) − y(lo_i, hi_j) + y(lo_i, lo_j), the part
// of the joint change that the one-at-a-time changes miss; where the
// mixed partial is 0 the two inputs' effects add. The diagonal I_ii is the
// input's curvature on the same scale. This is a local measure at the
// baseline: the variance-based second-order Sobol' indices are its global
// counterpart.
//
// Where the output is not twice differentiable at the baseline (abs at 0,
// min or max at a tie, a step at its jump, on the path the output takes),
// the second derivatives are those of the branch taken, and NotSmooth says
// where.
//
// References:
//   - A. Griewank and A. Walther, Evaluating Derivatives, 2nd ed., SIAM
//     2008, chapter 5 (second-order adjoints, forward over reverse; the
//     chapter number from memory).
func Interactions(p *Problem, s *InteractionsSettings) (*InteractionsResult, error) {
	if s == nil {
		s = &InteractionsSettings{}
	}
	top := cmp.Or(s.Top, DefaultInteractionsTop)
	mapN := cmp.Or(s.MapInputs, DefaultMapInputs)
	maxCols := cmp.Or(s.MaxColumns, DefaultMaxColumns)
	if err := s.ctx().Err(); err != nil {
		return nil, fmt.Errorf("stopped: %w", err)
	}
	ev, err := newHessianEval(p)
	if err != nil {
		return nil, err
	}
	k := len(p.Inputs)
	if k == 0 {
		return nil, fmt.Errorf("%s depends on no input: nothing interacts", p.Output)
	}
	width := make([]float64, k)
	res := &InteractionsResult{Kind: "interactions", Output: p.Output, Unit: p.Unit, Inputs: k}
	for i, in := range p.Inputs {
		width[i] = in.High - in.Low
		if in.Source == RangeDefault {
			res.DefaultRanges = append(res.DefaultRanges, in.Name)
		}
	}
	x := p.Baseline()
	grad := make([]float64, k)
	y, err := p.F.Gradient(grad, x)
	if err != nil {
		return nil, err
	}
	res.Value = y

	// The columns: every input, or the MaxColumns of largest first-order
	// swing.
	cols := make([]int, k)
	for i := range cols {
		cols[i] = i
	}
	if k > maxCols {
		swing := func(i int) float64 { return math.Abs(grad[i] * width[i]) }
		slices.SortFunc(cols, func(a, b int) int {
			if c := cmp.Compare(swing(b), swing(a)); c != 0 {
				return c
			}
			return cmp.Compare(a, b)
		})
		cols = cols[:maxCols]
		slices.Sort(cols)
	}
	res.Columns = len(cols)
	// pos[i] is input i's place in cols, -1 for an input without a column;
	// sub holds the Hessian among the columns, for the map (400² at most).
	pos := make([]int, k)
	for i := range pos {
		pos[i] = -1
	}
	for c, i := range cols {
		pos[i] = c
	}
	sub := make([]float64, len(cols)*len(cols))

	// Pairs are counted and summed as their columns come, and only the
	// Top strongest kept: a model of 200,000 inputs has 80 million pairs
	// against 400 columns, and no column is kept whole.
	type pair struct {
		i, j  int
		h, sc float64
	}
	stronger := func(a, b pair) int { // descending |scaled|, |mixed|, then by names
		if c := cmp.Compare(math.Abs(b.sc), math.Abs(a.sc)); c != 0 {
			return c
		}
		if c := cmp.Compare(math.Abs(b.h), math.Abs(a.h)); c != 0 {
			return c
		}
		if c := strings.Compare(p.Inputs[a.i].Name, p.Inputs[b.i].Name); c != 0 {
			return c
		}
		return strings.Compare(p.Inputs[a.j].Name, p.Inputs[b.j].Name)
	}
	var best []pair
	var sum float64
	weight := make([]float64, k) // each input's total |I| over its pairs and curvature, for the map
	diag := make([]float64, k)
	addColumn := func(i int, col []float64) {
		for j, h := range col {
			if pj := pos[j]; pj >= 0 {
				sub[pos[i]*len(cols)+pj] = h
			}
			if j == i {
				diag[i] = h
				weight[i] += math.Abs(h * width[i] * width[i])
				continue
			}
			if pos[j] >= 0 && j < i {
				continue // the pair was taken with column j
			}
			if h == 0 {
				res.PairsZero++
			} else {
				res.PairsNonzero++
			}
			a, b := min(i, j), max(i, j)
			pr := pair{a, b, h, h * width[a] * width[b]}
			sum += math.Abs(pr.sc)
			weight[a] += math.Abs(pr.sc)
			weight[b] += math.Abs(pr.sc)
			if len(best) == top && stronger(pr, best[top-1]) >= 0 {
				continue
			}
			at, _ := slices.BinarySearchFunc(best, pr, stronger)
			best = slices.Insert(best, at, pr)
			if len(best) > top {
				best = best[:top]
			}
		}
	}
	m := tape.Lanes(ev.tapeLen(), 16)
	kinks := map[string]bool{}
	for start := 0; start < len(cols); start += m {
		if err := s.ctx().Err(); err != nil {
			return nil, fmt.Errorf("stopped: %w", err)
		}
		batch := cols[start:min(start+m, len(cols))]
		hv, ks, err := ev.columns(x, batch)
		if err != nil {
			return nil, err
		}
		for b, i := range batch {
			addColumn(i, hv[b*k:(b+1)*k])
		}
		for _, kk := range ks {
			if !kinks[kk] {
				kinks[kk] = true
				res.NotSmooth = append(res.NotSmooth, kk)
			}
		}
		s.progress(start+len(batch), len(cols))
	}

	units := map[[2]string]string{}
	mixedUnit := func(a, b int) string {
		ia, ib := p.Inputs[a], p.Inputs[b]
		key := [2]string{ia.Unit, ib.Unit}
		u, ok := units[key]
		if !ok {
			u = PartialUnit(PartialUnit(p.Unit, ia.Unit, ia), ib.Unit, ib)
			units[key] = u
		}
		return u
	}
	for _, pr := range best {
		ip := InteractionPair{A: p.Inputs[pr.i].Name, B: p.Inputs[pr.j].Name, Mixed: pr.h, MixedUnit: mixedUnit(pr.i, pr.j), Scaled: pr.sc}
		if sum > 0 {
			ip.Share = math.Abs(pr.sc) / sum
		}
		res.Pairs = append(res.Pairs, ip)
	}
	var curv []Curvature
	for _, i := range cols {
		h := diag[i]
		curv = append(curv, Curvature{Name: p.Inputs[i].Name, Second: h, SecondUnit: mixedUnit(i, i), Scaled: h * width[i] * width[i]})
	}
	slices.SortFunc(curv, func(a, b Curvature) int {
		if c := cmp.Compare(math.Abs(b.Scaled), math.Abs(a.Scaled)); c != 0 {
			return c
		}
		return strings.Compare(a.Name, b.Name)
	})
	res.Curvatures = curv[:min(top, len(curv))]

	// The map: the inputs of largest total |I| over their pairs and
	// curvature, in that order.
	byWeight := slices.Clone(cols)
	slices.SortFunc(byWeight, func(a, b int) int {
		if c := cmp.Compare(weight[b], weight[a]); c != 0 {
			return c
		}
		return strings.Compare(p.Inputs[a].Name, p.Inputs[b].Name)
	})
	var shown []int
	if len(cols) == k {
		shown = byWeight[:min(mapN, len(byWeight))]
	} else {
		// Beyond MaxColumns an input's strongest partners may have no
		// column of their own: the map takes the inputs of the strongest
		// pairs first (then the heaviest columns), and the Hessian columns
		// of those without one, so that every cell is computed.
		in := make([]bool, k)
		take := func(i int) {
			if !in[i] && len(shown) < mapN {
				in[i] = true
				shown = append(shown, i)
			}
		}
		for _, pr := range best {
			if pr.h != 0 {
				take(pr.i)
				take(pr.j)
			}
		}
		for _, i := range byWeight {
			take(i)
		}
	}
	var extra []int // shown inputs without a column
	for _, i := range shown {
		if pos[i] < 0 {
			extra = append(extra, i)
		}
	}
	var hx []float64
	if len(extra) > 0 {
		if hx, _, err = ev.columns(x, extra); err != nil {
			return nil, err
		}
	}
	hess := func(i, j int) float64 {
		if pos[i] >= 0 && pos[j] >= 0 {
			return sub[pos[min(i, j)]*len(cols)+pos[max(i, j)]]
		}
		if pos[i] >= 0 {
			i, j = j, i // i has no column
		}
		return hx[slices.Index(extra, i)*k+j]
	}
	for _, i := range shown {
		res.Map.Inputs = append(res.Map.Inputs, p.Inputs[i].Name)
		row := make([]float64, len(shown))
		for c, j := range shown {
			row[c] = hess(i, j) * width[i] * width[j]
		}
		res.Map.Scaled = append(res.Map.Scaled, row)
	}
	res.Steps, res.StepLines = p.StepSummary()
	return res, nil
}

// hessianEval takes Hessian columns of a problem's compiled formula, in
// the problem's inputs.
type hessianEval struct {
	fn    *Fn
	h     *tape.Hessian
	index []int     // problem input i is tape input index[i]; nil: the same
	full  []float64 // a full input vector (the baselines) when index is set
}

func newHessianEval(p *Problem) (*hessianEval, error) {
	switch f := p.F.(type) {
	case *Fn:
		c := f.Clone().(*Fn)
		return &hessianEval{fn: c, h: tape.NewHessian(c.tape)}, nil
	case *subFn:
		c := f.fn.Clone().(*Fn)
		return &hessianEval{fn: c, h: tape.NewHessian(c.tape), index: f.index, full: slices.Clone(f.full)}, nil
	}
	return nil, fmt.Errorf("%s has no second derivatives: interactions need a formula of the model", p.Output)
}

func (e *hessianEval) tapeLen() int { return e.fn.tape.Len() }

// dirInput is the program input of problem input i (index maps them; nil:
// the same).
func dirInput(index []int, i int) int {
	if index == nil {
		return i
	}
	return index[i]
}

// columns returns the Hessian columns of the problem inputs batch, each
// of the problem's k inputs (len(batch) × k, in the output's display
// unit), and where the output is not twice differentiable.
func (e *hessianEval) columns(x []float64, batch []int) ([]float64, []string, error) {
	k := len(x)
	full := x
	if e.index != nil {
		full = e.full
		for i, j := range e.index {
			full[j] = x[i]
		}
	}
	n := len(full)
	m := len(batch)
	dirs := make([]float64, m*n)
	for b, i := range batch {
		j := i
		if e.index != nil {
			j = e.index[i]
		}
		dirs[b*n+j] = 1
	}
	hv := make([]float64, m*n)
	_, err := e.h.Vectors(hv, nil, full, dirs, m, e.fn.f.out)
	if err != nil {
		return nil, nil, e.fn.prog.secondError(err, full)
	}
	out := make([]float64, m*k)
	for b := range m {
		for i := range k {
			j := i
			if e.index != nil {
				j = e.index[i]
			}
			v := hv[b*n+j] * e.fn.scale
			if math.IsInf(v, 0) && !math.IsInf(hv[b*n+j], 0) {
				// Finite in base units, beyond the float64 range in the
				// display unit (issue 8, item 15).
				a, c := e.fn.prog.Inputs[j].Name, e.fn.prog.Inputs[dirInput(e.index, batch[b])].Name
				return nil, nil, e.fn.overflow(full, "the second derivative in "+a+" and "+c, a, c)
			}
			out[b*k+i] = v
		}
	}
	var kinks []string
	for _, kk := range e.h.Kinks() {
		kinks = append(kinks, e.fn.prog.kinkText(kk))
	}
	return out, kinks, nil
}

// secondError is evalError for the second-derivative pass: an error of
// the first derivatives says it was met taking second ones.
func (p *Program) secondError(err error, x []float64) error {
	e := p.evalError(err, x)
	if ee, ok := e.(*EvalError); ok && !strings.HasPrefix(ee.Msg, "second derivative") {
		ee.Msg += " (taking second derivatives)"
	}
	return e
}

// kinkText places a kink of the tape at its file, line, column and
// formula: "model.nudge:4:12: abs at 0 (a kink) in margin".
func (p *Program) kinkText(k tape.Kink) string {
	msg := k.Msg
	if int(k.Pos) < 0 || int(k.Pos) >= p.pos.len() {
		return msg
	}
	pe := p.pos.at(int(k.Pos))
	pos := pe.file.Position(pe.pos)
	msg += p.elementOf(&tape.DomainError{Pos: k.Pos, Element: k.Element})
	if pe.formula != "" {
		msg += " in " + pe.formula
	}
	return pos.String() + ": " + msg
}
