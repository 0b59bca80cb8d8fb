package tape

import "math"

// planExec holds the rows to run a plan over blocks of up to w samples.
type planExec struct {
	pl   *plan
	w    int
	buf  []float64   // constant and temporary rows
	rows [][]float64 // each register's row in the current block
}

// newExec returns the buffers to run pl in blocks of w samples.
func (pl *plan) newExec(w int) *planExec {
	e := &planExec{pl: pl, w: w, rows: make([][]float64, pl.nreg)}
	own := pl.nreg - pl.nIn
	e.buf = make([]float64, own*w)
	for r := pl.nIn; r < pl.nreg; r++ {
		e.rows[r] = e.buf[(r-pl.nIn)*w : (r-pl.nIn+1)*w : (r-pl.nIn+1)*w]
	}
	for j, v := range pl.consts {
		row := e.rows[pl.nIn+j]
		for s := range row {
			row[s] = v
		}
	}
	return e
}

// planWidth returns the block width for a plan of nreg registers: as wide
// as maxBlock while the rows fit the batch budget, never below 1.
func planWidth(nreg int) int {
	w := maxBlock
	for w > 1 && 8*nreg*w > batchBudget {
		w /= 2
	}
	return w
}

// output returns the output row of the last run.
func (e *planExec) output(m int) []float64 { return e.rows[e.pl.out][:m] }

// run evaluates the plan over the first m samples of the block; the input
// rows (rows[0:nIn]) must hold at least m values. It reports whether a
// guard operation saw a non-finite operand; non-finite outputs are for the
// caller to test.
//
// Where the build has vector kernels and the CPU runs them (planrun_simd.go),
// they take the lanes up to the last whole vector and runLanes the rest;
// both compute the same operations in the same order, so that the values
// are the same to the last bit.
func (e *planExec) run(m int) (bad bool) {
	lo := 0
	if vecKernels {
		lo, bad = e.runVec(m)
	}
	if lo < m && e.runLanes(lo, m) {
		bad = true
	}
	return bad
}

// runLanes evaluates the plan over lanes lo..m-1 of the block in pure Go.
func (e *planExec) runLanes(lo, m int) (bad bool) {
	rows := e.rows
	var chk float64 // x - x summed over tested operands: NaN if any is not finite
	for n := range e.pl.code {
		in := &e.pl.code[n]
		o := rows[in.dst][lo:m:m]
		switch in.k {
		case kAddRR:
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			s := 0
			for ; s+4 <= len(o); s += 4 {
				o4, x4, y4 := (*[4]float64)(o[s:]), (*[4]float64)(x[s:]), (*[4]float64)(y[s:])
				o4[0], o4[1], o4[2], o4[3] = x4[0]+y4[0], x4[1]+y4[1], x4[2]+y4[2], x4[3]+y4[3]
			}
			for ; s < len(o); s++ {
				o[s] = x[s] + y[s]
			}
		case kAddRC:
			x, c := rows[in.a][lo:][:len(o)], in.imm
			s := 0
			for ; s+4 <= len(o); s += 4 {
				o4, x4 := (*[4]float64)(o[s:]), (*[4]float64)(x[s:])
				o4[0], o4[1], o4[2], o4[3] = x4[0]+c, x4[1]+c, x4[2]+c, x4[3]+c
			}
			for ; s < len(o); s++ {
				o[s] = x[s] + c
			}
		case kSubRR:
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			s := 0
			for ; s+4 <= len(o); s += 4 {
				o4, x4, y4 := (*[4]float64)(o[s:]), (*[4]float64)(x[s:]), (*[4]float64)(y[s:])
				o4[0], o4[1], o4[2], o4[3] = x4[0]-y4[0], x4[1]-y4[1], x4[2]-y4[2], x4[3]-y4[3]
			}
			for ; s < len(o); s++ {
				o[s] = x[s] - y[s]
			}
		case kSubRC:
			x, c := rows[in.a][lo:][:len(o)], in.imm
			for s := range o {
				o[s] = x[s] - c
			}
		case kSubCR:
			y, c := rows[in.b][lo:][:len(o)], in.imm
			for s := range o {
				o[s] = c - y[s]
			}
		case kMulRR:
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			s := 0
			for ; s+4 <= len(o); s += 4 {
				o4, x4, y4 := (*[4]float64)(o[s:]), (*[4]float64)(x[s:]), (*[4]float64)(y[s:])
				o4[0], o4[1], o4[2], o4[3] = x4[0]*y4[0], x4[1]*y4[1], x4[2]*y4[2], x4[3]*y4[3]
			}
			for ; s < len(o); s++ {
				o[s] = x[s] * y[s]
			}
		case kMulRC:
			x, c := rows[in.a][lo:][:len(o)], in.imm
			s := 0
			for ; s+4 <= len(o); s += 4 {
				o4, x4 := (*[4]float64)(o[s:]), (*[4]float64)(x[s:])
				o4[0], o4[1], o4[2], o4[3] = x4[0]*c, x4[1]*c, x4[2]*c, x4[3]*c
			}
			for ; s < len(o); s++ {
				o[s] = x[s] * c
			}
		case kDivRR:
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			if in.check&2 != 0 {
				for s := range o {
					v := y[s]
					o[s] = x[s] / v
					if v-v != 0 { // a branch, not a running sum: no chain of adds
						bad = true
					}
				}
			} else {
				for s := range o {
					o[s] = x[s] / y[s]
				}
			}
		case kDivRC:
			x, c := rows[in.a][lo:][:len(o)], in.imm
			for s := range o {
				o[s] = x[s] / c
			}
		case kDivCR:
			y, c := rows[in.b][lo:][:len(o)], in.imm
			if in.check&2 != 0 {
				for s := range o {
					v := y[s]
					o[s] = c / v
					if v-v != 0 { // a branch, not a running sum: no chain of adds
						bad = true
					}
				}
			} else {
				for s := range o {
					o[s] = c / y[s]
				}
			}
		case kNeg:
			x := rows[in.a][lo:][:len(o)]
			for s := range o {
				o[s] = -x[s]
			}
		case kSquare:
			x := rows[in.a][lo:][:len(o)]
			for s := range o {
				o[s] = x[s] * x[s]
			}
		case kMax, kMin:
			// Every operand is tested, in the same pass: a constant
			// operand row of a guard operation is finite (see
			// alwaysBad). Operands are read first: o may be one of them.
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			if in.k == kMax {
				for s := range o {
					a, b := x[s], y[s]
					if a-a+(b-b) != 0 { // a branch, not a running sum
						bad = true
					}
					if a >= b {
						o[s] = a
					} else {
						o[s] = b
					}
				}
			} else {
				for s := range o {
					a, b := x[s], y[s]
					if a-a+(b-b) != 0 {
						bad = true
					}
					if a <= b {
						o[s] = a
					} else {
						o[s] = b
					}
				}
			}
		case kCmp:
			x, y := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)]
			chk += testRows(in.check, x, y, nil)
			vecOp(in.op, o, x, y, nil)
		case kIf:
			x, y, z := rows[in.a][lo:][:len(o)], rows[in.b][lo:][:len(o)], rows[in.c][lo:][:len(o)]
			for s := range o {
				c, a, b := x[s], y[s], z[s]
				if c-c+(a-a)+(b-b) != 0 { // every operand, as for kMax
					bad = true
				}
				if c != 0 {
					o[s] = a
				} else {
					o[s] = b
				}
			}
		case kCeil:
			x := rows[in.a][lo:][:len(o)]
			for s := range o {
				o[s] = math.Ceil(x[s])
			}
		case kFloor:
			x := rows[in.a][lo:][:len(o)]
			for s := range o {
				o[s] = math.Floor(x[s])
			}
		case kSelect:
			if runCmpIf(in.op, o, rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:], rows[in.d][lo:], in.check != 0) {
				bad = true
			}
		default:
			if in.k >= kTripleKeep {
				chk += runTripleKeep(in.k, o, rows[in.e][lo:], rows[in.f][lo:], rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:], rows[in.d][lo:])
			} else if in.k >= kPost {
				chk += runPost(in.k, o, rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:], in.check != 0)
			} else if in.k >= kFusedEnd {
				chk += runTriple(in.k, o, rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:], rows[in.d][lo:])
			} else if in.k >= kFused {
				chk += runFused(in.k, o, rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:])
			} else if in.k >= kKeep {
				chk += runKeep(in.k, o, rows[in.d][lo:], rows[in.a][lo:], rows[in.b][lo:], rows[in.c][lo:])
			} else if e.runOp(in, lo, m) {
				bad = true
			}
		}
	}
	return bad || chk != 0
}

// runOp runs an instruction without a kernel of its own in run and tests
// its operands as in.check asks.
func (e *planExec) runOp(in *instr, lo, m int) (bad bool) {
	rows := e.rows
	o := rows[in.dst][lo:m:m]
	xs := rows[in.a][lo:][:len(o)]
	ys := rows[in.b][lo:][:len(o)]
	var zs []float64
	if in.op.Arity() == 3 {
		zs = rows[in.c][lo:][:len(o)]
	}
	// Operands first: the output row may be one of them.
	if in.check&1 != 0 && !allFinite(xs) || in.check&2 != 0 && !allFinite(ys) || in.check&4 != 0 && !allFinite(zs) {
		bad = true
	}
	vecOp(in.op, o, xs, ys, zs)
	return bad
}

// testRows returns the sum of v - v over the rows that check names (1: x,
// 2: y, 4: z): NaN when one of their values is not finite.
func testRows(check uint8, x, y, z []float64) (chk float64) {
	for bit, r := range [3][]float64{x, y, z} {
		if check&(1<<bit) == 0 {
			continue
		}
		var s0, s1 float64
		s := 0
		for ; s+2 <= len(r); s += 2 {
			s0 += r[s] - r[s]
			s1 += r[s+1] - r[s+1]
		}
		for ; s < len(r); s++ {
			s0 += r[s] - r[s]
		}
		chk += s0 + s1
	}
	return chk
}

// VectorKernels reports whether the batched plans run vector kernels: in a
// build with GOEXPERIMENT=simd on amd64, on a CPU with AVX2, unless turned
// off by SetVectorKernels.
func VectorKernels() bool { return vecKernels }

// SetVectorKernels turns the batched plans' vector kernels on or off and
// returns the previous setting; on has no effect in a build or on a CPU
// without them. The values are the same either way, to the last bit: it
// is for benchmarks and tests, and must not be called while a batched pass
// runs.
func SetVectorKernels(on bool) (was bool) {
	was = vecKernels
	vecKernels = on && vecKernelsBuilt
	return was
}
