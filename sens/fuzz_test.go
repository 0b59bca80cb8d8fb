package sens

import (
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

var (
	fuzzTable = []byte("k,c,m [kg],n\na,u,1.5,2\nb,v,\"2,500\",3\nc,u,0,4\nd,w,4,5\ne,u,7,6\nf,v,1,7\ng,u,2,8\nh,w,3,9\n")
	fuzzBid   = tapebench.BidCSV(20, 5)
)

// FuzzCompile feeds arbitrary text through the parser, the compiler, one
// evaluation of every formula at the baseline and its second derivatives:
// errors are fine, panics are not.
func FuzzCompile(f *testing.F) {
	for _, s := range []string{
		designModel,
		"input a = 1 [kg] (±5%) ~ normal(1, 0.1)\nb = a^2 [kg^2]\nc = sqrt(b) + a",
		"a = b\nb = a",
		"input r = 0.1\nx = recovery(r, 5) + learn(100 [$], 0.8, 4) / 1 [$]",
		"input t = 90 [min]\ninput w = 60 [$/h]\nc = if(t > 1 [h] and not w < 1 [$/h], t * w, 0 [$])",
		"input x = -1\ny = ln(x)",
		"input a = 1 [EUR]\nb = a + 1 [$]",
		"x = 2^0.5 * pi [m]",
		lineItemModel,
		"table t = \"t.csv\"\nperiods y = 1..12\ninput q[y] = 2 (±5%)\nx = sum(q * discount(0.05, y)) + t.m[b] + count(t.c == \"u\")\nv = subtotal(where(t.m, t.c != \"u\"), t.c)",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		file, stmts, _ := syntax.Parse("fuzz", []byte(src))
		m := NewModel()
		for _, s := range stmts {
			switch s := s.(type) {
			case *syntax.InputStmt, *syntax.FormulaStmt, *syntax.PeriodsStmt:
				m.Define(file, s)
			case *syntax.TableStmt:
				// Every table is one of two small ones held here, never a file.
				data := fuzzTable
				if s.Path.Value == "bid.csv" {
					data = fuzzBid
				}
				m.DefineTableData(file, s, data)
			}
		}
		p, err := m.Compile()
		if err != nil {
			if _, ok := err.(syntax.ErrorList); !ok {
				t.Fatalf("compile error of type %T: %v", err, err)
			}
			return
		}
		if err := p.Check(); err != nil {
			if _, ok := err.(*EvalError); !ok {
				t.Fatalf("check error of type %T: %v", err, err)
			}
			return
		}
		for _, fm := range p.Formulas {
			pr, err := p.Problem(fm.Name)
			if err != nil {
				t.Fatal(err)
			}
			if _, err := Drivers(pr, nil); err != nil {
				if _, ok := err.(*EvalError); !ok {
					t.Fatalf("drivers error of type %T: %v", err, err)
				}
			}
			if _, err := Interactions(pr, &InteractionsSettings{MaxColumns: 8}); err != nil {
				if _, ok := err.(*EvalError); !ok && len(pr.Inputs) > 0 {
					t.Fatalf("interactions error of type %T: %v", err, err)
				}
			}
		}
	})
}
