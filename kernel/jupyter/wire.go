package jupyter

import (
	"bytes"
	"crypto/hmac"
	"crypto/sha256"
	"crypto/sha512"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"sync"
	"unicode/utf8"
)

// ProtocolVersion is the Jupyter messaging protocol version spoken.
const ProtocolVersion = "5.3"

// delimiter separates the routing identities from the message.
var delimiter = []byte("<IDS|MSG>")

var emptyObject = []byte("{}")

// signer computes and checks the HMAC signature of a message: the hex
// digest over the serialized header, parent header, metadata and content,
// keyed by the connection file's key. An empty key disables signing.
type signer struct {
	key  []byte
	size int // digest bytes
	pool sync.Pool
}

func newSigner(scheme, key string) (*signer, error) {
	var h func() hash.Hash
	switch scheme {
	case "", "hmac-sha256":
		h = sha256.New
	case "hmac-sha512":
		h = sha512.New
	default:
		return nil, fmt.Errorf("unsupported signature_scheme %q (want hmac-sha256)", scheme)
	}
	s := &signer{key: []byte(key), size: h().Size()}
	s.pool.New = func() any { return hmac.New(h, s.key) }
	return s, nil
}

func (s *signer) sign(parts ...[]byte) []byte {
	if len(s.key) == 0 {
		return []byte{}
	}
	m := s.pool.Get().(hash.Hash)
	m.Reset()
	for _, p := range parts {
		m.Write(p)
	}
	var sum [64]byte
	d := m.Sum(sum[:0])
	s.pool.Put(m)
	out := make([]byte, hex.EncodedLen(len(d)))
	hex.Encode(out, d)
	return out
}

func (s *signer) verify(sig []byte, parts ...[]byte) bool {
	if len(s.key) == 0 {
		return true
	}
	// A signature of the wrong length is refused before the digest of a
	// message that may be megabytes long is computed.
	if len(sig) != 2*s.size {
		return false
	}
	return hmac.Equal(bytes.ToLower(sig), s.sign(parts...))
}

// header is the part of a message header the kernel reads.
type header struct {
	MsgID    string
	MsgType  string
	Session  string
	Username string
}

// message is one received Jupyter message. The header is kept as the
// bytes received, so a reply's parent_header is the request's header byte
// for byte; the one exception is a header that is not valid UTF-8 (JSON
// text must be UTF-8, RFC 8259 section 8.1), whose invalid bytes are each
// replaced by U+FFFD. Such bytes can only sit inside JSON strings (the
// header passed json.Valid), so the result is still the same JSON object,
// and a client that decodes the echo as UTF-8, as jupyter_client does,
// can read it. The signature is checked on the bytes received.
type message struct {
	ids       [][]byte // routing identities, echoed unchanged in replies
	header    header
	rawHeader []byte
	metadata  []byte
	content   []byte
	buffers   [][]byte
	channel   string
	// seq numbers shell requests in the order the kernel received them, so
	// that a failed cell with stop_on_error aborts exactly the requests
	// received before it failed (see Kernel.abortBefore).
	seq uint64
}

var (
	errNoDelimiter = errors.New("no <IDS|MSG> delimiter")
	errTooShort    = errors.New("fewer than 5 frames after the delimiter")
	errSignature   = errors.New("bad signature")
)

// parseMessage splits the frames of a received message, checks the
// signature and that header, parent, metadata and content are JSON
// objects. It never panics on any input.
func parseMessage(frames [][]byte, s *signer) (*message, error) {
	d := -1
	for i, f := range frames {
		if bytes.Equal(f, delimiter) {
			d = i
			break
		}
	}
	if d < 0 {
		return nil, errNoDelimiter
	}
	if len(frames)-d-1 < 5 {
		return nil, errTooShort
	}
	sig, hdr, parent, meta, content := frames[d+1], frames[d+2], frames[d+3], frames[d+4], frames[d+5]
	if !s.verify(sig, hdr, parent, meta, content) {
		return nil, errSignature
	}
	for _, part := range []struct {
		name string
		b    []byte
	}{{"header", hdr}, {"parent_header", parent}, {"metadata", meta}, {"content", content}} {
		if !isObject(part.b) {
			return nil, fmt.Errorf("%s is not a JSON object", part.name)
		}
	}
	var h map[string]json.RawMessage
	if err := json.Unmarshal(hdr, &h); err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	if !utf8.Valid(hdr) {
		hdr = bytes.ToValidUTF8(hdr, []byte("\uFFFD"))
	}
	m := &message{
		ids:       frames[:d],
		rawHeader: hdr,
		metadata:  meta,
		content:   content,
		buffers:   frames[d+6:],
	}
	m.header.MsgID = jsonString(h["msg_id"])
	m.header.MsgType = jsonString(h["msg_type"])
	m.header.Session = jsonString(h["session"])
	m.header.Username = jsonString(h["username"])
	if m.header.MsgType == "" {
		return nil, errors.New("header has no msg_type")
	}
	return m, nil
}

func isObject(b []byte) bool {
	b = bytes.TrimLeft(b, " \t\r\n")
	return len(b) > 0 && b[0] == '{' && json.Valid(b)
}

func jsonString(raw json.RawMessage) string {
	var s string
	if json.Unmarshal(raw, &s) != nil {
		return ""
	}
	return s
}

// marshal encodes v as JSON without HTML escaping (SVG and HTML output
// stay readable and compact on the wire).
func marshal(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimSuffix(buf.Bytes(), []byte("\n")), nil
}

// outHeader is the header of a message the kernel sends.
type outHeader struct {
	MsgID    string `json:"msg_id"`
	Session  string `json:"session"`
	Username string `json:"username"`
	Date     string `json:"date"`
	MsgType  string `json:"msg_type"`
	Version  string `json:"version"`
}

// frames assembles a signed message: routing prefix, delimiter,
// signature, header, parent, metadata, content, buffers.
func (s *signer) frames(prefix [][]byte, hdr, parent, meta, content []byte, buffers [][]byte) [][]byte {
	out := make([][]byte, 0, len(prefix)+6+len(buffers))
	out = append(out, prefix...)
	out = append(out, delimiter, s.sign(hdr, parent, meta, content), hdr, parent, meta, content)
	return append(out, buffers...)
}
