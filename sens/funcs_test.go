package sens

import (
	"strconv"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/tape"
	"gonum.org/v1/gonum/floats/scalar"
)

// Every Example in the function table evaluates, through the Builder
// and a Tape, to the value it shows (to the digits shown). Reference
// values of the elementary functions are from Abramowitz and Stegun,
// Handbook of Mathematical Functions (tables 4.1, 4.2, 4.14, 4.15); the
// economy factors are checked against interest tables in
// sens/tape/econ_test.go.
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
		digits := len(strings.TrimLeft(strings.ReplaceAll(strings.TrimPrefix(val, "-"), ".", ""), "0"))
		tol := 0.6
		for range digits {
			tol /= 10
		}
		if !scalar.EqualWithinRel(got, want, tol*10) {
			t.Errorf("%s = %.12g, example says %s", call, got, val)
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
