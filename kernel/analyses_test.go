package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"gonum.org/v1/gonum/floats/scalar"
)

// analysisSink records results, streams and progress reports.
type analysisSink struct {
	results  []*render.Result
	stderr   strings.Builder
	stdout   strings.Builder
	progress map[string][2]int // id -> last (done, total)
	labels   map[string]string
}

func (s *analysisSink) Stream(name, text string) {
	if name == "stderr" {
		s.stderr.WriteString(text)
	} else {
		s.stdout.WriteString(text)
	}
}
func (s *analysisSink) Result(r *render.Result, _ bool) { s.results = append(s.results, r) }
func (s *analysisSink) Progress(id, label string, done, total int) {
	if s.progress == nil {
		s.progress, s.labels = map[string][2]int{}, map[string]string{}
	}
	s.progress[id] = [2]int{done, total}
	s.labels[id] = label
}

// The part of DESIGN.md's example model the local analyses use, with a
// default-range input (tooling).
const shopModel = `
input units   = 1000                 (800..1300)
input mass    = 12 [kg]              (-5%..+8%)
input hours   = 1.5 [h]              (±20%)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input tooling = 50000 [$]

unit_cost = mass * steel + hours * rate
total     = units * unit_cost + tooling  [$]
`

func run(t *testing.T, in *Interp, src string) *analysisSink {
	t.Helper()
	s := &analysisSink{}
	if err := in.Execute(context.Background(), "", src, s); err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	return s
}

// object returns a result's JSON object as a map.
func object(t *testing.T, r *render.Result) map[string]any {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(r.JSON(), &m); err != nil {
		t.Fatal(err)
	}
	return m
}

func newShop(t *testing.T) *Interp {
	in := New()
	run(t, in, shopModel)
	return in
}

func TestTornadoCommand(t *testing.T) {
	in := newShop(t)
	in.Opts.PNG = true
	s := run(t, in, "tornado total")
	if len(s.results) != 1 {
		t.Fatalf("%d results", len(s.results))
	}
	r := s.results[0]
	m := object(t, r)
	if r.Kind != "tornado" || m["kind"] != "tornado" || m["output"] != "total" || !r.Caution {
		t.Fatalf("result kind %s, object %v", r.Kind, m)
	}
	// Baseline by hand: 1000 × (12 × 0.9 + 1.5 × 60) + 50,000 = 150,800.
	if !scalar.EqualWithinAbsOrRel(m["baseline"].(float64), 150800, 1e-9, 1e-12) {
		t.Errorf("baseline %v", m["baseline"])
	}
	bars := m["bars"].([]any)
	if len(bars) != 6 {
		t.Fatalf("%d bars", len(bars))
	}
	prev := 1e300
	for _, b := range bars {
		b := b.(map[string]any)
		for _, k := range []string{"name", "low", "high", "output_at_low", "output_at_high", "swing"} {
			if _, ok := b[k]; !ok {
				t.Errorf("bar lacks %s: %v", k, b)
			}
		}
		sw := b["swing"].(float64)
		if sw > prev {
			t.Errorf("bars not sorted by swing: %v after %v", sw, prev)
		}
		prev = sw
	}
	// units swings 500 × 100.8 = 50,400, the largest; tooling's default
	// range gives 10,000 and is flagged (model by hand).
	first := bars[0].(map[string]any)
	if first["name"] != "units" || !scalar.EqualWithinAbsOrRel(first["swing"].(float64), 50400, 1e-9, 1e-12) {
		t.Errorf("first bar %v", first)
	}
	if !strings.Contains(s.stderr.String(), "tooling has no range or distribution") {
		t.Errorf("stderr %q lacks the default-range warning", s.stderr.String())
	}
	// Shares of the sum of squared swings: 50,400² / (50,400² + 36,000² +
	// 19,223² + 10,000²) = 58.9% (swings as above; rate's from its P10-P90).
	if !strings.Contains(r.Text(), "default ±10%") || !strings.Contains(r.Text(), "$50,400  58.9%") || !strings.Contains(r.Text(), "tornado of total: baseline $150,800") {
		t.Errorf("text:\n%s", r.Text())
	}
	if len(r.SVG()) == 0 || !strings.Contains(string(r.SVG()), "<svg") || len(r.PNG()) == 0 {
		t.Errorf("chart missing: %d bytes SVG, %d PNG", len(r.SVG()), len(r.PNG()))
	}
	if !strings.Contains(r.HTML(), "<table") || !strings.Contains(r.HTML(), "$/kg") {
		t.Errorf("HTML lacks the table with units")
	}
	// The bundle stores the chart once, as the HTML's image.
	b := r.Bundle()
	for _, mime := range []string{"text/plain", "text/html", render.ResultMIME} {
		if _, ok := b[mime]; !ok {
			t.Errorf("bundle lacks %s", mime)
		}
	}
	if len(b) != 3 || strings.Count(b["text/html"].(string), "<img") != 1 {
		t.Errorf("bundle of %d types, %d images in its HTML", len(b), strings.Count(b["text/html"].(string), "<img"))
	}
	// Progress closed with done == total.
	if len(s.progress) != 1 {
		t.Fatalf("progress %v", s.progress)
	}
	for id, p := range s.progress {
		if p[0] != p[1] || p[1] == 0 || s.labels[id] != "tornado total" {
			t.Errorf("progress %s %v %q", id, p, s.labels[id])
		}
	}

	// top=2 keeps two bars and summarises the rest in one line.
	in.Opts = render.Options{NoCharts: true, Width: 60}
	s = run(t, in, "tornado total top=2")
	r = s.results[0]
	m = object(t, r)
	rest := m["rest"].(map[string]any)
	if len(m["bars"].([]any)) != 2 || rest["count"].(float64) != 4 {
		t.Errorf("top=2: %d bars, rest %v", len(m["bars"].([]any)), rest)
	}
	if !strings.Contains(r.Text(), "… and 4 more inputs, each with a swing of at most") || len(r.SVG()) != 0 {
		t.Errorf("text:\n%s (SVG %d bytes with charts off)", r.Text(), len(r.SVG()))
	}
}

func TestSpiderSweepCommands(t *testing.T) {
	in := newShop(t)
	s := run(t, in, "spider total (±20%) points=5\nsweep total over rate 40..80 steps=4 target=140000\nsweep total over rate 40 [$/h]..80 [$/h] and hours 60 [min]..120 [min] n=5 target=150800")
	if len(s.results) != 3 {
		t.Fatalf("%d results", len(s.results))
	}
	sp := object(t, s.results[0])
	if sp["kind"] != "spider" || sp["span_pct"].(float64) != 20 {
		t.Errorf("spider %v", sp["kind"])
	}
	for _, l := range sp["inputs"].([]any) {
		pts := l.(map[string]any)["points"].([]any)
		mid := pts[len(pts)/2].(map[string]any)
		if len(pts) != 5 || mid["pct"].(float64) != 0 || mid["output"].(float64) != sp["baseline"].(float64) {
			t.Errorf("spider line %v does not pass through the baseline", l)
		}
	}

	// total = 1000 × (10.8 + 1.5 × rate) + 50,000 (by hand): 40 gives
	// 120,800 and 80 gives 180,800; 140,000 is reached at rate = 52.8.
	sw := object(t, s.results[1])
	pts := sw["points"].([]any)
	if sw["kind"] != "sweep" || len(pts) != 5 {
		t.Fatalf("sweep %v", sw)
	}
	p0, p4 := pts[0].(map[string]any), pts[4].(map[string]any)
	if p0["x"].(float64) != 40 || p4["x"].(float64) != 80 ||
		!scalar.EqualWithinAbsOrRel(p0["output"].(float64), 120800, 1e-9, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(p4["output"].(float64), 180800, 1e-9, 1e-12) {
		t.Errorf("sweep ends %v %v", p0, p4)
	}
	cr := sw["crossings"].([]any)
	if len(cr) != 1 || !scalar.EqualWithinAbsOrRel(cr[0].(float64), 52.8, 1e-9, 1e-12) {
		t.Errorf("crossings %v", cr)
	}
	if in := sw["input"].(map[string]any); in["name"] != "rate" || in["unit"] != "$/h" {
		t.Errorf("input %v", in)
	}

	// The 2-D sweep with spans in other units: minutes become hours.
	s2 := object(t, s.results[2])
	axes := s2["inputs"].([]any)
	hy := axes[1].(map[string]any)
	if s2["dims"].(float64) != 2 || len(s2["points"].([]any)) != 25 || hy["low"].(float64) != 1 || hy["high"].(float64) != 2 {
		t.Errorf("2-D sweep %v", hy)
	}
	// total = 1000·(10.8 + rate·hours) + 50,000 = 150,800 where
	// rate·hours = 90: a hyperbola through (60, 1.5).
	line := s2["contour"].([]any)
	if len(line) != 1 {
		t.Fatalf("contour %v", line)
	}
	for _, p := range line[0].([]any) {
		p := p.(map[string]any)
		x, y := p["x"].(float64), p["y"].(float64)
		if x*y < 85 || x*y > 95 {
			t.Errorf("contour point (%v, %v) far from rate·hours = 90", x, y)
		}
	}
	if !strings.Contains(s.results[2].Text(), "along 1 contour line") {
		t.Errorf("text:\n%s", s.results[2].Text())
	}
}

func TestBreakevenCommand(t *testing.T) {
	in := newShop(t)
	s := run(t, in, "breakeven total = 160000 over steel")
	r := s.results[0]
	m := object(t, r)
	// 160,000 = 1000 × (12·steel + 90) + 50,000 at steel = 20/12 $/kg
	// (by hand), outside the pert range's 10th..90th percentiles.
	if r.Kind != "breakeven" || !scalar.EqualWithinAbsOrRel(m["value"].(float64), 20.0/12, 1e-12, 1e-12) || m["in_range"].(bool) {
		t.Errorf("breakeven %v", m)
	}
	for _, k := range []string{"output", "target", "input", "value", "baseline_input", "in_range"} {
		if _, ok := m[k]; !ok {
			t.Errorf("breakeven lacks %s", k)
		}
	}
	if !strings.Contains(r.Text(), "$1.667/kg") && !strings.Contains(r.Text(), "1.667 $/kg") {
		t.Errorf("text:\n%s", r.Text())
	}
	// A target in thousands of dollars is converted; none is reached.
	s = run(t, in, "breakeven total = -5 [$] over units 0..2000")
	m = object(t, s.results[0])
	if _, ok := m["value"]; ok || !strings.Contains(m["message"].(string), "never reaches") {
		t.Errorf("no crossing: %v", m)
	}
}

func TestScenarioCompareCommands(t *testing.T) {
	in := newShop(t)
	s := run(t, in, "scenario lean: hours = 72 [min], rate = 55\nscenario rush: units = 1300\ncompare total across lean, base, rush")
	if len(s.results) != 3 || s.results[0].Kind != "scenario" || s.results[2].Kind != "compare" {
		t.Fatalf("results %v", s.results)
	}
	sc := object(t, s.results[0])
	set := sc["settings"].([]any)[0].(map[string]any)
	if set["name"] != "hours" || !scalar.EqualWithinAbsOrRel(set["value"].(float64), 1.2, 1e-12, 1e-12) {
		t.Errorf("scenario %v", sc)
	}
	m := object(t, s.results[2])
	rows := m["scenarios"].([]any)
	// By hand: lean 1000 × (10.8 + 1.2 × 55) + 50,000 = 126,800;
	// base 150,800; rush 1300 × 100.8 + 50,000 = 181,040.
	want := []struct {
		name         string
		value, delta float64
	}{{"lean", 126800, -24000}, {"base", 150800, 0}, {"rush", 181040, 30240}}
	for j, w := range want {
		r := rows[j].(map[string]any)
		if r["name"] != w.name || !scalar.EqualWithinAbsOrRel(r["value"].(float64), w.value, 1e-9, 1e-12) ||
			!scalar.EqualWithinAbsOrRel(r["delta"].(float64), w.delta, 1e-9, 1e-12) ||
			!scalar.EqualWithinAbsOrRel(r["delta_pct"].(float64), 100*w.delta/150800, 1e-9, 1e-12) {
			t.Errorf("row %d = %v, want %+v", j, r, w)
		}
	}
	// Redefinition replaces.
	s = run(t, in, "scenario lean: hours = 1")
	if !object(t, s.results[0])["replaced"].(bool) {
		t.Error("redefined scenario not marked replaced")
	}
}

func TestAnalysisErrors(t *testing.T) {
	for _, tc := range []struct {
		src       string
		line, col int
		msg       string
	}{
		{"sweep total over rat 40..80", 1, 18, "undefined input rat (did you mean rate?)"},
		{"sweep total over unit_cost 1..2", 1, 18, "unit_cost is a formula, not an input"},
		{"sweep total over rate 80..40", 1, 23, "the range 80..40 of rate is reversed: write 40..80"},
		{"sweep total over rate 40..40", 1, 23, "is empty"},
		{"sweep total over rate 40 [kg]..80", 1, 26, "is in [kg] but must be in [$/h]"},
		{"sweep total over rate 40..80 and rate 1..2", 1, 34, "two different inputs"},
		{"sweep total over rate 40..80 step=3", 1, 30, "sweep has no option step (options: n, steps, target, limit)"},
		{"sweep total over rate 40..80 n=1", 1, 32, "n must be a whole number from 2"},
		{"sweep total over rate 40..80 n=3 steps=2", 1, 34, "either n= (points) or steps="},
		{"tornado total top=0", 1, 19, "top must be a whole number from 1"},
		{"tornado total top=2.5", 1, 19, "top must be a whole number"},
		{"tornado total depth=2", 1, 15, "tornado has no option depth (options: top)"},
		{"tornado totl", 1, 9, "undefined: totl (did you mean total?)"},
		{"spider total (-10%..+20%)", 1, 14, "symmetric about 0%"},
		{"breakeven total = units over steel", 1, 19, "the target must be a number, not the name units"},
		{"breakeven total = 1 [kg] over steel", 1, 21, "the target is in [kg] but must be in [$]"},
		{"breakeven total = 1 over stel", 1, 26, "undefined input stel (did you mean steel?)"},
		{"breakeven total = 1 over steel 2..1", 1, 32, "reversed"},
		{"compare total across base, lan", 1, 28, "undefined scenario lan (did you mean lean?)"},
		{"compare total across base, base", 1, 28, "base is listed twice"},
		{"scenario base: hours = 1", 1, 10, "base is the baseline"},
		{"scenario slow: hour = 2", 1, 16, "undefined input hour (did you mean hours?)"},
		{"scenario slow: total = 2", 1, 16, "total is a formula: a scenario sets inputs only"},
		{"scenario slow: hours = 2 [kg]", 1, 26, "the scenario value of hours is in"},
	} {
		in := newShop(t)
		run(t, in, "scenario lean: hours = 1.2")
		err := in.Execute(context.Background(), "cell", tc.src, &analysisSink{})
		var ce *CellError
		if !errors.As(err, &ce) {
			t.Errorf("%s: error %v, want a CellError", tc.src, err)
			continue
		}
		e := ce.First()
		if e.Pos.Line != tc.line || e.Pos.Column != tc.col || !strings.Contains(e.Msg, tc.msg) {
			t.Errorf("%s: error at %d:%d %q; want %d:%d containing %q", tc.src, e.Pos.Line, e.Pos.Column, e.Msg, tc.line, tc.col, tc.msg)
		}
		if e.Caret() == "" {
			t.Errorf("%s: no caret display", tc.src)
		}
	}
}

func TestAnalysisInterrupted(t *testing.T) {
	in := newShop(t)
	ctx, cancel := context.WithCancel(context.Background())
	s := &analysisSink{}
	// Cancel from the first progress report: the analysis stops.
	sink := &cancelSink{analysisSink: s, cancel: cancel}
	err := in.Execute(ctx, "", "sweep total over rate 40..80 and hours 1..2 n=200", sink)
	if err == nil || !strings.Contains(err.Error(), "interrupted") {
		t.Errorf("error %v, want an interruption", err)
	}
	if len(s.results) != 0 {
		t.Errorf("an interrupted sweep showed %d results", len(s.results))
	}
}

type cancelSink struct {
	*analysisSink
	cancel func()
}

func (s *cancelSink) Progress(id, label string, done, total int) {
	s.cancel()
	s.analysisSink.Progress(id, label, done, total)
}

// A model with steps on many lines names the first few in its warning and
// its results, and counts the rest, so that a large model's warning stays
// one line.
func TestStepWarningSummarised(t *testing.T) {
	var src strings.Builder
	src.WriteString("input q = 30 (20..40)\n")
	for i := 0; i < 8; i++ {
		fmt.Fprintf(&src, "f%d = if(q > %d, 1, 2) * q\n", i, 21+i)
	}
	src.WriteString("total = f0 + f1 + f2 + f3 + f4 + f5 + f6 + f7\ndrivers total\n")
	in := New()
	s := run(t, in, src.String())
	warn := s.stderr.String()
	if !strings.Contains(warn, "cell 1:2:11, cell 1:3:11, cell 1:4:11, cell 1:5:11, cell 1:6:11 and 3 more lines: a step-shaped operation") || strings.Contains(warn, "cell 1:7:") {
		t.Errorf("warning %q: want the first %d lines and a count of the rest", warn, sens.StepsShown)
	}
	m := object(t, s.results[0])
	if steps, _ := m["steps"].([]any); len(steps) != sens.StepsShown || m["step_lines"] != 8.0 {
		t.Errorf("drivers steps %v, step_lines %v; want %d and 8", m["steps"], m["step_lines"], sens.StepsShown)
	}
}

// A sweep finds a dip across the target between two points on the same
// side of it: y = (x - 1.2)(x - 1.7) + 5 is 5.14 and 5.24 at x = 1 and 2,
// and equals 5 at 1.2 and 1.7 (algebra, common practice). The text, HTML and
// JSON list both crossings as any verified crossing is listed.
func TestSweepCommandDip(t *testing.T) {
	in := New()
	run(t, in, "input x = 1 (0..3)\ny = (x - 1.2) * (x - 1.7) + 5\n")
	s := run(t, in, "sweep y over x 0..3 n=4 target=5")
	if len(s.results) != 1 {
		t.Fatalf("%d results", len(s.results))
	}
	r := s.results[0]
	want := "y = 5 at x = 1.2, 1.7 (verified on the model)"
	if !strings.Contains(r.Text(), want) || !strings.Contains(r.HTML(), want) {
		t.Errorf("text:\n%s\nwant %q", r.Text(), want)
	}
	cr := object(t, r)["crossings"].([]any)
	if len(cr) != 2 || !scalar.EqualWithinAbsOrRel(cr[0].(float64), 1.2, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(cr[1].(float64), 1.7, 1e-12, 1e-12) {
		t.Errorf("crossings %v, want [1.2 1.7]", cr)
	}
}

// A 2-D sweep's chart draws the contour the analysis placed and verified,
// and marks its jumps: y steps from 1 to 1e9 at x = 2 (the model's
// condition), so each of the 4 rows passes the target 5 by a jump there.
func TestSweep2DChartMarksJumps(t *testing.T) {
	in := New()
	run(t, in, "input x = 1 (0..3)\ninput w = 1 (0..3)\ny = if(x < 2, 1, 1e9) + 0*w\n")
	s := run(t, in, "sweep y over x 0..3 and w 0..3 n=4 target=5")
	r := s.results[0]
	if n := len(object(t, r)["contour_jumps"].([]any)); n != 4 {
		t.Fatalf("%d contour jumps, want 4", n)
	}
	if svg := r.SVG(); !strings.Contains(svg, ">jumps past the target<") {
		t.Errorf("the chart's legend does not name the jumps (%d bytes of SVG)", len(svg))
	}
	if h := r.HTML(); !strings.Contains(h, "Crosses mark 4 of its points where the output jumps past the target") {
		t.Error("the chart's description does not say where the jumps are")
	}
}
