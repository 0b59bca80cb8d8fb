package sens

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
