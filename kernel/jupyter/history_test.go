package jupyter

import (
	"math/rand/v2"
	"strings"
	"testing"
	"unicode/utf8"
)

// refGlob is the definition of a glob match written as plainly as
// possible (exponential in the worst case): the oracle for glob.
func refGlob(p, s string) bool {
	if p == "" {
		return s == ""
	}
	switch p[0] {
	case '*':
		for i := 0; ; {
			if refGlob(p[1:], s[i:]) {
				return true
			}
			if i == len(s) {
				return false
			}
			_, w := utf8.DecodeRuneInString(s[i:])
			i += w
		}
	case '?':
		if s == "" {
			return false
		}
		_, w := utf8.DecodeRuneInString(s)
		return refGlob(p[1:], s[w:])
	case '[':
		t, n := parseClass(p)
		if n == 0 || s == "" {
			return false
		}
		r, w := utf8.DecodeRuneInString(s)
		return t.matches(r) && refGlob(p[n:], s[w:])
	}
	pr, pw := utf8.DecodeRuneInString(p)
	r, w := utf8.DecodeRuneInString(s)
	return s != "" && pr == r && refGlob(p[pw:], s[w:])
}

// TestGlobAgainstDefinition compares the automaton with the plain
// definition on random patterns and texts over a small alphabet, where
// stars, classes and repeats interact the most.
func TestGlobAgainstDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	pieces := []string{"a", "b", "é", "*", "**", "?", "[ab]", "[^a]", "[!é]", "[a-b]", "[]a]", "["}
	letters := []string{"a", "b", "é", "]"}
	for range 20000 {
		var p, s strings.Builder
		for range rng.IntN(7) {
			p.WriteString(pieces[rng.IntN(len(pieces))])
		}
		for range rng.IntN(9) {
			s.WriteString(letters[rng.IntN(len(letters))])
		}
		if got, want := globMatch(p.String(), s.String()), refGlob(p.String(), s.String()); got != want {
			t.Fatalf("globMatch(%q, %q) = %v, definition says %v", p.String(), s.String(), got, want)
		}
	}
	// A pattern of more than 64 tokens spans several words of states.
	long := strings.Repeat("a?", 40) + "*" + strings.Repeat("[ab]", 30)
	text := strings.Repeat("ab", 40) + "xyz" + strings.Repeat("b", 30)
	if !globMatch(long, text) || globMatch(long, text+"c") || !refGlob(long, text) {
		t.Error("long pattern across words")
	}
}

// TestGlobPathological: the search that took 26 to 41 seconds with a
// backtracking matcher (issue 8): a 1 MB cell of 'a' against *aaaa…b,
// which does not match, and against *aaaa…a, which does. The automaton
// reads the text once; BenchmarkGlob measures it.
func TestGlobPathological(t *testing.T) {
	cell := strings.Repeat("a", 1<<20)
	for _, tc := range []struct {
		pattern string
		want    bool
	}{
		{"*" + strings.Repeat("a", 200) + "b", false},
		{"*" + strings.Repeat("a", 200), true},
		{strings.Repeat("*a", 100) + "*b", false},
	} {
		if got := globMatch(tc.pattern, cell); got != tc.want {
			t.Errorf("%.20q...: %v", tc.pattern, got)
		}
	}
	if _, err := compileGlob(strings.Repeat("a", maxGlob+1)); err == nil {
		t.Error("pattern over the limit accepted")
	}
}

func benchmarkGlob(b *testing.B, n int) {
	cell := strings.Repeat("a", n)
	g, err := compileGlob("*" + strings.Repeat("a", 200) + "b")
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(n))
	b.ReportAllocs()
	for b.Loop() {
		if g.match(cell) {
			b.Fatal("matched")
		}
	}
}

func BenchmarkGlobSmall(b *testing.B)  { benchmarkGlob(b, 1<<10) }
func BenchmarkGlobMedium(b *testing.B) { benchmarkGlob(b, 1<<15) }
func BenchmarkGlobLarge(b *testing.B)  { benchmarkGlob(b, 1<<20) }

// TestHistoryBounds: the history keeps at most maxHistoryBytes, dropping
// the oldest cells; a cell or an output larger than maxHistoryEntry is not
// kept, and later cells keep their numbers.
func TestHistoryBounds(t *testing.T) {
	var h history
	check := func() {
		t.Helper()
		sum := 0
		for i := range h.entries {
			sum += h.entries[i].size()
		}
		if sum != h.bytes || h.bytes > maxHistoryBytes {
			t.Fatalf("history counts %d bytes, holds %d, bound %d", h.bytes, sum, maxHistoryBytes)
		}
	}
	big := strings.Repeat("x", 3<<20)
	for line := 1; line <= 20; line++ { // 60 MB of cells, the bound is 32 MiB
		if !h.add(line, big) {
			t.Fatalf("cell %d not kept", line)
		}
		h.setOutput(line, "out")
		check()
	}
	if first := h.entries[0].line; len(h.entries) != 10 || first != 11 {
		t.Errorf("kept %d entries from line %d, want the last 10", len(h.entries), first)
	}
	if h.add(21, strings.Repeat("y", maxHistoryEntry+1)) {
		t.Error("a cell over maxHistoryEntry was kept")
	}
	h.add(22, "small")
	h.setOutput(22, strings.Repeat("z", maxHistoryEntry+1))
	check()
	last := h.entries[len(h.entries)-1]
	if last.line != 22 || last.output != nil {
		t.Errorf("last entry line %d output %v", last.line, last.output != nil)
	}
	// Room for an output drops older entries, never the cell itself.
	h.setOutput(22, strings.Repeat("o", 3<<20))
	check()
	if last := h.entries[len(h.entries)-1]; last.line != 22 || last.output == nil {
		t.Error("output not kept")
	}
	n := 0
	for range maxHistory + 10 {
		n++
		h.add(100+n, "c")
	}
	check()
	if len(h.entries) != maxHistory {
		t.Errorf("%d entries, bound %d", len(h.entries), maxHistory)
	}
}
