package jupyter

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"log"
	"net"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

func TestKernelInfoBusyIdle(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	for _, ch := range []struct {
		name string
		s    *sock
	}{{"shell", c.shell}, {"control", c.control}} {
		id := c.send(ch.s, "kernel_info_request", map[string]any{})
		r := c.reply(ch.s, id)
		if r.typ() != "kernel_info_reply" {
			t.Fatalf("%s: got %s", ch.name, r.typ())
		}
		// The reply's parent_header is the request's header.
		if r.parent["msg_type"] != "kernel_info_request" || r.parent["username"] != "tester" {
			t.Errorf("%s: parent header %v", ch.name, r.parent)
		}
		if len(r.metadata) != 0 {
			t.Errorf("%s: metadata %v, want {}", ch.name, r.metadata)
		}
		if r.header["version"] != "5.3" || r.header["session"] != tk.k.Session() || r.header["date"] == "" {
			t.Errorf("%s: header %v", ch.name, r.header)
		}
		want := map[string]any{
			"status": "ok", "protocol_version": "5.3", "implementation": "fake",
			"implementation_version": "0.1", "banner": "fake kernel", "debugger": false,
		}
		for k, v := range want {
			if r.content[k] != v {
				t.Errorf("%s: %s = %v, want %v", ch.name, k, r.content[k], v)
			}
		}
		li := r.content["language_info"].(map[string]any)
		if li["name"] != "fakelang" || li["file_extension"] != ".fake" || li["mimetype"] != "text/x-fakelang" {
			t.Errorf("%s: language_info %v", ch.name, li)
		}
		if got := types(c.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "status:idle"}) {
			t.Errorf("%s: iopub %v, want busy then idle", ch.name, got)
		}
	}
}

func TestExecuteOutputs(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)

	r, io := c.execute("print hello, world", nil)
	if r.str("status") != "ok" || r.content["execution_count"] != 1.0 {
		t.Fatalf("reply %v", r.content)
	}
	if !reflect.DeepEqual(r.content["user_expressions"], map[string]any{}) || !reflect.DeepEqual(r.content["payload"], []any{}) {
		t.Errorf("reply user_expressions/payload %v", r.content)
	}
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "stream", "status:idle"}) {
		t.Fatalf("iopub %v", got)
	}
	if io[1].str("code") != "print hello, world" || io[1].content["execution_count"] != 1.0 {
		t.Errorf("execute_input %v", io[1].content)
	}
	if io[2].str("name") != "stdout" || io[2].str("text") != "hello, world\n" || io[2].topic != "stream.stdout" {
		t.Errorf("stream %v topic %q", io[2].content, io[2].topic)
	}

	_, io = c.execute("warn careful", nil)
	if io[2].str("name") != "stderr" {
		t.Errorf("stderr stream %v", io[2].content)
	}

	r, io = c.execute("result 42", nil)
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "execute_result", "status:idle"}) {
		t.Fatalf("iopub %v", got)
	}
	er := io[2].content
	if er["execution_count"] != 3.0 || !reflect.DeepEqual(er["data"], map[string]any{"text/plain": "42"}) ||
		!reflect.DeepEqual(er["metadata"], map[string]any{}) {
		t.Errorf("execute_result %v", er)
	}
	if r.content["execution_count"] != 3.0 {
		t.Errorf("execution_count %v", r.content["execution_count"])
	}

	_, io = c.execute("display", nil)
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "display_data",
		"update_display_data", "display_data", "clear_output", "status:idle"}) {
		t.Fatalf("iopub %v", got)
	}
	if tr := io[2].content["transient"]; !reflect.DeepEqual(tr, map[string]any{"display_id": "progress"}) {
		t.Errorf("display transient %v", tr)
	}
	up := io[3].content
	if !reflect.DeepEqual(up["transient"], map[string]any{"display_id": "progress"}) ||
		!reflect.DeepEqual(up["data"], map[string]any{"text/plain": "100%"}) ||
		!reflect.DeepEqual(up["metadata"], map[string]any{"x": 1.0}) {
		t.Errorf("update_display_data %v", up)
	}
	if _, ok := io[4].content["transient"]; ok {
		t.Errorf("display without id has transient: %v", io[4].content)
	}
	if !reflect.DeepEqual(io[4].content["metadata"], map[string]any{}) {
		t.Errorf("display metadata %v, want {}", io[4].content["metadata"])
	}
	if io[5].content["wait"] != true {
		t.Errorf("clear_output %v", io[5].content)
	}
}

func TestExecuteErrors(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	cases := []struct {
		code, ename, evalue string
		tb0                 string
	}{
		{"fail", "ModelError", "undefined: shop_rat", "line 1, column 5"},
		{"plainerr", "Error", "plain failure", "Error: plain failure"},
		{"panic", "InternalError", "Execute failed: assignment to entry in nil map", "InternalError: Execute failed: assignment to entry in nil map"},
		{"nanresult", "EncodingError", "", "EncodingError: "},
	}
	for i, tc := range cases {
		r, io := c.execute(tc.code, nil)
		if r.str("status") != "error" || r.str("ename") != tc.ename || !strings.HasPrefix(r.str("evalue"), tc.evalue) {
			t.Errorf("%s: reply %v", tc.code, r.content)
		}
		if r.content["execution_count"] != float64(2*i+1) {
			t.Errorf("%s: execution_count %v", tc.code, r.content["execution_count"])
		}
		tb, ok := r.content["traceback"].([]any)
		if !ok || len(tb) == 0 || !strings.HasPrefix(tb[0].(string), tc.tb0) {
			t.Errorf("%s: traceback %v", tc.code, r.content["traceback"])
		}
		if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "error", "status:idle"}) {
			t.Errorf("%s: iopub %v", tc.code, got)
		}
		e := io[2].content
		if e["ename"] != tc.ename || e["traceback"] == nil {
			t.Errorf("%s: error message %v", tc.code, e)
		}
		// stop_on_error was set, but nothing was queued: the next cell runs.
		if r, _ := c.execute("result ok", nil); r.str("status") != "ok" {
			t.Fatalf("after %s: %v", tc.code, r.content)
		}
	}
}

func TestExecuteEncodingErrorInDisplay(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	r, io := c.execute("nandisplay", nil)
	if r.str("status") != "ok" {
		t.Fatalf("reply %v", r.content)
	}
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "stream", "status:idle"}) ||
		io[2].str("name") != "stderr" || !strings.Contains(io[2].str("text"), "display_data not shown") {
		t.Fatalf("iopub %v %v", got, io[len(io)-2].content)
	}
}

func TestSilentAndStoreHistory(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	c.execute("result a", nil) // count 1
	r, io := c.execute("result b", map[string]any{"silent": true})
	if r.str("status") != "ok" || r.content["execution_count"] != 1.0 {
		t.Errorf("silent reply %v", r.content)
	}
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "status:idle"}) {
		t.Errorf("silent iopub %v", got)
	}
	r, io = c.execute("result c", map[string]any{"store_history": false})
	if r.content["execution_count"] != 1.0 {
		t.Errorf("store_history=false advanced the counter: %v", r.content)
	}
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "execute_result", "status:idle"}) {
		t.Errorf("iopub %v", got)
	}
	r, _ = c.execute("print d", nil)
	if r.content["execution_count"] != 2.0 {
		t.Errorf("counter %v, want 2", r.content["execution_count"])
	}
	// A silent failure reports the error in the reply only.
	r, io = c.execute("fail", map[string]any{"silent": true})
	if r.str("status") != "error" || len(io) != 2 {
		t.Errorf("silent failure: %v %v", r.content, types(io))
	}
}

func TestHistory(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	codes := []string{"result 1", "print x", "result 12", "result 1", "result 123"}
	for _, code := range codes {
		c.execute(code, nil)
	}
	c.execute("result hidden", map[string]any{"store_history": false})
	hist := func(q map[string]any) []any {
		t.Helper()
		q["output"], q["raw"] = q["output"] == true, true
		id := c.send(c.shell, "history_request", q)
		r := c.reply(c.shell, id)
		if r.str("status") != "ok" {
			t.Fatalf("history %v", r.content)
		}
		return r.content["history"].([]any)
	}
	tail := hist(map[string]any{"hist_access_type": "tail", "n": 3})
	want := []any{[]any{1.0, 3.0, "result 12"}, []any{1.0, 4.0, "result 1"}, []any{1.0, 5.0, "result 123"}}
	if !reflect.DeepEqual(tail, want) {
		t.Errorf("tail %v", tail)
	}
	out := hist(map[string]any{"hist_access_type": "tail", "n": 2, "output": true})
	if !reflect.DeepEqual(out, []any{[]any{1.0, 4.0, []any{"result 1", "1"}}, []any{1.0, 5.0, []any{"result 123", "123"}}}) {
		t.Errorf("tail with output %v", out)
	}
	if got := hist(map[string]any{"hist_access_type": "tail", "n": 1, "output": true}); len(got) != 1 {
		t.Errorf("tail n=1: %v", got)
	}
	rng := hist(map[string]any{"hist_access_type": "range", "session": 1, "start": 2, "stop": 3})
	if !reflect.DeepEqual(rng, []any{[]any{1.0, 2.0, "print x"}}) {
		t.Errorf("range %v", rng)
	}
	if got := hist(map[string]any{"hist_access_type": "range", "session": 0, "start": 4}); len(got) != 2 {
		t.Errorf("open range %v", got)
	}
	if got := hist(map[string]any{"hist_access_type": "range", "session": -1, "start": 1}); len(got) != 0 {
		t.Errorf("previous session %v", got)
	}
	search := hist(map[string]any{"hist_access_type": "search", "pattern": "result 1*"})
	if len(search) != 4 {
		t.Errorf("search %v", search)
	}
	uniq := hist(map[string]any{"hist_access_type": "search", "pattern": "result 1", "unique": true})
	if !reflect.DeepEqual(uniq, []any{[]any{1.0, 4.0, "result 1"}}) {
		t.Errorf("unique search %v", uniq)
	}
	if got := hist(map[string]any{"hist_access_type": "search", "pattern": "result 1*", "n": 2}); !reflect.DeepEqual(got,
		[]any{[]any{1.0, 4.0, "result 1"}, []any{1.0, 5.0, "result 123"}}) {
		t.Errorf("search n=2 %v", got)
	}
}

func TestCompleteInspectIsComplete(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, nil)
	c := connect(t, tk)

	// Cursor positions are Unicode code points: "αβ" is 2 code points and
	// 4 bytes, the emoji 1 code point, 4 bytes (and 2 UTF-16 units).
	code := "😀 = αβ + shop_r"
	cp := len([]rune(code))
	id := c.send(c.shell, "complete_request", map[string]any{"code": code, "cursor_pos": cp})
	r := c.reply(c.shell, id)
	if r.str("status") != "ok" || !reflect.DeepEqual(r.content["matches"], []any{"shop_r_done"}) {
		t.Fatalf("complete %v", r.content)
	}
	if r.content["cursor_start"] != float64(cp-6) || r.content["cursor_end"] != float64(cp) {
		t.Errorf("cursor_start/end %v %v, want %d %d", r.content["cursor_start"], r.content["cursor_end"], cp-6, cp)
	}
	if !reflect.DeepEqual(r.content["metadata"], map[string]any{}) {
		t.Errorf("metadata %v", r.content["metadata"])
	}
	// Cursor after "αβ": code point 6, byte offset 11.
	id = c.send(c.shell, "complete_request", map[string]any{"code": code, "cursor_pos": 6})
	r = c.reply(c.shell, id)
	if r.content["cursor_start"] != 4.0 || r.content["cursor_end"] != 6.0 || !reflect.DeepEqual(r.content["matches"], []any{"αβ_done"}) {
		t.Errorf("complete inside: %v", r.content)
	}
	if got := f.completeCursors(); !reflect.DeepEqual(got, []int{len(code), 11}) {
		t.Errorf("handler saw byte offsets %v", got)
	}
	// Out-of-range cursors are clamped, not fatal.
	for _, pos := range []int{-5, 1000} {
		id = c.send(c.shell, "complete_request", map[string]any{"code": "ab", "cursor_pos": pos})
		if r := c.reply(c.shell, id); r.str("status") != "ok" {
			t.Errorf("cursor %d: %v", pos, r.content)
		}
	}
	// A panic in Complete is an error reply.
	id = c.send(c.shell, "complete_request", map[string]any{"code": "panic", "cursor_pos": 5})
	if r := c.reply(c.shell, id); r.str("status") != "error" || r.str("ename") != "InternalError" {
		t.Errorf("panicking complete: %v", r.content)
	}

	id = c.send(c.shell, "inspect_request", map[string]any{"code": "αx", "cursor_pos": 1, "detail_level": 1})
	r = c.reply(c.shell, id)
	if r.str("status") != "ok" || r.content["found"] != true ||
		!reflect.DeepEqual(r.content["data"], map[string]any{"text/plain": "αx @2 detail 1"}) {
		t.Errorf("inspect %v", r.content)
	}
	id = c.send(c.shell, "inspect_request", map[string]any{"code": "", "cursor_pos": 0, "detail_level": 0})
	r = c.reply(c.shell, id)
	if r.content["found"] != false || !reflect.DeepEqual(r.content["data"], map[string]any{}) {
		t.Errorf("inspect nothing %v", r.content)
	}

	for _, tc := range []struct {
		code, status string
		indent       any
	}{{"a = 1", "complete", nil}, {"a = \\", "incomplete", "  "}, {"!", "invalid", nil}, {"weird", "unknown", nil}} {
		id = c.send(c.shell, "is_complete_request", map[string]any{"code": tc.code})
		r = c.reply(c.shell, id)
		if r.str("status") != tc.status || r.content["indent"] != tc.indent {
			t.Errorf("is_complete %q: %v", tc.code, r.content)
		}
	}

	id = c.send(c.shell, "comm_info_request", map[string]any{})
	r = c.reply(c.shell, id)
	if r.str("status") != "ok" || !reflect.DeepEqual(r.content["comms"], map[string]any{}) {
		t.Errorf("comm_info %v", r.content)
	}
	id = c.send(c.shell, "comm_open", map[string]any{"comm_id": "c1", "target_name": "widgets", "data": map[string]any{}})
	io := c.iopubFor(id)
	if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "comm_close", "status:idle"}) || io[1].str("comm_id") != "c1" {
		t.Errorf("comm_open: %v", got)
	}
	for _, typ := range []string{"comm_msg", "comm_close", "no_such_request"} {
		id = c.send(c.shell, typ, map[string]any{"comm_id": "c1", "data": map[string]any{}})
		if got := types(c.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "status:idle"}) {
			t.Errorf("%s: %v", typ, got)
		}
	}
	// Still alive and answering.
	if r, _ := c.execute("result 1", nil); r.str("status") != "ok" {
		t.Errorf("after the rest: %v", r.content)
	}
}

func TestUserExpressions(t *testing.T) {
	tk := startKernel(t, evalHandler{newFake()}, nil)
	c := connect(t, tk)
	r, _ := c.execute("print x", map[string]any{"user_expressions": map[string]any{"a": "one", "b": "bad", "c": 3}})
	ue := r.content["user_expressions"].(map[string]any)
	if !reflect.DeepEqual(ue["a"], map[string]any{"status": "ok", "data": map[string]any{"text/plain": "ONE"}, "metadata": map[string]any{}}) {
		t.Errorf("a: %v", ue["a"])
	}
	for _, k := range []string{"b", "c"} {
		if e, _ := ue[k].(map[string]any); e["status"] != "error" || e["traceback"] == nil {
			t.Errorf("%s: %v", k, ue[k])
		}
	}
}

type evalHandler struct{ *fakeHandler }

func (evalHandler) Evaluate(ctx context.Context, expr string) (*Bundle, error) {
	if expr == "bad" {
		return nil, &ExecError{Name: "ModelError", Value: "bad"}
	}
	return &Bundle{Data: map[string]any{"text/plain": strings.ToUpper(expr)}}, nil
}

func TestLateOutputDropped(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, nil)
	c := connect(t, tk)
	id := c.send(c.shell, "execute_request", map[string]any{"code": "late"})
	c.reply(c.shell, id)
	c.iopubFor(id)
	<-f.lateDone
	// Anything the late call published went out before a request sent
	// now, and one subscriber receives iopub in order: read up to the
	// next request's idle.
	next := c.send(c.shell, "kernel_info_request", map[string]any{})
	for {
		m := c.next(c.iopub, hangGuard)
		if m.parentID() == id {
			t.Fatalf("output after idle: %s %v", m.typ(), m.content)
		}
		if m.parentID() == next && m.str("execution_state") == "idle" {
			return
		}
	}
}

func TestInterrupt(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, nil)
	c := connect(t, tk)
	id := c.send(c.shell, "execute_request", map[string]any{"code": "block", "stop_on_error": false})
	f.waitStarted(t, "block")
	iid := c.send(c.control, "interrupt_request", map[string]any{})
	if r := c.reply(c.control, iid); r.str("status") != "ok" || r.typ() != "interrupt_reply" {
		t.Fatalf("interrupt_reply %v", r.content)
	}
	r := c.reply(c.shell, id)
	// "block" returns only when its context ends: the reply itself is the
	// proof that the interrupt reached the cell.
	if r.str("status") != "error" || r.str("ename") != "Interrupted" {
		t.Fatalf("interrupted cell: %v", r.content)
	}
	if got := types(c.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "error", "status:idle"}) {
		t.Errorf("iopub %v", got)
	}
	if r, _ := c.execute("result after", nil); r.str("status") != "ok" {
		t.Fatalf("next cell: %v", r.content)
	}
	// Kernel.Interrupt (what SIGINT calls) does the same; with nothing
	// running it reports false.
	if tk.k.Interrupt() {
		t.Error("Interrupt with no cell running reported true")
	}
	id = c.send(c.shell, "execute_request", map[string]any{"code": "block"})
	f.waitStarted(t, "block")
	if !tk.k.Interrupt() {
		t.Error("Interrupt did not see the running cell")
	}
	if r := c.reply(c.shell, id); r.str("ename") != "Interrupted" {
		t.Errorf("after Kernel.Interrupt: %v", r.content)
	}
}

func TestStopOnErrorAbortsQueue(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, nil)
	c := connect(t, tk)
	first := c.send(c.shell, "execute_request", map[string]any{"code": "sleepfail 300", "stop_on_error": true})
	f.waitStarted(t, "sleepfail 300")
	second := c.send(c.shell, "execute_request", map[string]any{"code": "result 2"})
	info := c.send(c.shell, "kernel_info_request", map[string]any{})
	third := c.send(c.shell, "execute_request", map[string]any{"code": "print 3"})

	if r := c.reply(c.shell, first); r.str("status") != "error" || r.content["execution_count"] != 1.0 {
		t.Fatalf("first %v", r.content)
	}
	for _, id := range []string{second, third} {
		r := c.reply(c.shell, id)
		// Protocol 5.1 deprecated status "abort": an error reply instead.
		if r.str("status") != "error" || r.str("ename") != "Aborted" || r.content["execution_count"] != 1.0 {
			t.Errorf("queued request: %v", r.content)
		}
		if _, ok := r.content["traceback"].([]any); !ok {
			t.Errorf("aborted reply without traceback list: %v", r.content)
		}
		if got := types(c.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "status:idle"}) {
			t.Errorf("aborted request iopub %v", got)
		}
	}
	if r := c.reply(c.shell, info); r.str("status") != "ok" {
		t.Errorf("queued kernel_info: %v", r.content)
	}
	if got := f.executed(); !reflect.DeepEqual(got, []string{"sleepfail 300"}) {
		t.Errorf("ran %v", got)
	}
	// Requests sent after the failure run again.
	if r, _ := c.execute("result 4", nil); r.str("status") != "ok" || r.content["execution_count"] != 2.0 {
		t.Errorf("after abort %v", r.content)
	}

	// Without stop_on_error the queue runs.
	first = c.send(c.shell, "execute_request", map[string]any{"code": "sleepfail 300", "stop_on_error": false})
	f.waitStarted(t, "sleepfail 300")
	second = c.send(c.shell, "execute_request", map[string]any{"code": "result 5"})
	c.reply(c.shell, first)
	if r := c.reply(c.shell, second); r.str("status") != "ok" {
		t.Errorf("stop_on_error=false: %v", r.content)
	}
}

func TestShutdown(t *testing.T) {
	for _, restart := range []bool{false, true} {
		// Several trials: the final idle must not be lost to the close.
		for trial := range 3 {
			tk := startKernel(t, newFake(), nil)
			c := connect(t, tk)
			id := c.send(c.control, "shutdown_request", map[string]any{"restart": restart})
			r := c.reply(c.control, id)
			if r.typ() != "shutdown_reply" || r.str("status") != "ok" || r.content["restart"] != restart {
				t.Fatalf("restart=%v trial %d: %v", restart, trial, r.content)
			}
			io := c.iopubFor(id)
			if got := types(io); !reflect.DeepEqual(got, []string{"status:busy", "shutdown_reply", "status:idle"}) {
				t.Errorf("restart=%v trial %d: iopub %v", restart, trial, got)
			}
			waitDone(t, tk)
		}
	}
}

func TestHeartbeat(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	// A REQ socket, as jupyter_client's heartbeat channel uses. zmq4's REQ
	// reads only after a send, so no reader goroutine here.
	req := zmq4.NewReq(context.Background(), zlog(t))
	defer req.Close()
	if err := req.Dial(tk.ci.Endpoint(tk.ci.HBPort)); err != nil {
		t.Fatal(err)
	}
	for i := range 3 {
		ping := []byte("ping " + string(rune('a'+i)))
		if err := req.Send(zmq4.NewMsg(ping)); err != nil {
			t.Fatal(err)
		}
		got := make(chan zmq4.Msg, 1)
		go func() { m, _ := req.Recv(); got <- m }()
		select {
		case m := <-got:
			if len(m.Frames) != 1 || string(m.Frames[0]) != string(ping) {
				t.Fatalf("echo %q", m.Frames)
			}
		case <-time.After(hangGuard):
			t.Fatal("no heartbeat echo")
		}
	}
	// A DEALER's frames come back as sent, several at once.
	d := dialSock(t, zmq4.NewDealer(context.Background(), zlog(t)), tk.ci.Endpoint(tk.ci.HBPort))
	if err := d.s.Send(zmq4.NewMsgFrom([]byte("a"), []byte{}, []byte("b"))); err != nil {
		t.Fatal(err)
	}
	select {
	case f := <-d.in:
		if len(f) != 3 || string(f[0]) != "a" || len(f[1]) != 0 || string(f[2]) != "b" {
			t.Fatalf("dealer echo %q", f)
		}
	case <-time.After(hangGuard):
		t.Fatal("no dealer echo")
	}
}

func TestSubscriberReconnects(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	c.execute("print one", nil)
	c.iopub.s.Close()
	// A new subscriber, as after a client reconnects, gets later output.
	c.iopub = c.subscribe("")
	_, io := c.execute("print two", nil)
	if io[2].str("text") != "two\n" {
		t.Errorf("after reconnect: %v", types(io))
	}
	// A second client that connects late sees the output of the first.
	c2 := connect(t, tk)
	id := c.send(c.shell, "execute_request", map[string]any{"code": "print three"})
	c.reply(c.shell, id)
	if got := types(c2.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "execute_input", "stream", "status:idle"}) {
		t.Errorf("second client %v", got)
	}
}

func TestIPCTransport(t *testing.T) {
	dir, err := os.MkdirTemp("", "nk")
	if err != nil {
		t.Fatal(err)
	}
	defer os.RemoveAll(dir)
	ci := ConnectionInfo{Transport: "ipc", IP: filepath.Join(dir, "kernel"), Key: testKey, SignatureScheme: "hmac-sha256"}
	k, err := New(ci, newFake(), &Options{Logger: testLogger(t)})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	tk := &testKernel{k: k, ci: k.Connection(), done: make(chan error, 1), stop: cancel}
	go func() { tk.done <- k.Serve(ctx) }()
	if tk.ci.ShellPort == 0 || tk.ci.HBPort == 0 {
		t.Fatalf("ports not assigned: %+v", tk.ci)
	}
	if _, err := os.Stat(tk.ci.IP + "-" + itoa(tk.ci.ShellPort)); err != nil {
		t.Fatalf("no socket file: %v", err)
	}
	c := connect(t, tk)
	if r, _ := c.execute("result ipc", nil); r.str("status") != "ok" {
		t.Errorf("execute over ipc: %v", r.content)
	}
	cancel()
	if err := <-tk.done; err != context.Canceled {
		t.Errorf("Serve after cancel: %v", err)
	}
	if m, _ := filepath.Glob(ci.IP + "-*"); len(m) != 0 {
		t.Errorf("socket files left: %v", m)
	}
}

func itoa(n int) string { b, _ := json.Marshal(n); return string(b) }

func TestRunSignals(t *testing.T) {
	ports := freePorts(t, 5)
	ci := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", ShellPort: ports[0], IOPubPort: ports[1],
		StdinPort: ports[2], ControlPort: ports[3], HBPort: ports[4], Key: testKey, SignatureScheme: "hmac-sha256"}
	b, _ := json.Marshal(ci)
	file := filepath.Join(t.TempDir(), "kernel.json")
	if err := os.WriteFile(file, b, 0o600); err != nil {
		t.Fatal(err)
	}
	f := newFake()
	done := make(chan error, 1)
	go func() { done <- Run(context.Background(), file, f, testLogger(t)) }()
	tk := &testKernel{ci: ci}
	c := connect(t, tk)

	// SIGINT interrupts the running cell and the process lives on.
	id := c.send(c.shell, "execute_request", map[string]any{"code": "block"})
	f.waitStarted(t, "block")
	p, _ := os.FindProcess(os.Getpid())
	if err := p.Signal(os.Interrupt); err != nil {
		t.Fatal(err)
	}
	if r := c.reply(c.shell, id); r.str("ename") != "Interrupted" {
		t.Fatalf("after SIGINT: %v", r.content)
	}
	if r, _ := c.execute("result alive", nil); r.str("status") != "ok" {
		t.Fatalf("after SIGINT: %v", r.content)
	}
	// SIGTERM stops the kernel the way a shutdown_request does.
	if err := p.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	select {
	case err := <-done:
		if err != nil {
			t.Errorf("Run: %v", err)
		}
	case <-time.After(hangGuard):
		t.Fatal("Run did not return after SIGTERM")
	}
}

func freePorts(t *testing.T, n int) []int {
	var ls []interface{ Close() error }
	var ports []int
	for range n {
		l, err := (&net.ListenConfig{}).Listen(context.Background(), "tcp", "127.0.0.1:0")
		if err != nil {
			t.Fatal(err)
		}
		ls = append(ls, l)
		ports = append(ports, l.Addr().(*net.TCPAddr).Port)
	}
	for _, l := range ls {
		l.Close()
	}
	return ports
}

// TestHelperKernelProcess is not a test: run with NUDGE_JUPYTER_HELPER=1
// and a connection file as its argument, it is a kernel process serving
// the fake handler (used to measure a kernel's own memory, and by hand
// to point jupyter_client at the protocol layer).
//
// With NUDGE_JUPYTER_ADDRESS_SPACE=BYTES it first limits its own address
// space to what it has mapped plus BYTES (RLIMIT_AS), so that a runaway
// allocation fails inside this process (a fatal out-of-memory that the
// parent test sees) instead of exhausting the machine.
func TestHelperKernelProcess(t *testing.T) {
	if os.Getenv("NUDGE_JUPYTER_HELPER") != "1" {
		t.Skip("helper process only")
	}
	if c := os.Getenv("NUDGE_JUPYTER_ADDRESS_SPACE"); c != "" {
		if err := limitAddressSpace(c); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	f := newFake()
	f.forget = true // a long-lived process keeps no record of the cells it ran
	if err := Run(context.Background(), flag.Arg(0), f, log.New(os.Stderr, "kernel: ", 0)); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	os.Exit(0)
}

// startProcess runs a kernel in a child process and returns its pid; env
// is added to the child's environment.
func startProcess(t *testing.T, env ...string) (*testKernel, int) {
	ports := freePorts(t, 5)
	ci := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", ShellPort: ports[0], IOPubPort: ports[1],
		StdinPort: ports[2], ControlPort: ports[3], HBPort: ports[4], Key: testKey, SignatureScheme: "hmac-sha256"}
	b, _ := json.Marshal(ci)
	file := filepath.Join(t.TempDir(), "kernel.json")
	if err := os.WriteFile(file, b, 0o600); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(os.Args[0], "-test.run=^TestHelperKernelProcess$", file)
	cmd.Env = append(append(os.Environ(), "NUDGE_JUPYTER_HELPER=1"), env...)
	cmd.Stderr = testWriter{t}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	t.Cleanup(func() {
		cmd.Process.Kill()
		<-done
	})
	return &testKernel{ci: ci, done: done}, cmd.Process.Pid
}

// TestManyExecutes runs 10,000 cells against a kernel in its own process,
// a window of them in flight at a time, and checks that every reply and
// every idle arrives and that the kernel's resident memory grows by less
// than 10 MB (VmRSS in /proc/PID/status, Linux).
func TestManyExecutes(t *testing.T) {
	const total, window = 10000, 64
	tk, pid := startProcess(t)
	c := connect(t, tk)

	// Count idles on iopub as they arrive, checking every signature.
	var idles atomic.Int64
	bad := make(chan string, 1)
	stop := make(chan struct{})
	defer close(stop)
	go func() {
		for {
			select {
			case f, ok := <-c.iopub.in:
				if !ok {
					return
				}
				if len(f) != 7 || string(c.sign(f[3], f[4], f[5], f[6])) != string(f[2]) {
					select {
					case bad <- fmt.Sprintf("bad iopub message %q", f):
					default:
					}
					continue
				}
				if bytes.Contains(f[3], []byte(`"msg_type":"status"`)) && bytes.Contains(f[6], []byte(`"idle"`)) &&
					bytes.Contains(f[4], []byte(`"execute_request"`)) {
					idles.Add(1)
				}
			case <-stop:
				return
			}
		}
	}()

	run := func(n int) {
		t.Helper()
		idles.Store(0)
		pending := map[string]bool{}
		for sent := 0; sent < n || len(pending) > 0; {
			for sent < n && len(pending) < window {
				pending[c.send(c.shell, "execute_request", map[string]any{"code": "result 7"})] = true
				sent++
			}
			r := c.next(c.shell, hangGuard)
			if !pending[r.parentID()] || r.str("status") != "ok" {
				t.Fatalf("unexpected reply %v to %s", r.content, r.parentID())
			}
			delete(pending, r.parentID())
		}
		deadline := time.Now().Add(hangGuard)
		for idles.Load() < int64(n) && time.Now().Before(deadline) {
			time.Sleep(10 * time.Millisecond)
		}
		if got := idles.Load(); got != int64(n) {
			t.Fatalf("%d idle messages for %d executes", got, n)
		}
		select {
		case s := <-bad:
			t.Fatal(s)
		default:
		}
	}
	run(500) // warm up
	before := rssKB(pid)
	start := time.Now()
	run(total)
	elapsed := time.Since(start)
	after := rssKB(pid)
	t.Logf("%d executes in %v; kernel RSS %.1f MB -> %.1f MB", total, elapsed.Round(time.Millisecond),
		float64(before)/1e3, float64(after)/1e3)
	if before == 0 {
		t.Skip("no /proc: RSS not measured")
	}
	// The race detector's shadow memory grows with the heap; the bound
	// is for a normal build.
	if grew := after - before; grew > 10e3 && !raceEnabled {
		t.Errorf("kernel RSS grew by %.1f MB over %d executes", float64(grew)/1e3, total)
	}
	id := c.send(c.control, "shutdown_request", map[string]any{"restart": false})
	c.reply(c.control, id)
	select {
	case err := <-tk.done:
		if err != nil {
			t.Errorf("kernel process: %v", err)
		}
		tk.done <- nil
	case <-time.After(hangGuard):
		t.Error("kernel process did not exit after shutdown_request")
	}
}

func heapInUse() uint64 {
	runtime.GC()
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return ms.HeapInuse
}

// rssKB is the resident set size of a process in kB from
// /proc/PID/status, 0 where that file does not exist.
func rssKB(pid int) int64 {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, "VmRSS:"); ok {
			var kb int64
			json.Unmarshal([]byte(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "kB"))), &kb)
			return kb
		}
	}
	return 0
}

// BenchmarkExecuteRoundTrip measures one execute_request at a time, from
// send to execute_reply, with the iopub messages read as they come.
func BenchmarkExecuteRoundTrip(b *testing.B) {
	tk := startKernel(b, newFake(), &Options{Logger: log.New(io.Discard, "", 0)})
	c := connect(b, tk)
	go func() {
		for range c.iopub.in {
		}
	}()
	b.ReportAllocs()
	for b.Loop() {
		id := c.send(c.shell, "execute_request", map[string]any{"code": "result 7"})
		if r := c.next(c.shell, hangGuard); r.parentID() != id {
			b.Fatal("wrong reply")
		}
	}
}

func TestCloseWithoutServe(t *testing.T) {
	ci := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", Key: testKey}
	k, err := New(ci, newFake(), nil)
	if err != nil {
		t.Fatal(err)
	}
	addr := net.JoinHostPort("127.0.0.1", itoa(k.Connection().ShellPort))
	if c, err := net.Dial("tcp", addr); err != nil {
		t.Fatalf("not listening: %v", err)
	} else {
		c.Close()
	}
	k.Close()
	if c, err := net.Dial("tcp", addr); err == nil {
		c.Close()
		t.Error("still listening after Close")
	}
	if err := k.Serve(context.Background()); err == nil {
		t.Error("Serve after Close succeeded")
	}
	// New refuses what it cannot serve.
	if _, err := New(ci, nil, nil); err == nil {
		t.Error("nil Handler accepted")
	}
	if _, err := New(ConnectionInfo{Transport: "udp"}, newFake(), nil); err == nil {
		t.Error("udp accepted")
	}
	busy := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", ShellPort: k.Connection().ShellPort}
	l, err := net.Listen("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	if _, err := New(busy, newFake(), nil); err == nil {
		t.Error("bound a port in use")
	}
}

// TestStdinInputReply: the kernel never asks for input, but a client's
// stray input_reply is read and ignored.
func TestStdinInputReply(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	stdin := dialSock(t, zmq4.NewDealer(context.Background(), zlog(t)), tk.ci.Endpoint(tk.ci.StdinPort))
	for range 3 {
		c.send(stdin, "input_reply", map[string]any{"value": "42"})
	}
	if r, _ := c.execute("result fine", nil); r.str("status") != "ok" {
		t.Fatalf("after input_reply: %v", r.content)
	}
	select {
	case f := <-stdin.in:
		t.Errorf("the kernel answered on stdin: %q", f)
	case <-time.After(50 * time.Millisecond):
	}
}

// A cell sent as soon as the front end has seen a failed cell's reply
// always runs: the cut of requests to abort is taken before that reply
// goes out. Repeated, since the window it guards against is short.
func TestNextCellAfterFailureRuns(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	for i := 0; i < 100; i++ {
		if r, _ := c.execute("fail", nil); r.str("status") != "error" || r.str("ename") != "ModelError" {
			t.Fatalf("round %d: failing cell %v", i, r.content)
		}
		if r, _ := c.execute("result ok", nil); r.str("status") != "ok" {
			t.Fatalf("round %d: the next cell was not run: %v", i, r.content)
		}
	}
}
