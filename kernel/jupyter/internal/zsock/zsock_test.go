package zsock

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"io"
	"log"
	"net"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
	"github.com/go-zeromq/zmq4/security/null"
)

func TestEncodeReadRoundTrip(t *testing.T) {
	big := bytes.Repeat([]byte("y"), 70000)
	cases := [][][]byte{
		{[]byte("one")},
		{{}, {}, {}},
		{[]byte("id"), []byte("<IDS|MSG>"), bytes.Repeat([]byte("x"), 255), bytes.Repeat([]byte("x"), 256)},
		{big, []byte("tail"), big},
	}
	for i, frames := range cases {
		var buf bytes.Buffer
		if err := WriteMsg(&buf, frames); err != nil {
			t.Fatal(err)
		}
		segs, size := Encode(frames)
		if size != buf.Len() {
			t.Errorf("case %d: Encode size %d, wire %d", i, size, buf.Len())
		}
		var n int
		for _, s := range segs {
			n += len(s)
		}
		if n != size {
			t.Errorf("case %d: segments hold %d bytes, size %d", i, n, size)
		}
		got, isCmd, err := ReadMsg(bufio.NewReader(&buf), 1<<20)
		if err != nil || isCmd {
			t.Fatalf("case %d: %v %v", i, err, isCmd)
		}
		if !reflect.DeepEqual(got, frames) {
			t.Errorf("case %d: frames differ", i)
		}
	}
}

// TestFrameLayout checks the bytes against the ZMTP 3.0 framing rules
// (RFC 23/ZMTP): flags byte (MORE 0x01, LONG 0x02, COMMAND 0x04), then a
// one-byte size up to 255 or an eight-byte big-endian size.
func TestFrameLayout(t *testing.T) {
	var buf bytes.Buffer
	WriteMsg(&buf, [][]byte{[]byte("ab"), bytes.Repeat([]byte("z"), 256)})
	b := buf.Bytes()
	want := []byte{0x01, 2, 'a', 'b', 0x02, 0, 0, 0, 0, 0, 0, 1, 0}
	if !bytes.Equal(b[:len(want)], want) || len(b) != len(want)+256 {
		t.Errorf("layout % x", b[:len(want)])
	}
	buf.Reset()
	WriteCommand(&buf, "PING", []byte{0, 1})
	if got := buf.Bytes(); !bytes.Equal(got, []byte{0x04, 7, 4, 'P', 'I', 'N', 'G', 0, 1}) {
		t.Errorf("command % x", got)
	}
	name, data, ok := ParseCommand(buf.Bytes()[2:])
	if !ok || name != "PING" || !bytes.Equal(data, []byte{0, 1}) {
		t.Errorf("ParseCommand %q %v %v", name, data, ok)
	}
	if _, _, ok := ParseCommand([]byte{9, 'a'}); ok {
		t.Error("ParseCommand accepted a name longer than the body")
	}
}

func TestReadMsgErrors(t *testing.T) {
	long := func(size uint64) []byte {
		b := []byte{0x02, 0, 0, 0, 0, 0, 0, 0, 0}
		for i := 0; i < 8; i++ {
			b[8-i] = byte(size >> (8 * i))
		}
		return b
	}
	cases := []struct {
		name string
		in   []byte
		want error
	}{
		{"empty", nil, io.EOF},
		{"truncated size", []byte{0x02, 0, 0}, io.ErrUnexpectedEOF},
		{"truncated body", []byte{0x00, 5, 'a'}, io.ErrUnexpectedEOF},
		{"truncated after more", []byte{0x01, 1, 'a'}, io.ErrUnexpectedEOF},
		{"huge announced size", long(1 << 62), ErrTooLarge},
		{"over the limit in parts", append([]byte{0x01, 200}, make([]byte, 200)...), ErrTooLarge},
	}
	for _, tc := range cases {
		_, _, err := ReadMsg(bufio.NewReader(bytes.NewReader(tc.in)), 300)
		if tc.name == "over the limit in parts" {
			// 200 bytes, then a second frame announced at 200 more.
			in := append(tc.in, 0x00, 200)
			_, _, err = ReadMsg(bufio.NewReader(bytes.NewReader(in)), 300)
		}
		if !errors.Is(err, tc.want) {
			t.Errorf("%s: err %v, want %v", tc.name, err, tc.want)
		}
	}
	// Reserved flag bits and a command inside a message are errors.
	for _, in := range [][]byte{{0x80, 0}, {0x01, 1, 'a', 0x04, 0}} {
		if _, _, err := ReadMsg(bufio.NewReader(bytes.NewReader(in)), 300); err == nil {
			t.Errorf("% x accepted", in)
		}
	}
}

func TestSplitEndpoint(t *testing.T) {
	cases := []struct{ ep, network, addr string }{
		{"tcp://127.0.0.1:5555", "tcp", "127.0.0.1:5555"},
		{"tcp://*:0", "tcp", ":0"},
		{"tcp://[::1]:9", "tcp", "[::1]:9"},
		{"ipc:///tmp/k-1", "unix", "/tmp/k-1"},
	}
	for _, tc := range cases {
		n, a, err := splitEndpoint(tc.ep)
		if err != nil || n != tc.network || a != tc.addr {
			t.Errorf("%s: %s %s %v", tc.ep, n, a, err)
		}
	}
	for _, ep := range []string{"127.0.0.1:5", "udp://x:1", "tcp://nohost"} {
		if _, _, err := splitEndpoint(ep); err == nil {
			t.Errorf("%s accepted", ep)
		}
	}
}

func quiet() *log.Logger { return log.New(io.Discard, "", 0) }

func dial(t *testing.T, s zmq4.Socket, addr net.Addr) zmq4.Socket {
	t.Helper()
	if err := s.Dial("tcp://" + addr.String()); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

func recvTimeout(t *testing.T, s zmq4.Socket) zmq4.Msg {
	t.Helper()
	ch := make(chan zmq4.Msg, 1)
	go func() { m, _ := s.Recv(); ch <- m }()
	select {
	case m := <-ch:
		return m
	case <-time.After(hangGuard):
		t.Fatal("nothing received")
	}
	return zmq4.Msg{}
}

func TestRouterWithZmq4Dealers(t *testing.T) {
	ctx := context.Background()
	r, err := ListenRouter(ctx, "tcp://127.0.0.1:0", "router", &Options{Logger: quiet()})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	named := dial(t, zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity("named")), zmq4.WithLogger(quiet())), r.Addr())
	anon := dial(t, zmq4.NewDealer(ctx, zmq4.WithLogger(quiet())), r.Addr())

	named.Send(zmq4.NewMsgFrom([]byte("hello"), []byte("1")))
	m, err := r.Recv(ctx)
	if err != nil || string(m[0]) != "named" || string(m[1]) != "hello" {
		t.Fatalf("%q %v", m, err)
	}
	// zmq4 dealers send a random identity of their own unless given one;
	// an identity starting with a zero byte is replaced by the router's.
	anon.Send(zmq4.NewMsg([]byte("hi")))
	m2, _ := r.Recv(ctx)
	if string(m2[0]) == "named" || len(m2[0]) == 0 {
		t.Fatalf("anonymous identity %q", m2[0])
	}
	if err := r.Send([][]byte{m[0], []byte("a"), []byte("b")}); err != nil {
		t.Fatal(err)
	}
	if got := recvTimeout(t, named); !reflect.DeepEqual(got.Frames, [][]byte{[]byte("a"), []byte("b")}) {
		t.Errorf("named got %q", got.Frames)
	}
	if err := r.Send([][]byte{m2[0], []byte("c")}); err != nil {
		t.Fatal(err)
	}
	if got := recvTimeout(t, anon); string(got.Frames[0]) != "c" {
		t.Errorf("anon got %q", got.Frames)
	}
	if err := r.Send([][]byte{[]byte("nobody"), []byte("x")}); err != ErrUnknownPeer {
		t.Errorf("send to unknown peer: %v", err)
	}
	// A second connection with the same identity cannot take the route
	// over (anyone may claim any identity): it gets a route of its own,
	// and replies to each connection's messages reach that connection.
	again := dial(t, zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity("named")), zmq4.WithLogger(quiet())), r.Addr())
	again.Send(zmq4.NewMsg([]byte("back")))
	m3, _ := r.Recv(ctx)
	if string(m3[1]) != "back" || string(m3[0]) == "named" || m3[0][0] != 0 {
		t.Fatalf("duplicate identity routed as %q: %q", m3[0], m3)
	}
	r.Send([][]byte{[]byte("named"), []byte("to the first")})
	r.Send([][]byte{m3[0], []byte("to the second")})
	if got := recvTimeout(t, named); string(got.Frames[0]) != "to the first" {
		t.Errorf("first connection got %q", got.Frames)
	}
	if got := recvTimeout(t, again); string(got.Frames[0]) != "to the second" {
		t.Errorf("second connection got %q", got.Frames)
	}
}

func TestPubSubscriptions(t *testing.T) {
	ctx := context.Background()
	p, err := ListenPub(ctx, "tcp://127.0.0.1:0", "pub", &Options{Logger: quiet()})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close(0)
	sub := zmq4.NewSub(ctx, zmq4.WithLogger(quiet()))
	sub.SetOption(zmq4.OptionSubscribe, "kernel.")
	dial(t, sub, p.Addr())
	waitUntil(t, "the subscription", func() bool { return p.Subscribers("kernel.x") > 0 })
	if p.Subscribers("stream.stdout") != 0 {
		t.Error("prefix kernel. matched stream.stdout")
	}
	p.Send([][]byte{[]byte("stream.stdout"), []byte("skipped")})
	p.Send([][]byte{[]byte("kernel.1.status"), []byte("delivered")})
	if got := recvTimeout(t, sub); string(got.Frames[1]) != "delivered" {
		t.Errorf("got %q", got.Frames)
	}
	// ZMTP 3.1 commands subscribe and cancel too.
	var pr peer
	pr.topics = map[string]int{}
	pub := &Pub{}
	msg := func(frame []byte, isCmd bool) inMsg {
		return inMsg{frames: [][]byte{frame}, isCmd: isCmd, b: &base{inFreed: make(chan struct{})}}
	}
	pub.message(&pr, msg(append([]byte{9}, "SUBSCRIBE"...), true))
	pub.message(&pr, msg(append(append([]byte{9}, "SUBSCRIBE"...), "a"...), true))
	if !pr.subscribed("anything") {
		t.Error("SUBSCRIBE to everything not recorded")
	}
	pub.message(&pr, msg(append([]byte{6}, "CANCEL"...), true))
	if pr.subscribed("b") || !pr.subscribed("ab") {
		t.Errorf("after CANCEL: %v", pr.topics)
	}
	pub.message(&pr, msg([]byte{0, 'a'}, false))
	if pr.subscribed("ab") {
		t.Errorf("after unsubscribe: %v", pr.topics)
	}
}

func TestEchoWithZmq4Req(t *testing.T) {
	ctx := context.Background()
	e, err := ListenEcho(ctx, "tcp://127.0.0.1:0", "hb", &Options{Logger: quiet()})
	if err != nil {
		t.Fatal(err)
	}
	defer e.Close(0)
	req := dial(t, zmq4.NewReq(ctx, zmq4.WithLogger(quiet())), e.Addr())
	for _, s := range []string{"ping", "", strings.Repeat("p", 1000)} {
		req.Send(zmq4.NewMsg([]byte(s)))
		if got := recvTimeout(t, req); len(got.Frames) != 1 || string(got.Frames[0]) != s {
			t.Errorf("echo of %q: %q", s, got.Frames)
		}
	}
}

// TestCloseDeliversLastMessage: a message sent just before Close reaches
// the subscriber (closing at once lost the final idle in most trials when
// measured with zmq4's own PUB).
func TestCloseDeliversLastMessage(t *testing.T) {
	ctx := context.Background()
	for trial := range 20 {
		p, err := ListenPub(ctx, "tcp://127.0.0.1:0", "pub", &Options{Logger: quiet()})
		if err != nil {
			t.Fatal(err)
		}
		sub := zmq4.NewSub(ctx, zmq4.WithLogger(quiet()))
		sub.SetOption(zmq4.OptionSubscribe, "")
		dial(t, sub, p.Addr())
		waitUntil(t, "the subscription", func() bool { return p.Subscribers("") > 0 })
		for i := range 50 {
			p.Send([][]byte{[]byte("t"), bytes.Repeat([]byte{byte(i)}, 2000)})
		}
		p.Send([][]byte{[]byte("t"), []byte("idle")})
		got := make(chan string, 1)
		go func() {
			var last string
			for range 51 {
				m, err := sub.Recv()
				if err != nil {
					break
				}
				last = string(m.Frames[1])
			}
			got <- last
		}()
		// Close returns as soon as the subscriber has read to the end and
		// hung up; the linger only guards against a hang.
		p.Close(hangGuard)
		var last string
		select {
		case last = <-got:
		case <-time.After(hangGuard):
		}
		if last != "idle" {
			t.Fatalf("trial %d: last message %q", trial, last)
		}
	}
}

// TestHandshakeIsolation: a connection that never sends its greeting
// delays no other connection, and a handshake that makes zmq4 panic is
// rejected. The handshake timeout is longer than the hang guard, so the
// second connection can only be served if the silent one is not in its
// way.
func TestHandshakeIsolation(t *testing.T) {
	ctx := context.Background()
	r, err := ListenRouter(ctx, "tcp://127.0.0.1:0", "router", &Options{Logger: quiet(), HandshakeTimeout: time.Hour})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	silent, err := net.Dial("tcp", r.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer silent.Close()
	d := dial(t, zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity("d")), zmq4.WithLogger(quiet())), r.Addr())
	d.Send(zmq4.NewMsg([]byte("x")))
	if _, err := r.Recv(ctx); err != nil {
		t.Fatal(err)
	}
	bogus, _ := net.Dial("tcp", r.Addr().String())
	zmq4.Open(bogus, nullSecurity(), zmq4.SocketType("NOT-A-TYPE"), nil, false, nil)
	bogus.Close()
	waitUntil(t, "the bogus handshake to be rejected", func() bool { return r.Stats().Rejected == 1 })
	if st := r.Stats(); st.Accepted != 1 {
		t.Errorf("stats %+v", st)
	}
}

// TestHandshakeTimeout: a connection that never sends its greeting is
// closed after HandshakeTimeout and not before (a lower bound, which a
// busy machine cannot break).
func TestHandshakeTimeout(t *testing.T) {
	const hs = 300 * time.Millisecond
	r, err := ListenRouter(context.Background(), "tcp://127.0.0.1:0", "router", &Options{Logger: quiet(), HandshakeTimeout: hs})
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close(0)
	start := time.Now()
	silent, err := net.Dial("tcp", r.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer silent.Close()
	waitClosed(t, silent) // zmq4 writes its greeting first; read past it
	if el := time.Since(start); el < hs {
		t.Errorf("silent connection closed after %v, before the timeout", el)
	}
	if st := r.Stats(); st.Rejected != 1 {
		t.Errorf("stats %+v", st)
	}
}

func nullSecurity() zmq4.Security { return null.Security() }

// TestSlowSubscriberBackpressure: a subscriber that reads slowly but
// steadily makes Send wait instead of losing messages, and its queue
// stays near SoftQueueBytes. Without the wait the producer would be done
// at once and the 1 MiB queue would drop most of the 6 MiB sent.
func TestSlowSubscriberBackpressure(t *testing.T) {
	ctx := context.Background()
	const soft, hard, n, size = 256 << 10, 1 << 20, 200, 32 << 10
	// BackpressureWait longer than the hang guard: the reader is never
	// judged stalled, however long a busy machine keeps it from running,
	// so Send always waits for it and nothing may be dropped.
	p, err := ListenPub(ctx, "tcp://127.0.0.1:0", "pub", &Options{Logger: quiet(), SoftQueueBytes: soft, QueueBytes: hard, BackpressureWait: time.Hour})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close(0)
	conn, err := net.Dial("tcp", p.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	conn.(*net.TCPConn).SetReadBuffer(16 << 10)
	if _, err := zmq4.Open(conn, nullSecurity(), zmq4.Sub, nil, false, nil); err != nil {
		t.Fatal(err)
	}
	WriteMsg(conn, [][]byte{{1}})
	waitUntil(t, "the subscription", func() bool { return p.Subscribers("t") > 0 })
	got := make(chan int, 1)
	go func() {
		r := bufio.NewReaderSize(conn, 4096)
		count := 0
		for count < n {
			f, _, err := ReadMsg(r, 1<<20)
			if err != nil {
				break
			}
			if int(f[1][0]) != count%256 {
				break
			}
			count++
			time.Sleep(3 * time.Millisecond) // about 10 MB/s
		}
		got <- count
	}()
	start := time.Now()
	for i := range n {
		p.Send([][]byte{[]byte("t"), bytes.Repeat([]byte{byte(i)}, size)})
	}
	sendTime := time.Since(start)
	var count int
	select {
	case count = <-got:
	case <-time.After(hangGuard):
		t.Fatal("reader stuck")
	}
	st := p.Stats()
	t.Logf("sent in %v; received %d of %d in order; dropped %d; largest queue %d bytes", sendTime.Round(time.Millisecond), count, n, st.Dropped, st.MaxQueueBytes)
	if count != n || st.Dropped != 0 {
		t.Errorf("received %d of %d, dropped %d", count, n, st.Dropped)
	}
	if st.MaxQueueBytes > soft+2*size {
		t.Errorf("queue reached %d bytes, soft bound %d", st.MaxQueueBytes, soft)
	}
}

// TestPubHoldsForLateSubscriber: messages published before anyone subscribed
// reach the first subscriber (the slow-joiner gap of a fast kernel), in order,
// and only once: a later subscriber does not see them again.
func TestPubHoldsForLateSubscriber(t *testing.T) {
	ctx := context.Background()
	p, err := ListenPub(ctx, "tcp://127.0.0.1:0", "pub", &Options{Logger: quiet()})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close(0)
	p.holdFor = hangGuard // a busy machine may take long to connect the subscriber
	p.Send([][]byte{[]byte("kernel.status"), []byte("busy")})
	p.Send([][]byte{[]byte("kernel.status"), []byte("idle")})

	first := zmq4.NewSub(ctx, zmq4.WithLogger(quiet()))
	first.SetOption(zmq4.OptionSubscribe, "")
	dial(t, first, p.Addr())
	for _, want := range []string{"busy", "idle"} {
		if got := recvTimeout(t, first); string(got.Frames[1]) != want {
			t.Fatalf("first subscriber got %q, want %q", got.Frames[1], want)
		}
	}

	second := zmq4.NewSub(ctx, zmq4.WithLogger(quiet()))
	second.SetOption(zmq4.OptionSubscribe, "")
	dial(t, second, p.Addr())
	waitUntil(t, "the second subscription", func() bool { return p.Subscribers("kernel.status") == 2 })
	p.Send([][]byte{[]byte("kernel.status"), []byte("after")})
	if got := recvTimeout(t, second); string(got.Frames[1]) != "after" {
		t.Errorf("second subscriber got %q first, want only what came after it", got.Frames[1])
	}
	if got := recvTimeout(t, first); string(got.Frames[1]) != "after" {
		t.Errorf("first subscriber got %q", got.Frames[1])
	}
}
