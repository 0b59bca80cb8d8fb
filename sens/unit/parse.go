package unit

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// maxExp bounds every exponent, written or computed during parsing, so that no arithmetic on
// exponents can overflow and every factor that Parse accepts is a finite float64.
const maxExp = 99

// maxDepth bounds nested parentheses.
const maxDepth = 32

// Error is a mistake in unit text. Offset is a byte offset into the text given to Parse; a
// caller that knows where that text sits in a file adds it to the text's own position. Msg is
// lower case and names the offending text, e.g. `unknown unit "kgg" (did you mean kg?)`.
type Error struct {
	Offset int
	Msg    string
}

func (e *Error) Error() string { return fmt.Sprintf("offset %d: %s", e.Offset, e.Msg) }

// Parse reads a unit expression, the text between the square brackets of the model language:
// "kg", "$/kg", "$/(kg*h)", "kg*m/s^2", "m2", "1/s", "%". The grammar and the table of symbols
// are in the package documentation. Errors are *Error.
func Parse(s string) (Unit, error) {
	ts, perr := parseTerms(s)
	if perr != nil {
		return Unit{}, perr
	}
	u, err := fromTerms(ts)
	if err != nil {
		return Unit{}, &Error{Offset: 0, Msg: err.Error()}
	}
	return u, nil
}

// lookup finds a symbol in the table, or reads it as a currency (see currencySymbol).
func lookup(sym string) (entry, bool) {
	if e, ok := bySymbol[sym]; ok {
		return e, true
	}
	if code, factor, ok := currencySymbol(sym); ok {
		meaning := map[float64]string{1: "currency", 1e3: "thousand", 1e6: "million"}[factor]
		return entry{sym: sym, factor: factor, dim: currencyDim(code), meaning: meaning}, true
	}
	return entry{}, false
}

// currencySymbol reads sym as an amount of a currency: the currency's code (its dimension) and
// the factor of the amount. A currency is "$" (the model's default), "€" (EUR), "£" (GBP) or an
// ISO 4217 code. Amounts in thousands and millions are written as estimators write them:
// k$, K$, $K, $k, kEUR, KEUR, k€, €k for a thousand; M$, MM$, $MM, MEUR, MMEUR, M€, €MM for a
// million. "$M" is not among them: M stands for a thousand in some trades and a million in
// others, and the message for it says so.
func currencySymbol(sym string) (code string, factor float64, ok bool) {
	if c, ok := currencyCode(sym); ok {
		return c, 1, true
	}
	for _, p := range []struct {
		s string
		f float64
	}{{"MM", 1e6}, {"k", 1e3}, {"K", 1e3}, {"M", 1e6}} {
		if rest, ok := strings.CutPrefix(sym, p.s); ok {
			if c, ok := currencyCode(rest); ok {
				return c, p.f, true
			}
		}
		if rest, ok := strings.CutSuffix(sym, p.s); ok && p.s != "M" {
			if c, ok := currencyCode(rest); ok && isCurrencySymbol(rest) {
				return c, p.f, true
			}
		}
	}
	return "", 0, false
}

// currencyCode returns the dimension code of a currency written as "$", "€", "£" or an ISO 4217
// code.
func currencyCode(sym string) (string, bool) {
	switch sym {
	case "$":
		return "$", true
	case "€":
		return "EUR", true
	case "£":
		return "GBP", true
	}
	if isCurrency(sym) {
		return sym, true
	}
	return "", false
}

// isCurrency reports whether code names a currency dimension: "$", or an ISO 4217 code that is
// not, ignoring case, a symbol of the table.
func isCurrency(code string) bool {
	if code == "$" {
		return true
	}
	return iso4217[code] && !foldedSymbols[strings.ToLower(code)]
}

var foldedSymbols = func() map[string]bool {
	m := map[string]bool{}
	for _, e := range table {
		m[strings.ToLower(e.sym)] = true
	}
	return m
}()

// Tokens.
type kind int

const (
	kEOF    kind = iota
	kName        // a symbol; suffix holds ASCII digits written right after it (m2)
	kNumber      // digits, maybe with a fraction and an exponent
	kMul         // * · ⋅ ×
	kDiv         // /
	kPow         // ^
	kPlus        // +
	kMinus       // - −
	kLParen      // (
	kRParen      // )
	kSuper       // a run of superscript signs and digits: ⁻²
	kBad         // any other character
)

type token struct {
	kind   kind
	off    int    // byte offset of the token
	text   string // the token's text (for kName without the digit suffix)
	suffix string // kName only
}

// describe names a token for an error message.
func (t token) describe() string {
	switch t.kind {
	case kEOF:
		return "end of text"
	case kName:
		return strconv.Quote(t.text + t.suffix)
	case kNumber:
		return t.text
	case kBad:
		r, n := utf8.DecodeRuneInString(t.text)
		if r == utf8.RuneError && n <= 1 {
			return fmt.Sprintf("byte %#x", t.text[0])
		}
		return strconv.QuoteRune(r)
	}
	return "'" + t.text + "'"
}

func isNameRune(r rune) bool {
	return unicode.IsLetter(r) || r == '$' || r == '€' || r == '£' || r == '%' || r == '°' || r == '_' || r == '℃' || r == '℉'
}

// superDigit is the value of a superscript digit, or -1.
func superDigit(r rune) int {
	switch {
	case r == '⁰':
		return 0
	case r == '¹':
		return 1
	case r == '²':
		return 2
	case r == '³':
		return 3
	case r >= '⁴' && r <= '⁹':
		return int(r-'⁴') + 4
	}
	return -1
}

func isSuper(r rune) bool { return superDigit(r) >= 0 || r == '⁺' || r == '⁻' }

type parser struct {
	src   string
	pos   int // scan position
	tok   token
	depth int
}

// next scans the next token into p.tok. Space between tokens is skipped.
func (p *parser) next() {
	for p.pos < len(p.src) {
		r, n := utf8.DecodeRuneInString(p.src[p.pos:])
		if !unicode.IsSpace(r) {
			break
		}
		p.pos += n
	}
	start := p.pos
	if start >= len(p.src) {
		p.tok = token{kind: kEOF, off: start}
		return
	}
	r, n := utf8.DecodeRuneInString(p.src[start:])
	k := kBad
	switch {
	case isNameRune(r):
		p.pos = p.scanWhile(start, isNameRune)
		name := p.src[start:p.pos]
		p.pos = p.scanWhile(p.pos, isASCIIDigit)
		p.tok = token{kind: kName, off: start, text: name, suffix: p.src[start+len(name) : p.pos]}
		return
	case isASCIIDigit(r) || r == '.':
		p.pos = p.scanNumber(start)
		p.tok = token{kind: kNumber, off: start, text: p.src[start:p.pos]}
		return
	case isSuper(r):
		p.pos = p.scanWhile(start, isSuper)
		p.tok = token{kind: kSuper, off: start, text: p.src[start:p.pos]}
		return
	case r == '*' || r == '·' || r == '⋅' || r == '×':
		k = kMul
	case r == '/':
		k = kDiv
	case r == '^':
		k = kPow
	case r == '+':
		k = kPlus
	case r == '-' || r == '−':
		k = kMinus
	case r == '(':
		k = kLParen
	case r == ')':
		k = kRParen
	}
	p.pos = start + n
	p.tok = token{kind: k, off: start, text: p.src[start:p.pos]}
}

func isASCIIDigit(r rune) bool { return r >= '0' && r <= '9' }

func (p *parser) scanWhile(i int, ok func(rune) bool) int {
	for i < len(p.src) {
		r, n := utf8.DecodeRuneInString(p.src[i:])
		if !ok(r) {
			break
		}
		i += n
	}
	return i
}

// scanNumber scans digits, an optional fraction and an optional exponent such as e-3, so that
// an error can show the whole number.
func (p *parser) scanNumber(i int) int {
	digits := func(i int) int {
		for i < len(p.src) && isASCIIDigit(rune(p.src[i])) {
			i++
		}
		return i
	}
	i = digits(i)
	if i < len(p.src) && p.src[i] == '.' {
		i = digits(i + 1)
	}
	if i < len(p.src) && (p.src[i] == 'e' || p.src[i] == 'E') {
		j := i + 1
		if j < len(p.src) && (p.src[j] == '+' || p.src[j] == '-') {
			j++
		}
		if j < len(p.src) && isASCIIDigit(rune(p.src[j])) {
			i = digits(j)
		}
	}
	return i
}

func (p *parser) errorf(off int, format string, args ...any) *Error {
	return &Error{Offset: off, Msg: fmt.Sprintf(format, args...)}
}

// parseTerms parses unit text into its symbol list in canonical order.
//
//	expr     = factor { ("*" | "/") factor }      left to right: a/b*c is (a/b)*c
//	factor   = primary [ "^" exponent | superscript ]
//	primary  = symbol [digits] | "1" | "(" expr ")"
//	exponent = [ "+" | "-" ] digits | "(" [ "+" | "-" ] digits ")"
func parseTerms(s string) ([]term, *Error) {
	p := &parser{src: s}
	p.next()
	if p.tok.kind == kEOF {
		return nil, p.errorf(0, "empty unit")
	}
	ts, err := p.expr()
	if err != nil {
		return nil, err
	}
	switch p.tok.kind {
	case kEOF:
	case kRParen:
		return nil, p.errorf(p.tok.off, "unmatched ')'")
	case kBad:
		return nil, p.errorf(p.tok.off, "unexpected character %s", p.tok.describe())
	default:
		return nil, p.errorf(p.tok.off, "expected '*' or '/' between units, found %s", p.tok.describe())
	}
	return canonical(ts), nil
}

func (p *parser) expr() ([]term, *Error) {
	ts, err := p.factor(nil)
	if err != nil {
		return nil, err
	}
	for p.tok.kind == kMul || p.tok.kind == kDiv {
		op := p.tok
		p.next()
		rhs, err := p.factor(&op)
		if err != nil {
			return nil, err
		}
		sign := 1
		if op.kind == kDiv {
			sign = -1
		}
		ts = mulTerms(ts, rhs, sign)
		if err := checkRange(ts, op.off); err != nil {
			return nil, err
		}
	}
	return ts, nil
}

// factor parses a primary and its exponent. after is the operator before it, if any.
func (p *parser) factor(after *token) ([]term, *Error) {
	ts, hasExp, err := p.primary(after)
	if err != nil {
		return nil, err
	}
	if hasExp && (p.tok.kind == kPow || p.tok.kind == kSuper) {
		return nil, p.errorf(p.tok.off, "a second exponent needs parentheses, as in (m^2)^3")
	}
	var n int
	off := p.tok.off
	switch p.tok.kind {
	case kPow:
		p.next()
		if n, err = p.exponent(); err != nil {
			return nil, err
		}
	case kSuper:
		if n, err = p.superscript(); err != nil {
			return nil, err
		}
	default:
		return ts, nil
	}
	ts = powTerms(ts, n)
	if err := checkRange(ts, off); err != nil {
		return nil, err
	}
	if p.tok.kind == kPow || p.tok.kind == kSuper {
		return nil, p.errorf(p.tok.off, "a second exponent needs parentheses, as in (m^2)^3")
	}
	return ts, nil
}

// primary parses a symbol (with its digit exponent, reported by hasExp), the number 1, or a
// parenthesised expression.
func (p *parser) primary(after *token) (ts []term, hasExp bool, err *Error) {
	t := p.tok
	switch t.kind {
	case kName:
		if _, ok := lookup(t.text); !ok {
			return nil, false, p.errorf(t.off, "%s", unknown(t.text))
		}
		p.next()
		if t.suffix == "" {
			return []term{{t.text, 1}}, false, nil
		}
		n, ok := smallInt(t.suffix)
		if !ok {
			return nil, false, p.errorf(t.off+len(t.text), "exponent %s out of range (limit ±%d)", t.suffix, maxExp)
		}
		return []term{{t.text, n}}, true, nil
	case kNumber:
		if t.text != "1" {
			return nil, false, p.errorf(t.off, "a number in a unit must be 1 (dimensionless), found %s", t.text)
		}
		p.next()
		return nil, false, nil
	case kLParen:
		if p.depth >= maxDepth {
			return nil, false, p.errorf(t.off, "parentheses nested too deeply (limit %d)", maxDepth)
		}
		p.depth++
		p.next()
		ts, err := p.expr()
		if err != nil {
			return nil, false, err
		}
		switch p.tok.kind {
		case kRParen:
		case kEOF:
			return nil, false, p.errorf(p.tok.off, "expected ')' to match '(' at offset %d, found end of text", t.off)
		default:
			return nil, false, p.errorf(p.tok.off, "expected '*', '/' or ')', found %s", p.tok.describe())
		}
		p.depth--
		p.next()
		return ts, false, nil
	case kBad:
		return nil, false, p.errorf(t.off, "unexpected character %s", t.describe())
	}
	if after != nil {
		return nil, false, p.errorf(t.off, "expected a unit after '%s', found %s", after.text, t.describe())
	}
	return nil, false, p.errorf(t.off, "expected a unit, found %s", t.describe())
}

// exponent parses the integer after '^', optionally signed and in parentheses: ^2, ^-2, ^(-2).
func (p *parser) exponent() (int, *Error) {
	paren := p.tok.kind == kLParen
	if paren {
		p.next()
	}
	sign := 1
	switch p.tok.kind {
	case kPlus:
		p.next()
	case kMinus:
		sign = -1
		p.next()
	}
	t := p.tok
	if t.kind != kNumber || strings.Trim(t.text, "0123456789") != "" {
		return 0, p.errorf(t.off, "expected an integer exponent after '^', found %s", t.describe())
	}
	n, ok := smallInt(t.text)
	if !ok {
		return 0, p.errorf(t.off, "exponent %s out of range (limit ±%d)", t.text, maxExp)
	}
	p.next()
	if paren {
		switch p.tok.kind {
		case kRParen:
			p.next()
		case kDiv:
			return 0, p.errorf(p.tok.off, "fractional exponents are not supported")
		default:
			return 0, p.errorf(p.tok.off, "expected ')' after the exponent, found %s", p.tok.describe())
		}
	}
	return sign * n, nil
}

// superscript reads a superscript exponent such as ² or ⁻¹.
func (p *parser) superscript() (int, *Error) {
	t := p.tok
	p.next()
	sign, n, digits := 1, 0, 0
	for i, r := range t.text {
		switch {
		case i == 0 && r == '⁻':
			sign = -1
		case i == 0 && r == '⁺':
		case superDigit(r) >= 0:
			n = 10*n + superDigit(r)
			digits++
			if n > maxExp {
				return 0, p.errorf(t.off, "exponent %s out of range (limit ±%d)", t.text, maxExp)
			}
		default:
			return 0, p.errorf(t.off+i, "malformed superscript exponent %q", t.text)
		}
	}
	if digits == 0 {
		return 0, p.errorf(t.off, "malformed superscript exponent %q", t.text)
	}
	return sign * n, nil
}

// smallInt reads ASCII digits as an integer no larger than maxExp.
func smallInt(s string) (int, bool) {
	n := 0
	for i := 0; i < len(s); i++ {
		n = 10*n + int(s[i]-'0')
		if n > maxExp {
			return 0, false
		}
	}
	return n, true
}

// checkRange reports an exponent beyond ±maxExp, at offset off.
func checkRange(ts []term, off int) *Error {
	for _, t := range ts {
		if t.exp < -maxExp || t.exp > maxExp {
			return &Error{Offset: off, Msg: fmt.Sprintf("exponent of %s out of range: %d (limit ±%d)", t.sym, t.exp, maxExp)}
		}
	}
	return nil
}
