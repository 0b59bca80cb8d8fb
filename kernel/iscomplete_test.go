package kernel

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// isCompleteCorpus gathers model text: the shipped models and notebooks'
// code cells, the front-end test's model, and every error model (valid and
// invalid text alike).
func isCompleteCorpus(t *testing.T) []string {
	corpus := []string{frontEndModel}
	for _, cells := range shippedCells(t) {
		for _, c := range cells {
			if c.CellType == "code" {
				corpus = append(corpus, source(c.Source))
			}
		}
	}
	for _, glob := range []string{"../notebooks/*.nudge", "testdata/errors/*.nudge", "../sens/syntax/testdata/errors/*.nudge"} {
		files, _ := filepath.Glob(glob)
		for _, f := range files {
			b, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			corpus = append(corpus, string(b))
		}
	}
	if len(corpus) < 60 {
		t.Fatalf("a corpus of %d texts", len(corpus))
	}
	return corpus
}

// TestIsCompleteAgreesWithParser checks is_complete against the parser on a
// corpus of models, two ways.
//
// Every text cut after any of its lines: "complete" text parses, "invalid"
// text does not, and "incomplete" text does not parse yet (a front end asks
// for another line).
//
// Every statement that parses, broken after each of its tokens outside
// parentheses: after a binary operator the first part is "incomplete" and
// the two lines parse as one statement, as they would on one line; after any
// other token the first part is not "incomplete" (it is complete or invalid
// at once, as the parser says), so a console never asks for a line that
// could not continue it.
func TestIsCompleteAgreesWithParser(t *testing.T) {
	h := NewHandler(New())
	parses := func(s string) bool { _, _, err := syntax.Parse("", []byte(s)); return err == nil }
	var cuts, breaks int
	for _, text := range isCompleteCorpus(t) {
		lines := strings.SplitAfter(text, "\n")
		for i := range lines {
			p := strings.Join(lines[:i+1], "")
			cuts++
			switch st, _ := h.IsComplete(p); st {
			case "complete":
				if !parses(p) {
					t.Errorf("is_complete says complete, the parser fails:\n%s", p)
				}
			case "invalid":
				if parses(p) {
					t.Errorf("is_complete says invalid, the parser reads it:\n%s", p)
				}
			case "incomplete":
				if parses(p) && !strings.HasSuffix(strings.TrimRight(p, " \t\r\n"), "\\") {
					t.Errorf("is_complete says incomplete, the parser reads it as it is:\n%s", p)
				}
			default:
				t.Errorf("is_complete says %q:\n%s", st, p)
			}
		}
		for _, line := range lines {
			line = strings.TrimRight(line, "\n")
			_, stmts, err := syntax.Parse("", []byte(line))
			if err != nil || len(stmts) != 1 {
				continue
			}
			for _, k := range breakPoints(line) {
				first := line[:k.off]
				st, _ := h.IsComplete(first)
				breaks++
				if k.continues {
					joined := first + "\n    " + strings.TrimLeft(line[k.off:], " ")
					_, two, err := syntax.Parse("", []byte(joined))
					if st != "incomplete" || err != nil || len(two) != 1 {
						t.Errorf("broken after an operator, %q is %s; the two lines parse as %d statements (%v):\n%s", first, st, len(two), err, joined)
					}
				} else if st == "incomplete" {
					t.Errorf("%q (cut from %q) is incomplete, yet no line can continue it", first, line)
				}
			}
		}
	}
	t.Logf("%d texts cut after a line, %d statements broken after a token", cuts, breaks)
}

// breakPoint is a place to break a line: after a token outside parentheses,
// and whether the token is a binary operator that continues the line.
type breakPoint struct {
	off       int
	continues bool
}

func breakPoints(line string) []breakPoint {
	toks := lexemes(line)
	var out []breakPoint
	depth := 0
	for i, x := range toks {
		switch x.tok {
		case syntax.NEWLINE:
			return out
		case syntax.LPAREN:
			depth++
		case syntax.RPAREN:
			depth--
		}
		if depth != 0 || i+1 == len(toks) {
			continue
		}
		// The token ends where the blanks before the next one begin.
		end := len(strings.TrimRight(line[:toks[i+1].off], " \t"))
		out = append(out, breakPoint{end, binaryOperators[x.tok]})
	}
	return out
}

// binaryOperators are the tokens after which a line continues, as the
// README says: + - * / ^, the comparisons, and, or.
var binaryOperators = map[syntax.Token]bool{
	syntax.ADD: true, syntax.SUB: true, syntax.MUL: true, syntax.QUO: true, syntax.POW: true,
	syntax.EQL: true, syntax.NEQ: true, syntax.LSS: true, syntax.LEQ: true, syntax.GTR: true, syntax.GEQ: true,
	syntax.AND: true, syntax.OR: true,
}

// TestConsoleScansBounded: the requests a console makes about one text
// (is_complete, complete at each Tab, inspect) scan it a bounded number of
// times, counted in bytes given to the scanner and parser (scanCache.scanned),
// not in time: a megabyte line of stray characters is tokenized once for
// is_complete, parsed once for is_complete and the names completion offers,
// and the line before the cursor lexed once (and parsed once more where it is
// a command), however many requests name it.
func TestConsoleScansBounded(t *testing.T) {
	const n = 1 << 20
	for _, unit := range []string{"@", "(", `"`, "+", "é", "1_ ", "x = (\n", "sweep total over rate 40..80 n=3 "} {
		h := NewHandler(New())
		run(t, h.in, shopModel)
		code := strings.Repeat(unit, n/len(unit))
		h.scans.scanned = 0
		for range 3 {
			h.IsComplete(code)
			h.Complete(code, len(code))
			h.Inspect(code, len(code), 0)
			h.Inspect(code, len(code)/2, 0)
		}
		// Incomplete, Parse and the lexemes of the line before the cursor
		// (the whole text, one line or the last), and the parse of that
		// line as a command: at most 4 times the text.
		if got := h.scans.scanned; got > 4*len(code) {
			t.Errorf("%q × %d: %d bytes scanned by 3 rounds of requests, want at most %d", unit, n/len(unit), got, 4*len(code))
		}
	}
}
