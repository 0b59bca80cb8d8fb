package sens

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestBreakevenRandomModels runs the break-even search over random formulas
// of one input, with poles, steps, domain edges and huge values among them,
// and checks every reported crossing against the definition of one (common
// practice): the output minus the target changes sign, or is 0, within a
// relative 3.6e-15 of it (16 units in the last place), and is small there beside its values sixteen times
// farther out, which a pole or a step is not. Every search must end, with
// a bounded number of evaluations.
func TestBreakevenRandomModels(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 11))
	leaves := []string{"x", "x", "x", "2", "0.5", "3", "1e6", "1e-6", "(x - 1.05000001)", "(x + 3)"}
	unary := []string{"sqrt", "ln", "exp", "tan", "abs", "floor", "sin"}
	var gen func(depth int) string
	gen = func(depth int) string {
		if depth == 0 || rng.IntN(4) == 0 {
			return leaves[rng.IntN(len(leaves))]
		}
		switch rng.IntN(6) {
		case 0:
			return unary[rng.IntN(len(unary))] + "(" + gen(depth-1) + ")"
		case 1:
			return fmt.Sprintf("if(x < %g, %s, %s)", float64(rng.IntN(5)), gen(depth-1), gen(depth-1))
		case 2:
			return "(" + gen(depth-1) + " / " + gen(depth-1) + ")"
		}
		return "(" + gen(depth-1) + " " + []string{"+", "-", "*"}[rng.IntN(3)] + " " + gen(depth-1) + ")"
	}
	checked := 0
	for n := 0; n < randomModels; n++ {
		expr := gen(3)
		if !strings.Contains(expr, "x") {
			continue
		}
		x0 := []float64{1, 0.5, 4, 1e-320, 1e300}[rng.IntN(5)]
		src := fmt.Sprintf("input x = %g (%g..%g)\ny = %s\n", x0, x0/2, x0*2, expr)
		m, err := LoadModel("test", []byte(src))
		if err != nil {
			continue
		}
		prog, err := m.Compile()
		if err != nil {
			continue
		}
		p, err := prog.Problem("y")
		if err != nil {
			continue
		}
		y0, err := p.F.Eval(p.Baseline())
		if err != nil {
			continue
		}
		target := y0 * []float64{0.5, 2, -1, 0}[rng.IntN(4)]
		r, err := Breakeven(p, &BreakevenSettings{Input: "x", Target: target})
		if err != nil {
			continue
		}
		if r.Evaluations > maxSearchEvals+maxRefine+10000 {
			t.Errorf("%q = %g: %d evaluations", expr, target, r.Evaluations)
		}
		f := func(v float64) (float64, bool) {
			y, err := p.F.Eval([]float64{v})
			return y - target, err == nil
		}
		for _, c := range r.Crossings {
			if c.Touch {
				continue
			}
			checked++
			g0, ok0 := f(c.Value)
			if ok0 && g0 == 0 {
				continue
			}
			// Where the output moves by more than 1 between neighbouring
			// values of x (tan of 1e299), float64 cannot say where it
			// crosses: not checkable.
			if math.Abs(c.Slope)*math.Abs(c.Value)*0x1p-52 > 1 {
				continue
			}
			// Nor can it say anything of sin or tan of numbers beyond 1e15,
			// whose neighbours are more than a period apart.
			if math.Abs(c.Value) > 1e15 && (strings.Contains(expr, "sin") || strings.Contains(expr, "tan")) {
				continue
			}
			h := 16 * 0x1p-52 * math.Abs(c.Value)           // 16 units in the last place
			h = math.Max(h, 16*math.SmallestNonzeroFloat64) // subnormal c
			gl, okl := f(c.Value - h)
			gr, okr := f(c.Value + h)
			fl, okfl := f(c.Value - 16*h)
			fr, okfr := f(c.Value + 16*h)
			if !okl || !okr || !okfl || !okfr {
				continue // at the edge of the domain: not checkable this way
			}
			// Where the slope moves g by more than 0.1 (or a tenth of the
			// target) over 16h, g need not be near linear there and the
			// check says nothing: tan(3/x) near x = 1e-14 turns through a
			// pole within 16 units in the last place.
			if math.Abs(c.Slope)*16*h > 0.1*math.Max(1, math.Abs(target)) {
				continue
			}
			near := math.Max(math.Abs(gl), math.Abs(gr))
			// A sign change within 16h (an output computed from x - 1e6 is a
			// staircase of steps 1.2e-10 wide, so it may change sign only
			// there).
			change := (gl <= 0) != (gr <= 0) || gl == 0 || gr == 0 || (fl <= 0) != (fr <= 0)
			// Continuous: |g| 16 times closer is at most half as large
			// (a linear g is a sixteenth), or within rounding.
			small := near <= 0.5*math.Max(math.Abs(fl), math.Abs(fr)) || near <= 1e-9*math.Abs(target)
			if !change || !small {
				t.Errorf("%q = %g (x0 %g): crossing at %.17g is not one: g(c∓h) = %g, %g; g(c∓16h) = %g, %g",
					expr, target, x0, c.Value, gl, gr, fl, fr)
			}
		}
	}
	t.Logf("%d crossings checked", checked)
	if checked < 50 {
		t.Errorf("only %d crossings checked", checked)
	}
}

// randomModels is the number of random formulas TestBreakevenRandomModels
// draws.
var randomModels = 300
