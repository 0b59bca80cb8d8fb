package zsock

import (
	"context"
	"strings"

	"github.com/go-zeromq/zmq4"
)

// Pub is a ZeroMQ PUB socket. Send encodes a message once and queues it
// for every subscribed peer; each peer has its own bounded queue and
// writer, so a subscriber that stops reading loses its own oldest
// messages and never stalls the others, and memory stays bounded by the
// queue limits. A subscriber that reads slowly slows the sender down
// (Options.SoftQueueBytes) rather than losing messages.
// A subscriber that connects later (or reconnects) receives everything
// published after its subscription arrives.
type Pub struct {
	*base
}

// ListenPub binds a PUB socket to endpoint.
func ListenPub(ctx context.Context, endpoint, id string, opts *Options) (*Pub, error) {
	p := &Pub{}
	b, err := listen(ctx, zmq4.Pub, endpoint, id, opts, p)
	if err != nil {
		return nil, err
	}
	p.base = b
	b.start()
	return p, nil
}

func (*Pub) attach(p *peer) bool {
	p.mu.Lock()
	p.topics = make(map[string]int)
	p.mu.Unlock()
	return true
}

func (*Pub) detach(*peer) {}

// message handles subscriptions: in ZMTP 3.0 a message of one frame whose
// first byte is 1 (subscribe) or 0 (unsubscribe) followed by the topic
// prefix; in ZMTP 3.1 the SUBSCRIBE and CANCEL commands. Anything else a
// subscriber sends is ignored.
func (*Pub) message(p *peer, frames [][]byte, isCmd bool) {
	var sub bool
	var topic []byte
	switch {
	case isCmd:
		name, data, ok := ParseCommand(frames[0])
		if !ok {
			return
		}
		switch name {
		case "SUBSCRIBE":
			sub = true
		case "CANCEL":
		default:
			return
		}
		topic = data
	case len(frames) == 1 && len(frames[0]) > 0 && frames[0][0] <= 1:
		sub = frames[0][0] == 1
		topic = frames[0][1:]
	default:
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.topics == nil {
		return
	}
	if sub {
		if len(p.topics) >= 1024 && p.topics[string(topic)] == 0 {
			return // a subscriber has no business with more topics
		}
		p.topics[string(topic)]++
		return
	}
	if p.topics[string(topic)] <= 1 {
		delete(p.topics, string(topic))
	} else {
		p.topics[string(topic)]--
	}
}

func (p *peer) subscribed(topic string) bool {
	p.mu.Lock()
	defer p.mu.Unlock()
	for t := range p.topics {
		if strings.HasPrefix(topic, t) {
			return true
		}
	}
	return false
}

// Send publishes frames (frames[0] is the topic) to every subscriber and
// returns nil even when some peers dropped older messages (Stats counts
// them). It may wait up to Options.BackpressureWait for a subscriber that
// is slow but reading; it does not wait for one that stopped. The frames
// must not be modified afterwards.
func (s *Pub) Send(frames [][]byte) error {
	if len(frames) == 0 {
		return nil
	}
	segs, size := Encode(frames)
	topic := string(frames[0])
	var slow []*peer
	s.mu.Lock()
	if s.ctx.Err() != nil {
		s.mu.Unlock()
		return ErrClosed
	}
	for p := range s.peers {
		if p.subscribed(topic) {
			p.enqueue(segs, size)
			slow = append(slow, p)
		}
	}
	s.mu.Unlock()
	// Outside the lock: a slow subscriber holds up this sender a little,
	// never the fan-out to the others.
	for _, p := range slow {
		p.throttle()
	}
	return nil
}

// Subscribers reports how many peers hold at least one subscription whose
// prefix matches topic.
func (s *Pub) Subscribers(topic string) int {
	s.mu.Lock()
	defer s.mu.Unlock()
	n := 0
	for p := range s.peers {
		if p.subscribed(topic) {
			n++
		}
	}
	return n
}
