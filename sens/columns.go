package sens

import (
	"math"

	"github.com/nudge-dev/nudge/sens/tape"
)

// Evaluation of points given column by column: the sampling analyses draw
// each input's values of a block of samples as a column, and a compiled
// model's batched pass (tape.ForwardColumns) reads such columns in place,
// so neither side copies the samples into rows.

// columnFunction is a Function that evaluates points given column by
// column: cols[i][s] is input i in sample s (each column at least n long).
// The values and errors are those of EvalBatch on the same points as rows.
type columnFunction interface {
	EvalColumns(dst []float64, cols [][]float64, n int) error
}

// columnEval evaluates f at n points given as columns, through
// EvalColumns when f has it, else through EvalBatch on rows assembled in
// *rows (grown as needed).
func columnEval(f Function, dst []float64, cols [][]float64, n int, rows *[]float64) error {
	if cf, ok := f.(columnFunction); ok {
		return cf.EvalColumns(dst, cols, n)
	}
	k := len(cols)
	if cap(*rows) < n*k {
		*rows = make([]float64, n*k)
	}
	xs := (*rows)[:n*k]
	for i, c := range cols {
		scatter(xs, c[:n], i, k)
	}
	return f.EvalBatch(dst[:n], xs, n)
}

// columnRow returns sample s of cols as a row.
func columnRow(cols [][]float64, s int) []float64 {
	x := make([]float64, len(cols))
	for i, c := range cols {
		x[i] = c[s]
	}
	return x
}

// EvalColumns evaluates n points given column by column, one column per
// program input.
func (fn *Fn) EvalColumns(dst []float64, cols [][]float64, n int) error {
	if err := fn.tape.ForwardColumns(dst[:n], cols, n, fn.f.out); err != nil {
		var x []float64
		if de, ok := err.(*tape.DomainError); ok && de.Sample >= 0 && de.Sample < n {
			x = columnRow(cols, de.Sample)
		}
		return fn.prog.evalError(err, x)
	}
	if fn.scale == 1 {
		return nil
	}
	// As scaleAll: the first value that overflows in the display unit is
	// an error.
	for i, y := range dst[:n] {
		v := y * fn.scale
		if math.IsInf(v, 0) && !math.IsInf(y, 0) {
			return fn.overflow(columnRow(cols, i), "")
		}
		dst[i] = v
	}
	return nil
}

// EvalColumns evaluates n points given column by column, one column per
// input of the sub-function; the program's other inputs read columns that
// hold their baselines.
func (s *subFn) EvalColumns(dst []float64, cols [][]float64, n int) error {
	all := len(s.full)
	if s.cols == nil || s.fixedLen < n {
		// Constant columns of the baselines, as long as the longest block
		// asked for so far.
		size := max(n, s.fixedLen)
		s.fixed = make([]float64, all*size)
		s.cols = make([][]float64, all)
		for j, v := range s.full {
			c := s.fixed[j*size : (j+1)*size : (j+1)*size]
			for r := range c {
				c[r] = v
			}
			s.cols[j] = c
		}
		s.fixedLen = size
	}
	for j := range s.cols {
		s.cols[j] = s.fixed[j*s.fixedLen : (j+1)*s.fixedLen : (j+1)*s.fixedLen]
	}
	for i, j := range s.index {
		s.cols[j] = cols[i]
	}
	return s.fn.EvalColumns(dst, s.cols, n)
}
