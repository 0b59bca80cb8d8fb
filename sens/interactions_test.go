package sens

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// ishigamiAt is the Ishigami function (a = 7, b = 0.1) with its baseline
// at (x1, x2, x3) and the usual ranges [-π, π].
func ishigamiAt(x1, x2, x3 float64) string {
	return strings.NewReplacer("X1", ishNum(x1), "X2", ishNum(x2), "X3", ishNum(x3)).Replace(`
input x1 = X1 (-3.141592653589793..3.141592653589793)
input x2 = X2 (-3.141592653589793..3.141592653589793)
input x3 = X3 (-3.141592653589793..3.141592653589793)
y = sin(x1) + 7 * sin(x2)^2 + 0.1 * x3^4 * sin(x1)
`)
}

func ishNum(x float64) string { return strings.TrimRight(strings.TrimRight(ishFormat(x), "0"), ".") }

func ishFormat(x float64) string { return strconv.FormatFloat(x, 'f', 17, 64) }

// On the Ishigami function only x1 and x3 interact: the mixed partial
// ∂²y/∂x1∂x3 = 4·b·x3³·cos x1, while ∂²y/∂x1∂x2 and ∂²y/∂x2∂x3 are
// identically 0 — the pattern of its second-order Sobol' indices, S13 =
// 0.2437 and S12 = S23 = 0 (Ishigami & Homma 1990; S13 = total − first
// order of x3, 0.2437 − 0). The curvatures are the closed forms
// -sin x1 (1 + b x3⁴), 2a cos 2x2 and 12 b x3² sin x1.
func TestInteractionsIshigami(t *testing.T) {
	const a, b = 7, 0.1
	w := 2 * math.Pi
	r := rand.New(rand.NewPCG(1990, 14))
	for range 10 {
		x1, x2, x3 := -3+6*r.Float64(), -3+6*r.Float64(), -3+6*r.Float64()
		p := problemOf(t, ishigamiAt(x1, x2, x3), "y")
		res, err := Interactions(p, nil)
		if err != nil {
			t.Fatal(err)
		}
		if res.PairsNonzero != 1 || res.PairsZero != 2 {
			t.Errorf("at (%.3g, %.3g, %.3g): %d pairs nonzero, %d zero; want 1 and 2", x1, x2, x3, res.PairsNonzero, res.PairsZero)
		}
		got := map[string]InteractionPair{}
		for _, pr := range res.Pairs {
			got[pr.A+"-"+pr.B] = pr
		}
		want := 4 * b * x3 * x3 * x3 * math.Cos(x1)
		if pr := got["x1-x3"]; !scalar.EqualWithinAbsOrRel(pr.Mixed, want, 1e-13, 1e-12) || !scalar.EqualWithinAbsOrRel(pr.Scaled, want*w*w, 1e-12, 1e-12) {
			t.Errorf("x1-x3: mixed %v scaled %v, want %v and %v", pr.Mixed, pr.Scaled, want, want*w*w)
		}
		// Each input interacts with another exactly when its published
		// total-order index exceeds its first-order one (Ishigami & Homma
		// 1990: total 0.5576, 0.4424, 0.2437; first 0.3139, 0.4424, 0).
		interactsGlobally := map[string]bool{"x1": 0.5576-0.3139 > 0.001, "x2": 0.4424-0.4424 > 0.001, "x3": 0.2437-0 > 0.001}
		interactsHere := map[string]bool{}
		for _, pr := range res.Pairs {
			if pr.Mixed != 0 {
				interactsHere[pr.A], interactsHere[pr.B] = true, true
			}
		}
		for _, in := range []string{"x1", "x2", "x3"} {
			if interactsHere[in] != interactsGlobally[in] {
				t.Errorf("%s: interacts at the baseline %v, by the published indices %v", in, interactsHere[in], interactsGlobally[in])
			}
		}
		if res.Pairs[0].A != "x1" || res.Pairs[0].B != "x3" {
			t.Errorf("first pair %s-%s, want x1-x3", res.Pairs[0].A, res.Pairs[0].B)
		}
		for _, k := range []string{"x1-x2", "x2-x3"} {
			if pr, ok := got[k]; !ok || pr.Mixed != 0 {
				t.Errorf("%s: %+v, want a mixed partial of exactly 0", k, pr)
			}
		}
		curv := map[string]float64{}
		for _, c := range res.Curvatures {
			curv[c.Name] = c.Second
		}
		for name, want := range map[string]float64{
			"x1": -math.Sin(x1) * (1 + b*math.Pow(x3, 4)),
			"x2": 2 * a * math.Cos(2*x2),
			"x3": 12 * b * x3 * x3 * math.Sin(x1),
		} {
			if !scalar.EqualWithinAbsOrRel(curv[name], want, 1e-12, 1e-12) {
				t.Errorf("curvature of %s: %v, want %v", name, curv[name], want)
			}
		}
	}
}

// For a product the scaled interaction is the corner difference
// y(hi, hi) − y(hi, lo) − y(lo, hi) + y(lo, lo) exactly (a bilinear
// function; common practice), and the mixed partial of minutes times $/h
// is in the users' units: 1/60 $ per min per $/h. The curvature of k is
// 2 t r = 2 · 30 $.
func TestInteractionsBilinearUnits(t *testing.T) {
	p := problemOf(t, `
input t = 30 [min] (20..45)
input r = 60 [$/h] (50..80)
input k = 2 (±10%)
cost = t * r * (1 + (k - 2)^2) [$]
`, "cost")
	res, err := Interactions(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	pr := res.Pairs[0]
	if pr.A != "t" || pr.B != "r" {
		t.Fatalf("first pair %+v, want r and t", pr)
	}
	corner := func(tv, rv float64) float64 { return tv / 60 * rv }
	want := corner(45, 80) - corner(45, 50) - corner(20, 80) + corner(20, 50)
	if !scalar.EqualWithinAbsOrRel(pr.Scaled, want, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(pr.Mixed, 1.0/60, 1e-15, 1e-12) {
		t.Errorf("t-r: mixed %v scaled %v, want 1/60 and %v", pr.Mixed, pr.Scaled, want)
	}
	if len(res.DefaultRanges) != 0 {
		t.Errorf("default ranges %v", res.DefaultRanges)
	}
	for _, c := range res.Curvatures {
		if c.Name == "k" && !scalar.EqualWithinAbsOrRel(c.Second, 60, 1e-15, 1e-12) {
			t.Errorf("curvature of k: %v, want 2 · 30 $", c.Second)
		}
	}
}

// The mixed partials of random compiled models with units against gonum
// fd.Hessian of the problem's function (relative 1e-5).
func TestInteractionsAgainstFD(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 14))
	forms := []string{
		"a * b + c", "a * exp(b / 10) * c", "ln(a + b) * c^2", "sqrt(a * b) + c / a",
		"growth(a / 100, b) * c", "recovery(a / 200, c) * b", "learn(a, 0.85, b + 1) * c",
		"atan(a - b) * c", "a / (b + c) + sin(a * c)", "learn_total(c, 0.8, a + 1)",
	}
	for trial := range 20 {
		src := "input a = A (1..6)\ninput b = B (2..9)\ninput c = C (±20%)\ny = F\n"
		src = strings.NewReplacer("A", ishNum(1+4*r.Float64()), "B", ishNum(2+6*r.Float64()), "C", ishNum(0.5+2*r.Float64()),
			"F", forms[trial%len(forms)]).Replace(src)
		p := problemOf(t, src, "y")
		res, err := Interactions(p, nil)
		if err != nil {
			t.Fatalf("%s: %v", src, err)
		}
		x := p.Baseline()
		var ref mat.SymDense
		f := func(u []float64) float64 {
			v, err := p.F.Eval(u)
			if err != nil {
				return math.NaN()
			}
			return v
		}
		fd.Hessian(&ref, f, x, &fd.Settings{Formula: fd.Central, Step: 1e-4})
		idx := map[string]int{}
		for i, in := range p.Inputs {
			idx[in.Name] = i
		}
		scale := 0.0
		for i := range x {
			for j := range x {
				scale = math.Max(scale, math.Abs(ref.At(i, j)))
			}
		}
		for _, pr := range res.Pairs {
			want := ref.At(idx[pr.A], idx[pr.B])
			if !scalar.EqualWithinAbsOrRel(pr.Mixed, want, 1e-5*math.Max(1, scale), 1e-5) {
				t.Errorf("%s: d2y/d%s d%s = %.10g, fd.Hessian %.10g", src, pr.A, pr.B, pr.Mixed, want)
			}
		}
		for _, c := range res.Curvatures {
			want := ref.At(idx[c.Name], idx[c.Name])
			if !scalar.EqualWithinAbsOrRel(c.Second, want, 1e-5*math.Max(1, scale), 1e-5) {
				t.Errorf("%s: d2y/d%s2 = %.10g, fd.Hessian %.10g", src, c.Name, c.Second, want)
			}
		}
	}
}

// A kink at the baseline is reported at its line and column, with the
// formula; the numbers follow the branch taken.
func TestInteractionsNotSmooth(t *testing.T) {
	p := problemOf(t, `
input a = 3 (1..5)
input b = 3 (1..5)
input c = 2 (1..3)
m = max(a, b)
y = m * c
`, "y")
	res, err := Interactions(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.NotSmooth) != 1 || !strings.Contains(res.NotSmooth[0], ":5:5: max of two equal values (3): a kink in m") {
		t.Errorf("not smooth: %q, want the max at 5:5 in m", res.NotSmooth)
	}
}

// Columns beyond MaxColumns: the inputs of largest first-order swing are
// paired with every input.
func TestInteractionsMaxColumns(t *testing.T) {
	p := problemOf(t, `
input a = 1 (0..2)
input b = 1 (0..20)
input c = 0.05 (0..0.1)
input d = 1 (0..1)
y = a * b + c * d + b * d
`, "y")
	res, err := Interactions(p, &InteractionsSettings{MaxColumns: 1})
	if err != nil {
		t.Fatal(err)
	}
	if res.Columns != 1 || res.Inputs != 4 || res.PairsNonzero+res.PairsZero != 3 {
		t.Errorf("columns %d of %d inputs, pairs %d+%d: want b's column, 3 pairs", res.Columns, res.Inputs, res.PairsNonzero, res.PairsZero)
	}
	// b's swing is (a + d) · 20 = 40, the largest; its pairs: a-b 1 · 2 ·
	// 20 = 40, b-d 1 · 20 · 1 = 20, b-c 0.
	if res.Pairs[0].A != "a" || res.Pairs[0].B != "b" || res.Pairs[1].A != "b" || res.Pairs[1].B != "d" || res.Pairs[0].Scaled != 40 || res.Pairs[1].Scaled != 20 {
		t.Errorf("pairs %+v, want a-b 40 then b-d 20", res.Pairs)
	}
}

// TestInteractionsMapBeyondColumns: beyond MaxColumns the pair map shows the
// inputs of the strongest pairs, partners without a column included (their
// Hessian columns are taken for the map), not only inputs with columns,
// whose strongest pairs may all be with others. The model and its pairs are
// those of TestInteractionsMaxColumns (by hand: a-b 40, b-d 20, a-d 0).
func TestInteractionsMapBeyondColumns(t *testing.T) {
	p := problemOf(t, `
input a = 1 (0..2)
input b = 1 (0..20)
input c = 0.05 (0..0.1)
input d = 1 (0..1)
y = a * b + c * d + b * d
`, "y")
	res, err := Interactions(p, &InteractionsSettings{MaxColumns: 1})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(res.Map.Inputs, " "); got != "a b d" {
		t.Fatalf("map inputs %q, want a b d", got)
	}
	want := [][]float64{{0, 40, 0}, {40, 0, 20}, {0, 20, 0}}
	for r := range want {
		for c := range want[r] {
			if got := res.Map.Scaled[r][c]; got != want[r][c] {
				t.Errorf("map[%d][%d] = %g, want %g", r, c, got, want[r][c])
			}
		}
	}
}
