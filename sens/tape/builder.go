package tape

import (
	"fmt"
	"math"
	"runtime"
)

// Slot names a value under construction in a Builder: an input, a
// constant or the result of an operation.
type Slot int32

// bnode is one node of a Builder: 20 bytes. A constant keeps its value's
// bits in args[1] and args[2] (see constNode), which no operation reads.
type bnode struct {
	op   Op
	args [3]Slot
	pos  int32
}

// constNode is the node of the constant v at position pos.
func constNode(v float64, pos int32) bnode {
	u := math.Float64bits(v)
	return bnode{op: OpConst, pos: pos, args: [3]Slot{-1, Slot(uint32(u)), Slot(uint32(u >> 32))}}
}

// val returns the value of a constant's node.
func (n *bnode) val() float64 {
	return math.Float64frombits(uint64(uint32(n.args[1])) | uint64(uint32(n.args[2]))<<32)
}

// cseTable finds an operation added before on the same operands: an
// open-addressing hash table of node numbers plus one (0 is an empty
// cell), each cell holding the upper bits of its node's hash beside the
// number so that a probe reads a node only when the hashes agree. It takes 8
// bytes a cell at a load of at most one half, against about 40 a node for a
// map keyed by the operation and its operands.
type cseTable struct {
	cells []uint64 // hash>>32<<32 | slot+1
	n     int      // cells in use
}

// cseHash hashes an operation and its operands.
func cseHash(op Op, x, y, z Slot) uint64 {
	h := uint64(op)*0x9e3779b97f4a7c15 ^ uint64(uint32(x))
	h = (h ^ h>>29) * 0xbf58476d1ce4e5b9
	h ^= uint64(uint32(y)) << 17
	h = (h ^ h>>32) * 0x94d049bb133111eb
	h ^= uint64(uint32(z))
	h = (h ^ h>>31) * 0xbf58476d1ce4e5b9
	return h ^ h>>29
}

// find returns the node equal to op(x, y, z), or the cell to put it in.
func (t *cseTable) find(nodes []bnode, h uint64, op Op, x, y, z Slot) (s Slot, cell int, ok bool) {
	mask := len(t.cells) - 1
	tag := h >> 32 << 32
	for i := int(h) & mask; ; i = (i + 1) & mask {
		c := t.cells[i]
		if c == 0 {
			return 0, i, false
		}
		if c&^0xffffffff == tag {
			s := Slot(uint32(c) - 1)
			if nd := &nodes[s]; nd.op == op && nd.args == [3]Slot{x, y, z} {
				return s, i, true
			}
		}
	}
}

// grow doubles the table (or makes one of room for about n nodes).
func (t *cseTable) grow(nodes []bnode, n int) {
	size := 64
	for size < 2*n || size < 2*len(t.cells) {
		size *= 2
	}
	old := t.cells
	t.cells = make([]uint64, size)
	mask := size - 1
	for _, c := range old {
		if c == 0 {
			continue
		}
		nd := &nodes[uint32(c)-1]
		i := int(cseHash(nd.op, nd.args[0], nd.args[1], nd.args[2])) & mask
		for t.cells[i] != 0 {
			i = (i + 1) & mask
		}
		t.cells[i] = c
	}
}

// Builder records a computation as a directed acyclic graph of
// operations and freezes it into a Tape.
//
// It simplifies as nodes are added: an operation whose operands are all
// constants is folded to a constant (unless the result is NaN or ±Inf,
// which is kept as a node so that evaluation reports it with its
// position); constants are shared; an operation repeated on the same
// operands is shared (the first one's position is kept); and
//
//	x + 0, 0 + x, x - 0, x * 1, 1 * x, x / 1, x ^ 1  ->  x
//	0 - x  ->  -x,   -(-x)  ->  x,   x ^ 2  ->  x*x (OpSquare)
//	x ^ c  ->  OpPowConst for a constant c
//
// x * 0 is not folded to 0: it is 0 only for a finite x, and a NaN or
// Inf in x must still be reported.
//
// A Builder is not safe for concurrent use.
type Builder struct {
	nodes  []bnode
	consts map[uint64]Slot
	cse    cseTable
	inputs []Slot
	pos    int32

	// Vectors and loop nodes (vec.go).
	vecs    []bvec
	loops   []loop
	loopMin int
	loopCSE map[loopKey]Slot
}

// NewBuilder returns an empty Builder.
func NewBuilder() *Builder { return NewBuilderSize(0) }

// NewBuilderSize returns an empty Builder with room for about n nodes.
func NewBuilderSize(n int) *Builder {
	b := &Builder{nodes: make([]bnode, 0, n), consts: map[uint64]Slot{}}
	b.cse.grow(nil, n/2) // about half the nodes are operations
	return b
}

// SetPos sets the source position attached to every node added until the
// next SetPos. The position is an opaque number chosen by the caller;
// domain errors and StepOps report it.
func (b *Builder) SetPos(p int32) { b.pos = p }

// Input adds an input. Inputs are numbered 0, 1, ... in the order of the
// calls; the number is the index into the x slices of the Tape methods.
func (b *Builder) Input() Slot {
	s := Slot(len(b.nodes))
	b.nodes = append(b.nodes, bnode{op: OpInput, pos: b.pos, args: [3]Slot{-1, -1, -1}})
	b.inputs = append(b.inputs, s)
	return s
}

// NumInputs returns the number of inputs added so far.
func (b *Builder) NumInputs() int { return len(b.inputs) }

// Len returns the number of nodes added so far: inputs, constants and
// operations, after folding and sharing.
func (b *Builder) Len() int { return len(b.nodes) }

// Const adds the constant v, or returns the slot of an equal constant
// (same bits) added before.
func (b *Builder) Const(v float64) Slot {
	key := math.Float64bits(v)
	if s, ok := b.consts[key]; ok {
		return s
	}
	s := Slot(len(b.nodes))
	b.nodes = append(b.nodes, constNode(v, b.pos))
	b.consts[key] = s
	return s
}

// IsConst reports whether s is a constant, and its value.
func (b *Builder) IsConst(s Slot) (float64, bool) {
	if s < 0 || int(s) >= len(b.nodes) {
		panic(fmt.Sprintf("tape: slot %d not made by this builder", s))
	}
	if n := &b.nodes[s]; n.op == OpConst {
		return n.val(), true
	}
	return 0, false
}

func (b *Builder) checkSlot(s Slot) {
	if s < 0 || int(s) >= len(b.nodes) {
		panic(fmt.Sprintf("tape: slot %d not made by this builder", s))
	}
	if b.nodes[s].op == opVec {
		panic(fmt.Sprintf("tape: slot %d is a vector: use Map, Sum or Elem", s))
	}
}

func (b *Builder) checkOp(op Op, n int) {
	if op >= numOps || op == opArg || op == opLane || opMetas[op].arity == 0 {
		panic(fmt.Sprintf("tape: %v is not an operation", op))
	}
	if int(opMetas[op].arity) != n {
		panic(fmt.Sprintf("tape: %v takes %d arguments, not %d", op, opMetas[op].arity, n))
	}
}

// Unary adds the one-argument operation op(x).
func (b *Builder) Unary(op Op, x Slot) Slot {
	b.checkOp(op, 1)
	b.checkSlot(x)
	if op == OpNeg && b.nodes[x].op == OpNeg {
		return b.nodes[x].args[0]
	}
	return b.add(op, x, -1, -1)
}

// Binary adds the two-argument operation op(x, y), or x op y.
func (b *Builder) Binary(op Op, x, y Slot) Slot {
	b.checkOp(op, 2)
	b.checkSlot(x)
	b.checkSlot(y)
	cx, xc := b.IsConst(x)
	cy, yc := b.IsConst(y)
	switch op {
	// The identities below hold to the bit under IEEE 754, signed zeros
	// included: x + (−0) = x, but (−0) + (+0) = +0, so x + (+0) is kept;
	// x − (+0) = x, but (−0) − (−0) = +0; (−0) − y = −y, but
	// (+0) − (+0) = +0 where −(+0) = −0.
	case OpAdd:
		if xc && !yc { // constant on the right
			x, y, cx, cy, xc, yc = y, x, cy, cx, yc, xc
		}
		if yc && !xc && cy == 0 && math.Signbit(cy) {
			return x
		}
	case OpSub:
		if yc && !xc && cy == 0 && !math.Signbit(cy) {
			return x
		}
		if xc && !yc && cx == 0 && math.Signbit(cx) {
			return b.Unary(OpNeg, y)
		}
	case OpMul:
		if xc && !yc {
			x, y, cx, cy, xc, yc = y, x, cy, cx, yc, xc
		}
		if yc && !xc && cy == 1 {
			return x
		}
	case OpDiv:
		if yc && !xc && cy == 1 {
			return x
		}
	case OpPow:
		if yc && !xc {
			switch cy {
			case 1:
				return x
			case 2:
				return b.add(OpSquare, x, -1, -1)
			}
			op = OpPowConst
		}
	case OpPowConst:
		if !yc {
			panic("tape: OpPowConst needs a constant exponent")
		}
		if !xc && cy == 2 {
			return b.add(OpSquare, x, -1, -1)
		}
	}
	_, _ = cx, xc
	return b.add(op, x, y, -1)
}

// Call adds op applied to args; it takes any arity and is the way to add
// the three-argument operations (OpIf, OpLearn, OpLearnTotal).
func (b *Builder) Call(op Op, args ...Slot) Slot {
	b.checkOp(op, len(args))
	switch len(args) {
	case 1:
		return b.Unary(op, args[0])
	case 2:
		return b.Binary(op, args[0], args[1])
	}
	for _, a := range args {
		b.checkSlot(a)
	}
	return b.add(op, args[0], args[1], args[2])
}

// Fold adds a left fold of the binary operation op over args:
// op(op(op(a0, a1), a2), ...). It is how the variadic min and max are
// built (a tie then credits the earliest argument). One argument is
// returned as it is.
func (b *Builder) Fold(op Op, args ...Slot) Slot {
	if len(args) == 0 {
		panic("tape: Fold of no arguments")
	}
	acc := args[0]
	b.checkSlot(acc)
	for _, a := range args[1:] {
		acc = b.Binary(op, acc, a)
	}
	return acc
}

// add appends op(x, y, z) after folding and sharing.
func (b *Builder) add(op Op, x, y, z Slot) Slot {
	n := int(opMetas[op].arity)
	args := [3]Slot{x, y, z}
	allConst := true
	var v [3]float64
	for i := 0; i < n; i++ {
		nd := &b.nodes[args[i]]
		if nd.op != OpConst {
			allConst = false
			break
		}
		v[i] = nd.val()
	}
	if allConst {
		if r := evalOp(op, v[0], v[1], v[2]); finite(r) {
			return b.Const(r)
		}
	}
	if len(b.cse.cells) == 0 { // released by Tape
		b.refillCSE()
	}
	h := cseHash(op, x, y, z)
	s, cell, ok := b.cse.find(b.nodes, h, op, x, y, z)
	if ok {
		return s
	}
	s = Slot(len(b.nodes))
	b.nodes = append(b.nodes, bnode{op: op, args: args, pos: b.pos})
	b.cse.cells[cell] = h>>32<<32 | uint64(uint32(s)+1)
	if b.cse.n++; 2*b.cse.n > len(b.cse.cells) {
		b.cse.grow(b.nodes, b.cse.n)
	}
	return s
}

// refillCSE fills the table of shared operations, which Tape released,
// from the nodes: every operation, the first of equal ones, as add found
// them.
func (b *Builder) refillCSE() {
	b.cse = cseTable{}
	b.cse.grow(nil, len(b.nodes)/2)
	for k := range b.nodes {
		nd := &b.nodes[k]
		if opMetas[nd.op].arity == 0 || nd.op == opLane {
			continue
		}
		h := cseHash(nd.op, nd.args[0], nd.args[1], nd.args[2])
		if _, cell, ok := b.cse.find(b.nodes, h, nd.op, nd.args[0], nd.args[1], nd.args[2]); !ok {
			b.cse.cells[cell] = h>>32<<32 | uint64(uint32(k)+1)
			if b.cse.n++; 2*b.cse.n > len(b.cse.cells) {
				b.cse.grow(b.nodes, b.cse.n)
			}
		}
	}
}

// Tape freezes the computation of the given outputs into a Tape. Nodes
// that no output needs are dropped (inputs are all kept, with their
// numbers). The Builder stays usable: Tape may be called again, and each
// call returns an independent Tape.
func (b *Builder) Tape(outputs ...Slot) *Tape {
	// The table of shared operations is released, for the collector to take
	// back while the tape is made; a Builder used again refills it.
	b.cse = cseTable{}
	nb := len(b.nodes)
	if nb >= gcBeforeTape {
		// The garbage of the build (the table just released, a caller's
		// working set such as the compiler's names' entries) is taken
		// back now, so that the tape, the largest allocation, reuses its
		// memory instead of growing the heap to the collector's next
		// goal: at 10^6 formula lines (3.4 million nodes) the peak RSS of
		// parse and compile fell from 1.42–1.47 to 1.36–1.37 million KB,
		// for a compile / parse ratio of 2.23–2.80 instead of 2.35–2.53
		// (quiet machine, runs alternated).
		runtime.GC()
	}
	live := make([]bool, nb)
	for _, o := range outputs {
		b.checkSlot(o)
		live[o] = true
	}
	for k := nb - 1; k >= 0; k-- {
		if !live[k] {
			continue
		}
		nd := &b.nodes[k]
		if nd.op == opLoop {
			b.markLoop(k, live)
		}
		for i := 0; i < int(opMetas[nd.op].arity); i++ {
			live[nd.args[i]] = true
		}
	}

	idx := make([]int32, nb)
	nIn := len(b.inputs)
	for j, s := range b.inputs {
		idx[s] = int32(j)
	}
	next := int32(nIn)
	for k := range b.nodes {
		if live[k] && b.nodes[k].op == OpConst {
			idx[k] = next
			next++
		}
	}
	start := int(next)
	for k := range b.nodes {
		nd := &b.nodes[k]
		if live[k] && nd.op != OpConst && nd.op != OpInput {
			idx[k] = next
			next++
			if nd.op.Arity() == 3 {
				next++ // opArg
			}
		}
	}
	n := int(next)

	p := &tapeProg{
		nIn:   nIn,
		start: start,
		ops:   make([]Op, n),
		a:     make([]int32, n),
		b:     make([]int32, n),
		pos:   make([]int32, n),
		outs:  make([]int32, len(outputs)),
	}
	vals := make([]float64, n)
	for k := range b.nodes {
		nd := &b.nodes[k]
		if nd.op != OpInput && !live[k] {
			continue
		}
		t := idx[k]
		p.ops[t] = nd.op
		p.pos[t] = nd.pos
		switch ar := nd.op.Arity(); ar {
		case 0:
			p.a[t], p.b[t] = t, t
			if nd.op == OpConst {
				vals[t] = nd.val()
			}
			if nd.op == opLoop {
				p.a[t], p.b[t] = int32(len(p.loops)), int32(len(p.loops))
				p.loops = append(p.loops, b.loops[nd.args[0]].relocate(idx))
			}
		case 1:
			p.a[t] = idx[nd.args[0]]
			p.b[t] = p.a[t]
		default:
			p.a[t] = idx[nd.args[0]]
			p.b[t] = idx[nd.args[1]]
			if ar == 3 {
				c := idx[nd.args[2]]
				p.ops[t+1] = opArg
				p.pos[t+1] = nd.pos
				p.a[t+1], p.b[t+1] = c, c
			}
		}
	}
	for i, o := range outputs {
		p.outs[i] = idx[o]
	}
	p.findDirect()
	p.findSpans()
	return &Tape{p: p, vals: vals, adj: make([]float64, n)}
}

// gcBeforeTape is the number of builder nodes from which Tape runs the
// collector before it allocates the tape: 2^21 (about 600,000 formula
// lines); below it the collection's cost is a larger part of the build
// and the peak far from any limit, and the collector's pacing is left
// alone.
const gcBeforeTape = 1 << 21
