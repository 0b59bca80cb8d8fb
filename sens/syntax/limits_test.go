package syntax

import (
	"errors"
	"math/rand/v2"
	"strings"
	"testing"
	"unicode/utf8"
)

// A long line of stray characters costs one error, with an excerpt of the
// line, not an error and a copy of the line per character (issue 8, item 7:
// a 50 KB line of '@' used more than 2.5 GB).
func TestLongLineOneErrorExcerpt(t *testing.T) {
	line := "x = " + strings.Repeat("@", 50_000)
	src := "input a = 1\n" + line + "\ny = a\n" + strings.Repeat("#", 100) + "\n"
	_, _, err := Parse("m", []byte(src))
	var el ErrorList
	if !errors.As(err, &el) {
		t.Fatalf("want an ErrorList, got %v", err)
	}
	if len(el) != 1 {
		t.Fatalf("%d errors, want 1: %v", len(el), el)
	}
	e := el[0]
	if e.Pos.Line != 2 || e.Pos.Column != 5 || !strings.Contains(e.Msg, "unexpected character '@'") {
		t.Errorf("got %s", e.Error())
	}
	if n := utf8.RuneCountInString(e.Source); n > MaxExcerpt+2 {
		t.Errorf("the error keeps %d characters of its line, want at most %d", n, MaxExcerpt+2)
	}
	// Incomplete, which a front end calls on every key, scans the same text.
	if Incomplete(src) {
		t.Errorf("Incomplete: the source is complete")
	}
}

// The scanner reports the first error of each line, and no more than a list
// keeps.
func TestScannerErrorsBounded(t *testing.T) {
	var src strings.Builder
	for range 3 * maxErrors {
		src.WriteString("x = 1 @ 2 $ 3\n")
	}
	var errs ErrorList
	var s Scanner
	f := NewFile("m", []byte(src.String()))
	s.Init(f, &errs)
	for {
		if tok, _, _ := s.Scan(); tok == EOF {
			break
		}
	}
	if len(errs) != maxErrors {
		t.Fatalf("%d errors, want %d (one per line, %d lines)", len(errs), maxErrors, maxErrors)
	}
	for i, e := range errs {
		if e.Pos.Line != i+1 || e.Pos.Column != 7 {
			t.Errorf("error %d at %d:%d, want %d:7", i, e.Pos.Line, e.Pos.Column, i+1)
		}
	}
}

// The caret of an excerpt stands under the character the error names,
// wherever it lies on a long line.
func TestExcerptCaret(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	alphabet := []rune("ab+ (é€\t")
	for range 300 {
		n := rng.IntN(3 * MaxExcerpt)
		r := make([]rune, n+1)
		for i := range r {
			r[i] = alphabet[rng.IntN(len(alphabet))]
		}
		col := 1 + rng.IntN(len(r))
		r[col-1] = '@'
		line := string(r)
		e := &Error{Pos: Position{Line: 1, Column: col}, Msg: "m"}
		e.Source, e.SourceCol = Excerpt(line, col)
		for _, x := range []*Error{e, {Pos: e.Pos, Msg: "m", Source: line}} {
			shown, caret, _ := strings.Cut(x.Caret(), "\n")
			if utf8.RuneCountInString(shown) > MaxExcerpt+2 {
				t.Fatalf("excerpt of %d characters", utf8.RuneCountInString(shown))
			}
			at := utf8.RuneCountInString(caret) // the caret's column
			if got := []rune(shown)[at-1]; got != '@' {
				t.Fatalf("line %q, column %d: caret under %q in %q", line, col, got, shown)
			}
		}
	}
}

// A chain of operations longer than MaxHeight, or a sum of more than
// MaxTerms terms, is an error at the operator where it passes the bound;
// up to the bounds the expression parses (issue 8, item 6).
func TestExpressionBounds(t *testing.T) {
	chain := func(op string, n int) string {
		return "y = a" + strings.Repeat(" "+op+" a", n-1) + "\n"
	}
	for _, c := range []struct {
		src  string
		col  int // 0: no error
		want string
	}{
		{chain("*", MaxHeight+1), 0, ""},
		// Operator k of a chain stands at column 4k + 3.
		{chain("*", MaxHeight+2), 4*(MaxHeight+1) + 3, "more than 10000 operations"},
		{chain("-", MaxHeight+2), 4*(MaxHeight+1) + 3, "more than 10000 operations"},
		{chain("+", MaxTerms), 0, ""},
		{chain("+", MaxTerms+1), 4*MaxTerms + 3, "more than 100000 terms"},
		// A sum of long products, and products of long sums.
		{"y = " + strings.Repeat("a * a + ", MaxTerms/2) + "a\n", 0, ""},
		// (The sum and its parentheses are two levels.)
		{"y = (" + strings.Repeat("a + ", MaxTerms/2) + "a)" + strings.Repeat(" * a", MaxHeight-2) + "\n", 0, ""},
		{"y = (" + strings.Repeat("a + ", MaxTerms/2) + "a)" + strings.Repeat(" * a", MaxHeight-1) + "\n", 4*MaxTerms/2 + 5 + 4*(MaxHeight-1), "more than 10000 operations"},
		// Powers and signs nest: MaxDepth bounds them.
		{chain("^", MaxDepth+2), 0, "nested too deeply"},
		{"y = " + strings.Repeat("-", MaxDepth+1) + "a\n", 0, "nested too deeply"},
		{"y = " + strings.Repeat("ln(", MaxDepth+1) + "a" + strings.Repeat(")", MaxDepth+1) + "\n", 0, "nested too deeply"},
	} {
		_, _, err := Parse("m", []byte(c.src))
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%.20s…: %v", c.src, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%.20s…: got %v, want %q", c.src, err, c.want)
		case c.col > 0:
			if e := err.(ErrorList)[0]; e.Pos.Line != 1 || e.Pos.Column != c.col {
				t.Errorf("%.20s…: error at %d:%d, want 1:%d", c.src, e.Pos.Line, e.Pos.Column, c.col)
			}
		}
	}
}

// levenshteinDP is the textbook dynamic programme (Wagner & Fischer, The
// string-to-string correction problem, JACM 21 (1974) 168–173): the
// reference of boundedLevenshtein.
func levenshteinDP(a, b []rune) int {
	d := make([][]int, len(a)+1)
	for i := range d {
		d[i] = make([]int, len(b)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(a); i++ {
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
		}
	}
	return d[len(a)][len(b)]
}

func TestBoundedLevenshtein(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var buf []int
	word := func() []rune {
		r := make([]rune, rng.IntN(12))
		for i := range r {
			r[i] = []rune("abcé")[rng.IntN(4)]
		}
		return r
	}
	for range 20000 {
		a, b, k := word(), word(), rng.IntN(6)
		want := levenshteinDP(a, b)
		got, ok := boundedLevenshtein(a, b, k, &buf)
		if ok != (want <= k) || ok && got != want {
			t.Fatalf("%q %q k=%d: got %d %v, want %d", string(a), string(b), k, got, ok, want)
		}
	}
}

// DidYouMean picks as it always did: the closest within a third of the
// name's length, ties to the first alphabetically.
func TestDidYouMeanChoices(t *testing.T) {
	for _, c := range []struct {
		name  string
		cands []string
		want  string
	}{
		{"shop_rat", []string{"shop_rate", "shop", "rate"}, "shop_rate"},
		{"abcdef", []string{"abcxyz", "abcdxx"}, "abcdxx"},
		{"abcd", []string{"abce", "abcf"}, "abce"},
		{"abcd", []string{"abcf", "abce"}, "abce"},
		{"ab", []string{"xy"}, ""},
		{"unit_cst", []string{strings.Repeat("u", 10_000), "unit_cost"}, "unit_cost"},
	} {
		got := DidYouMean(c.name, c.cands)
		want := ""
		if c.want != "" {
			want = " (did you mean " + c.want + "?)"
		}
		if got != want {
			t.Errorf("DidYouMean(%q, %q) = %q, want %q", c.name, c.cands, got, want)
		}
	}
}

// Brief quotes an expression as String does, cut after MaxBrief bytes.
func TestBrief(t *testing.T) {
	x, err := ParseExpr("a * (b + 2 [kg]) - max(c, d)")
	if err != nil {
		t.Fatal(err)
	}
	if got, want := Brief(x), String(x); got != want {
		t.Errorf("Brief = %q, want %q", got, want)
	}
	long, err := ParseExpr("a" + strings.Repeat(" + abc", 50_000))
	if err != nil {
		t.Fatal(err)
	}
	got := Brief(long)
	if !strings.HasSuffix(got, "…") || len(got) > MaxBrief+16 || !strings.HasPrefix(String(long), strings.TrimSuffix(got, "…")) {
		t.Errorf("Brief of a long sum: %d bytes, %.100q", len(got), got)
	}
}

// A message that quotes a name or a number a megabyte long is cut.
func TestLongMessagesCut(t *testing.T) {
	for _, src := range []string{
		"y = " + strings.Repeat("1", 1<<20) + "\n",
		"input " + strings.Repeat("é", 1<<19) + "\n",
	} {
		_, _, err := Parse("m", []byte(src))
		el, ok := err.(ErrorList)
		if !ok {
			t.Fatalf("got %v", err)
		}
		if m := el[0].Msg; len(m) > MaxMessage+len("…") || !strings.HasSuffix(m, "…") || !utf8.ValidString(m) {
			t.Errorf("message of %d bytes: %.80q", len(m), m)
		}
	}
}

// A line of a megabyte of stray characters costs no message per character:
// the scanner formats an error only where it keeps it (the first of a line),
// so scanning it allocates a bounded number of times, counted by
// testing.AllocsPerRun (not timed).
func TestStrayCharactersFormatNoMessages(t *testing.T) {
	for _, c := range []string{"@", "$", "?", "`", "1_ ", "1_2_ ", "2kg "} {
		src := []byte(strings.Repeat(c, (1<<20)/len(c)))
		allocs := testing.AllocsPerRun(1, func() {
			var errs ErrorList
			var s Scanner
			s.Init(NewFile("m", src), &errs)
			for {
				if tok, _, _ := s.Scan(); tok == EOF {
					break
				}
			}
		})
		// The literals of tokens longer than a byte ("1_", "2") are
		// allocated, one a token: count the tokens.
		tokens := 0
		if len(c) > 1 {
			tokens = 2 * (1 << 20) / len(c)
		}
		if allocs > float64(tokens)+64 {
			t.Errorf("%q × %d: %.0f allocations, want at most %d", c, (1<<20)/len(c), allocs, tokens+64)
		}
	}
}
