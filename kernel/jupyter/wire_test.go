package jupyter

import (
	"bytes"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestSignerHMAC checks the signature against RFC 4231 test case 2 (key
// "Jefe", data "what do ya want for nothing?"): the digest of the
// concatenated parts, as the wire protocol signs header, parent,
// metadata and content in turn.
func TestSignerHMAC(t *testing.T) {
	parts := [][]byte{[]byte("what do ya"), []byte(" want for "), []byte("nothing"), []byte("?")}
	cases := []struct{ scheme, want string }{
		// RFC 4231, section 4.3, HMAC-SHA-256.
		{"hmac-sha256", "5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843"},
		// RFC 4231, section 4.3, HMAC-SHA-512.
		{"hmac-sha512", "164b7a7bfcf819e2e395fbe73b56e0a387bd64222e831fd610270cd7ea250554" +
			"9758bf75c05a994a6d034f65f8f0e6fdcaeab1a34d4a6b4b636e070a38bce737"},
	}
	for _, tc := range cases {
		s, err := newSigner(tc.scheme, "Jefe")
		if err != nil {
			t.Fatal(err)
		}
		if got := string(s.sign(parts...)); got != tc.want {
			t.Errorf("%s: %s", tc.scheme, got)
		}
		if !s.verify([]byte(strings.ToUpper(tc.want)), parts...) {
			t.Errorf("%s: upper-case hex rejected", tc.scheme)
		}
		if s.verify([]byte(tc.want[:10]), parts...) || s.verify([]byte(tc.want), parts[:3]...) {
			t.Errorf("%s: accepted a wrong signature", tc.scheme)
		}
	}
	if _, err := newSigner("hmac-md5", "k"); err == nil {
		t.Error("unsupported scheme accepted")
	}
	// An empty key disables signing both ways.
	s, _ := newSigner("hmac-sha256", "")
	if len(s.sign(parts...)) != 0 || !s.verify([]byte("anything"), parts...) {
		t.Error("empty key still signs")
	}
}

func TestParseMessage(t *testing.T) {
	s, _ := newSigner("hmac-sha256", "k")
	h := []byte(`{"msg_id":"m1","msg_type":"execute_request","session":"s","username":"u","date":"2024-01-01T00:00:00Z","version":"5.3"}`)
	p, m, c := []byte(`{}`), []byte(`{"x": 1}`), []byte(` {"code":"1"}`)
	frames := s.frames([][]byte{[]byte("id1"), []byte("id2")}, h, p, m, c, [][]byte{[]byte("buf")})
	msg, err := parseMessage(frames, s)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(msg.ids, [][]byte{[]byte("id1"), []byte("id2")}) || string(msg.rawHeader) != string(h) ||
		msg.header != (header{"m1", "execute_request", "s", "u"}) || string(msg.content) != string(c) ||
		!reflect.DeepEqual(msg.buffers, [][]byte{[]byte("buf")}) {
		t.Errorf("parsed %+v", msg)
	}
	// A header with a field of an unexpected type is still read.
	h2 := []byte(`{"msg_id":"m2","msg_type":"kernel_info_request","username":7}`)
	if msg, err := parseMessage(s.frames(nil, h2, p, p, p, nil), s); err != nil || msg.header.MsgType != "kernel_info_request" {
		t.Errorf("lenient header: %v %v", msg, err)
	}
	bad := map[string][][]byte{
		"no frames":         nil,
		"delimiter only":    {delimiter},
		"bad signature":     append([][]byte{delimiter, []byte("00")}, frames[3:]...),
		"metadata not JSON": s.frames(nil, h, p, []byte("{"), c, nil),
		"parent a string":   s.frames(nil, h, []byte(`"x"`), m, c, nil),
		"msg_type a number": s.frames(nil, []byte(`{"msg_type": 3}`), p, m, c, nil),
	}
	for name, f := range bad {
		if _, err := parseMessage(f, s); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

func TestReadConnectionFile(t *testing.T) {
	ci, err := ReadConnectionFile(filepath.Join("testdata", "connection.json"))
	if err != nil {
		t.Fatal(err)
	}
	want := ConnectionInfo{Transport: "tcp", IP: "127.0.0.1", ShellPort: 53794, IOPubPort: 53795, StdinPort: 53796,
		ControlPort: 53797, HBPort: 53798, Key: "5a0f8d0e-2b8d4c5e9e7f1a3b6c8d0e2f", SignatureScheme: "hmac-sha256", KernelName: "fakelang"}
	if ci != want {
		t.Errorf("read %+v", ci)
	}
	if got := ci.Endpoint(ci.ShellPort); got != "tcp://127.0.0.1:53794" {
		t.Errorf("endpoint %s", got)
	}
	if got := (ConnectionInfo{Transport: "ipc", IP: "/run/k"}).Endpoint(3); got != "ipc:///run/k-3" {
		t.Errorf("ipc endpoint %s", got)
	}
	if got := (ConnectionInfo{Transport: "tcp", IP: "::1"}).Endpoint(9); got != "tcp://[::1]:9" {
		t.Errorf("ipv6 endpoint %s", got)
	}

	dir := t.TempDir()
	for name, content := range map[string]string{
		"not json":   `{"ip": `,
		"udp":        `{"transport": "udp", "ip": "127.0.0.1"}`,
		"md5":        `{"transport": "tcp", "key": "k", "signature_scheme": "hmac-md5"}`,
		"port":       `{"transport": "tcp", "shell_port": 70000}`,
		"ipc no ip":  `{"transport": "ipc"}`,
		"port typed": `{"transport": "tcp", "shell_port": "1"}`,
	} {
		f := filepath.Join(dir, strings.ReplaceAll(name, " ", "_")+".json")
		os.WriteFile(f, []byte(content), 0o600)
		if _, err := ReadConnectionFile(f); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
	if _, err := ReadConnectionFile(filepath.Join(dir, "missing.json")); err == nil {
		t.Error("missing file accepted")
	}
	// Defaults: tcp on 127.0.0.1, hmac-sha256.
	f := filepath.Join(dir, "minimal.json")
	os.WriteFile(f, []byte(`{"key": "k"}`), 0o600)
	if ci, err := ReadConnectionFile(f); err != nil || ci.Transport != "tcp" || ci.IP != "127.0.0.1" {
		t.Errorf("minimal: %+v %v", ci, err)
	}
}

func TestCodePoints(t *testing.T) {
	// "a", "é" (2 bytes), "😀" (4 bytes, one code point, two UTF-16
	// units), "b".
	s := "aé😀b"
	cases := []struct{ cp, off int }{{0, 0}, {1, 1}, {2, 3}, {3, 7}, {4, 8}}
	for _, tc := range cases {
		if got := byteOffset(s, tc.cp); got != tc.off {
			t.Errorf("byteOffset(%d) = %d, want %d", tc.cp, got, tc.off)
		}
		if got := codePoints(s, tc.off); got != tc.cp {
			t.Errorf("codePoints(%d) = %d, want %d", tc.off, got, tc.cp)
		}
	}
	// Clamping, and offsets inside a character count from its start.
	for _, tc := range []struct{ off, cp int }{{-3, 0}, {99, 4}, {2, 1}, {5, 2}} {
		if got := codePoints(s, tc.off); got != tc.cp {
			t.Errorf("codePoints(%d) = %d, want %d", tc.off, got, tc.cp)
		}
	}
	if byteOffset(s, -1) != 0 || byteOffset(s, 10) != len(s) {
		t.Error("byteOffset does not clamp")
	}
}

func TestGlobMatch(t *testing.T) {
	// The glob of a history search: * any run (newlines too), ? one
	// character, [...] a class; the whole input must match, case counts,
	// as in SQLite's GLOB, which IPython's history search uses. Checked
	// against SQLite 3.40.1 (s GLOB pattern, through Python's sqlite3
	// module): every case agrees but [!a]x, where globMatch also takes a
	// leading ! as negation (as its doc says) and SQLite only ^.
	cases := []struct {
		pattern, s string
		want       bool
	}{
		{"*", "", true},
		{"*", "anything\nat all", true},
		{"a*", "abc", true},
		{"a*", "bac", false},
		{"*c", "abc", true},
		{"a?c", "abc", true},
		{"a?c", "ac", false},
		{"a?c", "aéc", true},
		{"result 1*", "result 123", true},
		{"result 1", "result 12", false},
		{"*1*2*", "x1y2z", true},
		{"*1*2*", "x2y1z", false},
		{"[ab]x", "bx", true},
		{"[a-c]x", "dx", false},
		{"[^a-c]x", "dx", true},
		{"[!a]x", "ax", false},
		{"[]]x", "]x", true},
		{"[ab", "a", false},
		{"ABC", "abc", false},
		{"a**b", "ab", true},
	}
	for _, tc := range cases {
		if got := globMatch(tc.pattern, tc.s); got != tc.want {
			t.Errorf("globMatch(%q, %q) = %v", tc.pattern, tc.s, got)
		}
	}
}

func TestErrorFields(t *testing.T) {
	cases := []struct {
		err         error
		name, value string
		tb          []string
	}{
		{&ExecError{Name: "ModelError", Value: "v", Traceback: []string{"l1", "l2"}}, "ModelError", "v", []string{"l1", "l2"}},
		{&ExecError{Value: "v"}, "Error", "v", []string{"Error: v"}},
		{os.ErrNotExist, "Error", "file does not exist", []string{"Error: file does not exist"}},
	}
	for _, tc := range cases {
		n, v, tb := errorFields(tc.err)
		if n != tc.name || v != tc.value || !reflect.DeepEqual(tb, tc.tb) {
			t.Errorf("%v: %q %q %q", tc.err, n, v, tb)
		}
	}
	// A wrapped ExecError keeps its fields.
	n, _, _ := errorFields(wrapErr{&ExecError{Name: "Deep", Value: "x"}})
	if n != "Deep" {
		t.Errorf("wrapped: %s", n)
	}
}

type wrapErr struct{ err error }

func (w wrapErr) Error() string { return "wrapped: " + w.err.Error() }
func (w wrapErr) Unwrap() error { return w.err }

// TestPlainText: what a terminal would act on becomes visible, one
// character for one, and plain text passes unchanged.
func TestPlainText(t *testing.T) {
	cases := []struct{ in, want string }{
		{"plain text, tabs\tand\nnewlines, é and 😀", "plain text, tabs\tand\nnewlines, é and 😀"},
		{"\x1b[2J\x1b]0;title\x07", "␛[2J␛]0;title␇"},
		{"a\rb\bc\x00d\x7f", "a␍b␈c␀d␡"},
		{"c1 \u009b31m", "c1 \ufffd31m"},
		{"bad \xff\xfe utf-8", "bad \ufffd\ufffd utf-8"},
	}
	for _, tc := range cases {
		got := PlainText(tc.in)
		if got != tc.want {
			t.Errorf("PlainText(%q) = %q, want %q", tc.in, got, tc.want)
		}
		// One character for one: a caret under the line keeps its column.
		if utf8.ValidString(tc.in) && utf8.RuneCountInString(got) != utf8.RuneCountInString(tc.in) {
			t.Errorf("PlainText(%q) changed the width: %d runes from %d", tc.in, utf8.RuneCountInString(got), utf8.RuneCountInString(tc.in))
		}
	}
}

// TestParseMessageInvalidUTF8Header: the parent header is the request's
// header byte for byte when it is valid UTF-8, and otherwise the same
// JSON with each run of invalid bytes replaced by U+FFFD.
func TestParseMessageInvalidUTF8Header(t *testing.T) {
	s, _ := newSigner("hmac-sha256", "k")
	p := []byte(`{}`)
	good := []byte(`{"msg_id":"m1", "msg_type":"kernel_info_request", "username":"zoë"}`)
	msg, err := parseMessage(s.frames(nil, good, p, p, p, nil), s)
	if err != nil || string(msg.rawHeader) != string(good) {
		t.Fatalf("valid header: %q %v", msg.rawHeader, err)
	}
	bad := []byte("{\"msg_id\":\"m2\", \"msg_type\":\"kernel_info_request\", \"username\":\"zo\xff\xfe\"}")
	msg, err = parseMessage(s.frames(nil, bad, p, p, p, nil), s)
	if err != nil {
		t.Fatal(err)
	}
	want := "{\"msg_id\":\"m2\", \"msg_type\":\"kernel_info_request\", \"username\":\"zo\ufffd\"}"
	if string(msg.rawHeader) != want || msg.header.MsgID != "m2" {
		t.Errorf("invalid header echoed as %q", msg.rawHeader)
	}
}

// FuzzParseMessage: any frames give a message or an error, never a
// panic; a message accepted has a UTF-8 header (what replies echo), a
// msg_type, and JSON objects for its parts. Frames are split at '|';
// signing is off (empty key) so that the fuzzer reaches the JSON.
func FuzzParseMessage(f *testing.F) {
	f.Add([]byte(`id|<IDS|MSG>|sig|{"msg_id":"1","msg_type":"execute_request"}|{}|{}|{"code":"1"}`))
	f.Add([]byte("<IDS|MSG>||{\"msg_type\":\"x\",\"u\":\"\xff\"}|{}|{}|{}|buf"))
	f.Add([]byte(`<IDS|MSG>||{"msg_type":3}|{}|{}|[]`))
	s, _ := newSigner("hmac-sha256", "")
	f.Fuzz(func(t *testing.T, data []byte) {
		frames := bytes.Split(data, []byte("|"))
		// "<IDS|MSG>" itself contains the separator: join it back.
		for i := 0; i+1 < len(frames); i++ {
			if string(frames[i]) == "<IDS" && string(frames[i+1]) == "MSG>" {
				frames[i] = delimiter
				frames = append(frames[:i+1], frames[i+2:]...)
			}
		}
		m, err := parseMessage(frames, s)
		if err != nil {
			return
		}
		if !utf8.Valid(m.rawHeader) || m.header.MsgType == "" || !isObject(m.rawHeader) || !isObject(m.content) {
			t.Fatalf("accepted %q", data)
		}
	})
}
