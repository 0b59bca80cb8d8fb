package sens

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"

	"github.com/nudge-dev/nudge/sens/syntax"
	"gonum.org/v1/gonum/stat/distuv"
)

// This file holds what the sampling analyses (Simulate, Sobol, Morris,
// Screen) share: which inputs can be sampled, random draws from each
// distribution through gonum's stat/distuv, and the seeded random streams
// that make a result the same whatever the number of goroutines.

// randDist is a distribution that draws its own random values from a
// source through gonum's stat/distuv. A Dist without it is drawn by inverse
// transform, Quantile(u).
type randDist interface {
	rander(src rand.Source) distuv.Rander
}

// The uniform and triangular distributions are drawn by inverse transform
// through gonum's closed-form quantiles (cheaper than their Rand methods,
// with the same result in distribution).
func (d uniformDist) rander(src rand.Source) distuv.Rander {
	return quantileRander{d: d, rnd: rand.New(src)}
}

func (d triangularDist) rander(src rand.Source) distuv.Rander {
	return quantileRander{d: d, rnd: rand.New(src)}
}

func (d normalDist) rander(src rand.Source) distuv.Rander {
	return distuv.Normal{Mu: d.Mu, Sigma: d.Sigma, Src: src}
}

func (d lognormalDist) rander(src rand.Source) distuv.Rander {
	return distuv.LogNormal{Mu: d.Mu, Sigma: d.Sigma, Src: src}
}

// pertRander draws a + (b-a)·B with B ~ Beta(alpha, beta), the beta-PERT.
type pertRander struct {
	beta distuv.Beta
	a, w float64
}

func (r pertRander) Rand() float64 { return r.a + r.w*r.beta.Rand() }

func (d pertDist) rander(src rand.Source) distuv.Rander {
	b := d.beta
	b.Src = src
	return pertRander{beta: b, a: d.a, w: d.b - d.a}
}

// quantileRander draws from any Dist by inverse transform: x = Q(u), u
// uniform on (0, 1). The truncated normal is drawn this way, through
// distuv.UnitNormal's quantile.
type quantileRander struct {
	d   Dist
	rnd *rand.Rand
}

func (r quantileRander) Rand() float64 {
	u := r.rnd.Float64()
	for u == 0 {
		u = r.rnd.Float64()
	}
	return r.d.Quantile(u)
}

// samplingDist returns the distribution an input is sampled from: its own,
// or uniform over its range when it has only a range (fromRange is then
// true). An input with neither has no sampling distribution (nil).
func samplingDist(in *Input) (d Dist, fromRange bool) {
	switch {
	case in.Dist != nil:
		return in.Dist, false
	case in.Source == RangeDefault || !(in.Low < in.High):
		return nil, false
	}
	return uniformDist{distuv.Uniform{Min: in.Low, Max: in.High}}, true
}

// newRander returns a sampler of d drawing from src.
func newRander(d Dist, src rand.Source) distuv.Rander {
	if rd, ok := d.(randDist); ok {
		return rd.rander(src)
	}
	return quantileRander{d: d, rnd: rand.New(src)}
}

// sampled holds the sampling distribution of every input of a problem.
type sampled struct {
	dists []Dist
	// fromRange names the inputs sampled uniformly over their range, having
	// no distribution.
	fromRange []string
}

// samplingDists returns the sampling distribution of each input of p. An
// input with neither a distribution nor a range is an error placed at its
// declaration, naming the analysis (verb) that needs it.
func samplingDists(p *Problem, verb string) (*sampled, error) {
	if len(p.Inputs) == 0 {
		return nil, fmt.Errorf("%s %s: the output depends on no input, so there is nothing to vary", verb, p.Output)
	}
	s := &sampled{dists: make([]Dist, len(p.Inputs))}
	var errs syntax.ErrorList
	for i, in := range p.Inputs {
		d, fromRange := samplingDist(in)
		if d == nil {
			errs = append(errs, in.errorAt(fmt.Sprintf("%s has neither a distribution nor a range, so %s cannot vary it: give it one, such as %s, or hold it fixed by writing it as a formula, %s = %s",
				in.Name, verb, suggestSpread(in), in.Name, inputValueText(in))))
			continue
		}
		if fromRange {
			s.fromRange = append(s.fromRange, in.Name)
		}
		s.dists[i] = d
	}
	if len(errs) > 0 {
		errs.Sort()
		return nil, errs.Err()
	}
	return s, nil
}

// suggestSpread suggests a distribution or range for an input that has
// neither.
func suggestSpread(in *Input) string {
	if in.Value == 0 {
		return "(-1..1)"
	}
	return fmt.Sprintf("~ normal(%s, %s) or (±10%%)", literal(in.Value), literal(0.1*math.Abs(in.Value)))
}

// literal writes v as a number of the model language, in full.
func literal(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// inputValueText writes an input's value as it could be declared: 50000 [$].
func inputValueText(in *Input) string {
	s := literal(in.Value)
	if in.Unit != "" {
		s += " [" + in.Unit + "]"
	}
	return s
}

// errorAt returns msg as an error placed at the input's declaration, with
// its source line when known.
func (in *Input) errorAt(msg string) *syntax.Error {
	e := &syntax.Error{Pos: in.Pos, Msg: msg}
	if in.file != nil {
		e.Source = in.file.Line(in.Pos.Line)
	}
	return e
}

// RangeNotice is the notice of an analysis that samples inputs with only a
// range uniformly over it.
func RangeNotice(names []string) string {
	if len(names) == 0 {
		return ""
	}
	verb := "have"
	if len(names) == 1 {
		verb = "has"
	}
	return fmt.Sprintf("%s %s a range but no distribution: sampled uniformly over the range", shortList(compactElements(names), 8), verb)
}

// ---- random streams

// Purposes of the random streams of an analysis, so that no two uses of one
// seed draw the same numbers.
const (
	streamSimulate uint64 = iota + 1
	streamCorrelated
	streamScores
	streamBootstrap
	streamMorris
	streamScreen
	streamShift
)

// splitmix64 is the output function of Steele, Lea and Flood's SplitMix64
// generator (OOPSLA 2014): a bijective mix of 64 bits.
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ x>>30) * 0xbf58476d1ce4e5b9
	x = (x ^ x>>27) * 0x94d049bb133111eb
	return x ^ x>>31
}

// seedStream seeds pcg with the stream of (seed, purpose, block, column):
// every block of samples and every input draws from a stream of its own,
// so results do not depend on which goroutine drew what, or in what order.
func seedStream(pcg *rand.PCG, seed, purpose, block, column uint64) {
	h := splitmix64(seed)
	h = splitmix64(h ^ purpose)
	h = splitmix64(h ^ block)
	h = splitmix64(h ^ column)
	pcg.Seed(h, splitmix64(h^0x5851f42d4c957f2d))
}

// drawer draws chunks of samples of a problem's inputs, every input of every
// chunk from a random stream of its own: seedStream(seed, purpose, chunk,
// input). A drawer is used by one goroutine.
type drawer struct {
	seed, purpose uint64
	pcg           rand.PCG
	r             []distuv.Rander
	column        []float64
}

func newDrawer(dists []Dist, seed, purpose uint64, rows int) *drawer {
	d := &drawer{seed: seed, purpose: purpose, column: make([]float64, rows), r: make([]distuv.Rander, len(dists))}
	for i, x := range dists {
		d.r[i] = newRander(x, &d.pcg)
	}
	return d
}

// draw returns the m values of input i in chunk c, in a buffer that the
// next call reuses.
func (d *drawer) draw(c, i, m int) []float64 {
	col := d.column[:m]
	d.drawTo(col, c, i)
	return col
}

// drawTo fills col with the first len(col) values of input i in chunk c.
func (d *drawer) drawTo(col []float64, c, i int) {
	seedStream(&d.pcg, d.seed, d.purpose, uint64(c), uint64(i))
	d.fill(col, i)
}

// drawInto fills dst with input i's values of chunk c, in pieces, calling
// stop between them; the values are those draw would give.
func (d *drawer) drawInto(dst []float64, c, i int, stop func() error) error {
	seedStream(&d.pcg, d.seed, d.purpose, uint64(c), uint64(i))
	for start := 0; start < len(dst); start += 1 << 16 {
		if err := stop(); err != nil {
			return err
		}
		d.fill(dst[start:min(len(dst), start+1<<16)], i)
	}
	return nil
}

// fill fills col with the next values of input i from the stream d.pcg.
// The distributions of the language are drawn through calls the compiler
// can resolve (and inline): the same gonum methods, the same stream and the
// same values as through the distuv.Rander interface, without an indirect
// call for every value and every random number. A uniform or triangular
// distribution is drawn by inverse transform exactly as quantileRander does.
func (d *drawer) fill(col []float64, i int) {
	switch r := d.r[i].(type) {
	case quantileRander:
		switch q := r.d.(type) {
		case uniformDist:
			for j := range col {
				col[j] = q.Quantile(d.unit())
			}
		case triangularDist:
			for j := range col {
				col[j] = q.Triangle.Quantile(d.unit())
			}
		default:
			for j := range col {
				col[j] = q.Quantile(d.unit())
			}
		}
	case distuv.Normal:
		for j := range col {
			col[j] = r.Rand()
		}
	case distuv.LogNormal:
		for j := range col {
			col[j] = r.Rand()
		}
	case pertRander:
		for j := range col {
			col[j] = r.Rand()
		}
	default:
		for j := range col {
			col[j] = r.Rand()
		}
	}
}

// unit returns the next uniform variate on (0, 1) of d.pcg as
// quantileRander.Rand draws it: rand.Rand's Float64 of the stream, drawn
// again when 0.
func (d *drawer) unit() float64 {
	for {
		// (*rand.Rand).Float64: a multiple of 2^-53 in [0, 1).
		if u := float64(d.pcg.Uint64()<<11>>11) / (1 << 53); u != 0 {
			return u
		}
	}
}

// scatter writes col as column i of the rows of k values in xs.
func scatter(xs, col []float64, i, k int) {
	for j, v := range col {
		xs[j*k+i] = v
	}
}
