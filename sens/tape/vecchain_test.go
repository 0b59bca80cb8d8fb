package tape

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

// A dot product inside a formula (k Σ q c, total × (1 + markup), and
// longer chains of + - * / and negation) takes the one pass over its
// operands once its adjoint is computed from the chain (gradientChain),
// with the bits and errors of the passes over the tape's buffers; a dot
// product whose operands another node reads, or on a side whose
// derivative depends on it, does not.
func TestDotChainAgrees(t *testing.T) {
	type shape struct {
		name  string
		out   func(b *Builder, q, c, w, k, m Slot) Slot
		chain bool // the one pass applies
	}
	mul := func(b *Builder, x, y Slot) Slot { return b.Binary(OpMul, x, y) }
	add := func(b *Builder, x, y Slot) Slot { return b.Binary(OpAdd, x, y) }
	shapes := []shape{
		{"k Σqc", func(b *Builder, q, c, w, k, m Slot) Slot { return mul(b, k, b.Dot(q, c)) }, true},
		{"Σqc k", func(b *Builder, q, c, w, k, m Slot) Slot { return mul(b, b.Dot(q, c), k) }, true},
		{"Σqc (1 + m), the factor built after the dot", func(b *Builder, q, c, w, k, m Slot) Slot {
			d := b.Dot(q, c)
			return mul(b, d, add(b, b.Const(1), m))
		}, true},
		{"(1 + m) built first", func(b *Builder, q, c, w, k, m Slot) Slot {
			f := add(b, b.Const(1), m)
			return mul(b, f, b.Dot(q, c))
		}, true},
		{"(Σqc + Σw) k", func(b *Builder, q, c, w, k, m Slot) Slot {
			return mul(b, add(b, b.Dot(q, c), b.Sum(w)), k)
		}, true},
		{"k − Σqc / m", func(b *Builder, q, c, w, k, m Slot) Slot {
			return b.Binary(OpSub, k, b.Binary(OpDiv, b.Dot(q, c), m))
		}, true},
		{"−(Σqc − k) m", func(b *Builder, q, c, w, k, m Slot) Slot {
			return mul(b, b.Unary(OpNeg, b.Binary(OpSub, b.Dot(q, c), k)), m)
		}, true},
		{"Σqq k, one run twice", func(b *Builder, q, c, w, k, m Slot) Slot { return mul(b, b.Dot(q, q), k) }, true},
		{"Σ(q·w)c k, a map as a factor", func(b *Builder, q, c, w, k, m Slot) Slot {
			return mul(b, b.Dot(b.Map(OpMul, q, w), c), k)
		}, true},
		{"two roll-ups, k Σqc + m Σwc", func(b *Builder, q, c, w, k, m Slot) Slot {
			return add(b, mul(b, k, b.Dot(q, c)), mul(b, m, b.Dot(w, b.Map(OpAdd, c, k))))
		}, true},
		{"k Σqc + Σq: q read twice", func(b *Builder, q, c, w, k, m Slot) Slot {
			return add(b, mul(b, k, b.Dot(q, c)), b.Sum(q))
		}, false},
		{"Σqc k / Σqc", func(b *Builder, q, c, w, k, m Slot) Slot {
			d := b.Dot(q, c)
			return b.Binary(OpDiv, mul(b, d, k), d)
		}, false},
		{"k / Σqc: the denominator", func(b *Builder, q, c, w, k, m Slot) Slot {
			return b.Binary(OpDiv, k, b.Dot(q, c))
		}, false},
		{"sqrt(Σqc) k", func(b *Builder, q, c, w, k, m Slot) Slot {
			return mul(b, b.Unary(OpSqrt, b.Dot(q, c)), k)
		}, false},
	}
	for _, n := range []int{9, 64, 200, 1030} {
		for _, s := range shapes {
			b := NewBuilder()
			q, c, w := b.VecInput(n), b.VecInput(n), b.VecInput(n)
			k, m := b.Input(), b.Input()
			tp := b.Tape(s.out(b, q, c, w, k, m))
			if got := tp.p.dots != nil && tp.p.dots[0].dot != 0; got != s.chain {
				t.Errorf("n=%d %s: one pass %v, want %v", n, s.name, got, s.chain)
			}
			x := make([]float64, 3*n+2)
			for j := range 3 * n {
				x[j] = 0.5 + float64((j*37)%101)/7
			}
			x[0], x[n+1] = math.Copysign(0, -1), math.Copysign(0, -1)
			// The adjoint above 1, below 1, negative, zero, and a zero of
			// each sign in the other factor.
			for _, km := range [][2]float64{{1.15, 0.04}, {0.3, -2.5}, {-7, 3}, {0, 1.5}, {2, math.Copysign(0, -1)}, {math.Copysign(0, -1), 0}} {
				x[3*n], x[3*n+1] = km[0], km[1]
				inPlaceAgrees(t, fmt.Sprintf("n=%d %s k=%v m=%v", n, s.name, km[0], km[1]), tp, x)
			}
		}
	}
}

// The dot product and the links of its chain may be outputs themselves
// (a program's tape holds every formula): the gradient of one output
// sends nothing back from another.
func TestDotChainOutputs(t *testing.T) {
	for _, n := range []int{9, 200} {
		b := NewBuilder()
		q, c := b.VecInput(n), b.VecInput(n)
		k, m := b.Input(), b.Input()
		d := b.Dot(q, c)
		dk := b.Binary(OpMul, d, k)
		tp := b.Tape(d, dk, b.Binary(OpAdd, dk, m), b.Binary(OpMul, d, m))
		for i := range 4 { // d read twice: by d·k and d·m
			if tp.p.dots != nil && tp.p.dots[i].dot != 0 {
				t.Errorf("n=%d output %d: one pass with the dot product read twice", n, i)
			}
		}
		one := b.Tape(d, dk, b.Binary(OpAdd, dk, m))
		for i, want := range []bool{false, true, true} {
			if got := one.p.dots != nil && one.p.dots[i].dot != 0; got != want {
				t.Errorf("n=%d, d read once, output %d: one pass %v, want %v", n, i, got, want)
			}
		}
		x := make([]float64, 2*n+2)
		for j := range x {
			x[j] = 0.25 + float64((j*13)%29)/3
		}
		inPlaceAgrees(t, fmt.Sprintf("n=%d outputs", n), tp, x)
		inPlaceAgrees(t, fmt.Sprintf("n=%d outputs, d read once", n), one, x)
	}
}

// Errors through the one pass are those of the passes over the tape's
// buffers: a forward domain error off the chain or on it, an output that
// overflows, and adjoints that overflow only in the gradient, which an
// adjoint above 1 lets through to the stores.
func TestDotChainErrors(t *testing.T) {
	const n = 200
	type model struct {
		name    string
		out     func(b *Builder, q, c, k Slot) Slot
		set     func(x []float64) // q is x[:n], c is x[n:2n], k is x[2n]
		reverse bool
	}
	scaled := func(b *Builder, q, c, k Slot) Slot { return b.Binary(OpMul, b.Dot(q, c), k) }
	models := []model{
		{"a square root of a negative off the chain",
			func(b *Builder, q, c, k Slot) Slot {
				return b.Binary(OpMul, b.Binary(OpAdd, b.Dot(q, c), b.Unary(OpSqrt, k)), k)
			}, func(x []float64) { x[2*n] = -1 }, false},
		{"a division by zero on the chain",
			func(b *Builder, q, c, k Slot) Slot { return b.Binary(OpDiv, b.Dot(q, c), k) },
			func(x []float64) { x[2*n] = 0 }, false},
		{"a roll-up that overflows", scaled, func(x []float64) { x[3], x[n+3] = 1e200, 1e200 }, false},
		{"a roll-up scaled past the range", scaled, func(x []float64) { x[2*n] = 1e306 }, false},
		{"adjoints past the range", scaled,
			func(x []float64) {
				for j := range n {
					x[j] = 1e-300
				}
				x[n+4] = 1e10
				x[2*n] = 1e300
			}, true},
		{"an infinite factor", scaled, func(x []float64) { x[n+5] = math.Inf(-1) }, false},
	}
	for _, m := range models {
		b := NewBuilder()
		q, c, k := b.VecInput(n), b.VecInput(n), b.Input()
		tp := b.Tape(m.out(b, q, c, k))
		if tp.p.dots == nil {
			t.Errorf("%s: no one pass", m.name)
		}
		x := rollUpPoint(n, 2.5)
		m.set(x)
		inPlaceAgrees(t, m.name, tp, x)
		_, err := tp.Gradient(make([]float64, len(x)), x, 0)
		var de *DomainError
		if !errors.As(err, &de) || de.Reverse != m.reverse {
			t.Errorf("%s: %v, want an error of the reverse pass %v", m.name, err, m.reverse)
		}
	}
}
