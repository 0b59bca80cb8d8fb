package sens

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"gonum.org/v1/gonum/floats/scalar"
)

// Every Example in the function table evaluates, through the Builder
// and a Tape, to the value it shows: exactly where it shows a whole number
// (so a round half to even fails round(2.5) = 3), else to within half a
// unit in the last decimal shown. Reference values of the elementary
// functions are from Abramowitz and Stegun, Handbook of Mathematical
// Functions (tables 4.1, 4.2, 4.14, 4.15); the economy factors are checked
// against interest tables in sens/tape/econ_test.go.
func TestFuncsExamples(t *testing.T) {
	for _, f := range Functions {
		call, val, ok := strings.Cut(f.Example, " = ")
		if !ok || !strings.HasPrefix(call, f.Name+"(") || !strings.HasSuffix(call, ")") {
			t.Errorf("%s: example %q is not \"name(args) = value\"", f.Name, f.Example)
			continue
		}
		want, err := strconv.ParseFloat(val, 64)
		if err != nil {
			t.Errorf("%s: example value %q: %v", f.Name, val, err)
			continue
		}
		b := tape.NewBuilder()
		var args []tape.Slot
		var x []float64
		for _, a := range strings.Split(call[len(f.Name)+1:len(call)-1], ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(a), 64)
			if err != nil {
				t.Fatalf("%s: example argument %q: %v", f.Name, a, err)
			}
			// Inputs, not constants, so that the tape evaluates the call.
			args = append(args, b.Input())
			x = append(x, v)
		}
		if len(args) < f.Args || (!f.Variadic && len(args) != f.Args) {
			t.Errorf("%s: example has %d arguments, function takes %d", f.Name, len(args), f.Args)
			continue
		}
		var out tape.Slot
		if f.Variadic {
			out = b.Fold(f.Op, args...)
		} else {
			out = b.Call(f.Op, args...)
		}
		got, err := b.Tape(out).Eval(x, 0)
		if err != nil {
			t.Errorf("%s: %v", f.Example, err)
			continue
		}
		_, frac, decimal := strings.Cut(val, ".")
		if !decimal {
			if got != want {
				t.Errorf("%s = %.17g, example says exactly %s", call, got, val)
			}
			continue
		}
		// Half a unit in the last decimal shown, and a rounding's worth of
		// slack for reading the example's decimal into binary.
		tol := 0.5*math.Pow(10, -float64(len(frac))) + 4e-16*math.Abs(want)
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.17g, example says %s (off by %.2g, more than %.2g)", call, got, val, math.Abs(got-want), tol)
		}
	}
}

func TestFuncsTable(t *testing.T) {
	// The names the design brief lists, plus the economy and learning
	// functions.
	names := []string{"sqrt", "exp", "ln", "log10", "abs", "min", "max", "floor", "ceil", "round", "if",
		"sin", "cos", "tan", "asin", "acos", "atan", "growth", "discount", "annuity_pv", "annuity_fv",
		"recovery", "sinking", "gradient_pv", "gradient_uniform", "learn", "learn_total"}
	seen := map[string]bool{}
	for _, f := range Functions {
		if seen[f.Name] {
			t.Errorf("%s listed twice", f.Name)
		}
		seen[f.Name] = true
		if f.Op.Arity() != f.Args && !(f.Variadic && f.Op.Arity() == 2) {
			t.Errorf("%s: Args %d, op %v takes %d", f.Name, f.Args, f.Op, f.Op.Arity())
		}
		if f.Doc == "" || f.Sig == "" || !strings.HasPrefix(f.Sig, f.Name+"(") {
			t.Errorf("%s: missing doc or signature", f.Name)
		}
		if f.Units < UnitsDimensionless || f.Units > UnitsIf {
			t.Errorf("%s: no unit rule", f.Name)
		}
		if g, ok := LookupFunc(f.Name); !ok || g.Op != f.Op {
			t.Errorf("LookupFunc(%q) = %v, %v", f.Name, g, ok)
		}
	}
	for _, n := range names {
		if !seen[n] {
			t.Errorf("function %s missing", n)
		}
	}
	if len(Functions) != len(names) {
		t.Errorf("%d functions, want %d", len(Functions), len(names))
	}
	if _, ok := LookupFunc("pi"); ok {
		t.Error("pi is the compiler's constant, not a function")
	}
}

// Each unit rule of the function table, through the compiler: the unit of the
// result, and the error where the rule refuses the arguments. Values are
// worked by hand (sqrt(16 m²) = 4 m; 80% curve: unit 4 costs 0.8² = 0.64 of
// the first).
func TestFuncsUnitRules(t *testing.T) {
	p := compileSrc(t, `
input a = 16 [m2]
input h = 2 [h]
input c = 100 [$]
root  = sqrt(a)
mag   = abs(-h)
least = min(h, 90 [min], 3 [h])
pick  = if(h > 1 [h], c, 5 [$])
unit4 = learn(c, 0.8, 4)
g     = growth(0.1, 2)
`)
	for _, tc := range []struct {
		name, unit string
		value      float64
	}{
		{"root", "m", 4}, {"mag", "h", 2}, {"least", "h", 1.5}, {"pick", "$", 100}, {"unit4", "$", 64}, {"g", "", 1.21},
	} {
		fn, err := p.Fn(tc.name)
		if err != nil {
			t.Fatal(err)
		}
		y, err := fn.Eval(p.Baseline())
		if err != nil || fn.Formula().Unit != tc.unit || !scalar.EqualWithinAbsOrRel(y, tc.value, 1e-12, 1e-12) {
			t.Errorf("%s = %v [%s] (%v), want %v [%s]", tc.name, y, fn.Formula().Unit, err, tc.value, tc.unit)
		}
	}
	for _, tc := range []struct{ src, msg string }{
		{"input m = 2 [kg]\nf = ln(m)", "ln needs a dimensionless argument, found kg"},
		{"input m = 2 [kg]\nf = max(m, 3 [h])", "arguments of max must share a unit: kg vs h"},
		{"input m = 2 [kg]\nf = if(m > 1 [kg], m, 2 [h])", "arguments of if must share a unit: kg vs h"},
		{"input m = 2 [kg]\nf = learn(m, 0.8, 2 [h])", "argument 3 of learn must be dimensionless, found h"},
		{"input m = 2 [kg]\nf = sqrt(m)", "sqrt of kg"},
		{"input m = 2\nf = min(m)", "min takes at least 2 arguments, got 1"},
		{"input m = 2\nf = recovery(m)", "recovery takes 2 arguments, got 1"},
	} {
		m, err := LoadModel("t", []byte(tc.src))
		if err == nil {
			_, err = m.Compile()
		}
		if err == nil || !strings.Contains(err.Error(), tc.msg) {
			t.Errorf("%q: error %v, want %q", tc.src, err, tc.msg)
		}
	}
}
