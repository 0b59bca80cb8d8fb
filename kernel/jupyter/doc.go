// Package jupyter serves a notebook language to Jupyter front ends
// (Notebook, JupyterLab, nbconvert, console) over the Jupyter messaging
// protocol 5.3 on ZeroMQ transports, in pure Go.
//
// The language plugs in as a Handler; this package knows nothing about
// it. Run starts a kernel from the connection file Jupyter passes on the
// command line:
//
//	err := jupyter.Run(ctx, connFile, interp, logger)
//
// New and Serve do the same in two steps and let a test bind port 0 and
// read the ports actually bound from Connection.
//
// # Channels
//
// shell and control are ROUTER sockets, stdin a ROUTER that is read and
// ignored (the kernel never asks for input), iopub a PUB socket and the
// heartbeat an echo. One goroutine owns the receiving side of each
// socket; shell requests go through a queue to a single worker, so the
// Handler sees one call at a time while control requests (interrupt,
// shutdown, kernel_info) are answered during a long cell. Every request,
// kernel_info included, is framed by status busy and idle on iopub with
// the request as parent; replies carry the request's header bytes,
// unchanged, as parent_header and echo every routing identity. (A header
// that is not valid UTF-8 is the one exception: JSON text must be UTF-8,
// so each run of invalid bytes is echoed as U+FFFD.)
//
// # Execution
//
// The protocol layer owns the execution counter (it advances for requests
// that store history; silent forces store_history off) and the session's
// input history (history_request: tail, range, search with glob patterns,
// with or without the text/plain output). The history keeps at most 32 MiB
// of cells and outputs, oldest out first; a cell or output over 4 MiB is
// not kept, though its number is used. A search pattern (at most 256
// bytes) is matched in time linear in the text searched. An error returned by Execute
// becomes an error message and an error reply; an *ExecError chooses
// ename, evalue and traceback. A panic becomes an error reply named
// InternalError and the kernel keeps serving. After a failed cell whose
// request had stop_on_error (the default), the execute requests already
// received are answered without running, with status "error" and ename
// "Aborted": protocol 5.1 deprecated the status "abort" in favour of
// "error" (ipykernel still sends "aborted"; front ends accept both).
//
// An interrupt_request on control, or SIGINT under Run, cancels the
// running cell's context with cause ErrInterrupted; a cell that returns a
// plain error after that is reported as "Interrupted". SIGINT is taken
// with signal.Notify, not signal.Ignore (which child processes would
// inherit); the kernelspec should declare interrupt_mode "message".
// shutdown_request is answered on its channel and on iopub, followed by
// idle; then the kernel flushes its queues and Serve returns. With
// restart set the process exits just the same and the client starts a
// new one. A shutdown_request whose content does not decode is dropped
// like any request with bad content, and the kernel keeps running.
//
// Error names, values and traceback lines are sent as plain text: control
// characters become visible (see ExecError), so an error line that quotes
// a cell cannot carry the cell's escape sequences into a terminal.
//
// Cursor positions are Unicode code points on the wire and byte offsets
// in the Handler; the conversion happens here.
//
// # Robustness
//
// The sockets are this package's own (internal/zsock), built on zmq4's
// ZMTP handshake: zmq4's own sockets let one bad client stall the others
// (see the zsock package documentation for what happens there and why).
// Here every client connection has its own bounded send queue and writer
// goroutine:
//
//   - a subscriber or shell client that stops reading loses its own oldest
//     messages once its queue passes QueueBytes (default 64 MiB) and is
//     disconnected after StallTimeout (default 30s) without progress;
//     nobody else waits for it beyond one BackpressureWait (default 1s);
//   - a client that reads slowly but steadily slows the kernel down to
//     its pace instead (SoftQueueBytes, default 1 MiB), so output is not
//     lost and memory stays small;
//   - a connection that never completes its handshake is closed after
//     HandshakeTimeout (default 5s) and never delays another connection;
//     the handshake reads the greeting and one command frame of at most
//     16 KiB, whatever size a peer announces;
//   - before any key is checked, what a client can make the kernel hold
//     is bounded: one message by MaxMsgBytes (64 MiB on shell, 1 MiB on
//     control and stdin, 64 KiB on iopub and the heartbeat, with 96 bytes
//     counted per frame so that empty frames count too), all incoming
//     messages of a channel together by MaxInBytes (twice that; the
//     client with the largest unfinished message is dropped to make room
//     for a smaller one), and the connections of a channel by MaxPeers
//     (256); a message whose signature has the wrong length is refused
//     before its digest is computed, and dropped messages are logged at
//     most 10 times a second;
//   - a client cannot take over another client's replies by connecting
//     with its identity (jupyter_client uses the session id, which is no
//     secret): the newcomer gets a route of its own;
//   - each socket has its own locks, so a stuck client cannot hold up a
//     shutdown; at shutdown the queues are flushed and each connection is
//     half-closed and given Linger (default 500ms) to read to the end, so
//     the final idle is not lost to a reset;
//   - a message with a bad signature, without the delimiter, with fewer
//     than five frames after it, or whose header, parent, metadata or
//     content is not a JSON object, is dropped and logged, and runs
//     nothing (no busy, no reply); so is content of the wrong shape.
//
// Limits: memory per client is bounded by QueueBytes plus the message
// being written, per socket; a Handler that ignores its context cannot be
// interrupted (Go cannot stop a goroutine from outside), and at shutdown
// it is left running while Serve returns, so the process should exit when
// Run returns. Any local process can connect: it cannot run code without
// the key or exhaust the kernel's memory, but it can hold a channel's
// MaxPeers connections (locking out new clients there while it holds
// them) or make a large unfinished message of another client fail.
//
// References:
//   - Jupyter messaging protocol, jupyter_client documentation,
//     "Messaging in Jupyter" (versions 5.0 to 5.3).
//   - ZMTP 3.0, ZeroMQ RFC 23 (framing, greeting, NULL mechanism).
//   - HMAC: RFC 2104; test vectors RFC 4231.
package jupyter
