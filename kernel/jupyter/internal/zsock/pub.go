package zsock

import (
	"context"
	"strings"
	"sync"
	"time"

	"github.com/go-zeromq/zmq4"
)

// Messages published while no subscriber matches them are held for a short
// while and delivered to the first subscriber whose subscription matches.
// This closes the slow-joiner gap: a front end connects its SUB socket
// separately from its request sockets, and a fast kernel can answer the
// first requests (and publish their busy and idle) before the SUB has
// subscribed. Such a front end would otherwise wait for an idle that never
// comes. Only messages nobody received are held, so nobody sees one twice.
const (
	holdFor   = 5 * time.Second
	holdMsgs  = 256
	holdBytes = 4 << 20
)

// Subscription bounds: a Jupyter client subscribes to everything (the
// empty topic); a subscriber gets at most maxTopics topics of at most
// maxTopic bytes, so that subscriptions cost little memory and matching
// a message against them little time.
const (
	maxTopic  = 255
	maxTopics = 64
)

// Pub is a ZeroMQ PUB socket. Send encodes a message once and queues it
// for every subscribed peer; each peer has its own bounded queue and
// writer, so a subscriber that stops reading loses its own oldest
// messages and never stalls the others, and memory stays bounded by the
// queue limits. A subscriber that reads slowly slows the sender down
// (Options.SoftQueueBytes) rather than losing messages.
// A subscriber that connects later (or reconnects) receives everything
// published after its subscription arrives, and the messages that were
// published while nobody was subscribed, up to a few seconds old (see holdFor).
type Pub struct {
	*base

	holdMu    sync.Mutex // orders Send against the replay to a new subscriber
	held      []heldMsg
	heldBytes int
	holdFor   time.Duration // holdFor, or longer in a test
}

type heldMsg struct {
	segs  [][]byte
	size  int
	topic string
	at    time.Time
}

// ListenPub binds a PUB socket to endpoint.
func ListenPub(ctx context.Context, endpoint, id string, opts *Options) (*Pub, error) {
	p := &Pub{holdFor: holdFor}
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
func (s *Pub) message(p *peer, m inMsg) {
	defer m.done()
	frames := m.frames
	var sub bool
	var topic []byte
	switch {
	case m.isCmd:
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
	if p.topics == nil {
		p.mu.Unlock()
		return
	}
	if sub {
		if len(topic) > maxTopic || len(p.topics) >= maxTopics && p.topics[string(topic)] == 0 {
			p.mu.Unlock()
			p.b.log.Printf("zsock PUB: peer %s: subscription ignored (topics are at most %d bytes, %d per subscriber)",
				p.conn.RemoteAddr(), maxTopic, maxTopics)
			return
		}
		p.topics[string(topic)]++
		p.mu.Unlock()
		s.replay(p, string(topic))
		return
	}
	if p.topics[string(topic)] <= 1 {
		delete(p.topics, string(topic))
	} else {
		p.topics[string(topic)]--
	}
	p.mu.Unlock()
}

// replay hands a new subscriber the held messages its subscription matches.
func (s *Pub) replay(p *peer, prefix string) {
	s.holdMu.Lock()
	defer s.holdMu.Unlock()
	keep := s.held[:0]
	now := time.Now()
	for _, m := range s.held {
		switch {
		case now.Sub(m.at) > s.holdFor:
			s.heldBytes -= m.size
		case strings.HasPrefix(m.topic, prefix):
			p.enqueue(m.segs, m.size)
			s.heldBytes -= m.size
		default:
			keep = append(keep, m)
		}
	}
	clear(s.held[len(keep):])
	s.held = keep
}

// hold keeps a message nobody was subscribed to, within the hold limits.
// The caller holds holdMu.
func (s *Pub) hold(segs [][]byte, size int, topic string) {
	now := time.Now()
	for len(s.held) > 0 && (len(s.held) >= holdMsgs || s.heldBytes+size > holdBytes || now.Sub(s.held[0].at) > s.holdFor) {
		s.heldBytes -= s.held[0].size
		s.held[0] = heldMsg{}
		s.held = s.held[1:]
	}
	if size > holdBytes {
		return
	}
	s.held = append(s.held, heldMsg{segs: segs, size: size, topic: topic, at: now})
	s.heldBytes += size
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
	s.holdMu.Lock()
	s.mu.Lock()
	if s.ctx.Err() != nil {
		s.mu.Unlock()
		s.holdMu.Unlock()
		return ErrClosed
	}
	for p := range s.peers {
		if p.subscribed(topic) {
			p.enqueue(segs, size)
			slow = append(slow, p)
		}
	}
	s.mu.Unlock()
	if len(slow) == 0 {
		s.hold(segs, size, topic)
	}
	s.holdMu.Unlock()
	// Outside the locks: a slow subscriber holds up this sender a little,
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
