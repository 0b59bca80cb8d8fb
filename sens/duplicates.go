package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// CheckDuplicates reports every name that stmts, one cell or model file,
// declare twice: an input, formula, table or range of periods, or a
// scenario (scenarios have names of their own). A later cell may redefine
// a name (the notebook way of changing a model); within one cell or file a
// second declaration is a slip, and silently keeping the last would hide
// it. Each error sits at the second declaration and names the first.
func CheckDuplicates(f *syntax.File, stmts []syntax.Stmt) error {
	type first struct {
		id   *syntax.Ident
		what string
	}
	decls := map[string]first{}
	scenarios := map[string]*syntax.Ident{}
	var errs syntax.ErrorList
	for _, s := range stmts {
		var id *syntax.Ident
		what := ""
		switch s := s.(type) {
		case *syntax.InputStmt:
			id, what = s.Name, "input"
		case *syntax.FormulaStmt:
			id, what = s.Name, "formula"
		case *syntax.TableStmt:
			id, what = s.Name, "table"
		case *syntax.PeriodsStmt:
			id, what = s.Name, "periods"
		case *syntax.CommandStmt:
			if s.Verb == "scenario" && s.Name != nil {
				if prev, ok := scenarios[s.Name.Name]; ok {
					p := f.Position(prev.Pos())
					errs.Add(f, s.Name.Pos(), fmt.Sprintf("scenario %s is defined twice: first at line %d, column %d; a cell or file defines each scenario once (a later cell may redefine it)", s.Name.Name, p.Line, p.Column))
				} else {
					scenarios[s.Name.Name] = s.Name
				}
			}
			continue
		default:
			continue
		}
		if id == nil {
			continue
		}
		if prev, ok := decls[id.Name]; ok {
			p := f.Position(prev.id.Pos())
			errs.Add(f, id.Pos(), fmt.Sprintf("%s is declared twice: first as %s at line %d, column %d; a cell or file declares each name once (a later cell may redefine it)", id.Name, article(prev.what), p.Line, p.Column))
			continue
		}
		decls[id.Name] = first{id, what}
	}
	errs.Sort()
	if len(errs) > 10 {
		errs = errs[:10]
	}
	return errs.Err()
}

func article(what string) string {
	switch what {
	case "input":
		return "an input"
	case "periods":
		return "a range of periods"
	}
	return "a " + what
}
