package jupyter

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"net"
	"os"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/go-zeromq/zmq4"
)

// The hostile-traffic test runs the kernel in a child process under a
// memory ceiling, so that a regression (an allocation of the size a
// frame announces, a list of frames that never ends) fails the test
// instead of taking the machine down:
//
//   - the child limits its own address space (RLIMIT_AS) to what it has
//     mapped at start plus four times the ceiling (Go keeps freed heap
//     mapped, so address space runs ahead of resident memory): an
//     allocation past it, such as one of the size a frame announces,
//     fails inside the child, fatally, and the test sees the child die;
//   - GOMEMLIMIT makes the child's garbage collector work to stay well
//     below the ceiling;
//   - the parent polls the child's resident memory and kills it past the
//     ceiling, and at the end reads the child's peak (VmHWM).
//
// All of this works unprivileged on Linux (no cgroup needed). Under the
// race detector the child's memory is several times larger (shadow
// memory), so the ceiling is scaled.

// hostileCeiling is the most memory the kernel may use while it is fed
// hostile input: about 10 times its resident size at rest.
func hostileCeiling() int64 {
	if raceEnabled {
		return 640 << 20
	}
	return 384 << 20
}

// limitAddressSpace sets RLIMIT_AS to the address space mapped now plus
// margin bytes (a decimal string).
func limitAddressSpace(margin string) error {
	c, err := strconv.ParseInt(margin, 10, 64)
	if err != nil {
		return fmt.Errorf("NUDGE_JUPYTER_ADDRESS_SPACE: %v", err)
	}
	vm := procStatusKB(os.Getpid(), "VmSize:")
	if vm == 0 {
		return nil // no /proc: only GOMEMLIMIT and the parent's watch apply
	}
	lim := uint64(vm)<<10 + uint64(c)
	return syscall.Setrlimit(syscall.RLIMIT_AS, &syscall.Rlimit{Cur: lim, Max: lim})
}

// procStatusKB reads a field in kB from /proc/PID/status (0 if absent).
func procStatusKB(pid int, field string) int64 {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, field); ok {
			kb, _ := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "kB")), 10, 64)
			return kb
		}
	}
	return 0
}

// memoryWatch polls a process's resident memory and kills it past the
// ceiling.
type memoryWatch struct {
	pid     int
	ceiling int64
	stop    chan struct{}
	done    chan struct{}

	mu     sync.Mutex
	killed int64 // RSS in bytes when it was killed, or 0
}

func watchMemory(t *testing.T, pid int, ceiling int64) *memoryWatch {
	w := &memoryWatch{pid: pid, ceiling: ceiling, stop: make(chan struct{}), done: make(chan struct{})}
	go func() {
		defer close(w.done)
		tick := time.NewTicker(5 * time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-w.stop:
				return
			case <-tick.C:
			}
			if rss := procStatusKB(pid, "VmRSS:") << 10; rss > ceiling {
				syscall.Kill(pid, syscall.SIGKILL)
				w.mu.Lock()
				w.killed = rss
				w.mu.Unlock()
				return
			}
		}
	}()
	t.Cleanup(func() {
		w.end()
		// Whatever step failed, say so if this is why.
		if w.killed > 0 {
			t.Errorf("the kernel passed its memory ceiling (%d MB resident, ceiling %d MB) and was killed", w.killed>>20, ceiling>>20)
		}
	})
	return w
}

func (w *memoryWatch) end() {
	select {
	case <-w.stop:
	default:
		close(w.stop)
	}
	<-w.done
}

// check fails the test if the process was killed or its peak resident
// memory passed the ceiling.
func (w *memoryWatch) check(t *testing.T) {
	t.Helper()
	peak := procStatusKB(w.pid, "VmHWM:") << 10
	w.mu.Lock()
	killed := w.killed
	w.mu.Unlock()
	if killed > 0 {
		t.FailNow() // the cleanup says why
	}
	t.Logf("kernel peak resident memory %.1f MB (ceiling %d MB)", float64(peak)/(1<<20), w.ceiling>>20)
	if peak > w.ceiling {
		t.Errorf("peak resident memory %d MB, ceiling %d MB", peak>>20, w.ceiling>>20)
	}
}

// alive fails the test if the kernel process has exited.
func alive(t *testing.T, tk *testKernel, what string) {
	t.Helper()
	select {
	case err := <-tk.done:
		t.Fatalf("the kernel died after %s: %v", what, err)
	default:
	}
}

// hostileConn opens a TCP connection to a port of the kernel.
func hostileConn(t *testing.T, tk *testKernel, port int) net.Conn {
	t.Helper()
	conn, err := net.Dial("tcp", net.JoinHostPort("127.0.0.1", strconv.Itoa(port)))
	if err != nil {
		alive(t, tk, "the last hostile input")
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	return conn
}

// zmtpGreeting is a ZMTP 3.0 client greeting for the NULL mechanism (RFC
// 23/ZMTP: FF, 8 padding bytes, 7F, version 3.0, "NULL" padded to 20
// bytes, as-server 0, 31 bytes of filler).
func zmtpGreeting() []byte {
	g := make([]byte, 64)
	g[0], g[9], g[10] = 0xff, 0x7f, 3
	copy(g[12:], "NULL")
	return g
}

// longFrameHeader is the header of a frame with the LONG flag announcing
// size bytes (RFC 23/ZMTP, "Framing").
func longFrameHeader(flags byte, size uint64) []byte {
	return binary.BigEndian.AppendUint64([]byte{flags | 0x02}, size)
}

// TestHostileTraffic feeds a kernel in its own process, under a memory
// ceiling, the traffic of issue 8 and more, all before any key is
// checked: frames announcing 2^36 to 2^40 bytes in the handshake and
// after it, streams of empty frames, bad greetings, peers that start huge
// messages and stall, hundreds of connections, cells far larger than the
// history keeps and a pathological history search. The kernel must live,
// stay under the ceiling, and still serve a client.
func TestHostileTraffic(t *testing.T) {
	ceiling := hostileCeiling()
	tk, pid := startProcess(t, "NUDGE_JUPYTER_ADDRESS_SPACE="+strconv.FormatInt(4*ceiling, 10),
		"GOMEMLIMIT="+strconv.FormatInt(ceiling/3, 10))
	watch := watchMemory(t, pid, ceiling)
	c := connect(t, tk)
	ports := map[string]int{"shell": tk.ci.ShellPort, "iopub": tk.ci.IOPubPort, "stdin": tk.ci.StdinPort,
		"control": tk.ci.ControlPort, "hb": tk.ci.HBPort}

	// 1. The handshake: huge announced command frames, MORE, a frame
	// that is not a command, bad greetings. Every one is refused and the
	// connection closed.
	handshakes := map[string][]byte{
		"2^36 command": longFrameHeader(0x04, 1<<36),
		"2^38 command": longFrameHeader(0x04, 1<<38),
		"2^40 command": longFrameHeader(0x04, 1<<40),
		"2^63 command": longFrameHeader(0x04, 1<<63),
		"MORE command": longFrameHeader(0x05, 1<<20),
		"message":      longFrameHeader(0x01, 1<<30),
	}
	for name, port := range ports {
		for what, frame := range handshakes {
			conn := hostileConn(t, tk, port)
			conn.Write(append(zmtpGreeting(), frame...))
			if err := drainUntilClosed(conn); err != nil {
				t.Fatalf("%s, %s: %v", name, what, err)
			}
		}
		for what, greeting := range map[string][]byte{
			"PLAIN mechanism": append(append(zmtpGreeting()[:12], "PLAIN"...), make([]byte, 47)...),
			"CURVE mechanism": append(append(zmtpGreeting()[:12], "CURVE"...), make([]byte, 47)...),
			"20-byte name":    append(append(zmtpGreeting()[:12], "NULLNULLNULLNULLNULL"...), make([]byte, 32)...),
			"version 1":       {0x01, 0x00, 'x'},
			"no signature":    bytes.Repeat([]byte{0x7f}, 64),
			"truncated":       zmtpGreeting()[:33],
		} {
			conn := hostileConn(t, tk, port)
			conn.Write(greeting)
			// The end of the stream right after: a greeting the kernel
			// waits on to be complete ends now, not at its timeout.
			conn.(*net.TCPConn).CloseWrite()
			if err := drainUntilClosed(conn); err != nil {
				t.Fatalf("%s, %s: %v", name, what, err)
			}
		}
	}
	alive(t, tk, "hostile handshakes")

	// 2. After the handshake: a frame announcing 2^40 bytes, and a stream
	// of empty frames with MORE (two bytes each on the wire).
	for name, port := range ports {
		typ := map[string]zmq4.SocketType{"iopub": zmq4.Sub, "hb": zmq4.Req}[name]
		if typ == "" {
			typ = zmq4.Dealer
		}
		p := dialRaw(t, tk.ci.Endpoint(port), typ, "", 0)
		p.conn.Write(longFrameHeader(0x01, 1<<40))
		if err := drainUntilClosed(p.conn); err != nil {
			t.Fatalf("%s, 2^40 frame: %v", name, err)
		}
		p = dialRaw(t, tk.ci.Endpoint(port), typ, "", 0)
		empty := bytes.Repeat([]byte{0x01, 0x00}, 32<<10)
		sent := 0
		for sent < 64<<20 { // far past any limit; the kernel hangs up first
			n, err := p.conn.Write(empty)
			sent += n
			if err != nil {
				break
			}
		}
		if sent >= 64<<20 {
			t.Errorf("%s: %d MB of empty frames accepted", name, sent>>20)
		}
		drainUntilClosed(p.conn)
	}
	alive(t, tk, "huge frames and empty-frame floods")
	watch.check(t)

	// 3. Peers that start messages as large as the limit allows, send a
	// little of them and stall, from many connections at once; then a
	// client's small request still gets through.
	var stallers []net.Conn
	var writers sync.WaitGroup
	for range 40 {
		p := dialRaw(t, tk.ci.Endpoint(tk.ci.ShellPort), zmq4.Dealer, "", 0)
		stallers = append(stallers, p.conn)
		writers.Add(1)
		go func() {
			defer writers.Done()
			// Blocks once the kernel stops reading; ends when closed.
			p.conn.Write(append(longFrameHeader(0x01, 60<<20), make([]byte, 1<<20)...))
		}()
	}
	if r, _ := c.execute("result through", nil); r.str("status") != "ok" {
		t.Fatalf("execute behind stalled peers: %v", r.content)
	}
	for _, s := range stallers {
		s.Close()
	}
	writers.Wait()
	alive(t, tk, "stalled large messages")

	// 4. Heartbeat peers that send pings and never read the echoes, and
	// subscribers that ask for thousands of long topics.
	var flooders []net.Conn
	for range 50 {
		p := dialRaw(t, tk.ci.Endpoint(tk.ci.HBPort), zmq4.Req, "", 4096)
		flooders = append(flooders, p.conn)
		writers.Add(1)
		go func() {
			defer writers.Done()
			pings := bytes.Repeat([]byte{0x00, 0x00}, 32<<10)
			for range 64 { // 2 MiB of pings, 64 Ki echoes to queue
				if _, err := p.conn.Write(pings); err != nil {
					return
				}
			}
		}()
	}
	for range 20 {
		p := dialRaw(t, tk.ci.Endpoint(tk.ci.IOPubPort), zmq4.Sub, "", 0)
		flooders = append(flooders, p.conn)
		for i := range 2000 {
			topic := append([]byte{1}, fmt.Sprintf("%0255d", i)...)
			if p.write(topic) != nil {
				break
			}
		}
	}
	if r, _ := c.execute("result still", nil); r.str("status") != "ok" {
		t.Fatalf("execute during floods: %v", r.content)
	}
	watch.check(t)
	for _, f := range flooders {
		f.Close()
	}
	writers.Wait()
	alive(t, tk, "ping and subscription floods")

	if raceEnabled {
		// Under the race detector, megabytes of JSON take long and its
		// shadow memory swamps the measure; the history bound has its own
		// test (TestHistoryBounds).
		watch.check(t)
		return
	}

	// 5. Many connections: more than a channel accepts, on every port (the
	// kernel may take a moment to see them closed: later steps use only
	// connections made before).
	for _, port := range ports {
		var conns []net.Conn
		for range 300 {
			conn, err := net.Dial("tcp", net.JoinHostPort("127.0.0.1", strconv.Itoa(port)))
			if err != nil {
				break // out of descriptors on this side: enough
			}
			conns = append(conns, conn)
		}
		for _, conn := range conns {
			conn.Close()
		}
	}
	alive(t, tk, "hundreds of connections")

	// 6. Cells far larger than the history keeps (20 of 3 MiB and two of
	// 5 MiB, against a bound of 32 MiB and 4 MiB per cell), then the
	// search that took tens of seconds with a backtracking glob.
	for i := range 22 {
		size := 3 << 20
		if i >= 20 {
			size = 5 << 20
		}
		r, _ := c.execute("print "+strings.Repeat("a", size), map[string]any{"silent": false})
		if r.str("status") != "ok" {
			t.Fatalf("large cell %d: %v", i, r.content)
		}
	}
	id := c.send(c.shell, "history_request", map[string]any{"hist_access_type": "search", "raw": true, "output": false,
		"pattern": "*" + strings.Repeat("a", 200) + "b"})
	if r := c.reply(c.shell, id); r.str("status") != "ok" || len(r.content["history"].([]any)) != 0 {
		t.Errorf("pathological search: %v", r.content["status"])
	}
	id = c.send(c.shell, "history_request", map[string]any{"hist_access_type": "tail", "n": 100, "raw": true, "output": false})
	r := c.reply(c.shell, id)
	var kept int
	for _, e := range r.content["history"].([]any) {
		kept += len(e.([]any)[2].(string))
	}
	if kept > maxHistoryBytes {
		t.Errorf("history holds %d bytes, bound %d", kept, maxHistoryBytes)
	}
	alive(t, tk, "large cells")

	// The kernel lives, serves, and stayed under its ceiling.
	if r, _ := c.execute("result alive", nil); r.str("status") != "ok" {
		t.Fatalf("after hostile traffic: %v", r.content)
	}
	watch.check(t)
	id = c.send(c.control, "shutdown_request", map[string]any{"restart": false})
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
