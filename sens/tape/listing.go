package tape

import (
	"errors"
	"fmt"
	"math"
	"strconv"
)

// A Listing is the part of a tape that one output needs when only some
// inputs move, written out for an evaluator outside Go: the what-if panel
// of the kernel evaluates it in a web page. Everything that does not depend
// on the moving ("free") inputs is folded into constants, with the values
// the tape computes for it at the point the listing was made, so the
// evaluator repeats only the operations between the free inputs and the
// output.
//
// Slots are numbered from 0 in evaluation order. An entry is one slot (an
// input, a constant, an operation) or, for a loop node, as many slots as its
// result has elements. Slots the output does not need are left out, and
// runs of slots a loop node reads stay runs.
type Listing struct {
	// Free lists the tape inputs that move; entry ListInput j reads
	// Free[j]'s value.
	Free []int
	// Entries in evaluation order.
	Entries []Entry
	// Out is the slot of the output.
	Out int
	// Pos lists the source positions (Builder.SetPos) the entries name;
	// Entry.Pos indexes it.
	Pos []int32
}

// EntryKind says what an entry of a listing is.
type EntryKind uint8

const (
	// ListConst is a constant: Val.
	ListConst EntryKind = iota + 1
	// ListInput is free input Arg[0] (an index into Listing.Free).
	ListInput
	// ListOp is operation Op of the slots Arg (one to three).
	ListOp
	// ListLoop is a loop node: Loop says which, Op is a map's operation.
	ListLoop
)

// Entry is one entry of a listing.
type Entry struct {
	Kind EntryKind
	Op   Op
	Val  float64
	Arg  []int32
	// Pos indexes Listing.Pos: where the operation stands in the source.
	Pos int32
	// Loop nodes: the kind ("map", "sum_of", "dot_of", "min_of", "max_of",
	// "gather", "group"), the number of elements (of the result for map, gather and
	// group; of the operand for the reductions), a map's steps (1 for a
	// vector operand, 0 for a broadcast scalar), and the indices of a
	// gather (source element of each result element) or a group (group of
	// each source element, and the first source element of each group).
	Loop  string
	N     int
	Step  []int32
	Idx   []int32
	First []int32
	Width int // slots the entry covers: 1, or a map's, gather's or group's N
}

// ErrListingTooLarge is returned when a listing would hold more slots than
// the limit asked for.
var ErrListingTooLarge = errors.New("tape: listing too large")

// ErrNotListable is returned for a tape with an operation that has no name
// in a listing (ListName), which an evaluator outside Go would not know.
var ErrNotListable = errors.New("tape: operation not listable")

// Listing returns the listing of output i when the inputs free move and the
// others keep their values in x (len NumInputs; the free ones' values in x
// are the point at which nothing else is folded, and are not kept). A
// listing of more than limit slots (limit > 0) is not made:
// ErrListingTooLarge.
func (t *Tape) Listing(x []float64, i int, free []int, limit int) (*Listing, error) {
	p := t.p
	if len(x) != p.nIn {
		return nil, fmt.Errorf("tape: %d inputs given, tape has %d", len(x), p.nIn)
	}
	n := len(p.ops)
	freeAt := make(map[int]int, len(free))
	for j, in := range free {
		if in < 0 || in >= p.nIn {
			return nil, fmt.Errorf("tape: no input %d", in)
		}
		freeAt[in] = j
	}

	// The values at x, by the plain loop, which keeps every node's value.
	c := t.Clone()
	c.loadInputs(x)
	c.run(n)
	vals := c.vals

	// What depends on a free input.
	out := int(p.outs[i])
	top := p.endNode(out)
	dep := make([]bool, n)
	for in := range freeAt {
		dep[in] = true
	}
	for k := p.start; k < top; k++ {
		switch op := p.ops[k]; {
		case op == opLoop:
			d := false
			p.loops[p.a[k]].operands(func(first, m int32) {
				for s := first; s < first+m && !d; s++ {
					d = dep[s]
				}
			})
			for s := k; s < k+p.loopWidth(k); s++ {
				dep[s] = d
			}
		case op == opLane, op == opArg:
		default:
			d := dep[p.a[k]] || dep[p.b[k]]
			if op.Arity() == 3 {
				d = d || dep[p.a[k+1]]
			}
			dep[k] = d
		}
	}

	// What the output needs: a node that depends on no free input is a
	// constant and needs nothing; one that does needs its operands, and a
	// loop node all its lanes and the whole runs it reads.
	live := make([]bool, n)
	live[out] = true
	for k := top - 1; k >= p.start; k-- {
		if !live[k] || !dep[k] {
			continue
		}
		switch op := p.ops[k]; {
		case op == opLane:
			live[p.a[k]] = true
		case op == opLoop:
			for s := k; s < k+p.loopWidth(k); s++ {
				live[s] = true
			}
			p.loops[p.a[k]].operands(func(first, m int32) {
				for s := first; s < first+m; s++ {
					live[s] = true
				}
			})
		case op != opArg:
			live[p.a[k]] = true
			live[p.b[k]] = true
			if op.Arity() == 3 {
				live[p.a[k+1]] = true
			}
		}
	}

	// Number the live slots, opArg nodes aside.
	idx := make([]int32, n)
	m := 0
	for k := range top {
		idx[k] = -1
		if live[k] && p.ops[k] != opArg {
			idx[k] = int32(m)
			m++
		}
	}
	if limit > 0 && m > limit {
		return nil, fmt.Errorf("%w: %d slots, at most %d", ErrListingTooLarge, m, limit)
	}

	for k := p.start; k < top; k++ {
		op := p.ops[k]
		if op == opLoop {
			op = p.loops[p.a[k]].op
		}
		if idx[k] >= 0 && dep[k] && op != opLane && op != 0 && listNames[op] == "" {
			return nil, fmt.Errorf("%w: %s", ErrNotListable, op)
		}
	}

	L := &Listing{Free: append([]int(nil), free...), Out: int(idx[out])}
	posAt := map[int32]int32{}
	pos := func(k int) int32 {
		ps := p.pos[k]
		j, ok := posAt[ps]
		if !ok {
			j = int32(len(L.Pos))
			posAt[ps] = j
			L.Pos = append(L.Pos, ps)
		}
		return j
	}
	constant := func(k int) { L.Entries = append(L.Entries, Entry{Kind: ListConst, Val: vals[k], Width: 1}) }
	for k := 0; k < top; k++ {
		if idx[k] < 0 {
			continue
		}
		op := p.ops[k]
		switch {
		case k < p.nIn:
			if j, ok := freeAt[k]; ok {
				L.Entries = append(L.Entries, Entry{Kind: ListInput, Arg: []int32{int32(j)}, Width: 1})
			} else {
				constant(k)
			}
		case k < p.start || !dep[k] && op != opLoop && op != opLane:
			constant(k)
		case op == opLane:
			if !dep[k] {
				constant(k)
			}
			// A lane of a loop node that depends on a free input is
			// the loop entry's.
		case op == opLoop && !dep[k]:
			constant(k)
		case op == opLoop:
			l := &p.loops[p.a[k]]
			e := Entry{Kind: ListLoop, Op: l.op, N: int(l.n), Pos: pos(k), Width: l.width()}
			switch l.kind {
			case loopMap:
				e.Loop = "map"
				for a := range 3 {
					e.Arg = append(e.Arg, idx[l.arg[a]])
					e.Step = append(e.Step, l.step[a])
				}
			case loopSum, loopMin, loopMax:
				e.Loop = map[loopKind]string{loopSum: "sum_of", loopMin: "min_of", loopMax: "max_of"}[l.kind]
				e.Arg = []int32{idx[l.arg[0]]}
			case loopDot:
				e.Loop = "dot_of"
				e.Arg = []int32{idx[l.arg[0]], idx[l.arg[1]]}
			case loopGather:
				e.Loop = "gather"
				e.Arg = []int32{idx[l.arg[0]]}
				e.Idx = l.idx
			case loopGroup:
				e.Loop = "group"
				e.Arg = []int32{idx[l.arg[0]]}
				e.Idx, e.First = l.idx, l.first
			}
			L.Entries = append(L.Entries, e)
		default:
			e := Entry{Kind: ListOp, Op: op, Pos: pos(k), Width: 1}
			e.Arg = append(e.Arg, idx[p.a[k]])
			if op.Arity() >= 2 {
				e.Arg = append(e.Arg, idx[p.b[k]])
			}
			if op.Arity() == 3 {
				e.Arg = append(e.Arg, idx[p.a[k+1]])
			}
			L.Entries = append(L.Entries, e)
		}
	}
	return L, nil
}

// listNames are the names of the operations in a listing's JSON.
var listNames = [numOps]string{
	OpAdd: "add", OpSub: "sub", OpMul: "mul", OpDiv: "div", OpPow: "pow", OpPowConst: "pow",
	OpSquare: "sq", OpNeg: "neg", OpSqrt: "sqrt", OpExp: "exp", OpLn: "ln", OpLog10: "log10",
	OpAbs: "abs", OpFloor: "floor", OpCeil: "ceil", OpRound: "round", OpSin: "sin", OpCos: "cos",
	OpTan: "tan", OpAsin: "asin", OpAcos: "acos", OpAtan: "atan", OpMin: "min", OpMax: "max",
	OpLt: "lt", OpLe: "le", OpGt: "gt", OpGe: "ge", OpEq: "eq", OpNe: "ne", OpAnd: "and",
	OpOr: "or", OpNot: "not", OpIf: "if", OpGrowth: "growth", OpDiscount: "discount",
	OpAnnuityPV: "annuity_pv", OpAnnuityFV: "annuity_fv", OpRecovery: "recovery",
	OpSinking: "sinking", OpGradientPV: "gradient_pv", OpGradientUniform: "gradient_uniform",
	OpLearn: "learn", OpLearnTotal: "learn_total",
}

// ListName returns the name of op in a listing's JSON ("add", "ln",
// "learn_total"), or "" for an operation a listing never holds.
func ListName(op Op) string {
	if op < numOps {
		return listNames[op]
	}
	return ""
}

// AppendJSON appends the listing's entries as a compact JSON array: a
// constant is a number (or "NaN", "Inf", "-Inf"); an input is ["in", j]; an
// operation is [name, pos, a, b, c] with its one to three operand slots; a
// loop is ["map", pos, op, n, a, sa, b, sb, c, sc], ["sum_of"|"min_of"|"max_of",
// pos, x, n], ["dot_of", pos, x, y, n], ["gather", pos, x, [idx...]] or ["group",
// pos, x, n, [group of each source element...], [first element of each
// group...]].
func (L *Listing) AppendJSON(b []byte) []byte {
	b = append(b, '[')
	for i, e := range L.Entries {
		if i > 0 {
			b = append(b, ',')
		}
		switch e.Kind {
		case ListConst:
			b = appendNum(b, e.Val)
		case ListInput:
			b = append(b, `["in",`...)
			b = strconv.AppendInt(b, int64(e.Arg[0]), 10)
			b = append(b, ']')
		case ListOp:
			b = append(b, `["`...)
			b = append(b, listNames[e.Op]...)
			b = append(b, `",`...)
			b = strconv.AppendInt(b, int64(e.Pos), 10)
			b = appendInts(b, e.Arg)
			b = append(b, ']')
		case ListLoop:
			b = append(b, `["`...)
			b = append(b, e.Loop...)
			b = append(b, `",`...)
			b = strconv.AppendInt(b, int64(e.Pos), 10)
			switch e.Loop {
			case "map":
				b = append(b, `,"`...)
				b = append(b, listNames[e.Op]...)
				b = append(b, `",`...)
				b = strconv.AppendInt(b, int64(e.N), 10)
				for a := range 3 {
					b = appendInts(b, []int32{e.Arg[a], e.Step[a]})
				}
			case "gather":
				b = appendInts(b, e.Arg)
				b = append(b, ',')
				b = appendList(b, e.Idx)
			case "group":
				b = appendInts(b, e.Arg)
				b = append(b, ',')
				b = strconv.AppendInt(b, int64(e.N), 10)
				b = append(b, ',')
				b = appendList(b, e.Idx)
				b = append(b, ',')
				b = appendList(b, e.First)
			default:
				b = appendInts(b, e.Arg)
				b = append(b, ',')
				b = strconv.AppendInt(b, int64(e.N), 10)
			}
			b = append(b, ']')
		}
	}
	return append(b, ']')
}

// appendNum appends x as a JSON number that reads back to the same bits, or
// as a string for NaN and ±Inf.
func appendNum(b []byte, x float64) []byte {
	switch {
	case math.IsNaN(x):
		return append(b, `"NaN"`...)
	case math.IsInf(x, 1):
		return append(b, `"Inf"`...)
	case math.IsInf(x, -1):
		return append(b, `"-Inf"`...)
	}
	return strconv.AppendFloat(b, x, 'g', -1, 64)
}

// appendInts appends ",a,b,..." for each of xs.
func appendInts(b []byte, xs []int32) []byte {
	for _, x := range xs {
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(x), 10)
	}
	return b
}

// appendList appends xs as a JSON array.
func appendList(b []byte, xs []int32) []byte {
	b = append(b, '[')
	for i, x := range xs {
		if i > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendInt(b, int64(x), 10)
	}
	return append(b, ']')
}
