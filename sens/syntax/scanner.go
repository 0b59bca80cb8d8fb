package syntax

import (
	"bytes"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Scanner turns source bytes into tokens. Newlines inside parentheses are skipped
// by the parser, not the scanner; the scanner reports every NEWLINE.
type Scanner struct {
	file *File
	src  []byte
	off  int // current reading offset
	errs *ErrorList

	// The scanner reports the first error of a line only, and stops
	// reporting after maxErrors lines with errors: a list keeps no more
	// (ErrorList.Sort keeps the first error per line, Parse the first
	// maxErrors), and a long line of stray characters would otherwise
	// cost an error, and a search for its column, per character.
	errEnd   int // errors before this offset (the end of the last error's line) are dropped
	errLines int // lines with an error reported

	id int32 // a name scanned last while the file's names are numbered: minus its length (name)
}

// Init prepares s to scan f, reporting errors into errs.
func (s *Scanner) Init(f *File, errs *ErrorList) {
	*s = Scanner{file: f, src: f.Src, errs: errs}
	// Skip a UTF-8 byte order mark.
	if len(s.src) >= 3 && s.src[0] == 0xEF && s.src[1] == 0xBB && s.src[2] == 0xBF {
		s.off = 3
	}
}

// dropped reports whether an error at off would be dropped (another error
// is on its line, or maxErrors lines have one): its message is then not
// formatted, so a line of a million stray characters costs no message per
// character.
func (s *Scanner) dropped(off int) bool { return off < s.errEnd || s.errLines >= maxErrors }

func (s *Scanner) error(off int, msg string) {
	if s.dropped(off) {
		return
	}
	s.errLines++
	s.errEnd = len(s.src)
	if i := bytes.IndexByte(s.src[off:], '\n'); i >= 0 {
		s.errEnd = off + i
	}
	s.errs.Add(s.file, s.file.Pos(off), msg)
}

func (s *Scanner) peekRune(off int) (rune, int) {
	if off >= len(s.src) {
		return -1, 0
	}
	c := s.src[off]
	if c < utf8.RuneSelf {
		return rune(c), 1
	}
	return utf8.DecodeRune(s.src[off:])
}

func isLetter(r rune) bool { return r == '_' || unicode.IsLetter(r) }
func isDigit(r rune) bool  { return '0' <= r && r <= '9' }

// name returns the name or keyword at src[start:s.off]. While the file's
// names are numbered (Parse), a name comes without its text and with s.id
// set to minus its length: the parser numbers the names of the whole file
// in one pass after scanning it (parser.numberNames).
func (s *Scanner) name(start int, pos Pos) (Token, Pos, string) {
	if s.file.names == nil {
		lit := string(s.src[start:s.off])
		return Lookup(lit), pos, lit
	}
	if tok, ok := keywords[string(s.src[start:s.off])]; ok {
		return tok, pos, string(s.src[start:s.off])
	}
	s.id = -int32(s.off - start)
	return IDENT, pos, ""
}

// Scan returns the next token, its position and its literal text (for IDENT,
// NUMBER, STRING, UNIT and COMMENT; for STRING the unquoted value).
func (s *Scanner) Scan() (tok Token, pos Pos, lit string) {
	s.id = 0
	// Skip blanks.
	for s.off < len(s.src) {
		c := s.src[s.off]
		if c == ' ' || c == '\t' || c == '\r' {
			s.off++
			continue
		}
		if c == '\\' && s.off+1 < len(s.src) && (s.src[s.off+1] == '\n' || s.src[s.off+1] == '\r') {
			// A backslash at the end of a line continues the statement.
			s.off++
			for s.off < len(s.src) && (s.src[s.off] == '\r' || s.src[s.off] == '\n') {
				s.off++
				if s.src[s.off-1] == '\n' {
					break
				}
			}
			continue
		}
		break
	}
	start := s.off
	pos = s.file.Pos(start)
	if s.off >= len(s.src) {
		return EOF, pos, ""
	}
	r, w := s.peekRune(s.off)
	switch {
	case isLetter(r):
		for s.off < len(s.src) {
			r, w := s.peekRune(s.off)
			if r == '.' { // table.column: a dot between letters joins a name
				if next, _ := s.peekRune(s.off + 1); isLetter(next) {
					s.off++
					continue
				}
			}
			if !isLetter(r) && !isDigit(r) {
				break
			}
			s.off += w
		}
		return s.name(start, pos)
	case isDigit(r) || (r == '.' && s.off+1 < len(s.src) && isDigit(rune(s.src[s.off+1]))):
		return s.number(start)
	}
	s.off += w
	switch r {
	case '\n':
		return NEWLINE, pos, "\n"
	case '#':
		for s.off < len(s.src) && s.src[s.off] != '\n' {
			s.off++
		}
		return COMMENT, pos, string(s.src[start:s.off])
	case '"':
		return s.string(start)
	case '[':
		for s.off < len(s.src) && s.src[s.off] != ']' && s.src[s.off] != '\n' {
			s.off++
		}
		if s.off >= len(s.src) || s.src[s.off] != ']' {
			s.error(start, "unit not closed: expected ']'")
			return UNIT, pos, strings.TrimSpace(string(s.src[start+1 : s.off]))
		}
		lit = string(s.src[start+1 : s.off])
		s.off++
		return UNIT, pos, lit
	case '+':
		if s.off < len(s.src) && s.src[s.off] == '-' {
			s.off++
			return PM, pos, "+-"
		}
		return ADD, pos, ""
	case '±':
		return PM, pos, "±"
	case '-':
		return SUB, pos, ""
	case '−': // U+2212 minus sign, as pasted from documents
		return SUB, pos, ""
	case '*', '×', '·':
		return MUL, pos, ""
	case '/', '÷':
		return QUO, pos, ""
	case '^':
		return POW, pos, ""
	case '%':
		return PERCENT, pos, ""
	case '~':
		return TILDE, pos, ""
	case '(':
		return LPAREN, pos, ""
	case ')':
		return RPAREN, pos, ""
	case ',':
		return COMMA, pos, ""
	case ':':
		return COLON, pos, ""
	case '.':
		if s.off < len(s.src) && s.src[s.off] == '.' {
			s.off++
			return DOTDOT, pos, ""
		}
	case '…':
		return DOTDOT, pos, ""
	case '=':
		if s.off < len(s.src) && s.src[s.off] == '=' {
			s.off++
			return EQL, pos, ""
		}
		return ASSIGN, pos, ""
	case '!':
		if s.off < len(s.src) && s.src[s.off] == '=' {
			s.off++
			return NEQ, pos, ""
		}
	case '≠':
		return NEQ, pos, ""
	case '<':
		if s.off < len(s.src) && s.src[s.off] == '=' {
			s.off++
			return LEQ, pos, ""
		}
		return LSS, pos, ""
	case '≤':
		return LEQ, pos, ""
	case '>':
		if s.off < len(s.src) && s.src[s.off] == '=' {
			s.off++
			return GEQ, pos, ""
		}
		return GTR, pos, ""
	case '≥':
		return GEQ, pos, ""
	}
	lit = string(s.src[start:s.off])
	if r == utf8.RuneError && w <= 1 {
		s.error(start, "invalid UTF-8 encoding")
	} else if !s.dropped(start) {
		s.error(start, errorf("unexpected character %q", r))
	}
	return ILLEGAL, pos, lit
}

// number scans 1200, 1_200, 1.5, .5, 1.5e3, 2E-4. A '.' followed by another '.'
// ends the number, so 40..80 scans as 40, .., 80.
func (s *Scanner) number(start int) (Token, Pos, string) {
	pos := s.file.Pos(start)
	digits := func() {
		for s.off < len(s.src) && (isDigit(rune(s.src[s.off])) || s.src[s.off] == '_') {
			s.off++
		}
	}
	digits()
	if s.off < len(s.src) && s.src[s.off] == '.' && !(s.off+1 < len(s.src) && s.src[s.off+1] == '.') {
		s.off++
		digits()
	}
	if s.off < len(s.src) && (s.src[s.off] == 'e' || s.src[s.off] == 'E') {
		save := s.off
		s.off++
		if s.off < len(s.src) && (s.src[s.off] == '+' || s.src[s.off] == '-') {
			s.off++
		}
		if s.off < len(s.src) && isDigit(rune(s.src[s.off])) {
			digits()
		} else {
			s.off = save // "2e" is 2 followed by the name e
		}
	}
	lit := string(s.src[start:s.off])
	if strings.HasSuffix(lit, "_") || strings.Contains(lit, "__") || strings.Contains(lit, "_.") || strings.Contains(lit, "._") {
		if !s.dropped(start) {
			s.error(start, errorf("malformed number %s: '_' must separate digits", lit))
		}
	}
	// A letter glued to a number (12kg) is a common slip: say how to write a unit.
	if r, _ := s.peekRune(s.off); isLetter(r) {
		end := s.off
		for end < len(s.src) {
			r, w := s.peekRune(end)
			if !isLetter(r) && !isDigit(r) {
				break
			}
			end += w
		}
		if !s.dropped(s.off) {
			word := string(s.src[s.off:end])
			s.error(s.off, errorf("unexpected %q after number %s (write a unit in brackets: %s [%s])", word, lit, lit, word))
		}
		s.off = end
	}
	return NUMBER, pos, lit
}

func (s *Scanner) string(start int) (Token, Pos, string) {
	pos := s.file.Pos(start)
	var b strings.Builder
	for {
		if s.off >= len(s.src) || s.src[s.off] == '\n' {
			s.error(start, "string not terminated: expected '\"'")
			return STRING, pos, b.String()
		}
		r, w := s.peekRune(s.off)
		s.off += w
		switch r {
		case '"':
			return STRING, pos, b.String()
		case '\\':
			if s.off < len(s.src) {
				e := s.src[s.off]
				s.off++
				switch e {
				case 'n':
					b.WriteByte('\n')
				case 't':
					b.WriteByte('\t')
				case '\\', '"':
					b.WriteByte(e)
				default:
					s.error(s.off-2, errorf("unknown escape \\%c in string", e))
				}
			}
		default:
			b.WriteRune(r)
		}
	}
}

// ParseNumber converts a NUMBER literal to its value.
func ParseNumber(lit string) (float64, error) {
	return strconv.ParseFloat(strings.ReplaceAll(lit, "_", ""), 64)
}
