package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// evalRef evaluates output i at each row of xs by run, the reference
// pass (a loop over the tape's nodes): the values, and the first failing
// sample with its error.
func evalRef(tp *Tape, xs [][]float64, i int) ([]float64, int, *DomainError) {
	out := make([]float64, len(xs))
	for s, x := range xs {
		tp.loadInputs(x)
		bad := tp.run(tp.p.end(i))
		if err := tp.check(bad, tp.p.outs[i:i+1], tp.vals, 1, 0, -1); err != nil {
			return out, s, err.(*DomainError)
		}
		out[s] = tp.vals[tp.p.outs[i]]
	}
	return out, -1, nil
}

// agree reports how a batched pass's result differs from the reference:
// "" when every value up to the first failure is equal to the last bit and
// the failure is the same error at the same sample.
func agree(got []float64, err error, want []float64, bad int, wantErr *DomainError) string {
	var de *DomainError
	switch {
	case bad < 0 && err != nil:
		return "error " + err.Error() + ", reference none"
	case bad >= 0 && !errors.As(err, &de):
		return "no error, reference " + wantErr.Error()
	case bad >= 0 && (de.Sample != bad || de.Pos != wantErr.Pos || de.Op != wantErr.Op || de.Msg != wantErr.Msg || !slices.Equal(de.Args, wantErr.Args)):
		return "error " + de.Error() + ", reference " + wantErr.Error()
	}
	n := len(want)
	if bad >= 0 {
		n = bad
	}
	for s := 0; s < n; s++ {
		if math.Float64bits(got[s]) != math.Float64bits(want[s]) {
			return "values differ"
		}
	}
	return ""
}

// TestPlanAgreesWithTape checks the scalar code (Eval), the batched
// evaluator (ForwardBatch and ForwardColumns) and the cones against run,
// the tape's reference pass (a plain loop over its nodes),
// to the last bit, on random formulas at points that include domain
// errors: the same values, and the same error (operation, position,
// operands, message) at the same sample.
func TestPlanAgreesWithTape(t *testing.T) {
	const nIn = 3
	g := &rgen{rng: rand.New(rand.NewPCG(77, 13)), nIn: nIn}
	rng := rand.New(rand.NewPCG(5, 6))
	var failing, cones int
	for f := 0; f < 2000; f++ {
		tp := g.expr(4).tape(nIn, int32(f))
		// 300 samples: more than a block, the last block partial.
		const n = 300
		rows := make([][]float64, n)
		flat := make([]float64, 0, n*nIn)
		cols := make([][]float64, nIn)
		for s := range rows {
			rows[s] = make([]float64, nIn)
			for j := range rows[s] {
				rows[s][j] = math.Round((rng.Float64()*6-3)*100) / 100
				cols[j] = append(cols[j], rows[s][j])
			}
			flat = append(flat, rows[s]...)
		}
		want, bad, wantErr := evalRef(tp, rows, 0)
		if bad >= 0 {
			failing++
		}
		// Eval, by the scalar code with its fused instructions.
		got := make([]float64, n)
		var errE error
		for s, x := range rows {
			y, err := tp.Eval(x, 0)
			if err != nil {
				err.(*DomainError).Sample = s
				errE = err
				break
			}
			got[s] = y
		}
		if d := agree(got, errE, want, bad, wantErr); d != "" {
			t.Errorf("formula %d, Eval: %s", f, d)
		}
		out := make([]float64, n)
		if d := agree(out, tp.ForwardBatch(out, flat, n, 0), want, bad, wantErr); d != "" {
			t.Errorf("formula %d, ForwardBatch: %s", f, d)
		}
		// The node-major block pass, kept for tapes plans do not know.
		out = make([]float64, n)
		if d := agree(out, tp.Clone().forwardBlocks(out, flat, n, 0), want, bad, wantErr); d != "" {
			t.Errorf("formula %d, forwardBlocks: %s", f, d)
		}
		out = make([]float64, n)
		if d := agree(out, tp.ForwardColumns(out, cols, n, 0), want, bad, wantErr); d != "" {
			t.Errorf("formula %d, ForwardColumns: %s", f, d)
		}

		// Cones around the first sample that evaluates.
		x0 := rows[0]
		c, err := tp.Cones(x0, 0)
		if err != nil {
			continue
		}
		cones++
		// 40 points (one block of a cone's plan) a cone; the batched passes
		// above cover blocks that are full and partial.
		const nc = 40
		for i := 0; i < nIn; i++ {
			for _, j := range []int{-1, (i + 1) % nIn} {
				pts := make([][]float64, nc)
				vi, vj := make([]float64, nc), make([]float64, nc)
				for s := range pts {
					pts[s] = slices.Clone(x0)
					vi[s] = rows[s][i]
					pts[s][i] = vi[s]
					if j >= 0 {
						vj[s] = rows[(s+7)%n][j]
						pts[s][j] = vj[s]
					}
				}
				want, bad, wantErr := evalRef(tp, pts, 0)
				out := make([]float64, nc)
				if d := agree(out, c.Eval(out, i, vi, j, vj, nc), want, bad, wantErr); d != "" {
					t.Errorf("formula %d, cone of inputs %d, %d: %s", f, i, j, d)
				}
				// A few points at a time take the scalar path.
				for s0 := 0; s0 < 12; s0 += 3 {
					want, bad, wantErr := evalRef(tp, pts[s0:s0+3], 0)
					out := make([]float64, 3)
					if d := agree(out, c.Eval(out, i, vi[s0:], j, vj[s0:], 3), want, bad, wantErr); d != "" {
						t.Errorf("formula %d, cone of inputs %d, %d, points %d..: %s", f, i, j, s0, d)
					}
				}
			}
		}
	}
	t.Logf("2000 formulas, %d failing at some sample, %d with cones", failing, cones)
	if failing < 100 || cones < 1000 {
		t.Errorf("%d formulas failing, %d with cones: the test covers too little", failing, cones)
	}
}

// TestConesMonotone checks the structural test of monotonicity against
// functions whose shape is known (textbook facts): sums and products with
// one factor in the input are affine in it, and so monotone whatever the
// signs; max, exp and ceil of monotone arguments are monotone; a product
// of two factors in the input, a divisor in the input, an if whose
// condition depends on the input, and cos are not proven so.
func TestConesMonotone(t *testing.T) {
	b := NewBuilder()
	x, y, z := b.Input(), b.Input(), b.Input()
	mul := func(p, q Slot) Slot { return b.Binary(OpMul, p, q) }
	add := func(p, q Slot) Slot { return b.Binary(OpAdd, p, q) }
	two := b.Const(2)
	outs := []Slot{
		add(mul(x, y), b.Binary(OpSub, z, mul(x, two))),                // 0: affine in x, y and z
		b.Binary(OpDiv, b.Unary(OpNeg, x), y),                          // 1: in x; y is a divisor
		mul(x, x),                                                      // 2: in neither x
		b.Call(OpIf, b.Binary(OpGt, y, two), mul(x, two), x),           // 3: in x, not in y
		b.Binary(OpMax, mul(x, b.Unary(OpExp, y)), b.Unary(OpNeg, y)),  // 4: x rises, y both ways
		mul(b.Unary(OpCos, x), y),                                      // 5: in y only
		add(mul(b.Binary(OpDiv, x, z), y), b.Binary(OpPow, z, two)),    // 6: in x, y; not z
		b.Unary(OpCeil, b.Binary(OpMax, b.Unary(OpExp, x), mul(z, y))), // 7: in x; y, z by base signs
		b.Binary(OpSub, b.Unary(OpExp, x), b.Unary(OpSqrt, x)),         // 8: opposite directions in x
	}
	tp := b.Tape(outs...)
	want := [][3]bool{
		{true, true, true}, {true, false, true}, {false, true, true}, {true, false, true},
		{true, false, true}, {false, true, true}, {true, true, false}, {true, true, true},
		{false, true, true},
	}
	base := []float64{1.5, 3, 0.5}
	for o, w := range want {
		c, err := tp.Cones(base, o)
		if err != nil {
			t.Fatal(err)
		}
		for i := range w {
			// An input the output does not read is trivially monotone.
			if got := c.Monotone(i); got != w[i] {
				t.Errorf("output %d, input %d: monotone %v, want %v", o, i, got, w[i])
			}
		}
	}
}
