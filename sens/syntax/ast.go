package syntax

// Node is any tree node. Pos is its first character, End the one just past it.
type Node interface {
	Pos() Pos
	End() Pos
}

// Expr is an expression node.
type Expr interface {
	Node
	exprNode()
}

// Stmt is a statement: one logical line.
type Stmt interface {
	Node
	stmtNode()
}

// ---- Expressions

type (
	// Ident is a name: an input, a formula, a function or the constant pi;
	// a column of a table, table.column; or an element of a vector,
	// name[key], written with no space before the bracket (tables.go).
	Ident struct {
		NamePos Pos
		Name    string // an element's name is normalised: qty[bracket-12]
		// ID numbers the name within the file that was parsed: the same
		// name has the same ID in one File, from 1 to File.NameCount; 0
		// for an identifier made otherwise (by hand, or outside Parse).
		ID int32
		// brack is an element's ']' (Rbrack) as an offset from NamePos; 0
		// otherwise. With ID, 8 bytes where a Pos would take 8 alone: an
		// Ident is 32 bytes.
		brack int32
	}

	// StringLit is text in quotes, compared with a text column:
	// parts.category == "fasteners".
	StringLit struct {
		ValuePos Pos
		Value    string // unquoted
		Lit      string // as written, with its quotes
	}

	// NumberLit is a number, optionally with a unit: 1_200, 1.5e3, 90 [min].
	NumberLit struct {
		ValuePos Pos
		Lit      string
		Value    float64
		Unit     *UnitLit // nil when the number is dimensionless
	}

	// UnitLit is a unit in square brackets; Text is what stands between them.
	UnitLit struct {
		Lbrack Pos
		Text   string
		Rbrack Pos // position of ']' (or of the end of the line when it is missing)
	}

	// ParenExpr is a parenthesised expression.
	ParenExpr struct {
		Lparen Pos
		X      Expr
		Rparen Pos
	}

	// UnaryExpr is -x, +x or not x.
	UnaryExpr struct {
		OpPos Pos
		Op    Token // SUB, ADD or NOT
		X     Expr
	}

	// BinaryExpr is x op y.
	BinaryExpr struct {
		X     Expr
		OpPos Pos
		Op    Token
		Y     Expr
	}

	// CallExpr is fun(args).
	CallExpr struct {
		Fun    *Ident
		Lparen Pos
		Args   []Expr
		Rparen Pos
	}
)

func (x *Ident) Pos() Pos      { return x.NamePos }
func (x *StringLit) Pos() Pos  { return x.ValuePos }
func (x *NumberLit) Pos() Pos  { return x.ValuePos }
func (x *UnitLit) Pos() Pos    { return x.Lbrack }
func (x *ParenExpr) Pos() Pos  { return x.Lparen }
func (x *UnaryExpr) Pos() Pos  { return x.OpPos }
func (x *BinaryExpr) Pos() Pos { return x.X.Pos() }
func (x *CallExpr) Pos() Pos   { return x.Fun.Pos() }

// Rbrack returns the position of an element's ']', or NoPos for a name
// that is not an element.
func (x *Ident) Rbrack() Pos {
	if x.brack == 0 {
		return NoPos
	}
	return x.NamePos + Pos(x.brack)
}

func (x *Ident) End() Pos {
	if x.brack != 0 {
		return x.NamePos + Pos(x.brack) + 1
	}
	return x.NamePos + Pos(len(x.Name))
}
func (x *StringLit) End() Pos { return x.ValuePos + Pos(len(x.Lit)) }
func (x *NumberLit) End() Pos {
	if x.Unit != nil {
		return x.Unit.End()
	}
	return x.ValuePos + Pos(len(x.Lit))
}
func (x *UnitLit) End() Pos    { return x.Rbrack + 1 }
func (x *ParenExpr) End() Pos  { return x.Rparen + 1 }
func (x *UnaryExpr) End() Pos  { return x.X.End() }
func (x *BinaryExpr) End() Pos { return x.Y.End() }
func (x *CallExpr) End() Pos   { return x.Rparen + 1 }

func (*Ident) exprNode()      {}
func (*StringLit) exprNode()  {}
func (*NumberLit) exprNode()  {}
func (*UnitLit) exprNode()    {}
func (*ParenExpr) exprNode()  {}
func (*UnaryExpr) exprNode()  {}
func (*BinaryExpr) exprNode() {}
func (*CallExpr) exprNode()   {}

// ---- Ranges and distributions

// Bound is one end of a range: a number, possibly a percentage of the baseline,
// or a column of a table, which gives each element of a vector input its own end.
type Bound struct {
	ValuePos Pos
	Value    float64 // signed; for a percentage, the percentage itself (-5 for -5%)
	Percent  bool
	Lit      string // as written, with its sign
	Column   *Ident // a column (table.column) instead of a number; nil for a number
}

// RangeSpec is a plausible range: (800..1300), (-5%..+8%) or (±20%).
type RangeSpec struct {
	Lparen    Pos
	Low, High Bound
	Symmetric bool // written as ±P% or ±V
	Rparen    Pos
}

func (r *RangeSpec) Pos() Pos { return r.Lparen }
func (r *RangeSpec) End() Pos { return r.Rparen + 1 }

// DistSpec is a distribution: ~ pert(0.8, 0.9, 1.2).
type DistSpec struct {
	Tilde  Pos
	Name   *Ident
	Lparen Pos
	Args   []Expr
	Rparen Pos
}

func (d *DistSpec) Pos() Pos { return d.Tilde }
func (d *DistSpec) End() Pos { return d.Rparen + 1 }

// ---- Statements

type (
	// InputStmt declares an input:
	//
	//	input NAME = EXPR [UNIT] (RANGE) ~ DIST(ARGS)
	//
	// Unit, Range and Dist are optional (nil when absent); Range and Dist may come
	// in either order after the unit.
	InputStmt struct {
		Input Pos
		Name  *Ident
		Over  *Ident // input NAME[OVER] = ...: a vector over a table or periods; nil otherwise
		Value Expr
		Unit  *UnitLit
		Range *RangeSpec
		Dist  *DistSpec
		EndAt Pos
	}

	// TableStmt loads a table from a CSV file:
	//
	//	table NAME = "PATH" [key COLUMN]
	//
	// Key is nil when the first column is the key.
	TableStmt struct {
		Table Pos
		Name  *Ident
		Path  *StringLit
		Key   *Ident
		EndAt Pos
	}

	// PeriodsStmt declares a range of periods, a vector of the period
	// numbers First..Last:
	//
	//	periods NAME = FIRST..LAST
	PeriodsStmt struct {
		Periods     Pos
		Name        *Ident
		First, Last Expr
		EndAt       Pos
	}

	// FormulaStmt defines a formula: NAME = EXPR [UNIT].
	FormulaStmt struct {
		Name   *Ident
		Assign Pos
		Value  Expr
		Unit   *UnitLit // declared unit; nil when absent
		EndAt  Pos
	}

	// ExprStmt is a bare expression whose value is shown.
	ExprStmt struct {
		X    Expr
		Unit *UnitLit // optional unit to show the value in: total [k$]
	}

	// CommandStmt is a command. Verb is one of Verbs; the other fields are
	// filled as the verb's production in the grammar requires (see parser.go
	// and CommandForm).
	CommandStmt struct {
		Verb    string
		VerbPos Pos
		Output  Expr       // the analysed output (an identifier, or an expression for drivers)
		Name    *Ident     // scenario name; charts' setting
		Axes    []*Axis    // sweep axes; breakeven's single input (without a range)
		Target  Expr       // breakeven target; spearman's coefficient
		Percent *RangeSpec // spider's percentage range
		Names   []*Ident   // compare's scenario list; spearman's two inputs; attribute's two ends; explore's inputs
		Assigns []*Assign  // scenario's settings
		Options []*Option  // key=value
		Text    string     // print's text
		EndAt   Pos
	}
)

// Axis is an input and a range to vary it over: rate 40..80. Low and High are
// nil when no range is written (breakeven's "over X").
type Axis struct {
	Name      *Ident
	Low, High Expr
}

// Assign is NAME = EXPR inside a scenario.
type Assign struct {
	Name  *Ident
	Value Expr
}

// Option is key=value after a command: n=20000, seed=7, top=5.
type Option struct {
	Key   *Ident
	Value Expr
}

func (s *InputStmt) Pos() Pos   { return s.Input }
func (s *TableStmt) Pos() Pos   { return s.Table }
func (s *PeriodsStmt) Pos() Pos { return s.Periods }
func (s *FormulaStmt) Pos() Pos { return s.Name.Pos() }
func (s *ExprStmt) Pos() Pos    { return s.X.Pos() }
func (s *CommandStmt) Pos() Pos { return s.VerbPos }

func (s *InputStmt) End() Pos   { return s.EndAt }
func (s *TableStmt) End() Pos   { return s.EndAt }
func (s *PeriodsStmt) End() Pos { return s.EndAt }
func (s *FormulaStmt) End() Pos { return s.EndAt }
func (s *ExprStmt) End() Pos {
	if s.Unit != nil {
		return s.Unit.End()
	}
	return s.X.End()
}
func (s *CommandStmt) End() Pos { return s.EndAt }

func (*InputStmt) stmtNode()   {}
func (*TableStmt) stmtNode()   {}
func (*PeriodsStmt) stmtNode() {}
func (*FormulaStmt) stmtNode() {}
func (*ExprStmt) stmtNode()    {}
func (*CommandStmt) stmtNode() {}

// Option returns the option named key, or nil.
func (s *CommandStmt) Option(key string) *Option {
	for _, o := range s.Options {
		if o.Key.Name == key {
			return o
		}
	}
	return nil
}

// Walk calls fn for x and every expression below it, depth first, parents first.
// When fn returns false the children of that node are skipped.
func Walk(x Expr, fn func(Expr) bool) {
	if x == nil || !fn(x) {
		return
	}
	switch x := x.(type) {
	case *ParenExpr:
		Walk(x.X, fn)
	case *UnaryExpr:
		Walk(x.X, fn)
	case *BinaryExpr:
		Walk(x.X, fn)
		Walk(x.Y, fn)
	case *CallExpr:
		for _, a := range x.Args {
			Walk(a, fn)
		}
	}
}
