package sens

import "hash/maphash"

// nameIndex finds a program's inputs and formulas by name: an
// open-addressing hash table of 4-byte cells, each naming an input (i+1) or
// a formula (-1-j), whose names the table reads from Program.Inputs and
// Program.Formulas instead of keeping them. At a load of at most 3/4 it
// takes 5 to 11 bytes a name, against about 40 for a map from the name.
type nameIndex struct {
	cells []int32 // 0: empty; i+1: Inputs[i]; -1-j: Formulas[j]
	n     int     // names in the table
}

var nameSeed = maphash.MakeSeed()

// makeNameIndex returns a table with room for about n names.
func makeNameIndex(n int) nameIndex {
	var t nameIndex
	t.resize(n)
	return t
}

// name returns the name of the input or formula of cell c (c != 0).
func (p *Program) cellName(c int32) string {
	if c > 0 {
		return p.Inputs[c-1].Name
	}
	return p.Formulas[-1-c].Name
}

// find returns the cell of name, or the empty cell where it would go.
func (p *Program) findName(name string) int {
	t := &p.index
	mask := len(t.cells) - 1
	for i := int(maphash.String(nameSeed, name)) & mask; ; i = (i + 1) & mask {
		if c := t.cells[i]; c == 0 || p.cellName(c) == name {
			return i
		}
	}
}

// lookupName returns the index of name as Lookup reads it: >= 0 for
// Inputs[i], -1-j for Formulas[j].
func (p *Program) lookupName(name string) (int, bool) {
	if len(p.index.cells) == 0 {
		return 0, false
	}
	c := p.index.cells[p.findName(name)]
	if c == 0 {
		return 0, false
	}
	if c > 0 {
		return int(c - 1), true
	}
	return int(c), true
}

// setName indexes name as the input Inputs[i] (i >= 0) or the formula
// Formulas[-1-i] (i < 0), which must be in place; a name indexed before now
// points at the new one.
func (p *Program) setName(name string, i int) {
	c := int32(i)
	if i >= 0 {
		c = int32(i + 1)
	}
	t := &p.index
	if 4*(t.n+1) > 3*len(t.cells) {
		p.growNames()
	}
	k := p.findName(name)
	if t.cells[k] == 0 {
		t.n++
	}
	t.cells[k] = c
}

// growNames doubles the table.
func (p *Program) growNames() {
	old := p.index.cells
	p.index.resize(2 * p.index.n)
	mask := len(p.index.cells) - 1
	for _, c := range old {
		if c == 0 {
			continue
		}
		i := int(maphash.String(nameSeed, p.cellName(c))) & mask
		for p.index.cells[i] != 0 {
			i = (i + 1) & mask
		}
		p.index.cells[i] = c
	}
}

// resize makes an empty table of room for n names (at least 8).
func (t *nameIndex) resize(n int) {
	size := 16
	for 3*size < 4*max(n, 8) {
		size *= 2
	}
	t.cells = make([]int32, size)
}

// names appends every name in the table to out.
func (p *Program) appendNames(out []string) []string {
	for _, c := range p.index.cells {
		if c != 0 {
			out = append(out, p.cellName(c))
		}
	}
	return out
}
