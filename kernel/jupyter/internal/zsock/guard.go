package zsock

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"net"
)

// Handshake bounds. The NULL handshake reads a 64-byte greeting and one
// READY command whose body is a list of metadata properties (a socket
// type and an identity of at most 255 bytes, RFC 23/ZMTP); 16 KiB leaves
// room for application metadata as well.
const (
	greetingLen       = 64
	MaxHandshakeFrame = 16 << 10
)

// errHandshakeFrame reports a handshake frame that is not one READY-sized
// command.
var errHandshakeFrame = errors.New("zsock: handshake frame is not a single command")

// guardConn is the connection zmq4 sees while it runs the handshake. zmq4
// (v0.17.0, Conn.read) allocates a frame's announced size before reading
// its body and appends frames for as long as the MORE flag is set, so a
// peer could make it allocate up to 2^63 bytes with nine bytes on the
// wire. guardConn lets through the 64-byte greeting and then exactly one
// command frame, checking its header before zmq4 sees the last byte of
// the size: no MORE flag, no reserved flags, a body of at most
// MaxHandshakeFrame bytes. Anything else fails the read, and zmq4's
// handshake with it. Writes go straight to the connection.
//
// Reads come from the peer's buffered reader, which the socket goes on
// using after the handshake, so nothing the peer sent after its READY
// command is lost.
type guardConn struct {
	net.Conn
	r      *bufio.Reader
	allow  int  // bytes zmq4 may read before the next check
	stage  int  // 0 greeting, 1 the command frame, 2 done
	failed bool // a check failed; every later read fails too
}

func newGuard(conn net.Conn, r *bufio.Reader) *guardConn {
	return &guardConn{Conn: conn, r: r, allow: greetingLen}
}

func (g *guardConn) Read(p []byte) (int, error) {
	if g.failed {
		return 0, errHandshakeFrame
	}
	if g.allow == 0 {
		if err := g.next(); err != nil {
			g.failed = true
			return 0, err
		}
	}
	if len(p) > g.allow {
		p = p[:g.allow]
	}
	n, err := g.r.Read(p)
	g.allow -= n
	return n, err
}

// next checks the header of the frame that follows the greeting without
// consuming it, and allows exactly that frame to be read.
func (g *guardConn) next() error {
	g.stage++
	if g.stage > 1 {
		return fmt.Errorf("zsock: handshake read past the READY command")
	}
	h, err := g.r.Peek(2)
	if err != nil {
		return noEOF(err)
	}
	flags := h[0]
	if flags&^(flagLong|flagCommand) != 0 || flags&flagCommand == 0 {
		return fmt.Errorf("%w (flags %#x)", errHandshakeFrame, flags)
	}
	hdr, size := 2, uint64(h[1])
	if flags&flagLong != 0 {
		h, err = g.r.Peek(9)
		if err != nil {
			return noEOF(err)
		}
		hdr, size = 9, binary.BigEndian.Uint64(h[1:9])
	}
	if size > MaxHandshakeFrame {
		return fmt.Errorf("%w: announced %d bytes, limit %d", ErrTooLarge, size, MaxHandshakeFrame)
	}
	g.allow = hdr + int(size)
	return nil
}
