package jupyter

import (
	"fmt"
	"unicode/utf8"
)

// historySession is the session number this kernel reports. History lives
// in memory for one kernel process, so there is only ever this session.
const historySession = 1

// History bounds. The oldest entries go first when either count or bytes
// would be exceeded. A cell whose text alone is larger than
// maxHistoryEntry is not kept (its line number is used all the same, so
// the numbers of later cells do not move); nor is an output that large.
const (
	maxHistory      = 100000
	maxHistoryBytes = 32 << 20
	maxHistoryEntry = 4 << 20
	entryOverhead   = 64 // bytes counted per entry besides its text
)

type histEntry struct {
	line   int
	input  string
	output *string // text/plain of the execute_result, if any
}

func (e *histEntry) size() int {
	n := entryOverhead + len(e.input)
	if e.output != nil {
		n += len(*e.output)
	}
	return n
}

// history is the in-memory input history of the session: one entry per
// execute_request that stored history, numbered by execution count.
type history struct {
	entries []histEntry
	bytes   int // sum of the entries' sizes
}

// add records a cell; it reports false when the cell is too large to
// keep.
func (h *history) add(line int, input string) bool {
	if len(input) > maxHistoryEntry {
		return false
	}
	e := histEntry{line: line, input: input}
	h.makeRoom(e.size())
	h.entries = append(h.entries, e)
	h.bytes += e.size()
	return true
}

// makeRoom drops the oldest entries until n more bytes and one more entry
// fit.
func (h *history) makeRoom(n int) {
	drop := 0
	for drop < len(h.entries) && (len(h.entries)-drop >= maxHistory || h.bytes+n > maxHistoryBytes) {
		h.bytes -= h.entries[drop].size()
		drop++
	}
	if drop > 0 {
		k := copy(h.entries, h.entries[drop:])
		clear(h.entries[k:])
		h.entries = h.entries[:k]
	}
}

// setOutput records the text/plain output of the latest cell, if that
// cell is line and the text is not too large to keep.
func (h *history) setOutput(line int, text string) {
	n := len(h.entries)
	if n == 0 || h.entries[n-1].line != line || len(text) > maxHistoryEntry {
		return
	}
	// Room for the output may cost older entries, never this one.
	last := h.entries[n-1]
	h.entries = h.entries[:n-1]
	h.bytes -= last.size()
	last.output = &text
	h.makeRoom(last.size())
	h.entries = append(h.entries, last)
	h.bytes += last.size()
}

type historyRequest struct {
	Output         bool   `json:"output"`
	Raw            bool   `json:"raw"`
	HistAccessType string `json:"hist_access_type"`
	Session        int    `json:"session"`
	Start          int    `json:"start"`
	Stop           *int   `json:"stop"`
	N              *int   `json:"n"`
	Pattern        string `json:"pattern"`
	Unique         bool   `json:"unique"`
}

// query answers a history_request: a list of [session, line, input], or
// [session, line, [input, output]] when output is asked for (output is
// null when the cell had no execute_result).
//
//	tail:   the last n entries (default 10)
//	range:  lines start <= line < stop of a session (0 or 1 means this
//	        one; stop missing or <= 0 means to the end)
//	search: entries whose whole input matches the glob pattern (* any
//	        run of characters, ? one character, [...] a class); the last
//	        n if n is given; with unique, only the latest of equal inputs
func (h *history) query(q historyRequest) ([]any, error) {
	var sel []histEntry
	switch q.HistAccessType {
	case "tail":
		n := 10
		if q.N != nil {
			n = *q.N
		}
		sel = lastN(h.entries, n)
	case "range":
		if q.Session != 0 && q.Session != historySession {
			break
		}
		for _, e := range h.entries {
			if e.line >= q.Start && (q.Stop == nil || *q.Stop <= 0 || e.line < *q.Stop) {
				sel = append(sel, e)
			}
		}
	case "search":
		pattern := q.Pattern
		if pattern == "" {
			pattern = "*"
		}
		g, err := compileGlob(pattern)
		if err != nil {
			return nil, err
		}
		seen := map[string]bool{}
		for i := len(h.entries) - 1; i >= 0; i-- {
			e := h.entries[i]
			if !g.match(e.input) || (q.Unique && seen[e.input]) {
				continue
			}
			seen[e.input] = true
			sel = append(sel, e)
		}
		for i, j := 0, len(sel)-1; i < j; i, j = i+1, j-1 {
			sel[i], sel[j] = sel[j], sel[i]
		}
		if q.N != nil && *q.N > 0 {
			sel = lastN(sel, *q.N)
		}
	}
	out := make([]any, 0, len(sel))
	for _, e := range sel {
		if q.Output {
			var o any
			if e.output != nil {
				o = *e.output
			}
			out = append(out, []any{historySession, e.line, []any{e.input, o}})
		} else {
			out = append(out, []any{historySession, e.line, e.input})
		}
	}
	return out, nil
}

func lastN(e []histEntry, n int) []histEntry {
	if n < 0 {
		n = 0
	}
	if n < len(e) {
		return e[len(e)-n:]
	}
	return e
}

// maxGlob bounds a search pattern, and with it the work per character of
// history searched.
const maxGlob = 256

// glob is a compiled history search pattern: * any run of characters
// (newlines included), ? one character, [...] a character class with
// ranges and a leading ^ or ! for negation; anything else matches itself,
// and the whole input must match. A malformed class matches nothing.
//
// Matching simulates the pattern's automaton on all its states at once,
// one bit per state (a shift-and automaton with self-loops for stars), so
// it takes time linear in the text: O(len(s) * (len(pattern)/64 + 1)),
// never the backtracking of a star per character that made a pattern
// such as *aaaa…b quadratic.
//
// References:
//   - R. Baeza-Yates and G. H. Gonnet, "A new approach to text
//     searching", Communications of the ACM 35(10), 1992 (shift-and).
type glob struct {
	toks  []globTok
	words int
	star  []uint64      // bit j: token j is a star
	ascii [128][]uint64 // bit j: token j is not a star and matches the byte
	other map[rune][]uint64
}

type globTok struct {
	kind   byte // '*', '?', 'c' class, 'l' literal, 'x' malformed class
	lit    rune
	neg    bool
	ranges [][2]rune
}

func (t *globTok) matches(r rune) bool {
	switch t.kind {
	case '?':
		return true
	case 'l':
		return r == t.lit
	case 'c':
		in := false
		for _, rg := range t.ranges {
			if rg[0] <= r && r <= rg[1] {
				in = true
				break
			}
		}
		return in != t.neg
	}
	return false
}

// compileGlob compiles pattern; it fails only for a pattern longer than
// maxGlob bytes.
func compileGlob(pattern string) (*glob, error) {
	if len(pattern) > maxGlob {
		return nil, fmt.Errorf("search pattern of %d bytes; the limit is %d", len(pattern), maxGlob)
	}
	g := &glob{other: map[rune][]uint64{}}
	for p := 0; p < len(pattern); {
		switch pattern[p] {
		case '*':
			if n := len(g.toks); n == 0 || g.toks[n-1].kind != '*' {
				g.toks = append(g.toks, globTok{kind: '*'})
			}
			p++
		case '?':
			g.toks = append(g.toks, globTok{kind: '?'})
			p++
		case '[':
			t, n := parseClass(pattern[p:])
			if n == 0 {
				// Malformed: the rest of the pattern can never match.
				g.toks = append(g.toks, globTok{kind: 'x'})
				p = len(pattern)
				continue
			}
			g.toks = append(g.toks, t)
			p += n
		default:
			r, w := utf8.DecodeRuneInString(pattern[p:])
			g.toks = append(g.toks, globTok{kind: 'l', lit: r})
			p += w
		}
	}
	g.words = (len(g.toks) + 1 + 63) / 64 // states 0..len(toks)
	g.star = make([]uint64, g.words)
	for j, t := range g.toks {
		if t.kind == '*' {
			g.star[j/64] |= 1 << (j % 64)
		}
	}
	for c := range g.ascii {
		g.ascii[c] = g.matchSet(rune(c))
	}
	return g, nil
}

func (g *glob) matchSet(r rune) []uint64 {
	m := make([]uint64, g.words)
	for j := range g.toks {
		if g.toks[j].matches(r) {
			m[j/64] |= 1 << (j % 64)
		}
	}
	return m
}

// set returns the tokens that match r, computed once per distinct rune.
func (g *glob) set(r rune) []uint64 {
	if r >= 0 && r < 128 {
		return g.ascii[r]
	}
	m, ok := g.other[r]
	if !ok {
		m = g.matchSet(r)
		if len(g.other) < 4096 {
			g.other[r] = m
		}
	}
	return m
}

// match reports whether the whole of s matches. Bit j of the state set
// means the first j tokens match the text read so far.
func (g *glob) match(s string) bool {
	cur := make([]uint64, g.words)
	next := make([]uint64, g.words)
	cur[0] = 1
	g.closure(cur)
	for _, r := range s {
		m := g.set(r)
		var carry uint64
		live := uint64(0)
		for w := range cur {
			adv := cur[w] & m[w]
			next[w] = cur[w]&g.star[w] | adv<<1 | carry
			carry = adv >> 63
			live |= next[w]
		}
		if live == 0 {
			return false
		}
		g.closure(next)
		cur, next = next, cur
	}
	n := len(g.toks)
	return cur[n/64]&(1<<(n%64)) != 0
}

// closure adds the state after every star that is reached: a star also
// matches the empty run. Stars are never adjacent, so one step suffices.
func (g *glob) closure(d []uint64) {
	var carry uint64
	for w := range d {
		d[w] |= carry
		s := d[w] & g.star[w]
		d[w] |= s << 1
		carry = s >> 63
	}
}

// globMatch reports whether the whole of s matches pattern (see glob).
func globMatch(pattern, s string) bool {
	g, err := compileGlob(pattern)
	return err == nil && g.match(s)
}

// parseClass parses the class at the start of pattern and returns it with
// its length in bytes (0 when the class is malformed).
func parseClass(pattern string) (globTok, int) {
	t := globTok{kind: 'c'}
	i := 1
	if i < len(pattern) && (pattern[i] == '^' || pattern[i] == '!') {
		t.neg = true
		i++
	}
	first := true
	for i < len(pattern) {
		if pattern[i] == ']' && !first {
			return t, i + 1
		}
		first = false
		lo, w := utf8.DecodeRuneInString(pattern[i:])
		i += w
		hi := lo
		if i+1 < len(pattern) && pattern[i] == '-' && pattern[i+1] != ']' {
			hi, w = utf8.DecodeRuneInString(pattern[i+1:])
			i += 1 + w
		}
		t.ranges = append(t.ranges, [2]rune{lo, hi})
	}
	return globTok{}, 0
}
