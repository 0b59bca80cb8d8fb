package sens

import (
	"fmt"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// CheckDuplicates reports every name that stmts, one cell or model file,
// declare twice: an input, formula, table or range of periods; a scenario
// (scenarios have names of their own), an exchange rate of one currency,
// a rank correlation of one pair of inputs. A later cell may redefine
// a name (the notebook way of changing a model); within one cell or file a
// second declaration is a slip, and silently keeping the last would hide
// it. Each error sits at the second declaration and names the first.
func CheckDuplicates(f *syntax.File, stmts []syntax.Stmt) error {
	type first struct {
		id   *syntax.Ident
		what string
	}
	decls := map[string]first{}
	stated := map[string]*syntax.Ident{} // scenarios, exchange rates, rank correlations
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
			// Scenarios, exchange rates and rank correlations are stated
			// once a cell too, each in a space of its own.
			var key, what string
			var at *syntax.Ident
			switch {
			case s.Verb == "scenario" && s.Name != nil:
				key, what, at = "scenario "+s.Name.Name, "scenario "+s.Name.Name+" is defined", s.Name
			case s.Verb == "exchange" && len(s.Assigns) == 1:
				a := s.Assigns[0].Name
				key, what, at = "exchange "+a.Name, "the exchange rate of "+a.Name+" is stated", a
			case s.Verb == "spearman" && len(s.Names) == 2:
				x, y := s.Names[0].Name, s.Names[1].Name
				if y < x {
					x, y = y, x
				}
				key, what, at = "spearman "+x+" "+y, "the rank correlation of "+x+" and "+y+" is declared", s.Names[0]
			default:
				continue
			}
			if prev, ok := stated[key]; ok {
				p := f.Position(prev.Pos())
				errs.Add(f, at.Pos(), fmt.Sprintf("%s twice: first at line %d, column %d; a cell or file states it once (a later cell may change it)", what, p.Line, p.Column))
			} else {
				stated[key] = at
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
