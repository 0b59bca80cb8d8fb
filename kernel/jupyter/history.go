package jupyter

import "unicode/utf8"

// historySession is the session number this kernel reports. History lives
// in memory for one kernel process, so there is only ever this session.
const historySession = 1

// maxHistory bounds the entries kept; the oldest go first.
const maxHistory = 100000

type histEntry struct {
	line   int
	input  string
	output *string // text/plain of the execute_result, if any
}

// history is the in-memory input history of the session: one entry per
// execute_request that stored history, numbered by execution count.
type history struct {
	entries []histEntry
}

func (h *history) add(line int, input string) {
	if len(h.entries) >= maxHistory {
		n := copy(h.entries, h.entries[len(h.entries)-maxHistory/2:])
		clear(h.entries[n:])
		h.entries = h.entries[:n]
	}
	h.entries = append(h.entries, histEntry{line: line, input: input})
}

func (h *history) setOutput(line int, text string) {
	if n := len(h.entries); n > 0 && h.entries[n-1].line == line {
		h.entries[n-1].output = &text
	}
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
func (h *history) query(q historyRequest) []any {
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
		seen := map[string]bool{}
		for i := len(h.entries) - 1; i >= 0; i-- {
			e := h.entries[i]
			if !globMatch(pattern, e.input) || (q.Unique && seen[e.input]) {
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
	return out
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

// globMatch reports whether the whole of s matches pattern, where * is
// any run of characters (newlines included), ? one character and [...] a
// character class with ranges and a leading ^ or ! for negation. A
// malformed class matches nothing.
func globMatch(pattern, s string) bool {
	// Iterative matching with backtracking to the last star.
	var starP, starS = -1, 0
	p, i := 0, 0
	for i < len(s) {
		if p < len(pattern) {
			switch pattern[p] {
			case '*':
				starP, starS = p, i
				p++
				continue
			case '?':
				_, w := utf8.DecodeRuneInString(s[i:])
				p++
				i += w
				continue
			case '[':
				r, w := utf8.DecodeRuneInString(s[i:])
				if ok, n := matchClass(pattern[p:], r); n > 0 && ok {
					p += n
					i += w
					continue
				}
			default:
				r, w := utf8.DecodeRuneInString(s[i:])
				pr, pw := utf8.DecodeRuneInString(pattern[p:])
				if r == pr {
					p += pw
					i += w
					continue
				}
			}
		}
		if starP < 0 {
			return false
		}
		_, w := utf8.DecodeRuneInString(s[starS:])
		starS += w
		p, i = starP+1, starS
	}
	for p < len(pattern) && pattern[p] == '*' {
		p++
	}
	return p == len(pattern)
}

// matchClass matches r against the class at the start of pattern and
// returns the class's length in bytes (0 when the class is malformed).
func matchClass(pattern string, r rune) (bool, int) {
	i := 1
	neg := false
	if i < len(pattern) && (pattern[i] == '^' || pattern[i] == '!') {
		neg = true
		i++
	}
	match := false
	first := true
	for i < len(pattern) {
		if pattern[i] == ']' && !first {
			return match != neg, i + 1
		}
		first = false
		lo, w := utf8.DecodeRuneInString(pattern[i:])
		i += w
		hi := lo
		if i+1 < len(pattern) && pattern[i] == '-' && pattern[i+1] != ']' {
			hi, w = utf8.DecodeRuneInString(pattern[i+1:])
			i += 1 + w
		}
		if lo <= r && r <= hi {
			match = true
		}
	}
	return false, 0
}
