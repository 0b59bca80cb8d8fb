package syntax

import (
	"fmt"
	"sort"
	"strings"
)

// Error is one problem in the source, with its position and the line it sits on.
type Error struct {
	Pos    Position
	Msg    string
	Source string // the source line, for the caret display; may be empty
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
func (e *Error) Caret() string {
	if e.Source == "" || e.Pos.Column < 1 {
		return ""
	}
	var b strings.Builder
	b.WriteString(e.Source)
	b.WriteByte('\n')
	col := 1
	for _, r := range e.Source {
		if col >= e.Pos.Column {
			break
		}
		if r == '\t' {
			b.WriteByte('\t')
		} else {
			b.WriteByte(' ')
		}
		col++
	}
	for ; col < e.Pos.Column; col++ {
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

// Add appends an error at pos in file f.
func (l *ErrorList) Add(f *File, pos Pos, msg string) {
	p := f.Position(pos)
	*l = append(*l, &Error{Pos: p, Msg: msg, Source: f.Line(p.Line)})
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
func DidYouMean(name string, candidates []string) string {
	best, bestD := "", len(name)/3+1
	bestD++ // strict comparison below
	for _, c := range candidates {
		if c == name {
			continue
		}
		if d := levenshtein(name, c); d < bestD || (d == bestD && best != "" && c < best) {
			best, bestD = c, d
		}
	}
	if best == "" {
		return ""
	}
	return " (did you mean " + best + "?)"
}

func levenshtein(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// errorf is a helper for fmt-formatted messages.
func errorf(format string, args ...any) string { return fmt.Sprintf(format, args...) }
