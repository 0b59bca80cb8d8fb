package jupyter

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log"
	"net"
	"os"
	"os/signal"
	"strconv"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/nudge-dev/nudge/kernel/jupyter/internal/zsock"
)

// Options tune a Kernel. A nil *Options means the defaults.
type Options struct {
	// Logger receives protocol events: dropped messages, bad signatures,
	// recovered panics, slow clients. nil discards them.
	Logger *log.Logger
	// Username goes into the header of every message sent (default
	// "kernel").
	Username string

	// HandshakeTimeout bounds a new connection's ZeroMQ handshake
	// (default 5s); a connection that stays silent is closed and never
	// delays other connections.
	HandshakeTimeout time.Duration
	// StallTimeout is how long a write to one client may make no progress
	// before that client's connection is dropped (default 30s).
	StallTimeout time.Duration
	// QueueMsgs and QueueBytes bound what waits to be sent to one client
	// on one socket (defaults 100000 messages, 64 MiB). Beyond them that
	// client's oldest queued messages are dropped, so a client that falls
	// behind still gets the latest status; other clients are unaffected.
	QueueMsgs  int
	QueueBytes int
	// SoftQueueBytes and BackpressureWait slow the kernel down to the pace
	// of a client that reads slowly but steadily: with more than
	// SoftQueueBytes (default 1 MiB) queued for it, a send waits up to
	// BackpressureWait (default 1s). A client that has not read anything
	// for BackpressureWait is not waited for.
	SoftQueueBytes   int
	BackpressureWait time.Duration
	// MaxMsgBytes bounds one incoming message on shell, counting 96 bytes
	// per frame besides its body (default 64 MiB). Control and stdin take
	// at most 1 MiB, iopub (subscriptions) and the heartbeat 64 KiB.
	MaxMsgBytes int64
	// MaxInBytes bounds the incoming bytes one channel holds at once over
	// all its clients, read but not yet handled or still arriving
	// (default twice the channel's MaxMsgBytes). When a message does not
	// fit, the client with the largest unfinished message is
	// disconnected if that message is larger, else the client asking.
	MaxInBytes int64
	// MaxPeers bounds the connections of each channel, handshakes
	// included (default 256); more are closed at once.
	MaxPeers int
	// Linger bounds each of the two waits at shutdown: for queued
	// messages to be written, then for clients to read to the end
	// (default 500ms).
	Linger time.Duration
}

// ErrInterrupted is the cause (context.Cause) of a cell context cancelled
// by an interrupt; a shutdown cancels with ErrShutdown.
var (
	ErrInterrupted = errors.New("interrupted")
	ErrShutdown    = errors.New("kernel shutting down")
)

// Kernel serves one Handler over the five Jupyter channels.
type Kernel struct {
	ci      ConnectionInfo
	h       Handler
	log     *log.Logger
	dropLog *zsock.RateLog // messages dropped before or at the signature check
	sign    *signer
	session string
	user    string
	seq     atomic.Uint64
	linger  time.Duration

	shell, control, stdin *zsock.Router
	iopub                 *zsock.Pub
	hb                    *zsock.Echo

	info []byte // kernel_info_reply content, built once

	root   context.Context
	cancel context.CancelFunc
	shellQ chan *message
	// shellSeq counts the shell requests received (shellLoop numbers each
	// one); abortBefore, touched only on the shell worker (by execute), is the last number
	// of those to abort after a failed cell with stop_on_error.
	shellSeq    atomic.Uint64
	abortBefore uint64
	stopped     chan struct{}
	stopReq     sync.Once
	serving     atomic.Bool
	served      chan struct{} // closed when Serve has returned

	// Owned by the shell worker goroutine.
	count int
	hist  history

	execMu      sync.Mutex
	cancelExec  context.CancelCauseFunc
	interrupted bool
}

// New binds the five sockets described by ci and returns a kernel ready
// to Serve. A port of 0 binds a free port; Connection reports the ports
// actually bound.
func New(ci ConnectionInfo, h Handler, opts *Options) (*Kernel, error) {
	if h == nil {
		return nil, errors.New("jupyter: nil Handler")
	}
	if err := ci.check(); err != nil {
		return nil, err
	}
	var o Options
	if opts != nil {
		o = *opts
	}
	if o.Logger == nil {
		o.Logger = log.New(io.Discard, "", 0)
	}
	if o.Username == "" {
		o.Username = "kernel"
	}
	if o.Linger <= 0 {
		o.Linger = 500 * time.Millisecond
	}
	s, _ := newSigner(ci.SignatureScheme, ci.Key)
	k := &Kernel{
		ci:      ci,
		h:       h,
		log:     o.Logger,
		dropLog: zsock.NewRateLog(o.Logger, 10),
		sign:    s,
		session: newUUID(),
		user:    o.Username,
		linger:  o.Linger,
		shellQ:  make(chan *message, 1024),
		stopped: make(chan struct{}),
		served:  make(chan struct{}),
	}
	k.root, k.cancel = context.WithCancel(context.Background())
	if err := k.bind(&o); err != nil {
		k.cancel()
		return nil, err
	}
	info, err := k.kernelInfo()
	if err != nil {
		k.closeSockets(0)
		k.cancel()
		return nil, err
	}
	k.info = info
	return k, nil
}

func (k *Kernel) bind(o *Options) error {
	zo := &zsock.Options{
		Logger:           o.Logger,
		HandshakeTimeout: o.HandshakeTimeout,
		StallTimeout:     o.StallTimeout,
		QueueMsgs:        o.QueueMsgs,
		QueueBytes:       o.QueueBytes,
		SoftQueueBytes:   o.SoftQueueBytes,
		BackpressureWait: o.BackpressureWait,
		MaxMsgBytes:      o.MaxMsgBytes,
		MaxInBytes:       o.MaxInBytes,
		MaxPeers:         o.MaxPeers,
	}
	// Only shell carries large messages (a cell's code); the other
	// channels get tight bounds, so that a client cannot park memory
	// there before its first signed message is checked.
	control := narrow(zo, 1<<20, 0)
	subs := narrow(zo, 64<<10, 0)
	hb := narrow(zo, 64<<10, 256<<10)
	taken := map[int]bool{}
	for _, p := range k.ci.ports() {
		taken[*p.port] = true
	}
	endpoint := func(port *int) string {
		if *port == 0 && k.ci.Transport == "ipc" {
			*port = freeIPCPort(k.ci.IP, taken)
			taken[*port] = true
		}
		return k.ci.Endpoint(*port)
	}
	// realPort records the port the system chose for a tcp port 0.
	realPort := func(port *int, a net.Addr) {
		if ta, ok := a.(*net.TCPAddr); ok {
			*port = ta.Port
		}
	}
	var err error
	if k.shell, err = zsock.ListenRouter(k.root, endpoint(&k.ci.ShellPort), "shell", zo); err != nil {
		return err
	}
	realPort(&k.ci.ShellPort, k.shell.Addr())
	if k.iopub, err = zsock.ListenPub(k.root, endpoint(&k.ci.IOPubPort), "iopub", subs); err != nil {
		k.closeSockets(0)
		return err
	}
	realPort(&k.ci.IOPubPort, k.iopub.Addr())
	if k.stdin, err = zsock.ListenRouter(k.root, endpoint(&k.ci.StdinPort), "stdin", control); err != nil {
		k.closeSockets(0)
		return err
	}
	realPort(&k.ci.StdinPort, k.stdin.Addr())
	if k.control, err = zsock.ListenRouter(k.root, endpoint(&k.ci.ControlPort), "control", control); err != nil {
		k.closeSockets(0)
		return err
	}
	realPort(&k.ci.ControlPort, k.control.Addr())
	if k.hb, err = zsock.ListenEcho(k.root, endpoint(&k.ci.HBPort), "hb", hb); err != nil {
		k.closeSockets(0)
		return err
	}
	realPort(&k.ci.HBPort, k.hb.Addr())
	return nil
}

// narrow returns a copy of o whose incoming messages are at most maxMsg
// bytes (or o's own bound when smaller) and, when queue > 0, whose send
// queue per client is at most queue bytes: a heartbeat client that sends
// pings without reading the echoes fills only a small queue.
func narrow(o *zsock.Options, maxMsg int64, queue int) *zsock.Options {
	n := *o
	if n.MaxMsgBytes <= 0 || n.MaxMsgBytes > maxMsg {
		n.MaxMsgBytes = maxMsg
	}
	if n.MaxInBytes > 0 {
		n.MaxInBytes = min(n.MaxInBytes, 2*n.MaxMsgBytes)
	}
	if queue > 0 && (n.QueueBytes <= 0 || n.QueueBytes > queue) {
		n.QueueBytes = queue
	}
	return &n
}

// Connection is the connection information with the ports actually bound.
func (k *Kernel) Connection() ConnectionInfo { return k.ci }

// Session is the session id in the header of every message the kernel
// sends.
func (k *Kernel) Session() string { return k.session }

// Run starts a kernel from a connection file and serves until a
// shutdown_request, SIGTERM or the end of ctx. SIGINT interrupts the
// running cell instead of killing the process (signal.Notify, not
// signal.Ignore, so child processes keep the default). The caller should
// exit the process when Run returns: a cell that ignores its context may
// still be running. A nil logger discards the kernel's log.
func Run(ctx context.Context, connFile string, h Handler, logger *log.Logger) error {
	ci, err := ReadConnectionFile(connFile)
	if err != nil {
		return err
	}
	k, err := New(ci, h, &Options{Logger: logger})
	if err != nil {
		return err
	}
	sigs := make(chan os.Signal, 4)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	defer signal.Stop(sigs)
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	go func() {
		for {
			select {
			case s := <-sigs:
				if s == syscall.SIGTERM {
					k.log.Printf("jupyter: SIGTERM: shutting down")
					k.Stop()
					continue
				}
				if !k.Interrupt() {
					k.log.Printf("jupyter: SIGINT with no cell running: ignored")
				}
			case <-ctx.Done():
				return
			}
		}
	}()
	return k.Serve(ctx)
}

// Serve handles requests until a shutdown_request or Stop (it then returns
// nil) or until ctx ends (it returns ctx's error). Either way it flushes
// what is queued for the clients, closes the sockets and returns. Serve
// may be called once.
func (k *Kernel) Serve(ctx context.Context) error {
	if !k.serving.CompareAndSwap(false, true) {
		return errors.New("jupyter: Serve called twice or after Close")
	}
	defer close(k.served)
	k.status([]byte("{}"), "starting")
	var wg sync.WaitGroup
	wg.Add(3)
	go func() { defer wg.Done(); k.shellLoop() }()
	go func() { defer wg.Done(); k.controlLoop() }()
	go func() { defer wg.Done(); k.stdinLoop() }()
	worker := make(chan struct{})
	go func() { defer close(worker); k.shellWorker() }()

	var err error
	select {
	case <-ctx.Done():
		err = ctx.Err()
	case <-k.stopped:
	case <-k.root.Done():
	}
	k.Stop()
	k.cancelCell(ErrShutdown)
	// Give a cancelled cell a moment to finish its last output before
	// the queues are flushed; a cell that ignores its context is left.
	select {
	case <-worker:
	case <-time.After(k.linger):
	}
	k.closeSockets(k.linger)
	k.cancel()
	wg.Wait()
	return err
}

// Close stops the kernel and releases its sockets: it makes a running
// Serve return and waits for it, or, if Serve was never called, closes
// the sockets itself.
func (k *Kernel) Close() error {
	if k.serving.CompareAndSwap(false, true) {
		k.closeSockets(0)
		k.cancel()
		return nil
	}
	k.Stop()
	<-k.served
	return nil
}

// Stop makes Serve return as after a shutdown_request.
func (k *Kernel) Stop() {
	k.stopReq.Do(func() { close(k.stopped) })
}

func (k *Kernel) stopping() bool {
	select {
	case <-k.stopped:
		return true
	default:
		return false
	}
}

// closeSockets closes all sockets at once, each flushing for up to linger.
func (k *Kernel) closeSockets(linger time.Duration) {
	type closer interface{ Close(time.Duration) error }
	var cs []closer
	for _, r := range []*zsock.Router{k.shell, k.control, k.stdin} {
		if r != nil {
			cs = append(cs, r)
		}
	}
	if k.iopub != nil {
		cs = append(cs, k.iopub)
	}
	if k.hb != nil {
		cs = append(cs, k.hb)
	}
	var wg sync.WaitGroup
	for _, c := range cs {
		wg.Add(1)
		go func() { defer wg.Done(); c.Close(linger) }()
	}
	wg.Wait()
}

// Interrupt cancels the running cell's context with cause ErrInterrupted.
// It reports whether a cell was running.
func (k *Kernel) Interrupt() bool {
	k.execMu.Lock()
	defer k.execMu.Unlock()
	if k.cancelExec == nil {
		return false
	}
	k.interrupted = true
	k.cancelExec(ErrInterrupted)
	return true
}

func (k *Kernel) cancelCell(cause error) {
	k.execMu.Lock()
	defer k.execMu.Unlock()
	if k.cancelExec != nil {
		k.cancelExec(cause)
	}
}

// ---- receiving ----

func (k *Kernel) recv(r *zsock.Router, channel string) (*message, bool) {
	for {
		frames, err := r.Recv(k.root)
		if err != nil {
			return nil, false
		}
		m, err := parseMessage(frames, k.sign)
		if err != nil {
			k.dropLog.Printf("jupyter: %s: dropped a message: %v", channel, err)
			continue
		}
		m.channel = channel
		return m, true
	}
}

// shellLoop owns the shell socket's Recv and queues requests for the
// worker, so that requests keep being read (and can be aborted) while a
// cell runs.
func (k *Kernel) shellLoop() {
	for {
		m, ok := k.recv(k.shell, "shell")
		if !ok {
			return
		}
		m.seq = k.shellSeq.Add(1)
		select {
		case k.shellQ <- m:
		case <-k.root.Done():
			return
		}
	}
}

func (k *Kernel) controlLoop() {
	for {
		m, ok := k.recv(k.control, "control")
		if !ok {
			return
		}
		if k.stopping() {
			continue
		}
		k.handleControl(m)
	}
}

// stdinLoop reads and discards: the kernel never sends input_request, but
// a client's stray input_reply must not pile up.
func (k *Kernel) stdinLoop() {
	for {
		m, ok := k.recv(k.stdin, "stdin")
		if !ok {
			return
		}
		k.log.Printf("jupyter: stdin: ignored unexpected %s", m.header.MsgType)
	}
}

func (k *Kernel) shellWorker() {
	for {
		select {
		case m := <-k.shellQ:
			if k.stopping() {
				continue
			}
			if m.header.MsgType == "execute_request" && m.seq <= k.abortBefore {
				k.abortExecute(m)
				continue
			}
			k.handleShell(m)
		case <-k.stopped:
			return
		case <-k.root.Done():
			return
		}
	}
}

// ---- sending ----

func (k *Kernel) newHeader(msgType string) []byte {
	h := outHeader{
		MsgID:    k.session + "_" + strconv.FormatUint(k.seq.Add(1), 10),
		Session:  k.session,
		Username: k.user,
		Date:     time.Now().UTC().Format("2006-01-02T15:04:05.000000Z07:00"),
		MsgType:  msgType,
		Version:  ProtocolVersion,
	}
	b, _ := marshal(h)
	return b
}

// reply answers req on the socket it came from, echoing its identities.
func (k *Kernel) reply(req *message, msgType string, content any) {
	c, ok := content.(json.RawMessage)
	if !ok {
		var err error
		if c, err = marshal(content); err != nil {
			k.log.Printf("jupyter: cannot encode %s: %v", msgType, err)
			return
		}
	}
	frames := k.sign.frames(req.ids, k.newHeader(msgType), req.rawHeader, emptyObject, c, nil)
	r := k.shell
	if req.channel == "control" {
		r = k.control
	}
	switch err := r.Send(frames); err {
	case nil:
	case zsock.ErrQueueFull:
		// zsock logs the start and end of each overflow episode.
	default:
		k.log.Printf("jupyter: %s: %s to %q not sent: %v", req.channel, msgType, req.ids[0], err)
	}
}

// publish sends a message on iopub with the given parent header. It
// returns an error only when content cannot be encoded.
func (k *Kernel) publish(parent []byte, msgType string, content any) error {
	c, err := marshal(content)
	if err != nil {
		return err
	}
	topic := "kernel." + k.session + "." + msgType
	if msgType == "stream" {
		if s, ok := content.(streamContent); ok {
			topic = "stream." + s.Name
		}
	}
	frames := k.sign.frames([][]byte{[]byte(topic)}, k.newHeader(msgType), parent, emptyObject, c, nil)
	if err := k.iopub.Send(frames); err != nil {
		k.log.Printf("jupyter: iopub: %s not sent: %v", msgType, err)
	}
	return nil
}

func (k *Kernel) status(parent []byte, state string) {
	k.publish(parent, "status", map[string]string{"execution_state": state})
}

func newUUID() string {
	var b [16]byte
	rand.Read(b[:])
	b[6] = b[6]&0x0f | 0x40
	b[8] = b[8]&0x3f | 0x80
	h := hex.EncodeToString(b[:])
	return fmt.Sprintf("%s-%s-%s-%s-%s", h[:8], h[8:12], h[12:16], h[16:20], h[20:])
}
