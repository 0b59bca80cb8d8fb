package zsock

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"net"
)

// ZMTP 3.0 frame flags (RFC 23/ZMTP, "Framing").
const (
	flagMore    = 0x01
	flagLong    = 0x02
	flagCommand = 0x04
)

// inlineLimit is the largest frame copied into the shared header buffer
// when a message is encoded; larger frames are referenced, not copied.
const inlineLimit = 2048

// ErrTooLarge reports a message above the configured size limit.
var ErrTooLarge = errors.New("zsock: message too large")

// Encode turns a multi-frame message into wire segments ready for a
// vectored write. Small frames are copied; frames above 2 KiB are
// referenced, so the caller must not modify them afterwards. The returned
// size is the number of bytes on the wire.
func Encode(frames [][]byte) (segs net.Buffers, size int) {
	n := 0
	for _, f := range frames {
		n += 9
		if len(f) <= inlineLimit {
			n += len(f)
		}
	}
	buf := make([]byte, 0, n)
	start := 0
	for i, f := range frames {
		var flags byte
		if i < len(frames)-1 {
			flags |= flagMore
		}
		buf = appendHeader(buf, flags, len(f))
		size += len(f)
		if len(f) <= inlineLimit {
			buf = append(buf, f...)
			continue
		}
		segs = append(segs, buf[start:])
		segs = append(segs, f)
		start = len(buf)
	}
	if start < len(buf) || len(segs) == 0 {
		segs = append(segs, buf[start:])
	}
	return segs, size + headerBytes(frames)
}

func headerBytes(frames [][]byte) int {
	n := 0
	for _, f := range frames {
		if len(f) > 255 {
			n += 9
		} else {
			n += 2
		}
	}
	return n
}

func appendHeader(buf []byte, flags byte, size int) []byte {
	if size > 255 {
		buf = append(buf, flags|flagLong)
		return binary.BigEndian.AppendUint64(buf, uint64(size))
	}
	return append(buf, flags, byte(size))
}

// WriteMsg writes one message to w. It is used by tests and by nothing
// on the kernel's hot path (peers write pre-encoded segments).
func WriteMsg(w io.Writer, frames [][]byte) error {
	segs, _ := Encode(frames)
	_, err := segs.WriteTo(w)
	return err
}

// WriteCommand writes one ZMTP command frame (name and data) to w.
func WriteCommand(w io.Writer, name string, data []byte) error {
	body := append([]byte{byte(len(name))}, name...)
	body = append(body, data...)
	buf := appendHeader(nil, flagCommand, len(body))
	_, err := w.Write(append(buf, body...))
	return err
}

// FrameOverhead is what one frame costs the reader beyond its body: the
// slice header that holds it (twice over while the list of frames grows,
// and once more when a socket prefixes a routing identity), rounded up.
// It is counted against a message's size limit, so that a stream of empty
// frames (two bytes each on the wire) cannot grow memory without bound.
const FrameOverhead = 96

// ReadMsg reads one message (all its frames) from r. A command frame is
// returned as a single frame with isCmd set. max bounds the size of the
// message: the sum of its frame bodies plus FrameOverhead per frame.
// Memory is allocated as bytes arrive, not as a frame header announces,
// so a peer that announces a huge frame and sends nothing costs nothing.
func ReadMsg(r *bufio.Reader, max int64) (frames [][]byte, isCmd bool, err error) {
	return readMsg(r, max, nil)
}

// readMsg is ReadMsg with a charge, called with each frame's cost (body
// plus FrameOverhead) before any of it is allocated; an error from charge
// ends the read with that error.
func readMsg(r *bufio.Reader, max int64, charge func(int64) error) (frames [][]byte, isCmd bool, err error) {
	var total int64
	for {
		flags, size, err := readHeader(r)
		if err != nil {
			if len(frames) > 0 {
				err = noEOF(err)
			}
			return nil, false, err
		}
		cost := size + FrameOverhead
		if size > uint64(max) || cost > uint64(max-total) {
			return nil, false, ErrTooLarge
		}
		total += int64(cost)
		if charge != nil {
			if err := charge(int64(cost)); err != nil {
				return nil, false, err
			}
		}
		body, err := readBody(r, int64(size))
		if err != nil {
			return nil, false, noEOF(err)
		}
		if flags&flagCommand != 0 {
			if flags&flagMore != 0 || len(frames) > 0 {
				return nil, false, errors.New("zsock: command frame inside a message")
			}
			return [][]byte{body}, true, nil
		}
		frames = append(frames, body)
		if flags&flagMore == 0 {
			return frames, false, nil
		}
	}
}

// readHeader reads a frame's flags and announced body size. The flags
// are checked; the size is not.
func readHeader(r *bufio.Reader) (flags byte, size uint64, err error) {
	flags, err = r.ReadByte()
	if err != nil {
		return 0, 0, err
	}
	if flags&^(flagMore|flagLong|flagCommand) != 0 {
		return 0, 0, fmt.Errorf("zsock: reserved frame flags set: %#x", flags)
	}
	if flags&flagLong != 0 {
		var b [8]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return 0, 0, noEOF(err)
		}
		return flags, binary.BigEndian.Uint64(b[:]), nil
	}
	b, err := r.ReadByte()
	if err != nil {
		return 0, 0, noEOF(err)
	}
	return flags, uint64(b), nil
}

// readBody reads a body of the given size. Up to 1 MiB it is allocated at
// once; a larger body grows by doubling as bytes arrive, to exactly size,
// so the peak while it grows is 1.5 times the body.
func readBody(r io.Reader, size int64) ([]byte, error) {
	const step = 1 << 20
	if size <= step {
		b := make([]byte, size)
		_, err := io.ReadFull(r, b)
		return b, err
	}
	b := make([]byte, 0, step)
	for int64(len(b)) < size {
		if len(b) == cap(b) {
			nb := make([]byte, len(b), min(2*int64(cap(b)), size))
			copy(nb, b)
			b = nb
		}
		n, err := io.ReadFull(r, b[len(b):cap(b)])
		b = b[:len(b)+n]
		if err != nil {
			return nil, err
		}
	}
	return b, nil
}

func noEOF(err error) error {
	if err == io.EOF {
		return io.ErrUnexpectedEOF
	}
	return err
}

// ParseCommand splits a command frame body into its name and data.
func ParseCommand(body []byte) (name string, data []byte, ok bool) {
	if len(body) == 0 || int(body[0]) > len(body)-1 {
		return "", nil, false
	}
	n := int(body[0])
	return string(body[1 : 1+n]), body[1+n:], true
}
