package sens

import (
	"fmt"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
)

const corrInputs = `input a = 1 ~ normal(1, 1)
input b = 1 ~ normal(1, 1)
input c = 1 ~ normal(1, 1)
y = a + b + c
`

func compileErr(t *testing.T, src string) string {
	t.Helper()
	m, err := LoadModel("test", []byte(src))
	if err == nil {
		_, err = m.Compile()
	}
	if err == nil {
		return ""
	}
	return err.Error()
}

func TestCorrelationErrors(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"spearman a, b = 1.5", "test:5:17: a rank correlation lies strictly between -1 and 1, found 1.5"},
		{"spearman a, b = -1", "test:5:17: a rank correlation lies strictly between -1 and 1, found -1"},
		{"spearman a, y = 0.5", "test:5:13: y is a formula: a rank correlation relates two inputs (a formula's spread follows from its inputs)"},
		{"spearman a, bb = 0.5", "test:5:13: undefined input bb (did you mean b?)"},
		{"spearman a, a = 0.5", "test:5:13: a rank correlation relates two different inputs, not a with itself"},
		{"spearman a, b = 0.5 [kg]", "test:5:21: the rank correlation of a and b is in [kg] but must be a plain number (no unit)"},
	} {
		got := compileErr(t, corrInputs+tc.src+"\n")
		if !strings.HasPrefix(got, tc.want) {
			t.Errorf("%s:\n got %s\nwant %s", tc.src, got, tc.want)
		}
	}
}

// TestCorrelationInconsistent declares three correlations that no joint
// distribution has (a and b, b and c strongly together, a and c strongly
// apart: the matrix has a negative eigenvalue) and checks that the error
// names a pair and a value that, once written, make them consistent.
func TestCorrelationInconsistent(t *testing.T) {
	decls := []string{"spearman a, b = 0.9", "spearman b, c = 0.9", "spearman a, c = -0.9"}
	src := corrInputs + strings.Join(decls, "\n") + "\n"
	got := compileErr(t, src)
	m := regexp.MustCompile(`^test:(\d+):\d+: the rank correlations among a, b, c cannot all hold at once \(their matrix is not positive definite\): change this one to (-?[0-9.]+), the nearest value that fits the others`).FindStringSubmatch(got)
	if m == nil {
		t.Fatalf("got %s", got)
	}
	line, _ := strconv.Atoi(m[1])
	fix := decls[line-5]
	fix = fix[:strings.Index(fix, "=")+1] + " " + m[2]
	decls[line-5] = fix
	if err := compileErr(t, corrInputs+strings.Join(decls, "\n")+"\n"); err != "" {
		t.Errorf("with the suggested %q: %s", fix, err)
	}
	// A pair declared again (in either order) in one file is an error; in
	// a later cell it replaces the first.
	if _, err := LoadModel("test", []byte(corrInputs+"spearman a, b = 0.9\nspearman b, a = 0.2\n")); err == nil || !strings.Contains(err.Error(), "the rank correlation of a and b is declared twice") {
		t.Errorf("a pair declared twice in one file: %v", err)
	}
	model, err := LoadModel("test", []byte(corrInputs+"spearman a, b = 0.9\n"))
	if err != nil {
		t.Fatal(err)
	}
	f, stmts, err := syntax.Parse("cell 2", []byte("spearman b, a = 0.2\n"))
	if err != nil {
		t.Fatal(err)
	}
	model.DefineCorrelation(f, stmts[0].(*syntax.CommandStmt))
	p, err := model.Compile()
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Correlations) != 1 || p.Correlations[0].Rho != 0.2 {
		t.Errorf("correlations %+v", p.Correlations)
	}
}

func ExampleModel_DefineCorrelation() {
	m, err := LoadModel("costs.nudge", []byte(`
input steel = 0.9 [$/kg] ~ pert(0.8, 0.9, 1.2)
input energy = 0.12 [$/kWh] ~ triangular(0.09, 0.12, 0.2)
spearman steel, energy = 0.6
cost = 12 [kg] * steel + 30 [kWh] * energy
`))
	if err != nil {
		panic(err)
	}
	prog, _ := m.Compile()
	pr, _ := prog.Problem("cost")
	r, _ := Simulate(pr, &SimulationSettings{N: 5000, Seed: 1})
	c := r.Correlations[0]
	fmt.Printf("%s and %s: asked for %.2f, achieved %.2f\n", c.Inputs[0], c.Inputs[1], c.Requested, c.Achieved)
	// Output:
	// steel and energy: asked for 0.60, achieved 0.60
}
