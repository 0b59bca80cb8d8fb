package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

// frontEnd records what a cell sends and keeps a cell's outputs as a
// notebook front end does (nbformat's outputs list): a display appends, an
// update replaces the displays with its id, a stream appends to the last
// output when that is the same stream, and clear_output empties the list,
// with wait when the next output arrives.
type frontEnd struct {
	events   []string
	outputs  []output
	payloads []map[string]any
	clearing bool
}

type output struct {
	id     string
	stream string
	data   map[string]any
}

func (f *frontEnd) pendingClear() {
	if f.clearing {
		f.outputs, f.clearing = nil, false
	}
}

func (f *frontEnd) Stream(name, text string) {
	f.events = append(f.events, "stream "+name)
	f.pendingClear()
	if n := len(f.outputs); n > 0 && f.outputs[n-1].stream == name {
		f.outputs[n-1].data["text"] = f.outputs[n-1].data["text"].(string) + text
		return
	}
	f.outputs = append(f.outputs, output{stream: name, data: map[string]any{"text": text}})
}

func (f *frontEnd) Display(b *jupyter.Bundle, id string) {
	f.events = append(f.events, "display "+kindOf(b)+" "+id)
	f.pendingClear()
	f.outputs = append(f.outputs, output{id: id, data: b.Data})
}

func (f *frontEnd) UpdateDisplay(b *jupyter.Bundle, id string) {
	f.events = append(f.events, "update "+id)
	for i := range f.outputs {
		if f.outputs[i].id == id {
			f.outputs[i].data = b.Data
		}
	}
}

func (f *frontEnd) ClearOutput(wait bool) {
	f.events = append(f.events, fmt.Sprintf("clear wait=%v", wait))
	if wait {
		f.clearing = true
	} else {
		f.outputs, f.clearing = nil, false
	}
}

func (f *frontEnd) Payload(p map[string]any) { f.payloads = append(f.payloads, p) }

// kindOf names a bundle by its result kind, or as the caution or a progress
// line.
func kindOf(b *jupyter.Bundle) string {
	h, _ := b.Data["text/html"].(string)
	switch {
	case b.Data[render.ResultMIME] != nil:
		var k struct{ Kind string }
		if err := json.Unmarshal(b.Data[render.ResultMIME].(json.RawMessage), &k); err != nil {
			return "bad JSON"
		}
		return k.Kind
	case strings.Contains(h, "nudge-caution"):
		return "caution"
	case strings.Contains(h, "nudge-progress"):
		return "progress"
	}
	return "?"
}

// clock is a test clock that moves step on every reading.
type clock struct {
	t    time.Time
	step time.Duration
}

func (c *clock) now() time.Time { c.t = c.t.Add(c.step); return c.t }

const sinkModel = "input a = 2 [kg] (1..3)\ninput p = 3 [$/kg] (2..4)\nc = a * p\n"

func TestCautionOncePerCell(t *testing.T) {
	h := NewHandler(New())
	fe := &frontEnd{}
	last, err := h.Execute(context.Background(), sinkModel+"drivers c\ntornado c\nprint \"done\"\nc", fe, jupyter.ExecOptions{ExecutionCount: 1})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"display drivers ", "display tornado ", "stream stdout", "display caution "}
	if !reflect.DeepEqual(fe.events, want) {
		t.Errorf("events %q, want %q", fe.events, want)
	}
	if last == nil || strings.Contains(last.Data["text/plain"].(string), "Caution") {
		t.Errorf("execute_result %v", last)
	}
	// A cell of values and definitions carries no caution.
	fe = &frontEnd{}
	if _, err := h.Execute(context.Background(), "d = c * 2\nprint \"x\"", fe, jupyter.ExecOptions{}); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(fe.events, []string{"stream stdout"}) {
		t.Errorf("events %q", fe.events)
	}
}

// progressSink drives a sink's progress lines by hand with a test clock.
func progressSink(console bool, step time.Duration) (*jupyterSink, *frontEnd, *clock) {
	fe := &frontEnd{}
	c := &clock{t: time.Unix(0, 0), step: step}
	return &jupyterSink{h: NewHandler(New()), out: fe, console: console, now: c.now}, fe, c
}

func TestProgressOnlyForLongWork(t *testing.T) {
	// Ten reports 40 ms apart: 0.4 s in all, so no progress line.
	s, fe, _ := progressSink(false, 40*time.Millisecond)
	for i := 1; i <= 10; i++ {
		s.Progress("a", "sweep y", i, 10)
	}
	if len(fe.events) != 0 {
		t.Errorf("events %q for work of 0.4 s", fe.events)
	}

	// A warning and a result before, then forty reports 60 ms apart: the
	// line appears after half a second and is updated at most every 100 ms.
	// A report that the work is done, which an analysis of several passes
	// may send between them, leaves it as it is.
	s, fe, _ = progressSink(false, 60*time.Millisecond)
	s.Stream("stderr", "warning: x\n")
	s.Result(render.Value(&sens.ValueResult{Kind: "value", Name: "y", Value: 2}, nil), false)
	for i := 1; i <= 40; i++ {
		s.Progress("a", "sweep y", i, 40)
		if i == 20 {
			s.Progress("a", "sweep y", 20, 20)
		}
	}
	var displays, updates int
	for _, e := range fe.events {
		switch {
		case strings.HasPrefix(e, "display progress"):
			displays++
		case strings.HasPrefix(e, "update"):
			updates++
		case strings.HasPrefix(e, "clear"):
			t.Errorf("cleared before the result: %q", fe.events)
		}
	}
	if displays != 1 || updates < 5 || updates > 20 {
		t.Errorf("%d progress displays, %d updates: %q", displays, updates, fe.events)
	}
	// The analysis's result clears the line away: the cell is cleared and
	// shows again what it showed, then the result.
	s.Result(render.Value(&sens.ValueResult{Kind: "value", Name: "z", Value: 3}, nil), false)
	tail := fe.events[len(fe.events)-4:]
	if want := []string{"clear wait=true", "stream stderr", "display value ", "display value "}; !reflect.DeepEqual(tail, want) {
		t.Errorf("events end %q, want %q", tail, want)
	}
	if len(fe.outputs) != 3 || fe.outputs[0].stream != "stderr" || fe.outputs[1].data["text/plain"] != "y = 2" || fe.outputs[2].data["text/plain"] != "z = 3" {
		t.Errorf("outputs after the line gave way: %+v", fe.outputs)
	}
	// Further reports of a finished line do nothing.
	n := len(fe.events)
	s.Progress("a", "sweep y", 39, 40)
	s.finish()
	if len(fe.events) != n {
		t.Errorf("a finished line was shown again: %q", fe.events[n:])
	}

	// A cell that ends without a result (an error) clears the line too.
	s, fe, _ = progressSink(false, time.Second)
	s.Progress("a", "sweep y", 1, 4)
	s.Progress("a", "sweep y", 2, 4)
	s.finish()
	if want := []string{"display progress nudge-progress-1", "clear wait=true", "clear wait=false"}; !reflect.DeepEqual(fe.events, want) || len(fe.outputs) != 0 {
		t.Errorf("events %q, outputs %v", fe.events, fe.outputs)
	}
}

func TestProgressLineIsHTMLOnly(t *testing.T) {
	b := progressBundle("sweep y", 2500, 10000)
	h, _ := b.Data["text/html"].(string)
	if len(b.Data) != 1 || !strings.Contains(h, `<progress value="2500" max="10000"`) || !strings.Contains(h, "sweep y: 25% (2,500 of 10,000)") {
		t.Errorf("progress bundle %v", b.Data)
	}
}

// A console prints every display and ignores updates: it gets no progress
// line at all.
func TestNoProgressInConsole(t *testing.T) {
	s, fe, _ := progressSink(true, time.Second)
	for i := 1; i <= 10; i++ {
		s.Progress("a", "sweep y", i, 10)
	}
	if len(fe.events) != 0 {
		t.Errorf("events %q in a console", fe.events)
	}
	h := NewHandler(New())
	if h.console.Load() {
		t.Fatal("a new session is a console")
	}
	h.IsComplete("x = 1")
	if !h.console.Load() {
		t.Error("a client that asks is_complete is not taken for a console")
	}
}

// A cell whose analysis shows a progress line leaves, once run, the same
// outputs as it would without one.
func TestProgressLeavesNothing(t *testing.T) {
	cell := sinkModel + "drivers c\nsweep c over a 1..3 and p 2..4 n=200\nprint \"after\""
	run := func(step time.Duration) (*frontEnd, []string) {
		h := NewHandler(New())
		c := &clock{t: time.Unix(0, 0), step: step}
		h.now = c.now
		fe := &frontEnd{}
		if _, err := h.Execute(context.Background(), cell, fe, jupyter.ExecOptions{}); err != nil {
			t.Fatal(err)
		}
		var kinds []string
		for _, o := range fe.outputs {
			if o.stream != "" {
				kinds = append(kinds, o.stream)
			} else {
				kinds = append(kinds, kindOf(&jupyter.Bundle{Data: o.data}))
			}
		}
		return fe, kinds
	}
	slow, withLine := run(time.Second)
	_, without := run(0)
	if !strings.Contains(strings.Join(slow.events, ","), "display progress") {
		t.Fatalf("no progress line in a slow run: %q", slow.events)
	}
	if !reflect.DeepEqual(withLine, without) || !reflect.DeepEqual(without, []string{"drivers", "sweep", "stdout", "caution"}) {
		t.Errorf("outputs %q with a progress line, %q without", withLine, without)
	}
}

func TestExitAsksTheConsoleToEnd(t *testing.T) {
	h := NewHandler(New())
	for _, code := range []string{"exit", " quit\n", "exit()"} {
		fe := &frontEnd{}
		if _, err := h.Execute(context.Background(), code, fe, jupyter.ExecOptions{}); err != nil {
			t.Fatal(err)
		}
		if want := []map[string]any{{"source": "ask_exit", "keepkernel": false}}; !reflect.DeepEqual(fe.payloads, want) {
			t.Errorf("%q: payloads %v", code, fe.payloads)
		}
	}
	// A model's own name is its value, not the end of the session.
	fe := &frontEnd{}
	last, err := h.Execute(context.Background(), "exit = 3\nexit", fe, jupyter.ExecOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(fe.payloads) != 0 || last == nil {
		t.Errorf("payloads %v, result %v", fe.payloads, last)
	}
	fe = &frontEnd{}
	last, _ = h.Execute(context.Background(), "exit", fe, jupyter.ExecOptions{})
	if len(fe.payloads) != 0 || last == nil || last.Data["text/plain"] != "exit = 3" {
		t.Errorf("payloads %v, result %v", fe.payloads, last)
	}
}

// An error is at least as prominent as a warning: its first line, the
// message, is the traceback's headline (bold red), and the cell shows nothing
// else for it.
func TestErrorHeadline(t *testing.T) {
	h := NewHandler(New())
	fe := &frontEnd{}
	_, err := h.Execute(context.Background(), sinkModel+"drivers c\nd = c * shop_rat", fe, jupyter.ExecOptions{ExecutionCount: 4})
	var ee *jupyter.ExecError
	if !errors.As(err, &ee) || ee.Name != "ModelError" || !strings.Contains(ee.Value, "line 5, column 9: undefined: shop_rat") {
		t.Fatalf("error %v", err)
	}
	if !ee.Headline || !strings.HasPrefix(ee.Traceback[0], "cell[4]:5:9: undefined: shop_rat") || len(ee.Traceback) != 3 {
		t.Errorf("traceback %q, headline %v", ee.Traceback, ee.Headline)
	}
	if want := []string{"display drivers ", "display caution "}; !reflect.DeepEqual(fe.events, want) {
		t.Errorf("events %q, want %q", fe.events, want)
	}
}

func TestLanguageInfo(t *testing.T) {
	li := NewHandler(New()).Info().Language
	if li.Name != "nudge" || li.PygmentsLexer != "julia" || li.CodeMirrorMode != "julia" || li.FileExtension != ".nudge" {
		t.Errorf("language_info %+v", li)
	}
}
