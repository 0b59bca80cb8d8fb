package jupyter

import (
	"bufio"
	"context"
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log"
	"math"
	"net"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"
	"unicode/utf8"

	"github.com/go-zeromq/zmq4"
	"github.com/go-zeromq/zmq4/security/null"

	"github.com/nudge-dev/nudge/kernel/jupyter/internal/zsock"
)

const testKey = "a0436f6c-1916-498b-8eb9-e81ab9368e84"

// hangGuard bounds every wait in these tests. It only ends a test that
// would otherwise hang: no test asserts how long anything takes, because
// the machine that runs them may be busy with other work (a 2-core
// machine under -race took more than 10 seconds to deliver one message).
// Waits are on events: a reply, a status, a closed connection.
const hangGuard = 2 * time.Minute

// fakeHandler interprets a tiny command language so that tests can drive
// every path of the protocol layer:
//
//	print TEXT      stdout            warn TEXT    stderr
//	result TEXT     execute_result    fail         an *ExecError
//	plainerr        a plain error     panic        a panic
//	display         display, update, clear_output(wait)
//	show TEXT       one display_data with text/plain and text/html
//	block           wait for ctx      sleep MS     sleep, honouring ctx
//	sleepfail MS    sleep, then fail  spam N SIZE  N stdout chunks of SIZE bytes
//	nanresult       unencodable result nandisplay  unencodable display
//	late            output from a goroutine after returning
//	escfail TEXT    an *ExecError whose value and traceback quote TEXT
type fakeHandler struct {
	banner string

	forget bool // keep no record in ran (a long-lived helper process)

	mu       sync.Mutex
	ran      []string // code of every Execute call
	cursors  []int    // byte offsets seen by Complete
	started  chan string
	lateDone chan struct{}
}

// waitStarted waits until Execute has been called with code.
func (f *fakeHandler) waitStarted(t testing.TB, code string) {
	t.Helper()
	timeout := time.After(hangGuard)
	for {
		select {
		case c := <-f.started:
			if c == code {
				return
			}
		case <-timeout:
			t.Fatalf("Execute(%q) never started", code)
		}
	}
}

func newFake() *fakeHandler {
	return &fakeHandler{started: make(chan string, 100000), lateDone: make(chan struct{}, 1)}
}

func (f *fakeHandler) Info() KernelInfo {
	return KernelInfo{
		Implementation:        "fake",
		ImplementationVersion: "0.1",
		Banner:                "fake kernel" + f.banner,
		HelpLinks:             []HelpLink{{Text: "docs", URL: "https://example.invalid/docs"}},
		Language: LanguageInfo{
			Name: "fakelang", Version: "1.0", MIMEType: "text/x-fakelang", FileExtension: ".fake",
		},
	}
}

func (f *fakeHandler) Execute(ctx context.Context, code string, out Output, opts ExecOptions) (*Bundle, error) {
	f.mu.Lock()
	if !f.forget {
		f.ran = append(f.ran, code)
	}
	f.mu.Unlock()
	select {
	case f.started <- code:
	default:
	}
	verb, arg, _ := strings.Cut(code, " ")
	switch verb {
	case "print":
		out.Stream("stdout", arg+"\n")
	case "warn":
		out.Stream("stderr", arg+"\n")
	case "result":
		return &Bundle{Data: map[string]any{"text/plain": arg}}, nil
	case "fail":
		return nil, &ExecError{Name: "ModelError", Value: "undefined: shop_rat", Traceback: []string{"line 1, column 5", "    a = shop_rat * 2", "        ^"}}
	case "plainerr":
		return nil, errors.New("plain failure")
	case "panic":
		var m map[string]int
		m["boom"] = 1 // a runtime error, as a handler bug would cause
	case "display":
		out.Display(&Bundle{Data: map[string]any{"text/plain": "0%"}}, "progress")
		out.UpdateDisplay(&Bundle{Data: map[string]any{"text/plain": "100%"}, Metadata: map[string]any{"x": 1}}, "progress")
		out.Display(&Bundle{Data: map[string]any{"text/html": "<b>done</b>"}}, "")
		out.ClearOutput(true)
	case "show":
		out.Display(&Bundle{Data: map[string]any{"text/plain": arg, "text/html": "<p>" + arg + "</p>"}}, "")
	case "block":
		<-ctx.Done()
		return nil, context.Cause(ctx)
	case "sleep", "sleepfail":
		ms, _ := strconv.Atoi(arg)
		select {
		case <-time.After(time.Duration(ms) * time.Millisecond):
		case <-ctx.Done():
			return nil, ctx.Err()
		}
		if verb == "sleepfail" {
			return nil, &ExecError{Name: "ModelError", Value: "late failure"}
		}
	case "spam":
		var n, size int
		fmt.Sscan(arg, &n, &size)
		chunk := strings.Repeat("x", size)
		for range n {
			out.Stream("stdout", chunk)
		}
	case "nanresult":
		return &Bundle{Data: map[string]any{"application/json": math.NaN()}}, nil
	case "nandisplay":
		out.Display(&Bundle{Data: map[string]any{"application/json": math.Inf(1)}}, "")
	case "escfail":
		return nil, &ExecError{Name: "ModelError", Value: "bad: " + arg, Traceback: []string{"    " + arg, "     ^"}}
	case "late":
		go func() {
			time.Sleep(50 * time.Millisecond)
			out.Stream("stdout", "too late\n")
			f.lateDone <- struct{}{}
		}()
	}
	return nil, nil
}

func (f *fakeHandler) Complete(code string, cursor int) Completion {
	f.mu.Lock()
	f.cursors = append(f.cursors, cursor)
	f.mu.Unlock()
	if code == "panic" {
		panic("completion bug")
	}
	// Complete the identifier that ends at the cursor with "_done".
	start := cursor
	for start > 0 {
		r, w := utf8.DecodeLastRuneInString(code[:start])
		if r != '_' && !('a' <= r && r <= 'z') && !('α' <= r && r <= 'ω') {
			break
		}
		start -= w
	}
	word := code[start:cursor]
	return Completion{Matches: []string{word + "_done"}, Start: start, End: cursor}
}

func (f *fakeHandler) Inspect(code string, cursor, detail int) (*Bundle, bool) {
	if code == "" {
		return nil, false
	}
	return &Bundle{Data: map[string]any{"text/plain": fmt.Sprintf("%s @%d detail %d", code, cursor, detail)}}, true
}

func (f *fakeHandler) IsComplete(code string) (string, string) {
	switch {
	case strings.HasSuffix(code, "\\"):
		return "incomplete", "  "
	case strings.HasPrefix(code, "!"):
		return "invalid", ""
	case code == "weird":
		return "maybe", ""
	}
	return "complete", ""
}

func (f *fakeHandler) completeCursors() []int {
	f.mu.Lock()
	defer f.mu.Unlock()
	return append([]int(nil), f.cursors...)
}

func (f *fakeHandler) executed() []string {
	f.mu.Lock()
	defer f.mu.Unlock()
	return append([]string(nil), f.ran...)
}

// socket returns one of the kernel's sockets by channel name.
func (k *Kernel) socket(name string) interface {
	Stats() zsock.Stats
	PeerStats() []zsock.PeerStat
} {
	switch name {
	case "shell":
		return k.shell
	case "control":
		return k.control
	case "stdin":
		return k.stdin
	case "iopub":
		return k.iopub
	}
	return k.hb
}

// ---- a kernel under test ----

type testKernel struct {
	k    *Kernel
	ci   ConnectionInfo
	done chan error
	stop context.CancelFunc
}

func testLogger(t testing.TB) *log.Logger {
	return log.New(testWriter{t}, "", 0)
}

type testWriter struct{ t testing.TB }

func (w testWriter) Write(p []byte) (int, error) {
	w.t.Log(strings.TrimRight(string(p), "\n"))
	return len(p), nil
}

func startKernel(t testing.TB, h Handler, opts *Options) *testKernel {
	t.Helper()
	if opts == nil {
		opts = &Options{}
	}
	if opts.Logger == nil {
		opts.Logger = testLogger(t)
	}
	if opts.Linger == 0 {
		// Generous: Close returns as soon as the clients have read to
		// the end and hung up, which takes milliseconds when nothing is
		// wrong, and the final idle must not be lost on a busy machine.
		opts.Linger = 30 * time.Second
	}
	ci := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", Key: testKey, SignatureScheme: "hmac-sha256"}
	k, err := New(ci, h, opts)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	tk := &testKernel{k: k, ci: k.Connection(), done: make(chan error, 1), stop: cancel}
	go func() { tk.done <- k.Serve(ctx) }()
	t.Cleanup(func() {
		cancel()
		select {
		case <-tk.done:
		case <-time.After(hangGuard):
			t.Error("Serve did not return after its context ended")
		}
	})
	return tk
}

// ---- a client built on zmq4's own sockets ----

// msg is a decoded message as a client sees it.
type msg struct {
	topic     string
	header    map[string]any
	parent    map[string]any
	metadata  map[string]any
	content   map[string]any
	rawHeader []byte
	rawParent []byte
}

func (m *msg) typ() string      { s, _ := m.header["msg_type"].(string); return s }
func (m *msg) parentID() string { s, _ := m.parent["msg_id"].(string); return s }
func (m *msg) str(k string) string {
	s, _ := m.content[k].(string)
	return s
}

type sock struct {
	s     zmq4.Socket
	in    chan [][]byte
	stash []*msg // received but not yet asked for
}

func dialSock(t testing.TB, s zmq4.Socket, ep string) *sock {
	t.Helper()
	if err := s.Dial(ep); err != nil {
		t.Fatal(err)
	}
	c := &sock{s: s, in: make(chan [][]byte, 100000)}
	go func() {
		defer close(c.in)
		for {
			m, err := s.Recv()
			if err != nil {
				return
			}
			c.in <- m.Frames
		}
	}()
	t.Cleanup(func() { s.Close() })
	return c
}

type client struct {
	t       testing.TB
	tk      *testKernel
	key     []byte
	session string
	seq     atomic.Int64
	shell   *sock
	control *sock
	iopub   *sock
}

func zlog(t testing.TB) zmq4.Option {
	return zmq4.WithLogger(log.New(testWriter{t}, "zmq4 client: ", 0))
}

// connect opens shell, control and iopub, and waits until iopub delivers
// (a SUB only receives what is published after its subscription arrives).
func connect(t testing.TB, tk *testKernel) *client {
	t.Helper()
	return connectTopic(t, tk, "")
}

// connectTopic is connect with an iopub subscription to topic only.
func connectTopic(t testing.TB, tk *testKernel, topic string) *client {
	t.Helper()
	ctx := context.Background()
	c := &client{t: t, tk: tk, key: []byte(testKey), session: newUUID()}
	c.shell = dialSock(t, zmq4.NewDealer(ctx, zlog(t)), tk.ci.Endpoint(tk.ci.ShellPort))
	c.control = dialSock(t, zmq4.NewDealer(ctx, zlog(t)), tk.ci.Endpoint(tk.ci.ControlPort))
	c.iopub = c.subscribe(topic)
	return c
}

func (c *client) subscribe(topic string) *sock {
	c.t.Helper()
	sub := zmq4.NewSub(context.Background(), zlog(c.t))
	if err := sub.SetOption(zmq4.OptionSubscribe, topic); err != nil {
		c.t.Fatal(err)
	}
	s := dialSock(c.t, sub, c.tk.ci.Endpoint(c.tk.ci.IOPubPort))
	// Slow-joiner guard, as jupyter_client does: repeat kernel_info until
	// a status message arrives on this subscription.
	deadline := time.Now().Add(hangGuard)
	for time.Now().Before(deadline) {
		id := c.send(c.shell, "kernel_info_request", map[string]any{})
		c.reply(c.shell, id)
		select {
		case f, ok := <-s.in:
			if !ok {
				c.t.Fatal("iopub closed")
			}
			c.decode(f)
			return s
		case <-time.After(100 * time.Millisecond):
		}
	}
	c.t.Fatal("iopub never delivered")
	return nil
}

func (c *client) sign(parts ...[]byte) []byte {
	m := hmac.New(sha256.New, c.key)
	for _, p := range parts {
		m.Write(p)
	}
	return []byte(hex.EncodeToString(m.Sum(nil)))
}

// request builds the frames of a signed request and returns its msg_id.
func (c *client) request(msgType string, content any) ([][]byte, string) {
	id := fmt.Sprintf("%s-%d", c.session, c.seq.Add(1))
	h, _ := json.Marshal(map[string]any{
		"msg_id": id, "session": c.session, "username": "tester", "msg_type": msgType,
		"version": "5.3", "date": time.Now().UTC().Format(time.RFC3339Nano),
	})
	cb, err := json.Marshal(content)
	if err != nil {
		c.t.Fatal(err)
	}
	p, m := []byte("{}"), []byte("{}")
	return [][]byte{[]byte("<IDS|MSG>"), c.sign(h, p, m, cb), h, p, m, cb}, id
}

func (c *client) send(s *sock, msgType string, content any) string {
	c.t.Helper()
	frames, id := c.request(msgType, content)
	if err := s.s.Send(zmq4.NewMsgFrom(frames...)); err != nil {
		c.t.Fatal(err)
	}
	return id
}

// decode checks the signature and splits a received message.
func (c *client) decode(frames [][]byte) *msg {
	c.t.Helper()
	d := -1
	for i, f := range frames {
		if string(f) == "<IDS|MSG>" {
			d = i
			break
		}
	}
	if d < 0 || len(frames) < d+6 {
		c.t.Fatalf("bad frames: %q", frames)
	}
	m := &msg{rawHeader: frames[d+2], rawParent: frames[d+3]}
	if d > 0 {
		m.topic = string(frames[0])
	}
	if want := c.sign(frames[d+2], frames[d+3], frames[d+4], frames[d+5]); string(want) != string(frames[d+1]) {
		c.t.Fatalf("bad signature on %s", frames[d+2])
	}
	for i, dst := range []*map[string]any{&m.header, &m.parent, &m.metadata, &m.content} {
		if err := json.Unmarshal(frames[d+2+i], dst); err != nil {
			c.t.Fatalf("frame %d: %v: %s", i, err, frames[d+2+i])
		}
		if *dst == nil {
			c.t.Fatalf("frame %d is null, want an object", i)
		}
	}
	return m
}

func (c *client) next(s *sock, timeout time.Duration) *msg {
	c.t.Helper()
	select {
	case f, ok := <-s.in:
		if !ok {
			c.t.Fatal("socket closed")
		}
		return c.decode(f)
	case <-time.After(timeout):
		c.t.Fatalf("no message within %v", timeout)
	}
	return nil
}

// forParent returns the next message on s whose parent is id; messages
// with other parents are kept for later calls.
func (c *client) forParent(s *sock, id string) *msg {
	c.t.Helper()
	for i, m := range s.stash {
		if m.parentID() == id {
			s.stash = append(s.stash[:i], s.stash[i+1:]...)
			return m
		}
	}
	for {
		m := c.next(s, hangGuard)
		if m.parentID() == id {
			return m
		}
		if len(s.stash) < 10000 {
			s.stash = append(s.stash, m)
		}
	}
}

// reply waits for the reply to request id on s.
func (c *client) reply(s *sock, id string) *msg {
	c.t.Helper()
	return c.forParent(s, id)
}

// iopubFor collects the iopub messages whose parent is id, from busy up to
// and including idle.
func (c *client) iopubFor(id string) []*msg {
	c.t.Helper()
	var out []*msg
	for {
		m := c.forParent(c.iopub, id)
		out = append(out, m)
		if m.typ() == "status" && m.str("execution_state") == "idle" {
			return out
		}
	}
}

func types(ms []*msg) []string {
	var s []string
	for _, m := range ms {
		t := m.typ()
		if t == "status" {
			t += ":" + m.str("execution_state")
		}
		s = append(s, t)
	}
	return s
}

// execute runs code and returns its reply and iopub messages.
func (c *client) execute(code string, extra map[string]any) (*msg, []*msg) {
	c.t.Helper()
	content := map[string]any{"code": code, "silent": false, "store_history": true,
		"user_expressions": map[string]any{}, "allow_stdin": false, "stop_on_error": true}
	for k, v := range extra {
		content[k] = v
	}
	id := c.send(c.shell, "execute_request", content)
	r := c.reply(c.shell, id)
	return r, c.iopubFor(id)
}

// ---- raw ZMTP peers that misbehave ----

// rawPeer is a connection that completes the ZMTP handshake and then does
// only what the test tells it to.
type rawPeer struct {
	conn net.Conn
	zc   *zmq4.Conn
	r    *bufio.Reader // made by the first read
}

// dialRaw connects with a small receive buffer, so that a peer that does
// not read fills up after a few kilobytes rather than megabytes.
func dialRaw(t testing.TB, ep string, typ zmq4.SocketType, id string, rcvbuf int) *rawPeer {
	t.Helper()
	addr := strings.TrimPrefix(ep, "tcp://")
	d := net.Dialer{Control: func(network, address string, rc syscall.RawConn) error {
		if rcvbuf <= 0 {
			return nil
		}
		var serr error
		rc.Control(func(fd uintptr) {
			serr = syscall.SetsockoptInt(int(fd), syscall.SOL_SOCKET, syscall.SO_RCVBUF, rcvbuf)
		})
		return serr
	}}
	conn, err := d.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	conn.SetDeadline(time.Now().Add(hangGuard))
	zc, err := zmq4.Open(conn, null.Security(), typ, zmq4.SocketIdentity(id), false, nil)
	if err != nil {
		t.Fatal(err)
	}
	conn.SetDeadline(time.Time{})
	t.Cleanup(func() { conn.Close() })
	return &rawPeer{conn: conn, zc: zc}
}

func (p *rawPeer) write(frames ...[]byte) error { return zsock.WriteMsg(p.conn, frames) }

// readRaw reads the next message a raw peer receives and decodes it.
func readRaw(t testing.TB, c *client, p *rawPeer) *msg {
	t.Helper()
	if p.r == nil {
		p.r = bufio.NewReader(p.conn)
	}
	p.conn.SetReadDeadline(time.Now().Add(hangGuard))
	frames, _, err := zsock.ReadMsg(p.r, 64<<20)
	if err != nil {
		t.Fatal(err)
	}
	return c.decode(frames)
}

// waitDone waits for Serve to return, with no error, and puts the result
// back for the kernel's cleanup.
func waitDone(t testing.TB, tk *testKernel) {
	t.Helper()
	select {
	case err := <-tk.done:
		if err != nil {
			t.Errorf("Serve: %v", err)
		}
		tk.done <- nil
	case <-time.After(hangGuard):
		t.Fatal("Serve did not return")
	}
}

// drainUntilClosed reads and discards until the kernel closes the
// connection (a reset counts); it fails only when the hang guard runs
// out first.
func drainUntilClosed(conn net.Conn) error {
	conn.SetReadDeadline(time.Now().Add(hangGuard))
	_, err := io.Copy(io.Discard, conn)
	if ne, ok := err.(net.Error); ok && ne.Timeout() {
		return err
	}
	return nil
}

// waitFor polls cond until it holds; only the hang guard ends the wait.
func waitFor(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(hangGuard)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("gave up waiting for %s", what)
		}
		time.Sleep(5 * time.Millisecond)
	}
}
