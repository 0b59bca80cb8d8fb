//go:build goexperiment.simd && amd64

package tape

import "simd/archsimd"

// Vector kernels of the batched plans, built with GOEXPERIMENT=simd: each
// plan instruction runs over four lanes at a time in AVX registers
// (archsimd.Float64x4). They compute the operations of the pure-Go
// kernels (runLanes) in the same order, without fused multiply-adds, so
// that every lane's value is the same to the last bit; the finite tests of
// guard operations add v - v into a vector of check sums, NaN where a
// tested value is not finite, as runLanes adds them into one.

// vecKernels reports whether run uses the vector kernels: when the CPU has
// AVX2 (the masked merges of max, min and if are AVX2 instructions).
var vecKernels = vecKernelsBuilt

// vecKernelsBuilt reports whether the build has vector kernels that the
// CPU runs.
var vecKernelsBuilt = archsimd.X86.AVX2()

type v4 = archsimd.Float64x4

func ld(s []float64) v4 { return archsimd.LoadFloat64x4((*[4]float64)(s)) }

func st(v v4, s []float64) { v.Store((*[4]float64)(s)) }

// runVec runs the plan over the block's lanes up to the last multiple of
// four below m and returns that count. The upper halves of the vector
// registers are cleared before any call into scalar code (kOp's
// functions) and before returning: scalar SSE code after dirty upper
// halves runs many times slower.
func (e *planExec) runVec(m int) (lanes int, bad bool) {
	n := m &^ 3
	if n == 0 {
		return 0, false
	}
	rows := e.rows
	var chk v4 // v - v over tested values, lane by lane
	one := archsimd.BroadcastFloat64x4(1)
	zero := archsimd.BroadcastFloat64x4(0)
	for i := range e.pl.code {
		in := &e.pl.code[i]
		o := rows[in.dst][:n:n]
		switch in.k {
		case kAddRR:
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Add(ld(y[s:s+4])), o[s:s+4])
			}
		case kAddRC:
			x, c := rows[in.a][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Add(c), o[s:s+4])
			}
		case kSubRR:
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Sub(ld(y[s:s+4])), o[s:s+4])
			}
		case kSubRC:
			x, c := rows[in.a][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Sub(c), o[s:s+4])
			}
		case kSubCR:
			y, c := rows[in.b][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			for s := 0; s+4 <= len(o); s += 4 {
				st(c.Sub(ld(y[s:s+4])), o[s:s+4])
			}
		case kMulRR:
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Mul(ld(y[s:s+4])), o[s:s+4])
			}
		case kMulRC:
			x, c := rows[in.a][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Mul(c), o[s:s+4])
			}
		case kDivRR:
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			if in.check&2 != 0 {
				for s := 0; s+4 <= len(o); s += 4 {
					d := ld(y[s : s+4])
					st(ld(x[s:s+4]).Div(d), o[s:s+4])
					chk = chk.Add(d.Sub(d))
				}
			} else {
				for s := 0; s+4 <= len(o); s += 4 {
					st(ld(x[s:s+4]).Div(ld(y[s:s+4])), o[s:s+4])
				}
			}
		case kDivRC:
			x, c := rows[in.a][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Div(c), o[s:s+4])
			}
		case kDivCR:
			y, c := rows[in.b][:len(o)], archsimd.BroadcastFloat64x4(in.imm)
			if in.check&2 != 0 {
				for s := 0; s+4 <= len(o); s += 4 {
					d := ld(y[s : s+4])
					st(c.Div(d), o[s:s+4])
					chk = chk.Add(d.Sub(d))
				}
			} else {
				for s := 0; s+4 <= len(o); s += 4 {
					st(c.Div(ld(y[s:s+4])), o[s:s+4])
				}
			}
		case kNeg:
			// -x is x times -1 to the last bit, the sign of zeros too.
			x, c := rows[in.a][:len(o)], archsimd.BroadcastFloat64x4(-1)
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Mul(c), o[s:s+4])
			}
		case kSquare:
			x := rows[in.a][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				v := ld(x[s : s+4])
				st(v.Mul(v), o[s:s+4])
			}
		case kMax, kMin:
			// a >= b ? a : b (a <= b ? a : b), as the scalar pass: not
			// VMAXPD, which returns b for equal zeros of either sign.
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				a, b := ld(x[s:s+4]), ld(y[s:s+4])
				if in.check&1 != 0 {
					chk = chk.Add(a.Sub(a))
				}
				if in.check&2 != 0 {
					chk = chk.Add(b.Sub(b))
				}
				if in.k == kMax {
					st(a.Merge(b, a.GreaterEqual(b)), o[s:s+4])
				} else {
					st(a.Merge(b, a.LessEqual(b)), o[s:s+4])
				}
			}
		case kCmp:
			x, y := rows[in.a][:len(o)], rows[in.b][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				a, b := ld(x[s:s+4]), ld(y[s:s+4])
				if in.check&1 != 0 {
					chk = chk.Add(a.Sub(a))
				}
				if in.check&2 != 0 {
					chk = chk.Add(b.Sub(b))
				}
				var c archsimd.Mask64x4
				switch in.op {
				case OpLt:
					c = a.Less(b)
				case OpLe:
					c = a.LessEqual(b)
				case OpGt:
					c = a.Greater(b)
				case OpGe:
					c = a.GreaterEqual(b)
				case OpEq:
					c = a.Equal(b)
				default:
					c = a.NotEqual(b)
				}
				st(one.Masked(c), o[s:s+4])
			}
		case kIf:
			x, y, z := rows[in.a][:len(o)], rows[in.b][:len(o)], rows[in.c][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				c, a, b := ld(x[s:s+4]), ld(y[s:s+4]), ld(z[s:s+4])
				if in.check&1 != 0 {
					chk = chk.Add(c.Sub(c))
				}
				if in.check&2 != 0 {
					chk = chk.Add(a.Sub(a))
				}
				if in.check&4 != 0 {
					chk = chk.Add(b.Sub(b))
				}
				st(a.Merge(b, c.NotEqual(zero)), o[s:s+4])
			}
		case kCeil:
			x := rows[in.a][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Ceil(), o[s:s+4])
			}
		case kFloor:
			x := rows[in.a][:len(o)]
			for s := 0; s+4 <= len(o); s += 4 {
				st(ld(x[s:s+4]).Floor(), o[s:s+4])
			}
		case kSelect:
			chk = runCmpIfVec(in.op, o, rows[in.a], rows[in.b], rows[in.c], rows[in.d], chk)
		default:
			if in.k >= kTripleKeep {
				chk = runTripleKeepVec(in.k, o, rows[in.e], rows[in.f], rows[in.a], rows[in.b], rows[in.c], rows[in.d], chk)
			} else if in.k >= kPost {
				chk = runPostVec(in.k, o, rows[in.a], rows[in.b], rows[in.c], chk)
			} else if in.k >= kFusedEnd {
				chk = runTripleVec(in.k, o, rows[in.a], rows[in.b], rows[in.c], rows[in.d], chk)
			} else if in.k >= kFused {
				chk = runFusedVec(in.k, o, rows[in.a], rows[in.b], rows[in.c], chk)
			} else if in.k >= kKeep {
				chk = runKeepVec(in.k, o, rows[in.d], rows[in.a], rows[in.b], rows[in.c], chk)
			} else {
				archsimd.ClearAVXUpperBits()
				if e.runOp(in, 0, n) {
					bad = true
				}
			}
		}
	}
	var c [4]float64
	chk.Store(&c)
	archsimd.ClearAVXUpperBits()
	return n, bad || c[0] != 0 || c[1] != 0 || c[2] != 0 || c[3] != 0
}
