package sens

import (
	"fmt"
	"slices"
	"testing"
)

// TestNameIndex checks the program's table of names against a Go map, from
// an empty table through its growth, with names indexed again (the extra
// formula of CompileExpr takes a declared name's place).
func TestNameIndex(t *testing.T) {
	p := &Program{}
	want := map[string]int{}
	for i := 0; i < 5000; i++ {
		name := fmt.Sprintf("n%d", i*7919%5000)
		if i%3 == 0 {
			p.Inputs = append(p.Inputs, &Input{Name: name})
			p.setName(name, len(p.Inputs)-1)
			want[name] = len(p.Inputs) - 1
		} else {
			p.Formulas = append(p.Formulas, &Formula{Name: name})
			p.setName(name, -len(p.Formulas))
			want[name] = -len(p.Formulas)
		}
		if i%500 == 0 && i > 0 { // a name indexed again
			again := fmt.Sprintf("n%d", (i-1)*7919%5000)
			p.Formulas = append(p.Formulas, &Formula{Name: again})
			p.setName(again, -len(p.Formulas))
			want[again] = -len(p.Formulas)
		}
	}
	if p.index.n != len(want) {
		t.Errorf("%d names in the table, want %d", p.index.n, len(want))
	}
	for name, w := range want {
		if got, ok := p.lookupName(name); !ok || got != w {
			t.Fatalf("lookupName(%q) = %d, %v; want %d", name, got, ok, w)
		}
	}
	for _, name := range []string{"", "n5000", "n-1", "x"} {
		if i, ok := p.lookupName(name); ok {
			t.Errorf("lookupName(%q) = %d, want none", name, i)
		}
	}
	names := p.appendNames(nil)
	slices.Sort(names)
	var wantNames []string
	for name := range want {
		wantNames = append(wantNames, name)
	}
	slices.Sort(wantNames)
	if !slices.Equal(names, wantNames) {
		t.Errorf("appendNames: %d names, want %d", len(names), len(wantNames))
	}
	if _, ok := (&Program{}).lookupName("x"); ok {
		t.Error("an empty program has a name")
	}
}
