package sens

import (
	"math"

	"github.com/nudge-dev/nudge/sens/tape"
)

// GradientBatcher is a Function that evaluates its gradient at many points
// in one call, faster than one Gradient a point. A compiled formula (Fn) is
// one: its tape runs each operation over a block of points.
type GradientBatcher interface {
	// GradientBatch writes f at n points stored row by row in xs (n × dim)
	// into dst[:n], and their gradients, row by row, into grads (n × dim).
	GradientBatch(dst, grads, xs []float64, n int) error
}

// GradientBatch evaluates f and its gradient at n points stored row by row
// in xs (n × dim) into dst[:n] and grads (n × dim, row by row), through
// f's own batched pass when it has one (GradientBatcher), else one
// Gradient a point. Analyses that take many gradients (break-even's
// Newton steps, screening, attribution) call it instead of a loop.
func GradientBatch(f Function, dst, grads, xs []float64, n int) error {
	if g, ok := f.(GradientBatcher); ok {
		return g.GradientBatch(dst, grads, xs, n)
	}
	if n == 0 {
		return nil
	}
	dim := len(xs) / n
	for s := 0; s < n; s++ {
		y, err := f.Gradient(grads[s*dim:(s+1)*dim], xs[s*dim:(s+1)*dim])
		if err != nil {
			return err
		}
		dst[s] = y
	}
	return nil
}

// GradientBatch evaluates the formula and its gradient at n points (see
// GradientBatcher); the values are those of Gradient to the last bit.
func (fn *Fn) GradientBatch(dst, grads, xs []float64, n int) error {
	if err := fn.tape.GradientBatch(dst[:n], grads, xs, n, fn.f.out); err != nil {
		var x []float64
		if de, ok := err.(*tape.DomainError); ok && de.Sample >= 0 && de.Sample < n {
			k := len(fn.prog.Inputs)
			x = xs[de.Sample*k : (de.Sample+1)*k]
		}
		return fn.prog.evalError(err, x)
	}
	if err := fn.scaleAll(dst[:n], xs); err != nil {
		return err
	}
	k := len(fn.prog.Inputs)
	for i, g := range grads {
		v := g * fn.scale
		if math.IsInf(v, 0) && !math.IsInf(g, 0) {
			var x []float64
			if r := i / k; k > 0 && (r+1)*k <= len(xs) {
				x = xs[r*k : (r+1)*k]
			}
			name := fn.prog.Inputs[i%k].Name
			return fn.overflow(x, "the partial derivative with respect to "+name, name)
		}
		grads[i] = v
	}
	return nil
}

// GradientBatch evaluates at n points of the sub-function's inputs.
func (s *subFn) GradientBatch(dst, grads, xs []float64, n int) error {
	k, all := len(s.index), len(s.full)
	if cap(s.gbatch) < n*all {
		s.gbatch, s.gfull = make([]float64, n*all), make([]float64, n*all)
	}
	rows, full := s.gbatch[:n*all], s.gfull[:n*all]
	for r := 0; r < n; r++ {
		row := rows[r*all : (r+1)*all]
		copy(row, s.full)
		for i, j := range s.index {
			row[j] = xs[r*k+i]
		}
	}
	if err := s.fn.GradientBatch(dst, full, rows, n); err != nil {
		return err
	}
	for r := 0; r < n; r++ {
		for i, j := range s.index {
			grads[r*k+i] = full[r*all+j]
		}
	}
	return nil
}
