package tape

import (
	"sort"
	"sync"
)

// The scalar pass's code: the tape's operations as an instruction array in
// evaluation order, built on first use and shared by every clone, in which
// a + - * / whose one use is the next node, another of them, runs with it
// as one fused instruction (both nodes' values are still written, for the
// reverse pass). runCode (fused_gen.go) runs it.

// sinstr is an instruction of the scalar code: node n = k(a, b, c), or, for
// a fused kind, node n = a op1 b and node n+1 = n op2 c (or c op2 n).
type sinstr struct {
	k                kind // an Op as a kind, or a fused kind
	n                uint32
	a, b, c, d, e, f uint32 // unsigned: a load of one folds its address (MOVL idx)
}

// scalarCode is a program's scalar code, built once.
type scalarCode struct {
	once sync.Once
	code []sinstr
	ends []int32 // ends[i]: the instructions output i needs are code[:ends[i]]
}

// scode returns the scalar code of every node (i < 0), or of the nodes up
// to output i's.
func (p *tapeProg) scode(i int) []sinstr {
	p.sc.once.Do(func() {
		p.sc.code = p.buildCode()
		p.sc.ends = make([]int32, len(p.outs))
		code := p.sc.code
		for o := range p.outs {
			e := int32(p.end(o))
			// The code is in node order: the first instruction at or past
			// the output's end.
			p.sc.ends[o] = int32(sort.Search(len(code), func(j int) bool { return code[j].n >= uint32(e) }))
		}
	})
	if i < 0 {
		return p.sc.code
	}
	return p.sc.code[:p.sc.ends[i]]
}

func (p *tapeProg) buildCode() []sinstr {
	n := len(p.ops)
	// Uses of each node: as an operand, and as an output.
	uses := make([]uint8, n)
	use := func(k int32) {
		if uses[k] < 2 {
			uses[k]++
		}
	}
	for k := p.start; k < n; k++ {
		if p.ops[k] == opArg {
			use(p.a[k])
			continue
		}
		use(p.a[k])
		if p.ops[k].Arity() >= 2 && p.b[k] != p.a[k] {
			use(p.b[k])
		}
	}
	isOut := make([]bool, n)
	for _, o := range p.outs {
		uses[o] = 2
		isOut[o] = true
	}
	arith := func(op Op) bool { return op == OpAdd || op == OpSub || op == OpMul || op == OpDiv }
	code := make([]sinstr, 0, n-p.start)
	for k := p.start; k < n; k++ {
		op := p.ops[k]
		if op == opArg {
			continue
		}
		k32 := int32(k)
		if in, ok := p.triple(k, uses, arith); ok {
			code = append(code, in)
			k += 2
			continue
		}
		if arith(op) && uses[k] == 1 && k+1 < n {
			if op2 := p.ops[k+1]; arith(op2) && (p.a[k+1] == k32) != (p.b[k+1] == k32) {
				left := p.a[k+1] == k32
				c := p.a[k+1]
				if left {
					c = p.b[k+1]
				}
				code = append(code, sinstr{k: fusedKind(op, op2, left), n: uint32(k), a: uint32(p.a[k]), b: uint32(p.b[k]), c: uint32(c)})
				k++
				continue
			}
		}
		if j := cmpIndex(op); j >= 0 && k+2 < n && !isOut[k] && p.ops[k+1] == OpIf &&
			p.a[k+1] == k32 && p.b[k+1] != k32 && p.a[k+2] != k32 {
			// A comparison and the if whose condition it is.
			code = append(code, sinstr{k: kCmpIf + kind(j), n: uint32(k), a: uint32(p.a[k]), b: uint32(p.b[k]),
				c: uint32(p.b[k+1]), d: uint32(p.a[k+2])})
			k++ // the if; its opArg is skipped below
			continue
		}
		if arith(op) && k+1 < n && arith(p.ops[k+1]) && !isOut[k] {
			// A sequence: node k+1 reads node k from memory, if at all.
			// It stops at an output, where an output's code ends.
			in := sinstr{n: uint32(k), a: uint32(p.a[k]), b: uint32(p.b[k]), c: uint32(p.a[k+1]), d: uint32(p.b[k+1])}
			if k+2 < n && arith(p.ops[k+2]) && !isOut[k+1] {
				in.e, in.f = uint32(p.a[k+2]), uint32(p.b[k+2])
				in.k = seqKind(op, p.ops[k+1], p.ops[k+2])
				code = append(code, in)
				k += 2
				continue
			}
			in.k = seqKind(op, p.ops[k+1])
			code = append(code, in)
			k++
			continue
		}
		in := sinstr{k: kind(op), n: uint32(k), a: uint32(p.a[k]), b: uint32(p.b[k])}
		if op.Arity() == 3 {
			in.c = uint32(p.a[k+1])
		}
		code = append(code, in)
	}
	return code
}

// triple returns the fused instruction of nodes k, k+1 and k+2 when all
// three are + - * /, k and k+1 have one use each, and they form a chain
// (k+1 reads k, k+2 reads k+1) or a tree (k+2 reads k and k+1), each read
// on one side only.
func (p *tapeProg) triple(k int, uses []uint8, arith func(Op) bool) (sinstr, bool) {
	if k+2 >= len(p.ops) || uses[k] != 1 || uses[k+1] != 1 ||
		!arith(p.ops[k]) || !arith(p.ops[k+1]) || !arith(p.ops[k+2]) {
		return sinstr{}, false
	}
	k0, k1 := int32(k), int32(k+1)
	a1, b1, a2, b2 := p.a[k+1], p.b[k+1], p.a[k+2], p.b[k+2]
	in := sinstr{n: uint32(k), a: uint32(p.a[k]), b: uint32(p.b[k])}
	shape := -1
	other := func(x, y, self int32) int32 { // the operand that is not self
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
		in.c, in.d = uint32(other(a1, b1, k0)), uint32(other(a2, b2, k1))
	case a1 != k0 && b1 != k0 && (a2 == k0 && b2 == k1 || a2 == k1 && b2 == k0):
		shape = shapeTL
		if a2 == k1 {
			shape = shapeTR
		}
		in.c, in.d = uint32(a1), uint32(b1)
	default:
		return sinstr{}, false
	}
	in.k = tripleKind(p.ops[k], p.ops[k+1], p.ops[k+2], shape)
	return in, true
}

// CodeBytes returns the memory of the compiled forms of the tape, shared by
// its clones: the scalar code, the long tape's reverse kinds and the batched
// plans built so far.
func (t *Tape) CodeBytes() int {
	p := t.p
	b := 32*len(p.sc.code) + len(p.rc.kinds) // the reverse pass's kinds of a long tape, a byte a node
	p.cache.mu.Lock()
	for _, pl := range p.cache.plans {
		b += 40*len(pl.code) + 8*len(pl.consts) + 4*len(pl.inputs)
	}
	p.cache.mu.Unlock()
	return b
}
