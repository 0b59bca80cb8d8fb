package syntax

import (
	"go/ast"
	goparser "go/parser"
	gotoken "go/token"
	"strings"
	"testing"
)

// productions returns the EBNF productions in a comment: the indented lines
// "name = ... ." and their continuation lines, joined and with their spacing
// normalised.
func productions(text string) map[string]string {
	out := map[string]string{}
	var cur string
	for _, l := range strings.Split(text, "\n") {
		if !strings.HasPrefix(l, "\t") {
			cur = ""
			continue
		}
		l = strings.Join(strings.Fields(l), " ")
		if name, _, ok := strings.Cut(l, " = "); ok && !strings.Contains(name, " ") && cur == "" {
			cur = name
			out[cur] = l
		} else if cur != "" {
			out[cur] += " " + l
		}
		if strings.HasSuffix(l, " .") {
			cur = ""
		}
	}
	return out
}

// TestGrammarDocumented checks that the grammar at the top of parser.go and
// the parse function of each command agree: every production in a parse
// function's doc comment is in the grammar word for word, and every verb of
// the command table has a production that starts with it.
func TestGrammarDocumented(t *testing.T) {
	fset := gotoken.NewFileSet()
	pf, err := goparser.ParseFile(fset, "parser.go", nil, goparser.ParseComments)
	if err != nil {
		t.Fatal(err)
	}
	var grammar map[string]string
	for _, cg := range pf.Comments {
		if text := cg.Text(); strings.Contains(text, "The grammar, in EBNF") {
			grammar = productions(text)
		}
	}
	if len(grammar) < 20 {
		t.Fatalf("found %d productions in parser.go's grammar", len(grammar))
	}
	cf, err := goparser.ParseFile(fset, "commands.go", nil, goparser.ParseComments)
	if err != nil {
		t.Fatal(err)
	}
	documented := 0
	for _, d := range cf.Decls {
		fn, ok := d.(*ast.FuncDecl)
		if !ok || !strings.HasPrefix(fn.Name.Name, "parse") || fn.Doc == nil {
			continue
		}
		for name, prod := range productions(fn.Doc.Text()) {
			documented++
			if grammar[name] != prod {
				t.Errorf("%s documents\n\t%s\nbut the grammar has\n\t%s", fn.Name.Name, prod, grammar[name])
			}
		}
	}
	for _, f := range commandForms {
		found := strings.Contains(grammar["global"], `"`+f.Verb+`"`)
		for _, prod := range grammar {
			_, rhs, _ := strings.Cut(prod, " = ")
			found = found || strings.HasPrefix(strings.TrimPrefix(rhs, "( "), `"`+f.Verb+`"`)
		}
		if !found {
			t.Errorf("no production of the grammar starts with %q", f.Verb)
		}
		if !strings.Contains(grammar["command"], " "+f.Verb+" ") && !strings.Contains(grammar["global"], `"`+f.Verb+`"`) {
			t.Errorf("the production of command does not list %s", f.Verb)
		}
		if !strings.HasPrefix(f.Form, f.Verb) {
			t.Errorf("the form of %s is %q", f.Verb, f.Form)
		}
	}
	if documented < len(commandForms)-3 {
		t.Errorf("%d productions documented by parse functions, want one per command", documented)
	}
}

func TestVerbs(t *testing.T) {
	for _, v := range []string{"drivers", "sweep", "simulate", "charts"} {
		if !IsVerb(v) || Command(v).Verb != v {
			t.Errorf("%s is not a verb", v)
		}
	}
	if IsVerb("input") || Command("total") != nil {
		t.Error("a name is a verb")
	}
}
