package zsock

import (
	"context"

	"github.com/go-zeromq/zmq4"
)

// Echo answers every message with the same frames on the same connection,
// which is what a Jupyter heartbeat needs. It announces itself as a REP
// socket, so REQ and DEALER peers may connect; a REQ peer's empty
// delimiter frame is echoed with the rest. Peers are independent: one that
// stops reading fills its own queue and is eventually dropped.
type Echo struct {
	*base
}

// ListenEcho binds an echo socket to endpoint.
func ListenEcho(ctx context.Context, endpoint, id string, opts *Options) (*Echo, error) {
	e := &Echo{}
	b, err := listen(ctx, zmq4.Rep, endpoint, id, opts, e)
	if err != nil {
		return nil, err
	}
	e.base = b
	b.start()
	return e, nil
}

func (*Echo) attach(*peer) bool { return true }
func (*Echo) detach(*peer)      {}

func (*Echo) message(p *peer, m inMsg) {
	defer m.done()
	if m.isCmd {
		return
	}
	// The echo is counted in the peer's send queue from here on.
	segs, size := Encode(m.frames)
	p.enqueue(segs, size)
}
