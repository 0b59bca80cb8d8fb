package zsock

import (
	"bufio"
	"bytes"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"log"
	"net"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

// hangGuard bounds waits that only a broken socket would exhaust; no
// assertion depends on how long anything takes.
const hangGuard = 2 * time.Minute

// zmtpGreeting is a ZMTP 3.0 greeting for the NULL mechanism as a client
// (RFC 23/ZMTP, "Greeting": signature FF, 8 padding bytes, 7F; version
// 3.0; mechanism padded to 20 bytes; as-server 0; 31 bytes of filler).
func zmtpGreeting() []byte {
	g := make([]byte, 64)
	g[0], g[9], g[10], g[11] = 0xff, 0x7f, 3, 0
	copy(g[12:], "NULL")
	return g
}

// readyCommand is a READY command frame with the given metadata
// properties (RFC 23/ZMTP, "The NULL Security Mechanism": a name of one
// length byte, a value of four length bytes, big-endian).
func readyCommand(props ...string) []byte {
	body := append([]byte{5}, "READY"...)
	for i := 0; i+1 < len(props); i += 2 {
		body = append(body, byte(len(props[i])))
		body = append(body, props[i]...)
		body = binary.BigEndian.AppendUint32(body, uint32(len(props[i+1])))
		body = append(body, props[i+1]...)
	}
	return append(appendHeader(nil, flagCommand, len(body)), body...)
}

// memConn is a net.Conn whose reads come from a fixed input and whose
// writes are discarded: a handshake against scripted bytes.
type memConn struct {
	net.Conn // nil: only Read and Write are used
	in       io.Reader
}

func (c memConn) Read(p []byte) (int, error) { return c.in.Read(p) }
func (memConn) Write(p []byte) (int, error)  { return len(p), nil }

// TestGuardStopsHugeAnnouncements: after a valid greeting, a command
// frame that announces 2^36 to 2^40 bytes, or any frame with MORE set,
// fails the read before the size's last byte reaches zmq4, so zmq4 never
// sees a size to allocate.
func TestGuardStopsHugeAnnouncements(t *testing.T) {
	long := func(flags byte, size uint64) []byte {
		return binary.BigEndian.AppendUint64([]byte{flags | flagLong}, size)
	}
	cases := map[string][]byte{
		"2^36 command":        long(flagCommand, 1<<36),
		"2^40 command":        long(flagCommand, 1<<40),
		"2^63 command":        long(flagCommand, 1<<63),
		"just over the limit": long(flagCommand, MaxHandshakeFrame+1),
		"command with MORE":   {flagCommand | flagMore, 0},
		"message frame":       {0, 5},
		"message with MORE":   {flagMore, 0},
		"reserved flags":      {0x84, 1},
	}
	for name, frame := range cases {
		in := append(zmtpGreeting(), frame...)
		g := newGuard(nil, bufio.NewReader(bytes.NewReader(in)))
		got, err := io.ReadAll(g)
		if err == nil {
			t.Errorf("%s: read to the end", name)
		}
		if len(got) > 64 {
			t.Errorf("%s: %d bytes passed the guard, want only the greeting", name, len(got))
		}
	}
	// A READY command of the largest allowed size passes whole, and
	// nothing after it does.
	body := bytes.Repeat([]byte{'x'}, MaxHandshakeFrame)
	in := append(zmtpGreeting(), long(flagCommand, MaxHandshakeFrame)...)
	in = append(in, body...)
	in = append(in, 0, 1, 'z')
	g := newGuard(nil, bufio.NewReader(bytes.NewReader(in)))
	got, err := io.ReadAll(g)
	if err == nil || len(got) != 64+9+MaxHandshakeFrame {
		t.Errorf("largest READY: %d bytes passed, err %v", len(got), err)
	}
}

// TestHandshakeWithGuard: zmq4's handshake runs through the guard, and the
// bytes the peer sends after its READY command stay in the reader.
func TestHandshakeWithGuard(t *testing.T) {
	var msg bytes.Buffer
	WriteMsg(&msg, [][]byte{[]byte("first"), []byte("message")})
	in := append(zmtpGreeting(), readyCommand("Socket-Type", "DEALER", "Identity", "abc")...)
	in = append(in, msg.Bytes()...)
	r, id, err := serverHandshake(memConn{in: bytes.NewReader(in)}, zmq4.Router, "k")
	if err != nil {
		t.Fatal(err)
	}
	if string(id) != "abc" {
		t.Errorf("identity %q", id)
	}
	frames, _, err := ReadMsg(r, 1<<20)
	if err != nil || !reflect.DeepEqual(frames, [][]byte{[]byte("first"), []byte("message")}) {
		t.Errorf("after the handshake: %q %v", frames, err)
	}
	// A peer of a type a ROUTER does not talk to, and a bad mechanism.
	bad := map[string][]byte{
		"PUB peer":       append(zmtpGreeting(), readyCommand("Socket-Type", "PUB")...),
		"unknown type":   append(zmtpGreeting(), readyCommand("Socket-Type", "BOGUS")...),
		"PLAIN":          append(append(zmtpGreeting()[:12], "PLAIN"...), make([]byte, 47)...),
		"no NUL in name": append(append(zmtpGreeting()[:12], "NULLNULLNULLNULLNULL"...), make([]byte, 32)...),
		"version 2":      append(append(zmtpGreeting()[:10], 2, 0), zmtpGreeting()[12:]...),
		"truncated":      zmtpGreeting()[:40],
		"property past the end": append(zmtpGreeting(), append([]byte{flagCommand, 10, 5},
			"READY\x0bSock"...)...),
	}
	for name, in := range bad {
		if _, _, err := serverHandshake(memConn{in: bytes.NewReader(in)}, zmq4.Router, "k"); err == nil {
			t.Errorf("%s: handshake accepted", name)
		}
	}
}

// TestEmptyFrameFlood: empty frames with MORE count FrameOverhead each, so
// an endless stream of them ends at the message limit after a bounded
// number of frames (about two bytes on the wire each).
func TestEmptyFrameFlood(t *testing.T) {
	const max = 1 << 20
	src := &countingReader{r: repeatReader{0x01, 0x00}}
	_, _, err := ReadMsg(bufio.NewReaderSize(src, 16), max)
	if !errors.Is(err, ErrTooLarge) {
		t.Fatalf("err %v, want ErrTooLarge", err)
	}
	frames := max / FrameOverhead
	if src.n > int64(2*frames+32) {
		t.Errorf("read %d bytes before refusing; %d empty frames fit in %d", src.n, frames, max)
	}
	// Charged as it goes: the sum of the charges is what was refused at.
	var charged int64
	readMsg(bufio.NewReader(repeatReader{0x01, 0x00}), max, func(n int64) error { charged += n; return nil })
	if charged > max || charged < max-FrameOverhead {
		t.Errorf("charged %d, limit %d", charged, max)
	}
}

type repeatReader []byte

func (r repeatReader) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = r[i%len(r)]
	}
	return len(p) - len(p)%len(r), nil
}

type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// rawRouterPeer connects to a socket and completes the handshake as a
// DEALER, then writes only what the test tells it to.
func rawRouterPeer(t *testing.T, addr net.Addr, id string) net.Conn {
	t.Helper()
	conn, err := net.Dial("tcp", addr.String())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	if _, err := zmq4.Open(conn, nullSecurity(), zmq4.Dealer, zmq4.SocketIdentity(id), false, nil); err != nil {
		t.Fatal(err)
	}
	return conn
}

// waitClosed reads until the socket closes the connection; it fails the
// test if that does not happen within the hang guard.
func waitClosed(t *testing.T, conn net.Conn) {
	t.Helper()
	conn.SetReadDeadline(time.Now().Add(hangGuard))
	// A reset counts: the socket closed with unread input.
	var ne net.Error
	if _, err := io.Copy(io.Discard, conn); errors.As(err, &ne) && ne.Timeout() {
		t.Fatalf("connection not closed: %v", err)
	}
}

func waitUntil(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(hangGuard)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("gave up waiting for %s", what)
		}
		time.Sleep(2 * time.Millisecond)
	}
}

// TestMaxInBytesEvictsLargestUnfinished: peers that start large messages
// and stall fill the socket's incoming bytes; a small message from another
// peer still gets through, by dropping the largest unfinished message, and
// the bytes held never pass MaxInBytes.
func TestMaxInBytesEvictsLargestUnfinished(t *testing.T) {
	ctx := context.Background()
	const maxMsg, maxIn = 1 << 20, 2 << 20
	r, err := ListenRouter(ctx, "tcp://127.0.0.1:0", "router", &Options{Logger: quiet(), MaxMsgBytes: maxMsg, MaxInBytes: maxIn, StallTimeout: hangGuard})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	// Two peers announce frames of 900 KiB and 800 KiB, send them but
	// the last byte, and stall.
	var stalled []net.Conn
	for i, size := range []int{900 << 10, 800 << 10} {
		c := rawRouterPeer(t, r.Addr(), "stalled"+itoa(i))
		hdr := appendHeader(nil, flagMore, size)
		if _, err := c.Write(append(hdr, make([]byte, size-1)...)); err != nil {
			t.Fatal(err)
		}
		stalled = append(stalled, c)
	}
	waitUntil(t, "both stalled messages to be counted", func() bool { return r.Stats().InBytes >= (1700<<10)+2*FrameOverhead })
	// A third peer sends 400 KiB: it fits only if the 900 KiB one goes.
	small := rawRouterPeer(t, r.Addr(), "small")
	payload := bytes.Repeat([]byte{'s'}, 400<<10)
	if err := WriteMsg(small, [][]byte{payload}); err != nil {
		t.Fatal(err)
	}
	m, err := r.Recv(ctx)
	if err != nil || string(m[0]) != "small" || !bytes.Equal(m[1], payload) {
		t.Fatalf("small message: %q... %v", m[0], err)
	}
	waitClosed(t, stalled[0])
	st := r.Stats()
	if st.Evicted != 1 || st.MaxInBytes > maxIn {
		t.Errorf("stats %+v", st)
	}
	// The 800 KiB peer is still connected and can finish its message.
	if _, err := stalled[1].Write([]byte{'!'}); err != nil {
		t.Fatal(err)
	}
	stalled[1].Write([]byte{0, 0})
	m, err = r.Recv(ctx)
	if err != nil || string(m[0]) != "stalled1" || len(m[1]) != 800<<10 {
		t.Fatalf("stalled peer's message: %v", err)
	}
	waitUntil(t, "the count to return to zero", func() bool { return r.Stats().InBytes == 0 })
}

// TestMaxInBytesNoRoom: when the bytes held are finished messages nobody
// has taken yet, a peer that needs room waits StallTimeout and is then
// disconnected; the held messages are still delivered.
func TestMaxInBytesNoRoom(t *testing.T) {
	ctx := context.Background()
	const maxMsg, maxIn = 64 << 10, 256 << 10
	r, err := ListenRouter(ctx, "tcp://127.0.0.1:0", "router", &Options{Logger: quiet(), MaxMsgBytes: maxMsg, MaxInBytes: maxIn, StallTimeout: 50 * time.Millisecond})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	a := rawRouterPeer(t, r.Addr(), "a")
	for range 4 {
		WriteMsg(a, [][]byte{make([]byte, 60<<10)})
	}
	waitUntil(t, "four messages held", func() bool { return r.Stats().InBytes >= 240<<10 })
	b := rawRouterPeer(t, r.Addr(), "b")
	WriteMsg(b, [][]byte{make([]byte, 60<<10)})
	waitClosed(t, b)
	for range 4 {
		if m, err := r.Recv(ctx); err != nil || string(m[0]) != "a" {
			t.Fatalf("held message: %v", err)
		}
	}
	if st := r.Stats(); st.MaxInBytes > maxIn || st.Evicted != 0 {
		t.Errorf("stats %+v", st)
	}
}

// TestMaxPeers: connections beyond MaxPeers are closed at once; when one
// goes, a new one is served.
func TestMaxPeers(t *testing.T) {
	ctx := context.Background()
	r, err := ListenRouter(ctx, "tcp://127.0.0.1:0", "router", &Options{Logger: quiet(), MaxPeers: 3, HandshakeTimeout: hangGuard})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	var idle []net.Conn
	for range 3 {
		c, err := net.Dial("tcp", r.Addr().String())
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
		idle = append(idle, c)
	}
	// The fourth is closed without a greeting, long before the (hour-long)
	// handshake timeout.
	over, err := net.Dial("tcp", r.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer over.Close()
	waitClosed(t, over)
	waitUntil(t, "the refusal to be counted", func() bool { return r.Stats().Rejected == 1 })
	idle[0].Close()
	waitUntil(t, "the slot to free", func() bool { return r.base.conns.Load() == 2 })
	d := dial(t, zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity("d")), zmq4.WithLogger(quiet())), r.Addr())
	d.Send(zmq4.NewMsg([]byte("in")))
	if m, err := r.Recv(ctx); err != nil || string(m[1]) != "in" {
		t.Fatalf("%q %v", m, err)
	}
}

func itoa(i int) string { return string(rune('0' + i)) }

// FuzzReadMsg: any bytes give a message or an error, never a panic; a
// message read back re-encodes to the bytes consumed, within the limit.
func FuzzReadMsg(f *testing.F) {
	var buf bytes.Buffer
	WriteMsg(&buf, [][]byte{[]byte("id"), []byte("<IDS|MSG>"), bytes.Repeat([]byte("x"), 300)})
	f.Add(buf.Bytes())
	f.Add([]byte{0x01, 0x00, 0x01, 0x00, 0x00, 0x00})
	f.Add([]byte{0x04, 0x05, 4, 'P', 'I', 'N', 'G'})
	f.Add(binary.BigEndian.AppendUint64([]byte{0x06}, 1<<40))
	f.Add([]byte{0x80, 0x01, 'x'})
	f.Fuzz(func(t *testing.T, data []byte) {
		const max = 4096
		src := &countingReader{r: bytes.NewReader(data)}
		r := bufio.NewReaderSize(src, 16)
		frames, isCmd, err := ReadMsg(r, max)
		if err != nil {
			return
		}
		var cost int
		for _, fr := range frames {
			cost += len(fr) + FrameOverhead
		}
		if cost > max {
			t.Fatalf("message of cost %d accepted, limit %d", cost, max)
		}
		consumed := int(src.n) - r.Buffered()
		var again bytes.Buffer
		if isCmd {
			again.Write(appendHeader(nil, flagCommand, len(frames[0])))
			again.Write(frames[0])
		} else {
			WriteMsg(&again, frames)
		}
		// Equal up to the size encoding: a peer may use the long form
		// for a short frame.
		if again.Len() > consumed {
			t.Fatalf("re-encoded %d bytes from %d consumed", again.Len(), consumed)
		}
	})
}

// FuzzHandshake: a handshake on any bytes ends in an error or a peer,
// never a panic; on success the reader holds exactly the bytes after the
// READY command.
func FuzzHandshake(f *testing.F) {
	ready := append(zmtpGreeting(), readyCommand("Socket-Type", "DEALER", "Identity", "x")...)
	var msg bytes.Buffer
	WriteMsg(&msg, [][]byte{[]byte("<IDS|MSG>"), []byte("sig")})
	f.Add(ready)
	f.Add(append(append([]byte(nil), ready...), msg.Bytes()...))
	f.Add(append(zmtpGreeting(), binary.BigEndian.AppendUint64([]byte{0x06}, 1<<38)...))
	f.Add(append(zmtpGreeting(), readyCommand("Socket-Type", "REQ", "X-Extra", "value")...))
	f.Add(append(zmtpGreeting(), 0x04, 0x08, 5, 'R', 'E', 'A', 'D', 'Y', 0x0b, 'S'))
	f.Fuzz(func(t *testing.T, data []byte) {
		r, _, err := serverHandshake(memConn{in: bytes.NewReader(data)}, zmq4.Router, "k")
		if err != nil {
			return
		}
		// What the handshake consumed: the greeting and one frame.
		n := 64 + 2 + int(data[65])
		if data[64]&flagLong != 0 {
			n = 64 + 9 + int(binary.BigEndian.Uint64(data[65:73]))
		}
		if n > 64+9+MaxHandshakeFrame {
			t.Fatalf("handshake consumed %d bytes", n)
		}
		rest, _ := io.ReadAll(r)
		if !bytes.Equal(rest, data[n:]) {
			t.Fatalf("after the handshake the reader holds %d bytes, want the %d after READY", len(rest), len(data)-n)
		}
	})
}

// TestQueueOverheadBoundsTinyMessages: a heartbeat peer that sends empty
// pings and never reads the echoes fills its queue with messages of two
// bytes each; counted with QueueOverhead apiece, the queue stays within
// QueueBytes in memory, not only in bytes on the wire.
func TestQueueOverheadBoundsTinyMessages(t *testing.T) {
	const queue = 64 << 10
	e, err := ListenEcho(context.Background(), "tcp://127.0.0.1:0", "hb", &Options{Logger: quiet(), QueueBytes: queue, StallTimeout: hangGuard})
	if err != nil {
		t.Fatal(err)
	}
	defer e.Close(0)
	conn := rawRouterPeer(t, e.Addr(), "pinger")
	conn.(*net.TCPConn).SetReadBuffer(4096)
	pings := bytes.Repeat([]byte{0x00, 0x00}, 64<<10)
	go func() {
		for {
			if _, err := conn.Write(pings); err != nil {
				return
			}
		}
	}()
	waitUntil(t, "the queue to overflow", func() bool { return e.Stats().Dropped > 0 })
	for _, ps := range e.PeerStats() {
		if cost := ps.QueuedBytes + ps.Queued*QueueOverhead; cost > queue {
			t.Errorf("%d messages of %d bytes queued: %d bytes with overhead, bound %d", ps.Queued, ps.QueuedBytes, cost, queue)
		}
	}
}

// TestSubscriptionBounds: a subscriber gets at most maxTopics topics of at
// most maxTopic bytes; the rest are ignored.
func TestSubscriptionBounds(t *testing.T) {
	p, err := ListenPub(context.Background(), "tcp://127.0.0.1:0", "pub", &Options{Logger: quiet()})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close(0)
	conn, err := net.Dial("tcp", p.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	if _, err := zmq4.Open(conn, nullSecurity(), zmq4.Sub, nil, false, nil); err != nil {
		t.Fatal(err)
	}
	long := bytes.Repeat([]byte{'z'}, maxTopic+1)
	WriteMsg(conn, [][]byte{append([]byte{1}, long...)})
	for i := range 100 {
		WriteMsg(conn, [][]byte{append([]byte{1}, fmt.Sprintf("t%02d", i)...)})
	}
	// One more unsubscribe: once it is seen, so is everything before it.
	WriteMsg(conn, [][]byte{[]byte("\x00t00")})
	waitUntil(t, "the subscriptions", func() bool { return p.Subscribers("t00") == 0 && p.Subscribers("t01") == 1 })
	if p.Subscribers(string(long)) != 0 {
		t.Error("a topic over maxTopic bytes was accepted")
	}
	if p.Subscribers(fmt.Sprintf("t%02d", maxTopics-1)) != 1 || p.Subscribers(fmt.Sprintf("t%02d", maxTopics)) != 0 {
		t.Errorf("topics kept: t%02d %d, t%02d %d", maxTopics-1, p.Subscribers(fmt.Sprintf("t%02d", maxTopics-1)),
			maxTopics, p.Subscribers(fmt.Sprintf("t%02d", maxTopics)))
	}
}

// TestRateLog: a burst gets through up to the limit; the rest is counted
// and reported with the first line of a later second.
func TestRateLog(t *testing.T) {
	var buf bytes.Buffer
	r := NewRateLog(log.New(&buf, "", 0), 5)
	for i := range 12 {
		r.Printf("line %d", i)
	}
	if n := strings.Count(buf.String(), "\n"); n != 5 {
		t.Fatalf("%d lines of a burst of 12, limit 5:\n%s", n, buf.String())
	}
	time.Sleep(1100 * time.Millisecond) // a lower bound: the next second has begun
	r.Printf("later")
	if !strings.HasSuffix(buf.String(), "(7 more log lines like these were left out)\nlater\n") {
		t.Errorf("after the burst:\n%s", buf.String())
	}
}
