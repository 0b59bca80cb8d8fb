package syntax

import (
	"fmt"
	"sort"
	"strings"
	"unicode/utf8"
)

// Error is one problem in the source, with its position and the line it sits on.
type Error struct {
	Pos    Position
	Msg    string
	Source string // the source line, or an excerpt of it, for the caret display; may be empty
	// SourceCol is the column of Source under which the caret goes when
	// Source is an excerpt (see Excerpt); 0 means Pos.Column.
	SourceCol int
}

// Error formats e as "file:line:col: msg".
func (e *Error) Error() string {
	if e.Pos.Line == 0 {
		return e.Msg
	}
	return e.Pos.String() + ": " + e.Msg
}

// Caret returns the source line and a caret under the column, ready to print:
//
//	total = units * unit_cst
//	                ^
//
// A line longer than MaxExcerpt characters is shown as an excerpt around
// the column.
func (e *Error) Caret() string {
	if e.Source == "" || e.Pos.Column < 1 {
		return ""
	}
	src, at := e.Source, e.SourceCol
	if at == 0 {
		src, at = Excerpt(src, e.Pos.Column)
	}
	var b strings.Builder
	b.WriteString(src)
	b.WriteByte('\n')
	col := 1
	for _, r := range src {
		if col >= at {
			break
		}
		if r == '\t' {
			b.WriteByte('\t')
		} else {
			b.WriteByte(' ')
		}
		col++
	}
	for ; col < at; col++ {
		b.WriteByte(' ')
	}
	b.WriteByte('^')
	return b.String()
}

// Detail returns the message, the source line and the caret on separate lines.
func (e *Error) Detail() string {
	s := e.Error()
	if c := e.Caret(); c != "" {
		s += "\n" + c
	}
	return s
}

// ErrorList collects errors. The zero value is ready to use.
type ErrorList []*Error

// maxErrors is the number of errors after which a list stops growing.
const maxErrors = 10

// Add appends an error at pos in file f. It keeps an excerpt of the line
// (Excerpt), so that the memory of a list does not grow with the length of
// the lines its errors are on.
func (l *ErrorList) Add(f *File, pos Pos, msg string) {
	*l = append(*l, ErrorAt(f, f.Position(pos), msg))
}

// ErrorAt returns the error msg at p in f, with an excerpt of its line.
// A message longer than MaxMessage bytes (one that quotes a name or number
// a megabyte long) is cut there, with "…".
func ErrorAt(f *File, p Position, msg string) *Error {
	src, col := Excerpt(f.Line(p.Line), p.Column)
	return &Error{Pos: p, Msg: cutMessage(msg), Source: src, SourceCol: col}
}

// MaxMessage is the longest message, in bytes, an error made by ErrorAt
// or ErrorList.Add keeps.
const MaxMessage = 1000

func cutMessage(msg string) string {
	if len(msg) <= MaxMessage {
		return msg
	}
	cut := MaxMessage
	for cut > 0 && !utf8.RuneStart(msg[cut]) {
		cut--
	}
	return msg[:cut] + "…"
}

// MaxExcerpt is the longest source line, in characters, that an error
// shows whole; a longer one is cut to MaxExcerpt characters around the
// error's column, with "…" where it was cut.
const MaxExcerpt = 160

// Excerpt returns line, or when it is longer than MaxExcerpt characters
// the part of it around column col (from 1) with "…" at the ends that
// were cut, and the column of src that col falls on.
func Excerpt(line string, col int) (src string, at int) {
	if col < 1 {
		col = 1
	}
	if len(line) <= MaxExcerpt || utf8.RuneCountInString(line) <= MaxExcerpt {
		return line, col
	}
	first := max(1, col-MaxExcerpt/2) // the first column kept
	var b strings.Builder
	at = col - first + 1
	if first > 1 {
		b.WriteString("…")
		at++
	}
	c, kept := 1, 0
	for _, r := range line {
		if c >= first {
			if kept == MaxExcerpt {
				b.WriteString("…")
				break
			}
			b.WriteRune(r)
			kept++
		}
		c++
	}
	return b.String(), at
}

// Sort orders the list by file, line and column, keeping the first error per line.
func (l *ErrorList) Sort() {
	sort.SliceStable(*l, func(i, j int) bool {
		a, b := (*l)[i].Pos, (*l)[j].Pos
		if a.Filename != b.Filename {
			return a.Filename < b.Filename
		}
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Column < b.Column
	})
	out := (*l)[:0]
	for i, e := range *l {
		if i > 0 && e.Pos.Filename == (*l)[i-1].Pos.Filename && e.Pos.Line == (*l)[i-1].Pos.Line && e.Pos.Line != 0 {
			continue
		}
		out = append(out, e)
	}
	*l = out
}

// Error joins the messages, one per line.
func (l ErrorList) Error() string {
	switch len(l) {
	case 0:
		return "no errors"
	case 1:
		return l[0].Error()
	}
	var b strings.Builder
	for i, e := range l {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Error())
	}
	return b.String()
}

// Err returns nil for an empty list, else the list itself.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}

// Detail returns every error with its caret display.
func (l ErrorList) Detail() string {
	var b strings.Builder
	for i, e := range l {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Detail())
	}
	return b.String()
}

// DidYouMean returns " (did you mean shop_rate?)", naming the candidate closest
// to name when it is close enough to be a likely misspelling, or "" when none
// is: the one way every message of nudge suggests a name. Closeness is the
// Levenshtein distance, allowed up to a third of the name's length (at least
// 1); of equally close candidates the first in alphabetical order wins.
//
// The work is bounded by the allowed distance, not by the candidates'
// lengths: a candidate whose length differs by more is skipped, and the
// distance is computed in a band of that width around the diagonal, given
// up as soon as a row exceeds it.
func DidYouMean(name string, candidates []string) string {
	ra := []rune(name)
	best, bestD := "", len(name)/3+1
	var rb []rune
	var rows []int
	for _, c := range candidates {
		if c == name {
			continue
		}
		// A candidate can only be within bestD if its length in bytes is
		// within 4*bestD (a character is at most 4 bytes).
		if d := len(c) - len(name); d > 4*bestD || d < -4*bestD {
			continue
		}
		rb = append(rb[:0], []rune(c)...)
		if d := len(rb) - len(ra); d > bestD || d < -bestD {
			continue
		}
		if d, ok := boundedLevenshtein(ra, rb, bestD, &rows); ok && (d < bestD || best == "" || c < best) {
			best, bestD = c, d
		}
	}
	if best == "" {
		return ""
	}
	return " (did you mean " + best + "?)"
}

// boundedLevenshtein returns the Levenshtein distance between a and b when
// it is at most k, and false when it is more. It fills only the cells within
// k of the diagonal (Ukkonen's cut-off), so it costs O(k·len(a)).
//
// References:
//   - E. Ukkonen, Algorithms for approximate string matching, Information
//     and Control 64 (1985) 100–118.
func boundedLevenshtein(a, b []rune, k int, buf *[]int) (int, bool) {
	if d := len(a) - len(b); d > k || d < -k {
		return 0, false
	}
	const inf = 1 << 30
	n := len(b) + 1
	if cap(*buf) < 2*n {
		*buf = make([]int, 2*n)
	}
	prev, cur := (*buf)[:n], (*buf)[n:2*n]
	// Row 0, as far as row 1 reads it.
	for j := 0; j <= min(len(b), k+1); j++ {
		prev[j] = inf
		if j <= k {
			prev[j] = j
		}
	}
	for i := 1; i <= len(a); i++ {
		lo, hi := max(1, i-k), min(len(b), i+k)
		// The cells left and right of the band read by this row and the next.
		cur[lo-1] = inf
		if lo == 1 && i <= k {
			cur[0] = i
		}
		if hi+1 <= len(b) {
			cur[hi+1] = inf
		}
		rowMin := cur[lo-1]
		for j := lo; j <= hi; j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			v := min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			cur[j] = v
			rowMin = min(rowMin, v)
		}
		if rowMin > k {
			return 0, false
		}
		prev, cur = cur, prev
	}
	if d := prev[len(b)]; d <= k {
		return d, true
	}
	return 0, false
}

// errorf is a helper for fmt-formatted messages.
func errorf(format string, args ...any) string { return fmt.Sprintf(format, args...) }
