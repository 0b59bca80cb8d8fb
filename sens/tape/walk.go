package tape

import (
	"fmt"
	"slices"
)

// Walk evaluates one output of a tape along a path of points, each the
// one before it with one input changed: the trajectories of elementary
// effects. The first point is evaluated whole; each step runs only the
// cone of the input it changes (the operations that depend on it), node by
// node over the values of the point before, and keeps the results as the
// values of the new point. The values are those of Eval at the same
// points, to the last bit: the same operations on the same operands.
//
// A step whose cone meets a non-finite value, or whose output is not
// finite, is evaluated again whole by Eval, which finds the error, if any,
// as it would, and leaves every value of the new point in place either
// way. So is every step from a point where an operation other than an if
// could hide a non-finite value (see hides: a comparison of a NaN is 0) in
// a branch not taken, which a step may take. A Walk is not safe for
// concurrent use.
type Walk struct {
	t      *Tape // a clone of its own; its vals are the current point's
	out    int
	x      []float64
	ok     bool // the current point has been evaluated without error
	clean  bool // and no operation it needs hides a non-finite value
	need   []bool
	ustart []int32
	users  []int32
	cones  [][]int32 // by input, found on first use
	found  []bool
	seen   []int32
	stamp  int32
	stack  []int32
}

// Walk returns a walk of output o. A tape whose operations plans do not
// know (loop nodes, see plannable) has none: Walk returns ErrNoCones.
func (t *Tape) Walk(o int) (*Walk, error) {
	p := t.p
	if !p.plannable() {
		return nil, ErrNoCones
	}
	need := p.reach(o)
	n := len(need)
	w := &Walk{t: t.Clone(), out: o, x: make([]float64, p.nIn), cones: make([][]int32, p.nIn),
		found: make([]bool, p.nIn), seen: make([]int32, n), need: need}
	w.ustart = make([]int32, n+2)
	edges := func(f func(k, a int32)) {
		for k := p.start; k < n; k++ {
			if p.ops[k] == opArg || !need[k] {
				continue
			}
			a, b := p.a[k], p.b[k]
			f(int32(k), a)
			if b != a {
				f(int32(k), b)
			}
			if p.ops[k].Arity() == 3 {
				if z := p.a[k+1]; z != a && z != b {
					f(int32(k), z)
				}
			}
		}
	}
	edges(func(k, a int32) { w.ustart[a+2]++ })
	for k := 2; k < len(w.ustart); k++ {
		w.ustart[k] += w.ustart[k-1]
	}
	w.users = make([]int32, w.ustart[n+1])
	edges(func(k, a int32) {
		w.users[w.ustart[a+1]] = k
		w.ustart[a+1]++
	})
	w.ustart = w.ustart[:n+1]
	return w, nil
}

// cone returns the operations, in tape order, that depend on input i and
// that the output needs.
func (w *Walk) cone(i int) []int32 {
	if w.found[i] {
		return w.cones[i]
	}
	w.stamp++
	var nodes []int32
	if i < len(w.seen) {
		w.seen[i] = w.stamp
		w.stack = append(w.stack[:0], int32(i))
	}
	for len(w.stack) > 0 {
		k := w.stack[len(w.stack)-1]
		w.stack = w.stack[:len(w.stack)-1]
		for _, u := range w.users[w.ustart[k]:w.ustart[k+1]] {
			if w.seen[u] != w.stamp {
				w.seen[u] = w.stamp
				w.stack = append(w.stack, u)
				nodes = append(nodes, u)
			}
		}
	}
	slices.Sort(nodes)
	w.cones[i], w.found[i] = nodes, true
	return nodes
}

// Start evaluates the output at x, the first point of a path, and returns
// it, or the error of Eval.
func (w *Walk) Start(x []float64) (float64, error) {
	copy(w.x, x)
	return w.whole()
}

// whole evaluates the current point by Eval.
func (w *Walk) whole() (float64, error) {
	y, err := w.t.Eval(w.x, w.out)
	w.ok = err == nil
	w.clean = w.ok && !w.t.p.hides(w.t.vals, w.need)
	return y, err
}

// Step moves input i of the current point to v and returns the output
// there, or the error of Eval at the new point. After an error the walk
// must start again.
func (w *Walk) Step(i int, v float64) (float64, error) {
	if !w.ok {
		panic("tape: Walk.Step without a point evaluated")
	}
	if i < 0 || i >= len(w.x) {
		panic(fmt.Sprintf("tape: Walk.Step of input %d of %d", i, len(w.x)))
	}
	p := w.t.p
	vals := w.t.vals
	w.x[i] = v
	if !w.clean {
		return w.whole()
	}
	vals[i] = v
	bad := false
	for _, k := range w.cone(i) {
		if p.step(vals, k) {
			bad = true
		}
	}
	y := vals[p.outs[w.out]]
	if bad || !finite(y) {
		return w.whole()
	}
	return y, nil
}
