package sens

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// foldCorpus returns the models the folding tests compile: the demo model,
// every declaration of the tour notebook, the scale model with if, and a
// model that mixes scaled units in sums, products, quotients, powers,
// min, max and if.
func foldCorpus(t *testing.T) map[string]*Model {
	t.Helper()
	models := map[string]*Model{}
	declare := func(name, src string) {
		m := NewModel()
		f, stmts, err := syntax.Parse(name, []byte(src))
		if err != nil && name != "tour" {
			t.Fatalf("%s: %v", name, err)
		}
		for _, s := range stmts {
			switch s.(type) {
			case *syntax.InputStmt, *syntax.FormulaStmt:
				m.Define(f, s)
			}
		}
		models[name] = m
	}
	housing, err := os.ReadFile("../notebooks/housing.nudge")
	if err != nil {
		t.Fatal(err)
	}
	declare("housing", string(housing))
	var nb struct {
		Cells []struct {
			Type   string   `json:"cell_type"`
			Source []string `json:"source"`
		} `json:"cells"`
	}
	raw, err := os.ReadFile("../notebooks/tour.ipynb")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &nb); err != nil {
		t.Fatal(err)
	}
	// The tour's cells in order, each kept when the model still compiles
	// with it (cells that load a table file are left out).
	var tour string
	for _, c := range nb.Cells {
		if c.Type != "code" {
			continue
		}
		src := tour + strings.Join(c.Source, "") + "\n"
		declare("tour", src)
		if _, err := models["tour"].Compile(); err == nil {
			tour = src
		}
	}
	declare("tour", tour)
	declare("scale", string(tapebench.ScaleModel(2000, true, 3)))
	declare("mixed", `
input t   = 38 [min] (30..45)
input r   = 95 [$/h] (80..110)
input e   = 12 [kWh] (10..14)
input p   = 0.15 [$/kWh] (0.1..0.2)
input k   = 4 [%] (2..8)
input m   = 420 [g] (400..450)
input c   = 3.1 [$/kg] (2.7..4)
input d   = 2 [h] (1..3)
labour  = t * r
power   = e * p
waste   = m * c * k
time    = t + d
slow    = max(t, d / 4)
quick   = min(t * 2, d) * r
rate    = (labour + power) / time
sq      = sqrt(t * d) * r
big     = if(t > d / 3, labour, power) + waste / (1 - k)
share   = labour / (labour + power + waste)
growthy = (t / d) ^ 2 * c * m
total   = labour + power + waste + quick + sq + big + growthy [$]
`)
	return models
}

// TestUnitFolding checks the compiled model with unit factors folded into
// products against the compiler that multiplies each input by its factor
// where it is declared (noFold): every formula's value and gradient agree
// to a relative 1e-13 (folding reorders a product of factors: a few
// roundings of 2^-53 each), at the baseline and at random points within
// the ranges, and the folded tape is no longer.
func TestUnitFolding(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 2))
	for name, m := range foldCorpus(t) {
		folded, err := compile(m, nil)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		plain, err := compileNoFold(m)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if folded.TapeLen() > plain.TapeLen() {
			t.Errorf("%s: %d nodes folded, %d not", name, folded.TapeLen(), plain.TapeLen())
		}
		t.Logf("%s: %d tape nodes with factors folded, %d without", name, folded.TapeLen(), plain.TapeLen())
		for _, f := range folded.Formulas {
			ff, err := folded.Fn(f.Name)
			if err != nil {
				t.Fatal(err)
			}
			pf, err := plain.Fn(f.Name)
			if err != nil {
				t.Fatal(err)
			}
			for pt := 0; pt < 5; pt++ {
				x := folded.Baseline()
				if pt > 0 {
					for i, in := range folded.Inputs {
						x[i] = in.Low + (in.High-in.Low)*rng.Float64()
					}
				}
				g1, g2 := make([]float64, len(x)), make([]float64, len(x))
				y1, err1 := ff.Gradient(g1, x)
				y2, err2 := pf.Gradient(g2, x)
				if (err1 == nil) != (err2 == nil) {
					t.Errorf("%s: %s: errors %v and %v", name, f.Name, err1, err2)
					continue
				}
				if err1 != nil {
					if err1.Error() != err2.Error() {
						t.Errorf("%s: %s: error %q, without folding %q", name, f.Name, err1, err2)
					}
					continue
				}
				close := func(a, b float64) bool {
					return a == b || math.Abs(a-b) <= 1e-13*math.Max(math.Abs(a), math.Abs(b))
				}
				if !close(y1, y2) {
					t.Errorf("%s: %s = %v folded, %v not", name, f.Name, y1, y2)
				}
				for i := range g1 {
					if !close(g1[i], g2[i]) && math.Abs(g1[i]-g2[i]) > 1e-13*math.Abs(y1) {
						t.Errorf("%s: d%s/d%s = %v folded, %v not", name, f.Name, folded.Inputs[i].Name, g1[i], g2[i])
					}
				}
			}
		}
	}
}
