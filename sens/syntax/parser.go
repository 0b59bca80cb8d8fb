package syntax

import (
	"math"
	"strings"
)

// The grammar, in EBNF. Newlines end statements except inside parentheses, where
// they are ignored, and after a binary operator (+ - * / ^, a comparison, and,
// or) at the end of a line, which continues on the next line unless that line
// starts a statement of its own ("input" or "name ="); a backslash at the end
// of a line continues it too.
//
//	file      = { [ stmt ] NEWLINE } EOF .
//	stmt      = input | table | periods | formula | command | expr [ UNIT ] .
//	input     = "input" name [ over ] "=" expr [ UNIT ] { range | dist } .
//	over      = UNIT .
//	table     = "table" name "=" STRING [ "key" name ] .
//	periods   = "periods" name "=" arith ".." arith .
//	range     = "(" bound ".." bound ")" | "(" "±" bound ")" .
//	bound     = [ "+" | "-" ] NUMBER [ "%" ] | name .
//	dist      = "~" name "(" [ expr { "," expr } ] ")" .
//	formula   = name "=" expr [ UNIT ] .
//	expr      = or .
//	or        = and { "or" and } .
//	and       = not { "and" not } .
//	not       = "not" not | compare .
//	compare   = sum [ ( "==" | "!=" | "<" | "<=" | ">" | ">=" ) sum ] .
//	sum       = product { ( "+" | "-" ) product } .
//	product   = unary { ( "*" | "/" ) unary } .
//	unary     = ( "-" | "+" ) unary | power .
//	power     = primary [ "^" unary ] .
//	primary   = NUMBER [ UNIT ] | ref | STRING | name "(" [ expr { "," expr } ] ")" | "(" expr ")" .
//	ref       = name [ UNIT ] .
//	arith     = sum .
//
// A command is a line that starts with its verb (and is not verb = ...); its
// options, key=value, follow it. Inside a command an expression is an arith,
// without comparisons or logic, so that words such as "over" and "and" end it.
// One parse function per verb carries its production (commands.go).
//
//	command   = ( drivers | tornado | explore | spider | sweep | breakeven | scenario | compare
//	          | attribute | exchange | basis | global | spearman | print | reset | charts
//	          | help | interactions ) options .
//	options   = { name "=" arith } .
//	drivers   = "drivers" arith .
//	tornado   = "tornado" arith .
//	explore   = "explore" arith [ "over" ref { "," ref } ] .
//	spider    = "spider" name [ range | "over" "ranges" ] .
//	sweep     = "sweep" arith "over" axis [ "and" axis ] .
//	axis      = name arith ".." arith .
//	breakeven = "breakeven" arith "=" arith "over" name [ arith ".." arith ] .
//	scenario  = "scenario" name ":" name "=" arith { "," name "=" arith } .
//	compare   = "compare" arith "across" name { "," name } .
//	attribute = "attribute" arith "from" name "to" name .
//	exchange  = "exchange" name "=" arith .
//	basis     = "basis" [ arith ] .
//	global    = ( "simulate" | "sobol" | "morris" | "screen" ) arith .
//	interactions = "interactions" arith .
//	spearman  = "spearman" ref "," ref "=" arith .
//	print     = "print" STRING .
//	reset     = "reset" .
//	charts    = "charts" name .
//	help      = "help" [ name ] .
//
// A name may hold dots between letters (parts.qty, a column of a table). A UNIT
// right after a name, with no space between, is an element's key, not a unit:
// qty[bracket-12] in a ref, the table or periods of a vector input in over
// (input om[year] = ...). Text in quotes (STRING) is compared with a text
// column.
//
// A unit in brackets right after a number belongs to that number (90 [min] * rate),
// except the last bracket of an input or formula line, which is the line's declared
// unit (total = units * price [$]). When a formula's whole value is one number, the
// declared unit is that number's unit as well (lead_time = 6 [wk]). Whether a
// trailing bracket is instead read as the unit of the number before it is
// decided by the unit check (sens/unitrule.go), not by the parser.

// MaxDepth is the deepest nesting of expressions the parser accepts.
const MaxDepth = 200

// MaxHeight is the tallest expression tree the parser accepts: the most
// operations on a path from a term to the whole, where each operator of a
// chain a * b * c counts as one (the parser reads a chain as nested pairs,
// ((a * b) * c)), except the additions of a chain a + b + c + ..., which
// the compiler adds pairwise without recursion and which count as one
// operation however long the chain (up to MaxTerms terms). Every stage
// after the parser walks expressions recursively; these bounds keep their
// stacks to a few tens of megabytes, where a chain of 200,000 products on
// one line would exhaust the runtime's 1 GB stack and end the process.
const MaxHeight = 10000

// MaxTerms is the most terms of one chain of additions, a + b + c + ....
const MaxTerms = 100000

// Parse parses src as a model file or notebook cell named name. It returns every
// statement it could parse and the errors it found (an ErrorList, or nil).
func Parse(name string, src []byte) (*File, []Stmt, error) {
	f := NewFile(name, src)
	var p parser
	p.init(f)
	stmts := p.parseFile()
	f.endNames()
	p.errs.Sort()
	if len(p.errs) > maxErrors {
		p.errs = p.errs[:maxErrors]
	}
	return f, stmts, p.errs.Err()
}

// ParseExpr parses a single expression, for tools such as completion and tests.
func ParseExpr(src string) (Expr, error) {
	f := NewFile("", []byte(src))
	var p parser
	p.init(f)
	x := p.parseExpr()
	if p.tok != EOF && p.tok != NEWLINE {
		p.errorExpected("end of expression")
	}
	f.endNames()
	p.errs.Sort()
	return x, p.errs.Err()
}

// token is a token the parser keeps: 16 bytes and no pointer for the
// collector to follow. Its text is found by id: a name's in the file's
// table of names (IDENT), else parser.lits[id-1]; "\n" for a NEWLINE and
// "" when id is 0.
type token struct {
	pos Pos
	tok int32 // a Token
	id  int32 // a name's number (Ident.ID), or 1 + the index of the text in parser.lits
}

type parser struct {
	file *File
	errs ErrorList
	toks []token
	lits []string // the texts of tokens that are not names (token.id)
	i    int

	// current token
	tok Token
	pos Pos
	lit string
	id  int32 // the name's number when tok is IDENT

	depth    int  // expression nesting
	height   int  // the height of the expression parsed last (MaxHeight)
	stmtUnit bool // a trailing unit at the end of the line belongs to the statement
	// inInput: an input's value is being parsed, where a name, a space and
	// '(' start the range: input qty = parts.qty (±10%).
	inInput  bool
	nested   int  // inside parentheses or call arguments
	unclosed bool // the source ends inside parentheses

	// The most frequent nodes come from blocks (slab).
	idents   slab[Ident]
	binaries slab[BinaryExpr]
	numbers  slab[NumberLit]
	units    slab[UnitLit]
	calls    slab[CallExpr]
	formulas slab[FormulaStmt]
	inputs   slab[InputStmt]
}

// slab hands out zero values of T from blocks, of 8 at first and doubling
// to slabSize: one allocation a block instead of one a node, and fewer
// objects for the collector, while a short cell takes small blocks.
type slab[T any] struct {
	free []T
	last int // the size of the last block
}

const slabSize = 128

func (s *slab[T]) new() *T {
	if len(s.free) == 0 {
		s.last = min(max(2*s.last, 8), slabSize)
		s.free = make([]T, s.last)
	}
	x := &s.free[0]
	s.free = s.free[1:]
	return x
}

type bailout struct{}

func (p *parser) init(f *File) {
	p.file = f
	// About one distinct name in 40 bytes of model text, or fewer (a
	// generated model of 10^5 lines has 125,000 names in 5.7 MB): room for
	// them without growing the table. The parse closes it (Parse,
	// ParseExpr, Incomplete).
	f.startNames(len(f.Src)/40 + 16)
	// About one token in four bytes of model text: room for them all at
	// once, so that a large file's tokens are not copied while they grow.
	p.toks = make([]token, 0, len(f.Src)/4+16)
	var s Scanner
	s.Init(f, &p.errs)
	var open []Pos // positions of unclosed '('
	lineStart := true
	var lastNL Pos
	last := NEWLINE // the last token kept
	for {
		tok, pos, lit := s.Scan()
		if tok == COMMENT {
			continue
		}
		if tok == NEWLINE && len(open) > 0 {
			lineStart, lastNL = true, pos
			continue
		}
		// A line that ends with a binary operator continues on the next one,
		// unless nothing follows or the next line starts a statement of its own.
		if tok == NEWLINE && ContinuesLine(last) && p.nextLineContinues(&s) {
			continue
		}
		last = tok
		// Inside parentheses, a line that looks like a new statement means a
		// parenthesis was left open: report it there and start afresh.
		if lineStart && len(open) > 0 && p.looksLikeStatementStart(&s, tok, p.nameText(tok, pos, s.id, lit)) {
			p.errs.Add(f, open[len(open)-1], "'(' not closed: expected ')' before the end of the line")
			p.toks = append(p.toks, token{pos: lastNL, tok: int32(NEWLINE)})
			open = open[:0]
		}
		lineStart = tok == NEWLINE
		switch tok {
		case LPAREN:
			open = append(open, pos)
		case RPAREN:
			if len(open) > 0 {
				open = open[:len(open)-1]
			}
		}
		t := token{pos: pos, tok: int32(tok)}
		switch {
		case tok == IDENT && s.id < 0:
			t.id = s.id // numbered below (numberNames)
		case tok == NEWLINE || lit == "":
		default:
			p.lits = append(p.lits, lit)
			t.id = int32(len(p.lits))
		}
		p.toks = append(p.toks, t)
		if tok == EOF {
			if len(open) > 0 {
				p.unclosed = true
				p.errs.Add(f, open[len(open)-1], "'(' not closed: expected ')'")
			}
			break
		}
	}
	p.numberNames()
	p.i = 0
	p.load()
}

// numberNames numbers the names the scanner left unnumbered (a token id of
// minus the name's length), in the order they come: one pass over the
// tokens whose lookups, independent of one another, the processor runs
// several at a time, where a million-line model's table of names is far
// larger than its caches.
func (p *parser) numberNames() {
	t, src := p.file.names, p.file.Src
	for k := range p.toks {
		tk := &p.toks[k]
		if tk.id >= 0 || Token(tk.tok) != IDENT {
			continue
		}
		off := p.file.Offset(tk.pos)
		b := src[off : off-int(tk.id)]
		id := t.lookupID(b)
		if id == 0 {
			id, _ = t.add(b)
		}
		tk.id = id
	}
}

// nameText returns the text of a token the scanner returned: lit, or a
// name's, which the scanner leaves out while names are numbered.
func (p *parser) nameText(tok Token, pos Pos, id int32, lit string) string {
	if tok != IDENT || id >= 0 {
		return lit
	}
	off := p.file.Offset(pos)
	return string(p.file.Src[off : off-int(id)])
}

// ContinuesLine reports whether a line that ends with tok continues on the
// next line: tok is a binary operator (+ - * / ^, a comparison, and, or).
func ContinuesLine(tok Token) bool {
	switch tok {
	case ADD, SUB, MUL, QUO, POW, EQL, NEQ, LSS, LEQ, GTR, GEQ, AND, OR:
		return true
	}
	return false
}

// nextLineContinues reports whether the text after a line that ends with a
// binary operator continues it: the next line that is not blank or a comment
// exists and does not start with "input" or "name =". The scanner is left
// where it was.
func (p *parser) nextLineContinues(s *Scanner) bool {
	save, n := *s, len(p.errs)
	defer func() { *s, p.errs = save, p.errs[:n] }()
	tok, _, _ := s.Scan()
	for tok == NEWLINE || tok == COMMENT {
		tok, _, _ = s.Scan()
	}
	if tok == EOF || tok == INPUT {
		return false
	}
	if tok == IDENT {
		next, _, _ := s.Scan()
		return next != ASSIGN
	}
	return true
}

// looksLikeStatementStart reports whether a line inside open parentheses starts
// with "input" or "name =", which cannot continue an expression.
func (p *parser) looksLikeStatementStart(s *Scanner, tok Token, lit string) bool {
	if tok == INPUT {
		return true
	}
	if tok != IDENT {
		return false
	}
	save, n := *s, len(p.errs)
	next, _, _ := s.Scan()
	*s = save
	p.errs = p.errs[:n]
	// table NAME = and periods NAME = (tables.go) start statements too.
	return next == ASSIGN || next == IDENT && (lit == "table" || lit == "periods")
}

func (p *parser) load() {
	t := p.toks[p.i]
	p.tok, p.pos, p.lit, p.id = Token(t.tok), t.pos, "", 0
	switch {
	case p.tok == IDENT && t.id != 0 && p.file.names != nil:
		p.lit, p.id = p.file.names.str(t.id), t.id
	case t.id != 0:
		p.lit = p.lits[t.id-1]
	case p.tok == NEWLINE:
		p.lit = "\n"
	}
}

func (p *parser) next() {
	if p.i < len(p.toks)-1 {
		p.i++
	}
	p.load()
}

func (p *parser) peek(k int) Token {
	if p.i+k < len(p.toks) {
		return Token(p.toks[p.i+k].tok)
	}
	return EOF
}

func (p *parser) error(pos Pos, msg string) {
	p.errs.Add(p.file, pos, msg)
	panic(bailout{})
}

func (p *parser) describe() string {
	switch p.tok {
	case IDENT:
		return "name " + p.lit
	case NUMBER:
		return "number " + p.lit
	case STRING:
		return "string"
	case UNIT:
		return "unit [" + p.lit + "]"
	case NEWLINE:
		return "end of line"
	case EOF:
		return "end of input"
	case ILLEGAL:
		return p.lit
	}
	return "'" + p.tok.String() + "'"
}

func (p *parser) errorExpected(what string) {
	p.error(p.pos, "expected "+what+", found "+p.describe())
}

func (p *parser) atEnd() bool { return p.tok == NEWLINE || p.tok == EOF }

// ---- Statements

func (p *parser) parseFile() []Stmt {
	var stmts []Stmt
	for p.tok != EOF {
		if p.tok == NEWLINE {
			p.next()
			continue
		}
		if s := p.parseStmtSafe(); s != nil {
			stmts = append(stmts, s)
		}
		if len(p.errs) > maxErrors {
			break
		}
	}
	return stmts
}

// parseStmtSafe parses one statement; on an error it skips to the next line.
func (p *parser) parseStmtSafe() (s Stmt) {
	defer func() {
		if r := recover(); r != nil {
			if _, ok := r.(bailout); !ok {
				panic(r)
			}
			s = nil
			p.depth, p.height, p.nested, p.stmtUnit, p.inInput = 0, 0, 0, false, false
			for !p.atEnd() {
				p.next()
			}
		}
	}()
	s = p.parseStmt()
	if !p.atEnd() {
		p.errorExpected("end of line")
	}
	return s
}

func (p *parser) parseStmt() Stmt {
	switch {
	case p.tok == INPUT:
		return p.parseInput()
	case p.tok == IDENT && p.peek(1) == IDENT && (p.lit == "table" || p.lit == "periods"):
		return p.parseLineItems()
	case p.tok == IDENT && p.peek(1) == ASSIGN:
		return p.parseFormula()
	case p.tok == IDENT && IsVerb(p.lit):
		return p.parseCommand()
	case p.tok == ILLEGAL:
		p.error(p.pos, "unexpected "+p.lit)
	}
	p.stmtUnit = true
	x := p.parseExpr()
	p.stmtUnit = false
	s := &ExprStmt{X: x}
	if p.tok == UNIT {
		s.Unit = p.parseUnit()
	}
	if p.tok == ASSIGN {
		p.error(p.pos, "cannot assign to an expression: the left of '=' must be a name")
	}
	return s
}

func (p *parser) parseIdent() *Ident {
	if p.tok != IDENT {
		if p.tok >= keywordBeg && p.tok <= keywordEnd {
			p.error(p.pos, "expected name, found keyword "+p.tok.String())
		}
		p.errorExpected("name")
	}
	id := p.idents.new()
	*id = Ident{NamePos: p.pos, Name: p.lit, ID: p.id}
	p.next()
	return id
}

func (p *parser) parseUnit() *UnitLit {
	u := p.units.new()
	*u = UnitLit{Lbrack: p.pos, Text: strings.TrimSpace(p.lit)}
	u.Rbrack = p.pos + Pos(len(p.lit)) + 1
	p.next()
	return u
}

func (p *parser) parseInput() *InputStmt {
	s := p.inputs.new()
	s.Input = p.pos
	p.next()
	s.Name = p.parseIdent()
	if p.tok == UNIT && p.pos == s.Name.End() {
		s.Over = p.parseOver(s.Name)
	}
	if p.tok != ASSIGN {
		p.error(p.pos, "expected '=' and a value after input "+s.Name.Name+", found "+p.describe())
	}
	p.next()
	p.stmtUnit, p.inInput = true, true
	s.Value = p.parseExpr()
	p.stmtUnit, p.inInput = false, false
	if p.tok == UNIT {
		s.Unit = p.parseUnit()
	}
	if lit, ok := s.Value.(*NumberLit); ok && s.Unit == nil && lit.Unit != nil {
		s.Unit = lit.Unit
	}
	for !p.atEnd() {
		switch p.tok {
		case LPAREN:
			if s.Range != nil {
				p.error(p.pos, "input "+s.Name.Name+" already has a range")
			}
			s.Range = p.parseRange()
		case TILDE:
			if s.Dist != nil {
				p.error(p.pos, "input "+s.Name.Name+" already has a distribution")
			}
			s.Dist = p.parseDist()
		case UNIT:
			p.error(p.pos, "the unit goes right after the value: input "+s.Name.Name+" = VALUE [UNIT] (RANGE)")
		case IDENT:
			p.bareUnit(s.Value, false)
			p.errorExpected("a range in parentheses, '~' and a distribution, or end of line")
		default:
			p.errorExpected("a range in parentheses, '~' and a distribution, or end of line")
		}
	}
	s.EndAt = p.pos
	return s
}

// parseRange parses (low..high), (-5%..+8%) or (±20%).
func (p *parser) parseRange() *RangeSpec {
	r := &RangeSpec{Lparen: p.pos}
	p.next()
	if p.tok == PM {
		p.next()
		b := p.parseBound(true)
		if b.Value < 0 {
			p.error(b.ValuePos, "a ± range must be positive")
		}
		r.Symmetric = true
		r.High = b
		r.Low = Bound{ValuePos: b.ValuePos, Value: -b.Value, Percent: b.Percent, Lit: "-" + strings.TrimPrefix(b.Lit, "+")}
	} else {
		r.Low = p.parseBound(false)
		if p.tok != DOTDOT {
			p.errorExpected("'..' between the low and high ends of the range")
		}
		p.next()
		r.High = p.parseBound(false)
		if r.Low.Percent && r.High.Column != nil || r.High.Percent && r.Low.Column != nil {
			p.error(r.Lparen, "range mixes a percentage and a column: write both ends as columns or both as percentages")
		}
		if r.Low.Percent != r.High.Percent {
			p.error(r.Lparen, "range mixes a percentage and a value: write both ends as percentages or both as values")
		}
	}
	if p.tok != RPAREN {
		p.errorExpected("')' to close the range")
	}
	r.Rparen = p.pos
	p.next()
	if r.Low.Column == nil && r.High.Column == nil && r.Low.Value > r.High.Value {
		p.error(r.Low.ValuePos, errorf("range is reversed: low end %s is above high end %s", r.Low.Lit, r.High.Lit))
	}
	return r
}

func (p *parser) parseBound(unsigned bool) Bound {
	b := Bound{ValuePos: p.pos}
	sign := 1.0
	lit := ""
	if !unsigned && (p.tok == SUB || p.tok == ADD) {
		if p.tok == SUB {
			sign, lit = -1, "-"
		} else {
			lit = "+"
		}
		p.next()
	}
	if p.tok == IDENT && lit == "" {
		b.Column = p.parseIdent()
		b.Lit = b.Column.Name
		if p.tok == PERCENT {
			p.error(p.pos, "a range from columns takes values, not percentages: ("+b.Lit+"..TABLE.COLUMN)")
		}
		return b
	}
	if p.tok != NUMBER {
		p.errorExpected("a number")
	}
	v, err := ParseNumber(p.lit)
	if err != nil {
		p.error(p.pos, "malformed number "+p.lit)
	}
	b.Value = sign * v
	b.Lit = lit + p.lit
	p.next()
	if p.tok == PERCENT {
		b.Percent = true
		b.Lit += "%"
		p.next()
	} else if p.tok == UNIT {
		p.error(p.pos, "a range is written in the input's own unit: drop the unit here")
	}
	return b
}

func (p *parser) parseDist() *DistSpec {
	d := &DistSpec{Tilde: p.pos}
	p.next()
	if p.tok != IDENT {
		p.errorExpected("a distribution such as normal(mean, sd)")
	}
	d.Name = p.parseIdent()
	if p.tok != LPAREN {
		p.errorExpected("'(' and the parameters of " + d.Name.Name)
	}
	d.Lparen, d.Args, d.Rparen = p.parseArgs(d.Name.Name)
	return d
}

func (p *parser) parseFormula() *FormulaStmt {
	s := p.formulas.new()
	s.Name = p.parseIdent()
	s.Assign = p.pos
	p.next()
	if p.atEnd() {
		p.error(p.pos, "expected a formula after '=', found "+p.describe())
	}
	p.stmtUnit = true
	s.Value = p.parseExpr()
	p.stmtUnit = false
	if p.tok == UNIT {
		s.Unit = p.parseUnit()
		if lit, ok := s.Value.(*NumberLit); ok && lit.Unit == nil {
			lit.Unit = s.Unit
		}
	}
	if p.tok == IDENT {
		p.bareUnit(s.Value, true)
	}
	s.EndAt = p.pos
	return s
}

// bareUnit reports a name written after a value where a unit in brackets
// or an operator was meant: "input m = 12 kg" suggests 12 [kg], and
// "y = 2 x" also 2 * x (when mul is set: a formula). It does nothing unless
// x ends in a number without a unit.
func (p *parser) bareUnit(x Expr, mul bool) {
	n := x
	for {
		switch e := n.(type) {
		case *BinaryExpr:
			n = e.Y
			continue
		case *UnaryExpr:
			n = e.X
			continue
		}
		break
	}
	lit, ok := n.(*NumberLit)
	if !ok || lit.Unit != nil {
		return
	}
	msg := "a unit goes in square brackets: write " + lit.Lit + " [" + p.lit + "]"
	if mul {
		msg += " (or " + lit.Lit + " * " + p.lit + " to multiply)"
	}
	p.error(p.pos, msg)
}

// ---- Expressions

func (p *parser) parseExpr() Expr { return p.parseBinary(1) }

// parseArith parses an expression without comparisons or logic, so that words
// such as "and" and "over" end it inside commands.
func (p *parser) parseArith() Expr {
	save := p.stmtUnit
	p.stmtUnit = false
	defer func() { p.stmtUnit = save }()
	return p.parseBinary(4)
}

func (p *parser) enter() {
	p.depth++
	if p.depth > MaxDepth {
		p.error(p.pos, errorf("expression nested too deeply (more than %d levels)", MaxDepth))
	}
}

func (p *parser) leave() { p.depth-- }

// grow sets the height of an operation at pos whose operands are the
// expression parsed last and one of height h, and stops the statement when
// it passes MaxHeight.
func (p *parser) grow(pos Pos, h int) {
	p.height = max(p.height, h) + 1
	if p.height > MaxHeight {
		p.error(pos, errorf("expression too long: more than %d operations in a chain (or nested); split it into formulas of partial sums, or sum a table's column with sum()", MaxHeight))
	}
}

func (p *parser) parseBinary(prec1 int) Expr {
	p.enter()
	defer p.leave()
	var x Expr
	if p.tok == NOT && prec1 <= 3 {
		pos := p.pos
		p.next()
		x = &UnaryExpr{OpPos: pos, Op: NOT, X: p.parseBinary(3)}
		p.grow(pos, 0)
	} else {
		x = p.parseUnary()
	}
	terms := 1 // the terms of x, a chain of additions
	for {
		op, oprec := p.tok, p.tok.Precedence()
		if oprec < prec1 || op == POW {
			return x
		}
		hx := p.height
		pos := p.pos
		p.next()
		if p.atEnd() {
			p.error(p.pos, "expected an operand after '"+op.String()+"', found "+p.describe())
		}
		y := p.parseBinary(oprec + 1)
		if op == ADD && terms > 1 {
			// Another term of a chain of additions: the chain's height is
			// its tallest term's plus one.
			terms++
			p.height = max(p.height+1, hx)
			if terms > MaxTerms {
				p.error(pos, errorf("expression too long: more than %d terms in one sum; split it into formulas of partial sums, or sum a table's column with sum()", MaxTerms))
			}
		} else {
			p.grow(pos, hx)
			terms = 1
			if op == ADD {
				terms = 2
			}
		}
		if op.IsComparison() {
			if b, ok := x.(*BinaryExpr); ok && b.Op.IsComparison() {
				p.error(pos, "comparisons do not chain: write a < b and b < c")
			}
		}
		b := p.binaries.new()
		*b = BinaryExpr{X: x, OpPos: pos, Op: op, Y: y}
		x = b
	}
}

func (p *parser) parseUnary() Expr {
	switch p.tok {
	case SUB, ADD:
		pos, op := p.pos, p.tok
		p.next()
		p.enter()
		defer p.leave()
		x := &UnaryExpr{OpPos: pos, Op: op, X: p.parseUnary()}
		p.grow(pos, 0)
		return x
	case NOT:
		p.error(p.pos, "'not' applies to a condition: use it inside if(...)")
	}
	return p.parsePower()
}

func (p *parser) parsePower() Expr {
	x := p.parsePrimary()
	if p.tok == POW {
		pos := p.pos
		hx := p.height
		p.next()
		p.enter()
		defer p.leave()
		y := p.parseUnary() // right-associative: 2^3^2 = 2^(3^2); 2^-1 allowed
		p.grow(pos, hx)
		b := p.binaries.new()
		*b = BinaryExpr{X: x, OpPos: pos, Op: POW, Y: y}
		return b
	}
	return x
}

func (p *parser) parsePrimary() Expr {
	p.height = 0
	switch p.tok {
	case NUMBER:
		v, err := ParseNumber(p.lit)
		if err != nil && !math.IsInf(v, 0) {
			p.error(p.pos, "malformed number "+p.lit)
		}
		if math.IsInf(v, 0) {
			p.error(p.pos, "number "+p.lit+" is too large")
		}
		x := p.numbers.new()
		*x = NumberLit{ValuePos: p.pos, Lit: p.lit, Value: v}
		p.next()
		if p.tok == UNIT && !p.unitEndsStatement() {
			x.Unit = p.parseUnit()
		}
		return x
	case IDENT:
		id := p.parseRef()
		if p.tok == LPAREN && id.brack == 0 && !(p.inInput && p.nested == 0 && p.pos != id.End()) {
			lp, args, rp := p.parseArgs(id.Name)
			x := p.calls.new()
			*x = CallExpr{Fun: id, Lparen: lp, Args: args, Rparen: rp}
			return x
		}
		return id
	case LPAREN:
		lp := p.pos
		p.next()
		p.nested++
		x := p.parseExpr()
		p.nested--
		if p.tok != RPAREN {
			p.errorExpected("')'")
		}
		rp := p.pos
		p.next()
		p.grow(lp, 0)
		return &ParenExpr{Lparen: lp, X: x, Rparen: rp}
	case UNIT:
		p.error(p.pos, "a unit must follow a number or end the line: write 5 ["+p.lit+"]")
	case STRING:
		x := &StringLit{ValuePos: p.pos, Value: p.lit, Lit: string(p.file.Src[p.file.Offset(p.pos):p.file.Offset(p.stringEnd())])}
		p.next()
		return x
	case ASSIGN:
		p.error(p.pos, "unexpected '=': use == to compare")
	}
	if p.tok >= keywordBeg && p.tok <= keywordEnd {
		p.error(p.pos, "expected an operand, found keyword "+p.tok.String())
	}
	p.errorExpected("an operand (a number, a name or '(')")
	return nil
}

// unitEndsStatement reports whether the UNIT at hand is the declared unit of the
// statement rather than the unit of the number before it.
func (p *parser) unitEndsStatement() bool {
	if !p.stmtUnit || p.nested > 0 {
		return false
	}
	switch p.peek(1) {
	case NEWLINE, EOF, LPAREN, TILDE:
		return true
	}
	return false
}

func (p *parser) parseArgs(fun string) (lp Pos, args []Expr, rp Pos) {
	lp = p.pos
	p.next()
	p.nested++
	saveUnit := p.stmtUnit
	p.stmtUnit = false
	h := 0 // the tallest argument
	for p.tok != RPAREN {
		args = append(args, p.parseExpr())
		h = max(h, p.height)
		if p.tok == COMMA {
			p.next()
			if p.tok == RPAREN {
				p.error(p.pos, "expected an argument after ','")
			}
			continue
		}
		if p.tok == ASSIGN {
			if id, ok := args[len(args)-1].(*Ident); ok && fun != "if" {
				p.error(id.Pos(), "the arguments of "+fun+" are positional, not named: drop '"+id.Name+" =' and give the values in order")
			}
			p.error(p.pos, "unexpected '=': use == to compare")
		}
		if p.tok != RPAREN {
			p.errorExpected("',' or ')'")
		}
	}
	p.stmtUnit = saveUnit
	p.nested--
	rp = p.pos
	p.next()
	p.height = h
	p.grow(lp, 0)
	return lp, args, rp
}

// exprString renders x compactly, for messages.
func exprString(x Expr) string {
	var b fullBuilder
	// Room for the source text and a few blanks: one allocation, usually.
	b.Grow(max(int(x.End()-x.Pos()), 0) + 16)
	writeExprTo(&b, x)
	return b.String()
}

// String returns x as source text with canonical spacing.
func String(x Expr) string { return exprString(x) }

// MaxBrief is the length, in bytes, past which Brief cuts an expression.
const MaxBrief = 60

// Brief returns x as String does, cut after about MaxBrief bytes with "…":
// for messages, which quote an expression to point at it, and must not
// quote a sum of 100,000 terms whole.
func Brief(x Expr) string {
	b := limitedBuilder{limit: MaxBrief}
	writeExprTo(&b, x)
	if b.cut {
		return b.String() + "…"
	}
	return b.String()
}

// exprWriter is where writeExprTo writes: a strings.Builder, or a
// limitedBuilder that stops taking text past its limit.
type exprWriter interface {
	WriteString(string) (int, error)
	WriteByte(byte) error
	full() bool
}

type fullBuilder struct{ strings.Builder }

func (*fullBuilder) full() bool { return false }

type limitedBuilder struct {
	strings.Builder
	limit int
	cut   bool
}

func (b *limitedBuilder) full() bool {
	if b.Len() >= b.limit {
		b.cut = true
	}
	return b.cut
}

// PrintedAt reports whether String(x) followed by suffix is the start of
// src, and if so its length, comparing as String would print and building
// no string: a compiler keeps a formula's text as a span of its source when
// it is one.
func PrintedAt(x Expr, suffix string, src []byte) (int, bool) {
	m := sourceMatcher{src: src}
	writeExprTo(&m, x)
	m.WriteString(suffix)
	return m.n, !m.bad
}

// sourceMatcher is an exprWriter that compares what is written with src,
// stopping at the first difference.
type sourceMatcher struct {
	src []byte
	n   int
	bad bool
}

func (m *sourceMatcher) WriteString(s string) (int, error) {
	if !m.bad {
		if len(s) > len(m.src)-m.n || string(m.src[m.n:m.n+len(s)]) != s {
			m.bad = true
		} else {
			m.n += len(s)
		}
	}
	return len(s), nil
}

func (m *sourceMatcher) WriteByte(c byte) error {
	if !m.bad {
		if m.n < len(m.src) && m.src[m.n] == c {
			m.n++
		} else {
			m.bad = true
		}
	}
	return nil
}

func (m *sourceMatcher) full() bool { return m.bad }

func writeExprTo(b exprWriter, x Expr) {
	if b.full() {
		return
	}
	switch x := x.(type) {
	case nil:
		b.WriteString("?")
	case *Ident:
		b.WriteString(x.Name)
	case *StringLit:
		b.WriteString(x.Lit)
	case *NumberLit:
		b.WriteString(x.Lit)
		if x.Unit != nil {
			b.WriteString(" [")
			b.WriteString(x.Unit.Text)
			b.WriteByte(']')
		}
	case *ParenExpr:
		b.WriteByte('(')
		writeExprTo(b, x.X)
		b.WriteByte(')')
	case *UnaryExpr:
		b.WriteString(x.Op.String())
		if x.Op == NOT {
			b.WriteByte(' ')
		}
		writeExprTo(b, x.X)
	case *BinaryExpr:
		writeExprTo(b, x.X)
		if b.full() {
			return
		}
		if x.Op == POW {
			b.WriteString("^")
		} else {
			b.WriteByte(' ')
			b.WriteString(x.Op.String())
			b.WriteByte(' ')
		}
		writeExprTo(b, x.Y)
	case *CallExpr:
		b.WriteString(x.Fun.Name)
		b.WriteByte('(')
		for i, a := range x.Args {
			if b.full() {
				return
			}
			if i > 0 {
				b.WriteString(", ")
			}
			writeExprTo(b, a)
		}
		b.WriteByte(')')
	case *UnitLit:
		b.WriteByte('[')
		b.WriteString(x.Text)
		b.WriteByte(']')
	}
}

// Incomplete reports whether the parser would read src together with a line
// that follows it: src ends inside open parentheses, after a binary operator
// (ContinuesLine) or with a backslash. A front end asks for another line
// then; anything else is complete or an error, which Parse tells. It reads
// the tokens as the parser does, so the two agree.
func Incomplete(src string) bool {
	t := strings.TrimRight(src, " \t\r\n")
	if strings.HasSuffix(t, "\\") {
		return true
	}
	var p parser
	p.init(NewFile("", []byte(src)))
	p.file.endNames()
	if p.unclosed {
		return true
	}
	for i := len(p.toks) - 1; i >= 0; i-- {
		if tok := Token(p.toks[i].tok); tok != EOF && tok != NEWLINE {
			return ContinuesLine(tok)
		}
	}
	return false
}
