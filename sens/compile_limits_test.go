package sens

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"runtime/debug"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/sens/syntax"
)

// stackCeiling makes the test binary fail (the runtime ends it) if a
// goroutine's stack grows past 64 MB while the test runs: the compiler's
// recursion must stay bounded (issue 8, item 6).
func stackCeiling(t *testing.T) {
	old := debug.SetMaxStack(64 << 20)
	t.Cleanup(func() { debug.SetMaxStack(old) })
}

// 100,000 formulas each written before the one it uses compile without a
// recursion per formula, in dependency order; the value is checked by
// counting (f0 = a + 99,999).
func TestLongChainOfFormulas(t *testing.T) {
	stackCeiling(t)
	const n = 100_000
	var src strings.Builder
	src.WriteString("input a = 1 (0..2)\n")
	for i := range n - 1 {
		fmt.Fprintf(&src, "f%d = f%d + 1\n", i, i+1)
	}
	fmt.Fprintf(&src, "f%d = a\n", n-1)
	p := compileSrc(t, src.String())
	v, err := p.Value("f0")
	if err != nil {
		t.Fatal(err)
	}
	if v.Value != n {
		t.Errorf("f0 = %v, want %d", v.Value, n)
	}
	// Dependency order: a formula follows every formula it uses.
	at := map[string]int{}
	for i, f := range p.Formulas {
		at[f.Name] = i
	}
	if at["f0"] != n-1 || at[fmt.Sprintf("f%d", n-1)] != 0 {
		t.Errorf("f0 at %d, f%d at %d: not in dependency order", at["f0"], n-1, at[fmt.Sprintf("f%d", n-1)])
	}
}

// A cycle through 100,000 formulas is reported at the reference that closes
// it, with the middle of the path left out.
func TestLongCycle(t *testing.T) {
	stackCeiling(t)
	const n = 100_000
	var src strings.Builder
	src.WriteString("input a = 1\n")
	for i := range n - 1 {
		fmt.Fprintf(&src, "f%d = f%d + a\n", i, i+1)
	}
	fmt.Fprintf(&src, "f%d = 2 * f0\n", n-1)
	m, err := LoadModel("m", []byte(src.String()))
	if err != nil {
		t.Fatal(err)
	}
	_, err = m.Compile()
	var el syntax.ErrorList
	if !errors.As(err, &el) || len(el) != 1 {
		t.Fatalf("want one error, got %v", err)
	}
	want := "cycle: f0 -> f1 -> f2 -> f3 -> f4 -> f5 -> … (99989 more) -> f99995 -> f99996 -> f99997 -> f99998 -> f99999 -> f0"
	if e := el[0]; e.Msg != want || e.Pos.Line != n+1 || e.Pos.Column != 14 {
		t.Errorf("got %s, want %d:14: %s", e.Error(), n+1, want)
	}
}

// A short cycle reads as it always did, from the first formula declared.
func TestCycleMessages(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"a = b + 1\nb = a * 2\n", "m:2:5: cycle: a -> b -> a"},
		{"a = a + 1\n", "m:1:5: cycle: a -> a"},
		{"x = 1\na = x + b\nb = c\nc = a\n", "m:4:5: cycle: a -> b -> c -> a"},
	} {
		m, err := LoadModel("m", []byte(c.src))
		if err != nil {
			t.Fatal(err)
		}
		if _, err := m.Compile(); err == nil || err.Error() != c.want {
			t.Errorf("%q: got %v, want %s", c.src, err, c.want)
		}
	}
}

// A model of 8,000 formulas with its input renamed reports ten errors, each
// with its suggestion, after a "did you mean" per error kept, not per
// reference (issue 8, item 8: it took 128 s).
func TestRenamedInputSuggestions(t *testing.T) {
	const n = 8000
	var src strings.Builder
	src.WriteString("input shop_rate = 60 [$/h]\n")
	for i := range n {
		fmt.Fprintf(&src, "cost_%d = shop_rat * %d [h]\n", i, i+1)
	}
	m, err := LoadModel("m", []byte(src.String()))
	if err != nil {
		t.Fatal(err)
	}
	_, err = m.Compile()
	var el syntax.ErrorList
	if !errors.As(err, &el) || len(el) != 10 {
		t.Fatalf("want ten errors, got %v", err)
	}
	for i, e := range el {
		if e.Msg != "undefined: shop_rat (did you mean shop_rate?)" || e.Pos.Line != i+2 || e.Pos.Column != 9+len(fmt.Sprint(i)) {
			t.Errorf("error %d: %s", i, e.Error())
		}
	}
}

// A compile whose context is done stops with the context's error, which is
// not kept: the next compile runs.
func TestCompileCanceled(t *testing.T) {
	var src strings.Builder
	src.WriteString("input a = 1\n")
	for i := range 2000 {
		fmt.Fprintf(&src, "f%d = a * %d\n", i, i)
	}
	m, err := LoadModel("m", []byte(src.String()))
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := m.CompileContext(ctx); !errors.Is(err, context.Canceled) {
		t.Fatalf("got %v, want context.Canceled", err)
	}
	if _, err := m.CompileExprContext(ctx, "e", syntax.NewFile("e", []byte("a")), &syntax.Ident{NamePos: 1, Name: "a"}, nil); !errors.Is(err, context.Canceled) {
		t.Fatalf("CompileExprContext: got %v, want context.Canceled", err)
	}
	p, err := m.Compile()
	if err != nil || len(p.Formulas) != 2000 {
		t.Fatalf("then: %v", err)
	}
}

// Expressions as tall as the parser allows compile within the stack
// ceiling: a chain of products, of differences, and the longest sum.
func TestTallExpressionsCompile(t *testing.T) {
	stackCeiling(t)
	chain := func(op string, n int) string {
		return "input a = 1 (0..2)\ny = a" + strings.Repeat(" "+op+" a", n-1) + "\n"
	}
	for _, c := range []struct {
		src  string
		want float64 // by counting
	}{
		{chain("*", syntax.MaxHeight+1), 1},
		{chain("-", syntax.MaxHeight+1), 1 - syntax.MaxHeight},
		{chain("+", syntax.MaxTerms), syntax.MaxTerms},
		{chain("/", syntax.MaxHeight+1), 1},
	} {
		p := compileSrc(t, c.src)
		v, err := p.Value("y")
		if err != nil {
			t.Fatal(err)
		}
		if v.Value != c.want {
			t.Errorf("%.20s…: y = %v, want %v", c.src[19:], v.Value, c.want)
		}
		driversOf(t, p, "y")
	}
}

// The one-pass test of which formulas are constant (tape.Constant) agrees
// with tracing each formula (Program.Deps) on random models with constant
// formulas among them, and on the line-item model's loops.
func TestConstantsAgreeWithDeps(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	seen := map[bool]int{}
	check := func(p *Program, what string) {
		t.Helper()
		got := p.constants()
		for i, f := range p.Formulas {
			if want := len(p.Deps(f)) == 0; got[i] != want {
				t.Fatalf("%s: formula %s constant %v, traced %v", what, f.Name, got[i], want)
			}
			seen[got[i]]++
		}
	}
	for trial := range 100 {
		var src strings.Builder
		names := []string{"x0", "x1", "k0"}
		src.WriteString("input x0 = 1.5 (1..2)\ninput x1 = 0.5 (0..1)\nk0 = 2.5 * 0\n")
		for i := range 12 {
			name := fmt.Sprintf("f%d", i)
			pool := names
			if rng.IntN(3) == 0 {
				pool = []string{"k0"} // a constant formula, maybe of other constants
			}
			expr := randExpr(rng, pool, 3)
			if rng.IntN(4) == 0 {
				expr = "0 * (" + expr + ")" // folded away: constant though it names inputs
			}
			fmt.Fprintf(&src, "%s = %s\n", name, expr)
			names = append(names, name)
		}
		check(compileSrc(t, src.String()), fmt.Sprintf("trial %d", trial))
	}
	p, _ := loadBid(t, 40, lineItemModel+"\nfixed = 1200 [$] + sum(bid.buyout) * 0\nmix = fixed + sum(qty * bid.buyout) * 0\nbeam_qty = qty[PL-0001] * 0 [$] + by_cat[beam]\n")
	check(p, "line items")
	if seen[true] < 100 || seen[false] < 100 {
		t.Errorf("%d constant and %d other formulas: the test does not exercise both", seen[true], seen[false])
	}
}
