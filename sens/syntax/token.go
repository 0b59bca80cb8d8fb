// Package syntax holds the vocabulary, scanner, tree and parser of the nudge model
// language. It imports only the standard library.
//
// A model is a sequence of lines. Each line is one statement:
//
//	input NAME = VALUE [UNIT] (RANGE) ~ DIST(ARGS)   # an input; unit, range, distribution optional
//	NAME = EXPR [UNIT]                                # a formula; the declared unit is optional
//	VERB ...                                          # a command: drivers, tornado, sweep, ...
//	EXPR                                              # a bare expression: show its value
//
// Newlines end statements except inside parentheses. A '#' starts a comment that runs
// to the end of the line.
package syntax

import (
	"fmt"
	"sort"
	"unicode/utf8"
)

// Pos is a compact source position: a byte offset into a File plus one. The zero
// Pos means "no position".
type Pos int

// NoPos is the zero position.
const NoPos Pos = 0

// IsValid reports whether p is a real position.
func (p Pos) IsValid() bool { return p != NoPos }

// Position is a human-readable source position, built only for messages.
// Line and Column are 1-based; Column counts Unicode code points, so a caret
// lines up under the character a person sees.
type Position struct {
	Filename string
	Line     int
	Column   int
}

// String formats p as file:line:col (or line:col without a file name).
func (p Position) String() string {
	if p.Line == 0 {
		return p.Filename
	}
	if p.Filename == "" {
		return fmt.Sprintf("%d:%d", p.Line, p.Column)
	}
	return fmt.Sprintf("%s:%d:%d", p.Filename, p.Line, p.Column)
}

// File is one unit of source text: a model file or a notebook cell.
type File struct {
	Name  string
	Src   []byte
	lines []int // byte offset of the start of each line

	// While the file is parsed, names numbers its names (Ident.ID): a
	// name written many times is one string, and a reference carries a
	// number that the compiler resolves by slice index instead of by
	// hashing the name. The table is dropped when the parse ends;
	// nameCount stays.
	names     *nameTable
	nameCount int32
}

// NameCount returns how many distinct names the parse of f numbered:
// Ident.ID runs from 1 to NameCount.
func (f *File) NameCount() int {
	if f == nil {
		return 0
	}
	return int(f.nameCount)
}

// startNames opens f's table of names for a parse; hint is the expected
// count.
func (f *File) startNames(hint int) {
	if f.nameCount != 0 {
		// Parsed before (Parse makes a new File, so never yet): leave
		// the names unnumbered, so that a name keeps one number a file.
		return
	}
	f.names = newNameTable(hint, 0)
}

// endNames drops f's table of names, keeping their count.
func (f *File) endNames() {
	if f.names != nil {
		f.nameCount = f.names.count
	}
	f.names = nil
}

// intern returns name's number in f (from 1), numbering it when it is new,
// and the one string f keeps for it; 0 and name when no parse is open.
func (f *File) intern(name string) (int32, string) {
	if f.names == nil {
		return 0, name
	}
	id, s := f.names.lookup([]byte(name))
	if id == 0 {
		id, s = f.names.add([]byte(name))
	}
	return id, s
}

// NewFile returns a File for src. Name is used in positions ("cell 3", "plant.nudge").
func NewFile(name string, src []byte) *File {
	f := &File{Name: name, Src: src, lines: []int{0}}
	for i, c := range src {
		if c == '\n' {
			f.lines = append(f.lines, i+1)
		}
	}
	return f
}

// Pos returns the Pos of byte offset off.
func (f *File) Pos(off int) Pos { return Pos(off + 1) }

// Offset returns the byte offset of p.
func (f *File) Offset(p Pos) int { return int(p) - 1 }

// Position converts p to a line and column.
func (f *File) Position(p Pos) Position {
	if f == nil || !p.IsValid() {
		return Position{}
	}
	off := f.Offset(p)
	if off > len(f.Src) {
		off = len(f.Src)
	}
	line := sort.Search(len(f.lines), func(i int) bool { return f.lines[i] > off }) - 1
	col := utf8.RuneCount(f.Src[f.lines[line]:off]) + 1
	return Position{Filename: f.Name, Line: line + 1, Column: col}
}

// Line returns the text of the 1-based line n without its newline.
func (f *File) Line(n int) string {
	if f == nil || n < 1 || n > len(f.lines) {
		return ""
	}
	start := f.lines[n-1]
	end := len(f.Src)
	if n < len(f.lines) {
		end = f.lines[n] - 1
	}
	s := string(f.Src[start:end])
	if len(s) > 0 && s[len(s)-1] == '\r' {
		s = s[:len(s)-1]
	}
	return s
}

// Token is a lexical token kind.
type Token int

// The tokens of the language.
const (
	ILLEGAL Token = iota
	EOF
	NEWLINE
	COMMENT

	IDENT  // shop_rate
	NUMBER // 1200, 1.5e3, 1_200
	STRING // "text"
	UNIT   // [kg/h]: the text between the brackets

	ADD     // +
	SUB     // -
	MUL     // *
	QUO     // /
	POW     // ^
	PERCENT // %
	PM      // ± or +-
	TILDE   // ~
	ASSIGN  // =
	EQL     // ==
	NEQ     // !=
	LSS     // <
	LEQ     // <=
	GTR     // >
	GEQ     // >=
	LPAREN  // (
	RPAREN  // )
	COMMA   // ,
	COLON   // :
	DOTDOT  // ..

	keywordBeg
	INPUT // input
	AND   // and
	OR    // or
	NOT   // not
	keywordEnd
)

var tokens = [...]string{
	ILLEGAL: "illegal character",
	EOF:     "end of input",
	NEWLINE: "end of line",
	COMMENT: "comment",
	IDENT:   "name",
	NUMBER:  "number",
	STRING:  "string",
	UNIT:    "unit",
	ADD:     "+",
	SUB:     "-",
	MUL:     "*",
	QUO:     "/",
	POW:     "^",
	PERCENT: "%",
	PM:      "±",
	TILDE:   "~",
	ASSIGN:  "=",
	EQL:     "==",
	NEQ:     "!=",
	LSS:     "<",
	LEQ:     "<=",
	GTR:     ">",
	GEQ:     ">=",
	LPAREN:  "(",
	RPAREN:  ")",
	COMMA:   ",",
	COLON:   ":",
	DOTDOT:  "..",
	INPUT:   "input",
	AND:     "and",
	OR:      "or",
	NOT:     "not",
}

// String returns the token's spelling or a description of its kind.
func (t Token) String() string {
	if t >= 0 && int(t) < len(tokens) && tokens[t] != "" {
		return tokens[t]
	}
	return fmt.Sprintf("token(%d)", int(t))
}

var keywords = map[string]Token{"input": INPUT, "and": AND, "or": OR, "not": NOT}

// Lookup maps an identifier to its keyword token, or IDENT.
func Lookup(name string) Token {
	if t, ok := keywords[name]; ok {
		return t
	}
	return IDENT
}

// Precedence returns the binary precedence of op, or 0 if op is not a binary operator.
//
//	1  or
//	2  and
//	3  == != < <= > >=
//	4  + -
//	5  * /
//	7  ^  (right-associative, binds tighter than unary minus: -x^2 is -(x^2))
func (t Token) Precedence() int {
	switch t {
	case OR:
		return 1
	case AND:
		return 2
	case EQL, NEQ, LSS, LEQ, GTR, GEQ:
		return 3
	case ADD, SUB:
		return 4
	case MUL, QUO:
		return 5
	case POW:
		return 7
	}
	return 0
}

// IsComparison reports whether t is a comparison operator.
func (t Token) IsComparison() bool { return t >= EQL && t <= GEQ }
