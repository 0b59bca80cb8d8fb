package tape

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// The scalar code's fused kinds against run, the plain loop over the nodes
// (the reference pass): every comparison with the if that reads it, and
// chains, trees and sequences of + - * / over every pair and triple of
// operations, at points with ties, zeros, ±Inf and NaN, values and domain
// errors alike.
func TestScalarCodeKindsAgreeWithRun(t *testing.T) {
	special := []float64{0, 1, -2.5, 3, math.Inf(1), math.Inf(-1), math.NaN()}
	tapes := kindTapes()
	var rows [][]float64
	for _, a := range special {
		for _, b := range special {
			for _, c := range special {
				for _, d := range special {
					rows = append(rows, []float64{a, b, c, d})
				}
			}
		}
	}
	same := func(x, y float64) bool {
		return math.Float64bits(x) == math.Float64bits(y) || math.IsNaN(x) && math.IsNaN(y)
	}
	for f, tp := range tapes {
		for _, x := range rows {
			want, _, wantErr := evalRef(tp, [][]float64{x}, 0)
			got, err := tp.Eval(x, 0)
			var de *DomainError
			if err != nil {
				de = err.(*DomainError)
			}
			switch {
			case (de == nil) != (wantErr == nil):
				t.Fatalf("tape %d at %v: error %v, reference %v", f, x, err, wantErr)
			case de != nil:
				if de.Pos != wantErr.Pos || de.Op != wantErr.Op || de.Msg != wantErr.Msg || len(de.Args) != len(wantErr.Args) {
					t.Fatalf("tape %d at %v: error %v, reference %v", f, x, de, wantErr)
				}
				for j := range de.Args {
					if !same(de.Args[j], wantErr.Args[j]) {
						t.Fatalf("tape %d at %v: error %v (args %v), reference %v (args %v)", f, x, de, de.Args, wantErr, wantErr.Args)
					}
				}
			case math.Float64bits(got) != math.Float64bits(want[0]):
				t.Fatalf("tape %d at %v: %v, reference %v", f, x, got, want[0])
			}
		}
	}
}

// kindTapes returns tapes whose scalar code holds every fused kind: a
// comparison and its if, chains, trees and sequences of + - * / over every
// pair and triple of operations.
func kindTapes() []*Tape {
	arith := []Op{OpAdd, OpSub, OpMul, OpDiv}
	var tapes []*Tape
	for _, cmp := range []Op{OpLt, OpLe, OpGt, OpGe, OpEq, OpNe} {
		b := NewBuilder()
		x, y, u, w := b.Input(), b.Input(), b.Input(), b.Input()
		tapes = append(tapes, b.Tape(b.Call(OpIf, b.Binary(cmp, x, y), u, w)))
	}
	for _, o1 := range arith {
		for _, o2 := range arith {
			for _, o3 := range arith {
				for shape := range 10 {
					b := NewBuilder()
					x, y, u, w := b.Input(), b.Input(), b.Input(), b.Input()
					var out Slot
					switch shape {
					case 0, 1, 2, 3: // chains: t1 on either side, t2 on either side
						t1 := b.Binary(o1, x, y)
						t2 := b.Binary(o2, t1, u)
						if shape&1 != 0 {
							t2 = b.Binary(o2, u, t1)
						}
						out = b.Binary(o3, t2, w)
						if shape&2 != 0 {
							out = b.Binary(o3, w, t2)
						}
					case 4, 5: // trees
						t1, t2 := b.Binary(o1, x, y), b.Binary(o2, u, w)
						out = b.Binary(o3, t1, t2)
						if shape == 5 {
							out = b.Binary(o3, t2, t1)
						}
					case 6: // a sequence of three: t1 and t2 used again
						t1 := b.Binary(o1, x, y)
						t2 := b.Binary(o2, t1, u)
						t3 := b.Binary(o3, t2, w)
						out = b.Binary(OpMax, b.Binary(OpMax, t3, t1), t2)
					case 7: // a sequence of two: t1 used again
						t1 := b.Binary(o1, x, y)
						t2 := b.Binary(o2, u, t1)
						out = b.Binary(OpMax, t2, t1)
					case 8, 9: // pairs: t1 on either side
						t1 := b.Binary(o1, x, y)
						t2 := b.Binary(o2, t1, u)
						if shape == 9 {
							t2 = b.Binary(o2, u, t1)
						}
						out = b.Binary(OpMax, t2, w)
					}
					tapes = append(tapes, b.Tape(out))
				}
			}
		}
	}
	// The unary operations, min and max that the reverse pass over the code
	// has cases of its own for.
	for _, op := range []Op{OpSquare, OpSqrt, OpExp, OpLn, OpAbs, OpMin, OpMax} {
		b := NewBuilder()
		x, y, u, w := b.Input(), b.Input(), b.Input(), b.Input()
		var r Slot
		if op.Arity() == 2 {
			r = b.Binary(op, b.Binary(OpMul, x, y), b.Binary(OpSub, u, w))
		} else {
			r = b.Unary(op, b.Binary(OpMul, x, y))
		}
		tapes = append(tapes, b.Tape(b.Binary(OpMul, r, b.Binary(OpAdd, x, u))))
	}
	return tapes
}

// reverseCode, the reverse pass over the scalar code, against reverseNodes,
// the pass node by node, to the last bit (NaN for NaN): on the fused kinds'
// tapes and on random formulas, at random points.
func TestReverseCodeAgreesWithNodes(t *testing.T) {
	tapes := kindTapes()
	g := &rgen{rng: rand.New(rand.NewPCG(31, 7)), nIn: 3}
	for f := 0; f < 1500; f++ {
		tapes = append(tapes, g.expr(5).tape(3, int32(f)))
	}
	rng := rand.New(rand.NewPCG(8, 9))
	same := func(x, y float64) bool {
		return math.Float64bits(x) == math.Float64bits(y) || math.IsNaN(x) && math.IsNaN(y)
	}
	for f, tp := range tapes {
		p := tp.p
		nIn := tp.NumInputs()
		ref := tp.Clone()
		got, again, want := make([]float64, nIn), make([]float64, nIn), make([]float64, nIn)
		x := make([]float64, nIn)
		for range 5 {
			for j := range x {
				x[j] = math.Round((rng.Float64()*6-3)*100) / 100
			}
			tp.Eval(x, 0)
			tp.Reverse(got, 0)
			for k := p.start; k < len(tp.adj); k++ {
				if tp.adj[k] != 0 {
					t.Fatalf("tape %d at %v: node %d's adjoint is %v after the pass, not 0", f, x, k, tp.adj[k])
				}
			}
			tp.Reverse(again, 0) // over the buffer the first pass left
			ref.Eval(x, 0)
			out := int(p.outs[0])
			end := p.end(0)
			p.clearAdjoints(ref.adj, want, end)
			ref.adj[out] = 1
			p.reverseNodes(ref.adj[:end], ref.vals[:end], ref.adj, want, out, false, nil)
			p.inputAdjoints(want, ref.adj[:end])
			ref.adjUsed = true
			for j := range got {
				if !same(got[j], want[j]) || !same(again[j], want[j]) {
					t.Fatalf("tape %d at %v: adjoint %d is %v (again %v), node by node %v", f, x, j, got[j], again[j], want[j])
				}
			}
		}
	}
}

// A gradient that overflows where a fused instruction's intermediate sends
// its adjoint back is reported at that intermediate's operation, as the
// pass node by node reports it: d/dx (x*y)*z = y*z = 1e600 overflows
// (IEEE 754 binary64 ends near 1.8e308) while the value, 1e300, does not.
func TestGradientErrorAtFusedIntermediate(t *testing.T) {
	b := NewBuilder()
	x, y, z := b.Input(), b.Input(), b.Input()
	b.SetPos(7)
	xy := b.Binary(OpMul, x, y)
	b.SetPos(9)
	tp := b.Tape(b.Binary(OpMul, xy, z))
	_, err := tp.Gradient(make([]float64, 3), []float64{1e-300, 1e300, 1e300}, 0)
	var de *DomainError
	if !errors.As(err, &de) || de.Pos != 7 || de.Op != OpMul {
		t.Fatalf("Gradient gives %v, want an error at the product x*y (position 7)", err)
	}
}
