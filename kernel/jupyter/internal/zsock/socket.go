package zsock

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"log"
	"net"
	"os"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/go-zeromq/zmq4"
	"github.com/go-zeromq/zmq4/security/null"
)

// Options bound what one peer can cost the socket. A zero field takes the
// default shown.
type Options struct {
	// Logger receives connection events and drops, at most 20 lines a
	// second per socket (a peer can cause them as fast as it connects);
	// nil discards them.
	Logger *log.Logger
	// HandshakeTimeout bounds the ZMTP greeting and handshake of a new
	// connection (default 5s). A connection that stays silent longer is
	// closed; it never delays other connections.
	HandshakeTimeout time.Duration
	// StallTimeout is how long a write to one peer may make no progress
	// before that peer is disconnected (default 30s).
	StallTimeout time.Duration
	// QueueMsgs and QueueBytes bound the messages waiting for one peer
	// (defaults 100000 messages and 64 MiB; each message counts
	// QueueOverhead bytes besides its own, so that a queue of tiny
	// messages is bounded by its memory too). When a new message does
	// not fit, that peer's oldest queued messages are dropped; other
	// peers are not affected.
	QueueMsgs  int
	QueueBytes int
	// SoftQueueBytes and BackpressureWait make a fast sender wait for a
	// slow reader instead of piling up messages for it: when a peer has
	// more than SoftQueueBytes queued (default 1 MiB), Send waits up to
	// BackpressureWait (default 1s) for it to fall below. A peer that has
	// written nothing for BackpressureWait counts as stalled and is never
	// waited for, so one stuck client costs the others at most one
	// BackpressureWait per stall.
	SoftQueueBytes   int
	BackpressureWait time.Duration
	// MaxMsgBytes bounds one incoming message, counting FrameOverhead
	// for each frame (default 64 MiB); a peer that sends more is
	// disconnected.
	MaxMsgBytes int64
	// MaxInBytes bounds the incoming bytes the socket holds at once over
	// all its peers: messages being read and messages read but not yet
	// handled (default twice MaxMsgBytes). A frame is counted before its
	// body is read. When a frame does not fit, the peer with the largest
	// unfinished message is disconnected to make room if that message is
	// larger than the one asking would become; otherwise the asking peer
	// waits up to StallTimeout for room and is then disconnected. So a
	// peer that starts a large message and never finishes it cannot
	// lock out the small messages of others, and memory stays bounded
	// whatever the number of peers.
	MaxInBytes int64
	// MaxPeers bounds the connections of the socket, those still in their
	// handshake included (default 256). A connection beyond it is closed
	// at once.
	MaxPeers int
}

func (o *Options) withDefaults() Options {
	var d Options
	if o != nil {
		d = *o
	}
	if d.Logger == nil {
		d.Logger = log.New(io.Discard, "", 0)
	}
	if d.HandshakeTimeout <= 0 {
		d.HandshakeTimeout = 5 * time.Second
	}
	if d.StallTimeout <= 0 {
		d.StallTimeout = 30 * time.Second
	}
	if d.QueueMsgs <= 0 {
		d.QueueMsgs = 100000
	}
	if d.QueueBytes <= 0 {
		d.QueueBytes = 64 << 20
	}
	if d.SoftQueueBytes <= 0 {
		d.SoftQueueBytes = 1 << 20
	}
	if d.BackpressureWait <= 0 {
		d.BackpressureWait = time.Second
	}
	if d.MaxMsgBytes <= 0 {
		d.MaxMsgBytes = 64 << 20
	}
	if d.MaxInBytes <= 0 {
		d.MaxInBytes = 2 * d.MaxMsgBytes
	}
	if d.MaxPeers <= 0 {
		d.MaxPeers = 256
	}
	return d
}

// Errors returned by Send.
var (
	ErrClosed      = errors.New("zsock: socket closed")
	ErrUnknownPeer = errors.New("zsock: no connected peer with that identity")
	ErrQueueFull   = errors.New("zsock: peer queue full, older messages dropped")
	// ErrEvicted and ErrNoRoom end a peer's connection when the socket's
	// incoming bytes reach MaxInBytes (see Options.MaxInBytes).
	ErrEvicted = errors.New("zsock: disconnected to make room for smaller messages of other peers")
	ErrNoRoom  = errors.New("zsock: no room for the message within MaxInBytes")
)

// Stats counts what a socket has done; all fields are totals since Listen.
type Stats struct {
	Accepted      uint64 // connections that completed the handshake
	Rejected      uint64 // connections closed during the handshake or over MaxPeers
	Dropped       uint64 // messages dropped for a full peer queue
	Disconnected  uint64 // peers dropped for a stalled write or bad input
	Peers         int    // peers connected now
	Pending       int64  // messages queued or being written now
	PendingBytes  int64  // bytes queued or being written now
	MaxQueueBytes int64  // most bytes ever queued for one peer
	Evicted       uint64 // peers dropped to keep incoming bytes within MaxInBytes
	InBytes       int64  // incoming bytes held now (see Options.MaxInBytes)
	MaxInBytes    int64  // most incoming bytes ever held at once
}

// kindHooks is what a socket type adds to the shared connection handling.
type kindHooks interface {
	attach(p *peer) bool // a peer finished its handshake
	// message hands over a message a peer sent; the hook calls m.done
	// once it no longer holds the message.
	message(p *peer, m inMsg)
	detach(p *peer) // a peer is gone
}

// inMsg is a received message and the bytes it is counted for against
// Options.MaxInBytes until done is called.
type inMsg struct {
	frames [][]byte
	isCmd  bool
	cost   int64
	b      *base
}

// done releases the message's count.
func (m inMsg) done() { m.b.release(m.cost) }

// base owns a listener and its peers. Every peer has one reader and one
// writer goroutine; nothing a peer does blocks another peer.
type base struct {
	typ   zmq4.SocketType
	id    string
	opts  Options
	log   *RateLog
	ln    net.Listener
	ep    string
	hooks kindHooks

	ctx    context.Context
	cancel context.CancelFunc
	wg     sync.WaitGroup

	mu    sync.Mutex
	peers map[*peer]struct{}

	pending      atomic.Int64
	pendingBytes atomic.Int64
	accepted     atomic.Uint64
	rejected     atomic.Uint64
	dropped      atomic.Uint64
	disconnected atomic.Uint64
	maxQueue     atomic.Int64
	evicted      atomic.Uint64
	conns        atomic.Int64 // connections open, handshakes included

	inMu    sync.Mutex
	inUsed  int64         // incoming bytes held (Options.MaxInBytes)
	inMax   int64         // most ever held
	inFreed chan struct{} // closed and replaced whenever inUsed falls

	closeOnce sync.Once
}

func listen(ctx context.Context, typ zmq4.SocketType, endpoint, id string, opts *Options, hooks kindHooks) (*base, error) {
	network, addr, err := splitEndpoint(endpoint)
	if err != nil {
		return nil, err
	}
	if network == "unix" {
		removeStaleSocket(addr)
	}
	ln, err := net.Listen(network, addr)
	if err != nil {
		return nil, fmt.Errorf("zsock: listen on %s: %w", endpoint, err)
	}
	o := opts.withDefaults()
	b := &base{
		typ:   typ,
		id:    id,
		opts:  o,
		log:   NewRateLog(o.Logger, 20),
		ln:    ln,
		ep:    endpoint,
		hooks: hooks,
		peers: make(map[*peer]struct{}),

		inFreed: make(chan struct{}),
	}
	b.ctx, b.cancel = context.WithCancel(ctx)
	return b, nil
}

// start begins accepting connections; the socket type's hooks must be
// ready by then.
func (b *base) start() {
	b.wg.Add(1)
	go b.acceptLoop()
	context.AfterFunc(b.ctx, func() { b.ln.Close() })
}

// splitEndpoint maps a ZeroMQ endpoint (tcp://host:port, ipc://path) to a
// Go network and address.
func splitEndpoint(ep string) (network, addr string, err error) {
	scheme, rest, ok := strings.Cut(ep, "://")
	if !ok {
		return "", "", fmt.Errorf("zsock: bad endpoint %q", ep)
	}
	switch scheme {
	case "tcp":
		host, port, err := net.SplitHostPort(rest)
		if err != nil {
			return "", "", fmt.Errorf("zsock: bad endpoint %q: %w", ep, err)
		}
		if host == "*" {
			host = ""
		}
		return "tcp", net.JoinHostPort(host, port), nil
	case "ipc":
		return "unix", rest, nil
	}
	return "", "", fmt.Errorf("zsock: unsupported transport %q", scheme)
}

// removeStaleSocket removes a Unix socket left behind by a dead process;
// it leaves any other kind of file alone, so Listen then fails loudly.
func removeStaleSocket(path string) {
	fi, err := os.Lstat(path)
	if err == nil && fi.Mode()&os.ModeSocket != 0 {
		os.Remove(path)
	}
}

// Addr is the address the socket listens on (with the real port when the
// endpoint asked for port 0).
func (b *base) Addr() net.Addr { return b.ln.Addr() }

func (b *base) acceptLoop() {
	defer b.wg.Done()
	delay := 5 * time.Millisecond
	for {
		conn, err := b.ln.Accept()
		if err != nil {
			if b.ctx.Err() != nil || errors.Is(err, net.ErrClosed) {
				return
			}
			// Out of descriptors or similar: back off, never spin.
			b.log.Printf("zsock %s: accept: %v", b.typ, err)
			select {
			case <-time.After(delay):
			case <-b.ctx.Done():
				return
			}
			delay = min(2*delay, time.Second)
			continue
		}
		delay = 5 * time.Millisecond
		if b.conns.Add(1) > int64(b.opts.MaxPeers) {
			b.conns.Add(-1)
			b.rejected.Add(1)
			conn.Close()
			continue
		}
		// The handshake runs on its own goroutine under a deadline, so a
		// connection that never speaks cannot hold up the next Accept.
		b.wg.Add(1)
		go b.handshake(conn)
	}
}

func (b *base) handshake(conn net.Conn) {
	defer b.wg.Done()
	stop := context.AfterFunc(b.ctx, func() { conn.SetDeadline(time.Now()) })
	defer stop()
	conn.SetDeadline(time.Now().Add(b.opts.HandshakeTimeout))
	br, identity, err := serverHandshake(conn, b.typ, b.id)
	if err != nil {
		b.conns.Add(-1)
		b.rejected.Add(1)
		// A peer that hangs up during the greeting (a client closing its
		// channels while it connects) is routine, not worth a log line.
		if b.ctx.Err() == nil && !errors.Is(err, io.EOF) && !errors.Is(err, io.ErrUnexpectedEOF) && !errors.Is(err, syscall.ECONNRESET) {
			b.log.Printf("zsock %s: handshake with %s failed: %v", b.typ, conn.RemoteAddr(), err)
		}
		conn.Close()
		return
	}
	conn.SetDeadline(time.Time{})
	if !stop() { // socket closing
		b.conns.Add(-1)
		conn.Close()
		return
	}
	p := &peer{
		b:        b,
		conn:     conn,
		r:        br,
		identity: identity,
		wake:     make(chan struct{}, 1),
		done:     make(chan struct{}),
	}
	b.mu.Lock()
	if b.ctx.Err() != nil {
		b.mu.Unlock()
		b.conns.Add(-1)
		conn.Close()
		return
	}
	b.peers[p] = struct{}{}
	b.mu.Unlock()
	if !b.hooks.attach(p) {
		p.close(errors.New("refused"))
		return
	}
	b.accepted.Add(1)
	b.wg.Add(2)
	go p.readLoop()
	go p.writeLoop()
}

// serverHandshake runs the ZMTP greeting and NULL handshake on a new
// connection (zmq4 does it, behind a guardConn that bounds what it
// reads) and returns the peer's buffered reader, to go on reading
// messages with, and its identity. zmq4 panics on some malformed
// handshakes (an unknown Socket-Type, a truncated metadata property); a
// bad peer must not take the process down, so the panic becomes an error.
func serverHandshake(conn net.Conn, typ zmq4.SocketType, id string) (r *bufio.Reader, identity []byte, err error) {
	defer func() {
		if v := recover(); v != nil {
			r, identity, err = nil, nil, fmt.Errorf("malformed handshake: %v", v)
		}
	}()
	// 4 KiB: a peer's reader buffers headers and small frames; large
	// bodies are read past it, straight into their own memory.
	r = bufio.NewReaderSize(conn, 4096)
	zc, err := zmq4.Open(newGuard(conn, r), null.Security(), typ, zmq4.SocketIdentity(id), true, nil)
	if err != nil {
		return nil, nil, err
	}
	return r, []byte(zc.Peer.Meta["Identity"]), nil
}

// Stats reports the socket's counters.
func (b *base) Stats() Stats {
	b.mu.Lock()
	n := len(b.peers)
	b.mu.Unlock()
	b.inMu.Lock()
	in, inMax := b.inUsed, b.inMax
	b.inMu.Unlock()
	return Stats{
		Accepted:      b.accepted.Load(),
		Rejected:      b.rejected.Load(),
		Dropped:       b.dropped.Load(),
		Disconnected:  b.disconnected.Load(),
		Peers:         n,
		Pending:       b.pending.Load(),
		PendingBytes:  b.pendingBytes.Load(),
		MaxQueueBytes: b.maxQueue.Load(),
		Evicted:       b.evicted.Load(),
		InBytes:       in,
		MaxInBytes:    inMax,
	}
}

// PeerStat describes one connected peer.
type PeerStat struct {
	Remote      string // the peer's address as the socket sees it
	Queued      int    // messages waiting to be written
	QueuedBytes int    // their size, with the one being written
	Dropped     uint64 // messages dropped for this peer in all
}

// PeerStats lists the connected peers.
func (b *base) PeerStats() []PeerStat {
	b.mu.Lock()
	peers := make([]*peer, 0, len(b.peers))
	for p := range b.peers {
		peers = append(peers, p)
	}
	b.mu.Unlock()
	out := make([]PeerStat, 0, len(peers))
	for _, p := range peers {
		p.mu.Lock()
		out = append(out, PeerStat{p.conn.RemoteAddr().String(), len(p.queue), p.qbytes, p.dropped})
		p.mu.Unlock()
	}
	return out
}

// Flush waits until every peer's queued messages have been handed to the
// operating system, or the peer has stalled (written nothing for
// BackpressureWait), or the timeout passes; it reports whether every
// queue emptied. A stuck peer thus delays a flush by one BackpressureWait
// at most, while a peer that is reading gets the whole timeout.
func (b *base) Flush(timeout time.Duration) bool {
	deadline := time.Now().Add(timeout)
	for {
		drained, waiting := b.queueStates()
		if waiting == 0 || time.Now().After(deadline) {
			return drained
		}
		time.Sleep(2 * time.Millisecond)
	}
}

// queueStates reports whether every peer's queue is empty, and how many
// peers still have queued messages and are writing them.
func (b *base) queueStates() (drained bool, waiting int) {
	b.mu.Lock()
	defer b.mu.Unlock()
	drained = true
	for p := range b.peers {
		if p.queued() == 0 {
			continue
		}
		drained = false
		if !p.stalled() {
			waiting++
		}
	}
	return drained, waiting
}

func (p *peer) queued() int {
	p.mu.Lock()
	defer p.mu.Unlock()
	return p.qbytes
}

// stalled reports whether the peer has made no write progress for
// BackpressureWait.
func (p *peer) stalled() bool {
	return time.Since(time.Unix(0, p.lastWrite.Load())) > p.b.opts.BackpressureWait
}

// Close flushes for at most linger, half-closes every connection so the
// peers read everything up to the end of the stream, waits up to linger
// again for the peers that were sent everything to hang up, then closes
// everything and waits for the socket's goroutines. Unread data would
// turn the close into a reset that can destroy the last messages
// (measured: the final idle went missing), which is why the socket does
// not simply close at once. A stalled peer is not waited for (see Flush).
func (b *base) Close(linger time.Duration) error {
	b.closeOnce.Do(func() {
		b.ln.Close()
		if linger > 0 {
			b.Flush(linger)
			b.mu.Lock()
			peers := make([]*peer, 0, len(b.peers))
			for p := range b.peers {
				peers = append(peers, p)
			}
			b.mu.Unlock()
			for _, p := range peers {
				if cw, ok := p.conn.(interface{ CloseWrite() error }); ok {
					cw.CloseWrite()
				}
			}
			deadline := time.After(linger)
		wait:
			for _, p := range peers {
				if p.queued() > 0 {
					continue // stalled: it would not read to the end
				}
				select {
				case <-p.done:
				case <-deadline:
					break wait
				}
			}
		}
		b.cancel()
		b.mu.Lock()
		peers := make([]*peer, 0, len(b.peers))
		for p := range b.peers {
			peers = append(peers, p)
		}
		b.mu.Unlock()
		for _, p := range peers {
			p.close(ErrClosed)
		}
		b.wg.Wait()
		if strings.HasPrefix(b.ep, "ipc://") {
			os.Remove(strings.TrimPrefix(b.ep, "ipc://"))
		}
	})
	return nil
}

// peer is one accepted connection.
type peer struct {
	b        *base
	conn     net.Conn
	r        *bufio.Reader
	identity []byte // from the peer's handshake; may be empty
	route    string // routing identity (ROUTER)

	mu       sync.Mutex
	queue    []item
	qbytes   int
	closed   bool
	dropping uint64 // messages dropped in the current overflow episode
	dropped  uint64 // messages dropped in all
	topics   map[string]int
	progress chan struct{} // closed and replaced after every write

	lastWrite atomic.Int64 // UnixNano of the last write progress

	// Guarded by b.inMu: bytes counted for the message being read, and
	// whether the peer was chosen to make room (Options.MaxInBytes).
	inHeld  int64
	evicted bool

	wake chan struct{}
	done chan struct{}
}

type item struct {
	segs net.Buffers
	size int
}

// QueueOverhead is what a queued message costs besides its bytes on the
// wire: the queue entry, its list of segments and the encoded headers,
// rounded up.
const QueueOverhead = 128

// enqueue hands a message to the peer's writer; it never blocks. When the
// queue is over its bounds the oldest queued messages are dropped to make
// room: a client that falls behind loses old output but still sees the
// latest state (the final idle, the last reply). A single message larger
// than QueueBytes is still accepted when it is alone in the queue.
func (p *peer) enqueue(segs net.Buffers, size int) error {
	p.mu.Lock()
	if p.closed {
		p.mu.Unlock()
		return ErrClosed
	}
	o := &p.b.opts
	var dropped, droppedBytes int
	for len(p.queue) > 0 && (len(p.queue) >= o.QueueMsgs || p.qbytes+size+(len(p.queue)+1)*QueueOverhead > o.QueueBytes) {
		old := p.queue[0]
		p.queue[0] = item{}
		p.queue = p.queue[1:]
		p.qbytes -= old.size
		dropped++
		droppedBytes += old.size
	}
	if dropped > 0 {
		p.dropping += uint64(dropped)
		p.dropped += uint64(dropped)
		if p.dropping == uint64(dropped) {
			p.b.log.Printf("zsock %s: peer %s is not keeping up; dropping its oldest messages (queue limit %d msgs, %d bytes)",
				p.b.typ, p.conn.RemoteAddr(), o.QueueMsgs, o.QueueBytes)
		}
	} else if p.dropping > 0 && len(p.queue) == 0 {
		p.b.log.Printf("zsock %s: peer %s caught up after %d dropped messages",
			p.b.typ, p.conn.RemoteAddr(), p.dropping)
		p.dropping = 0
	}
	if p.qbytes == 0 {
		// An idle peer is not a stalled one: its clock starts now, not
		// at its last write, however long ago that was.
		p.lastWrite.Store(time.Now().UnixNano())
	}
	p.queue = append(p.queue, item{segs, size})
	p.qbytes += size
	for q := int64(p.qbytes); ; {
		m := p.b.maxQueue.Load()
		if q <= m || p.b.maxQueue.CompareAndSwap(m, q) {
			break
		}
	}
	p.mu.Unlock()
	p.b.pending.Add(int64(1 - dropped))
	p.b.pendingBytes.Add(int64(size - droppedBytes))
	p.b.dropped.Add(uint64(dropped))
	select {
	case p.wake <- struct{}{}:
	default:
	}
	if dropped > 0 {
		return ErrQueueFull
	}
	return nil
}

// throttle waits while the peer has more than SoftQueueBytes queued and
// keeps writing, for at most BackpressureWait. It returns at once for a
// stalled peer (no write progress for BackpressureWait).
func (p *peer) throttle() {
	o := &p.b.opts
	deadline := time.Now().Add(o.BackpressureWait)
	for {
		p.mu.Lock()
		if p.closed || p.qbytes <= o.SoftQueueBytes {
			p.mu.Unlock()
			return
		}
		if p.progress == nil {
			p.progress = make(chan struct{})
		}
		ch := p.progress
		p.mu.Unlock()
		now := time.Now()
		if now.After(deadline) || now.Sub(time.Unix(0, p.lastWrite.Load())) > o.BackpressureWait {
			return
		}
		t := time.NewTimer(min(deadline.Sub(now), 50*time.Millisecond))
		select {
		case <-ch:
		case <-t.C:
		case <-p.done:
		case <-p.b.ctx.Done():
		}
		t.Stop()
	}
}

func (p *peer) next() (item, bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if len(p.queue) == 0 || p.closed {
		return item{}, false
	}
	it := p.queue[0]
	p.queue[0] = item{}
	p.queue = p.queue[1:]
	return it, true
}

func (p *peer) sent(size int) {
	p.lastWrite.Store(time.Now().UnixNano())
	p.mu.Lock()
	p.qbytes -= size
	if p.progress != nil {
		close(p.progress)
		p.progress = nil
	}
	p.mu.Unlock()
	p.b.pending.Add(-1)
	p.b.pendingBytes.Add(-int64(size))
}

func (p *peer) writeLoop() {
	defer p.b.wg.Done()
	for {
		select {
		case <-p.wake:
		case <-p.done:
			return
		}
		// Coming out of idle counts as progress: the peer is not stalled
		// until a write has been stuck for a while.
		p.lastWrite.Store(time.Now().UnixNano())
		for {
			it, ok := p.next()
			if !ok {
				break
			}
			err := p.write(it.segs)
			p.sent(it.size)
			if err != nil {
				if !isDisconnect(err) {
					p.b.disconnected.Add(1)
				}
				p.close(err)
				return
			}
		}
	}
}

// write sends one message. The write is done in steps of at most half a
// BackpressureWait so that progress is seen while it happens: a slow peer
// that keeps reading is never cut off, and a peer that makes no progress
// for StallTimeout is dropped without delaying anyone else.
func (p *peer) write(segs net.Buffers) error {
	o := &p.b.opts
	step := max(min(o.StallTimeout, o.BackpressureWait/2), time.Millisecond)
	segs = append(net.Buffers(nil), segs...) // WriteTo consumes its receiver
	last := time.Now()
	for len(segs) > 0 {
		p.conn.SetWriteDeadline(time.Now().Add(step))
		n, err := segs.WriteTo(p.conn)
		if n > 0 {
			last = time.Now()
			p.lastWrite.Store(last.UnixNano())
		}
		if err == nil {
			return nil
		}
		var ne net.Error
		if !errors.As(err, &ne) || !ne.Timeout() {
			return err
		}
		if time.Since(last) >= o.StallTimeout {
			return fmt.Errorf("peer stalled for %v", o.StallTimeout)
		}
	}
	return nil
}

func (p *peer) readLoop() {
	defer p.b.wg.Done()
	charge := func(n int64) error { return p.b.charge(p, n) }
	for {
		frames, isCmd, err := readMsg(p.r, p.b.opts.MaxMsgBytes, charge)
		cost := p.b.takeHeld(p)
		if err != nil {
			p.b.release(cost)
			if !isDisconnect(err) && err != ErrEvicted {
				p.b.disconnected.Add(1)
			}
			p.close(err)
			return
		}
		p.b.hooks.message(p, inMsg{frames, isCmd, cost, p.b})
	}
}

// charge counts n more incoming bytes for p's message against
// MaxInBytes, making room as Options.MaxInBytes describes.
func (b *base) charge(p *peer, n int64) error {
	var deadline time.Time
	for {
		b.inMu.Lock()
		if p.evicted {
			b.inMu.Unlock()
			return ErrEvicted
		}
		if b.inUsed+n <= b.opts.MaxInBytes {
			b.inUsed += n
			p.inHeld += n
			b.inMax = max(b.inMax, b.inUsed)
			b.inMu.Unlock()
			return nil
		}
		b.inMu.Unlock()

		// No room: the slow path.
		if deadline.IsZero() {
			deadline = time.Now().Add(b.opts.StallTimeout)
		}
		b.mu.Lock()
		peers := make([]*peer, 0, len(b.peers))
		for q := range b.peers {
			peers = append(peers, q)
		}
		b.mu.Unlock()
		b.inMu.Lock()
		if b.inUsed+n <= b.opts.MaxInBytes {
			b.inMu.Unlock()
			continue // room was made meanwhile
		}
		var victim *peer
		for _, q := range peers {
			if q != p && !q.evicted && q.inHeld > p.inHeld+n && (victim == nil || q.inHeld > victim.inHeld) {
				victim = q
			}
		}
		if victim != nil {
			victim.evicted = true
		}
		freed := b.inFreed
		b.inMu.Unlock()

		if victim != nil {
			b.evicted.Add(1)
			b.log.Printf("zsock %s: incoming bytes at the limit of %d: dropping peer %s, which holds the largest unfinished message",
				b.typ, b.opts.MaxInBytes, victim.conn.RemoteAddr())
			victim.close(ErrEvicted)
		}
		// Wait for room: the victim's reader, or a handler done with a
		// message, gives bytes back.
		wait := time.Until(deadline)
		if wait <= 0 {
			return ErrNoRoom
		}
		t := time.NewTimer(wait)
		select {
		case <-freed:
		case <-t.C:
		case <-p.done:
			t.Stop()
			return ErrClosed
		case <-b.ctx.Done():
			t.Stop()
			return ErrClosed
		}
		t.Stop()
	}
}

// takeHeld ends the count of p's unfinished message and returns it; the
// bytes stay counted until released.
func (b *base) takeHeld(p *peer) int64 {
	b.inMu.Lock()
	defer b.inMu.Unlock()
	n := p.inHeld
	p.inHeld = 0
	return n
}

// release gives back n incoming bytes.
func (b *base) release(n int64) {
	if n == 0 {
		return
	}
	b.inMu.Lock()
	b.inUsed -= n
	close(b.inFreed)
	b.inFreed = make(chan struct{})
	b.inMu.Unlock()
}

// isDisconnect reports whether err is just the peer going away (or the
// socket closing) rather than a misbehaving peer.
func isDisconnect(err error) bool {
	var op *net.OpError
	return errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) ||
		errors.Is(err, net.ErrClosed) || errors.Is(err, ErrClosed) || errors.As(err, &op)
}

// close drops the peer: its queue is discarded and its connection closed.
func (p *peer) close(why error) {
	p.mu.Lock()
	if p.closed {
		p.mu.Unlock()
		return
	}
	p.closed = true
	n := len(p.queue)
	var bytes int
	for _, it := range p.queue {
		bytes += it.size
	}
	p.queue = nil
	p.qbytes -= bytes
	p.mu.Unlock()
	p.b.pending.Add(-int64(n))
	p.b.pendingBytes.Add(-int64(bytes))
	close(p.done)
	p.conn.Close()
	p.b.mu.Lock()
	delete(p.b.peers, p)
	p.b.mu.Unlock()
	p.b.conns.Add(-1)
	p.b.hooks.detach(p)
	if !isDisconnect(why) {
		p.b.log.Printf("zsock %s: dropped peer %s: %v", p.b.typ, p.conn.RemoteAddr(), why)
	}
}
