package syntax

import (
	"testing"
	"unsafe"
)

// TestNameIDs checks the numbering of names (Ident.ID): one number per
// distinct name of a file, elements included, from 1 to NameCount, and
// the one string the file keeps for a name.
func TestNameIDs(t *testing.T) {
	src := "input rate = 60 [$/h]\ncost = hours * rate + hours + long_name_1 + long_name_1\nlong_name_1 = 1\nhours = 2 [h]\nx = qty[bolt] + qty[bolt] + qty[nut]\n"
	f, stmts, err := Parse("t", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	var ids []*Ident
	for _, s := range stmts {
		switch s := s.(type) {
		case *InputStmt:
			ids = append(ids, s.Name)
		case *FormulaStmt:
			ids = append(ids, s.Name)
			Walk(s.Value, func(x Expr) bool {
				if id, ok := x.(*Ident); ok {
					ids = append(ids, id)
				}
				return true
			})
		}
	}
	byName := map[string]*Ident{}
	seen := map[int32]string{}
	for _, id := range ids {
		if id.ID < 1 || int(id.ID) > f.NameCount() {
			t.Fatalf("%s: ID %d outside 1..%d", id.Name, id.ID, f.NameCount())
		}
		if first, ok := byName[id.Name]; ok {
			if first.ID != id.ID {
				t.Errorf("%s numbered %d and %d", id.Name, first.ID, id.ID)
			}
			if unsafe.StringData(first.Name) != unsafe.StringData(id.Name) {
				t.Errorf("%s: two strings", id.Name)
			}
		} else {
			byName[id.Name] = id
		}
		if other, ok := seen[id.ID]; ok && other != id.Name {
			t.Errorf("%s and %s share ID %d", other, id.Name, id.ID)
		}
		seen[id.ID] = id.Name
	}
	// rate, cost, hours, long_name_1, x, qty[bolt], qty[nut] (qty itself is
	// scanned too).
	if len(byName) != 7 {
		t.Errorf("%d distinct names, want 7", len(byName))
	}
	if f.NameCount() < len(byName) {
		t.Errorf("NameCount %d < %d names", f.NameCount(), len(byName))
	}
	el := byName["qty[bolt]"]
	if got, want := f.Position(el.Rbrack()).Column, len("x = qty[bolt")+1; got != want {
		t.Errorf("qty[bolt]: ']' at column %d, want %d", got, want)
	}
	if el.End() != el.Rbrack()+1 {
		t.Errorf("qty[bolt] ends at %d, want %d", el.End(), el.Rbrack()+1)
	}
	if id := byName["rate"]; id.Rbrack().IsValid() || id.End() != id.Pos()+Pos(len("rate")) {
		t.Errorf("rate: Rbrack %d, End %d", id.Rbrack(), id.End())
	}
	if f.names != nil {
		t.Error("the table of names outlives the parse")
	}
	// An identifier made by hand has no number.
	if (&Ident{Name: "rate"}).ID != 0 {
		t.Error("a hand-made Ident has a number")
	}
}
