package zsock

import (
	"log"
	"sync"
	"time"
)

// RateLog passes at most a fixed number of lines per second to a logger
// and counts the rest, reporting the count with the next line it lets
// through. Whatever a peer makes the socket log (a dropped connection, a
// refused handshake, a bad message) it can repeat as fast as it can
// connect or send, and a kernel's log must not grow with that.
type RateLog struct {
	l     *log.Logger
	limit int

	mu      sync.Mutex
	window  time.Time
	n       int
	dropped int
}

// NewRateLog returns a RateLog that writes at most perSecond lines per
// second to l.
func NewRateLog(l *log.Logger, perSecond int) *RateLog {
	return &RateLog{l: l, limit: perSecond}
}

// Printf logs as log.Printf does, unless the second's lines are used up.
func (r *RateLog) Printf(format string, args ...any) {
	r.mu.Lock()
	now := time.Now()
	if now.Sub(r.window) >= time.Second {
		r.window, r.n = now, 0
	}
	if r.n >= r.limit {
		r.dropped++
		r.mu.Unlock()
		return
	}
	r.n++
	dropped := r.dropped
	r.dropped = 0
	r.mu.Unlock()
	if dropped > 0 {
		r.l.Printf("(%d more log lines like these were left out)", dropped)
	}
	r.l.Printf(format, args...)
}
