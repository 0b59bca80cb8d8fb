package kernel

import (
	"sort"
	"strings"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

func isWordByte(c byte) bool {
	return c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c >= 0x80
}

// wordAt returns the word around byte offset cursor: its start and end.
func wordAt(code string, cursor int) (start, end int) {
	if cursor > len(code) {
		cursor = len(code)
	}
	start, end = cursor, cursor
	for start > 0 && isWordByte(code[start-1]) {
		start--
	}
	for end < len(code) && isWordByte(code[end]) {
		end++
	}
	return start, end
}

// Complete proposes what may stand at the cursor, by its place on the line:
//
//   - inside [ ]: unit symbols;
//   - after ~: distributions;
//   - after a command's verb: the outputs (formulas), or for charts its
//     modes; after sweep's or breakeven's output, over; after compare's,
//     across; after attribute's, from, and after its first scenario, to;
//   - after over, and a sweep's and: inputs; after across or a comma
//     there, and after attribute's from and to: scenarios; after scenario
//     NAME: or a comma there: inputs;
//   - after a whole command: its options (top=) that are not given yet;
//   - elsewhere: names, functions and pi, and at the start of a line the
//     command verbs and input.
//
// Names include those declared earlier in the cell itself.
func (h *Handler) Complete(code string, cursor int) jupyter.Completion {
	if cursor > len(code) {
		cursor = len(code)
	}
	start, _ := wordAt(code, cursor)
	lineStart := strings.LastIndexByte(code[:cursor], '\n') + 1
	line := code[lineStart:cursor]
	var cands []string
	if strings.Count(line, "[") > strings.Count(line, "]") {
		// Inside a unit: the unit symbols, completed after the last operator.
		start = cursor
		for start > lineStart && !strings.ContainsRune("[*/(· ", rune(code[start-1])) {
			start--
		}
		cands = unit.Symbols()
	} else {
		cands = h.candidates(code, code[lineStart:start])
	}
	prefix := code[start:cursor]
	seen := map[string]bool{}
	var matches []string
	for _, c := range cands {
		if strings.HasPrefix(c, prefix) && !seen[c] {
			seen[c] = true
			matches = append(matches, c)
		}
	}
	sort.Strings(matches)
	return jupyter.Completion{Matches: matches, Start: start, End: cursor, Metadata: map[string]any{}}
}

// lexeme is a token of the line before the word being completed, and its
// byte offset.
type lexeme struct {
	tok syntax.Token
	lit string
	off int
}

func lexemes(s string) []lexeme {
	f := syntax.NewFile("", []byte(s))
	var errs syntax.ErrorList
	var sc syntax.Scanner
	sc.Init(f, &errs)
	var out []lexeme
	for {
		tok, pos, lit := sc.Scan()
		switch tok {
		case syntax.EOF:
			return out
		case syntax.COMMENT:
			continue
		}
		out = append(out, lexeme{tok, lit, int(pos) - 1}) // a Pos is an offset plus one
	}
}

// candidates lists what may stand after before, the line up to the word
// being completed.
func (h *Handler) candidates(code, before string) []string {
	toks := h.scans.lexemes(before)
	names := h.names(code)
	last := syntax.NEWLINE
	if len(toks) > 0 {
		last = toks[len(toks)-1].tok
	}
	if last == syntax.TILDE {
		var ds []string
		for _, d := range sens.Distributions {
			ds = append(ds, d.Name)
		}
		return ds
	}
	if len(toks) > 0 && toks[0].tok == syntax.IDENT && syntax.IsVerb(toks[0].lit) && (len(toks) == 1 || toks[1].tok != syntax.ASSIGN) {
		if c, ok := h.commandCandidates(toks, before, names); ok {
			return c
		}
	}
	cands := append(append([]string{}, names.all()...), "pi")
	for _, f := range sens.Functions {
		cands = append(cands, f.Name)
	}
	for _, f := range sens.VectorFunctions {
		cands = append(cands, f.Name)
	}
	if len(toks) == 0 {
		cands = append(cands, syntax.Verbs...)
		cands = append(cands, "input", "table", "periods")
	} else {
		cands = append(cands, "and", "or", "not")
	}
	return cands
}

// commandCandidates lists what may follow before in a command line, whose
// lexemes are toks; ok is false where an expression of any names may stand.
func (h *Handler) commandCandidates(toks []lexeme, before string, names names) (c []string, ok bool) {
	verb := toks[0].lit
	prev := toks[len(toks)-1]
	word := func(w string) bool { return prev.tok == syntax.IDENT && prev.lit == w }
	switch {
	case len(toks) == 1:
		switch verb {
		case "charts":
			return []string{"svg", "png", "text"}, true
		case "scenario", "print", "reset":
			return nil, true // a new name, text, or nothing
		}
		return names.formulas, true
	case word("over"):
		return names.inputs, true
	case verb == "sweep" && prev.tok == syntax.AND:
		return names.inputs, true
	case verb == "explore" && prev.tok == syntax.COMMA:
		return names.inputs, true
	case verb == "compare" && (word("across") || prev.tok == syntax.COMMA):
		return append([]string{sens.BaseName}, names.scenarios...), true
	case verb == "attribute" && (word("from") || word("to")) && len(toks) > 2:
		return append([]string{sens.BaseName}, names.scenarios...), true
	case verb == "attribute" && len(toks) == 4 && prev.tok == syntax.IDENT:
		return []string{"to"}, true
	case verb == "scenario" && (prev.tok == syntax.COLON || prev.tok == syntax.COMMA):
		return names.inputs, true
	case len(toks) == 2 && prev.tok == syntax.IDENT:
		// After the output: the word that comes next.
		switch verb {
		case "sweep", "breakeven":
			if verb == "sweep" {
				return []string{"over"}, true
			}
			return nil, true // breakeven OUT = T
		case "compare":
			return []string{"across"}, true
		case "attribute":
			return []string{"from"}, true
		}
	}
	// After a whole command: its options not yet given (and a sweep's
	// second axis).
	stmts, err := h.scans.parse(before)
	if err != nil || len(stmts) != 1 {
		return nil, false
	}
	cs, isCmd := stmts[0].(*syntax.CommandStmt)
	cmd := commands[verb]
	if !isCmd || cmd == nil {
		return nil, false
	}
	for _, o := range cmd.Options {
		if cs.Option(o.Key) == nil {
			c = append(c, o.Key+"=")
		}
	}
	if verb == "sweep" && len(cs.Axes) == 1 && len(cs.Options) == 0 {
		c = append(c, "and")
	}
	return c, true
}

// names are the names a completion may offer: the model's and those the cell
// declares before it runs.
type names struct {
	inputs, formulas, scenarios []string
}

func (n names) all() []string {
	return append(append(append([]string{}, n.inputs...), n.formulas...), n.scenarios...)
}

func (h *Handler) names(code string) names {
	var n names
	m := h.in.Model
	for _, name := range m.Names() {
		if d := m.Lookup(name); d != nil && d.Input != nil {
			n.inputs = append(n.inputs, name)
		} else {
			n.formulas = append(n.formulas, name)
		}
	}
	n.scenarios = m.ScenarioNames()
	stmts, _ := h.scans.parse(code)
	for _, st := range stmts {
		switch st := st.(type) {
		case *syntax.InputStmt:
			n.inputs = append(n.inputs, st.Name.Name)
		case *syntax.FormulaStmt:
			n.formulas = append(n.formulas, st.Name.Name)
		case *syntax.CommandStmt:
			if st.Verb == "scenario" && st.Name != nil {
				n.scenarios = append(n.scenarios, st.Name.Name)
			}
		}
	}
	return n
}
