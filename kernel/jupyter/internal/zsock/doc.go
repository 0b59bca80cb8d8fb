// Package zsock provides the listening ZeroMQ sockets of a Jupyter kernel
// (ROUTER, PUB and an echo for the heartbeat) on top of the ZMTP 3.0
// handshake of github.com/go-zeromq/zmq4, with one bounded send queue and
// one writer goroutine per connected peer so that no peer can stall
// another.
//
// zmq4 (v0.17.0) does the greeting and the NULL security handshake
// (zmq4.Open); this package does the rest: accepting, framing, routing,
// subscriptions and flow control. It copies no zmq4 code.
//
// # Why not zmq4's own sockets
//
// Each of these was measured against zmq4 v0.17.0 with the scenarios the
// tests in kernel/jupyter use (a raw peer with a 4 KiB receive buffer
// that stops reading, or a TCP connection that never speaks):
//
//   - PUB: pubMWriter.run takes messages from one unbounded queue and
//     sendMsg writes each to every subscriber in turn, synchronously,
//     under one mutex and with no write deadline. A subscriber that stops
//     reading blocks that loop once its TCP window closes; every other
//     subscriber waits and the queue grows without bound. OptionHWM caps
//     the shared queue and then drops for everybody ("TODO per subscriber
//     hwm" in the source); WithTimeout only bounds the context of Send,
//     which for PUB never blocks. Measured: of 40 one-MiB messages and a
//     final one, a healthy subscriber received 2 in 10 seconds.
//   - ROUTER: routerMWriter.write holds its mutex while it waits for
//     SendMsg to the addressed peer, and SendMsg writes to the net.Conn
//     with no deadline (the context is not consulted). A client that does
//     not read its replies blocks Send, and with it every other Send on
//     the socket. Measured: with 40 one-MiB replies addressed to a client
//     that does not read, a reply to a second client was still not sent
//     after 3 seconds.
//   - Accept: socket.accept calls Open, a blocking greeting and handshake
//     with no deadline, inside the accept loop. One TCP connection that
//     sends nothing blocks every later connection on that port until it
//     closes. Measured: a second client was not served within 3 seconds.
//   - Close cancels the socket and closes its connections at once, while
//     the PUB writer may still hold queued messages: in an earlier probe
//     kernel the final idle of a shutdown went missing in most trials.
//   - SocketType.IsCompatible panics on an unknown Socket-Type and
//     Property.Write slices past the end of a truncated metadata
//     property; both run during the handshake, so one malformed
//     handshake took the whole process down.
//   - Conn.read, which the handshake uses to read the peer's READY
//     command, allocates a frame's announced size before any of its body
//     arrives, and appends frames for as long as the MORE flag is set: a
//     greeting and nine bytes announcing 2^40 bytes made the process die
//     of a fatal out-of-memory error.
//   - zmq4 logs to standard error unless given a logger.
//
// # What this package does instead
//
//   - The handshake of each new connection runs on its own goroutine
//     under HandshakeTimeout, with zmq4's panics recovered. zmq4 reads
//     through a guard that lets through the 64-byte greeting and one
//     command frame of at most MaxHandshakeFrame bytes (16 KiB), checked
//     before zmq4 sees the size, and nothing else.
//   - A socket has at most MaxPeers connections (default 256), those in
//     their handshake included; more are closed at once.
//   - A ROUTER peer that announces an identity already connected gets a
//     routing identity of its own: identities are no secret, so a new
//     connection never takes over another's route (and its replies).
//   - A subscriber holds at most 64 topics of at most 255 bytes.
//   - Each queued message counts QueueOverhead (128 bytes) against
//     QueueBytes besides its own size, so a peer that sends tiny
//     messages and never reads the answers (a heartbeat flood) fills a
//     queue bounded in memory, not only in bytes on the wire.
//   - What a peer can make the socket log is rate-limited (RateLog).
//   - Each peer has a queue bounded by QueueMsgs and QueueBytes; when a
//     new message does not fit, the peer's oldest queued messages are
//     dropped (counted in Stats and PeerStats, logged once per episode),
//     so a client that falls behind still gets the latest ones.
//   - Each peer's writer has StallTimeout to make progress on each write;
//     a peer that stops reading is disconnected and its queue freed.
//   - A sender waits up to BackpressureWait for a peer with more than
//     SoftQueueBytes queued that is still writing, so a slow but live
//     client slows the sender down rather than losing messages or
//     growing memory; a peer that has written nothing for
//     BackpressureWait is not waited for.
//   - A PUB message is encoded once and shared by all subscribers' queues
//     (frames above 2 KiB are referenced, not copied).
//   - Close flushes the queues, half-closes each connection and waits for
//     the peer to read to the end and hang up, each wait bounded by the
//     linger given, before it closes everything.
//   - Incoming messages are bounded by MaxMsgBytes, counting FrameOverhead
//     (96 bytes) per frame besides its body, so that a stream of empty
//     frames costs as much as the memory it takes; memory is allocated
//     as bytes arrive, not as a frame header announces.
//   - All incoming messages of a socket, being read or read and not yet
//     taken, are bounded together by MaxInBytes (default twice
//     MaxMsgBytes), counted before each frame body is read. When a frame
//     does not fit, the peer with the largest unfinished message is
//     dropped if that message is larger than the one asking would
//     become; otherwise the asking peer waits up to StallTimeout and is
//     dropped. Memory for incoming data is therefore bounded whatever
//     the number of peers, and peers that start large messages and stall
//     cannot lock out the small messages of others (they can still make
//     a large message of another peer fail: a local denial of service
//     that only a limit on who may connect can prevent).
//
// Limits: the greeting announces ZMTP 3.0 (zmq4's version), so peers
// subscribe with 3.0 subscription messages; the 3.1 SUBSCRIBE and CANCEL
// commands are understood too. Only the NULL mechanism is supported
// (Jupyter signs messages itself). A PING command is ignored: it belongs
// to ZMTP 3.1 and a peer speaking 3.0 does not send it.
//
// References:
//   - ZMTP 3.0, ZeroMQ RFC 23/ZMTP (greeting, framing, NULL mechanism,
//     subscriptions as messages); ZMTP 3.1, RFC 37 (SUBSCRIBE, CANCEL).
package zsock
