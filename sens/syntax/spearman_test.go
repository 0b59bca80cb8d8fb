package syntax

import (
	"strings"
	"testing"
)

func TestParseSpearman(t *testing.T) {
	_, stmts, err := Parse("t", []byte("spearman steel, rate = -0.35\n"))
	if err != nil {
		t.Fatal(err)
	}
	c := stmts[0].(*CommandStmt)
	if c.Verb != "spearman" || len(c.Names) != 2 || c.Names[0].Name != "steel" || c.Names[1].Name != "rate" || String(c.Target) != "-0.35" {
		t.Errorf("spearman = %+v", c)
	}
	// A formula may still be named spearman: the verb needs no '=' next.
	if _, stmts, err := Parse("t", []byte("spearman = 3\n")); err != nil || stmts[0].(*FormulaStmt) == nil {
		t.Errorf("spearman = 3: %v", err)
	}
}

func TestParseSpearmanErrors(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"spearman", "t:1:9: spearman needs two inputs and a coefficient: spearman INPUT, INPUT = COEFFICIENT"},
		{"spearman steel rate = 0.7", "t:1:16: expected ',' and a second input (write: spearman INPUT, INPUT = COEFFICIENT), found name rate"},
		{"spearman steel, rate 0.7", "t:1:22: expected '=' and the rank correlation of steel and rate (write: spearman INPUT, INPUT = COEFFICIENT), found number 0.7"},
		{"spearman steel, rate =", "t:1:23: expected a coefficient between -1 and 1, found end of input"},
		{"spearman steel, 3 = 0.5", "t:1:17: expected name, found number 3"},
	} {
		_, _, err := Parse("t", []byte(tc.src))
		if err == nil {
			t.Errorf("%q: no error", tc.src)
			continue
		}
		if got := strings.SplitN(err.Error(), "\n", 2)[0]; got != tc.want {
			t.Errorf("%q:\n got %s\nwant %s", tc.src, got, tc.want)
		}
	}
}
