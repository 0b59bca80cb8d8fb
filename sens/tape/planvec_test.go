package tape_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// The batched plans' vector kernels (a GOEXPERIMENT=simd build on a CPU
// with AVX2) agree with the pure-Go kernels and with the scalar reference
// pass (Eval) to the last bit, and report the same domain errors at the
// same formula position and sample. Without vector kernels the test
// compares the pure-Go path with itself and with Eval. The reference for
// every value is the tape's own scalar pass, which other tests check
// against hand-written Go (tapebench.CostModelGo) and finite differences.
func TestVecKernelsAgree(t *testing.T) {
	t.Logf("vector kernels: %v", tape.VectorKernels())
	type model struct {
		name string
		tp   *tape.Tape
		base []float64
	}
	var models []model
	models = append(models,
		model{"arithmetic cost model", tapebench.CostModel(true), tapebench.CostBaseline()},
		model{"cost model", tapebench.CostModel(false), tapebench.CostBaseline()})
	for seed := uint64(1); seed <= 4; seed++ {
		tp, x := tapebench.GenModel(600, 12, seed)
		models = append(models, model{fmt.Sprintf("generated model %d", seed), tp, x})
	}
	for seed := uint64(1); seed <= 60; seed++ {
		tp, x := randomPlanModel(seed)
		models = append(models, model{fmt.Sprintf("random plan model %d", seed), tp, x})
	}
	rng := rand.New(rand.NewPCG(9, 9))
	for _, m := range models {
		// 2,003 samples: whole blocks and a partial one whose lanes do not
		// fill a vector. Variant 0 is clean; the others put a value that
		// may raise a domain error or a non-finite result (zero, a
		// negative, an overflow, ±Inf, NaN) into one input of one sample.
		const n = 2003
		nIn := len(m.base)
		for variant := range 7 {
			cols := make([][]float64, nIn)
			for j := range cols {
				cols[j] = make([]float64, n)
				for s := range cols[j] {
					cols[j][s] = m.base[j] * (0.8 + 0.4*rng.Float64())
				}
			}
			if variant > 0 {
				bad := []float64{0, -1.5, 1e300, math.Inf(1), math.Inf(-1), math.NaN()}[variant-1]
				cols[rng.IntN(nIn)][rng.IntN(n)] = bad
			}
			for i := range m.tp.NumOutputs() {
				var outs [2][]float64
				var errs [2]error
				for k, on := range []bool{false, true} {
					was := tape.SetVectorKernels(on)
					outs[k] = make([]float64, n)
					errs[k] = m.tp.ForwardColumns(outs[k], cols, n, i)
					tape.SetVectorKernels(was)
				}
				where := fmt.Sprintf("%s, variant %d, output %d", m.name, variant, i)
				checkSameError(t, where, errs[0], errs[1])
				// Eval, sample by sample, up to the first error.
				x := make([]float64, nIn)
				for s := range n {
					for j := range x {
						x[j] = cols[j][s]
					}
					v, err := m.tp.Eval(x, i)
					if err != nil {
						var de *tape.DomainError
						if !errors.As(errs[0], &de) || de.Sample != s {
							t.Errorf("%s: Eval fails at sample %d (%v), batched gives %v", where, s, err, errs[0])
						} else if de.Pos != err.(*tape.DomainError).Pos || de.Msg != err.(*tape.DomainError).Msg {
							t.Errorf("%s: Eval reports %v at %d, batched %v at %d", where, err, err.(*tape.DomainError).Pos, de, de.Pos)
						}
						break
					}
					for k := range outs {
						if math.Float64bits(outs[k][s]) != math.Float64bits(v) {
							t.Errorf("%s, sample %d, vector %v: batched %v (%#x), Eval %v (%#x)", where, s, k == 1, outs[k][s], math.Float64bits(outs[k][s]), v, math.Float64bits(v))
							break
						}
					}
				}
			}
		}
	}
}

func checkSameError(t *testing.T, where string, a, b error) {
	t.Helper()
	var da, db *tape.DomainError
	switch {
	case a == nil && b == nil:
	case errors.As(a, &da) && errors.As(b, &db):
		if da.Pos != db.Pos || da.Msg != db.Msg || da.Sample != db.Sample || da.Op != db.Op {
			t.Errorf("%s: pure Go reports %v (position %d, sample %d), vector %v (position %d, sample %d)", where, a, da.Pos, da.Sample, b, db.Pos, db.Sample)
		}
	default:
		t.Errorf("%s: pure Go reports %v, vector %v", where, a, b)
	}
}

// randomPlanModel builds a random model of the operations that plans have
// kernels of their own for (+ - * / with and without constant operands,
// chains of them, negation, squares, max, min, comparisons, if, ceil,
// floor) and a few that they do not (exp, ln, sqrt), over 6 inputs in
// [0.5, 2], with two outputs.
func randomPlanModel(seed uint64) (*tape.Tape, []float64) {
	rng := rand.New(rand.NewPCG(seed, 17))
	b := tape.NewBuilder()
	const nIn = 6
	var vals []tape.Slot
	x := make([]float64, nIn)
	for i := range nIn {
		b.SetPos(int32(i))
		vals = append(vals, b.Input())
		x[i] = 0.5 + 1.5*rng.Float64()
	}
	pick := func() tape.Slot {
		if rng.IntN(6) == 0 {
			return b.Const([]float64{0.5, 2, 3, -1.25, 1e-3, 7}[rng.IntN(6)])
		}
		// Mostly recent values, so that chains form.
		k := len(vals) - 1 - rng.IntN(min(len(vals), 4))
		if rng.IntN(3) == 0 {
			k = rng.IntN(len(vals))
		}
		return vals[k]
	}
	arith := []tape.Op{tape.OpAdd, tape.OpSub, tape.OpMul, tape.OpDiv}
	cmps := []tape.Op{tape.OpLt, tape.OpLe, tape.OpGt, tape.OpGe, tape.OpEq, tape.OpNe}
	for n := range 40 + rng.IntN(40) {
		b.SetPos(int32(100 + n))
		var v tape.Slot
		switch r := rng.IntN(20); {
		case r < 12:
			v = b.Binary(arith[rng.IntN(4)], pick(), pick())
		case r == 12:
			v = b.Unary(tape.OpNeg, pick())
		case r == 13:
			v = b.Unary(tape.OpSquare, pick())
		case r == 14:
			v = b.Binary([]tape.Op{tape.OpMax, tape.OpMin}[rng.IntN(2)], pick(), pick())
		case r == 15:
			v = b.Call(tape.OpIf, b.Binary(cmps[rng.IntN(6)], pick(), pick()), pick(), pick())
		case r == 16:
			v = b.Unary([]tape.Op{tape.OpCeil, tape.OpFloor}[rng.IntN(2)], pick())
		case r == 17:
			v = b.Unary(tape.OpSqrt, pick())
		case r == 18:
			v = b.Unary(tape.OpLn, pick())
		default:
			v = b.Unary(tape.OpExp, b.Binary(tape.OpMul, b.Const(0.01), pick()))
		}
		vals = append(vals, v)
	}
	return b.Tape(vals[len(vals)-1], vals[len(vals)-2]), x
}

// Every triple and pair of + - * / that the plans fuse (each shape: chains
// and trees, keeping intermediate values with other uses; pairs that keep
// their first result; one followed by ceil,
// floor, negation, max or min), on all combinations of operand values that overflow, divide
// by zero or are not finite, in blocks of seven lanes (one vector or one
// four-lane step of pure Go, and three lanes one at a time) holding
// different values: the batched pass, with and without vector
// kernels, reports a domain error exactly where Eval does (formula
// position, message and sample) and otherwise gives Eval's value in every
// lane to the last bit.
func TestPlanFusedKernels(t *testing.T) {
	ops := []tape.Op{tape.OpAdd, tape.OpSub, tape.OpMul, tape.OpDiv}
	vals := []float64{1e308, 0, 2, -3, math.Inf(1), math.Copysign(0, -1)}
	type shape func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot
	bin := func(b *tape.Builder, op tape.Op, x, y tape.Slot) tape.Slot { return b.Binary(op, x, y) }
	shapes := map[string]shape{
		"LL": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			return bin(b, o3, bin(b, o2, bin(b, o1, a, x), c), d)
		},
		"LR": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			return bin(b, o3, d, bin(b, o2, bin(b, o1, a, x), c))
		},
		"RL": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			return bin(b, o3, bin(b, o2, c, bin(b, o1, a, x)), d)
		},
		"RR": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			return bin(b, o3, d, bin(b, o2, c, bin(b, o1, a, x)))
		},
		"TL": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, o3, t1, bin(b, o2, c, d))
		},
		"TR": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, o3, bin(b, o2, c, d), t1)
		},
		"LL keeping t1": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, tape.OpAdd, bin(b, o3, bin(b, o2, t1, c), d), t1)
		},
		"RL keeping t2": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t2 := bin(b, o2, c, bin(b, o1, a, x))
			return bin(b, tape.OpSub, bin(b, o3, t2, d), t2)
		},
		"RR keeping both": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			t2 := bin(b, o2, c, t1)
			return bin(b, tape.OpMul, bin(b, tape.OpAdd, bin(b, o3, d, t2), t2), t1)
		},
		"TR keeping t1": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, d tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, tape.OpDiv, bin(b, o3, bin(b, o2, c, d), t1), t1)
		},
		"keep L": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, o3, bin(b, o2, t1, c), t1)
		},
		"keep R": func(b *tape.Builder, o1, o2, o3 tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			t1 := bin(b, o1, a, x)
			return bin(b, o3, t1, bin(b, o2, c, t1))
		},
		"post ceil": func(b *tape.Builder, o1, _, _ tape.Op, a, x, _, _ tape.Slot) tape.Slot {
			return b.Unary(tape.OpCeil, bin(b, o1, a, x))
		},
		"post floor": func(b *tape.Builder, o1, _, _ tape.Op, a, x, _, _ tape.Slot) tape.Slot {
			return b.Unary(tape.OpFloor, bin(b, o1, a, x))
		},
		"post neg": func(b *tape.Builder, o1, _, _ tape.Op, a, x, _, _ tape.Slot) tape.Slot {
			return b.Unary(tape.OpNeg, bin(b, o1, a, x))
		},
		"post max L": func(b *tape.Builder, o1, _, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, tape.OpMax, bin(b, o1, a, x), c)
		},
		"post max R": func(b *tape.Builder, o1, _, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, tape.OpMax, c, bin(b, o1, a, x))
		},
		"post min L": func(b *tape.Builder, o1, _, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, tape.OpMin, bin(b, o1, a, x), c)
		},
		"post min R": func(b *tape.Builder, o1, _, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, tape.OpMin, c, bin(b, o1, a, x))
		},
		"pair L": func(b *tape.Builder, o1, o2, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, o2, bin(b, o1, a, x), c)
		},
		"pair R": func(b *tape.Builder, o1, o2, _ tape.Op, a, x, c, _ tape.Slot) tape.Slot {
			return bin(b, o2, c, bin(b, o1, a, x))
		},
	}
	// Seven lanes: a vector or four pure-Go lanes a step, then three
	// lanes one at a time, each checked.
	const n = 7
	cols := make([][]float64, 4)
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	out := make([]float64, n)
	for name, sh := range shapes {
		for _, o1 := range ops {
			for _, o2 := range ops {
				for _, o3 := range ops {
					if strings.HasPrefix(name, "pair") && o3 != tape.OpAdd || strings.HasPrefix(name, "post") && (o2 != tape.OpAdd || o3 != tape.OpAdd) {
						continue
					}
					b := tape.NewBuilder()
					var in [4]tape.Slot
					for j := range in {
						b.SetPos(int32(j))
						in[j] = b.Input()
					}
					b.SetPos(10)
					tp := b.Tape(sh(b, o1, o2, o3, in[0], in[1], in[2], in[3]))
					x := make([]float64, 4)
					var want [n]float64
					for code := range len(vals) * len(vals) * len(vals) * len(vals) {
						// Lane 0 holds the combination, lane s each value
						// times 1 - s/16: lanes differ, so that a kernel
						// reading another lane's operand fails, and hold
						// their zeros and infinities in the same places,
						// so that one lane's test does not cover another's.
						var werr error
						bad := -1
						for s := range n {
							for j, c := 0, code; j < 4; j, c = j+1, c/len(vals) {
								x[j] = vals[c%len(vals)] * (1 - float64(s)/16)
								cols[j][s] = x[j]
							}
							var err error
							want[s], err = tp.Eval(x, 0)
							if err != nil && bad < 0 {
								bad, werr = s, err
							}
						}
						for _, on := range []bool{false, true} {
							was := tape.SetVectorKernels(on)
							err := tp.ForwardColumns(out, cols, n, 0)
							tape.SetVectorKernels(was)
							if (err == nil) != (werr == nil) {
								t.Fatalf("%s %v %v %v, code %d, vector %v: batched %v, Eval %v", name, o1, o2, o3, code, on, err, werr)
							}
							if err != nil {
								var de, we *tape.DomainError
								if !errors.As(err, &de) || !errors.As(werr, &we) || de.Sample != bad || de.Msg != we.Msg || de.Pos != we.Pos {
									t.Fatalf("%s %v %v %v, code %d, vector %v: batched %v, Eval %v in sample %d", name, o1, o2, o3, code, on, err, werr, bad)
								}
								continue
							}
							for s := range n {
								if math.Float64bits(out[s]) != math.Float64bits(want[s]) {
									t.Fatalf("%s %v %v %v, code %d, vector %v, lane %d: batched %v, Eval %v", name, o1, o2, o3, code, on, s, out[s], want[s])
								}
							}
						}
					}
				}
			}
		}
	}
}

// A comparison read only by an if (kSelect), each comparison, on the same
// values and NaN: as TestPlanFusedKernels.
func TestPlanSelectKernel(t *testing.T) {
	cmps := []tape.Op{tape.OpLt, tape.OpLe, tape.OpGt, tape.OpGe, tape.OpEq, tape.OpNe}
	vals := []float64{1e308, 0, 2, -3, math.Inf(-1), math.NaN()}
	const n = 5 // a vector and a lane of pure Go
	cols := make([][]float64, 4)
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	out := make([]float64, n)
	for _, op := range cmps {
		b := tape.NewBuilder()
		var in [4]tape.Slot
		for j := range in {
			b.SetPos(int32(j))
			in[j] = b.Input()
		}
		b.SetPos(10)
		tp := b.Tape(b.Call(tape.OpIf, b.Binary(op, in[0], in[1]), in[2], in[3]))
		x := make([]float64, 4)
		for code := range len(vals) * len(vals) * len(vals) * len(vals) {
			for j, c := 0, code; j < 4; j, c = j+1, c/len(vals) {
				x[j] = vals[c%len(vals)]
				for s := range n {
					cols[j][s] = x[j]
				}
			}
			want, werr := tp.Eval(x, 0)
			for _, on := range []bool{false, true} {
				was := tape.SetVectorKernels(on)
				err := tp.ForwardColumns(out, cols, n, 0)
				tape.SetVectorKernels(was)
				if (err == nil) != (werr == nil) {
					t.Fatalf("if(x %v y, ...) at %v, vector %v: batched %v, Eval %v", op, x, on, err, werr)
				}
				for s := range out {
					if err == nil && math.Float64bits(out[s]) != math.Float64bits(want) {
						t.Fatalf("if(x %v y, ...) at %v, vector %v: batched %v, Eval %v", op, x, on, out[s], want)
					}
				}
			}
		}
	}
}
