package sens

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// TestNamesAcrossFiles checks the resolution of references by their
// parser-given numbers (compiler.declIdx) where several files, each
// numbering its names from 1, make one model: a cell's reference reaches
// the declaration of another cell, and a later cell's redefinition
// replaces the earlier one for every reference. The expected values are
// the formulas worked by hand.
func TestNamesAcrossFiles(t *testing.T) {
	m := NewModel()
	define := func(name, src string) {
		t.Helper()
		f, stmts, err := syntax.Parse(name, []byte(src))
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range stmts {
			m.Define(f, s)
		}
	}
	// In cell 1, a is name 1 and b name 2; in cell 2, b is 1, c is 2, a is 3.
	define("cell 1", "input a = 2\ninput b = 3\nab = a * b\n")
	define("cell 2", "input b = 5\nc = b + a + ab\nd = c * c\n")
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		want float64
	}{
		{"ab", 10}, // 2 * 5: b replaced by cell 2
		{"c", 17},  // 5 + 2 + 10
		{"d", 289}, // 17 * 17
	} {
		v, err := p.Value(tc.name)
		if err != nil {
			t.Fatal(err)
		}
		if v.Value != tc.want {
			t.Errorf("%s = %g, want %g", tc.name, v.Value, tc.want)
		}
	}
	// An undefined name and a cycle keep their messages and positions.
	define("cell 3", "e = zz + a\ng = h\nh = g\n")
	_, err = m.Compile()
	if err == nil {
		t.Fatal("no error")
	}
	want := "cell 3:1:5: undefined: zz\ncell 3:3:5: cycle: g -> h -> g" // as before the numbering
	if got := err.Error(); got != want {
		t.Errorf("errors:\n%s\nwant:\n%s", got, want)
	}
}

// TestNamesOfAnotherFile checks that statements declared with a file they
// were not parsed from, whose names' numbers mean other names there, are
// still resolved by their names.
func TestNamesOfAnotherFile(t *testing.T) {
	fa, sa, err := syntax.Parse("a", []byte("input a = 1\nb = a * 2\n"))
	if err != nil {
		t.Fatal(err)
	}
	_, sb, err := syntax.Parse("b", []byte("input c = 5\nd = c + 1\ninput a = 3\n"))
	if err != nil {
		t.Fatal(err)
	}
	m := NewModel()
	for _, s := range append(sa, sb...) {
		m.Define(fa, s) // c and d are numbered 1 and 2 in b, as a and b in a
	}
	if m.Len() != 4 {
		t.Fatalf("%d names declared, want 4", m.Len())
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	for name, want := range map[string]float64{"b": 6, "d": 6} { // a = 3 (redeclared), c = 5
		if v, err := p.Value(name); err != nil || v.Value != want {
			t.Errorf("%s = %v (%v), want %g", name, v, err, want)
		}
	}
}
