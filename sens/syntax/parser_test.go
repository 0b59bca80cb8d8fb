package syntax

import (
	"reflect"
	"strings"
	"testing"
)

// The model of DESIGN.md's language section must parse as written.
const designModel = `# a comment
input units   = 1000                 (800..1300)        # explicit low..high range
input mass    = 12 [kg]              (-5%..+8%)         # asymmetric percentage range
input hours   = 1.5 [h]              (±20%)             # also accepts +-20%
input hours2  = 1.5 [h]              (+-20%)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input tooling = 50000 [$]

unit_cost = mass * steel + hours * rate        # formulas in any order; a cycle is an error
total     = units * unit_cost + tooling  [$]   # an optional declared unit is checked
drivers total
tornado total top=5
spider total (±30%)
sweep total over rate 40..80
sweep total over rate 40..80 and hours 1..2
breakeven total = 160000 over steel
scenario lean: hours = 1.2, rate = 55
compare total across base, lean
simulate total n=20000 seed=7
sobol total n=8192 seed=7
morris total r=40 seed=7
screen total n=2000 seed=7
total
print "text"
reset
`

func TestParseDesignModel(t *testing.T) {
	_, stmts, err := Parse("design", []byte(designModel))
	if err != nil {
		t.Fatalf("parse: %v", err)
	}
	var kinds []string
	for _, s := range stmts {
		switch s := s.(type) {
		case *InputStmt:
			kinds = append(kinds, "input:"+s.Name.Name)
		case *FormulaStmt:
			kinds = append(kinds, "formula:"+s.Name.Name)
		case *CommandStmt:
			kinds = append(kinds, s.Verb)
		case *ExprStmt:
			kinds = append(kinds, "expr:"+String(s.X))
		}
	}
	want := "input:units input:mass input:hours input:hours2 input:steel input:rate input:tooling formula:unit_cost formula:total " +
		"drivers tornado spider sweep sweep breakeven scenario compare simulate sobol morris screen expr:total print reset"
	if got := strings.Join(kinds, " "); got != want {
		t.Errorf("statements:\n got %s\nwant %s", got, want)
	}
}

func TestParseDetails(t *testing.T) {
	_, stmts, err := Parse("t", []byte(designModel))
	if err != nil {
		t.Fatal(err)
	}
	units := stmts[0].(*InputStmt)
	if units.Range.Low.Value != 800 || units.Range.High.Value != 1300 || units.Range.Low.Percent {
		t.Errorf("units range = %+v", units.Range)
	}
	mass := stmts[1].(*InputStmt)
	if mass.Unit.Text != "kg" || mass.Range.Low.Value != -5 || mass.Range.High.Value != 8 || !mass.Range.Low.Percent {
		t.Errorf("mass = unit %v range %+v", mass.Unit, mass.Range)
	}
	for _, i := range []int{2, 3} {
		h := stmts[i].(*InputStmt)
		if !h.Range.Symmetric || h.Range.Low.Value != -20 || h.Range.High.Value != 20 {
			t.Errorf("%s range = %+v", h.Name.Name, h.Range)
		}
	}
	steel := stmts[4].(*InputStmt)
	if steel.Dist == nil || steel.Dist.Name.Name != "pert" || len(steel.Dist.Args) != 3 {
		t.Errorf("steel dist = %+v", steel.Dist)
	}
	total := stmts[8].(*FormulaStmt)
	if total.Unit == nil || total.Unit.Text != "$" || String(total.Value) != "units * unit_cost + tooling" {
		t.Errorf("total = %s [%v]", String(total.Value), total.Unit)
	}
	sweep2 := stmts[13].(*CommandStmt)
	if len(sweep2.Axes) != 2 || sweep2.Axes[1].Name.Name != "hours" || String(sweep2.Axes[1].High) != "2" {
		t.Errorf("2-D sweep axes = %+v", sweep2.Axes)
	}
	be := stmts[14].(*CommandStmt)
	if String(be.Target) != "160000" || be.Axes[0].Name.Name != "steel" || be.Axes[0].Low != nil {
		t.Errorf("breakeven = %+v", be)
	}
	sc := stmts[15].(*CommandStmt)
	if sc.Name.Name != "lean" || len(sc.Assigns) != 2 || String(sc.Assigns[1].Value) != "55" {
		t.Errorf("scenario = %+v", sc)
	}
	sim := stmts[17].(*CommandStmt)
	if o := sim.Option("n"); o == nil || String(o.Value) != "20000" || sim.Option("seed") == nil {
		t.Errorf("simulate options = %+v", sim.Options)
	}
}

func TestPrecedence(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"-x^2", "-(x^2)"},
		{"2^3^2", "2^(3^2)"},
		{"a + b * c", "a + (b * c)"},
		{"a - b - c", "(a - b) - c"},
		{"a / b * c", "(a / b) * c"},
		{"2^-1", "2^(-1)"},
		{"if(a < b and not c > d or e == f, 1, 2)", "if((((a < b) and (not (c > d))) or (e == f)), 1, 2)"},
		{"90 [min] * rate", "90 [min] * rate"},
		{"1_200 + 1.5e3 + .5", "(1_200 + 1.5e3) + .5"},
	} {
		x, err := ParseExpr(tc.src)
		if err != nil {
			t.Errorf("%s: %v", tc.src, err)
			continue
		}
		if got := paren(x); got != tc.want {
			t.Errorf("%s: got %s, want %s", tc.src, got, tc.want)
		}
	}
}

// paren prints x with every binary and unary operation in parentheses, except
// at the top.
func paren(x Expr) string {
	var f func(x Expr, top bool) string
	f = func(x Expr, top bool) string {
		switch x := x.(type) {
		case *BinaryExpr:
			op := " " + x.Op.String() + " "
			if x.Op == POW {
				op = "^"
			}
			s := f(x.X, false) + op + f(x.Y, false)
			if top {
				return s
			}
			return "(" + s + ")"
		case *UnaryExpr:
			s := x.Op.String()
			if x.Op == NOT {
				s += " "
			}
			s += f(x.X, false)
			if top {
				return s
			}
			return "(" + s + ")"
		case *ParenExpr:
			return f(x.X, top)
		case *CallExpr:
			args := make([]string, len(x.Args))
			for i, a := range x.Args {
				args[i] = f(a, false)
			}
			return x.Fun.Name + "(" + strings.Join(args, ", ") + ")"
		}
		return String(x)
	}
	return f(x, true)
}

func TestUnitBinding(t *testing.T) {
	// The last bracket of a formula line is its declared unit; a bracket right
	// after a number elsewhere is the number's.
	_, stmts, err := Parse("t", []byte("a = b * 5 [$]\nc = 5 [min] * r\nd = 6 [wk]\ne = (b * 5 [h])\n"))
	if err != nil {
		t.Fatal(err)
	}
	a := stmts[0].(*FormulaStmt)
	if a.Unit == nil || a.Unit.Text != "$" || hasNumberUnit(a.Value) {
		t.Errorf("a: declared %v, value %s", a.Unit, String(a.Value))
	}
	c := stmts[1].(*FormulaStmt)
	if c.Unit != nil || !hasNumberUnit(c.Value) {
		t.Errorf("c: declared %v, value %s", c.Unit, String(c.Value))
	}
	d := stmts[2].(*FormulaStmt)
	if d.Unit == nil || d.Value.(*NumberLit).Unit == nil {
		t.Errorf("d: a lone number takes the declared unit")
	}
	e := stmts[3].(*FormulaStmt)
	if e.Unit != nil || !hasNumberUnit(e.Value) {
		t.Errorf("e: inside parentheses the unit is the number's")
	}
}

func hasNumberUnit(x Expr) bool {
	found := false
	Walk(x, func(e Expr) bool {
		if n, ok := e.(*NumberLit); ok && n.Unit != nil {
			found = true
		}
		return true
	})
	return found
}

func TestPositionsAndCaret(t *testing.T) {
	_, _, err := Parse("m.nudge", []byte("input a = 1\n# µ comment\ninput ±b = 2\n"))
	el, ok := err.(ErrorList)
	if !ok || len(el) != 1 {
		t.Fatalf("want one error, got %v", err)
	}
	e := el[0]
	if e.Pos.String() != "m.nudge:3:7" {
		t.Errorf("position %s, want m.nudge:3:7 (columns count code points)", e.Pos)
	}
	if want := "input ±b = 2\n      ^"; e.Caret() != want {
		t.Errorf("caret:\n%s\nwant:\n%s", e.Caret(), want)
	}
}

func TestErrorListStopsAndRecovers(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 30; i++ {
		b.WriteString("x = )\n")
	}
	_, _, err := Parse("t", []byte(b.String()))
	el := err.(ErrorList)
	if len(el) != maxErrors {
		t.Errorf("got %d errors, want the list cut at %d", len(el), maxErrors)
	}
	// One error per line, in order.
	for i, e := range el {
		if e.Pos.Line != i+1 {
			t.Errorf("error %d on line %d", i, e.Pos.Line)
		}
	}
}

func TestDidYouMean(t *testing.T) {
	names := []string{"shop_rate", "steel", "total", "tooling"}
	for _, tc := range []struct{ in, want string }{
		{"shop_rat", " (did you mean shop_rate?)"}, {"stel", " (did you mean steel?)"},
		{"totl", " (did you mean total?)"}, {"zzz", ""}, {"x", ""}, {"total", ""},
	} {
		if got := DidYouMean(tc.in, names); got != tc.want {
			t.Errorf("DidYouMean(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

func TestIncomplete(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want bool
	}{
		{"x = (1 +\n", true}, {"x = 1 +", true}, {"x = 1", false}, {"x = max(1,\n 2)", false},
		{"input a = 1 \\", true}, {"drivers total", false}, {"", false},
		{"x = a *  # more to come\n", true}, {"x = a *\n\n", true}, {"x = a *\n b", false},
		{"x = a and", true}, {"x = a >=", true}, {"x = a +\ninput b = 1", false},
		{"x = (a +\ninput b = 1", false},                      // the parser reports the '(' and starts afresh
		{"x = a,", false}, {"x =", false}, {"x = not", false}, // errors at once, not more lines
	} {
		if got := Incomplete(tc.src); got != tc.want {
			t.Errorf("Incomplete(%q) = %v, want %v", tc.src, got, tc.want)
		}
	}
}

// A line that ends with a binary operator continues on the next line, past
// blank lines and comments; a next line that starts a statement of its own
// ends it, and the missing operand is reported where the line ended.
func TestLineContinuesAfterOperator(t *testing.T) {
	for _, tc := range []struct{ src, want string }{
		{"total = units * unit_cost +\n        tooling [$]", "total = units * unit_cost + tooling [$]"},
		{"y = a -\n\n  # the discount\n  b", "y = a - b"},
		{"y = a ^\n 2 * b", "y = a ^ 2 * b"},
		{"y = if(a > 1 and\n b < 2, 1, 0)", "y = if(a > 1 and b < 2, 1, 0)"},
		{"sweep y over a 1..2 and\n b 3..4", "sweep y over a 1..2 and b 3..4"},
		{"breakeven y = a *\n 2 over b", "breakeven y = a * 2 over b"},
	} {
		_, stmts, err := Parse("t", []byte(tc.src))
		_, want, werr := Parse("t", []byte(tc.want))
		if err != nil || werr != nil || len(stmts) != 1 || len(want) != 1 {
			t.Errorf("%q: %d statements, %v (%v)", tc.src, len(stmts), err, werr)
			continue
		}
		zeroPos(reflect.ValueOf(stmts[0]))
		zeroPos(reflect.ValueOf(want[0]))
		if !reflect.DeepEqual(stmts[0], want[0]) {
			t.Errorf("%q does not parse as %q", tc.src, tc.want)
		}
	}
	for _, tc := range []struct{ src, want string }{
		{"x = a +\ninput b = 1", "t:1:8: expected an operand after '+', found end of line"},
		{"x = a +\nb = 1", "t:1:8: expected an operand after '+', found end of line"},
		{"x = a +\n", "t:1:8: expected an operand after '+', found end of line"},
	} {
		_, _, err := Parse("t", []byte(tc.src))
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%q: error %v, want %q", tc.src, err, tc.want)
		}
	}
}

// zeroPos sets every Pos in the tree under v to 0, so that trees parsed from
// texts laid out differently compare equal.
func zeroPos(v reflect.Value) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			zeroPos(v.Elem())
		}
	case reflect.Struct:
		for i := range v.NumField() {
			zeroPos(v.Field(i))
		}
	case reflect.Slice:
		for i := range v.Len() {
			zeroPos(v.Index(i))
		}
	default:
		if v.Type() == reflect.TypeOf(Pos(0)) && v.CanSet() {
			v.SetInt(0)
		}
	}
}

func FuzzParse(f *testing.F) {
	for _, s := range []string{designModel, "x = (1 +\n", "input a = 1 [kg] (±5%) ~ normal(1, 0.1)", "sweep a over b 1..2 and c 3..4 target=5",
		"x = if(a<b and not c, 1, -2^2)", "scenario s: a = 1 [h], b = 2", "print \"a\\\"b\"", "\xff\xfe", "x = 1e400", "(((((", lineItemModel,
		"input q[t] = t.a (t.b..t.c) ~ pert(t.b, t.a, t.c)\nx = where(q, t.k != \"a\")[k]", "q[x]y", "table t = \"\\", "attribute total from base to lean top=3", "attribute t from"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		file, stmts, err := Parse("fuzz", []byte(src))
		if err != nil {
			for _, e := range err.(ErrorList) {
				if e.Msg == "" {
					t.Fatalf("empty error message")
				}
				_ = e.Caret()
			}
		}
		for _, s := range stmts {
			if s.Pos() > s.End() && s.End() != 0 {
				t.Fatalf("statement %T ends before it starts", s)
			}
			_ = file.Position(s.Pos())
		}
		// A front end that is told "incomplete" asks for another line: the
		// text as it stands must then fail to parse (a trailing backslash
		// aside, which joins the next line to a statement that is whole).
		if Incomplete(src) && err == nil && !strings.HasSuffix(strings.TrimRight(src, " \t\r\n"), "\\") {
			t.Fatalf("Incomplete(%q), yet it parses", src)
		}
	})
}
