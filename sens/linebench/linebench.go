// Package linebench holds the benchmarks of line-item models: the invented
// bid of package tapebench at 100,000 lines, loaded from its CSV file and
// compiled, its roll-up evaluated and differentiated, each against a
// reference: reading the same file with encoding/csv alone, and a
// hand-written Go loop over the same slices. `nudge bench` and this
// package's benchmarks run the same bodies. It is not part of the engine:
// nothing but the benchmarks and `nudge bench` imports it.
package linebench

import (
	"bytes"
	"encoding/csv"
	"errors"
	"io"
	"math"

	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// Lines is the number of lines of the benchmark's table.
const Lines = 100_000

// Model is the benchmark's model: the bid's roll-up, the sum over its lines
// of quantity times unit cost. Every quantity and every unit cost is an
// input of its own: 200,000 inputs.
const Model = `table bid = "bid.csv" key item
input qty       = bid.qty (±5%)
input unit_cost = bid.unit_cost (±10%)
total = sum(qty * unit_cost)
`

// Curved is a formula added to Model for the one-at-a-time benchmarks: the
// roll-up plus a sum of squares, which is not monotone in the quantities,
// so that a tornado samples inside every quantity's range.
const Curved = "curved = total + sum((qty - 5) * (qty - 5)) * 1 [$]\n"

// Marked is a formula added to Model for MarkupGradientVsForward: the
// roll-up inside a formula, a markup on it.
const Marked = "input markup = 0.12 (0.08..0.15)\nmarked = total * (1 + markup)\n"

// Bench is the loaded benchmark: the table's bytes, the compiled roll-up,
// the baseline, and the same numbers as plain slices for the Go loop.
type Bench struct {
	CSV  []byte
	Prog *sens.Program
	Fn   *sens.Fn
	X    []float64 // the baseline: the quantities, then the unit costs
	Qty  []float64
	Cost []float64
	Grad []float64

	Total *sens.Problem // the problem of total
	curve *sens.Problem // of curved, compiled on first use (it would weigh on the other benchmarks' garbage collection)
	mark  *sens.Fn      // marked, compiled on first use
	mx    []float64     // its baseline
	out   []float64
}

// New generates the table of n lines and loads and compiles the model.
func New(n int) (*Bench, error) {
	bn := &Bench{CSV: tapebench.BidCSV(n, 2)}
	p, err := bn.load()
	if err != nil {
		return nil, err
	}
	bn.Prog = p
	if bn.Fn, err = p.Fn("total"); err != nil {
		return nil, err
	}
	bn.X = p.Baseline()
	bn.Qty, bn.Cost = bn.X[:n], bn.X[n:]
	bn.Grad = make([]float64, len(bn.X))
	bn.out = make([]float64, 1)
	if bn.Total, err = p.Problem("total"); err != nil {
		return nil, err
	}
	y, err := bn.Fn.Eval(bn.X)
	if err != nil {
		return nil, err
	}
	if g := bn.goRollup(); math.Abs(y-g) > 1e-9*math.Abs(g) {
		return nil, errors.New("linebench: the tape and the Go loop disagree")
	}
	return bn, nil
}

// load parses the model, reads the table from memory and compiles.
func (bn *Bench) load() (*sens.Program, error) {
	return bn.loadModel(Model)
}

// loadModel parses the model src, reads the table from memory and compiles.
func (bn *Bench) loadModel(src string) (*sens.Program, error) {
	f, stmts, err := syntax.Parse("bid.nudge", []byte(src))
	if err != nil {
		return nil, err
	}
	m := sens.NewModel()
	for _, s := range stmts {
		if ts, ok := s.(*syntax.TableStmt); ok {
			if _, err := m.DefineTableData(f, ts, bn.CSV); err != nil {
				return nil, err
			}
			continue
		}
		m.Define(f, s)
	}
	return m.Compile()
}

// readCSV reads the table with encoding/csv alone.
func (bn *Bench) readCSV() error {
	r := csv.NewReader(bytes.NewReader(bn.CSV))
	for {
		if _, err := r.Read(); err == io.EOF {
			return nil
		} else if err != nil {
			return err
		}
	}
}

var sink float64

// goRollup is the roll-up written in Go over the same slices.
func (bn *Bench) goRollup() float64 {
	s := 0.0
	for i, q := range bn.Qty {
		s += q * bn.Cost[i]
	}
	return s
}

// LoadVsCSV times loading the table and compiling the model against
// reading the same bytes with encoding/csv alone.
func (bn *Bench) LoadVsCSV(b tapebench.B) {
	tapebench.Pair(b, 1, 1, "load", "csv", func() error { _, err := bn.load(); return err }, bn.readCSV)
}

// ForwardVsGo times the roll-up's forward evaluation against the Go loop.
func (bn *Bench) ForwardVsGo(b tapebench.B) {
	tapebench.Pair(b, 4, 1, "tape", "go", func() error { _, err := bn.Fn.Eval(bn.X); return err },
		func() error { sink += bn.goRollup(); return nil })
}

// GradientVsForward times the roll-up's gradient (every line's partial
// derivatives) against its forward evaluation.
func (bn *Bench) GradientVsForward(b tapebench.B) {
	tapebench.Pair(b, 4, 1, "gradient", "forward", func() error { _, err := bn.Fn.Gradient(bn.Grad, bn.X); return err },
		func() error { _, err := bn.Fn.Eval(bn.X); return err })
}

// forwardBatch is one forward evaluation of total through the batched
// path, the reference of the one-at-a-time analyses.
func (bn *Bench) forwardBatch() error { return bn.Fn.EvalBatch(bn.out, bn.X, 1) }

// TornadoVsForward times a tornado of the roll-up (200,000 inputs, each
// at both ends of its range; the output is proven monotone in each, so
// nothing inside the ranges is sampled) against one batched forward
// evaluation.
func (bn *Bench) TornadoVsForward(b tapebench.B) {
	tapebench.Pair(b, 1, 1, "tornado", "forward", func() error {
		_, err := sens.Tornado(bn.Total, &sens.TornadoSettings{Top: 5})
		return err
	}, bn.forwardBatch)
}

// CurvedTornadoVsForward times a tornado of the roll-up plus a sum of
// squares of the quantities, which samples inside each quantity's range
// and refines the extreme it finds there, against one batched forward
// evaluation of total.
func (bn *Bench) CurvedTornadoVsForward(b tapebench.B) {
	if bn.curve == nil {
		pc, err := bn.loadModel(Model + Curved)
		if err == nil {
			bn.curve, err = pc.Problem("curved")
		}
		if err != nil {
			b.Fatal(err)
		}
	}
	tapebench.Pair(b, 1, 1, "tornado", "forward", func() error {
		_, err := sens.Tornado(bn.curve, &sens.TornadoSettings{Top: 5})
		return err
	}, bn.forwardBatch)
}

// SimulateVsForward times a simulation of the roll-up, 40 samples of its
// 200,000 inputs, against one batched forward evaluation.
func (bn *Bench) SimulateVsForward(b tapebench.B) {
	tapebench.Pair(b, 1, 1, "simulate", "forward", func() error {
		_, err := sens.Simulate(bn.Total, &sens.SimulationSettings{N: 40, Seed: 1, Workers: 1})
		return err
	}, bn.forwardBatch)
}

// MarkupGradientVsForward times the gradient of the roll-up with a markup
// on it (a dot product inside a formula) against its forward evaluation.
func (bn *Bench) MarkupGradientVsForward(b tapebench.B) {
	if bn.mark == nil {
		pm, err := bn.loadModel(Model + Marked)
		if err == nil {
			bn.mark, err = pm.Fn("marked")
		}
		if err != nil {
			b.Fatal(err)
		}
		bn.mx = pm.Baseline()
	}
	g := make([]float64, len(bn.mx))
	tapebench.Pair(b, 4, 1, "gradient", "forward", func() error { _, err := bn.mark.Gradient(g, bn.mx); return err },
		func() error { _, err := bn.mark.Eval(bn.mx); return err })
}

// SpiderVsForward times a spider plot of the roll-up against one batched
// forward evaluation.
func (bn *Bench) SpiderVsForward(b tapebench.B) {
	tapebench.Pair(b, 1, 1, "spider", "forward", func() error {
		_, err := sens.Spider(bn.Total, &sens.SpiderSettings{Top: 5})
		return err
	}, bn.forwardBatch)
}
