package tape

import (
	"sync"
	"sync/atomic"
)

// tapeProg is the immutable program of a Tape, shared by its clones.
//
// Layout: slots [0, nIn) are the inputs, [nIn, start) the constants and
// [start, n) the operations in evaluation order, as a structure of
// arrays. Unary operations have b == a. A three-argument operation at k
// is followed by an opArg node whose a is the third argument.
type tapeProg struct {
	nIn, start int
	ops        []Op
	a, b       []int32
	pos        []int32
	outs       []int32
	loops      []loop // the loop nodes (vec.go), in tape order
	// direct marks the inputs only loop nodes read, whose adjoints the
	// reverse pass adds straight into its result (vec.go), and runs lists
	// the runs of inputs [from, to) that are direct (odd entries) or not
	// (even ones), in order; both nil when none is.
	direct []bool
	runs   [][2]int
	// spans are the distinct runs of direct inputs the loop nodes read (a
	// vector operand, or one input broadcast), and dspan[l][i] is the span
	// of operand i of loop l, or -1 (vecpass.go); spans[s].shared is set
	// for a span that overlaps another. fuse[l] is set for a sum loop l
	// whose operand is a map that only it reads and that comes just before
	// it, whose reverse pass it runs with its own adjoint.
	spans []span
	dspan [][3]int32
	fuse  []bool
	chain []int8
	// dots[i], for output i, is a dot product whose adjoint a chain of
	// scalar operations fixes before its value is known (vecpass.go).
	dots     []dotChain
	cache    planCache // plans of the batched passes, by output
	planOnce sync.Once
	canPlan  bool       // see plannable
	sc       scalarCode // the scalar pass's code
	rc       revChain   // the kinds of the long tape's reverse pass (reverse.go)
	// sweeps holds the arrays of the last sweep of a Cones of this
	// program (conesweep.go), for the next, whichever Cones makes it.
	sweeps atomic.Pointer[sweepBufs]
}

// Tape is a compiled computation: a flat list of operations in
// evaluation order with forward, reverse (adjoint) and batched passes.
//
// A Tape owns its value and adjoint buffers, so one Tape must not be used
// by two goroutines at once; Clone gives each goroutine its own buffers
// over the shared, read-only program. After their first call the passes
// allocate nothing (except to report an error).
//
// Non-finite values are never let through: a pass that would produce a
// NaN or ±Inf in an output, or feed one to an operation that could hide
// it (1/Inf = 0, min(x, Inf) = x, a comparison), returns a *DomainError
// that names the operation where it first arose, with its position and
// operand values. A NaN or Inf in the branch an if does not take, or in
// an input or node the output does not use, is not an error. The test
// costs nothing on most operations: only outputs and the operations that
// could hide a non-finite operand check for one, and only when one is
// seen is the tape searched for its origin.
//
// Layout: a structure of arrays (operation, two operand indices and a
// source position per node, plus the value and adjoint buffers: 29 bytes
// a node), inputs first, then constants, then operations in evaluation
// order. The batched passes run each operation over a block of samples
// before the next (node-major rows of up to 256 samples), so the
// interpreter's dispatch is paid once a block.
type Tape struct {
	p    *tapeProg
	vals []float64
	adj  []float64

	// Batched passes: blocks of bw samples, node-major
	// (bvals[k*bw+s] is node k in sample s); allocated on first use.
	bw    int
	bvals []float64
	badj  []float64
	bsum  []float64 // the partial sums of a sum loop over a block (vec.go)
	xrow  []float64 // one sample's inputs, for ForwardColumns sample by sample

	ps *planState // the batched forward pass's plan and rows

	code []sinstr // the program's scalar code of every node, once Forward has run it

	// adjUsed is set when adj may hold a nonzero value at or above start:
	// the reverse pass over the scalar code leaves those zero (see reverse).
	adjUsed bool

	// xin is the x of the last Value or Gradient, whose inputs that only
	// loop nodes read were read there in place and not copied into vals
	// (vecpass.go); nil after Eval or Forward, which copy every input.
	xin []float64
	lp  loopPass // the loop nodes' state in a reverse pass (vecpass.go)
}

// NumInputs returns the number of inputs.
func (t *Tape) NumInputs() int { return t.p.nIn }

// NumOutputs returns the number of outputs.
func (t *Tape) NumOutputs() int { return len(t.p.outs) }

// Len returns the number of nodes: inputs, constants and operations.
func (t *Tape) Len() int { return len(t.p.ops) }

// Bytes returns the memory held by the tape: its program and its scalar
// value and adjoint buffers (29 bytes a node). The buffers of the batched
// passes, allocated on their first call and bounded by a fixed budget,
// are reported by BatchBytes.
func (t *Tape) Bytes() int {
	p := t.p
	return len(p.ops) + 4*(len(p.a)+len(p.b)+len(p.pos)+len(p.outs)) + 8*(len(t.vals)+len(t.adj))
}

// BatchBytes returns the memory of the batched passes' block buffers (0
// before the first batched call).
func (t *Tape) BatchBytes() int { return 8 * (len(t.bvals) + len(t.badj)) }

// Clone returns a Tape that shares t's program and has buffers of its
// own, for use by another goroutine. Clone may run while t is in use.
func (t *Tape) Clone() *Tape {
	n := len(t.p.ops)
	c := &Tape{p: t.p, vals: make([]float64, n), adj: make([]float64, n)}
	// Constants are never written after Tape, so reading them here does
	// not race with a pass on t.
	copy(c.vals[t.p.nIn:t.p.start], t.vals[t.p.nIn:t.p.start])
	return c
}

// Output returns output i as computed by the last Forward (or by the
// last Eval or Gradient for output i).
func (t *Tape) Output(i int) float64 { return t.vals[t.p.outs[i]] }

// OutputPos returns the source position of the node that computes output
// i.
func (t *Tape) OutputPos(i int) int32 { return t.p.pos[t.p.outs[i]] }
