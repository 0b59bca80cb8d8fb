package sens

import (
	"slices"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// Model is the set of inputs, formulas and scenarios a session has declared,
// gathered from any number of files or notebook cells. Declaring a name again
// replaces the earlier declaration. A Model is not safe for concurrent use; a
// compiled Program is read-only and may be shared.
type Model struct {
	decls     map[string]*Decl
	order     []string // names in the order first declared
	scenarios map[string]*Scenario
	scenOrder []string

	prog    *Program // cached compilation, nil when stale
	progErr error
}

// Decl is one declaration: an input or a formula, with the file it came from.
type Decl struct {
	Name    string
	File    *syntax.File
	Input   *syntax.InputStmt   // set for an input
	Formula *syntax.FormulaStmt // set for a formula
}

// Pos returns the declaration's position.
func (d *Decl) Pos() syntax.Position {
	if d.Input != nil {
		return d.File.Position(d.Input.Name.Pos())
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
	return &Model{decls: map[string]*Decl{}, scenarios: map[string]*Scenario{}}
}

// Define adds or replaces the declaration made by s, an *syntax.InputStmt or
// *syntax.FormulaStmt from file f. It reports whether a declaration of that name
// existed before.
func (m *Model) Define(f *syntax.File, s syntax.Stmt) (replaced bool) {
	d := &Decl{File: f}
	switch s := s.(type) {
	case *syntax.InputStmt:
		d.Name, d.Input = s.Name.Name, s
	case *syntax.FormulaStmt:
		d.Name, d.Formula = s.Name.Name, s
	default:
		panic("sens: Define of a statement that declares nothing")
	}
	_, replaced = m.decls[d.Name]
	if !replaced {
		m.order = append(m.order, d.Name)
	}
	m.decls[d.Name] = d
	m.prog, m.progErr = nil, nil
	return replaced
}

// DefineScenario adds or replaces a scenario from a scenario command.
func (m *Model) DefineScenario(f *syntax.File, c *syntax.CommandStmt) (replaced bool) {
	name := c.Name.Name
	_, replaced = m.scenarios[name]
	if !replaced {
		m.scenOrder = append(m.scenOrder, name)
	}
	m.scenarios[name] = &Scenario{Name: name, File: f, Stmt: c, Assigns: c.Assigns}
	return replaced
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
	if m.prog == nil && m.progErr == nil {
		m.prog, m.progErr = compile(m, nil)
	}
	return m.prog, m.progErr
}

// CompileExpr compiles the model together with one extra expression, which
// becomes a formula named name (not visible to other formulas). declared, when
// not nil, is the unit to show its value in.
func (m *Model) CompileExpr(name string, f *syntax.File, x syntax.Expr, declared *syntax.UnitLit) (*Program, error) {
	return compile(m, &extraFormula{name: name, file: f, stmt: &syntax.FormulaStmt{
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
	for _, a := range s.Assigns {
		in, f := p.Lookup(a.Name.Name)
		switch {
		case f != nil:
			errs.Add(s.File, a.Name.Pos(), a.Name.Name+" is a formula: a scenario sets inputs only")
			continue
		case in == nil:
			msg := "undefined input " + a.Name.Name
			if sug := syntax.Suggest(a.Name.Name, p.Names()); sug != "" {
				msg += " (did you mean " + sug + "?)"
			}
			errs.Add(s.File, a.Name.Pos(), msg)
			continue
		}
		v, ok := c.constant(s.File, a.Value, in.u, "the scenario value of "+in.Name)
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
		scenarios: make(map[string]*Scenario, len(m.scenarios)),
		scenOrder: slices.Clone(m.scenOrder),
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
// formulas and scenarios in a new Model: the way for a Go program (or a
// gophernotes cell) to load a model without the kernel. Analysis commands and
// bare expressions are an error here; they belong to a front end such as the
// kernel's cell interpreter.
func LoadModel(name string, src []byte) (*Model, error) {
	f, stmts, err := syntax.Parse(name, src)
	if err != nil {
		return nil, err
	}
	m := NewModel()
	var errs syntax.ErrorList
	for _, s := range stmts {
		switch s := s.(type) {
		case *syntax.InputStmt, *syntax.FormulaStmt:
			m.Define(f, s)
		case *syntax.CommandStmt:
			if s.Verb == "scenario" {
				m.DefineScenario(f, s)
				continue
			}
			errs.Add(f, s.Pos(), s.Verb+" is a command: a model file loaded here holds inputs, formulas and scenarios")
		default:
			errs.Add(f, s.Pos(), "an expression is not a declaration: a model file loaded here holds inputs, formulas and scenarios")
		}
	}
	return m, errs.Err()
}
