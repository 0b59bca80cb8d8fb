package zsock

import (
	"context"
	"encoding/binary"
	"sync"

	"github.com/go-zeromq/zmq4"
)

// Router is a ZeroMQ ROUTER socket: every received message starts with the
// routing identity of the peer that sent it, and Send routes a message by
// its first frame. A peer that announces an identity already connected
// gets a routing identity of its own, as a peer without one does: it
// cannot take over the route of the peer already there (a client's
// identity is no secret; Jupyter clients use their session id, which
// every iopub message carries), and a client that reconnects while its
// old connection lingers gets its replies on the new one all the same. Each peer has its own bounded queue and writer: Send
// waits a little for a slow peer that keeps reading (see
// Options.SoftQueueBytes) and not at all for one that stopped, which
// loses its own oldest replies instead (counted and logged).
type Router struct {
	*base
	mu   sync.RWMutex
	byID map[string]*peer
	seq  uint32
	in   chan inMsg
}

// ListenRouter binds a ROUTER socket to endpoint (tcp://host:port or
// ipc://path). id is the identity announced in the handshake.
func ListenRouter(ctx context.Context, endpoint, id string, opts *Options) (*Router, error) {
	r := &Router{byID: make(map[string]*peer), in: make(chan inMsg, 64)}
	b, err := listen(ctx, zmq4.Router, endpoint, id, opts, r)
	if err != nil {
		return nil, err
	}
	r.base = b
	b.start()
	return r, nil
}

func (r *Router) attach(p *peer) bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	p.mu.Lock()
	closed := p.closed
	p.mu.Unlock()
	if closed {
		return false
	}
	id := string(p.identity)
	if r.byID[id] != nil {
		r.log.Printf("zsock ROUTER: identity %q is already connected; the new connection from %s gets a route of its own",
			id, p.conn.RemoteAddr())
	}
	if id == "" || id[0] == 0 || r.byID[id] != nil {
		// No identity of its own, or one in use: make one up as libzmq
		// does, a zero byte and a counter, which no peer may choose.
		r.seq++
		var b [5]byte
		binary.BigEndian.PutUint32(b[1:], r.seq)
		id = string(b[:])
	}
	p.route = id
	r.byID[id] = p
	return true
}

func (r *Router) detach(p *peer) {
	r.mu.Lock()
	if r.byID[p.route] == p {
		delete(r.byID, p.route)
	}
	r.mu.Unlock()
}

// message queues a peer's message for Recv, the sender's identity in
// front. The message stays counted against MaxInBytes until Recv hands
// it over.
func (r *Router) message(p *peer, m inMsg) {
	if m.isCmd {
		m.done() // PING and the like are ZMTP 3.1; a 3.0 peer sends none.
		return
	}
	msg := make([][]byte, 0, len(m.frames)+1)
	msg = append(msg, []byte(p.route))
	m.frames = append(msg, m.frames...)
	select {
	case r.in <- m:
	case <-p.done:
		m.done()
	case <-r.ctx.Done():
		m.done()
	}
}

// Recv returns the next message, its first frame the sender's identity.
// One goroutine should own Recv.
func (r *Router) Recv(ctx context.Context) ([][]byte, error) {
	select {
	case m := <-r.in:
		m.done()
		return m.frames, nil
	case <-ctx.Done():
		return nil, ctx.Err()
	case <-r.ctx.Done():
		return nil, ErrClosed
	}
}

// Send queues frames[1:] for the peer whose identity is frames[0]. It
// returns ErrUnknownPeer when no such peer is connected (ZeroMQ drops such
// a message silently; the caller should log it) and ErrQueueFull when
// older messages were dropped to make room. It may wait up to
// Options.BackpressureWait for a slow peer. The frames must not be
// modified afterwards.
func (r *Router) Send(frames [][]byte) error {
	if len(frames) < 2 {
		return ErrUnknownPeer
	}
	r.mu.RLock()
	p := r.byID[string(frames[0])]
	r.mu.RUnlock()
	if p == nil {
		return ErrUnknownPeer
	}
	segs, size := Encode(frames[1:])
	err := p.enqueue(segs, size)
	p.throttle()
	return err
}
