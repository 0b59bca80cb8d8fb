package sens

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Program is a compiled model: every input and formula, and one tape that
// evaluates all formulas at once. A Program is read-only; the functions made
// from it (Program.Fn) own their buffers, one per goroutine.
type Program struct {
	Inputs   []*Input
	Formulas []*Formula // in dependency order: a formula follows every formula it uses
	// Correlations are the declared rank correlations between inputs.
	Correlations []Correlation
	Warnings     []*syntax.Error
	Rates        []*ExchangeRate // the exchange rates the model states

	index nameIndex   // name -> index into Inputs (>= 0) or -1-index into Formulas (see lookupName)
	rates *unit.Rates // the same rates for the unit package; nil when there are none
	tape  *tape.Tape
	pos   posTable // tape position table: SetPos value -> source

	vecProgram // vectors: their inputs, formulas and tables (compile_vec.go)
}

type posEntry struct {
	file    *syntax.File
	pos     syntax.Pos
	formula string
}

// posTable is the tape's position table: the offset of each number, and
// the file and formula of each run of numbers that share them (a formula's
// operations are numbered together), 4 bytes a number instead of a
// posEntry's 32.
type posTable struct {
	pos  []int32
	runs []posRun // by start
}

type posRun struct {
	start   int32
	file    *syntax.File
	formula string
}

// add numbers a position and returns its number.
func (t *posTable) add(f *syntax.File, pos syntax.Pos, formula string) int32 {
	k := int32(len(t.pos))
	if n := len(t.runs); n == 0 || t.runs[n-1].file != f || t.runs[n-1].formula != formula {
		t.runs = append(t.runs, posRun{start: k, file: f, formula: formula})
	}
	t.pos = append(t.pos, int32(pos))
	return k
}

// len returns the count of numbers.
func (t *posTable) len() int { return len(t.pos) }

// at returns the source of number k (0 <= k < t.len()).
func (t *posTable) at(k int) posEntry {
	i, _ := slices.BinarySearchFunc(t.runs, int32(k), func(r posRun, k int32) int { return cmp.Compare(r.start, k) })
	if i == len(t.runs) || t.runs[i].start > int32(k) {
		i--
	}
	r := t.runs[i]
	return posEntry{file: r.file, pos: syntax.Pos(t.pos[k]), formula: r.formula}
}

// RangeSource says where an input's range came from.
type RangeSource string

// The sources of a range, as reported in results.
const (
	RangeExplicit     RangeSource = "range"        // (low..high)
	RangePercent      RangeSource = "percent"      // (-5%..+8%) or (±20%)
	RangeDistribution RangeSource = "distribution" // 10th and 90th percentiles
	RangeDefault      RangeSource = "default"      // ±10% of the value, flagged in outputs
)

// DefaultRangePct is the range, in percent of the value either side, given to
// an input that has neither a range nor a distribution: ±10%.
const DefaultRangePct = 10

// Input is a compiled input. Value, Low, High and the distribution are in the
// input's own unit.
type Input struct {
	Name      string
	Value     float64
	Unit      string // as written; "" when dimensionless
	Low, High float64
	Source    RangeSource
	Dist      Dist // nil when none was given
	Pos       syntax.Position
	// Vector is the vector input this input is an element of, Key its
	// key ("" for a scalar input): qty[bracket-12] is element bracket-12
	// of qty.
	Vector string
	Key    string

	u     *unit.Unit // shared by the elements of a vector input; nil for an input built by hand
	index int
	file  *syntax.File // the file declaring it, for messages
	elem  int          // the element of Vector
}

// Formula is a compiled formula. Its value is shown in Unit; Text and Pos
// say where it is written.
type Formula struct {
	Name     string
	Unit     string // display unit: the declared one, else a unit inferred from the formula
	Declared bool   // the unit was declared

	// Where the formula is written: the position of its name in file, and
	// its text (see Text), file.Src[textAt:textAt+textLen] unless text is
	// set. A program of many formulas keeps no copy of their text.
	textAt, textLen int32
	at              int32 // the name's syntax.Pos
	file            *syntax.File
	text            *string

	u    *unit.Unit                  // the display unit, interned (see intern)
	out  int                         // tape output index
	tape *tape.Tape                  // the tape of out; nil for the program's (an element of a vector formula has its own)
	sc   float64                     // the output's value in base units is the tape's times sc (0 means 1)
	lazy atomic.Pointer[formulaLazy] // nil until asked for (see trace)
}

// Text returns the formula as written (as syntax.String prints it, and its
// unit in brackets when the unit belongs to the formula's last number).
func (f *Formula) Text() string {
	switch {
	case f.text != nil:
		return *f.text
	case f.file == nil:
		return ""
	}
	return string(f.file.Src[f.textAt : f.textAt+f.textLen])
}

// Pos returns the position of the formula's name.
func (f *Formula) Pos() syntax.Position { return f.file.Position(syntax.Pos(f.at)) }

// setSource records where fm is written: its name at pos in file, and
// text, which is kept as a span of file's source when it is one (a formula
// printed as it was written), else as a string of its own.
func (fm *Formula) setSource(file *syntax.File, pos syntax.Pos, from syntax.Pos, text string) {
	fm.file, fm.at = file, int32(pos)
	off := file.Offset(from)
	if file != nil && off >= 0 && off+len(text) <= len(file.Src) && off+len(text) <= math.MaxInt32 && string(file.Src[off:off+len(text)]) == text {
		fm.textAt, fm.textLen, fm.text = int32(off), int32(len(text)), nil
		return
	}
	fm.text = &text
}

// setSourceExpr is setSource of x as syntax.String prints it, followed by
// suffix: the text is compared with the source as it is printed, and built
// only when it is not a span of the source (at 10^6 formulas, printing each
// one to compare made about 95 MB of garbage during the compile).
func (fm *Formula) setSourceExpr(file *syntax.File, pos syntax.Pos, from syntax.Pos, x syntax.Expr, suffix string) {
	if file != nil {
		if off := file.Offset(from); off >= 0 && off <= len(file.Src) {
			src := file.Src[off:]
			if n, ok := syntax.PrintedAt(x, suffix, src); ok && off+n <= math.MaxInt32 {
				fm.file, fm.at = file, int32(pos)
				fm.textAt, fm.textLen, fm.text = int32(off), int32(n), nil
				return
			}
		}
	}
	fm.setSource(file, pos, from, syntax.String(x)+suffix)
}

// formulaLazy holds what is worked out from the tape only when asked for: a
// program of many formulas pays for the ones that are analysed, and a
// formula not analysed carries one nil pointer.
type formulaLazy struct {
	deps  []int   // inputs the formula depends on, ascending
	steps []int32 // positions of the step operations on its path
}

// Deps returns the indices (into Inputs) of the inputs formula f depends on,
// ascending. It is safe for concurrent use.
func (p *Program) Deps(f *Formula) []int {
	return p.trace(f).deps
}

// steps returns the positions of the step operations on f's path.
func (p *Program) steps(f *Formula) []int32 {
	return p.trace(f).steps
}

// trace works out f's formulaLazy once. Two goroutines that ask at the
// same time may both work it out; the first one stored is kept.
func (p *Program) trace(f *Formula) *formulaLazy {
	if l := f.lazy.Load(); l != nil {
		return l
	}
	t := p.tapeOf(f)
	l := &formulaLazy{deps: t.InputDeps(f.out), steps: t.StepOps(f.out)}
	if f.lazy.CompareAndSwap(nil, l) {
		return l
	}
	return f.lazy.Load()
}

// Lookup returns the input or formula called name.
func (p *Program) Lookup(name string) (in *Input, f *Formula) {
	i, ok := p.lookupName(name)
	switch {
	case !ok:
		return p.lookupElement(name), nil
	case i >= 0:
		return p.Inputs[i], nil
	}
	return nil, p.Formulas[-1-i]
}

// Names returns the names of every input and formula, sorted.
func (p *Program) Names() []string {
	out := p.appendNames(make([]string, 0, p.index.n+len(p.Vectors)))
	for _, v := range p.Vectors {
		out = append(out, v.Name)
	}
	sort.Strings(out)
	return out
}

// Baseline returns the inputs' baseline values, in their own units.
func (p *Program) Baseline() []float64 {
	x := make([]float64, len(p.Inputs))
	for i, in := range p.Inputs {
		x[i] = in.Value
	}
	return x
}

// TapeLen returns the number of nodes on the program's tape.
func (p *Program) TapeLen() int { return p.tape.Len() }

// Index returns the input's position in Program.Inputs.
func (in *Input) Index() int { return in.index }

// ---- compilation

type extraFormula struct {
	name string
	file *syntax.File
	stmt *syntax.FormulaStmt
}

// val is a compiled expression.
type val struct {
	slot    tape.Slot
	boolean bool
	konst   bool // the value is a known constant
	bad     bool // an error was already reported
	dim     unit.Dim
	hint    *unit.Unit // a unit the user would expect the value in, or nil
	c       float64    // the constant, in base units
	tx      *textVal   // text: a text column or text in quotes (compile_vec.go); slot is unused
	// sc is a unit factor not yet multiplied in: the value in base units
	// is the slot's value times sc (0 means 1). Products and quotients
	// fold factors together instead of adding a node for each (see scaled).
	sc float64
}

type state uint8

// entry is the compile state and value of one name.
type entry struct {
	st  state
	set bool // v has been set
	v   val
}

// entry returns the entry of the declared name (or the extra formula's
// name), or nil.
func (c *compiler) entry(name string) *entry {
	if d := c.decls[name]; d != nil {
		return &c.ents[d.idx]
	}
	if c.extra != nil && name == c.extra.name {
		return &c.ents[len(c.ents)-1]
	}
	return nil
}

// setVal sets the value of e.
func (e *entry) setVal(v val) { e.v, e.set = v, true }

const (
	unvisited state = iota
	visiting
	done
)

type compiler struct {
	m     *Model
	extra *extraFormula
	b     *vbuilder // a tape.Builder that lifts operations on vectors (compile_vec.go)
	vec   vecCompiler
	errs  syntax.ErrorList
	warns syntax.ErrorList
	prog  *Program

	decls map[string]*Decl
	list  []*Decl // the declarations by Decl.idx (Model.list)
	// ents holds, by Decl.idx, each declared name's state and value; the
	// extra formula, when its name is not declared, has the last one. A
	// reference costs two slice indexes (declIdx, then ents) once its
	// name's number is resolved.
	ents []entry
	// res resolves the names of a file by number (syntax.Ident.ID; see
	// declIdx); resFile and resIDs are the last file's.
	res     map[*syntax.File][]int32
	resFile *syntax.File
	resIDs  []int32
	// numbered: the formula being compiled was parsed from its file (its
	// name stands at its position in the file's text, numbered), so that
	// its names' numbers mean the file's names; else declIdx looks names
	// up by their text.
	numbered bool
	stack    []string
	curFile  *syntax.File
	cur      string      // formula being compiled
	rates    *unit.Rates // exchange rates every unit is expressed under
	what     string      // the constant being evaluated, for messages

	units map[unit.Unit]*unit.Unit // interned display units (see intern)
	// sumSpine and sumTerms are longSum's buffers, used as stacks.
	sumSpine []*syntax.BinaryExpr
	sumTerms []val
	fblock   []Formula   // formulas not yet used (newFormula)
	iblock   []Input     // inputs not yet used (newInput)
	outs     []tape.Slot // the slots of Program.Formulas, the tape's outputs
	// unitMemo holds the units parsed (parseUnit), by their text, under the
	// rates unitMemoRates.
	unitMemo      map[string]unit.Unit
	unitMemoRates *unit.Rates
	// noFold multiplies every input by its unit factor where it is
	// declared, as the compiler did before factors were folded: the
	// reference of the folding tests.
	noFold bool

	// numberUnit gives a number the unit of its line's last bracket, while a
	// formula is read the second way (see formula).
	numberUnit map[*syntax.NumberLit]*syntax.UnitLit

	ctx       context.Context          // stops the compile when done; nil: never
	ticks     int                      // calls of canceled
	cycleRefs map[*syntax.Ident]bool   // references that close a cycle, reported (formulaOrder)
	undef     map[*syntax.Error]string // undefined-name errors, by the name, for their hints (undefinedHints)
}

func compile(m *Model, extra *extraFormula) (prog *Program, err error) {
	return newCompiler(m, extra).run()
}

// compileNoFold compiles m without folding unit factors (see noFold).
func compileNoFold(m *Model) (*Program, error) {
	c := newCompiler(m, nil)
	c.noFold = true
	return c.run()
}

func newCompiler(m *Model, extra *extraFormula) *compiler {
	n := len(m.decls) + 1
	c := &compiler{
		m: m, extra: extra,
		decls: m.decls, list: m.list, ents: make([]entry, n),
		prog: &Program{index: makeNameIndex(n), pos: posTable{pos: make([]int32, 0, 4*n), runs: make([]posRun, 0, n)}},
	}
	c.b = newVBuilder(c, 4*n)
	c.exchangeRates()
	return c
}

func (c *compiler) errorf(f *syntax.File, pos syntax.Pos, format string, args ...any) {
	c.errs.Add(f, pos, fmt.Sprintf(format, args...))
}

func (c *compiler) warnf(f *syntax.File, pos syntax.Pos, format string, args ...any) {
	c.warns.Add(f, pos, fmt.Sprintf(format, args...))
}

func (c *compiler) setPos(f *syntax.File, pos syntax.Pos) {
	c.b.SetPos(c.prog.pos.add(f, pos, c.cur))
}

func (c *compiler) run() (*Program, error) {
	p := c.prog
	// Names that clash with built-ins.
	byIdx := c.list
	nIn, nFm := 0, 1
	for _, d := range byIdx {
		if d.Input != nil {
			nIn++
		} else {
			nFm++
		}
		if name := d.Name; isBuiltinName(name) {
			id := d.Name
			pos := d.Pos()
			c.errs = append(c.errs, syntax.ErrorAt(d.File, pos, fmt.Sprintf("%s is a built-in name: choose another name", id)))
		}
	}
	// Room for the scalars (vectors' elements may add more).
	p.Inputs, p.Formulas = make([]*Input, 0, nIn), make([]*Formula, 0, nFm)
	// Inputs first, in declaration order, so input indices are stable.
	for _, d := range byIdx {
		if d.Input != nil {
			c.compileInput(d)
		}
	}
	c.compileCorrelations()
	// Formulas in dependency order.
	for _, d := range c.formulaOrder() {
		if c.canceled() {
			return nil, c.ctx.Err()
		}
		c.formulaAt(&c.ents[d.idx], d.Name, d.File, d.Formula, nil)
	}
	if c.extra != nil {
		c.formula(c.extra.name, c.extra.file, c.extra.stmt, nil)
	}
	if c.ctx != nil && c.ctx.Err() != nil {
		return nil, c.ctx.Err()
	}
	if len(c.errs) > 0 {
		c.errs.Sort()
		if len(c.errs) > 10 {
			c.errs = c.errs[:10]
		}
		c.undefinedHints()
		return nil, c.errs
	}
	// The names' entries are not read again: the collector may take them
	// back while the tape is built, the largest allocation of the compile.
	c.ents = nil
	p.tape = c.b.Tape(c.outs...)
	c.finishVectors()
	c.warns.Sort()
	p.Warnings = c.warns
	return p, nil
}

func isBuiltinName(name string) bool {
	return builtinNames()[name]
}

// builtinNames is the set of built-in names: pi and the functions.
var builtinNames = sync.OnceValue(func() map[string]bool {
	m := map[string]bool{"pi": true}
	for _, f := range Functions {
		m[f.Name] = true
	}
	for _, f := range VectorFunctions {
		m[f.Name] = true
	}
	return m
})

// compileInput checks an input declaration and adds its slot to the tape.
func (c *compiler) compileInput(d *Decl) {
	if c.vectorInput(d) {
		return
	}
	s, f := d.Input, d.File
	c.cur = d.Name
	in := c.newInput()
	*in = Input{Name: d.Name, Pos: f.Position(s.Name.Pos()), index: len(c.prog.Inputs), u: c.intern(unit.One()), file: f}
	c.prog.Inputs = append(c.prog.Inputs, in)
	c.prog.setName(d.Name, in.index)
	e := &c.ents[d.idx]
	e.st = done
	if s.Unit != nil {
		u, ok := c.parseUnit(f, s.Unit)
		if ok {
			in.u = c.intern(u) // inputs in one unit share it
			in.Unit = s.Unit.Text
		}
	}
	// The value: a constant, read in the input's unit when written without one.
	v, ok := c.constant(f, s.Value, *in.u, "the value of input "+d.Name)
	in.Value = v
	c.setPos(f, s.Name.Pos())
	slot := c.b.Input()
	// The input's unit factor is folded into the products that use it
	// (val.sc), or multiplied in where a sum or a function needs base units.
	iv := val{slot: slot, dim: in.u.Dim, hint: in.u, bad: !ok, sc: in.u.Factor}
	if c.noFold {
		iv.slot, iv.sc = c.base(iv), 1
	}
	e.setVal(iv)
	// Range and distribution.
	if s.Dist != nil {
		c.compileDist(f, in, s.Dist)
	}
	switch {
	case s.Range != nil:
		r := s.Range
		if r.Low.Percent {
			in.Source = RangePercent
			a, b := in.Value*(1+r.Low.Value/100), in.Value*(1+r.High.Value/100)
			in.Low, in.High = math.Min(a, b), math.Max(a, b)
			if r.Low.Value < -100 {
				c.errorf(f, r.Low.ValuePos, "range %s would change the sign of %s: a percentage below -100%% is not a plausible range", r.Low.Lit, d.Name)
			}
			if in.Value == 0 {
				c.errorf(f, r.Lparen, "a percentage range of a zero value is empty: give %s a range of values instead, such as (-1..1)", d.Name)
			}
		} else {
			in.Source = RangeExplicit
			in.Low, in.High = r.Low.Value, r.High.Value
			if ok && (in.Value < in.Low || in.Value > in.High) {
				c.errorf(f, r.Lparen, "range %s..%s does not contain the value %s of %s", r.Low.Lit, r.High.Lit, unit.Format(in.Value, in.Unit), d.Name)
			}
		}
		if in.Low == in.High && in.Value != 0 {
			c.errorf(f, r.Lparen, "range of %s is empty: its low and high ends are equal", d.Name)
		}
	default:
		in.unstatedRange()
	}
	if in.Dist != nil {
		lo, hi := in.Dist.Support()
		switch p := in.Dist.CDF(in.Value); {
		case !ok:
		case in.Value < lo || in.Value > hi:
			c.errorf(f, s.Dist.Pos(), "the value %s of %s lies outside its distribution's support [%s, %s]", unit.Format(in.Value, in.Unit), d.Name, unit.Format(lo, in.Unit), unit.Format(hi, in.Unit))
		case in.Source == RangeDistribution && (in.Value < in.Low || in.Value > in.High):
			c.errorf(f, s.Dist.Pos(), "range %s..%s (the 10th to 90th percentiles of its distribution) does not contain the value %s of %s: check the value and the parameters, or give %s a range of its own", unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit), unit.Format(in.Value, in.Unit), d.Name, d.Name)
		case p < 0.01 || p > 0.99:
			// Legal, but most often a slip: a baseline far out in the tail.
			c.warnf(f, s.Dist.Pos(), "the value %s of %s lies in the far tail of its distribution (percentile %s): check the value or the parameters", unit.Format(in.Value, in.Unit), d.Name, unit.Format(100*p, ""))
		}
	}
}

func (c *compiler) compileDist(f *syntax.File, in *Input, ds *syntax.DistSpec) {
	info := LookupDist(ds.Name.Name)
	if info == nil {
		names := make([]string, len(Distributions))
		for i, d := range Distributions {
			names[i] = d.Name
		}
		hint := syntax.DidYouMean(ds.Name.Name, names)
		if hint == "" {
			hint = " (known: " + strings.Join(names, ", ") + ")"
		}
		c.errorf(f, ds.Name.Pos(), "unknown distribution %s%s", ds.Name.Name, hint)
		return
	}
	if len(ds.Args) != len(info.Params) {
		c.errorf(f, ds.Lparen, "%s takes %d parameters (%s), got %d", info.Name, len(info.Params), strings.Join(info.Params, ", "), len(ds.Args))
		return
	}
	params := make([]float64, len(ds.Args))
	for i, a := range ds.Args {
		v, ok := c.constant(f, a, *in.u, info.Name+" parameter "+info.Params[i])
		if !ok {
			return
		}
		params[i] = v
	}
	d, err := NewDist(info.Name, params)
	if err != nil {
		c.errorf(f, ds.Name.Pos(), "%v", err)
		return
	}
	in.Dist = d
}

// constant evaluates x, which must be constant, and returns it in unit u. A
// dimensionless number is read as a value in u.
func (c *compiler) constant(f *syntax.File, x syntax.Expr, u unit.Unit, what string) (float64, bool) {
	c.what = what
	v := c.expr(f, x, true)
	if v.bad {
		return 0, false
	}
	if !v.konst || v.boolean {
		c.errorf(f, x.Pos(), "%s must be a constant number%s", what, c.vectorHint(v))
		return 0, false
	}
	switch {
	case v.dim.IsDimensionless() && !hasUnit(x):
		return v.c, true
	case v.dim.Equal(u.Dim):
		return v.c / u.Factor, true
	}
	pos := x.Pos()
	if n, ok := x.(*syntax.NumberLit); ok && n.Unit != nil {
		pos = n.Unit.Pos()
	}
	if u.Dim.IsDimensionless() {
		c.errorf(f, pos, "%s is in [%s] but must be a plain number (no unit)", what, unitText(c.shown(x, v)))
		return 0, false
	}
	c.errorf(f, pos, "%s is in [%s] but must be in [%s] (%s vs %s)", what, orOne(unitText(c.shown(x, v))), unitText(u), dimName(v.dim), dimName(u.Dim))
	return 0, false
}

// hasUnit reports whether a unit appears anywhere in x.
func hasUnit(x syntax.Expr) bool {
	found := false
	syntax.Walk(x, func(e syntax.Expr) bool {
		if n, ok := e.(*syntax.NumberLit); ok && n.Unit != nil {
			found = true
		}
		return !found
	})
	return found
}

func (c *compiler) parseUnit(f *syntax.File, ul *syntax.UnitLit) (unit.Unit, bool) {
	if c.unitMemoRates != c.rates {
		c.unitMemo, c.unitMemoRates = nil, c.rates
	}
	if u, ok := c.unitMemo[ul.Text]; ok {
		return u, true
	}
	u, err := unit.Parse(ul.Text)
	if err != nil {
		pos := ul.Lbrack + 1
		msg := err.Error()
		if ue, ok := err.(*unit.Error); ok {
			// Skip leading blanks the parser trimmed from Text.
			raw := f.Src[f.Offset(ul.Lbrack)+1:]
			lead := len(raw) - len(strings.TrimLeft(string(raw), " \t"))
			pos += syntax.Pos(lead + ue.Offset)
			msg = ue.Msg
		}
		c.errorf(f, pos, "%s", msg)
		return unit.One(), false
	}
	u = u.In(c.rates)
	if c.unitMemo == nil {
		c.unitMemo = map[string]unit.Unit{}
	}
	c.unitMemo[ul.Text] = u
	return u, true
}

// formula compiles the formula name (and, first, everything it uses). ref is the
// reference that led here, for cycle messages.
func (c *compiler) formula(name string, f *syntax.File, s *syntax.FormulaStmt, ref *syntax.Ident) val {
	return c.formulaAt(c.entry(name), name, f, s, ref)
}

// formulaAt is formula with the name's entry e.
func (c *compiler) formulaAt(e *entry, name string, f *syntax.File, s *syntax.FormulaStmt, ref *syntax.Ident) val {
	switch e.st {
	case done:
		return e.v
	case visiting:
		i := len(c.stack) - 1
		for i > 0 && c.stack[i] != name {
			i--
		}
		path := append(append([]string{}, c.stack[i:]...), name)
		c.errorf(c.curFile, ref.Pos(), "cycle: %s", strings.Join(path, " -> "))
		return val{bad: true}
	}
	e.st = visiting
	c.stack = append(c.stack, name)
	saveFile, saveCur, saveNumbered := c.curFile, c.cur, c.numbered
	c.curFile, c.cur, c.numbered = f, name, parsedFrom(f, s.Name)

	nerrs := len(c.errs)
	v := c.expr(f, s.Value, false)
	fm := c.newFormula()
	fm.Name = name
	declared := s.Unit
	suffix := ""         // the unit in brackets, when it belongs to the last number
	var numberFix string // the number reading, offered when the declared unit fails
	if declared != nil && !v.boolean {
		v, declared, numberFix = c.trailingBracket(f, s, v, nerrs)
		if declared == nil {
			suffix = " [" + s.Unit.Text + "]"
		}
	}
	fm.setSourceExpr(f, s.Name.Pos(), s.Value.Pos(), s.Value, suffix)
	switch {
	case v.bad:
	case v.boolean:
		c.errorf(f, s.Value.Pos(), "%s is a condition (true or false), not a number: use it inside if(...)", name)
		v.bad = true
	case declared != nil:
		u, ok := c.parseUnit(f, declared)
		if ok && !u.Dim.Equal(v.dim) {
			c.errorf(f, declared.Pos(), "%s is declared [%s] (%s) but its formula gives %s (%s)%s", name, declared.Text, dimName(u.Dim), orPlain(unitText(c.shown(s.Value, v))), dimName(v.dim), numberFix)
			v.bad = true
		}
		fm.u, fm.Unit, fm.Declared = c.intern(u), declared.Text, true
	default:
		fm.u = c.intern(c.display(v))
		fm.Unit = unitText(*fm.u)
	}
	if !v.bad && !c.vectorFormula(fm, &v, s.Value.Pos()) {
		if v.konst {
			// Keep a slot of its own so the formula has a position on the tape.
			c.setPos(f, s.Name.Pos())
		}
		fm.out = len(c.prog.Formulas)
		fm.sc = v.scale()
		c.prog.Formulas = append(c.prog.Formulas, fm)
		c.prog.setName(name, -1-fm.out)
		c.outs = append(c.outs, v.slot)
		v.hint = fm.u
	}
	e.setVal(v)
	e.st = done
	c.stack = c.stack[:len(c.stack)-1]
	c.curFile, c.cur, c.numbered = saveFile, saveCur, saveNumbered
	return v
}

// parsedFrom reports whether id, the name of a statement, is numbered and
// stands at its position in f's text: whether the statement was parsed
// from f, whose numbers its names' are. (A statement declared with a file
// it was not parsed from is compiled by its names' text.)
func parsedFrom(f *syntax.File, id *syntax.Ident) bool {
	if id.ID <= 0 || int(id.ID) > f.NameCount() {
		return false
	}
	off := f.Offset(id.NamePos)
	return off >= 0 && off+len(id.Name) <= len(f.Src) && string(f.Src[off:off+len(id.Name)]) == id.Name
}

// newFormula returns a new Formula, taken from blocks of formulaBlock: one
// allocation a block rather than one a formula.
func (c *compiler) newFormula() *Formula {
	if len(c.fblock) == 0 {
		c.fblock = make([]Formula, min(formulaBlock, len(c.ents)))
	}
	fm := &c.fblock[0]
	c.fblock = c.fblock[1:]
	return fm
}

// newInput returns a new Input, taken from blocks as newFormula's.
func (c *compiler) newInput() *Input {
	if len(c.iblock) == 0 {
		c.iblock = make([]Input, min(formulaBlock, len(c.ents)))
	}
	in := &c.iblock[0]
	c.iblock = c.iblock[1:]
	return in
}

// formulaBlock is the most formulas newFormula allocates at once (a
// small model takes as many as it has names).
const formulaBlock = 256

// display returns the unit a value is best shown in.
func (c *compiler) display(v val) unit.Unit {
	if v.hint != nil && v.hint.Dim.Equal(v.dim) {
		return *v.hint
	}
	return simplest(v.dim)
}

func unitText(u unit.Unit) string {
	if u.Dim.IsDimensionless() && u.Factor == 1 {
		return ""
	}
	return u.String()
}

func dimName(d unit.Dim) string {
	if d.IsDimensionless() {
		return "dimensionless"
	}
	return d.Name()
}

// expr compiles x. In a constant context (input values and distribution
// parameters) names other than pi are errors.
func (c *compiler) expr(f *syntax.File, x syntax.Expr, constCtx bool) val {
	switch x := x.(type) {
	case *syntax.NumberLit:
		v := x.Value
		d := unit.Dim{}
		var hint *unit.Unit
		ul := x.Unit
		if ul == nil {
			ul = c.numberUnit[x]
		}
		if ul != nil {
			u, ok := c.parseUnit(f, ul)
			if !ok {
				return val{bad: true}
			}
			v *= u.Factor
			d = u.Dim
			hint = c.intern(u)
		}
		return val{slot: c.b.Const(v), dim: d, konst: true, c: v, hint: hint}
	case *syntax.ParenExpr:
		return c.expr(f, x.X, constCtx)
	case *syntax.StringLit:
		return val{tx: &textVal{lit: x}}
	case *syntax.Ident:
		return c.ident(f, x, constCtx)
	case *syntax.UnaryExpr:
		v := c.expr(f, x.X, constCtx)
		if v.bad || c.notText(f, x.X, v) {
			return val{bad: true}
		}
		c.setPos(f, x.OpPos)
		switch x.Op {
		case syntax.NOT:
			if !v.boolean {
				c.errorf(f, x.X.Pos(), "'not' needs a condition such as a < b, found a number")
				return val{bad: true}
			}
			return val{slot: c.b.Unary(tape.OpNot, v.slot), boolean: true}
		case syntax.SUB:
			if v.boolean {
				c.errorf(f, x.OpPos, "cannot negate a condition: use not")
				return val{bad: true}
			}
			return val{slot: c.b.Unary(tape.OpNeg, v.slot), dim: v.dim, hint: v.hint, konst: v.konst, c: -v.c, sc: v.sc}
		}
		return v
	case *syntax.BinaryExpr:
		if v, ok := c.longSum(f, x, constCtx); ok {
			return v
		}
		return c.binary(f, x, constCtx)
	case *syntax.CallExpr:
		return c.call(f, x, constCtx)
	}
	c.errorf(f, x.Pos(), "unexpected expression")
	return val{bad: true}
}

func (c *compiler) ident(f *syntax.File, x *syntax.Ident, constCtx bool) val {
	if c.cycleRefs[x] {
		return val{bad: true} // reported by formulaOrder
	}
	if i := c.declIdx(f, x); i >= 0 && !constCtx {
		// A declared input or formula: what the long way below does for
		// it, without looking its name up.
		e := &c.ents[i]
		if e.st == done && !e.v.bad {
			return e.v
		}
		d := c.list[i]
		if d.Input != nil {
			return e.v
		}
		if v := c.formulaAt(e, x.Name, d.File, d.Formula, x); !v.bad {
			return v
		}
		return val{bad: true}
	}
	if x.Name == "pi" {
		return val{slot: c.b.Const(math.Pi), konst: true, c: math.Pi}
	}
	v, d, ok := c.vecIdentDecl(f, x, constCtx)
	if ok {
		return v
	}
	if constCtx {
		msg := fmt.Sprintf("%s must be a number, not the name %s", c.what, x.Name)
		if d != nil && strings.HasPrefix(c.what, "the value of input") {
			msg += ": compute it in a formula instead"
		}
		c.errorf(f, x.Pos(), "%s", msg)
		return val{bad: true}
	}
	if d == nil {
		if lookupFunc(x.Name) != nil {
			c.errorf(f, x.Pos(), "%s is a function: call it as %s(...)", x.Name, x.Name)
		} else {
			c.undefined(f, x)
		}
		return val{bad: true}
	}
	e := &c.ents[d.idx]
	if d.Input != nil {
		return e.v
	}
	v = c.formulaAt(e, x.Name, d.File, d.Formula, x)
	if v.bad {
		return val{bad: true}
	}
	return v
}

// declIdx returns the index (Decl.idx) of the input or formula that x, a
// name of file f, refers to, or -1 when x is anything else: pi, an element
// or a column, a table or periods, a name not declared, a name not
// numbered by the parser (ident then takes the long way). A name's number
// is resolved once a file, by its text, and after that by slice index.
func (c *compiler) declIdx(f *syntax.File, x *syntax.Ident) int32 {
	if x.ID <= 0 || !c.numbered {
		return -1
	}
	if f != c.resFile {
		ids, ok := c.res[f]
		if !ok {
			ids = make([]int32, f.NameCount()+1)
			if c.res == nil {
				c.res = map[*syntax.File][]int32{}
			}
			c.res[f] = ids
		}
		c.resFile, c.resIDs = f, ids
	}
	if int(x.ID) >= len(c.resIDs) {
		return -1
	}
	r := c.resIDs[x.ID] // 0: not resolved yet; -1: the long way; else Decl.idx+1
	if r == 0 {
		if ids := c.m.byID[f]; int(x.ID) < len(ids) && ids[x.ID] != 0 && c.list[ids[x.ID]-1].Name == x.Name {
			// A name its own file declares: the declaration's index is
			// known, without a lookup (and its name, one string with
			// x's, compares by pointer).
			r = c.resolveDecl(x.Name, c.list[ids[x.ID]-1])
		} else {
			r = c.resolve(x.Name)
		}
		c.resIDs[x.ID] = r
	}
	return r - 1
}

// resolve returns declIdx's entry for a name: Decl.idx+1 for a declared
// input or formula, else -1.
func (c *compiler) resolve(name string) int32 {
	if name == "pi" || strings.IndexByte(name, '[') >= 0 || strings.IndexByte(name, '.') >= 0 {
		return -1
	}
	return c.resolveDecl(name, c.decls[name])
}

// resolveDecl is resolve with name's declaration d (nil when there is none).
func (c *compiler) resolveDecl(name string, d *Decl) int32 {
	if d == nil || d.Input == nil && d.Formula == nil || name == "pi" || strings.IndexByte(name, '[') >= 0 || strings.IndexByte(name, '.') >= 0 {
		return -1
	}
	return d.idx + 1
}

// undefined reports x as undefined; the "did you mean" is added to the
// errors that are kept, at the end (undefinedHints).
func (c *compiler) undefined(f *syntax.File, x *syntax.Ident) {
	c.errorf(f, x.Pos(), "undefined: %s", x.Name)
	if c.undef == nil {
		c.undef = map[*syntax.Error]string{}
	}
	c.undef[c.errs[len(c.errs)-1]] = x.Name
}

func (c *compiler) binary(f *syntax.File, x *syntax.BinaryExpr, constCtx bool) val {
	a := c.expr(f, x.X, constCtx)
	b := c.expr(f, x.Y, constCtx)
	if a.bad || b.bad {
		return val{bad: true}
	}
	c.setPos(f, x.OpPos)
	if a.tx != nil || b.tx != nil {
		return c.textBinary(f, x, a, b)
	}
	op := x.Op
	switch op {
	case syntax.AND, syntax.OR:
		if !a.boolean || !b.boolean {
			pos := x.X.Pos()
			if a.boolean {
				pos = x.Y.Pos()
			}
			c.errorf(f, pos, "'%s' joins conditions such as a < b, found a number", op)
			return val{bad: true}
		}
		o := tape.OpAnd
		if op == syntax.OR {
			o = tape.OpOr
		}
		return val{slot: c.b.Binary(o, a.slot, b.slot), boolean: true}
	}
	if a.boolean || b.boolean {
		pos := x.X.Pos()
		if !a.boolean {
			pos = x.Y.Pos()
		}
		c.errorf(f, pos, "a condition (true or false) cannot be used as a number here: use if(condition, a, b)")
		return val{bad: true}
	}
	switch op {
	case syntax.ADD, syntax.SUB, syntax.EQL, syntax.NEQ, syntax.LSS, syntax.LEQ, syntax.GTR, syntax.GEQ:
		if !a.dim.Equal(b.dim) {
			verb := map[syntax.Token]string{syntax.ADD: "add", syntax.SUB: "subtract"}[op]
			if verb == "" {
				verb = "compare"
			}
			c.errorf(f, x.OpPos, "cannot %s %s and %s: units %s and %s do not match (%s vs %s)%s",
				verb, syntax.Brief(x.X), syntax.Brief(x.Y), orOne(unitText(c.shown(x.X, a))), orOne(unitText(c.shown(x.Y, b))), dimName(a.dim), dimName(b.dim), rateHint(a.dim, b.dim))
			return val{bad: true}
		}
	}
	hint := a.hint
	if hint == nil {
		hint = b.hint
	}
	switch op {
	case syntax.ADD, syntax.SUB:
		o := tape.OpAdd
		cv := a.c + b.c
		if op == syntax.SUB {
			o, cv = tape.OpSub, a.c-b.c
		}
		sa, sb, sc := c.alike(a, b)
		return val{slot: c.b.Binary(o, sa, sb), dim: a.dim, hint: hint, konst: a.konst && b.konst, c: cv, sc: sc}
	case syntax.MUL, syntax.QUO:
		d := a.dim.Mul(b.dim)
		o, cv := tape.OpMul, a.c*b.c
		if op == syntax.QUO {
			d, o, cv = a.dim.Div(b.dim), tape.OpDiv, a.c/b.c
			if b.konst && b.c == 0 {
				c.errorf(f, x.Y.Pos(), "division by zero")
				return val{bad: true}
			}
		}
		// Scaling by a plain number keeps the other side's unit; a product or
		// quotient of two quantities is shown in the units they came in.
		var h *unit.Unit
		switch {
		case b.dim.IsDimensionless() && b.hint == nil:
			h = a.hint
		case a.dim.IsDimensionless() && a.hint == nil && op == syntax.MUL:
			h = b.hint
		case a.hint != nil && b.hint != nil:
			h = combinedUnit(a.hint, b.hint, op == syntax.MUL)
		}
		sa, sb, sc := c.product(a, b, op == syntax.MUL)
		return val{slot: c.b.Binary(o, sa, sb), dim: d, hint: h, konst: a.konst && b.konst, c: cv, sc: sc}
	case syntax.POW:
		if !b.dim.IsDimensionless() {
			c.errorf(f, x.Y.Pos(), "an exponent must be dimensionless, found %s", unitText(c.shown(x.Y, b)))
			return val{bad: true}
		}
		d := unit.Dim{}
		if !a.dim.IsDimensionless() {
			if !b.konst {
				c.errorf(f, x.Y.Pos(), "the exponent of a quantity with a unit (%s) must be a constant", unitText(c.shown(x.X, a)))
				return val{bad: true}
			}
			num, den, ok := rational(b.c)
			if !ok {
				c.errorf(f, x.Y.Pos(), "cannot raise %s to the power %s: use a whole number or a simple fraction", unitText(c.shown(x.X, a)), unit.Format(b.c, ""))
				return val{bad: true}
			}
			var err error
			if d, err = a.dim.Pow(num, den); err != nil {
				c.errorf(f, x.OpPos, "%v", err)
				return val{bad: true}
			}
		}
		return val{slot: c.b.Binary(tape.OpPow, c.base(a), c.base(b)), dim: d, konst: a.konst && b.konst, c: math.Pow(a.c, b.c)}
	}
	cmp := map[syntax.Token]tape.Op{syntax.EQL: tape.OpEq, syntax.NEQ: tape.OpNe, syntax.LSS: tape.OpLt, syntax.LEQ: tape.OpLe, syntax.GTR: tape.OpGt, syntax.GEQ: tape.OpGe}
	sa, sb, _ := c.alike(a, b)
	return val{slot: c.b.Binary(cmp[op], sa, sb), boolean: true}
}

// orPlain names the unit of a value for messages: "a plain number" when
// there is none.
func orPlain(s string) string {
	if s == "" {
		return "a plain number"
	}
	return s
}

func orOne(s string) string {
	if s == "" {
		return "1"
	}
	return s
}

// rational returns num/den = v for small denominators.
func rational(v float64) (num, den int, ok bool) {
	for den = 1; den <= 12; den++ {
		n := v * float64(den)
		if r := math.Round(n); math.Abs(n-r) < 1e-9 && math.Abs(r) < 1e6 {
			return int(r), den, true
		}
	}
	return 0, 0, false
}

func (c *compiler) call(f *syntax.File, x *syntax.CallExpr, constCtx bool) val {
	if v, ok := c.vecCall(f, x, constCtx); ok {
		return v
	}
	name := x.Fun.Name
	info := lookupFunc(name)
	if info == nil {
		if c.decls[name] != nil {
			c.errorf(f, x.Fun.Pos(), "%s is not a function: write %s * (...) to multiply", name, name)
			return val{bad: true}
		}
		var cands []string
		for _, fn := range Functions {
			cands = append(cands, fn.Name)
		}
		c.errorf(f, x.Fun.Pos(), "unknown function %s%s", name, syntax.DidYouMean(name, cands))
		return val{bad: true}
	}
	variadic := info.Variadic
	if (variadic && len(x.Args) < info.Args) || (!variadic && len(x.Args) != info.Args) {
		want := fmt.Sprintf("%d", info.Args)
		if variadic {
			want = fmt.Sprintf("at least %d", info.Args)
		}
		c.errorf(f, x.Lparen, "%s takes %s arguments, got %d", name, want, len(x.Args))
		return val{bad: true}
	}
	args := make([]val, len(x.Args))
	for i, a := range x.Args {
		args[i] = c.expr(f, a, constCtx)
		if args[i].bad || c.notText(f, a, args[i]) {
			return val{bad: true}
		}
	}
	rule := info.Units
	for i, a := range args {
		wantBool := rule == UnitsIf && i == 0
		if a.boolean != wantBool {
			if wantBool {
				c.errorf(f, x.Args[i].Pos(), "the first argument of if must be a condition such as a < b")
			} else {
				c.errorf(f, x.Args[i].Pos(), "a condition cannot be an argument of %s here", name)
			}
			return val{bad: true}
		}
	}
	c.setPos(f, x.Fun.Pos())
	res := val{}
	switch rule {
	case UnitsDimensionless:
		for i, a := range args {
			if !a.dim.IsDimensionless() {
				c.errorf(f, x.Args[i].Pos(), "%s needs a dimensionless argument, found %s: divide by a reference value, e.g. %s / 1 [%s]",
					name, unitText(c.shown(x.Args[i], a)), syntax.Brief(x.Args[i]), unitText(c.shown(x.Args[i], a)))
				return val{bad: true}
			}
		}
	case UnitsSame, UnitsIf:
		first := 0
		if rule == UnitsIf {
			first = 1
		}
		for i := first + 1; i < len(args); i++ {
			if !args[i].dim.Equal(args[first].dim) {
				c.errorf(f, x.Args[i].Pos(), "arguments of %s must share a unit: %s vs %s", name, orOne(unitText(c.shown(x.Args[first], args[first]))), orOne(unitText(c.shown(x.Args[i], args[i]))))
				return val{bad: true}
			}
		}
		res.dim, res.hint = args[first].dim, args[first].hint
		if res.hint == nil && len(args) > first+1 {
			res.hint = args[first+1].hint
		}
	case UnitsSqrt:
		d, err := args[0].dim.Pow(1, 2)
		if err != nil {
			c.errorf(f, x.Args[0].Pos(), "sqrt of %s: %v", unitText(c.shown(x.Args[0], args[0])), err)
			return val{bad: true}
		}
		res.dim = d
	case UnitsFirst:
		for i := 1; i < len(args); i++ {
			if !args[i].dim.IsDimensionless() {
				c.errorf(f, x.Args[i].Pos(), "argument %d of %s must be dimensionless, found %s", i+1, name, unitText(c.shown(x.Args[i], args[i])))
				return val{bad: true}
			}
		}
		res.dim, res.hint = args[0].dim, args[0].hint
	}
	// Arguments in base units, except where one factor common to every
	// numeric argument can pass through (min, max, the branches of if).
	ss := make([]tape.Slot, len(args))
	for i, a := range args {
		ss[i] = c.base(a)
	}
	if rule == UnitsSame || rule == UnitsIf {
		first := 0
		if rule == UnitsIf {
			first = 1
		}
		sc := args[first].scale()
		common := true
		for _, a := range args[first:] {
			common = common && a.scale() == sc
		}
		if common {
			for i := first; i < len(args); i++ {
				ss[i] = args[i].slot
			}
			res.sc = sc
		}
	}
	switch {
	case variadic:
		res.slot = c.b.Fold(info.Op, ss...)
	case len(args) == 1:
		res.slot = c.b.Unary(info.Op, ss[0])
	case len(args) == 2:
		res.slot = c.b.Binary(info.Op, ss[0], ss[1])
	default:
		res.slot = c.b.Call(info.Op, ss...)
	}
	if v, ok := c.b.IsConst(res.slot); ok {
		res.konst, res.c = true, v
	}
	return res
}

// scale returns the unit factor v's slot still has to be multiplied by.
func (v val) scale() float64 {
	if v.sc == 0 {
		return 1
	}
	return v.sc
}

// base returns v's slot in base units: the slot itself, or the slot times
// its pending unit factor.
func (c *compiler) base(v val) tape.Slot {
	if sc := v.scale(); sc != 1 && !v.boolean {
		return c.b.Binary(tape.OpMul, v.slot, c.b.Const(sc))
	}
	return v.slot
}

// product returns the slots to multiply (mul) or divide, and the factor
// their result still needs, folding pending unit factors where that saves
// nodes: factors that cancel (hours times $/h) cost nothing, and a factor
// beside a constant is multiplied into the constant. Otherwise each side is
// taken in base units: for an input or a formula, one multiplication that
// every use shares, fewer nodes than a factor carried into every product
// that uses it and multiplied in at every sum.
func (c *compiler) product(a, b val, mul bool) (x, y tape.Slot, sc float64) {
	sc = a.scale() * b.scale()
	if !mul {
		sc = a.scale() / b.scale()
	}
	switch {
	case sc == 1 || math.Abs(sc-1) <= 4e-16:
		// A product of factors that cancel to the last bit or two: the
		// stated tolerance of folding.
		return a.slot, b.slot, 1
	case b.konst && !a.konst:
		k := b.c / a.scale()
		if mul {
			k = b.c * a.scale()
		}
		return a.slot, c.b.Const(k), 1
	case a.konst && !b.konst:
		k := a.c * b.scale()
		if !mul {
			k = a.c / b.scale()
		}
		return c.b.Const(k), b.slot, 1
	}
	return c.base(a), c.base(b), 1
}

// alike returns the slots of a and b in one scale, for a sum, a difference
// or a comparison: as they are when their pending factors are equal (the
// factor, positive, passes through), else both in base units.
func (c *compiler) alike(a, b val) (x, y tape.Slot, sc float64) {
	if a.scale() == b.scale() {
		return a.slot, b.slot, a.scale()
	}
	return c.base(a), c.base(b), 1
}

func lookupFunc(name string) *FuncInfo {
	for i := range Functions {
		if Functions[i].Name == name {
			return &Functions[i]
		}
	}
	return nil
}

// Check evaluates every formula at the baseline and returns the first domain
// error (a log of a negative number, a division by zero, an overflow), placed at
// its formula with the input values that led there.
func (p *Program) Check() error {
	if len(p.Formulas) == 0 {
		return nil
	}
	t := p.tape.Clone()
	x := p.Baseline()
	if err := t.Forward(x); err != nil {
		return p.evalError(err, x)
	}
	// A value finite in base units can overflow in its display unit.
	for _, f := range p.Formulas {
		if f.tape != nil || f.u.Factor == 0 {
			continue
		}
		sc := f.sc
		if sc == 0 {
			sc = 1
		}
		fn := &Fn{prog: p, tape: t, f: f, scale: sc / f.u.Factor}
		if _, err := fn.scaled(t.Output(f.out), x); err != nil {
			return err
		}
	}
	return nil
}

// Constant evaluates x, a constant expression such as 160000, 72 [min] or
// 1.5 * 2 [h], in the unit written as want ("" for dimensionless): a plain
// number is read in want; a number with a unit is converted to it. Errors
// name the line and column; what names the value in messages.
func Constant(f *syntax.File, x syntax.Expr, want, what string) (float64, error) {
	return constantIn(nil, f, x, want, what)
}

// constantIn is Constant under the exchange rates r.
func constantIn(r *unit.Rates, f *syntax.File, x syntax.Expr, want, what string) (float64, error) {
	c := newScratchCompiler()
	c.rates = r
	u := unit.One()
	if want != "" {
		var err error
		if u, err = unit.Parse(want); err != nil {
			return 0, fmt.Errorf("%s: %v", what, err)
		}
		u = u.In(r)
	}
	v, ok := c.constant(f, x, u, what)
	if !ok {
		return 0, c.errs[0]
	}
	return v, nil
}

// newScratchCompiler returns a compiler with no model, for constants.
func newScratchCompiler() *compiler {
	c := &compiler{m: NewModel(), prog: &Program{},
		decls: map[string]*Decl{}}
	c.b = newVBuilder(c, 0)
	return c
}

// combineUnits picks the unit to show a product (or quotient) of quantities
// in, given the units they were written in: the simplest unit of the result's
// dimension when it has the same scale (h times $/h is $), else a single named
// unit of that scale (kW times h is kWh), else the units composed when that
// reads simply (h times h is h^2, km per h is km/h), else nil (the simplest
// unit, whatever its scale).
func combineUnits(a, b *unit.Unit, mul bool) *unit.Unit {
	q := a.Div(*b)
	if mul {
		q = a.Mul(*b)
	}
	same := func(u unit.Unit) bool { return math.Abs(u.Factor-q.Factor) <= 1e-12*math.Abs(q.Factor) }
	if s := simplest(q.Dim); same(s) {
		return &s
	}
	if name, ok := namedUnit(q); ok {
		if u, err := unit.Parse(name); err == nil {
			return &u
		}
	}
	if t := q.String(); !strings.Contains(t, "*") && strings.Count(t, "/") <= 1 {
		return &q
	}
	return nil
}
