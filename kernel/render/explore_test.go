package render_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/tape"
)

// exploreDriver evaluates listings with the panel's script under Node: it
// reads [{listing, out, scale, where, points}] and prints, for each point,
// {"value": v} or {"error": message}, numbers written so they read back to
// the same bits.
const exploreDriver = `
const nx = require(process.argv[2]);
const cases = JSON.parse(require("fs").readFileSync(process.argv[3], "utf8"));
const out = cases.map(c => {
  const p = new nx.Program(c.listing, c.out, c.scale, c.where);
  return c.points.map(x => {
    const r = p.eval(x);
    return r.error ? {error: r.error + (r.at ? " at " + r.at : "")} : {value: String(r.value)};
  });
});
process.stdout.write(JSON.stringify(out));
`

// jsCase is one listing and the points at which Node evaluates it.
type jsCase struct {
	Listing json.RawMessage `json:"listing"`
	Out     int             `json:"out"`
	Scale   float64         `json:"scale"`
	Where   []string        `json:"where"`
	Points  [][]float64     `json:"points"`

	name string
	pr   *sens.Problem
	full [][]float64 // each point as all of the problem's inputs
}

type jsResult struct {
	Value string `json:"value"`
	Error string `json:"error"`
}

// runNode evaluates the cases with the panel's script under Node.
func runNode(t *testing.T, cases []*jsCase) [][]jsResult {
	t.Helper()
	node, err := exec.LookPath("node")
	if err != nil {
		t.Skip("node is not on PATH: the what-if panel's JavaScript evaluator is not checked (install Node.js, Debian package nodejs)")
	}
	dir := t.TempDir()
	script := filepath.Join(dir, "explore.js")
	driver := filepath.Join(dir, "driver.js")
	data := filepath.Join(dir, "cases.json")
	b, err := json.Marshal(cases)
	if err != nil {
		t.Fatal(err)
	}
	for f, s := range map[string][]byte{script: []byte(render.ExploreScript), driver: []byte(exploreDriver), data: b} {
		if err := os.WriteFile(f, s, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var stdout, stderr bytes.Buffer
	cmd := exec.Command(node, driver, script, data)
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("node: %v\n%s", err, stderr.String())
	}
	var res [][]jsResult
	if err := json.Unmarshal(stdout.Bytes(), &res); err != nil {
		t.Fatalf("node's output: %v", err)
	}
	if len(res) != len(cases) {
		t.Fatalf("node answered %d cases of %d", len(res), len(cases))
	}
	return res
}

// listingCase makes the case of the problem's listing with the inputs free
// moving (the others at base), at points drawn by draw.
func listingCase(t *testing.T, name string, pr *sens.Problem, base []float64, free []int, points [][]float64) *jsCase {
	t.Helper()
	L, err := pr.Listing(base, free, 0)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	c := &jsCase{Listing: L.AppendJSON(nil), Out: L.Out, Scale: L.Scale, Where: L.Where, name: name, pr: pr}
	for _, p := range points {
		x := append([]float64(nil), base...)
		var fx []float64
		for _, j := range free {
			x[j] = p[j]
			fx = append(fx, p[j])
		}
		c.Points = append(c.Points, fx)
		c.full = append(c.full, x)
	}
	return c
}

// checkCases compares Node's answers with the Go engine's (Problem.F.Eval,
// the tape's scalar pass): both undefined, or equal within a relative 1e-12.
// It returns the number of points compared, of those undefined, and the
// largest relative difference seen.
func checkCases(t *testing.T, cases []*jsCase) (points, undefined int, worst float64) {
	t.Helper()
	res := runNode(t, cases)
	for i, c := range cases {
		for k, x := range c.full {
			want, err := c.pr.F.Eval(x)
			got := res[i][k]
			points++
			switch {
			case err != nil && got.Error == "":
				t.Errorf("%s at %v: Go: %v; the script: %s", c.name, x, err, got.Value)
			case err == nil && got.Error != "":
				t.Errorf("%s at %v: Go: %v; the script: %s", c.name, x, want, got.Error)
			case err != nil:
				undefined++
			default:
				var v float64
				if _, err := fmt.Sscan(got.Value, &v); err != nil {
					t.Fatalf("%s: %q: %v", c.name, got.Value, err)
				}
				if d := math.Abs(v - want); d > 0 {
					worst = math.Max(worst, d/math.Max(math.Abs(want), math.Abs(v)))
				}
				if !(math.Abs(v-want) <= 1e-12*math.Max(math.Abs(want), math.Abs(v))) {
					t.Errorf("%s at %v: Go %v, the script %v (relative %.3g)", c.name, x, want, v, math.Abs(v-want)/math.Abs(want))
				}
			}
		}
	}
	return points, undefined, worst
}

// scalarCase is a formula of inputs a, b and c and where each is drawn.
type scalarCase struct {
	expr  string
	lo    [3]float64
	hi    [3]float64
	fixed [][3]float64 // points checked besides the random ones
}

// scalarCases use every function of sens.Functions and every operator of
// the language; TestExploreScriptAgreesWithTape checks that none is missing.
// Ranges reach outside the domains on purpose, so that undefined points are
// compared too.
var scalarCases = []scalarCase{
	{expr: "a + b * c - a / b", lo: [3]float64{-5, -5, -5}, hi: [3]float64{5, 5, 5}, fixed: [][3]float64{{1, 0, 1}}},
	{expr: "a ^ b", lo: [3]float64{-2, -3, 0}, hi: [3]float64{5, 3, 1}, fixed: [][3]float64{{-2, 3, 0}, {0, -1, 0}, {1, 2.5, 0}, {0, 0, 0}}},
	{expr: "a ^ 3 + b ^ 2 - c ^ 0.5 + (-a) * pi", lo: [3]float64{-3, -3, -1}, hi: [3]float64{3, 3, 9}},
	{expr: "-(a * b) / c", lo: [3]float64{-5, -5, -1}, hi: [3]float64{5, 5, 1}, fixed: [][3]float64{{1, 1, 0}}},
	{expr: "sqrt(a)", lo: [3]float64{-1, 0, 0}, hi: [3]float64{10, 1, 1}, fixed: [][3]float64{{0, 0, 0}}},
	{expr: "exp(a)", lo: [3]float64{-20, 0, 0}, hi: [3]float64{20, 1, 1}, fixed: [][3]float64{{800, 0, 0}}},
	{expr: "ln(a)", lo: [3]float64{-0.5, 0, 0}, hi: [3]float64{20, 1, 1}, fixed: [][3]float64{{0, 0, 0}, {1, 0, 0}}},
	{expr: "log10(a)", lo: [3]float64{-0.5, 0, 0}, hi: [3]float64{2000, 1, 1}, fixed: [][3]float64{{1000, 0, 0}}},
	{expr: "abs(a) + 1", lo: [3]float64{-5, 0, 0}, hi: [3]float64{5, 1, 1}},
	{expr: "min(a, b, c)", lo: [3]float64{-5, -5, -5}, hi: [3]float64{5, 5, 5}},
	{expr: "max(a, b) - min(b, c)", lo: [3]float64{-5, -5, -5}, hi: [3]float64{5, 5, 5}},
	{expr: "floor(a) + ceil(b) + 1000", lo: [3]float64{-10, -10, 0}, hi: [3]float64{10, 10, 1}},
	{expr: "round(a) + 100", lo: [3]float64{-10, 0, 0}, hi: [3]float64{10, 1, 1},
		fixed: [][3]float64{{2.5, 0, 0}, {-2.5, 0, 0}, {0.49999999999999994, 0, 0}, {-0.5, 0, 0}, {3.5, 0, 0}}},
	{expr: "if(a > b and not(c < 0) or a == b, a * 2, b - c)", lo: [3]float64{-3, -3, -3}, hi: [3]float64{3, 3, 3}, fixed: [][3]float64{{1, 1, -1}}},
	{expr: "if(a <= b, ln(a), ln(b)) + if(a >= c or a != b, 1, 2) + if(a < c, 3, 4)", lo: [3]float64{-1, -1, -1}, hi: [3]float64{4, 4, 4}},
	{expr: "sin(a) + 2", lo: [3]float64{-10, 0, 0}, hi: [3]float64{10, 1, 1}},
	{expr: "cos(a) + 2", lo: [3]float64{-10, 0, 0}, hi: [3]float64{10, 1, 1}},
	{expr: "tan(a)", lo: [3]float64{-1.5, 0, 0}, hi: [3]float64{1.5, 1, 1}},
	{expr: "asin(a) + 2", lo: [3]float64{-1.2, 0, 0}, hi: [3]float64{1.2, 1, 1}},
	{expr: "acos(a)", lo: [3]float64{-1.2, 0, 0}, hi: [3]float64{1.2, 1, 1}},
	{expr: "atan(a) + 2", lo: [3]float64{-10, 0, 0}, hi: [3]float64{10, 1, 1}},
	{expr: "growth(a, b)", lo: [3]float64{-1.1, -30, 0}, hi: [3]float64{0.5, 40, 1}, fixed: [][3]float64{{0, 10, 0}, {0.08, 10, 0}}},
	{expr: "discount(a, b)", lo: [3]float64{-0.5, 0, 0}, hi: [3]float64{0.5, 40, 1}, fixed: [][3]float64{{0.1, 5, 0}}},
	{expr: "annuity_pv(a, b)", lo: [3]float64{-0.09, 0.5, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0, 5, 0}, {0.1, 5, 0}}},
	{expr: "annuity_fv(a, b)", lo: [3]float64{-0.09, 0.5, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0, 5, 0}, {0.06, 10, 0}}},
	{expr: "recovery(a, b)", lo: [3]float64{-0.09, 0.5, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0.1, 0, 0}, {0.1, 5, 0}}},
	{expr: "sinking(a, b)", lo: [3]float64{-0.09, 0.5, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0.1, 5, 0}}},
	{expr: "gradient_pv(a, b)", lo: [3]float64{-0.09, 2, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0, 5, 0}, {0.1, 5, 0}}},
	{expr: "gradient_uniform(a, b)", lo: [3]float64{-0.09, 2, 0}, hi: [3]float64{0.3, 40, 1}, fixed: [][3]float64{{0, 5, 0}, {0.1, 5, 0}}},
	{expr: "learn(a, b, c)", lo: [3]float64{1, -0.1, 0.5}, hi: [3]float64{1000, 1.1, 200}, fixed: [][3]float64{{100, 0.8, 4}}},
	{expr: "learn_total(a, b, c)", lo: [3]float64{1, -0.1, 0.5}, hi: [3]float64{1000, 1.1, 200},
		fixed: [][3]float64{{100, 0.8, 4}, {100, 0.8, 16}, {100, 0.8, 17}, {100, 0.5, 1000.5}, {100, 0.9, 1}}},
}

// vectorModel computes with loop nodes: forty rows in ten categories, so
// every vector (the rows, those where w > 2, the categories) is longer than
// tape.DefaultLoopMin and every vector operation is a loop node.
const vectorModel = `table t = "t.csv" key item
input q = t.q (±10%)
input s = 2 (1..3)
input k = 0.1 (-0.5..0.5)
line  = q * t.w * s
total = sum(line)
d     = dot(q, t.w)
avg   = mean(q) * s
hi    = max(line)
lo    = min(line - k * t.w)
part  = sum(where(line, t.w > 2)) + count(t.cat == "c1")
grp   = subtotal(line, t.cat)
gx    = grp[c3] * k
roots = sum(sqrt(q - 2 * s) * s)
flows = sum(q * discount(k, t.w))
logs  = sum(ln(q * k))
lg    = subtotal(ln(q * k) * s, t.cat)
glg   = lg[c2] + 1
cond  = sum(if(q > 6, ln(q - 6), q))
`

func vectorCSV(r *rand.Rand) string {
	var b strings.Builder
	b.WriteString("item,cat,q,w\n")
	for i := range 40 {
		cat := fmt.Sprintf("c%d", i%10)
		fmt.Fprintf(&b, "r%02d,%s,%.3f,%.3f\n", i, cat, 2+8*r.Float64(), 0.5+4*r.Float64())
	}
	return b.String()
}

// TestExploreScriptAgreesWithTape evaluates, with the what-if panel's
// JavaScript under Node, the listing of a formula using every function and
// operator of the language and every kind of loop node, at random points and
// at chosen ones (halves for round, whole unit numbers for learn_total, rate
// 0 for the economy factors, points outside the domains), and compares each
// value with the Go engine's to a relative 1e-12, and each undefined point
// with Go's domain error. Listings with some inputs folded into constants are
// checked the same way.
func TestExploreScriptAgreesWithTape(t *testing.T) {
	if _, err := exec.LookPath("node"); err != nil {
		t.Skip("node is not on PATH: the what-if panel's JavaScript evaluator is not checked (install Node.js, Debian package nodejs)")
	}
	r := rand.New(rand.NewPCG(15, 2))
	const n = 60
	var cases []*jsCase
	used := map[string]bool{}
	for ci, sc := range scalarCases {
		src := fmt.Sprintf("input a = %g (%g..%g)\ninput b = %g (%g..%g)\ninput c = %g (%g..%g)\ny = %s\n",
			(sc.lo[0]+sc.hi[0])/2, sc.lo[0], sc.hi[0], (sc.lo[1]+sc.hi[1])/2, sc.lo[1], sc.hi[1],
			(sc.lo[2]+sc.hi[2])/2, sc.lo[2], sc.hi[2], sc.expr)
		m, err := sens.LoadModel("f.nudge", []byte(src))
		if err != nil {
			t.Fatalf("%s: %v", sc.expr, err)
		}
		prog, err := m.Compile()
		if err != nil {
			t.Fatalf("%s: %v", sc.expr, err)
		}
		pr, err := prog.Problem("y")
		if err != nil {
			t.Fatalf("%s: %v", sc.expr, err)
		}
		// Map the problem's inputs (the ones y uses) to a, b, c.
		pos := make([]int, len(pr.Inputs))
		for i, in := range pr.Inputs {
			pos[i] = int(in.Name[0] - 'a')
		}
		var pts [][]float64
		for k := range n + len(sc.fixed) {
			var p3 [3]float64
			if k < len(sc.fixed) {
				p3 = sc.fixed[k]
			} else {
				for j := range 3 {
					p3[j] = sc.lo[j] + (sc.hi[j]-sc.lo[j])*r.Float64()
				}
			}
			p := make([]float64, len(pos))
			for i, j := range pos {
				p[i] = p3[j]
			}
			pts = append(pts, p)
		}
		all := make([]int, len(pr.Inputs))
		for i := range all {
			all[i] = i
		}
		name := fmt.Sprintf("case %d: y = %s", ci, sc.expr)
		c := listingCase(t, name, pr, pr.Baseline(), all, pts)
		cases = append(cases, c)
		var L []any
		if err := json.Unmarshal(c.Listing, &L); err != nil {
			t.Fatal(err)
		}
		for _, e := range L {
			if a, ok := e.([]any); ok {
				used[a[0].(string)] = true
			}
		}
		// The first input alone moves; the others are folded in at a
		// random point.
		if len(all) > 1 {
			base := pts[len(pts)-1]
			cases = append(cases, listingCase(t, name+" (only "+pr.Inputs[0].Name+" moves)", pr, base, all[:1], pts))
		}
	}

	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "t.csv"), []byte(vectorCSV(r)), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := sens.LoadModel(filepath.Join(dir, "v.nudge"), []byte(vectorModel))
	if err != nil {
		t.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range prog.Formulas {
		if f.Name == "line" || f.Name == "grp" || f.Name == "lg" {
			continue // vectors, not outputs
		}
		pr, err := prog.Problem(f.Name)
		if err != nil {
			t.Fatalf("%s: %v", f.Name, err)
		}
		var pts [][]float64
		for range n {
			p := make([]float64, len(pr.Inputs))
			for i, in := range pr.Inputs {
				lo, hi := in.Value*0.5, in.Value*1.5
				if in.Name == "k" {
					lo, hi = -0.5, 0.5
				}
				p[i] = lo + (hi-lo)*r.Float64()
			}
			pts = append(pts, p)
		}
		all := make([]int, len(pr.Inputs))
		for i := range all {
			all[i] = i
		}
		c := listingCase(t, "vector model: "+f.Name, pr, pr.Baseline(), all, pts)
		cases = append(cases, c)
		var L []any
		if err := json.Unmarshal(c.Listing, &L); err != nil {
			t.Fatal(err)
		}
		for _, e := range L {
			if a, ok := e.([]any); ok {
				used[a[0].(string)] = true
				if a[0] == "map" {
					used[a[2].(string)] = true
				}
			}
		}
		// Two elements of q move, the rest folded in.
		cases = append(cases, listingCase(t, "vector model: "+f.Name+" (two inputs move)", pr, pts[0], all[1:3], pts))
	}

	// Every operation of the language and every loop appears in some listing.
	for op := tape.Op(0); op < 255; op++ {
		name := tape.ListName(op)
		if name != "" && !used[name] {
			t.Errorf("no case uses %s (%v)", name, op)
		}
	}
	for _, l := range []string{"map", "sum_of", "dot_of", "min_of", "max_of", "gather", "group"} {
		if !used[l] {
			t.Errorf("no case has a %s loop", l)
		}
	}
	for _, f := range sens.Functions {
		if !used[tape.ListName(f.Op)] {
			t.Errorf("no case calls %s", f.Name)
		}
	}

	points, undefined, worst := checkCases(t, cases)
	t.Logf("%d listings, %d points compared (%d undefined in both); largest relative difference %.3g", len(cases), points, undefined, worst)
	if undefined == 0 || undefined > points/2 {
		t.Errorf("%d of %d points undefined: the cases should reach outside the domains now and then", undefined, points)
	}
}

const housingModel = `input batch       = 1000                  (800..1300)
input blank_mass  = 4.2 [kg]              (-5%..+8%)
input alloy_price = 3.1 [$/kg]            ~ pert(2.7, 3.1, 4.0)
input cycle_time  = 38 [min]              (±20%)
input shop_rate   = 95 [$/h]              ~ normal(95, 8)
input setup_time  = 6 [h]                 (4..9)
input fixture     = 18000 [$]
input scrap_rate  = 4 [%]                 (2..8)
input finish      = 2.5 [$]               ~ triangular(2, 2.5, 3.5)
material   = blank_mass * alloy_price
machining  = cycle_time * shop_rate
setup      = setup_time * shop_rate / batch
unit_cost  = (material + machining + finish) / (1 - scrap_rate) + setup + fixture / batch   [$]
`

func housingProblem(t *testing.T) *sens.Problem {
	t.Helper()
	m, err := sens.LoadModel("housing.nudge", []byte(housingModel))
	if err != nil {
		t.Fatal(err)
	}
	prog, err := m.Compile()
	if err != nil {
		t.Fatal(err)
	}
	pr, err := prog.Problem("unit_cost")
	if err != nil {
		t.Fatal(err)
	}
	return pr
}

// TestExplorePanel checks the panel against the tornado it is built from:
// the same inputs in the same order with the same ranges and bars, the
// output at the baseline, the script and its data in the HTML, the data a
// listing that frees exactly the sliders' inputs, and the text table.
func TestExplorePanel(t *testing.T) {
	pr := housingProblem(t)
	e, err := sens.Explore(pr, &sens.ExploreSettings{Top: 4})
	if err != nil {
		t.Fatal(err)
	}
	tor, err := sens.Tornado(pr, &sens.TornadoSettings{Top: 4, Interior: -1})
	if err != nil {
		t.Fatal(err)
	}
	if len(e.Inputs) != 4 || e.Held != len(pr.Inputs)-4 || e.Value != tor.Baseline || e.Listing == nil || e.NoPanel != "" {
		t.Fatalf("explore: %d inputs, %d held, value %v (tornado %v), too large %q", len(e.Inputs), e.Held, e.Value, tor.Baseline, e.NoPanel)
	}
	for i, in := range e.Inputs {
		b := tor.Bars[i]
		if in.Name != b.Name || in.Low != b.Low || in.High != b.High || in.Value != b.Value ||
			in.OutputAtLow != b.OutputAtLow || in.OutputAtHigh != b.OutputAtHigh {
			t.Errorf("slider %d: %+v, tornado bar %+v", i, in, b)
		}
	}
	if len(e.Listing.Free) != 4 {
		t.Errorf("the listing frees %v", e.Listing.Free)
	}
	r := render.Explore(e, nil)
	h := r.HTML()
	for _, want := range []string{`<div class="nudge-explore">`, `<script type="application/json" class="nudge-explore-data">`, render.ExploreScript, "Trust Notebook"} {
		if !strings.Contains(h, want) {
			t.Errorf("the panel's HTML lacks %.60q", want)
		}
	}
	// The data: JSON that cannot end its <script> element early.
	i := strings.Index(h, `class="nudge-explore-data">`) + len(`class="nudge-explore-data">`)
	j := strings.Index(h[i:], "</script>")
	data := h[i : i+j]
	if strings.Contains(data, "<") {
		t.Error("the panel's data holds a <")
	}
	var d struct {
		Output string
		Base   float64
		Inputs []struct {
			Name             string
			Value, Low, High float64
		}
		Listing []any
		Out     int
		Scale   float64
	}
	if err := json.Unmarshal([]byte(data), &d); err != nil {
		t.Fatalf("the panel's data: %v", err)
	}
	if d.Output != "unit_cost" || d.Base != e.Value || len(d.Inputs) != 4 || d.Inputs[0].Name != e.Inputs[0].Name || len(d.Listing) == 0 {
		t.Errorf("the panel's data: %+v", d)
	}
	inputs := 0
	for _, x := range d.Listing {
		if a, ok := x.([]any); ok && a[0] == "in" {
			inputs++
		}
	}
	if inputs != 4 {
		t.Errorf("the listing reads %d inputs, want the 4 sliders", inputs)
	}
	for _, want := range []string{"what-if panel of unit_cost: $97.41 at the baseline", e.Inputs[0].Name, "5 other inputs of unit_cost stay at their baseline."} {
		if !strings.Contains(r.Text(), want) {
			t.Errorf("the text lacks %q:\n%s", want, r.Text())
		}
	}
	if !strings.Contains(string(r.JSON()), `"kind":"explore"`) || strings.Contains(string(r.JSON()), "listing") {
		t.Errorf("the JSON: %s", r.JSON())
	}

	// A listing over the limit: no panel, a note that says why.
	e, err = sens.Explore(pr, &sens.ExploreSettings{Top: 4, Limit: 5})
	if err != nil {
		t.Fatal(err)
	}
	r = render.Explore(e, nil)
	if e.Listing != nil || e.NoPanel == "" || strings.Contains(r.HTML(), "<script") || !strings.Contains(r.Text(), "No sliders: ") {
		t.Errorf("over the limit: %q\n%s", e.NoPanel, r.Text())
	}
}
