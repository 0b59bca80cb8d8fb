package tape

//go:generate go run genfused.go

import "math"

// A plan is the batched evaluator's program for one output of a tape: an
// instruction array holding only the nodes that output needs (or, for a
// cone, only the nodes that some inputs reach), over registers that are
// rows of a block of samples.
//
// Registers [0, nIn) hold the plan's inputs (read in place from the
// caller's columns), [nIn, nIn+len(consts)) constant rows, and the rest
// temporaries. A temporary's register is free again after the last
// instruction that reads it, so a plan needs about as many rows as values
// are alive at once, not one a node: the batched passes work for a tape of
// any size. An operand that is a constant sits in the instruction itself
// where the operation has a kernel for it (x + c, c - x, x * c, x / c,
// c / x).
//
// Each instruction runs over a whole block of samples in an unrolled lane
// loop; the finite tests of guard operations are folded into the loops
// that need them (see run). The values computed are those of the tape's
// scalar pass to the last bit: the same operations on the same operands in
// the same order.
type plan struct {
	code   []instr
	nIn    int       // input registers
	inputs []int32   // the tape input each input register holds
	consts []float64 // constant rows, registers nIn, nIn+1, ...
	nreg   int       // registers in all
	out    int32     // register of the output
	// alwaysBad is set when a guard operation of the plan has a non-finite
	// constant operand (a cone's base value in a branch not taken): every
	// block is then checked by the reference pass.
	alwaysBad bool
	// kept is the register of each node of planSrc.keep, whose value
	// stays in it to the end of a run.
	kept []int32
}

// kind is a plan instruction's kernel.
type kind uint16

const (
	kOp     kind = iota // any operation, by vecOp or its own loop
	kAddRR              // a + b
	kAddRC              // a + imm
	kSubRR              // a - b
	kSubRC              // a - imm
	kSubCR              // imm - b
	kMulRR              // a * b
	kMulRC              // a * imm
	kDivRR              // a / b
	kDivRC              // a / imm
	kDivCR              // imm / b
	kNeg                // -a
	kSquare             // a * a
	kMax                // max(a, b)
	kMin                // min(a, b)
	kCmp                // a comparison of a and b (in.op)
	kIf                 // if(a, b, c)
	kCeil               // ceil(a)
	kFloor              // floor(a)
	kSelect             // if(a op b, c, d): a comparison read only by the if after it

	// kKeep and on: fused pairs of + - * / that keep their first result
	// in row d (it has other uses), in the order of fusedKind.
	kKeep kind = 32

	// kPost and on: a + - * / with one use and the ceil, floor,
	// negation, max or min of its result after it (see runPost), above
	// every kind of the scalar code.
	kPost kind = 1024

	// kTripleKeep and on: triples (in the order of tripleKind) that also
	// write t1 to row e and t2 to row f, where they have other uses.
	kTripleKeep kind = 2048

	// kFused and on: fused pairs of + - * / (fused_gen.go), after every Op
	// so that the scalar code can use an Op as its own kind.
	kFused kind = 64
)

// instr is one plan instruction: dst = op(a, b, c) over a block.
type instr struct {
	k          kind
	op         Op
	check      uint8 // operands to test for non-finite values: bits 1 (a), 2 (b), 4 (c)
	dst        int32
	a, b, c, d int32 // d: a triple's fourth operand
	e, f       int32 // kTripleKeep: the rows of t1 and t2
	imm        float64
}

// planSrc says how to build a plan: which nodes it computes and where
// every other operand comes from.
type planSrc struct {
	nodes  []int32 // operation nodes to compute, in tape order (no opArg)
	inputs []int32 // tape inputs that are registers, in register order
	// value returns the value of an operand that is neither computed nor
	// an input register: a tape constant, or a base value in a cone.
	value func(k int32) float64
	// keep lists computed nodes whose registers are never reused, so
	// that their values are there after a run (radial.go); none is fused
	// into the instruction that reads it.
	keep []int32
}

// newPlan compiles src for output node out. scratch holds three int32 a
// tape node, all -1, and is left so.
func (t *Tape) newPlan(src planSrc, out int32, scratch []int32) *plan {
	p := t.p
	nn := len(p.ops)
	lastUse, count := scratch[nn:2*nn], scratch[2*nn:3*nn]
	scratch = scratch[:nn]
	pl := &plan{nIn: len(src.inputs), inputs: src.inputs}
	reg := scratch // node -> register while building; -1 otherwise
	var touched []int32
	set := func(k, r int32) {
		if reg[k] < 0 {
			touched = append(touched, k)
		}
		reg[k] = r
	}
	for r, k := range src.inputs {
		set(k, int32(r))
	}
	// Last use of each node, as an instruction index (last[k], set for
	// the nodes in touched); the output is never freed.
	last := lastUse
	uses := func(n int, k int32) {
		if reg[k] == -1 && last[k] == -1 && count[k] == -1 {
			touched = append(touched, k)
		}
		last[k] = int32(n)
		count[k]++ // from -1: 0 is one use
	}
	for _, k := range src.nodes {
		set(k, -2) // computed: a register is given below
	}
	nodes := planOrder(p, src.nodes, out, reg)
	for n, k := range nodes {
		uses(n, p.a[k])
		uses(n, p.b[k])
		if p.ops[k].Arity() == 3 {
			uses(n, p.a[k+1])
		}
	}
	if reg[out] == -1 && last[out] == -1 && count[out] == -1 {
		touched = append(touched, out)
	}
	last[out] = math.MaxInt32
	count[out] = 1 // an output is never fused away
	for _, k := range src.keep {
		if reg[k] == -1 && last[k] == -1 && count[k] == -1 {
			touched = append(touched, k)
		}
		last[k] = math.MaxInt32
		count[k] = max(count[k], 1)
	}
	isReg := func(k int32) bool { return reg[k] != -1 }

	// Constant rows, shared by value.
	var constReg map[uint64]int32
	operand := func(k int32) int32 {
		if isReg(k) {
			return reg[k]
		}
		v := src.value(k)
		bits := math.Float64bits(v)
		r, ok := constReg[bits]
		if !ok {
			if constReg == nil {
				constReg = map[uint64]int32{}
			}
			r = int32(-3 - len(pl.consts)) // numbered below, once nIn is known
			constReg[bits] = r
			pl.consts = append(pl.consts, v)
		}
		return r
	}
	var free []int32
	next := int32(0) // temporaries, numbered from 0 and shifted below
	alloc := func() int32 {
		if n := len(free); n > 0 {
			r := free[n-1]
			free = free[:n-1]
			return r
		}
		r := next
		next++
		return -1000000 - r // marked as a temporary until the shift
	}
	release := func(n int, k int32) {
		if reg[k] <= -1000000 && last[k] == int32(n) {
			free = append(free, reg[k])
			last[k] = -1 // an operand used twice is freed once
		}
	}
	arith := func(op Op) bool { return op == OpAdd || op == OpSub || op == OpMul || op == OpDiv }
	pl.code = make([]instr, 0, len(nodes))
	junk := int32(-1) // a row that kTripleKeep writes values nothing reads to
	skip := 0
	for n, k := range nodes {
		if skip > 0 {
			skip--
			continue
		}
		op := p.ops[k]
		// Three + - * / where the first two have one use each, in the
		// next instructions, as a chain or a tree (see triple), run as
		// one instruction.
		if n+2 < len(nodes) && arith(op) {
			k1, k2 := nodes[n+1], nodes[n+2]
			if sh, c, d, ok := planTriple(p, k, k1, k2); ok {
				a, b := p.a[k], p.b[k]
				in := instr{k: tripleKind(op, p.ops[k1], p.ops[k2], sh), op: p.ops[k2],
					a: operand(a), b: operand(b), c: operand(c), d: operand(d)}
				for _, v := range []int32{a, b, c, d} {
					if !isReg(v) && !finite(src.value(v)) {
						pl.alwaysBad = true
					}
				}
				release(n, a)
				release(n, b)
				if sh >= shapeTL {
					release(n+1, c)
					release(n+1, d)
				} else {
					release(n+1, c)
					release(n+2, d)
				}
				if keep1, keep2 := count[k] > 0, count[k1] > 0; keep1 || keep2 {
					// t1 or t2 has other uses: kept in rows of their own,
					// and the other, if any, written to the junk row.
					in.k = kTripleKeep + (in.k - kFusedEnd)
					if junk == -1 {
						junk = alloc()
					}
					in.e, in.f = junk, junk
					if keep1 {
						reg[k] = alloc()
						in.e = reg[k]
					}
					if keep2 {
						reg[k1] = alloc()
						in.f = reg[k1]
					}
				}
				r := alloc()
				reg[k2] = r
				in.dst = r
				pl.code = append(pl.code, in)
				skip = 2
				continue
			}
		}
		// A comparison whose one use is the condition of the if after
		// it runs with it. Its operands are tested, and the branches
		// when one of them is computed (a constant operand row is
		// finite: see alwaysBad).
		if n+1 < len(nodes) && cmpIndex(op) >= 0 && count[k] == 0 {
			if k2 := nodes[n+1]; p.ops[k2] == OpIf && p.a[k2] == k && p.b[k2] != k && p.a[k2+1] != k {
				a, b, c, d := p.a[k], p.b[k], p.b[k2], p.a[k2+1]
				in := instr{k: kSelect, op: op, a: operand(a), b: operand(b), c: operand(c), d: operand(d)}
				if isReg(c) || isReg(d) {
					in.check = 4 // the branches need testing too
				}
				for _, v := range []int32{a, b, c, d} {
					if !isReg(v) && !finite(src.value(v)) {
						pl.alwaysBad = true
					}
				}
				release(n, a)
				release(n, b)
				release(n+1, c)
				release(n+1, d)
				r := alloc()
				reg[k2] = r
				in.dst = r
				pl.code = append(pl.code, in)
				skip = 1
				continue
			}
		}
		// A + - * / with one use, by a ceil, floor, negation, max or min
		// after it, runs with it (kPost).
		if n+1 < len(nodes) && arith(op) && count[k] <= 1 {
			k2 := nodes[n+1]
			op2 := p.ops[k2]
			form := -1
			// A unary operation's b is its a: its operand's one use
			// counts twice.
			if count[k] == 1 && (op2.Arity() != 1 || p.b[k2] != k) {
				op2 = opArg // no form
			}
			z := p.a[k2]
			switch {
			case op2 == OpCeil && p.a[k2] == k:
				form = 0
			case op2 == OpFloor && p.a[k2] == k:
				form = 1
			case op2 == OpNeg && p.a[k2] == k:
				form = 2
			case (op2 == OpMax || op2 == OpMin) && (p.a[k2] == k) != (p.b[k2] == k):
				form = 3
				if p.a[k2] == k {
					z = p.b[k2]
				} else {
					form++
				}
				if op2 == OpMin {
					form += 2
				}
			}
			if form >= 0 {
				a, b := p.a[k], p.b[k]
				if form <= 2 {
					z = a // unused: any row
				}
				in := instr{k: kPost + kind(fusedIndex(op)*8+form), op: op2, a: operand(a), b: operand(b), c: operand(z)}
				if form >= 3 && isReg(z) {
					in.check = 4 // max or min's other operand is computed: tested too
				}
				for _, v := range []int32{a, b, z} {
					if !isReg(v) && !finite(src.value(v)) {
						pl.alwaysBad = true
					}
				}
				release(n, a)
				release(n, b)
				release(n+1, z)
				r := alloc()
				reg[k2] = r
				in.dst = r
				pl.code = append(pl.code, in)
				skip = 1
				continue
			}
		}
		// A + - * / read by the next instruction, another of them, runs
		// with it as one fused instruction, which also writes its value
		// to a row of its own when it has other uses (kKeep).
		if n+1 < len(nodes) && arith(op) {
			k2 := nodes[n+1]
			if op2 := p.ops[k2]; arith(op2) && (p.a[k2] == k) != (p.b[k2] == k) {
				a, b := p.a[k], p.b[k]
				left := p.a[k2] == k
				c := p.a[k2]
				if left {
					c = p.b[k2]
				}
				in := instr{k: fusedKind(op, op2, left), op: op2, a: operand(a), b: operand(b), c: operand(c)}
				for _, d := range []int32{b, c} {
					if !isReg(d) && !finite(src.value(d)) {
						pl.alwaysBad = true
					}
				}
				release(n, a)
				if b != a {
					release(n, b)
				}
				release(n+1, c)
				if count[k] > 0 {
					in.k = kKeep + (in.k - kFused)
					reg[k] = alloc()
					in.d = reg[k]
				}
				r := alloc()
				reg[k2] = r
				in.dst = r
				pl.code = append(pl.code, in)
				skip = 1
				continue
			}
		}
		a, b := p.a[k], p.b[k]
		in := instr{k: kOp, op: op}
		ar := op.Arity()
		constA, constB := !isReg(a), !isReg(b)
		switch {
		case (op == OpAdd || op == OpMul) && constA && !constB:
			// x + c and c + x are the same sum to the last bit, and so
			// are the products.
			in.a, in.imm = operand(b), src.value(a)
			in.k = kAddRC
			if op == OpMul {
				in.k = kMulRC
			}
		case (op == OpAdd || op == OpSub || op == OpMul || op == OpDiv) && constB && !constA:
			in.a, in.imm = operand(a), src.value(b)
			switch op {
			case OpAdd:
				in.k = kAddRC
			case OpSub:
				in.k = kSubRC
			case OpMul:
				in.k = kMulRC
			case OpDiv:
				in.k = kDivRC
			}
		case (op == OpSub || op == OpDiv) && constA && !constB:
			in.b, in.imm = operand(b), src.value(a)
			in.k = kSubCR
			if op == OpDiv {
				in.k = kDivCR
			}
		default:
			in.a = operand(a)
			if ar >= 2 {
				in.b = operand(b)
			} else {
				in.b = in.a
			}
			if ar == 3 {
				in.c = operand(p.a[k+1])
			}
			if !constA && !constB {
				switch op {
				case OpAdd:
					in.k = kAddRR
				case OpSub:
					in.k = kSubRR
				case OpMul:
					in.k = kMulRR
				case OpDiv:
					in.k = kDivRR
				case OpNeg:
					in.k = kNeg
				case OpSquare:
					in.k = kSquare
				}
			}
			switch op {
			case OpMax:
				in.k = kMax
			case OpMin:
				in.k = kMin
			case OpLt, OpLe, OpGt, OpGe, OpEq, OpNe:
				in.k = kCmp
			case OpIf:
				in.k = kIf
			case OpCeil:
				in.k = kCeil
			case OpFloor:
				in.k = kFloor
			}
		}
		if opMetas[op].guard {
			// Test the operands that are computed; a constant operand
			// that is not finite (a cone's base value in a branch not
			// taken) sends every block to the reference pass.
			test := func(k int32, bit uint8) {
				if isReg(k) {
					in.check |= bit
				} else if v := src.value(k); !finite(v) {
					pl.alwaysBad = true
				}
			}
			test(a, 1)
			if ar >= 2 { // x^c: an infinite c too, as Eval
				test(b, 2)
			}
			if ar == 3 {
				test(p.a[k+1], 4)
			}
		}
		release(n, a)
		if b != a {
			release(n, b)
		}
		if ar == 3 {
			if c := p.a[k+1]; c != a && c != b {
				release(n, c)
			}
		}
		r := alloc()
		reg[k] = r
		in.dst = r
		pl.code = append(pl.code, in)
	}
	var outReg int32
	if isReg(out) {
		outReg = reg[out]
	} else {
		outReg = operand(out)
	}
	// Number the registers: inputs, constants, temporaries.
	nConst := int32(len(pl.consts))
	base := int32(pl.nIn) + nConst
	fix := func(r int32) int32 {
		switch {
		case r <= -1000000:
			return base + (-1000000 - r)
		case r <= -3:
			return int32(pl.nIn) + (-3 - r)
		}
		return r
	}
	for n := range pl.code {
		in := &pl.code[n]
		in.dst, in.a, in.b, in.c, in.d = fix(in.dst), fix(in.a), fix(in.b), fix(in.c), fix(in.d)
		in.e, in.f = fix(in.e), fix(in.f)
	}
	pl.out = fix(outReg)
	pl.nreg = int(base + next)
	if len(src.keep) > 0 {
		pl.kept = make([]int32, len(src.keep))
		for n, k := range src.keep {
			pl.kept[n] = fix(reg[k])
		}
	}
	for _, k := range touched {
		reg[k], last[k], count[k] = -1, -1, -1
	}
	return pl
}

// planTriple reports whether plan nodes k0, k1, k2 (consecutive in the
// plan) are + - * / forming a triple, as the scalar code's triple: k1
// reads k0, k2 reads k1 and not k0 (a chain), or k2 reads both (a tree),
// each on one side only. k0 and k1 may have other uses (see kTripleKeep).
// It returns the shape and the third and fourth operands.
func planTriple(p *tapeProg, k0, k1, k2 int32) (shape int, c, d int32, ok bool) {
	arith := func(op Op) bool { return op == OpAdd || op == OpSub || op == OpMul || op == OpDiv }
	if !arith(p.ops[k0]) || !arith(p.ops[k1]) || !arith(p.ops[k2]) {
		return 0, 0, 0, false
	}
	a1, b1, a2, b2 := p.a[k1], p.b[k1], p.a[k2], p.b[k2]
	other := func(x, y, self int32) int32 {
		if x == self {
			return y
		}
		return x
	}
	switch {
	case (a1 == k0) != (b1 == k0) && (a2 == k1) != (b2 == k1) && a2 != k0 && b2 != k0:
		shape = shapeLL
		if b1 == k0 {
			shape = shapeRL
		}
		if b2 == k1 {
			shape++ // LR or RR
		}
		return shape, other(a1, b1, k0), other(a2, b2, k1), true
	case a1 != k0 && b1 != k0 && (a2 == k0 && b2 == k1 || a2 == k1 && b2 == k0):
		shape = shapeTL
		if a2 == k1 {
			shape = shapeTR
		}
		return shape, a1, b1, true
	}
	return 0, 0, 0, false
}

// planOrder returns the nodes to compute (marked -2 in reg, and left so)
// in an order where an operation's operands are computed just before it
// where they can be: depth first from the output, operands before the
// operation, then any node the output does not read, so that a value with
// one use is next to its use and fuses with it (see newPlan). Any order
// with operands first computes the same values: each node is the same
// operation on the same operands.
func planOrder(p *tapeProg, nodes []int32, out int32, reg []int32) []int32 {
	const pending, visiting = -2, -4
	order := make([]int32, 0, len(nodes))
	type frame struct {
		k int32
		i int
	}
	var stack []frame
	var kids [3]int32
	children := func(k int32) []int32 {
		n := p.ops[k].Arity()
		kids[0], kids[1] = p.a[k], p.b[k]
		if n == 3 {
			// An if's condition last, next to the if (see kSelect).
			kids[0], kids[1], kids[2] = p.b[k], p.a[k+1], p.a[k]
		}
		if n == 2 && ready(p, reg, kids[0]) && !ready(p, reg, kids[1]) {
			// A computed operand of its own ready goes last, next to
			// its use: the other's subtree comes first.
			kids[0], kids[1] = kids[1], kids[0]
		}
		return kids[:n]
	}
	visit := func(root int32) {
		if reg[root] != pending {
			return
		}
		reg[root] = visiting
		stack = append(stack[:0], frame{k: root})
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			ks := children(f.k)
			if f.i < len(ks) {
				c := ks[f.i]
				f.i++
				if reg[c] == pending {
					reg[c] = visiting
					stack = append(stack, frame{k: c})
				}
				continue
			}
			order = append(order, f.k)
			stack = stack[:len(stack)-1]
		}
	}
	visit(out)
	for _, k := range nodes {
		visit(k)
	}
	for _, k := range order {
		reg[k] = pending
	}
	return order
}

// ready reports whether k is a node to compute whose computed operands
// are all visited already (a leaf of what is left).
func ready(p *tapeProg, reg []int32, k int32) bool {
	if reg[k] != -2 {
		return false
	}
	n := p.ops[k].Arity()
	if reg[p.a[k]] == -2 || n >= 2 && reg[p.b[k]] == -2 || n == 3 && reg[p.a[k+1]] == -2 {
		return false
	}
	return true
}
