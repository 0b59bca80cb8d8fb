package jupyter

import (
	"context"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/go-zeromq/zmq4"
)

// TestShutdownWithBadContent: a shutdown_request whose content does not
// decode is dropped like any request with bad content: no reply, and the
// kernel does not exit (issue 8). A later well-formed one still works.
func TestShutdownWithBadContent(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	for _, content := range []any{map[string]any{"restart": "yes"}, []any{1}, "x"} {
		bad := c.send(c.control, "shutdown_request", content)
		// The control channel is served in order: the next request's
		// reply comes only if the bad one did not stop the kernel.
		id := c.send(c.control, "kernel_info_request", map[string]any{})
		if r := c.next(c.control, hangGuard); r.parentID() != id {
			t.Fatalf("content %v: reply to %s (%s), want the kernel_info after it", content, r.parentID(), r.typ())
		}
		for _, m := range c.iopubFor(id) {
			if m.parentID() == bad {
				t.Fatalf("iopub %s for the dropped shutdown", m.typ())
			}
		}
	}
	select {
	case err := <-tk.done:
		t.Fatalf("the kernel stopped: %v", err)
	default:
	}
	if r, _ := c.execute("result alive", nil); r.str("status") != "ok" {
		t.Fatalf("after bad shutdowns: %v", r.content)
	}
	id := c.send(c.control, "shutdown_request", map[string]any{"restart": false})
	if r := c.reply(c.control, id); r.str("status") != "ok" {
		t.Fatalf("shutdown_reply %v", r.content)
	}
	waitDone(t, tk)
}

// TestErrorLinesArePlainText: escape sequences a cell puts in an error
// line reach the client as visible characters, never as terminal
// controls, and keep the caret's column.
func TestErrorLinesArePlainText(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	arg := "x = \x1b]0;owned\x07\x1b[2J\u009b1m\r1"
	r, io := c.execute("escfail "+arg, nil)
	var e *msg
	for _, m := range io {
		if m.typ() == "error" {
			e = m
		}
	}
	if e == nil {
		t.Fatalf("no error message: %v", types(io))
	}
	for _, content := range []map[string]any{r.content, e.content} {
		tb, _ := content["traceback"].([]any)
		if len(tb) != 2 {
			t.Fatalf("traceback %q", content["traceback"])
		}
		fields := []string{content["evalue"].(string), content["ename"].(string), tb[0].(string), tb[1].(string)}
		for _, f := range fields {
			if strings.ContainsFunc(f, func(r rune) bool { return r < 0x20 || r >= 0x7f && r <= 0x9f }) {
				t.Errorf("control character in %q", f)
			}
		}
		if want := "    x = ␛]0;owned␇␛[2J\ufffd1m␍1"; tb[0] != want {
			t.Errorf("quoted line %q, want %q", tb[0], want)
		}
		if utf8.RuneCountInString(tb[0].(string)) != utf8.RuneCountInString("    "+arg) {
			t.Error("the quoted line changed width")
		}
	}
}

// TestInvalidUTF8HeaderEchoed: a signed request whose header holds bytes
// that are not UTF-8 gets replies whose parent_header is valid UTF-8 (the
// bad bytes as U+FFFD), on shell and on iopub; a valid header comes back
// byte for byte.
func TestInvalidUTF8HeaderEchoed(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	raw := dialRaw(t, tk.ci.Endpoint(tk.ci.ShellPort), zmq4.Dealer, "raw", 0)
	for _, tc := range []struct{ header, parent string }{
		{`{"msg_id":"u1","msg_type":"kernel_info_request","username":"zoë" , "session":"s"}`,
			`{"msg_id":"u1","msg_type":"kernel_info_request","username":"zoë" , "session":"s"}`},
		{"{\"msg_id\":\"u2\",\"msg_type\":\"kernel_info_request\",\"username\":\"zo\xeb\",\"session\":\"s\"}",
			"{\"msg_id\":\"u2\",\"msg_type\":\"kernel_info_request\",\"username\":\"zo\ufffd\",\"session\":\"s\"}"},
	} {
		h, p := []byte(tc.header), []byte("{}")
		if err := raw.write([]byte("<IDS|MSG>"), c.sign(h, p, p, p), h, p, p, p); err != nil {
			t.Fatal(err)
		}
		reply := readRaw(t, c, raw)
		if string(reply.rawParent) != tc.parent {
			t.Errorf("shell parent %q, want %q", reply.rawParent, tc.parent)
		}
		for {
			m := c.next(c.iopub, hangGuard)
			if string(m.rawParent) == tc.parent && m.str("execution_state") == "idle" {
				break
			}
			if !utf8.Valid(m.rawParent) {
				t.Fatalf("iopub parent %q is not UTF-8", m.rawParent)
			}
		}
	}
}

// TestHistorySearchPatternTooLong: a search pattern over the limit gets an
// error reply, not a search.
func TestHistorySearchPatternTooLong(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	c.execute("result 1", nil)
	id := c.send(c.shell, "history_request", map[string]any{"hist_access_type": "search", "pattern": strings.Repeat("*a", maxGlob), "raw": true, "output": false})
	if r := c.reply(c.shell, id); r.str("status") != "error" || !strings.Contains(r.str("evalue"), "limit") {
		t.Errorf("history reply %v", r.content)
	}
}

// TestRouteCannotBeTaken: a client's shell identity is no secret (Jupyter
// clients use their session id, which every iopub message carries), so a
// peer that connects with it, without the key, must not receive that
// client's replies.
func TestRouteCannotBeTaken(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	c.shell = dialSock(t, zmq4.NewDealer(context.Background(), zlog(t), zmq4.WithID(zmq4.SocketIdentity("victim"))),
		tk.ci.Endpoint(tk.ci.ShellPort))
	if r, _ := c.execute("result before", nil); r.str("status") != "ok" {
		t.Fatalf("before: %v", r.content)
	}
	thief := dialRaw(t, tk.ci.Endpoint(tk.ci.ShellPort), zmq4.Dealer, "victim", 0)
	waitFor(t, "the second connection", func() bool { return tk.k.shell.Stats().Accepted == 3 })
	if r, _ := c.execute("result after", nil); r.str("status") != "ok" {
		t.Fatalf("after: %v", r.content)
	}
	// What the thief reads first is the reply to its own request: the
	// victim's reply never went its way.
	own, id := c.request("kernel_info_request", map[string]any{})
	thief.write(own...)
	if m := readRaw(t, c, thief); m.parentID() != id {
		t.Fatalf("the second connection got a reply to %s (%s)", m.parentID(), m.typ())
	}
}
