package tape

import (
	"errors"
	"fmt"
	"slices"
)

// Radial evaluates one output of a tape at base points given column by
// column and, for each of some inputs, at every base point with that one
// input replaced: the k + 1 points of each row of a radial design (the
// matrices A and A_B^i of Sobol' indices). Each base point has a baseline
// of its own, so Cones (one baseline for every point) does not apply; a
// Radial keeps, lane by lane, the values of the base points' nodes that
// the cones read, and re-evaluates for a replaced input only its cone (the
// operations that depend on it), reading every other operand from the
// base point's values in the same lane. The values are those of Eval at
// the same points, to the last bit: the same operations on the same
// operands.
//
// The base pass is the output's plan with the registers of the nodes a
// cone reads kept to the end of the block (planSrc.keep); each input's
// cone is a plan whose input registers are the replaced input and those
// kept rows, read in place. A Radial is not safe for concurrent use; give
// each goroutine its own.
type Radial struct {
	t     *Tape
	out   int
	base  *plan
	cones []*radialCone // by tape input; nil when the output does not depend on it
	inReg []int32       // by tape input: its register in the base plan, -1 if none
	w     int

	be   *planExec
	tmp  []float64 // the cones' temporaries, shared (one cone runs at a time)
	x    []float64 // a point, for the reference pass
	need []bool    // the nodes the output needs
}

// radialCone is the plan of one input's cone and where its input
// registers read from.
type radialCone struct {
	pl    *plan
	nodes int // operations in the cone
	// src[r], for input register r >= 1: a tape input j as -1-j (the base
	// column), else the base plan's register holding the node.
	src  []int32
	rows [][]float64
	cbuf []float64 // the constant rows
}

// RadialError is the error of Radial.Eval: the point that failed, base
// point Sample with Input replaced (Input = -1: the base point itself).
type RadialError struct {
	Input int
	Err   *DomainError
}

func (e *RadialError) Error() string {
	if e.Input < 0 {
		return e.Err.Error()
	}
	return fmt.Sprintf("%s (input %d replaced)", e.Err.Error(), e.Input)
}

func (e *RadialError) Unwrap() error { return e.Err }

// Radial limits: a Radial whose rows would be narrower than
// minRadialWidth lanes, or whose cones together hold more than
// maxRadialNodes operations (their plans, 80 MB), is not built: Radial
// returns ErrRadialSize.
const (
	minRadialWidth = 16
	maxRadialNodes = 1 << 21
)

// ErrRadialSize is the error of Radial for a tape whose cones are too
// large together, or read too many values, for lane cones to pay: the
// caller evaluates every point whole.
var ErrRadialSize = errors.New("tape: the cones of this tape are too large for lane cones")

// Radial returns the evaluator of output o for points that replace one of
// the given tape inputs. A tape whose operations plans do not know (loop
// nodes, see plannable) has none: Radial returns ErrNoCones (a tape with
// loop nodes has cones element by element, Cones). One whose cones are
// too large returns ErrRadialSize.
func (t *Tape) Radial(o int, inputs []int) (*Radial, error) {
	p := t.p
	if !p.plannable() {
		return nil, ErrNoCones
	}
	need := p.reach(o)
	n := len(need)
	// Users of each node the output needs, in compressed rows.
	ustart := make([]int32, n+2)
	edges := func(f func(k, a int32)) {
		for k := p.start; k < n; k++ {
			if op := p.ops[k]; op == opArg || !need[k] {
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
	edges(func(k, a int32) { ustart[a+2]++ })
	for k := 2; k < len(ustart); k++ {
		ustart[k] += ustart[k-1]
	}
	users := make([]int32, ustart[n+1])
	edges(func(k, a int32) {
		users[ustart[a+1]] = k
		ustart[a+1]++
	})
	ustart = ustart[:n+1]

	r := &Radial{t: t, out: o, cones: make([]*radialCone, p.nIn), need: need}
	seen := make([]int32, n) // stamp: 1 + the input whose cone holds the node
	outNode := p.outs[o]
	var keep []int32
	kept := make([]bool, n)
	type coneSrc struct {
		nodes, inputs []int32
	}
	srcs := make([]*coneSrc, p.nIn)
	total := 0
	var stack []int32
	for _, i := range inputs {
		if i < 0 || i >= p.nIn {
			panic(fmt.Sprintf("tape: Radial of input %d of %d", i, p.nIn))
		}
		if i >= n || !need[i] || srcs[i] != nil {
			continue
		}
		stamp := int32(i + 1)
		seen[i] = stamp
		stack = append(stack[:0], int32(i))
		var nodes []int32
		for len(stack) > 0 {
			k := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for _, u := range users[ustart[k]:ustart[k+1]] {
				if seen[u] != stamp {
					seen[u] = stamp
					stack = append(stack, u)
					nodes = append(nodes, u)
				}
			}
		}
		if int(outNode) >= n || seen[outNode] != stamp {
			continue // the output does not depend on input i
		}
		slices.Sort(nodes)
		total += len(nodes)
		if total > maxRadialNodes {
			return nil, ErrRadialSize
		}
		// The operands the cone reads from outside it: other inputs and
		// computed nodes (constants sit in the plan).
		ins := []int32{int32(i)}
		mark := func(a int32) {
			if seen[a] == stamp || (a >= int32(p.nIn) && a < int32(p.start)) {
				return
			}
			seen[a] = stamp // read once
			ins = append(ins, a)
			if a >= int32(p.start) && !kept[a] {
				kept[a] = true
				keep = append(keep, a)
			}
		}
		for _, k := range nodes {
			mark(p.a[k])
			mark(p.b[k])
			if p.ops[k].Arity() == 3 {
				mark(p.a[k+1])
			}
		}
		srcs[i] = &coneSrc{nodes: nodes, inputs: ins}
	}

	// The base plan: the output's, keeping every node a cone reads.
	slices.Sort(keep)
	var nodes, ins []int32
	for k := range need {
		switch {
		case !need[k]:
		case k < p.nIn:
			ins = append(ins, int32(k))
		case k >= p.start && p.ops[k] != opArg:
			nodes = append(nodes, int32(k))
		}
	}
	scratch := make([]int32, 3*len(p.ops))
	for k := range scratch {
		scratch[k] = -1
	}
	vals := t.vals
	constant := func(k int32) float64 {
		if k < int32(p.nIn) || k >= int32(p.start) {
			panic(fmt.Sprintf("tape: Radial plan reads node %d as a constant", k))
		}
		return vals[k]
	}
	r.base = t.newPlan(planSrc{nodes: nodes, inputs: ins, value: constant, keep: keep}, outNode, scratch)
	keptReg := make(map[int32]int32, len(keep))
	for n, k := range keep {
		keptReg[k] = r.base.kept[n]
	}
	r.inReg = make([]int32, p.nIn)
	for j := range r.inReg {
		r.inReg[j] = -1
	}
	for reg, k := range r.base.inputs {
		r.inReg[k] = int32(reg)
	}
	own := 0
	for i, cs := range srcs {
		if cs == nil {
			continue
		}
		pl := t.newPlan(planSrc{nodes: cs.nodes, inputs: cs.inputs, value: constant}, outNode, scratch)
		c := &radialCone{pl: pl, nodes: len(cs.nodes), src: make([]int32, len(cs.inputs)), rows: make([][]float64, pl.nreg)}
		for reg, k := range cs.inputs[1:] {
			switch {
			case k < int32(p.nIn):
				c.src[reg+1] = -1 - k
			default:
				c.src[reg+1] = keptReg[k]
			}
		}
		own = max(own, pl.nreg-pl.nIn-len(pl.consts))
		r.cones[i] = c
	}
	r.w = planWidth(r.base.nreg + own)
	if r.w < minRadialWidth {
		return nil, ErrRadialSize
	}
	r.be = r.base.newExec(r.w)
	r.tmp = make([]float64, own*r.w)
	for _, c := range r.cones {
		if c == nil {
			continue
		}
		pl, w := c.pl, r.w
		nc := len(pl.consts)
		c.cbuf = make([]float64, nc*w)
		for j, v := range pl.consts {
			row := c.cbuf[j*w : (j+1)*w : (j+1)*w]
			for s := range row {
				row[s] = v
			}
			c.rows[pl.nIn+j] = row
		}
		for reg := pl.nIn + nc; reg < pl.nreg; reg++ {
			o := (reg - pl.nIn - nc) * w
			c.rows[reg] = r.tmp[o : o+w : o+w]
		}
	}
	return r, nil
}

// Eval writes into dst the output at the n base points, cols[j][s] being
// input j of point s (one column per tape input), and, for each input i
// with alt[i] != nil, into dstAlt[i] the output at the base points with
// input i set to alt[i][s]. Points are taken in blocks; within a block the
// base points first, then input by input in increasing order. The first
// point whose output would be NaN or ±Inf ends the evaluation with a
// *RadialError (its DomainError's Sample the point's index); the outputs
// of later blocks are then not written.
func (r *Radial) Eval(dst []float64, dstAlt [][]float64, cols, alt [][]float64, n int) error {
	p := r.t.p
	if len(cols) != p.nIn || len(alt) != p.nIn || len(dstAlt) != p.nIn || len(dst) < n {
		panic(fmt.Sprintf("tape: Radial.Eval of %d columns over %d points, tape has %d inputs", len(cols), n, p.nIn))
	}
	for j, c := range cols {
		if len(c) < n || alt[j] != nil && (len(alt[j]) < n || len(dstAlt[j]) < n) {
			panic("tape: Radial.Eval column shorter than n")
		}
	}
	be := r.be
	for base := 0; base < n; base += r.w {
		m := min(r.w, n-base)
		for reg, j := range r.base.inputs {
			be.rows[reg] = cols[j][base : base+m]
		}
		bad := be.run(m)
		o := be.output(m)
		copy(dst[base:base+m], o)
		// A block whose base points are clean (every value finite: no
		// guard operation saw a non-finite operand, the output is finite)
		// goes through the cones. Otherwise a value outside a cone may hide
		// a non-finite one (a comparison of a NaN is 0) in a branch the base
		// point does not take and a replaced point does, which the cone
		// cannot see: the block's replaced points are evaluated whole.
		dirty := bad || r.base.alwaysBad || !allFinite(o)
		if dirty {
			if err := r.reference(dst, cols, -1, nil, base, m); err != nil {
				return err
			}
		}
		for i, vi := range alt {
			if vi == nil {
				continue
			}
			c := r.cones[i]
			if c == nil {
				copy(dstAlt[i][base:base+m], dst[base:base+m])
				continue
			}
			if dirty {
				if err := r.whole(dstAlt[i], cols, i, vi, base, m); err != nil {
					return err
				}
				continue
			}
			c.rows[0] = vi[base : base+m]
			for reg := 1; reg < c.pl.nIn; reg++ {
				if s := c.src[reg]; s < 0 {
					c.rows[reg] = cols[-1-s][base : base+m]
				} else {
					c.rows[reg] = be.rows[s][:m]
				}
			}
			e := planExec{pl: c.pl, w: r.w, rows: c.rows}
			bad := e.run(m)
			o := e.output(m)
			copy(dstAlt[i][base:base+m], o)
			if bad || c.pl.alwaysBad || !allFinite(o) {
				if err := r.reference(dstAlt[i], cols, i, vi, base, m); err != nil {
					return err
				}
			}
		}
	}
	return nil
}

// whole evaluates points base..base+m-1 with input i replaced by vi
// through the base plan, every node again; the kept values are then those
// of these points.
func (r *Radial) whole(dst []float64, cols [][]float64, i int, vi []float64, base, m int) error {
	be, reg := r.be, r.inReg[i]
	be.rows[reg] = vi[base : base+m]
	bad := be.run(m)
	be.rows[reg] = cols[i][base : base+m]
	o := be.output(m)
	copy(dst[base:base+m], o)
	if bad || r.base.alwaysBad || !allFinite(o) {
		return r.reference(dst, cols, i, vi, base, m)
	}
	return nil
}

// reference evaluates points base..base+m-1 (input i replaced by vi when
// i >= 0) by the tape's scalar pass, to find the error a block's test
// flagged, or nil when the non-finite values lay in branches not taken.
func (r *Radial) reference(dst []float64, cols [][]float64, i int, vi []float64, base, m int) error {
	if r.x == nil {
		r.x = make([]float64, len(cols))
	}
	x := r.x
	for s := base; s < base+m; s++ {
		for j, c := range cols {
			x[j] = c[s]
		}
		if i >= 0 {
			x[i] = vi[s]
		}
		y, err := r.t.Eval(x, r.out)
		if err != nil {
			de := err.(*DomainError)
			de.Sample = s
			return &RadialError{Input: i, Err: de}
		}
		dst[s] = y
	}
	return nil
}

// ConeSize returns the number of operations in input i's cone, 0 when the
// output does not depend on it: the work of one replaced point, in tape
// nodes.
func (r *Radial) ConeSize(i int) int {
	if c := r.cones[i]; c != nil {
		return c.nodes
	}
	return 0
}
