package sens

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/integrate/quad"

	"github.com/nudge-dev/nudge/sens/tapebench"
)

// attributeSrc compiles src and attributes output out between the
// scenarios from and to (either may be "base").
func attributeSrc(t *testing.T, src, out, from, to string) *AttributeResult {
	t.Helper()
	m, err := LoadModel("test", []byte(src))
	if err != nil {
		t.Fatalf("load: %v", err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatalf("compile: %v", err)
	}
	pr, err := p.Problem(out)
	if err != nil {
		t.Fatal(err)
	}
	s := &AttributeSettings{From: m.Scenario(from), To: m.Scenario(to)}
	res, err := Attribute(pr, s)
	if err != nil {
		t.Fatalf("attribute %s from %s to %s: %v", out, from, to, err)
	}
	return res
}

func contribution(t *testing.T, r *AttributeResult, name string) float64 {
	t.Helper()
	for _, c := range r.Inputs {
		if c.Name == name {
			return c.Value
		}
	}
	t.Fatalf("no contribution of %s in %+v", name, r.Inputs)
	return 0
}

// A linear model: each input's contribution is its coefficient times its
// change, exactly (Aumann & Shapley 1974: the attribution of an additive
// function is its terms).
func TestAttributeLinear(t *testing.T) {
	r := attributeSrc(t, `
input x = 2
input y = 5
input z = -1
input w = 7
f = 3 * x + 0.5 * y - 2 * z + 4 * w + 10
scenario s: x = 4.5, y = 1, z = 3
`, "f", "base", "s")
	for _, tc := range []struct {
		name string
		want float64
	}{
		{"x", 3 * 2.5}, {"y", 0.5 * -4}, {"z", -2 * 4},
	} {
		if got := contribution(t, r, tc.name); !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-12, 1e-12) {
			t.Errorf("%s contributes %v, want %v", tc.name, got, tc.want)
		}
	}
	if r.Unchanged != 1 || len(r.Inputs) != 3 {
		t.Errorf("w unchanged: %d unchanged, %d listed", r.Unchanged, len(r.Inputs))
	}
	if !r.Met || math.Abs(r.Residual) > 1e-12 || r.Change != 3*2.5+0.5*-4-2*4 {
		t.Errorf("residual %v, change %v, met %v", r.Residual, r.Change, r.Met)
	}
	// Sorted by |contribution|: z (-8), x (7.5), y (-2).
	if r.Inputs[0].Name != "z" || r.Inputs[1].Name != "x" || r.Inputs[2].Name != "y" {
		t.Errorf("order %v", r.Inputs)
	}
}

// f = x·y from (x0, y0) to (x1, y1): x's share is (x1 − x0)(y0 + y1)/2,
// y's is (y1 − y0)(x0 + x1)/2 (the integral of a linear integrand; closed
// form, and the two-player Shapley value).
func TestAttributeProduct(t *testing.T) {
	r := attributeSrc(t, `
input x = 3 [h]
input y = 40 [$/h]
f = x * y
scenario later: x = 4.25 [h], y = 52.5 [$/h]
`, "f", "base", "later")
	x0, x1, y0, y1 := 3.0, 4.25, 40.0, 52.5
	if got, want := contribution(t, r, "x"), (x1-x0)*(y0+y1)/2; !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-12) {
		t.Errorf("x: %v, want %v", got, want)
	}
	if got, want := contribution(t, r, "y"), (y1-y0)*(x0+x1)/2; !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-12) {
		t.Errorf("y: %v, want %v", got, want)
	}
	if r.Unit != "$" || r.Inputs[0].Unit != "h" && r.Inputs[1].Unit != "h" {
		t.Errorf("units: %s, %+v", r.Unit, r.Inputs)
	}
	// Backwards, every contribution changes sign.
	back := attributeSrc(t, "input x = 3 [h]\ninput y = 40 [$/h]\nf = x * y\nscenario later: x = 4.25 [h], y = 52.5 [$/h]\n", "f", "later", "base")
	if got, want := contribution(t, back, "x"), -(x1-x0)*(y0+y1)/2; !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-12) {
		t.Errorf("x backwards: %v, want %v", got, want)
	}
}

// On multilinear models (sums of quantity × price × factor terms over
// random subsets of k ≤ 10 inputs), the attribution equals the Shapley
// value of the game whose players switch their inputs from a to b, by
// enumerating all 2^k coalitions (Owen 1972, "Multilinear extensions of
// games": the path integral of the multilinear extension's gradient along
// the diagonal is the Shapley value).
func TestAttributeMultilinearShapley(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 1))
	for trial := range 12 {
		k := 2 + rng.IntN(9) // 2..10 inputs
		type term struct {
			coef float64
			vars []int
		}
		var terms []term
		for range 1 + rng.IntN(6) {
			tm := term{coef: math.Round(rng.Float64()*200-100) / 10}
			for _, i := range rng.Perm(k)[:1+rng.IntN(k)] {
				tm.vars = append(tm.vars, i)
			}
			terms = append(terms, tm)
		}
		a, b := make([]float64, k), make([]float64, k)
		var src, sc strings.Builder
		for i := range k {
			a[i] = math.Round(rng.Float64()*100)/10 + 0.5
			b[i] = math.Round(rng.Float64()*100)/10 + 0.5
			fmt.Fprintf(&src, "input x%d = %v\n", i, a[i])
			if i > 0 {
				sc.WriteString(", ")
			}
			fmt.Fprintf(&sc, "x%d = %v", i, b[i])
		}
		var parts []string
		for _, tm := range terms {
			p := strconv.FormatFloat(tm.coef, 'g', -1, 64)
			for _, v := range tm.vars {
				p += fmt.Sprintf(" * x%d", v)
			}
			parts = append(parts, "("+p+")")
		}
		fmt.Fprintf(&src, "f = %s + 1\nscenario s: %s\n", strings.Join(parts, " + "), sc.String())
		f := func(x []float64) float64 {
			s := 1.0
			for _, tm := range terms {
				p := tm.coef
				for _, v := range tm.vars {
					p *= x[v]
				}
				s += p
			}
			return s
		}
		// v(S): the inputs in S at b, the others at a.
		v := make([]float64, 1<<k)
		x := make([]float64, k)
		for S := range v {
			for i := range k {
				x[i] = a[i]
				if S&(1<<i) != 0 {
					x[i] = b[i]
				}
			}
			v[S] = f(x)
		}
		fact := func(n int) float64 { return math.Gamma(float64(n + 1)) }
		r := attributeSrc(t, src.String(), "f", "base", "s")
		for i := range k {
			phi := 0.0
			for S := range v {
				if S&(1<<i) != 0 {
					continue
				}
				n := popcount(S)
				phi += fact(n) * fact(k-n-1) / fact(k) * (v[S|1<<i] - v[S])
			}
			got := 0.0
			name := fmt.Sprintf("x%d", i)
			for _, c := range r.Inputs {
				if c.Name == name {
					got = c.Value
				}
			}
			// An input no term uses is outside the problem; its Shapley value is 0.
			if !scalar.EqualWithinAbsOrRel(got, phi, 1e-9*max(1, math.Abs(r.Change)), 1e-9) {
				t.Errorf("trial %d (k=%d) %s: %v, Shapley value %v\n%s", trial, k, name, got, phi, src.String())
			}
		}
		if !r.Met || r.ResidualRel > 1e-9 {
			t.Errorf("trial %d: residual %v (rel %v)", trial, r.Residual, r.ResidualRel)
		}
	}
}

func popcount(s int) int {
	n := 0
	for ; s != 0; s &= s - 1 {
		n++
	}
	return n
}

// A smooth nonlinear model against gonum's own Gauss–Legendre rule with
// 200 points applied to the analytic partial derivatives:
// f = exp(x·y/10) + x/y, ∂f/∂x = y/10·exp(x·y/10) + 1/y,
// ∂f/∂y = x/10·exp(x·y/10) − x/y².
func TestAttributeSmoothAgainstGonum(t *testing.T) {
	r := attributeSrc(t, `
input x = 1.5
input y = 2
f = exp(x * y / 10) + x / y
scenario s: x = 4, y = 7.5
`, "f", "base", "s")
	x0, y0, x1, y1 := 1.5, 2.0, 4.0, 7.5
	at := func(t float64) (x, y float64) { return x0 + t*(x1-x0), y0 + t*(y1-y0) }
	cx := (x1 - x0) * quad.Fixed(func(t float64) float64 {
		x, y := at(t)
		return y/10*math.Exp(x*y/10) + 1/y
	}, 0, 1, 200, quad.Legendre{}, 0)
	cy := (y1 - y0) * quad.Fixed(func(t float64) float64 {
		x, y := at(t)
		return x/10*math.Exp(x*y/10) - x/(y*y)
	}, 0, 1, 200, quad.Legendre{}, 0)
	if got := contribution(t, r, "x"); !scalar.EqualWithinAbsOrRel(got, cx, 1e-10, 1e-10) {
		t.Errorf("x: %v, gonum %v", got, cx)
	}
	if got := contribution(t, r, "y"); !scalar.EqualWithinAbsOrRel(got, cy, 1e-10, 1e-10) {
		t.Errorf("y: %v, gonum %v", got, cy)
	}
	if !r.Met || len(r.Breaks) != 0 || !r.Quadrature.Converged {
		t.Errorf("met %v, breaks %v, quadrature %+v", r.Met, r.Breaks, r.Quadrature)
	}
}

// Kinks on the path: f = max(x, y) + abs(x - 3) from (1, 3) to (5, 2),
// x = 1 + 4t, y = 3 − t. max switches from y to x at t = 2/5 and abs turns
// at x = 3, t = 1/2. Piece by piece (hand integration): on [0, 2/5]
// f = y + 3 − x, on [2/5, 1/2] f = 3, on [1/2, 1] f = 2x − 3, so
// c_x = 4 (−1 · 2/5 + 0 · 1/10 + 2 · 1/2) = 2.4 and c_y = −1 · (1 · 2/5)
// = −0.4, which add up to f(b) − f(a) = 7 − 5 = 2.
func TestAttributeKinks(t *testing.T) {
	r := attributeSrc(t, `
input x = 1
input y = 3
f = max(x, y) + abs(x - 3)
scenario s: x = 5, y = 2
`, "f", "base", "s")
	if got := contribution(t, r, "x"); !scalar.EqualWithinAbsOrRel(got, 2.4, 1e-11, 1e-11) {
		t.Errorf("x: %v, want 2.4", got)
	}
	if got := contribution(t, r, "y"); !scalar.EqualWithinAbsOrRel(got, -0.4, 1e-11, 1e-11) {
		t.Errorf("y: %v, want -0.4", got)
	}
	if len(r.Breaks) != 2 || !r.Met {
		t.Fatalf("breaks %+v, met %v, residual %v", r.Breaks, r.Met, r.Residual)
	}
	for i, want := range []struct {
		t  float64
		at string
	}{{0.4, "test:4:5 max in f"}, {0.5, "test:4:17 abs in f"}} {
		br := r.Breaks[i]
		if br.Kind != "kink" || math.Abs(br.T-want.t) > 1e-12 || len(br.At) != 1 || br.At[0] != want.at {
			t.Errorf("break %d: %+v, want a kink at t = %v at %s", i, br, want.t, want.at)
		}
	}
}

// A step on the path: the output jumps by 10 where x passes 2, which no
// derivative sees: the residual is the jump, reported, not met.
func TestAttributeStep(t *testing.T) {
	r := attributeSrc(t, `
input x = 1
input y = 1
f = if(x > 2, 10, 0) + x * y
scenario s: x = 3, y = 2
`, "f", "base", "s")
	if len(r.Breaks) != 1 || r.Breaks[0].Kind != "step" || !scalar.EqualWithinAbsOrRel(r.Breaks[0].Jump, 10, 1e-9, 1e-9) {
		t.Fatalf("breaks %+v", r.Breaks)
	}
	if !strings.HasPrefix(r.Breaks[0].At[0], "test:4:") || math.Abs(r.Breaks[0].T-0.5) > 1e-12 {
		t.Errorf("break at %+v", r.Breaks[0])
	}
	if r.Met || !scalar.EqualWithinAbsOrRel(r.Residual, 10, 1e-9, 1e-9) || r.Jumps != r.Breaks[0].Jump {
		t.Errorf("residual %v, jumps %v, met %v", r.Residual, r.Jumps, r.Met)
	}
	// x·y alone: x contributes (3 − 1)(1 + 2)/2 = 3 (closed form above).
	if got := contribution(t, r, "x"); !scalar.EqualWithinAbsOrRel(got, 3, 1e-11, 1e-11) {
		t.Errorf("x: %v, want 3", got)
	}
}

func TestAttributeErrors(t *testing.T) {
	m, err := LoadModel("test", []byte("input x = 1\ninput y = 2\nf = sqrt(x - y + 2)\ng = x\nscenario s: y = 2\nscenario far: y = 9, x = 1\n"))
	if err != nil {
		t.Fatal(err)
	}
	p, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := p.Problem("f")
	if _, err := Attribute(pr, &AttributeSettings{To: m.Scenario("s")}); !errors.Is(err, ErrNoChange) || !strings.Contains(err.Error(), "base and s set every input of f alike") {
		t.Errorf("no change: %v", err)
	}
	// sqrt(x - y + 2) leaves its domain at y = 3, a seventh of the way.
	_, err = Attribute(pr, &AttributeSettings{To: m.Scenario("far")})
	var ee *EvalError
	if !errors.As(err, &ee) || ee.Pos.Line != 3 || !strings.Contains(ee.Msg, "on the path from base to far") {
		t.Errorf("domain error on the path: %v", err)
	}
	if _, err := Attribute(pr, nil); err == nil {
		t.Error("nil settings: no error")
	}
}

// attributionCorpus is every model of the sens tests that compiles: the
// models of the compiler, scenario and line-item tests, the seeds of
// FuzzCompile, the fuzz corpus kept in testdata, the scale benchmark's
// model with max and if, and the demo notebook's model.
func attributionCorpus(t *testing.T) map[string]*Program {
	progs := map[string]*Program{}
	srcs := map[string]string{
		"design": designModel, "shop": shop,
		"squares": "input a = 1 [kg] (±5%) ~ normal(1, 0.1)\nb = a^2 [kg^2]\nc = sqrt(b) + a",
		"econ":    "input r = 0.1\nx = recovery(r, 5) + learn(100 [$], 0.8, 4) / 1 [$]",
		"if":      "input t = 90 [min]\ninput w = 60 [$/h]\nc = if(t > 1 [h] and not w < 1 [$/h], t * w, 0 [$])",
		"scale":   string(tapebench.ScaleModel(400, true, 3)),
		"kinks":   "input a = 3 (1..6)\ninput b = 4 (2..5)\nc = max(a, b) * min(a, 5) + abs(a - 4) + b^2 / a",
	}
	if b, err := os.ReadFile("../notebooks/housing.nudge"); err == nil {
		srcs["housing"] = string(b)
	}
	files, _ := filepath.Glob("testdata/fuzz/FuzzCompile/*")
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.SplitN(string(b), "\n", 2)
		if len(lines) < 2 {
			continue
		}
		s := strings.TrimSpace(lines[1])
		s = strings.TrimSuffix(strings.TrimPrefix(s, "string("), ")")
		if u, err := strconv.Unquote(s); err == nil {
			srcs["fuzz/"+filepath.Base(f)] = u
		}
	}
	for name, src := range srcs {
		m, err := LoadModel(name, []byte(src))
		if err != nil {
			continue
		}
		p, err := m.Compile()
		if err != nil || p.Check() != nil {
			continue
		}
		progs[name] = p
	}
	p, _ := loadBid(t, 40, lineItemModel)
	progs["line items"] = p
	return progs
}

// Additivity on every model of the corpus, nonlinear ones included: from
// the baseline to every input at the high end of its range, and to the
// low end, the contributions add up to the change within 1e-9 of it, less
// the jumps at steps, which are reported.
func TestAttributeCorpusAdditive(t *testing.T) {
	progs := attributionCorpus(t)
	if len(progs) < 8 {
		t.Fatalf("only %d models in the corpus", len(progs))
	}
	checked, kinks, steps := 0, 0, 0
	for name, p := range progs {
		for _, fm := range p.Formulas {
			pr, err := p.Problem(fm.Name)
			if err != nil || len(pr.Inputs) == 0 {
				continue
			}
			for _, end := range []string{"high", "low"} {
				x := pr.Baseline()
				for i, in := range pr.Inputs {
					lo, hi := in.Low, in.High
					if lo == hi { // no range: ±10%, as the tornado does
						lo, hi = in.Value-0.1*math.Abs(in.Value), in.Value+0.1*math.Abs(in.Value)
					}
					x[i] = hi
					if end == "low" {
						x[i] = lo
					}
				}
				r, err := Attribute(pr, &AttributeSettings{FromPoint: pr.Baseline(), ToPoint: x})
				var ee *EvalError
				switch {
				case errors.Is(err, ErrNoChange), errors.As(err, &ee):
					continue // nothing moves, or the path leaves the domain: reported, not attributed
				case err != nil:
					t.Errorf("%s: %s to %s ends: %v", name, fm.Name, end, err)
					continue
				}
				sum := 0.0
				for _, c := range r.Inputs {
					sum += c.Value
				}
				den := max(math.Abs(r.Change), 1e-300)
				if got := math.Abs(r.Change - r.Jumps - sum); got > 1e-9*den && got > r.RoundingLevel {
					t.Errorf("%s: %s to the %s ends: contributions %v + jumps %v, change %v (relative residual %v; breaks %+v)",
						name, fm.Name, end, sum, r.Jumps, r.Change, got/den, r.Breaks)
				}
				if r.Jumps == 0 && !r.Met {
					t.Errorf("%s: %s: not met without steps: %+v", name, fm.Name, r)
				}
				checked++
				for _, br := range r.Breaks {
					if br.Kind == "step" {
						steps++
					} else {
						kinks++
					}
				}
			}
		}
	}
	t.Logf("%d attributions over %d models, across %d kinks and %d steps", checked, len(progs), kinks, steps)
	if kinks == 0 || steps == 0 {
		t.Errorf("the corpus crossed %d kinks and %d steps: it should cross both", kinks, steps)
	}
}

// A kink of a vector's max (a loop node): raising one line's quantity far
// enough makes it the most expensive line part of the way along.
func TestAttributeVectorMax(t *testing.T) {
	p, _ := loadBid(t, 40, lineItemModel)
	pr, err := p.Problem("most")
	if err != nil {
		t.Fatal(err)
	}
	x0 := pr.Baseline()
	x1 := pr.Baseline()
	moved := ""
	for i, in := range pr.Inputs {
		if strings.HasPrefix(in.Name, "qty[") {
			x1[i] *= 1000
			moved = in.Name
			break
		}
	}
	r, err := Attribute(pr, &AttributeSettings{FromPoint: x0, ToPoint: x1})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Breaks) != 1 || r.Breaks[0].Kind != "kink" || !strings.Contains(r.Breaks[0].At[0], "max in most") || !r.Met {
		t.Fatalf("moving %s: breaks %+v, met %v, residual %v", moved, r.Breaks, r.Met, r.Residual)
	}
	// After the switch the line's cost is linear in its quantity, and
	// before it the maximum does not depend on it, so the line's
	// contribution is what its cost gains from the switch on: the whole
	// change (a check by hand of the piecewise-linear path).
	if got := contribution(t, r, moved); !scalar.EqualWithinAbsOrRel(got, r.Change, 1e-9, 1e-9) {
		t.Errorf("%s contributes %v of a change of %v", moved, got, r.Change)
	}
}

// A function of plain Go (no pieces to compare) and a stopped context.
func TestAttributeFuncAndStop(t *testing.T) {
	// f = x² y: along x = 1 + t, y = 2 + 2t, ∂f/∂x·dx = 2xy = 4(1+t)², and
	// ∂f/∂y·dy = 2x² = 2(1+t)²; integrated (closed form): c_x = 4·7/3 = 28/3,
	// c_y = 2·7/3 = 14/3, adding up to f(2, 4) − f(1, 2) = 16 − 2 = 14.
	f := FuncOf(2, func(x []float64) float64 { return x[0] * x[0] * x[1] },
		func(dst, x []float64) { dst[0], dst[1] = 2*x[0]*x[1], x[0]*x[0] })
	pr := &Problem{Output: "f", F: f, Inputs: []*Input{NewInput("x", 1, 0, 2, nil), NewInput("y", 2, 1, 3, nil)}}
	r, err := Attribute(pr, &AttributeSettings{FromPoint: []float64{1, 2}, ToPoint: []float64{2, 4}})
	if err != nil {
		t.Fatal(err)
	}
	if got := contribution(t, r, "x"); !scalar.EqualWithinAbsOrRel(got, 28.0/3, 1e-12, 1e-12) {
		t.Errorf("x: %v, want 28/3", got)
	}
	if got := contribution(t, r, "y"); !scalar.EqualWithinAbsOrRel(got, 14.0/3, 1e-12, 1e-12) {
		t.Errorf("y: %v, want 14/3", got)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err = Attribute(pr, &AttributeSettings{Settings: Settings{Ctx: ctx}, FromPoint: []float64{1, 2}, ToPoint: []float64{2, 4}})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("stopped: %v", err)
	}
}
