package sens

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"sync"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Vectors in the compiler: a value over the rows of a table, over a range
// of periods, or over groups, compiled to loop nodes of the tape
// (tape.Builder.Map and the reductions). Every scalar operation and
// function applies element by element, a scalar broadcast to every
// element; sum, mean, count, min, max and dot reduce a vector to a scalar;
// where keeps the rows a condition on constant data picks, and subtotal
// sums a vector by the values of a column.

// ---- domains

// domain is what a vector is over: the keys of its elements, in order.
type domain struct {
	name  string // "parts", "year", "parts where ...", "category"
	noun  string // "row", "period", "group"
	keys  []string
	table *Table // rows of this table; nil for periods and groups
	rows  []int  // the table row of each element; nil when element i is row i

	once  sync.Once
	index map[string]int
}

func (d *domain) size() int { return len(d.keys) }

// describe names the domain for messages: "parts (312 rows)".
func (d *domain) describe() string {
	return d.name + " (" + unit.Format(float64(d.size()), "") + " " + plural(d.size(), d.noun) + ")"
}

func plural(n int, noun string) string {
	if n == 1 {
		return noun
	}
	return noun + "s"
}

// find returns the element of key k.
func (d *domain) find(k string) (int, bool) {
	d.once.Do(func() {
		if d.table != nil && d.rows == nil {
			d.index = d.table.keyRow
			return
		}
		d.index = make(map[string]int, len(d.keys))
		for i, k := range d.keys {
			d.index[k] = i
		}
	})
	i, ok := d.index[k]
	return i, ok
}

// row returns the table row of element i.
func (d *domain) row(i int) int {
	if d.rows == nil {
		return i
	}
	return d.rows[i]
}

// sameDomain reports whether a and b have the same elements in the same
// order: one domain, or two with the same keys (a table keyed by year and
// a range of periods, say).
func sameDomain(a, b *domain) bool {
	if a == b {
		return true
	}
	if a == nil || b == nil || len(a.keys) != len(b.keys) {
		return false
	}
	for i := range a.keys {
		if a.keys[i] != b.keys[i] {
			return false
		}
	}
	return true
}

// vecCompiler is the compiler's state for vectors.
type vecCompiler struct {
	doms     map[tape.Slot]*domain // the domain of each vector handle
	named    map[string]*domain    // tables and periods by name
	columns  map[string]val        // compiled columns, "parts.qty"
	reported map[int]bool          // positions (setPos index) with a domain error reported
}

func (v *vecCompiler) init() {
	if v.doms == nil {
		v.doms = map[tape.Slot]*domain{}
		v.named = map[string]*domain{}
		v.columns = map[string]val{}
		v.reported = map[int]bool{}
	}
}

// ---- the builder

// vbuilder is the compiler's tape.Builder: an operation with a vector
// argument becomes an element-wise map, after a check that every vector
// argument is over the same rows.
type vbuilder struct {
	*tape.Builder
	c *compiler
}

// newVBuilder returns the compiler's builder, with room for about n nodes.
func newVBuilder(c *compiler, n int) *vbuilder {
	c.vec.init()
	b := &vbuilder{Builder: tape.NewBuilderSize(n), c: c}
	b.SetLoopMin(loopMin)
	return b
}

// loopMin is the shortest vector compiled to loop nodes (0:
// tape.DefaultLoopMin). The tests set it very large to compile the same
// model from scalar operations and compare.
var loopMin int

// domainOf returns the domain of a vector handle, or nil for a scalar.
func (b *vbuilder) domainOf(s tape.Slot) *domain {
	if _, ok := b.IsVec(s); !ok {
		return nil
	}
	return b.c.vec.doms[s]
}

// lift builds op over args as a map when an argument is a vector.
func (b *vbuilder) lift(op tape.Op, args ...tape.Slot) (tape.Slot, bool) {
	if len(b.c.vec.doms) == 0 {
		return 0, false // no vectors: domainOf is nil for every slot
	}
	var dom *domain
	for _, a := range args {
		d := b.domainOf(a)
		switch {
		case d == nil:
		case dom == nil:
			dom = d
		case !sameDomain(dom, d):
			b.c.domainMismatch(dom, d)
			return a, true
		}
	}
	if dom == nil {
		return 0, false
	}
	r := b.Map(op, args...)
	b.c.vec.doms[r] = dom
	if p := b.c.prog; p.pos.len() > 0 {
		if p.posDom == nil {
			p.posDom = map[int32]*domain{}
		}
		p.posDom[int32(p.pos.len()-1)] = dom
	}
	return r, true
}

func (b *vbuilder) Unary(op tape.Op, x tape.Slot) tape.Slot {
	if r, ok := b.lift(op, x); ok {
		return r
	}
	return b.Builder.Unary(op, x)
}

func (b *vbuilder) Binary(op tape.Op, x, y tape.Slot) tape.Slot {
	if r, ok := b.lift(op, x, y); ok {
		return r
	}
	return b.Builder.Binary(op, x, y)
}

func (b *vbuilder) Call(op tape.Op, args ...tape.Slot) tape.Slot {
	if r, ok := b.lift(op, args...); ok {
		return r
	}
	return b.Builder.Call(op, args...)
}

// Fold is a left fold of Binary, so that min(qty, 10) is a map.
func (b *vbuilder) Fold(op tape.Op, args ...tape.Slot) tape.Slot {
	acc := args[0]
	for _, a := range args[1:] {
		acc = b.Binary(op, acc, a)
	}
	return acc
}

// vector returns a new vector handle s over dom.
func (c *compiler) vector(s tape.Slot, dom *domain) tape.Slot {
	c.vec.doms[s] = dom
	return s
}

// isVec reports whether v is a numeric vector.
func (c *compiler) isVec(v val) bool {
	if v.bad || v.tx != nil {
		return false
	}
	_, ok := c.b.IsVec(v.slot)
	return ok
}

// domainMismatch reports vectors over different rows at the current
// position, once per position.
func (c *compiler) domainMismatch(a, b *domain) {
	k := c.prog.pos.len() - 1
	if k < 0 || c.vec.reported[k] {
		return
	}
	c.vec.reported[k] = true
	pe := c.prog.pos.at(k)
	c.errorf(pe.file, pe.pos, "vectors over different rows: one is over %s, the other over %s; element by element they must be over the same rows (filter with where, or sum first)",
		a.describe(), b.describe())
}

// ---- text

// textVal is text: a text column over a domain, or text in quotes.
type textVal struct {
	name string   // "parts.category"
	vals []string // a column's values, one per element of dom
	dom  *domain
	col  *Column
	lit  *syntax.StringLit
}

// notText reports (and returns true for) text where a number belongs.
func (c *compiler) notText(f *syntax.File, x syntax.Expr, v val) bool {
	if v.tx == nil {
		return false
	}
	c.errorf(f, x.Pos(), "%s", textMisuse(v.tx))
	return true
}

func textMisuse(t *textVal) string {
	if t.lit != nil {
		return "text in quotes is only compared with a text column, as in where(cost, parts.category == " + t.lit.Lit + ")"
	}
	msg := t.name + " is a text column: compare it with text, as in where(cost, " + t.name + " == \"...\"), or group by it with subtotal(cost, " + t.name + ")"
	if c, tb := t.col, t.dom.table; c != nil && c.notNumVal != "" && tb != nil {
		msg += fmt.Sprintf(" (it is text because row %s, line %d of %s, holds %q, which is not a number)", tb.Keys[c.notNum], tb.Line(c.notNum), tb.Path, c.notNumVal)
	}
	return msg
}

// textBinary compiles a comparison with text: a text column with text in
// quotes, or two text columns, with == or !=. The result is a condition
// known at compile time, one per row.
func (c *compiler) textBinary(f *syntax.File, x *syntax.BinaryExpr, a, b val) val {
	if x.Op != syntax.EQL && x.Op != syntax.NEQ {
		bad := a
		pos := x.X.Pos()
		if bad.tx == nil {
			bad, pos = b, x.Y.Pos()
		}
		if x.Op.IsComparison() {
			c.errorf(f, x.OpPos, "text is compared with == or !=, not %s", x.Op)
		} else {
			c.errorf(f, pos, "%s", textMisuse(bad.tx))
		}
		return val{bad: true}
	}
	if a.tx == nil || b.tx == nil {
		pos := x.X.Pos()
		if a.tx != nil {
			pos = x.Y.Pos()
		}
		c.errorf(f, pos, "cannot compare text with a number")
		return val{bad: true}
	}
	col, other := a.tx, b.tx
	if col.lit != nil {
		col, other = other, col
	}
	if col.lit != nil {
		c.errorf(f, x.Pos(), "both sides are text in quotes: compare a text column with text")
		return val{bad: true}
	}
	mask := make([]float64, len(col.vals))
	match := 0
	if other.lit != nil {
		for i, s := range col.vals {
			if s == other.lit.Value {
				mask[i] = 1
				match++
			}
		}
		if match == 0 {
			c.errorf(f, other.lit.Pos(), "no row of %s has %s %s%s", col.dom.name, col.name, other.lit.Lit, valuesHint(other.lit.Value, col.vals))
			return val{bad: true}
		}
	} else {
		if !sameDomain(col.dom, other.dom) {
			c.errorf(f, x.OpPos, "text columns over different rows: %s and %s", col.dom.describe(), other.dom.describe())
			return val{bad: true}
		}
		for i := range mask {
			if col.vals[i] == other.vals[i] {
				mask[i] = 1
			}
		}
	}
	if x.Op == syntax.NEQ {
		for i := range mask {
			mask[i] = 1 - mask[i]
		}
	}
	return val{slot: c.vector(c.b.VecConst(mask), col.dom), boolean: true}
}

// valuesHint suggests a value of vals close to s, or lists a few values.
func valuesHint(s string, vals []string) string {
	var distinct []string
	seen := map[string]bool{}
	for _, v := range vals {
		if !seen[v] {
			seen[v] = true
			distinct = append(distinct, v)
		}
	}
	if h := syntax.DidYouMean(s, distinct); h != "" {
		return h
	}
	if len(distinct) > 8 {
		return " (values include " + strings.Join(distinct[:8], ", ") + ", ...)"
	}
	return " (values: " + strings.Join(distinct, ", ") + ")"
}

// ---- names: columns, periods, elements

// vecIdent compiles a name that only vectors have: a column table.column,
// an element name[key], a table or periods name. ok is false for any other
// name.
func (c *compiler) vecIdent(f *syntax.File, x *syntax.Ident, constCtx bool) (val, bool) {
	v, _, ok := c.vecIdentDecl(f, x, constCtx)
	return v, ok
}

// vecIdentDecl is vecIdent that also returns, when it reports false, the
// declaration of x (nil if none), so that the caller need not look it up
// again.
func (c *compiler) vecIdentDecl(f *syntax.File, x *syntax.Ident, constCtx bool) (val, *Decl, bool) {
	name := x.Name
	if base, key, ok := splitElement(name); ok {
		return c.element(f, x, base, key, constCtx), nil, true
	}
	if strings.Contains(name, ".") {
		return c.column(f, x, name), nil, true
	}
	d := c.decls[name]
	switch {
	case d == nil:
		return val{}, nil, false
	case d.Table != nil:
		c.errorf(f, x.Pos(), "%s is a table: use one of its columns, %s.%s", name, name, d.Table.Columns[len(d.Table.Columns)-1].Name)
		return val{bad: true}, nil, true
	case d.Periods != nil:
		dom := c.domainNamed(f, x)
		if dom == nil {
			return val{bad: true}, nil, true
		}
		vals := make([]float64, dom.size())
		for i, k := range dom.keys {
			vals[i], _ = strconv.ParseFloat(k, 64)
		}
		return val{slot: c.vector(c.b.VecConst(vals), dom)}, nil, true
	}
	return val{}, d, false
}

// splitElement splits name[key] into name and key.
func splitElement(s string) (base, key string, ok bool) {
	i := strings.IndexByte(s, '[')
	if i <= 0 || !strings.HasSuffix(s, "]") {
		return "", "", false
	}
	return s[:i], s[i+1 : len(s)-1], true
}

// domainNamed returns the domain of the table or periods called id.
func (c *compiler) domainNamed(f *syntax.File, id *syntax.Ident) *domain {
	if dom, ok := c.vec.named[id.Name]; ok {
		return dom
	}
	d := c.decls[id.Name]
	var dom *domain
	switch {
	case d != nil && d.Table != nil:
		t := d.Table
		dom = &domain{name: id.Name, noun: "row", keys: t.Keys, table: t}
	case d != nil && d.Periods != nil:
		dom = c.periods(d)
	default:
		var names []string
		for _, n := range c.m.order {
			if dd := c.decls[n]; dd.Table != nil || dd.Periods != nil {
				names = append(names, n)
			}
		}
		hint := syntax.DidYouMean(id.Name, names)
		if hint == "" && len(names) > 0 {
			hint = " (tables and periods: " + strings.Join(names, ", ") + ")"
		}
		c.errorf(f, id.Pos(), "no table or periods named %s%s", id.Name, hint)
	}
	c.vec.named[id.Name] = dom
	return dom
}

// maxPeriods bounds a range of periods.
const maxPeriods = 100_000

// periods returns the domain of a periods declaration: whole numbers
// first..last.
func (c *compiler) periods(d *Decl) *domain {
	s, f := d.Periods, d.File
	first, ok1 := c.constant(f, s.First, unit.One(), "the first period of "+d.Name)
	last, ok2 := c.constant(f, s.Last, unit.One(), "the last period of "+d.Name)
	switch {
	case !ok1 || !ok2:
		return nil
	case first != math.Trunc(first) || last != math.Trunc(last):
		c.errorf(f, s.First.Pos(), "periods are whole numbers: periods %s = 1..20", d.Name)
		return nil
	case last < first:
		c.errorf(f, s.First.Pos(), "the periods %s..%s are reversed: write %s..%s", syntax.Brief(s.First), syntax.Brief(s.Last), syntax.Brief(s.Last), syntax.Brief(s.First))
		return nil
	case last-first+1 > maxPeriods:
		c.errorf(f, s.First.Pos(), "%s periods are too many (at most %s)", unit.Format(last-first+1, ""), unit.Format(maxPeriods, ""))
		return nil
	}
	dom := &domain{name: d.Name, noun: "period"}
	for p := first; p <= last; p++ {
		dom.keys = append(dom.keys, strconv.FormatFloat(p, 'f', -1, 64))
	}
	return dom
}

// column compiles table.column: numbers as a vector of constants in the
// column's unit, text as text.
func (c *compiler) column(f *syntax.File, x *syntax.Ident, name string) val {
	if v, ok := c.vec.columns[name]; ok {
		return v
	}
	tname, cname, _ := strings.Cut(name, ".")
	d := c.decls[tname]
	if d == nil || d.Table == nil {
		var tables []string
		for _, n := range c.m.order {
			if c.decls[n].Table != nil {
				tables = append(tables, n)
			}
		}
		msg := "no table " + tname + syntax.DidYouMean(tname, tables)
		if len(tables) == 0 {
			msg += ": load one first: table " + tname + " = \"" + tname + ".csv\""
		}
		c.errorf(f, x.Pos(), "%s", msg)
		return val{bad: true}
	}
	t := d.Table
	col := t.Column(cname)
	if col == nil {
		c.errorf(f, x.Pos()+syntax.Pos(len(tname)+1), "table %s has no column %s%s (columns: %s)", tname, cname, syntax.DidYouMean(cname, t.ColumnNames()), strings.Join(t.ColumnNames(), ", "))
		return val{bad: true}
	}
	dom := c.domainNamed(f, &syntax.Ident{NamePos: x.Pos(), Name: tname})
	var v val
	if col.IsText() {
		v = val{tx: &textVal{name: name, vals: col.Text, dom: dom, col: col}}
	} else {
		u := col.u
		vals := make([]float64, len(col.Num))
		for i, n := range col.Num {
			vals[i] = n * u.Factor
		}
		c.setPos(f, x.Pos())
		v = val{slot: c.vector(c.b.VecConst(vals), dom), dim: u.Dim}
		if col.Unit != "" {
			v.hint = &u
		}
	}
	c.vec.columns[name] = v
	return v
}

// element compiles name[key]: one element of a vector input, a vector
// formula, a column or a range of periods.
func (c *compiler) element(f *syntax.File, x *syntax.Ident, base, key string, constCtx bool) val {
	id := &syntax.Ident{NamePos: x.NamePos, Name: base}
	var v val
	switch d := c.decls[base]; {
	case strings.Contains(base, "."):
		v = c.column(f, id, base)
	case d == nil:
		c.undefined(f, id)
		return val{bad: true}
	case d.Periods != nil:
		v, _ = c.vecIdent(f, id, constCtx)
	case constCtx:
		c.errorf(f, x.Pos(), "%s must be a number, not the name %s", c.what, x.Name)
		return val{bad: true}
	case d.Input != nil:
		v = c.ents[d.idx].v
	case d.Formula != nil:
		v = c.formulaAt(&c.ents[d.idx], base, d.File, d.Formula, id)
	default:
		c.errorf(f, x.Pos(), "%s is a table: its rows are reached through a column, %s.COLUMN[%s]", base, base, key)
		return val{bad: true}
	}
	if v.bad {
		return val{bad: true}
	}
	if v.tx != nil {
		c.errorf(f, x.Pos(), "%s is a text column: an element of it is text, not a number", base)
		return val{bad: true}
	}
	dom := c.b.domainOf(v.slot)
	if dom == nil {
		c.errorf(f, x.Pos(), "%s is not a vector, so it has no element %s (a unit after a name needs a space: %s [%s])", base, key, base, key)
		return val{bad: true}
	}
	j, ok := dom.find(key)
	if !ok {
		hint := ""
		if dom.size() <= 100_000 {
			hint = syntax.DidYouMean(key, dom.keys)
		}
		if hint == "" && dom.size() <= 12 {
			hint = " (" + plural(2, dom.noun) + ": " + strings.Join(dom.keys, ", ") + ")"
		}
		c.errorf(f, x.Pos()+syntax.Pos(len(base)+1), "no %s %s in %s%s", dom.noun, key, dom.name, hint)
		return val{bad: true}
	}
	s := c.b.Elem(v.slot, j)
	out := val{slot: s, dim: v.dim, hint: v.hint, boolean: v.boolean}
	out.c, out.konst = c.b.IsConst(s)
	return out
}

// ---- functions of vectors

// VecFuncInfo describes a function of vectors: a reduction, a filter or a
// grouped sum. They are compiled by the compiler itself, not through an
// operation of the Functions table.
type VecFuncInfo struct {
	Name string
	Sig  string
	Doc  string
}

// VectorFunctions lists the functions of vectors. min and max of one
// vector are its least and greatest element; with several arguments they
// are the element-wise functions of the Functions table.
var VectorFunctions = []VecFuncInfo{
	{"sum", "sum(v)", "sum of the elements of v"},
	{"mean", "mean(v)", "sum(v) / count(v)"},
	{"count", "count(v)", "number of elements of v; of a condition, the rows where it holds"},
	{"dot", "dot(a, b)", "sum of a * b element by element"},
	{"where", "where(v, condition)", "the elements of v whose row meets a condition on data (text columns, numeric columns): a shorter vector"},
	{"subtotal", "subtotal(v, column)", "the sums of v by the values of a column: a vector over the groups"},
	{"min", "min(v)", "least element of v (a tie credits the first)"},
	{"max", "max(v)", "greatest element of v (a tie credits the first)"},
}

func lookupVecFunc(name string) *VecFuncInfo {
	for i := range VectorFunctions {
		if VectorFunctions[i].Name == name {
			return &VectorFunctions[i]
		}
	}
	return nil
}

// vecCall compiles a call of a function of vectors; ok is false for any
// other call (min and max with other than one argument included).
func (c *compiler) vecCall(f *syntax.File, x *syntax.CallExpr, constCtx bool) (val, bool) {
	name := x.Fun.Name
	info := lookupVecFunc(name)
	if info == nil || (name == "min" || name == "max") && len(x.Args) != 1 {
		return val{}, false
	}
	want := strings.Count(info.Sig, ",") + 1
	if len(x.Args) != want {
		c.errorf(f, x.Lparen, "%s takes %d argument%s (%s), got %d", name, want, map[bool]string{true: "s"}[want > 1], info.Sig, len(x.Args))
		return val{bad: true}, true
	}
	args := make([]val, len(x.Args))
	for i, a := range x.Args {
		args[i] = c.expr(f, a, constCtx)
		if args[i].bad {
			return val{bad: true}, true
		}
	}
	c.setPos(f, x.Fun.Pos())
	v, arg := args[0], x.Args[0]
	needVec := func(i int) bool {
		a := args[i]
		if a.tx != nil && !(name == "count" || name == "subtotal" && i == 1) {
			c.errorf(f, x.Args[i].Pos(), "%s", textMisuse(a.tx))
			return false
		}
		if a.tx == nil && !c.isVec(a) {
			if name == "min" || name == "max" {
				c.errorf(f, x.Lparen, "%s takes at least 2 arguments, got 1 (or one vector, of which it is the %s element)", name, map[bool]string{true: "least", false: "greatest"}[name == "min"])
				return false
			}
			c.errorf(f, x.Args[i].Pos(), "%s takes a vector (a column, a vector input or formula), found a single number: %s", name, info.Sig)
			return false
		}
		if a.boolean && name != "count" && !(name == "where" && i == 1) {
			c.errorf(f, x.Args[i].Pos(), "%s of a condition: use count(condition) for the rows where it holds", name)
			return false
		}
		return true
	}
	for i := range args {
		if !needVec(i) {
			return val{bad: true}, true
		}
	}
	switch name {
	case "count":
		n := 0
		if v.tx != nil {
			n = len(v.tx.vals)
		} else if v.boolean {
			cs, ok := c.b.VecConsts(v.slot)
			if !ok {
				c.errorf(f, arg.Pos(), "count of a condition that depends on inputs: count(condition) counts rows known from data")
				return val{bad: true}, true
			}
			for _, m := range cs {
				if m != 0 {
					n++
				}
			}
		} else {
			n, _ = c.b.IsVec(v.slot)
		}
		return val{slot: c.b.Const(float64(n)), konst: true, c: float64(n)}, true
	case "sum", "mean":
		s := c.b.Sum(v.slot)
		if name == "mean" {
			n, _ := c.b.IsVec(v.slot)
			s = c.b.Binary(tape.OpDiv, s, c.b.Const(float64(n)))
		}
		r := val{slot: s, dim: v.dim, hint: v.hint}
		r.c, r.konst = c.b.IsConst(s)
		return r, true
	case "min", "max":
		op := tape.OpMin
		if name == "max" {
			op = tape.OpMax
		}
		s := c.b.Reduce(op, v.slot)
		r := val{slot: s, dim: v.dim, hint: v.hint}
		r.c, r.konst = c.b.IsConst(s)
		return r, true
	case "dot":
		w := args[1]
		prod := c.b.Binary(tape.OpMul, v.slot, w.slot)
		if _, ok := c.b.IsVec(prod); !ok || c.b.domainOf(prod) == nil {
			return val{bad: true}, true
		}
		s := c.b.Sum(prod)
		r := val{slot: s, dim: v.dim.Mul(w.dim)}
		if v.hint != nil && w.hint != nil {
			r.hint = combinedUnit(v.hint, w.hint, true)
		} else if w.hint == nil && w.dim.IsDimensionless() {
			r.hint = v.hint
		} else if v.hint == nil && v.dim.IsDimensionless() {
			r.hint = w.hint
		}
		r.c, r.konst = c.b.IsConst(s)
		return r, true
	case "where":
		return c.where(f, x, v, args[1]), true
	case "subtotal":
		return c.subtotal(f, x, v, args[1]), true
	}
	return val{bad: true}, true
}

// where compiles where(v, cond): the elements of v whose condition holds.
func (c *compiler) where(f *syntax.File, x *syntax.CallExpr, v, cond val) val {
	dom := c.b.domainOf(v.slot)
	cdom := c.b.domainOf(cond.slot)
	if !cond.boolean {
		c.errorf(f, x.Args[1].Pos(), "the second argument of where is a condition, such as parts.category == \"fasteners\"")
		return val{bad: true}
	}
	if !sameDomain(dom, cdom) {
		c.errorf(f, x.Args[1].Pos(), "the condition is over %s, the vector over %s: both must be over the same rows", cdom.describe(), dom.describe())
		return val{bad: true}
	}
	mask, ok := c.b.VecConsts(cond.slot)
	if !ok {
		c.errorf(f, x.Args[1].Pos(), "the condition of where picks rows once, from data: %s depends on inputs (for a condition on inputs use if(condition, value, 0))", syntax.Brief(x.Args[1]))
		return val{bad: true}
	}
	var idx []int
	for i, m := range mask {
		if m != 0 {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		c.errorf(f, x.Args[1].Pos(), "no row of %s meets %s", dom.name, syntax.Brief(x.Args[1]))
		return val{bad: true}
	}
	sub := dom
	if len(idx) < dom.size() {
		sub = &domain{name: dom.name + " where " + syntax.String(x.Args[1]), noun: dom.noun, table: dom.table,
			keys: make([]string, len(idx)), rows: make([]int, len(idx))}
		for j, i := range idx {
			sub.keys[j], sub.rows[j] = dom.keys[i], dom.row(i)
		}
	}
	s := c.b.Gather(v.slot, idx)
	return val{slot: c.vector(s, sub), dim: v.dim, hint: v.hint}
}

// subtotal compiles subtotal(v, column): the sums of v by the values of a
// column, in the order the values first appear.
func (c *compiler) subtotal(f *syntax.File, x *syntax.CallExpr, v, by val) val {
	dom := c.b.domainOf(v.slot)
	var keys []string
	var bdom *domain
	if by.tx != nil {
		if by.tx.lit != nil {
			c.errorf(f, x.Args[1].Pos(), "subtotal groups by a column, such as parts.category, not by text in quotes")
			return val{bad: true}
		}
		keys, bdom = by.tx.vals, by.tx.dom
	} else {
		cs, ok := c.b.VecConsts(by.slot)
		if !ok {
			c.errorf(f, x.Args[1].Pos(), "subtotal groups by a column of data: %s depends on inputs", syntax.Brief(x.Args[1]))
			return val{bad: true}
		}
		bdom = c.b.domainOf(by.slot)
		keys = make([]string, len(cs))
		for i, n := range cs {
			keys[i] = strconv.FormatFloat(n, 'g', -1, 64)
		}
	}
	// A filtered vector is grouped by the column's values at its rows.
	label := func(i int) string { return keys[i] }
	switch {
	case sameDomain(dom, bdom):
	case dom.table != nil && bdom.table == dom.table && bdom.rows == nil:
		label = func(i int) string { return keys[dom.row(i)] }
	default:
		c.errorf(f, x.Args[1].Pos(), "the column is over %s, the vector over %s: group by a column of the vector's table", bdom.describe(), dom.describe())
		return val{bad: true}
	}
	var gr grouper
	groups := make([]int, dom.size())
	gdom := &domain{name: syntax.String(x.Args[1]), noun: "group"}
	if i := strings.LastIndexByte(gdom.name, '.'); i >= 0 {
		gdom.name = gdom.name[i+1:]
	}
	for i := range groups {
		groups[i], _ = gr.id(label(i))
	}
	gdom.keys = gr.keys
	s := c.b.GroupSum(v.slot, groups, len(gdom.keys))
	return val{slot: c.vector(s, gdom), dim: v.dim, hint: v.hint}
}

// grouper numbers the values of a column in the order they first appear,
// a blank value as "(blank)".
type grouper struct {
	index map[string]int
	keys  []string
}

// id returns the group of value v, and whether it is a new one.
func (g *grouper) id(v string) (int, bool) {
	k := strings.TrimSpace(v)
	if k == "" {
		k = "(blank)"
	}
	if i, ok := g.index[k]; ok {
		return i, false
	}
	if g.index == nil {
		g.index = map[string]int{}
	}
	g.index[k] = len(g.keys)
	g.keys = append(g.keys, k)
	return len(g.keys) - 1, true
}

// vectorHint explains why a vector cannot be where one number belongs.
func (c *compiler) vectorHint(v val) string {
	switch {
	case v.tx != nil:
		return ", not text"
	case c.isVec(v):
		return ": found a vector over " + c.b.domainOf(v.slot).describe() + " (a value per row belongs to an input declared over the table: input x = table.column ...)"
	}
	return ""
}

// ---- vector inputs

// usesColumn reports whether x refers to a column of a table.
func usesColumn(x syntax.Expr) bool {
	found := false
	syntax.Walk(x, func(e syntax.Expr) bool {
		if id, ok := e.(*syntax.Ident); ok && strings.Contains(id.Name, ".") {
			found = true
		}
		return !found
	})
	return found
}

// constVec evaluates x, a constant, as one value per element of dom, in
// unit u (a plain number is read in u): a single number is used for every
// element. ok is false after an error.
func (c *compiler) constVec(f *syntax.File, x syntax.Expr, u unit.Unit, dom *domain, what string) ([]float64, bool) {
	if vals, ok := c.plainColumn(f, x, u, dom); ok {
		return vals, true
	}
	c.what = what
	return c.constVecOf(f, x, c.expr(f, x, true), u, dom, what)
}

// plainColumn returns the values of x, in unit u, when x is a numeric
// column of a table over dom whose unit u takes as it is: the common value
// of a vector input or end of its range, read without building its
// constants on the tape.
func (c *compiler) plainColumn(f *syntax.File, x syntax.Expr, u unit.Unit, dom *domain) ([]float64, bool) {
	id, ok := x.(*syntax.Ident)
	if !ok {
		return nil, false
	}
	tname, cname, ok := strings.Cut(id.Name, ".")
	d := c.decls[tname]
	if !ok || d == nil || d.Table == nil || strings.ContainsRune(cname, '[') {
		return nil, false
	}
	col := d.Table.Column(cname)
	if col == nil || col.IsText() || !(col.Unit == "" || col.u.Dim.Equal(u.Dim) && col.u.Factor == u.Factor) {
		return nil, false
	}
	if dom != nil && !sameDomain(dom, c.domainNamed(f, &syntax.Ident{NamePos: id.Pos(), Name: tname})) {
		return nil, false
	}
	return slices.Clone(col.Num), true
}

// constVecOf is constVec of x compiled as v.
func (c *compiler) constVecOf(f *syntax.File, x syntax.Expr, v val, u unit.Unit, dom *domain, what string) ([]float64, bool) {
	if v.bad {
		return nil, false
	}
	if v.tx != nil || v.boolean {
		c.errorf(f, x.Pos(), "%s must be numbers, not %s", what, map[bool]string{true: "text", false: "a condition"}[v.tx != nil])
		return nil, false
	}
	var vals []float64
	if c.isVec(v) {
		if vd := c.b.domainOf(v.slot); !sameDomain(vd, dom) {
			c.errorf(f, x.Pos(), "%s is over %s, the input over %s", what, vd.describe(), dom.describe())
			return nil, false
		}
		cs, ok := c.b.VecConsts(v.slot)
		if !ok {
			c.errorf(f, x.Pos(), "%s must be constant numbers", what)
			return nil, false
		}
		vals = cs
	} else {
		if !v.konst {
			c.errorf(f, x.Pos(), "%s must be a constant number", what)
			return nil, false
		}
		vals = make([]float64, dom.size())
		for i := range vals {
			vals[i] = v.c
		}
	}
	switch {
	case v.dim.IsDimensionless() && v.hint == nil && !hasUnit(x):
		return vals, true
	case v.dim.Equal(u.Dim):
		for i := range vals {
			vals[i] /= u.Factor
		}
		return vals, true
	}
	c.errorf(f, x.Pos(), "%s is in [%s] but the input is in [%s] (%s vs %s)", what, orOne(unitText(c.display(v))), orOne(unitText(u)), dimName(v.dim), dimName(u.Dim))
	return nil, false
}

// vectorInput compiles an input over a table or periods, one element per
// row: input qty = parts.qty (±10%), input om[year] = 120000 [$]. It
// reports false, doing nothing, for a scalar input.
func (c *compiler) vectorInput(d *Decl) bool {
	s, f := d.Input, d.File
	if s.Over == nil && !usesColumn(s.Value) {
		return false
	}
	c.cur = d.Name
	c.ents[d.idx].st = done
	c.ents[d.idx].setVal(val{bad: true})
	u, declared := unit.One(), false
	if s.Unit != nil {
		pu, ok := c.parseUnit(f, s.Unit)
		if !ok {
			return true
		}
		u, declared = pu, true
	}
	var dom *domain
	what := "the value of input " + d.Name
	c.what = what
	var v val
	var vals []float64
	uText := "" // the unit as the user wrote it: declared, or in the column's header
	if declared {
		uText = s.Unit.Text
	}
	if id, ok := s.Value.(*syntax.Ident); ok && s.Over == nil && strings.Contains(id.Name, ".") {
		// input qty = bid.qty: the column's unit unless one is declared.
		if tname, cname, _ := strings.Cut(id.Name, "."); c.decls[tname] != nil && c.decls[tname].Table != nil {
			if col := c.decls[tname].Table.Column(cname); col != nil && !col.IsText() {
				if !declared && col.Unit != "" {
					u, uText = col.u, col.Unit
				}
				if dom = c.domainNamed(f, &syntax.Ident{NamePos: id.Pos(), Name: tname}); dom == nil {
					return true
				}
				vals, _ = c.plainColumn(f, s.Value, u, dom)
			}
		}
	}
	if vals == nil {
		v = c.expr(f, s.Value, true)
	}
	switch {
	case vals != nil:
	case s.Over != nil:
		if dom = c.domainNamed(f, s.Over); dom == nil {
			return true
		}
	default:
		if v.bad {
			return true
		}
		if !c.isVec(v) {
			c.errorf(f, s.Value.Pos(), "the value of input %s is one number: a vector input takes a column, or names its table or periods (input %s[year] = ...)", d.Name, d.Name)
			return true
		}
		dom = c.b.domainOf(v.slot)
		if !declared && v.hint != nil {
			u = *v.hint
		}
	}
	if vals == nil {
		var ok bool
		if vals, ok = c.constVecOf(f, s.Value, v, u, dom, what); !ok {
			return true
		}
	}
	n := dom.size()
	if uText == "" && (!u.Dim.IsDimensionless() || u.Factor != 1) {
		uText = u.String()
	}
	vec := &Vector{Name: d.Name, Kind: "input", Over: dom.name, Noun: dom.noun, Keys: dom.keys, Unit: uText,
		Pos: d.Pos(), First: len(c.prog.Inputs), Table: dom.table, Rows: dom.rows, u: u}
	// One allocation for the inputs and one for their names.
	ins := make([]Input, n)
	var names strings.Builder
	for _, k := range dom.keys {
		names.Grow(len(d.Name) + len(k) + 2)
	}
	ends := make([]int, n)
	for i, k := range dom.keys {
		names.WriteString(d.Name)
		names.WriteByte('[')
		names.WriteString(k)
		names.WriteByte(']')
		ends[i] = names.Len()
	}
	all := names.String()
	pos := d.Pos()
	for i := range ins {
		start := 0
		if i > 0 {
			start = ends[i-1]
		}
		ins[i] = Input{Name: all[start:ends[i]], Value: vals[i], Unit: uText, Pos: pos, Vector: d.Name, Key: dom.keys[i],
			u: &u, index: vec.First + i, elem: i, file: f}
	}
	if !c.elementRanges(d, ins, dom, u) {
		return true
	}
	c.prog.Inputs = slices.Grow(c.prog.Inputs, n)
	for i := range ins {
		c.prog.Inputs = append(c.prog.Inputs, &ins[i])
	}
	c.setPos(f, s.Name.Pos())
	slot := c.vector(c.b.VecInput(n), dom)
	if u.Factor != 1 {
		slot = c.b.Binary(tape.OpMul, slot, c.b.Const(u.Factor))
	}
	vec.slot = slot
	c.addVector(vec)
	c.ents[d.idx].setVal(val{slot: slot, dim: u.Dim, hint: &u})
	return true
}

// maxElementErrors is how many elements of one vector input an error is
// reported for.
const maxElementErrors = 3

// elementRanges gives each element of a vector input its range and
// distribution, and checks them.
func (c *compiler) elementRanges(d *Decl, ins []Input, dom *domain, u unit.Unit) bool {
	s, f := d.Input, d.File
	nerr := len(c.errs)
	errAt := func(pos syntax.Pos, i int, format string, args ...any) bool {
		if len(c.errs)-nerr < maxElementErrors {
			where := ""
			if dom.table != nil {
				where = fmt.Sprintf(" (%s line %d)", dom.table.Path, dom.table.Line(dom.row(i)))
			}
			c.errorf(f, pos, "%s%s", fmt.Sprintf(format, args...), where)
		}
		return false
	}
	ok := true
	// Distributions: each parameter one number or one per row.
	if s.Dist != nil {
		info := LookupDist(s.Dist.Name.Name)
		if info == nil {
			c.compileDist(f, &ins[0], s.Dist) // reports the unknown name
			return false
		}
		if len(s.Dist.Args) != len(info.Params) {
			c.errorf(f, s.Dist.Lparen, "%s takes %d parameters (%s), got %d", info.Name, len(info.Params), strings.Join(info.Params, ", "), len(s.Dist.Args))
			return false
		}
		params := make([][]float64, len(s.Dist.Args))
		for j, a := range s.Dist.Args {
			p, pok := c.constVec(f, a, u, dom, info.Name+" parameter "+info.Params[j])
			if !pok {
				return false
			}
			params[j] = p
		}
		pv := make([]float64, len(params))
		for i := range ins {
			for j := range params {
				pv[j] = params[j][i]
			}
			dist, err := NewDist(info.Name, pv)
			if err != nil {
				ok = errAt(s.Dist.Name.Pos(), i, "%s: %v", ins[i].Name, err)
				continue
			}
			ins[i].Dist = dist
		}
	}
	var tail []string
	var lows, highs []float64
	if r := s.Range; r != nil && !r.Low.Percent {
		var lok, hok bool
		lows, lok = c.boundVec(f, r.Low, u, dom, "the low end of the range of "+d.Name)
		highs, hok = c.boundVec(f, r.High, u, dom, "the high end of the range of "+d.Name)
		if !lok || !hok {
			return false
		}
	}
	for i := range ins {
		in := &ins[i]
		switch r := s.Range; {
		case r != nil && r.Low.Percent:
			in.Source = RangePercent
			a, b := in.Value*(1+r.Low.Value/100), in.Value*(1+r.High.Value/100)
			in.Low, in.High = math.Min(a, b), math.Max(a, b)
			if r.Low.Value < -100 {
				c.errorf(f, r.Low.ValuePos, "range %s would change the sign of %s: a percentage below -100%% is not a plausible range", r.Low.Lit, d.Name)
				return false
			}
			if in.Value == 0 {
				ok = errAt(r.Lparen, i, "%s is 0: a percentage range of it is empty; give %s a range of values", in.Name, d.Name)
			}
		case r != nil:
			in.Source = RangeExplicit
			in.Low, in.High = lows[i], highs[i]
			switch {
			case in.Low > in.High:
				ok = errAt(r.Lparen, i, "the range of %s is reversed: %s..%s", in.Name, unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit))
			case in.Value < in.Low || in.Value > in.High:
				ok = errAt(r.Lparen, i, "the range %s..%s of %s does not contain its value %s", unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit), in.Name, unit.Format(in.Value, in.Unit))
			case in.Low == in.High && in.Value != 0:
				ok = errAt(r.Lparen, i, "the range of %s is empty: its low and high ends are equal", in.Name)
			}
		default:
			in.unstatedRange()
		}
		if in.Dist != nil {
			lo, hi := in.Dist.Support()
			switch p := in.Dist.CDF(in.Value); {
			case in.Value < lo || in.Value > hi:
				ok = errAt(s.Dist.Pos(), i, "the value %s of %s lies outside its distribution's support [%s, %s]", unit.Format(in.Value, in.Unit), in.Name, unit.Format(lo, in.Unit), unit.Format(hi, in.Unit))
			case p < 0.01 || p > 0.99:
				tail = append(tail, in.Name)
			}
		}
	}
	if len(tail) > 0 {
		c.warnf(f, s.Dist.Pos(), "%s of %s %s in the far tail of %s distribution (below its 1st or above its 99th percentile): %s; check the values or the parameters",
			unit.Format(float64(len(tail)), ""), unit.Format(float64(len(ins)), ""), map[bool]string{true: "lies", false: "lie"}[len(tail) == 1],
			map[bool]string{true: "its", false: "their"}[len(tail) == 1], shortList(tail, 5))
	}
	return ok
}

// unstatedRange gives an input with no range its distribution's 10th and
// 90th percentiles, or with no distribution either, the default ±10%.
func (in *Input) unstatedRange() {
	if in.Dist != nil {
		in.Source = RangeDistribution
		in.Low, in.High = in.Dist.Quantile(0.10), in.Dist.Quantile(0.90)
		return
	}
	in.Source = RangeDefault
	a, b := in.Value*(1-DefaultRangePct/100.0), in.Value*(1+DefaultRangePct/100.0)
	in.Low, in.High = math.Min(a, b), math.Max(a, b)
}

// boundVec returns one end of a range for every element: a number, read in
// the input's unit, or a column.
func (c *compiler) boundVec(f *syntax.File, b syntax.Bound, u unit.Unit, dom *domain, what string) ([]float64, bool) {
	if b.Column != nil {
		return c.constVec(f, b.Column, u, dom, what)
	}
	vals := make([]float64, dom.size())
	for i := range vals {
		vals[i] = b.Value
	}
	return vals, true
}

// compactElements writes a run of elements of one vector in a list of
// input names as one item, "qty[…] (360 elements)", so that a message about
// the inputs of a model of 100,000 lines stays a line.
func compactElements(names []string) []string {
	var out []string
	for i := 0; i < len(names); {
		base, _, ok := splitElement(names[i])
		j := i + 1
		for ok && j < len(names) {
			if b, _, ok2 := splitElement(names[j]); !ok2 || b != base {
				break
			}
			j++
		}
		if j-i > 1 {
			out = append(out, fmt.Sprintf("%s[…] (%s elements)", base, unit.Format(float64(j-i), "")))
		} else {
			out = append(out, names[i])
		}
		i = j
	}
	return out
}

// shortList joins names for a message, the first max of them and a count
// of the rest.
func shortList(names []string, max int) string {
	if len(names) <= max {
		return strings.Join(names, ", ")
	}
	return strings.Join(names[:max], ", ") + " and " + unit.Format(float64(len(names)-max), "") + " more"
}

// ---- vector formulas and the program's vectors

// vecProgram is the part of a Program about vectors.
type vecProgram struct {
	// Vectors lists the vector inputs and vector formulas, in the order
	// compiled.
	Vectors []*Vector

	vecIndex map[string]int
	builder  *tape.Builder     // kept to build the tapes of vector formulas on demand
	posDom   map[int32]*domain // the domain of the loop nodes at a position
}

// Vector is a vector input or a vector formula: one value per row of a
// table, per period, or per group.
type Vector struct {
	Name string
	Kind string   // "input" or "formula"
	Over string   // what it is over: a table, periods, a filter, a grouping
	Noun string   // "row", "period" or "group"
	Keys []string // the key of each element
	Unit string   // display unit
	Text string   // a formula as written
	Pos  syntax.Position
	// First is the index in Program.Inputs of an input's first element;
	// its elements follow in order.
	First int
	// Table is the table the elements are rows of (nil over periods and
	// groups), Rows the table row of each element (nil: element i is row
	// i).
	Table *Table
	Rows  []int

	u       unit.Unit
	slot    tape.Slot
	file    *syntax.File // where a formula is written, for its elements' Pos
	at      int32
	once    sync.Once
	tape    *tape.Tape // a formula's elements as outputs, built on demand
	keyOnce sync.Once
	keyIdx  map[string]int
}

// Len returns the number of elements.
func (v *Vector) Len() int { return len(v.Keys) }

// Row returns the table row of element i.
func (v *Vector) Row(i int) int {
	if v.Rows == nil {
		return i
	}
	return v.Rows[i]
}

func (c *compiler) addVector(v *Vector) {
	p := c.prog
	if p.vecIndex == nil {
		p.vecIndex = map[string]int{}
	}
	p.vecIndex[v.Name] = len(p.Vectors)
	p.Vectors = append(p.Vectors, v)
}

// vectorFormula registers a formula whose value is a vector, and reports
// whether it was one (or text, which a formula cannot hold).
func (c *compiler) vectorFormula(fm *Formula, v *val, pos syntax.Pos) bool {
	if v.tx != nil {
		c.errorf(c.curFile, pos, "%s", textMisuse(v.tx))
		v.bad = true
		return true
	}
	if !c.isVec(*v) {
		return false
	}
	dom := c.b.domainOf(v.slot)
	c.addVector(&Vector{Name: fm.Name, Kind: "formula", Over: dom.name, Noun: dom.noun, Keys: dom.keys, Unit: fm.Unit,
		Text: fm.Text(), Pos: fm.Pos(), Table: dom.table, Rows: dom.rows, u: *fm.u, slot: v.slot, file: fm.file, at: fm.at})
	u := *fm.u
	v.hint = &u
	return true
}

// finishVectors keeps the builder when the program has vector formulas,
// whose tapes are built when they are asked for.
func (c *compiler) finishVectors() {
	for _, v := range c.prog.Vectors {
		if v.Kind == "formula" {
			c.prog.builder = c.b.Builder
			return
		}
	}
}

// Vector returns the vector input or formula called name, or nil.
func (p *Program) Vector(name string) *Vector {
	if i, ok := p.vecIndex[name]; ok {
		return p.Vectors[i]
	}
	return nil
}

// lookupElement returns the input called name[key] that is an element of
// a vector input, or nil.
func (p *Program) lookupElement(name string) *Input {
	base, key, ok := splitElement(name)
	if !ok {
		return nil
	}
	v := p.Vector(base)
	if v == nil || v.Kind != "input" {
		return nil
	}
	if i, ok := v.find(key); ok {
		return p.Inputs[v.First+i]
	}
	return nil
}

// find returns the element of key k.
func (v *Vector) find(k string) (int, bool) {
	v.keyOnce.Do(func() {
		v.keyIdx = make(map[string]int, len(v.Keys))
		for i, k := range v.Keys {
			v.keyIdx[k] = i
		}
	})
	i, ok := v.keyIdx[k]
	return i, ok
}

// tapeOf returns the tape that computes formula f.
func (p *Program) tapeOf(f *Formula) *tape.Tape {
	if f.tape != nil {
		return f.tape
	}
	return p.tape
}

// vectorTape returns the tape whose outputs are the elements of the
// vector formula v.
func (p *Program) vectorTape(v *Vector) *tape.Tape {
	v.once.Do(func() { v.tape = p.builder.Tape(p.builder.Elems(v.slot)...) })
	return v.tape
}

// vectorFn returns the function of name when name is a vector or an
// element of a vector formula; ok is false for any other name.
func (p *Program) vectorFn(name string) (fn *Fn, err error, ok bool) {
	if v := p.Vector(name); v != nil {
		return nil, fmt.Errorf("%s is a vector of %s %s: analyse a number made from it, such as sum(%s), or one element, %s[KEY]",
			name, unit.Format(float64(v.Len()), ""), plural(v.Len(), v.Noun), name, name), true
	}
	base, key, isElem := splitElement(name)
	v := p.Vector(base)
	if !isElem || v == nil || v.Kind != "formula" {
		return nil, nil, false
	}
	j, found := v.find(key)
	if !found {
		return nil, fmt.Errorf("no %s %s in %s%s", v.Noun, key, base, syntax.DidYouMean(key, v.Keys)), true
	}
	t := p.builder.Tape(p.builder.Elem(v.slot, j))
	vu := v.u
	f := &Formula{Name: name, Unit: v.Unit, text: &v.Text, file: v.file, at: v.at, u: &vu, tape: t}
	return &Fn{prog: p, tape: t.Clone(), f: f, scale: 1 / f.u.Factor}, nil, true
}

// VectorResult is the value of a vector at the baseline: every element,
// for a table of its first rows and a total.
type VectorResult struct {
	Kind   string    `json:"kind"` // "vector"
	Name   string    `json:"name"`
	Unit   string    `json:"unit"`
	Over   string    `json:"over"`
	Noun   string    `json:"noun"`
	Count  int       `json:"count"`
	Total  float64   `json:"total"`
	Keys   []string  `json:"keys"`
	Values []float64 `json:"values"`
}

// VectorValue returns the values of the vector input or formula name at
// the baseline, in its display unit.
func (p *Program) VectorValue(name string) (*VectorResult, error) {
	v := p.Vector(name)
	if v == nil {
		return nil, fmt.Errorf("%s is not a vector", name)
	}
	r := &VectorResult{Kind: "vector", Name: name, Unit: v.Unit, Over: v.Over, Noun: v.Noun, Count: v.Len(), Keys: v.Keys, Values: make([]float64, v.Len())}
	if v.Kind == "input" {
		for i := range r.Values {
			r.Values[i] = p.Inputs[v.First+i].Value
		}
	} else {
		t := p.vectorTape(v).Clone()
		x := p.Baseline()
		if err := t.Forward(x); err != nil {
			return nil, p.evalError(err, x)
		}
		for i := range r.Values {
			r.Values[i] = t.Output(i) / v.u.Factor
		}
	}
	for _, x := range r.Values {
		r.Total += x
	}
	return r, nil
}

// elementOf names the element of a vector where a domain error arose.
func (p *Program) elementOf(de *tape.DomainError) string {
	d := p.posDom[de.Pos]
	if de.Element == 0 || d == nil || de.Element > d.size() {
		return ""
	}
	return " in " + d.noun + " " + d.keys[de.Element-1] + " of " + d.name
}

// maxNamedInputs is how many input values an evaluation error lists.
const maxNamedInputs = 8

// inputsNamed lists the values of the inputs idx for an error message:
// the first few, and a count of the rest.
func (p *Program) inputsNamed(idx []int, x []float64) []string {
	var out []string
	for _, i := range idx {
		if len(out) == maxNamedInputs {
			out = append(out, "and "+unit.Format(float64(len(idx)-maxNamedInputs), "")+" more")
			break
		}
		in := p.Inputs[i]
		out = append(out, in.Name+" = "+unit.Format(x[i], in.Unit))
	}
	return out
}
