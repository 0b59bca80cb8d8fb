package tape

import "slices"

// InputDeps returns the inputs (by index, ascending) that output i depends
// on, by one backward pass over the tape that marks every node the output
// reaches.
func (t *Tape) InputDeps(i int) []int {
	p := t.p
	out := int(p.outs[i])
	mark := make([]bool, out+1)
	mark[out] = true
	for k := out; k >= p.start; k-- {
		if !mark[k] {
			continue
		}
		mark[p.a[k]] = true
		mark[p.b[k]] = true
		if p.ops[k].Arity() == 3 {
			mark[p.a[k+1]] = true
		}
	}
	var deps []int
	for k := 0; k < p.nIn && k <= out; k++ {
		if mark[k] {
			deps = append(deps, k)
		}
	}
	return deps
}

// StepOps returns the source positions, sorted and without repeats, of
// the step operations (floor, ceil, round, comparisons, and, or, not,
// if) that output i depends on: where one of them flips, the output
// jumps and its derivative says nothing about the jump.
func (t *Tape) StepOps(i int) []int32 {
	p := t.p
	out := int(p.outs[i])
	mark := make([]bool, out+1)
	mark[out] = true
	var pos []int32
	for k := out; k >= p.start; k-- {
		if !mark[k] {
			continue
		}
		op := p.ops[k]
		if op.IsStep() {
			pos = append(pos, p.pos[k])
		}
		mark[p.a[k]] = true
		mark[p.b[k]] = true
		if op.Arity() == 3 {
			mark[p.a[k+1]] = true
		}
	}
	slices.Sort(pos)
	return slices.Compact(pos)
}
