package sens

import (
	"context"
	"errors"
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// Model is the set of inputs, formulas and scenarios a session has declared,
// gathered from any number of files or notebook cells. Declaring a name again
// replaces the earlier declaration. A Model is not safe for concurrent use; a
// compiled Program is read-only and may be shared.
type Model struct {
	decls  map[string]*Decl
	order  []string // names in the order first declared
	list   []*Decl  // the declarations by Decl.idx: list[i] declares order[i]
	dblock []Decl   // Decls not yet used (Define): one allocation a block
	// byID gives, for a file declarations came from, the index (Decl.idx)
	// plus one of each name it declared, by the name's number in the file
	// (syntax.Ident.ID): the compiler resolves a reference to a name its
	// own file declares without looking the name up (compiler.declIdx).
	// A name keeps its index when it is declared again, from any file.
	byID map[*syntax.File][]int32
	// single is the file every declaration so far came from, each with a
	// numbered name; nil when none did or there were more files. Then a
	// name byID does not know is new, and its declaration costs one
	// insertion in decls instead of a lookup and an insertion.
	single    *syntax.File
	scenarios map[string]*Scenario
	scenOrder []string
	corrs     []*CorrDecl              // rank correlations, in the order declared
	rates     map[string]*ExchangeRate // by currency code
	rateOrder []string

	prog    *Program // cached compilation, nil when stale
	progErr error
}

// Decl is one declaration: an input, a formula, a table or a range of
// periods, with the file it came from.
type Decl struct {
	Name    string
	File    *syntax.File
	Input   *syntax.InputStmt   // set for an input
	Formula *syntax.FormulaStmt // set for a formula
	Table   *Table              // set for a table, with TableStmt (table.go)
	Periods *syntax.PeriodsStmt // set for a range of periods

	TableStmt *syntax.TableStmt

	idx int32 // the name's place in Model.order: the compiler's dense index (see compiler.ents)
}

// Pos returns the declaration's position.
func (d *Decl) Pos() syntax.Position {
	switch {
	case d.Input != nil:
		return d.File.Position(d.Input.Name.Pos())
	case d.TableStmt != nil:
		return d.File.Position(d.TableStmt.Name.Pos())
	case d.Periods != nil:
		return d.File.Position(d.Periods.Name.Pos())
	}
	return d.File.Position(d.Formula.Name.Pos())
}

// Scenario is a named set of input values: scenario lean: hours = 1.2, rate = 55.
type Scenario struct {
	Name    string
	File    *syntax.File
	Stmt    *syntax.CommandStmt
	Assigns []*syntax.Assign
}

// NewModel returns an empty model.
func NewModel() *Model {
	return &Model{decls: map[string]*Decl{}, scenarios: map[string]*Scenario{}, rates: map[string]*ExchangeRate{}}
}

// Define adds or replaces the declaration made by s, an *syntax.InputStmt,
// *syntax.FormulaStmt or *syntax.PeriodsStmt from file f (a table is
// declared by DefineTable, which reads its file). It reports whether a
// declaration of that name existed before.
func (m *Model) Define(f *syntax.File, s syntax.Stmt) (replaced bool) {
	if len(m.dblock) == 0 {
		m.dblock = make([]Decl, declBlock)
	}
	d := &m.dblock[0]
	m.dblock = m.dblock[1:]
	d.File = f
	if len(m.order) == 0 && f.NameCount() > declBlock {
		// A new model declared from a large file: room for its names at
		// once (a file declares fewer names than it numbers), so that the
		// map does not grow a step at a time.
		n := f.NameCount()
		m.decls = make(map[string]*Decl, n)
		m.order, m.list = make([]string, 0, n), make([]*Decl, 0, n)
	}
	switch s := s.(type) {
	case *syntax.InputStmt:
		d.Name, d.Input = s.Name.Name, s
	case *syntax.FormulaStmt:
		d.Name, d.Formula = s.Name.Name, s
	case *syntax.PeriodsStmt:
		d.Name, d.Periods = s.Name.Name, s
	default:
		panic("sens: Define of a statement that declares nothing")
	}
	return m.define(d)
}

// declBlock is how many Decls Define allocates at once.
const declBlock = 64

// define adds or replaces the declaration d.
func (m *Model) define(d *Decl) bool {
	id := d.nameID()
	ids := m.idsOf(d.File, id)
	switch {
	case id == 0:
		m.single = nil
	case len(m.order) == 0:
		m.single = d.File
	case d.File != m.single:
		m.single = nil
	}
	replaced := false
	if m.single != nil && ids[id] == 0 {
		// New, by the numbers: one insertion, which tells if it was not.
		n := len(m.decls)
		m.decls[d.Name] = d
		if len(m.decls) > n {
			d.idx = int32(len(m.order))
			m.order = append(m.order, d.Name)
			m.list = append(m.list, d)
		} else {
			// Declared under another number: a name from another parse.
			// Trust the numbers no more.
			d.idx, replaced, m.single = int32(slices.Index(m.order, d.Name)), true, nil
			m.list[d.idx] = d
		}
	} else {
		old, ok := m.decls[d.Name]
		if replaced = ok; replaced {
			d.idx = old.idx
			m.list[d.idx] = d
		} else {
			d.idx = int32(len(m.order))
			m.order = append(m.order, d.Name)
			m.list = append(m.list, d)
		}
		m.decls[d.Name] = d
	}
	if id != 0 {
		ids[id] = d.idx + 1
	}
	m.prog, m.progErr = nil, nil
	return replaced
}

// nameID returns the number of d's name in its file (syntax.Ident.ID).
func (d *Decl) nameID() int32 {
	var id *syntax.Ident
	switch {
	case d.Input != nil:
		id = d.Input.Name
	case d.Formula != nil:
		id = d.Formula.Name
	case d.Periods != nil:
		id = d.Periods.Name
	case d.TableStmt != nil:
		id = d.TableStmt.Name
	}
	if id == nil || id.Name != d.Name || d.File == nil || int(id.ID) > d.File.NameCount() {
		return 0
	}
	return id.ID
}

// idsOf returns f's byID, made for the names f numbers when id > 0.
func (m *Model) idsOf(f *syntax.File, id int32) []int32 {
	ids := m.byID[f]
	if ids == nil && id > 0 {
		ids = make([]int32, f.NameCount()+1)
		if m.byID == nil {
			m.byID = map[*syntax.File][]int32{}
		}
		m.byID[f] = ids
	}
	return ids
}

// ValueResult is the value of an input, a formula or an expression at the
// baseline, in its display unit.
type ValueResult struct {
	Kind  string  `json:"kind"` // "value"
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

// Value returns the value at the baseline of the input or formula name.
func (p *Program) Value(name string) (*ValueResult, error) {
	if in, _ := p.Lookup(name); in != nil {
		return &ValueResult{Kind: "value", Name: name, Value: in.Value, Unit: in.Unit}, nil
	}
	fn, err := p.Fn(name)
	if err != nil {
		return nil, err
	}
	y, err := fn.Eval(p.Baseline())
	if err != nil {
		return nil, err
	}
	return &ValueResult{Kind: "value", Name: name, Value: y, Unit: fn.Formula().Unit}, nil
}

// ScenarioResult is the result of defining a scenario: the inputs it sets,
// with their values and baselines (empty while the model does not compile
// yet, since the values are read then).
type ScenarioResult struct {
	Kind     string            `json:"kind"` // "scenario"
	Name     string            `json:"name"`
	Settings []ScenarioSetting `json:"settings"`
	Replaced bool              `json:"replaced"`
}

// DefineScenario checks the scenario command c from file f against the model
// as it stands and adds it, or replaces the scenario of that name. Each name
// it sets must be a declared input, set once; when the model compiles, each
// value is read in its input's unit too (else that waits until the scenario
// is used, since a formula may be declared later in the file). Errors name
// the line and column.
func (m *Model) DefineScenario(f *syntax.File, c *syntax.CommandStmt) (*ScenarioResult, error) {
	name := c.Name.Name
	var errs syntax.ErrorList
	if name == BaseName {
		errs.Add(f, c.Name.Pos(), name+" is the baseline: choose another scenario name")
		return nil, errs
	}
	seen := map[string]bool{}
	for _, a := range c.Assigns {
		if seen[a.Name.Name] {
			errs.Add(f, a.Name.Pos(), a.Name.Name+" is set twice in scenario "+name)
			return nil, errs
		}
		seen[a.Name.Name] = true
	}
	sc := &Scenario{Name: name, File: f, Stmt: c, Assigns: c.Assigns}
	res := &ScenarioResult{Kind: "scenario", Name: name, Settings: []ScenarioSetting{}}
	if prog, err := m.Compile(); err == nil {
		x, err := prog.ScenarioValues(sc)
		if err != nil {
			return nil, err
		}
		for _, a := range c.Assigns {
			in, _ := prog.Lookup(a.Name.Name)
			res.Settings = append(res.Settings, ScenarioSetting{Name: in.Name, Unit: in.Unit, Value: x[in.index], Baseline: in.Value})
		}
	} else {
		for _, a := range c.Assigns {
			d := m.Lookup(a.Name.Name)
			if msg := notAnInput(a.Name.Name, d != nil, d != nil && d.Formula != nil, m.Names()); msg != "" {
				errs.Add(f, a.Name.Pos(), msg)
				return nil, errs
			}
		}
	}
	res.Replaced = m.addScenario(sc)
	return res, nil
}

// notAnInput returns why a scenario cannot set name, or "" when it can:
// declared tells whether the name is declared, formula whether as a formula.
func notAnInput(name string, declared, formula bool, names []string) string {
	switch {
	case !declared:
		return "undefined input " + name + syntax.DidYouMean(name, names)
	case formula:
		return name + " is a formula: a scenario sets inputs only"
	}
	return ""
}

// missingElement returns why name, written NAME[KEY] with NAME a vector
// input, names no element: the vector has no such key, with the nearest key
// when one is close (syntax.DidYouMean: a bounded edit distance, so the work
// is linear in the number of keys), else the first and last keys. It returns
// "" when name is not of that form.
func (p *Program) missingElement(name string) string {
	base, key, ok := splitElement(name)
	if !ok {
		return ""
	}
	v := p.Vector(base)
	if v == nil || v.Kind != "input" || len(v.Keys) == 0 {
		return ""
	}
	if _, ok := v.find(key); ok {
		return ""
	}
	noun := v.Noun
	if noun == "" {
		noun = "element"
	}
	msg := fmt.Sprintf("undefined input %s: %s has no %s %s", name, base, noun, key)
	// A near key of a number (period 7 of 1..5) is no better a guess than
	// any other: the range of keys says more.
	if _, err := strconv.ParseFloat(key, 64); err != nil {
		if hint := syntax.DidYouMean(key, v.Keys); hint != "" {
			near := strings.TrimSuffix(strings.TrimPrefix(hint, " (did you mean "), "?)")
			return msg + fmt.Sprintf(" (did you mean %s[%s]?)", base, near)
		}
	}
	if len(v.Keys) == 1 {
		return msg + fmt.Sprintf(" (its only key is %s)", v.Keys[0])
	}
	return msg + fmt.Sprintf(" (its %d keys run from %s to %s)", len(v.Keys), v.Keys[0], v.Keys[len(v.Keys)-1])
}

// addScenario adds or replaces a scenario, reporting whether one of its name
// existed.
func (m *Model) addScenario(sc *Scenario) (replaced bool) {
	_, replaced = m.scenarios[sc.Name]
	if !replaced {
		m.scenOrder = append(m.scenOrder, sc.Name)
	}
	m.scenarios[sc.Name] = sc
	return replaced
}

// Scenarios returns the scenarios named by ids, as a command lists them
// ("compare total across base, lean"): nil for the baseline, BaseName. A name
// listed twice or not defined is an error at its line and column.
func (m *Model) Scenarios(f *syntax.File, ids []*syntax.Ident) ([]*Scenario, error) {
	var errs syntax.ErrorList
	known := append([]string{BaseName}, m.scenOrder...)
	seen := map[string]bool{}
	out := make([]*Scenario, len(ids))
	for i, id := range ids {
		if seen[id.Name] {
			errs.Add(f, id.Pos(), id.Name+" is listed twice")
			return nil, errs
		}
		seen[id.Name] = true
		if id.Name == BaseName {
			continue
		}
		if out[i] = m.scenarios[id.Name]; out[i] == nil {
			hint := syntax.DidYouMean(id.Name, known)
			switch {
			case hint != "":
			case len(known) > 1:
				hint = " (scenarios: " + strings.Join(known, ", ") + ")"
			default:
				hint = " (define one first: scenario " + id.Name + ": INPUT = VALUE)"
			}
			errs.Add(f, id.Pos(), "undefined scenario "+id.Name+hint)
			return nil, errs
		}
	}
	return out, nil
}

// Scenario returns the named scenario, or nil.
func (m *Model) Scenario(name string) *Scenario { return m.scenarios[name] }

// ScenarioNames returns the scenario names in the order first declared.
func (m *Model) ScenarioNames() []string { return slices.Clone(m.scenOrder) }

// Lookup returns the declaration of name, or nil.
func (m *Model) Lookup(name string) *Decl { return m.decls[name] }

// Names returns every declared name in the order first declared.
func (m *Model) Names() []string { return slices.Clone(m.order) }

// Len returns the number of declarations.
func (m *Model) Len() int { return len(m.order) }

// Reset forgets every declaration and scenario.
func (m *Model) Reset() {
	*m = *NewModel()
}

// Compile compiles the model, caching the result until the next change.
func (m *Model) Compile() (*Program, error) {
	return m.CompileContext(context.Background())
}

// CompileContext is Compile, stopped with ctx's error when ctx is done
// (which is not cached).
func (m *Model) CompileContext(ctx context.Context) (*Program, error) {
	if m.prog == nil && m.progErr == nil {
		prog, err := compileContext(ctx, m, nil)
		if ctx.Err() != nil && prog == nil {
			return nil, ctx.Err()
		}
		m.prog, m.progErr = prog, err
	}
	return m.prog, m.progErr
}

// CompileExpr compiles the model together with one extra expression, which
// becomes a formula named name (not visible to other formulas). declared, when
// not nil, is the unit to show its value in.
func (m *Model) CompileExpr(name string, f *syntax.File, x syntax.Expr, declared *syntax.UnitLit) (*Program, error) {
	return m.CompileExprContext(context.Background(), name, f, x, declared)
}

// CompileExprContext is CompileExpr, stopped with ctx's error when ctx is
// done.
func (m *Model) CompileExprContext(ctx context.Context, name string, f *syntax.File, x syntax.Expr, declared *syntax.UnitLit) (*Program, error) {
	return compileContext(ctx, m, &extraFormula{name: name, file: f, stmt: &syntax.FormulaStmt{
		Name: &syntax.Ident{NamePos: x.Pos(), Name: name}, Assign: x.Pos(), Value: x, Unit: declared, EndAt: x.End(),
	}})
}

// ScenarioValues returns the baseline input values with the scenario's
// settings applied, each converted to its input's unit. Errors name the line and
// column of the bad setting.
func (p *Program) ScenarioValues(s *Scenario) ([]float64, error) {
	x := p.Baseline()
	var errs syntax.ErrorList
	c := newScratchCompiler()
	c.rates = p.rates
	for _, a := range s.Assigns {
		in, f := p.Lookup(a.Name.Name)
		if in == nil && f == nil && p.Vector(a.Name.Name) != nil {
			// Declared, as a vector: not "undefined input hours".
			errs.Add(s.File, a.Name.Pos(), a.Name.Name+" is a vector: a scenario sets one element at a time, "+a.Name.Name+"[KEY] = VALUE")
			continue
		}
		if in == nil && f == nil {
			if msg := p.missingElement(a.Name.Name); msg != "" {
				errs.Add(s.File, a.Name.Pos(), msg)
				continue
			}
		}
		if msg := notAnInput(a.Name.Name, in != nil || f != nil, f != nil, p.Names()); msg != "" {
			errs.Add(s.File, a.Name.Pos(), msg)
			continue
		}
		v, ok := c.constant(s.File, a.Value, *in.u, "the scenario value of "+in.Name)
		if ok {
			x[in.index] = v
		}
	}
	errs = append(errs, c.errs...)
	errs.Sort()
	return x, errs.Err()
}

// Clone returns a copy of the model that can be changed without touching m.
// Declarations themselves are immutable and shared.
func (m *Model) Clone() *Model {
	c := &Model{
		decls:     make(map[string]*Decl, len(m.decls)),
		order:     slices.Clone(m.order),
		list:      slices.Clone(m.list),
		scenarios: make(map[string]*Scenario, len(m.scenarios)),
		scenOrder: slices.Clone(m.scenOrder),
		corrs:     slices.Clone(m.corrs),
		rates:     maps.Clone(m.rates),
		rateOrder: slices.Clone(m.rateOrder),
		prog:      m.prog,
		progErr:   m.progErr,
	}
	for k, v := range m.decls {
		c.decls[k] = v
	}
	for k, v := range m.scenarios {
		c.scenarios[k] = v
	}
	return c
}

// LoadModel parses src as a model file named name and declares its inputs,
// formulas, scenarios, rank correlations, tables and periods in a new Model (a
// table's file is read relative to the model file's directory): the way for a Go program (or a
// gophernotes cell) to load a model without the kernel. Analysis commands and
// bare expressions are an error here; they belong to a front end such as the
// kernel's cell interpreter.
func LoadModel(name string, src []byte) (*Model, error) {
	f, stmts, err := syntax.Parse(name, src)
	if err != nil {
		return nil, err
	}
	if err := CheckDuplicates(f, stmts); err != nil {
		return nil, err
	}
	m := NewModel()
	var errs syntax.ErrorList
	var scenarios, rates []*syntax.CommandStmt
	for _, s := range stmts {
		switch s := s.(type) {
		case *syntax.InputStmt, *syntax.FormulaStmt, *syntax.PeriodsStmt:
			m.Define(f, s)
		case *syntax.TableStmt:
			if _, err := m.DefineTable(f, s, filepath.Dir(name)); err != nil {
				var el syntax.ErrorList
				if errors.As(err, &el) {
					errs = append(errs, el...)
				} else {
					errs.Add(f, s.Pos(), err.Error())
				}
			}
		case *syntax.CommandStmt:
			switch s.Verb {
			case "scenario":
				scenarios = append(scenarios, s)
				continue
			case "spearman":
				m.DefineCorrelation(f, s)
				continue
			case "exchange":
				rates = append(rates, s)
				continue
			}
			errs.Add(f, s.Pos(), s.Verb+" is a command: a model file loaded here holds inputs, formulas, exchange rates, scenarios and rank correlations")
		default:
			errs.Add(f, s.Pos(), "an expression is not a declaration: a model file loaded here holds inputs, formulas, scenarios and rank correlations")
		}
	}
	// Rates, then scenarios, are checked against the whole file: the order
	// of lines does not matter in a model file.
	for _, c := range rates {
		if _, err := m.DefineExchange(f, c); err != nil {
			errs = appendErr(errs, f, c, err)
		}
	}
	for _, c := range scenarios {
		if _, err := m.DefineScenario(f, c); err != nil {
			var el syntax.ErrorList
			if errors.As(err, &el) {
				errs = append(errs, el...)
			} else {
				errs.Add(f, c.Pos(), err.Error())
			}
		}
	}
	errs.Sort()
	return m, errs.Err()
}
