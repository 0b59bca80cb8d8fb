package kernel

import (
	"context"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// TestCommandTable checks the one table of commands against the parser and
// the documentation: every verb the parser knows runs a command, every
// command's verb is the parser's, its example parses as that
// command with options it takes, and the README's command table shows how
// it is written.
func TestCommandTable(t *testing.T) {
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range syntax.Verbs {
		if commands[v] == nil {
			t.Errorf("verb %s runs no command", v)
		}
	}
	for v, c := range commands {
		if v != c.Verb || !syntax.IsVerb(v) {
			t.Errorf("command %s (verb %s) is not a verb of the parser", v, c.Verb)
		}
		if c.Doc == "" || c.run == nil {
			t.Errorf("command %s lacks a doc or a run", v)
		}
		_, stmts, err := syntax.Parse("example", []byte(c.Example))
		if err != nil || len(stmts) != 1 {
			t.Errorf("example of %s, %q: %v", v, c.Example, err)
			continue
		}
		s, ok := stmts[0].(*syntax.CommandStmt)
		if !ok || s.Verb != v {
			t.Errorf("example of %s, %q, is not that command", v, c.Example)
			continue
		}
		x := &call{c: s, cmd: c, f: syntax.NewFile("example", []byte(c.Example))}
		if err := x.checkOptions(); err != nil {
			t.Errorf("example of %s: %v", v, err)
		}
		// A Markdown table writes | as \|.
		if !strings.Contains(string(readme), "`"+strings.ReplaceAll(c.Usage(), "|", `\|`)+"`") {
			t.Errorf("the README's command table lacks `%s`", c.Usage())
		}
	}
}

func TestOptionErrors(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"reset now=1", "1:7: reset has no option now"},
		{"tornado y top=2 top=3", "1:17: top is given twice"},
		{"spider y points=2", "1:17: points must be a whole number from 3"},
	} {
		err := New().Execute(context.Background(), "", "input a = 1\ny = 2 * a\n"+tc.src, &captureSink{})
		if err == nil || !strings.Contains(err.Error(), "3:"+strings.TrimPrefix(tc.want, "1:")) {
			t.Errorf("%s: %v, want %s", tc.src, err, tc.want)
		}
	}
}

// TestREADMEDocuments: the README names every kind of JSON object the
// commands produce, and points at no Markdown file the repository lacks.
func TestREADMEDocuments(t *testing.T) {
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	readme := string(b)
	json := readme[strings.Index(readme, "### JSON"):]
	json = json[:strings.Index(json, "\n## ")]
	s := &captureSink{}
	src := "exchange EUR = 1.1 [$]\ninput a = 2 (1..3)\ninput b = 3 [EUR]\ny = a * b\ny\ndrivers y\ntornado y\nspider y\nsweep y over a 1..3\n" +
		"breakeven y = 7 over a\nscenario s: a = 2.5\ncompare y across base, s\nattribute y from base to s\nbasis\nhelp\n"
	if err := New().Execute(context.Background(), "", src, s); err != nil {
		t.Fatal(err)
	}
	kinds := map[string]bool{"print": true, "error": true}
	for _, r := range s.results {
		kinds[r.Kind] = true
	}
	for k := range kinds {
		if !strings.Contains(json, "`"+k+"`") {
			t.Errorf("the README's JSON section does not name the kind %s", k)
		}
	}
	for _, m := range regexp.MustCompile(`[A-Za-z0-9_./-]+\.md\b`).FindAllString(readme, -1) {
		if _, err := os.Stat("../" + m); err != nil {
			t.Errorf("the README points at %s, which the repository lacks", m)
		}
	}
}
