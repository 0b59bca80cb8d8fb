package kernel

// Regression tests of issue 8 in the interpreter and the fronts.

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

// panicSink panics when a result reaches it: a stand-in for a bug anywhere
// on the way from a command to the front.
type panicSink struct{ captureSink }

func (s *panicSink) Result(*render.Result, bool) { panic("renderer exploded\nsecond line") }

// TestInternalErrorOneLine checks that a panic inside a command reaches the
// user as one line that names what failed, at the statement, and that the Go
// stack goes to the debug log only (issue 8, item 16).
func TestInternalErrorOneLine(t *testing.T) {
	in := New()
	var log strings.Builder
	in.DebugLog = &log
	err := in.Execute(context.Background(), "cell", "input x = 2 (1..3)\ny = x * x\ndrivers y\n", &panicSink{})
	var ce *CellError
	if !errors.As(err, &ce) {
		t.Fatalf("want a *CellError, got %v", err)
	}
	e := ce.First()
	if strings.Contains(e.Msg, "\n") || strings.Contains(e.Msg, "goroutine") {
		t.Errorf("message spans lines or shows a stack: %q", e.Msg)
	}
	if !strings.HasPrefix(e.Msg, "internal error: the command drivers failed (renderer exploded second line)") {
		t.Errorf("message %q", e.Msg)
	}
	if e.Pos.Line != 3 || e.Pos.Column != 1 || e.Source != "drivers y" {
		t.Errorf("at %v %q, want 3:1 drivers y", e.Pos, e.Source)
	}
	if !strings.Contains(log.String(), "goroutine") || !strings.Contains(log.String(), "renderer exploded") {
		t.Errorf("debug log lacks the stack: %q", log.String())
	}
	// The session survives, as before the cell.
	if err := in.Execute(context.Background(), "cell", "input z = 1\n", &captureSink{}); err != nil {
		t.Fatal(err)
	}
}

// TestDriversNearOverflow checks the case of issue 8, item 16: y = x·x at
// x = 1.1e154 is finite (1.21e308) but ∂y/∂x · x is not. The elasticity of
// a·x^b in x is b (common practice), so 2 here, and it is the only input.
func TestDriversNearOverflow(t *testing.T) {
	in := New()
	sink := &captureSink{}
	if err := in.Execute(context.Background(), "cell", "input x = 1.1e154\ny = x*x\ndrivers y\n", sink); err != nil {
		t.Fatal(err)
	}
	d := sink.results[0].Data.(*sens.DriversResult)
	if e := d.Inputs[0].Elasticity; math.Abs(e-2) > 1e-12 || d.Inputs[0].Share != 1 {
		t.Errorf("elasticity %v share %v, want 2 and 1", e, d.Inputs[0].Share)
	}
	if !strings.Contains(sink.results[0].Text(), "+2.0000") {
		t.Errorf("text:\n%s", sink.results[0].Text())
	}
}

// TestElasticityUndefinedAtZero: where the output is 0 at the baseline, an
// elasticity (a percentage change of the output) is undefined: "n/a" in the
// text and HTML, null in JSON, an empty cell in CSV (issue 8, item 17).
func TestElasticityUndefinedAtZero(t *testing.T) {
	in := New()
	sink := &captureSink{}
	if err := in.Execute(context.Background(), "cell", "input a = 2 (1..3)\ninput b = 3 (1..4)\ny = a - b + 1\ndrivers y\n", sink); err != nil {
		t.Fatal(err)
	}
	r := sink.results[0]
	if !strings.Contains(r.Text(), " n/a ") || !strings.Contains(r.HTML(), ">n/a<") {
		t.Errorf("text or HTML lacks n/a:\n%s\n%s", r.Text(), r.HTML())
	}
	if j := string(r.JSON()); !strings.Contains(j, `"elasticity":null`) || strings.Contains(j, `"elasticity":0`) {
		t.Errorf("JSON %s", j)
	}
	for _, tb := range r.Tables() {
		var b strings.Builder
		if err := tb.WriteCSV(&b); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), ",,") && !strings.HasSuffix(strings.Split(b.String(), "\n")[1], ",") {
			t.Errorf("CSV %q: want an empty elasticity cell", b.String())
		}
	}
	// Shares of |∂y/∂x·x| still rank: b (3) before a (2).
	d := r.Data.(*sens.DriversResult)
	if d.Inputs[0].Name != "b" || math.Abs(d.Inputs[0].Share-0.6) > 1e-15 {
		t.Errorf("ranking %+v", d.Inputs)
	}
}

// TestWriterFailsOnNonFinite: a result whose JSON cannot be written (a number
// that is not finite) makes the writer fail, in JSON and in text (issue 8,
// item 15), so `nudge exec` exits with a failure status.
func TestWriterFailsOnNonFinite(t *testing.T) {
	for _, asJSON := range []bool{true, false} {
		var out, errw strings.Builder
		s := &WriterSink{Out: &out, Err: &errw, JSON: asJSON}
		s.Result(render.Value(&sens.ValueResult{Kind: "value", Name: "y", Value: math.Inf(1)}, &render.Options{}), false)
		if !s.Failed {
			t.Errorf("json %v: not failed; out %q err %q", asJSON, out.String(), errw.String())
		}
	}
}

// TestTornadoZeroNoRange (issue 8, item 17): an input of value 0 with no
// range gets no range from ±10%; the tornado says so, as a warning and a
// note, instead of showing a silent zero swing.
func TestTornadoZeroNoRange(t *testing.T) {
	in := New()
	sink := &captureSink{}
	if err := in.Execute(context.Background(), "cell", "input a = 0\ninput b = 2 (1..3)\ny = a + b*b\ntornado y\n", sink); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(sink.stderr.String(), "a is 0 with no range or distribution, and ±10% of 0 is no range") {
		t.Errorf("warnings: %q", sink.stderr.String())
	}
	if text := sink.results[0].Text(); !strings.Contains(text, "no range: a is 0") {
		t.Errorf("text:\n%s", text)
	}
	if !strings.Contains(string(sink.results[0].JSON()), `"no_range":["a"]`) {
		t.Errorf("JSON %s", sink.results[0].JSON())
	}
}

// TestSweepPlateauReached (issue 8, item 17): max(a + b, 3) is level at the
// target 3 on 22 of the 25 grid points (a + b <= 3, by hand); the result
// says it is reached there, not that it does not reach it.
func TestSweepPlateauReached(t *testing.T) {
	in := New()
	sink := &captureSink{}
	if err := in.Execute(context.Background(), "cell", "input a = 1 (0..2)\ninput b = 1 (0..2)\ny = max(a + b, 3)\nsweep y over a 0..2 and b 0..2 n=5 target=3\n", sink); err != nil {
		t.Fatal(err)
	}
	text := sink.results[0].Text()
	if !strings.Contains(text, "y equals 3 at 22 of the 25 grid points") || strings.Contains(text, "not reached") || strings.Contains(text, "does not reach") {
		t.Errorf("text:\n%s", text)
	}
}

// TestSubtotalElasticityUndefinedAtZero: with vector inputs and an output of
// 0 at the baseline, the subtotals' sums of elasticities are undefined too:
// n/a in the text, null in JSON (issue 8, item 17).
func TestSubtotalElasticityUndefinedAtZero(t *testing.T) {
	in := New()
	in.Dir = writeBid(t, 40)
	sink := &captureSink{}
	src := bidCell + "input offset = 1 [$] (0..2)\nnet = total - total * offset / (1 [$])\ndrivers net top=3\n"
	if err := in.Execute(context.Background(), "cell", src, sink); err != nil {
		t.Fatal(err)
	}
	r := sink.results[len(sink.results)-1]
	text, j := r.Text(), string(r.JSON())
	if strings.Contains(text, "NaN") || !strings.Contains(text, "… and 79 more inputs (top=N keeps N)") || !strings.Contains(text, "qty                    40           n/a") || !strings.Contains(j, `"max_elasticity":null`) ||
		strings.Contains(j, `"elasticity":0,`) {
		t.Errorf("text:\n%s\nJSON %s", text, j)
	}
}
