package kernel

import (
	"context"
	"os"
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
