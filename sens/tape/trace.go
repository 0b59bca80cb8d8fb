package tape

import "slices"

// Tracing: what an output depends on, through every branch of every if.

// InputDeps returns the inputs (by index, ascending) that output i depends
// on.
func (t *Tape) InputDeps(i int) []int {
	p := t.p
	mark := p.reach(i)
	var deps []int
	for k := 0; k < p.nIn && k < len(mark); k++ {
		if mark[k] {
			deps = append(deps, k)
		}
	}
	return deps
}

// Constant returns, for each output, whether it depends on no input: the
// outputs whose InputDeps are empty, found in one pass over the tape
// instead of a trace per output (which costs the square of the tape on a
// chain of formulas). A loop node counts as depending on an input when any
// of its operands does; an output it reaches is then traced exactly.
func (t *Tape) Constant() []bool {
	p := t.p
	dep := make([]bool, len(p.ops))
	for k := range min(p.nIn, len(dep)) {
		dep[k] = true
	}
	loops, loopDep := false, false
	for k := p.start; k < len(p.ops); k++ {
		switch op := p.ops[k]; op {
		case opLoop: // vec.go: the union of its operands, for every lane
			loops, loopDep = true, false
			p.loops[p.a[k]].operands(func(first, n int32) {
				for s := first; s < first+n && !loopDep; s++ {
					loopDep = dep[s]
				}
			})
			dep[k] = loopDep
		case opLane:
			dep[k] = loopDep
		default: // the operands reach marks
			d := dep[p.a[k]] || dep[p.b[k]]
			if op.Arity() == 3 {
				d = d || dep[p.a[k+1]]
			}
			dep[k] = d
		}
	}
	out := make([]bool, len(p.outs))
	for i, o := range p.outs {
		out[i] = !dep[o] || loops && len(t.InputDeps(i)) == 0
	}
	return out
}

// StepOps returns the source positions, sorted and without repeats, of
// the step operations (floor, ceil, round, comparisons, and, or, not,
// if) that output i depends on: where one of them flips, the output
// jumps and its derivative says nothing about the jump.
func (t *Tape) StepOps(i int) []int32 {
	p := t.p
	mark := p.reach(i)
	var pos []int32
	for k := p.start; k < len(mark); k++ {
		if p.ops[k] == opLoop && p.loopStep(k, mark) {
			pos = append(pos, p.pos[k])
		}
		if mark[k] && p.ops[k].IsStep() {
			pos = append(pos, p.pos[k])
		}
	}
	slices.Sort(pos)
	return slices.Compact(pos)
}

// reach marks, by one backward pass, every node that output i depends on;
// the marks run up to the output's node.
func (p *tapeProg) reach(i int) []bool {
	out := int(p.outs[i])
	mark := make([]bool, out+1)
	mark[out] = true
	for k := out; k >= p.start; k-- {
		if op := p.ops[k]; op == opLoop || op == opLane { // vec.go: element by element
			if op == opLoop {
				p.loopDeps(k, laneNeed(mark, k), func(s int32) { mark[s] = true }, nil)
			}
			continue
		}
		if !mark[k] {
			continue
		}
		mark[p.a[k]] = true
		mark[p.b[k]] = true
		if p.ops[k].Arity() == 3 {
			mark[p.a[k+1]] = true
		}
	}
	return mark
}
