package jupyter

import (
	"encoding/binary"
	"fmt"
	"net"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
	"github.com/go-zeromq/zmq4/security/null"

	"github.com/nudge-dev/nudge/kernel/jupyter/internal/zsock"
)

// The robustness tests reproduce what was measured with zmq4's own
// sockets (see doc.go): a subscriber that stops reading, a shell client
// that never reads its replies, a TCP connection that never speaks, a
// shutdown behind a stuck client. Misbehaving peers are raw connections
// that finish the ZMTP handshake and then stop, with a 4 KiB receive
// buffer so that they fill up quickly.

func peerStat(t *testing.T, s interface{ PeerStats() []zsock.PeerStat }, local net.Addr) (zsock.PeerStat, bool) {
	t.Helper()
	for _, p := range s.PeerStats() {
		if p.Remote == local.String() {
			return p, true
		}
	}
	return zsock.PeerStat{}, false
}

// TestStalledSubscriber: a subscriber that stops reading neither delays
// another subscriber nor makes the kernel's memory grow past the queue
// bound. The stalled subscriber is never dropped (StallTimeout is longer
// than the hang guard) and never reads, so the good subscriber's idle can
// only arrive if the kernel does not wait for the stalled one: the test
// waits for that event and asserts no time.
func TestStalledSubscriber(t *testing.T) {
	const queueBytes = 1 << 20
	const chunk, chunks = 256 << 10, 40 // 10 MiB of output, ten times the queue bound
	tk := startKernel(t, newFake(), &Options{QueueBytes: queueBytes, SoftQueueBytes: queueBytes / 4, StallTimeout: time.Hour})
	c := connect(t, tk)
	iopub := tk.k.socket("iopub")

	stalled := dialRaw(t, tk.ci.Endpoint(tk.ci.IOPubPort), zmq4.Sub, "stalled", 4096)
	if err := stalled.write([]byte{1}); err != nil { // subscribe to everything
		t.Fatal(err)
	}
	waitFor(t, "the subscription", func() bool { return tk.k.iopub.Subscribers("kernel.") == 2 })

	heap0 := heapInUse()
	start := time.Now()
	id := c.send(c.shell, "execute_request", map[string]any{"code": fmt.Sprintf("spam %d %d", chunks, chunk)})
	if r := c.reply(c.shell, id); r.str("status") != "ok" {
		t.Fatalf("reply %v", r.content)
	}
	io := c.iopubFor(id)
	elapsed := time.Since(start)
	streams := 0
	for _, m := range io {
		if m.typ() == "stream" {
			streams++
		}
	}
	t.Logf("good subscriber: %d of %d chunks and idle after %v", streams, chunks, elapsed.Round(time.Millisecond))
	st, ok := peerStat(t, iopub, stalled.conn.LocalAddr())
	if !ok {
		t.Fatal("stalled subscriber not connected")
	}
	var goodDropped uint64
	for _, p := range iopub.PeerStats() {
		if p.Remote != stalled.conn.LocalAddr().String() {
			goodDropped += p.Dropped
		}
	}
	t.Logf("stalled peer: %d dropped, %d bytes queued; good peer: %d dropped", st.Dropped, st.QueuedBytes, goodDropped)
	if st.Dropped == 0 {
		t.Error("the stalled subscriber dropped nothing: the test did not fill its queue")
	}
	// Its queue was empty before the cell, so what it lost is of this
	// cell: busy, execute_input, the chunks and idle, less what arrived.
	if int(goodDropped)+len(io) != chunks+3 {
		t.Errorf("good subscriber: %d messages received and %d dropped of %d", len(io), goodDropped, chunks+3)
	}
	// Memory: the queue bound holds, and the heap after the burst grew by
	// no more than the stalled peer's queue plus slack.
	if max := iopub.Stats().MaxQueueBytes; max > queueBytes+chunk+4096 {
		t.Errorf("a peer queued %d bytes, bound %d", max, queueBytes+chunk)
	}
	if grew := int64(heapInUse()) - int64(heap0); grew > queueBytes+8<<20 {
		t.Errorf("heap grew by %.1f MB", float64(grew)/1e6)
	}
	// The stalled peer still holds its subscription and keeps its place.
	if r, _ := c.execute("print still fine", nil); r.str("status") != "ok" {
		t.Errorf("after the burst: %v", r.content)
	}
}

// TestStalledSubscriberIsDropped: after StallTimeout without progress the
// subscriber is disconnected and its queue freed. The good client
// subscribes to status and replies only ("kernel."), not to the streams
// that fill the stalled one, so however slowly it is scheduled it never
// stalls itself.
func TestStalledSubscriberIsDropped(t *testing.T) {
	tk := startKernel(t, newFake(), &Options{QueueBytes: 2 << 20, StallTimeout: 300 * time.Millisecond})
	c := connectTopic(t, tk, "kernel.")
	stalled := dialRaw(t, tk.ci.Endpoint(tk.ci.IOPubPort), zmq4.Sub, "stalled", 4096)
	stalled.write([]byte{1})
	waitFor(t, "the subscription", func() bool { return tk.k.iopub.Subscribers("stream.stdout") == 1 })
	r, _ := c.execute("spam 20 1048576", nil)
	if r.str("status") != "ok" {
		t.Fatal(r.content)
	}
	waitFor(t, "the stalled peer to be dropped", func() bool {
		_, ok := peerStat(t, tk.k.iopub, stalled.conn.LocalAddr())
		return !ok
	})
	if st := tk.k.iopub.Stats(); st.Disconnected == 0 || st.Peers != 1 {
		t.Errorf("stats %+v", st)
	}
	waitFor(t, "the queue to drain", func() bool { return tk.k.iopub.Stats().PendingBytes == 0 })
	if err := drainUntilClosed(stalled.conn); err != nil {
		t.Errorf("stalled connection not closed: %v", err)
	}
}

// TestLazyShellClient: a shell client that never reads its replies does
// not block the shell loop for another client. The lazy client is never
// dropped (StallTimeout is longer than the hang guard), so the other
// client's replies can only come if nothing waits for it.
func TestLazyShellClient(t *testing.T) {
	f := newFake()
	f.banner = strings.Repeat("b", 64<<10) // 64 KiB kernel_info replies
	tk := startKernel(t, f, &Options{QueueBytes: 2 << 20, StallTimeout: time.Hour})
	c := connect(t, tk)
	lazy := dialRaw(t, tk.ci.Endpoint(tk.ci.ShellPort), zmq4.Dealer, "lazy", 4096)
	for range 400 { // about 26 MB of replies
		frames, _ := c.request("kernel_info_request", map[string]any{})
		if err := lazy.write(frames...); err != nil {
			t.Fatal(err)
		}
	}
	// While the kernel works through the flood, the other client's
	// requests are answered in turn.
	start := time.Now()
	for range 10 {
		id := c.send(c.shell, "execute_request", map[string]any{"code": "result 1"})
		if r := c.reply(c.shell, id); r.str("status") != "ok" {
			t.Fatalf("reply %v", r.content)
		}
	}
	t.Logf("10 round trips during the flood: %v", time.Since(start).Round(time.Millisecond))
	waitFor(t, "the lazy client's queue to overflow", func() bool {
		st, _ := peerStat(t, tk.k.shell, lazy.conn.LocalAddr())
		return st.Dropped > 0
	})
	// The lazy client is still connected with a full queue; the shell
	// loop is not waiting for it.
	start = time.Now()
	for range 10 {
		id := c.send(c.shell, "execute_request", map[string]any{"code": "result 1"})
		if r := c.reply(c.shell, id); r.str("status") != "ok" {
			t.Fatalf("reply %v", r.content)
		}
	}
	t.Logf("10 round trips behind the stuck client: %v", time.Since(start).Round(time.Millisecond))
	if _, ok := peerStat(t, tk.k.shell, lazy.conn.LocalAddr()); !ok {
		t.Error("the lazy client was disconnected; this test is about a connected one")
	}
	st, _ := peerStat(t, tk.k.shell, lazy.conn.LocalAddr())
	t.Logf("lazy peer: %d replies dropped, %d bytes queued", st.Dropped, st.QueuedBytes)
	if st.QueuedBytes > 2<<20+70<<10 {
		t.Errorf("lazy peer holds %d bytes, bound %d", st.QueuedBytes, 2<<20)
	}
}

// TestIdleConnections: TCP connections that never speak hold up neither
// new connections on the same ports nor anything else. Their handshake
// timeout is longer than the hang guard, so the new client can only be
// served if the idle connections do not stand in its way.
func TestIdleConnections(t *testing.T) {
	tk := startKernel(t, newFake(), &Options{HandshakeTimeout: time.Hour})
	for _, port := range []int{tk.ci.ShellPort, tk.ci.IOPubPort, tk.ci.ControlPort, tk.ci.StdinPort, tk.ci.HBPort} {
		for range 3 {
			conn, err := net.Dial("tcp", net.JoinHostPort("127.0.0.1", itoa(port)))
			if err != nil {
				t.Fatal(err)
			}
			defer conn.Close()
		}
	}
	c := connect(t, tk)
	if r, _ := c.execute("print through", nil); r.str("status") != "ok" {
		t.Fatal(r.content)
	}
	id := c.send(c.control, "kernel_info_request", map[string]any{})
	c.reply(c.control, id)
	if st := tk.k.shell.Stats(); st.Rejected != 0 {
		t.Errorf("shell stats %+v: the idle connections were closed", st)
	}
}

// TestIdleConnectionsClosed: a connection that never completes its
// handshake is closed after HandshakeTimeout, and not before.
func TestIdleConnectionsClosed(t *testing.T) {
	const hs = 300 * time.Millisecond
	tk := startKernel(t, newFake(), &Options{HandshakeTimeout: hs})
	var idle []net.Conn
	start := time.Now()
	for _, port := range []int{tk.ci.ShellPort, tk.ci.IOPubPort, tk.ci.HBPort} {
		conn, err := net.Dial("tcp", net.JoinHostPort("127.0.0.1", itoa(port)))
		if err != nil {
			t.Fatal(err)
		}
		defer conn.Close()
		idle = append(idle, conn)
	}
	for _, conn := range idle {
		if err := drainUntilClosed(conn); err != nil {
			t.Fatalf("idle connection not closed: %v", err)
		}
		// A lower bound only, which a busy machine cannot break.
		if since := time.Since(start); since < hs {
			t.Errorf("idle connection closed after %v, before the handshake timeout", since)
		}
	}
	if st := tk.k.shell.Stats(); st.Rejected != 1 {
		t.Errorf("shell stats %+v", st)
	}
}

// TestShutdownBehindStuckClients: a client whose queue is full, on shell
// and on iopub, does not hold up shutdown or its final messages. The
// stuck clients are never dropped (StallTimeout is longer than the hang
// guard). A stuck client whose queue has gone into its TCP buffers looks
// like one that is reading, and shutdown waits Linger for it to hang up:
// 2s bounds that, and is no budget for the good client, whose final
// messages are in its TCP buffers before the wait begins.
func TestShutdownBehindStuckClients(t *testing.T) {
	f := newFake()
	f.banner = strings.Repeat("b", 64<<10)
	tk := startKernel(t, f, &Options{QueueBytes: 1 << 20, StallTimeout: time.Hour, Linger: 2 * time.Second})
	c := connect(t, tk)
	lazy := dialRaw(t, tk.ci.Endpoint(tk.ci.ShellPort), zmq4.Dealer, "lazy", 4096)
	for range 200 {
		frames, _ := c.request("kernel_info_request", map[string]any{})
		lazy.write(frames...)
	}
	stalled := dialRaw(t, tk.ci.Endpoint(tk.ci.IOPubPort), zmq4.Sub, "stalled", 4096)
	stalled.write([]byte{1})
	waitFor(t, "the subscription", func() bool { return tk.k.iopub.Subscribers("kernel.") == 2 })
	c.execute("spam 16 1048576", nil)
	waitFor(t, "the lazy client's queue to overflow", func() bool {
		st, _ := peerStat(t, tk.k.shell, lazy.conn.LocalAddr())
		return st.Dropped > 0
	})

	start := time.Now()
	id := c.send(c.control, "shutdown_request", map[string]any{"restart": false})
	if r := c.reply(c.control, id); r.str("status") != "ok" {
		t.Fatalf("shutdown_reply %v", r.content)
	}
	if got := types(c.iopubFor(id)); !reflect.DeepEqual(got, []string{"status:busy", "shutdown_reply", "status:idle"}) {
		t.Errorf("iopub %v", got)
	}
	waitDone(t, tk)
	t.Logf("shutdown behind two stuck clients: %v", time.Since(start).Round(time.Millisecond))
}

// TestMalformedInput: garbage never stops the kernel and runs nothing.
func TestMalformedInput(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, &Options{MaxMsgBytes: 1 << 20})
	c := connect(t, tk)
	ep := tk.ci.Endpoint(tk.ci.ShellPort)
	raw := dialRaw(t, ep, zmq4.Dealer, "raw", 0)

	good, goodID := c.request("execute_request", map[string]any{"code": "print x"})
	malformedIDs := map[string]bool{goodID: true, "h1": true, "h2": true, "h3": true, "h4": true, "h5": true}
	badSig := append([][]byte(nil), good...)
	badSig[1] = []byte(strings.Repeat("0", 64))
	wrongKey := append([][]byte(nil), good...)
	wrongKey[1] = []byte("abc")
	signed := func(h, content string) [][]byte {
		return [][]byte{[]byte("<IDS|MSG>"), c.sign([]byte(h), []byte("{}"), []byte("{}"), []byte(content)),
			[]byte(h), []byte("{}"), []byte("{}"), []byte(content)}
	}
	cases := map[string][][]byte{
		"no delimiter":       good[1:],
		"too few frames":     good[:5],
		"bad signature":      badSig,
		"short signature":    wrongKey,
		"empty message":      {{}},
		"header not JSON":    signed(`{"msg_id": "h1", "msg_type": `, `{}`),
		"header an array":    signed(`["execute_request"]`, `{}`),
		"no msg_type":        signed(`{"msg_id": "h2"}`, `{}`),
		"content an array":   signed(`{"msg_id": "h3", "msg_type": "execute_request"}`, `[]`),
		"content wrong type": signed(`{"msg_id": "h4", "msg_type": "execute_request"}`, `{"code": 5}`),
		"content null":       signed(`{"msg_id": "h5", "msg_type": "execute_request"}`, `null`),
	}
	for name, frames := range cases {
		if err := raw.write(frames...); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
	}
	// A sentinel from the same connection: its reply is the only reply,
	// and its busy/idle the only ones on iopub.
	sentinel, sid := c.request("kernel_info_request", map[string]any{})
	raw.write(sentinel...)
	if m := readRaw(t, c, raw); m.parentID() != sid {
		t.Fatalf("first reply is to %v", m.parent)
	}
	for {
		m := c.next(c.iopub, hangGuard)
		if malformedIDs[m.parentID()] {
			t.Fatalf("%s for a malformed message: %v", m.typ(), m.parent)
		}
		if m.parentID() == sid && m.str("execution_state") == "idle" {
			break
		}
	}
	if got := f.executed(); len(got) != 0 {
		t.Fatalf("malformed messages ran %v", got)
	}

	// A ZMTP command in the middle of a message, and an oversized message:
	// the connection is dropped, the kernel lives on.
	for name, write := range map[string]func(*rawPeer) error{
		"command frame": func(p *rawPeer) error {
			return zsock.WriteCommand(p.conn, "PING", []byte{0, 1})
		},
		"oversized": func(p *rawPeer) error {
			return p.write([]byte("<IDS|MSG>"), make([]byte, 2<<20))
		},
		"reserved flags": func(p *rawPeer) error {
			_, err := p.conn.Write([]byte{0x80, 1, 'x'})
			return err
		},
	} {
		p := dialRaw(t, ep, zmq4.Dealer, "", 0)
		write(p)
		if name != "command frame" {
			if err := drainUntilClosed(p.conn); err != nil {
				t.Errorf("%s: connection not closed: %v", name, err)
			}
		}
	}
	if r, _ := c.execute("result alive", nil); r.str("status") != "ok" {
		t.Fatalf("after malformed input: %v", r.content)
	}
}

// TestMalformedHandshake: zmq4 panics on some handshakes (an unknown
// socket type, a truncated metadata property); the kernel survives them.
func TestMalformedHandshake(t *testing.T) {
	tk := startKernel(t, newFake(), nil)
	c := connect(t, tk)
	addr := net.JoinHostPort("127.0.0.1", itoa(tk.ci.ShellPort))

	// An unknown Socket-Type: zmq4's own client does not check its type.
	conn, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	zmq4.Open(conn, null.Security(), zmq4.SocketType("BOGUS"), nil, false, nil)
	conn.Close()

	// A greeting, then a READY command whose property claims the whole
	// rest of the body as its name.
	conn, err = net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	greeting := make([]byte, 64)
	greeting[0], greeting[9], greeting[10] = 0xff, 0x7f, 3
	copy(greeting[12:], "NULL")
	body := append([]byte{5}, "READY"...)
	body = append(body, 4, 'a', 'b', 'c')
	cmd := append([]byte{0x04, byte(len(body))}, body...)
	conn.Write(append(greeting, cmd...))
	drainUntilClosed(conn)
	conn.Close()

	// A huge metadata value length.
	conn, _ = net.Dial("tcp", addr)
	body = append([]byte{5}, "READY"...)
	body = append(body, 2, 'I', 'd')
	body = binary.BigEndian.AppendUint32(body, 0xffffffff)
	conn.Write(append(greeting, append([]byte{0x04, byte(len(body))}, body...)...))
	drainUntilClosed(conn)
	conn.Close()

	waitFor(t, "three rejected handshakes", func() bool { return tk.k.shell.Stats().Rejected >= 3 })
	if r, _ := c.execute("result alive", nil); r.str("status") != "ok" {
		t.Fatalf("after bad handshakes: %v", r.content)
	}
}

// TestBadSignatureFromClient: a message signed with another key is
// dropped: no reply, no busy, nothing run.
func TestBadSignatureFromClient(t *testing.T) {
	f := newFake()
	tk := startKernel(t, f, nil)
	c := connect(t, tk)
	c.key = []byte("not the key")
	bad := c.send(c.shell, "execute_request", map[string]any{"code": "print no"})
	c.key = []byte(testKey)
	ok := c.send(c.shell, "kernel_info_request", map[string]any{})
	if r := c.next(c.shell, hangGuard); r.parentID() != ok {
		t.Fatalf("got a reply to %v", r.parent)
	}
	for {
		m := c.next(c.iopub, hangGuard)
		if m.parentID() == bad {
			t.Fatalf("iopub %s for the badly signed request", m.typ())
		}
		if m.parentID() == ok && m.str("execution_state") == "idle" {
			break
		}
	}
	if got := f.executed(); len(got) != 0 {
		t.Fatalf("ran %v", got)
	}
}
