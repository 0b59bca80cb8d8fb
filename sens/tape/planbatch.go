package tape

import (
	"fmt"
	"sync"
)

// planCache holds the plans of a program's outputs, built on first use
// and shared by every clone of the tape.
type planCache struct {
	mu    sync.Mutex
	plans map[int]*plan
}

// outputPlan returns the plan that evaluates output i from its inputs.
func (t *Tape) outputPlan(i int) *plan {
	p := t.p
	p.cache.mu.Lock()
	defer p.cache.mu.Unlock()
	if pl := p.cache.plans[i]; pl != nil {
		return pl
	}
	mark := p.reach(i)
	var nodes, inputs []int32
	for k := range mark {
		switch {
		case !mark[k]:
		case k < p.nIn:
			inputs = append(inputs, int32(k))
		case k >= p.start && p.ops[k] != opArg:
			nodes = append(nodes, int32(k))
		}
	}
	scratch := make([]int32, 3*len(p.ops))
	for k := range scratch {
		scratch[k] = -1
	}
	vals := t.vals
	pl := t.newPlan(planSrc{nodes: nodes, inputs: inputs, value: func(k int32) float64 { return vals[k] }},
		p.outs[i], scratch)
	if p.cache.plans == nil {
		p.cache.plans = map[int]*plan{}
	}
	p.cache.plans[i] = pl
	return pl
}

// planState is a tape's buffers for running the plan of one output.
type planState struct {
	out int
	e   *planExec
	in  []float64 // input rows, for row-major batches
}

func (t *Tape) planFor(i int) *planState {
	if t.ps != nil && t.ps.out == i {
		return t.ps
	}
	pl := t.outputPlan(i)
	w := planWidth(pl.nreg + pl.nIn)
	e := pl.newExec(w)
	ps := &planState{out: i, e: e}
	t.ps = ps
	return ps
}

// ForwardBatch evaluates output i for n samples: x is row-major
// (n × NumInputs) and out receives the n values. It returns a
// *DomainError for the first sample whose output would be NaN or ±Inf,
// with Sample set; out is then filled only up to that sample's block.
//
// Samples are evaluated in blocks by the output's plan (see plan): an
// instruction array of only the nodes the output needs, over rows reused
// once their value is dead, so that a tape of any size runs batched.
func (t *Tape) ForwardBatch(out, x []float64, n, i int) error {
	nIn := t.p.nIn
	checkBatch(x, n, nIn)
	if len(out) != n {
		panic("tape: ForwardBatch output length differs from n")
	}
	if !t.p.plannable() {
		return t.forwardBlocks(out, x, n, i)
	}
	ps := t.planFor(i)
	e := ps.e
	pl, w := e.pl, e.w
	if ps.in == nil {
		ps.in = make([]float64, pl.nIn*w)
	}
	for r := 0; r < pl.nIn; r++ {
		e.rows[r] = ps.in[r*w : (r+1)*w : (r+1)*w]
	}
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		xb := x[base*nIn : (base+m)*nIn]
		for r, j := range pl.inputs {
			row := e.rows[r][:m]
			src := xb[j:]
			for s := range row {
				row[s] = src[s*nIn]
			}
		}
		if err := t.planBlock(out, base, m, func(s int) []float64 { return x[s*nIn : (s+1)*nIn] }); err != nil {
			return err
		}
	}
	return nil
}

// ForwardColumns evaluates output i for n samples given column by column:
// cols[j][s] is input j in sample s (each column at least n long), read in
// place, without a copy. Errors are as for ForwardBatch.
func (t *Tape) ForwardColumns(out []float64, cols [][]float64, n, i int) error {
	nIn := t.p.nIn
	if len(cols) != nIn {
		panic(fmt.Sprintf("tape: %d columns given, tape has %d inputs", len(cols), nIn))
	}
	for _, c := range cols {
		if len(c) < n {
			panic("tape: ForwardColumns column shorter than n")
		}
	}
	if len(out) < n {
		panic("tape: ForwardColumns output shorter than n")
	}
	if !t.p.plannable() {
		return t.columnBlocks(out[:n], cols, n, i)
	}
	ps := t.planFor(i)
	e := ps.e
	pl, w := e.pl, e.w
	var x []float64
	for base := 0; base < n; base += w {
		m := min(w, n-base)
		for r, j := range pl.inputs {
			e.rows[r] = cols[j][base : base+m]
		}
		err := t.planBlock(out, base, m, func(s int) []float64 {
			if x == nil {
				x = make([]float64, nIn)
			}
			for j := range x {
				x[j] = cols[j][s]
			}
			return x
		})
		if err != nil {
			return err
		}
	}
	return nil
}

// planBlock runs the plan of the current output over samples base..
// base+m-1, whose inputs are loaded, and stores the outputs. A block whose
// test fails is evaluated again sample by sample by Eval, which finds and
// reports the error (row returns sample s's inputs).
func (t *Tape) planBlock(out []float64, base, m int, row func(s int) []float64) error {
	ps := t.ps
	e := ps.e
	bad := e.run(m)
	o := e.output(m)
	copy(out[base:base+m], o)
	if !bad && !e.pl.alwaysBad && allFinite(o) {
		return nil
	}
	for s := base; s < base+m; s++ {
		y, err := t.Eval(row(s), ps.out)
		if err != nil {
			err.(*DomainError).Sample = s
			return err
		}
		out[s] = y
	}
	return nil
}

// plannable reports whether every operation of the program is one that
// plans, cones and the scalar pass of a cone know: those up to opArg.
// Operations added after it (nodes spanning several tape slots) take the
// node-major passes, which know every operation.
func (p *tapeProg) plannable() bool {
	p.planOnce.Do(func() {
		p.canPlan = true
		for _, op := range p.ops {
			if op > opArg {
				p.canPlan = false
				return
			}
		}
	})
	return p.canPlan
}
