package kernel

import (
	"bytes"
	"context"
	"errors"
	"io"
	"log"
	"os/exec"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/nudge-dev/nudge/sens"
)

// cellErr runs src as a cell and returns its error's text ("" for none).
func cellErr(in *Interp, src string) string {
	err := in.Execute(context.Background(), "", src, &analysisSink{})
	if err == nil {
		return ""
	}
	var ce *CellError
	if errors.As(err, &ce) {
		return ce.Detail()
	}
	return err.Error()
}

// Within one cell (or file) a second declaration of a name is an error
// that names the first; a later cell may redefine it (issue 8, item 10).
func TestDuplicateDeclarations(t *testing.T) {
	for _, c := range []struct{ src, want string }{
		{"input a = 1\ny = a\ninput a = 2\n", "cell 1:3:7: a is declared twice: first as an input at line 1, column 7"},
		{"input a = 1\ny = a\ny = 2 * a\n", "cell 1:3:1: y is declared twice: first as a formula at line 2, column 1"},
		{"input a = 1\na = 2\n", "cell 1:2:1: a is declared twice: first as an input at line 1, column 7"},
		{"input a = 1\nscenario s: a = 2\nscenario s: a = 3\n", "cell 1:3:10: scenario s is defined twice: first at line 2, column 10"},
		{"exchange EUR = 1.08 [$]\nexchange EUR = 1.2 [$]\n", "cell 1:2:10: the exchange rate of EUR is stated twice: first at line 1, column 10"},
		{"input a = 1 ~ normal(1, 0.1)\ninput b = 1 ~ normal(1, 0.1)\nspearman a, b = 0.5\nspearman b, a = 0.7\n", "cell 1:4:10: the rank correlation of a and b is declared twice: first at line 3, column 10"},
	} {
		in := New()
		got := cellErr(in, c.src)
		if !strings.HasPrefix(got, c.want) {
			t.Errorf("%q:\ngot  %s\nwant %s", c.src, got, c.want)
		}
		if in.Model.Len() != 0 {
			t.Errorf("%q: the failed cell left %d declarations", c.src, in.Model.Len())
		}
	}
	// Across cells a name is redefined, as a notebook changes a model.
	in := New()
	for _, src := range []string{"input a = 1\ny = a\nscenario s: a = 2\nexchange EUR = 1.08 [$]", "input a = 3\ny = 2 * a\nscenario s: a = 4\nexchange EUR = 1.1 [$]"} {
		if got := cellErr(in, src); got != "" {
			t.Fatalf("%q: %s", src, got)
		}
	}
	if v := run(t, in, "y").results[0]; !strings.Contains(string(v.JSON()), `"value":6`) {
		t.Errorf("y after the redefinition: %s", v.JSON())
	}
	// A model file loaded by a Go program follows the same rule.
	if _, err := sens.LoadModel("m", []byte("input a = 1\ninput a = 2\n")); err == nil || !strings.Contains(err.Error(), "m:2:7: a is declared twice") {
		t.Errorf("LoadModel: %v", err)
	}
}

// An option given twice is an error at the second (issue 8, item 10).
func TestOptionGivenTwice(t *testing.T) {
	in := newShop(t)
	got := cellErr(in, "tornado total top=1 top=2")
	if !strings.HasPrefix(got, "cell 2:1:21: top is given twice") {
		t.Errorf("got %s", got)
	}
}

// Every count option has a documented largest value: one more is an error
// that names the range, and help shows it (issue 8, item 9).
func TestOptionMaxima(t *testing.T) {
	for _, c := range []struct{ cmd, key string }{
		{"simulate total", "n"}, {"screen total", "n"}, {"sobol total", "n"}, {"sobol total", "bootstrap"},
		{"morris total", "r"}, {"morris total", "levels"}, {"spider total", "points"}, {"spider total", "lines"},
		{"tornado total", "top"},
	} {
		verb, _, _ := strings.Cut(c.cmd, " ")
		var o *Option
		for i, spec := range commands[verb].Options {
			if spec.Key == c.key {
				o = &commands[verb].Options[i]
			}
		}
		if o == nil {
			t.Fatalf("%s has no option %s", verb, c.key)
		}
		in := newShop(t)
		got := cellErr(in, c.cmd+" "+c.key+"="+itoa(o.Most()+1))
		want := c.key + " must be a whole number from " + itoa(o.Min) + " to " + count(o.Most()) + ", found " + itoa(o.Most()+1)
		if !strings.Contains(got, want) {
			t.Errorf("%s %s=%d: got %s, want %s", c.cmd, c.key, o.Most()+1, got, want)
		}
		if o.Max > 0 && !strings.Contains(run(t, New(), "help "+verb).results[0].Text(), "at most "+count(o.Max)) {
			t.Errorf("help %s does not show the largest %s", verb, c.key)
		}
	}
	// The analyses that keep a value per point and input check the product.
	var src strings.Builder
	src.WriteString("input a = 1 (0..2)\ny = a")
	for i := range 20000 {
		src.WriteString(" + x" + itoa(i))
	}
	src.WriteString("\n")
	for i := range 20000 {
		src.WriteString("input x" + itoa(i) + " = 1 (0..2)\n")
	}
	in := New()
	if got := cellErr(in, src.String()); got != "" {
		t.Fatal(got)
	}
	for _, c := range []struct{ cmd, want string }{
		{"spider y points=1000", "spider y: 1,001 points on each of 20,001 inputs would keep 20,021,001 values, more than the 16,777,216 an analysis keeps: lower points="},
		{"morris y r=1000", "morris y: r = 1,000 trajectories of 20,002 points would keep 20,002,000 values, more than the 16,777,216 an analysis keeps"},
	} {
		if got := cellErr(in, c.cmd); !strings.Contains(got, c.want) || !strings.HasPrefix(got, "cell ") {
			t.Errorf("%s: got %s, want %s", c.cmd, got, c.want)
		}
	}
}

func itoa(n int) string { return strings.TrimSpace(strings.ReplaceAll(count(n), ",", "")) }

// A scenario keeps the value as written, unit included: when the input's
// unit changes in a later cell the value is converted, or it is an error
// at the scenario's line when the dimensions differ (issue 8, item 10).
func TestScenarioKeepsItsUnit(t *testing.T) {
	in := New()
	run(t, in, "input m = 10 [kg] (5..20)\ny = m * 2\nscenario heavy: m = 5000 [g]")
	run(t, in, "input m = 10 [t] (5..20)")
	r := run(t, in, "compare y across base, heavy").results[0]
	// 5,000 g is 0.005 t (SI: 1 t = 1,000 kg); y doubles it.
	if js := string(r.JSON()); !strings.Contains(js, `"name":"heavy","value":0.01`) {
		t.Errorf("heavy after m moved to tonnes: %s", js)
	}
	run(t, in, "input m = 10 [s] (5..20)")
	got := cellErr(in, "compare y across base, heavy")
	if !strings.HasPrefix(got, "cell 1:3:26: the scenario value of m is in [g] but must be in [s] (mass vs time)") {
		t.Errorf("got %s", got)
	}
}

// countingCtx is a context whose Err turns to Canceled after a number of
// calls: an interruption that arrives while a long step runs, at a point
// the test chooses without a clock.
type countingCtx struct {
	context.Context
	calls, after atomic.Int64
}

func (c *countingCtx) Err() error {
	if c.calls.Add(1) > c.after.Load() {
		return context.Canceled
	}
	return nil
}

// An interruption stops a compile: a cell of 8,000 formulas stops with an
// interruption while the model is checked, and the model is as it was.
func TestInterruptStopsCompile(t *testing.T) {
	var src strings.Builder
	src.WriteString("input a = 1\n")
	for i := range 8000 {
		src.WriteString("f" + itoa(i) + " = a * " + itoa(i+1) + "\n")
	}
	in := New()
	ctx := &countingCtx{Context: context.Background()}
	ctx.after.Store(8001) // the statements pass; the compile looks every 64 formulas
	err := in.Execute(ctx, "", src.String(), &analysisSink{})
	if err == nil || !strings.Contains(err.Error(), "interrupted") {
		t.Fatalf("got %v, want an interruption", err)
	}
	// A compile that went on would look at the context 125 more times (once
	// every 64 formulas); a stopped one a few times on its way out.
	if n := ctx.calls.Load(); n > 8001+20 {
		t.Errorf("the compile went on after the interruption: %d looks at the context", n)
	}
	if in.Model.Len() != 0 {
		t.Errorf("the interrupted cell left %d declarations", in.Model.Len())
	}
}

// nudge exec shows the source line an error quotes with its control
// characters made visible: a model file cannot drive the terminal.
func TestRunFileErrorIsPlainText(t *testing.T) {
	var out, errs bytes.Buffer
	src := "input a = 1\ny = a + \x1b[2J\x1b]0;title\x07 + zz\n"
	if err := RunFile(context.Background(), New(), "m", src, &WriterSink{Out: &out, Err: &errs}); err == nil {
		t.Fatal("no error")
	}
	if strings.ContainsAny(errs.String(), "\x1b\x07") {
		t.Errorf("the error line carries control characters: %q", errs.String())
	}
	if !strings.Contains(errs.String(), "y = a + ␛[2J␛]0;title␇ + zz") {
		t.Errorf("the source line is not shown with control pictures: %q", errs.String())
	}
}

// The parent watch follows JPY_PARENT_PID, the process that launched the
// kernel, which need not be its parent: when that process exits, the
// kernel's context ends.
func TestWatchParentFollowsLauncher(t *testing.T) {
	if parentPID("not a pid") <= 1 || parentPID(" 1 ") <= 1 {
		t.Errorf("a value that is not a launcher's pid must fall back to the parent")
	}
	launcher := exec.Command("sleep", "60")
	if err := launcher.Start(); err != nil {
		t.Skip("no sleep command:", err)
	}
	pid := launcher.Process.Pid
	if parentPID(itoa(pid)) != pid {
		t.Fatalf("parentPID(%d) = %d", pid, parentPID(itoa(pid)))
	}
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	watched := watchParent(ctx, log.New(io.Discard, "", 0), 5*time.Millisecond, pid)
	select {
	case <-watched.Done():
		t.Fatal("the watch ended while the launcher runs")
	case <-time.After(50 * time.Millisecond):
	}
	launcher.Process.Kill()
	launcher.Wait() // reaped: the pid is gone
	<-watched.Done()
	if ctx.Err() != nil {
		t.Fatal("the launcher's exit was not noticed")
	}
}
