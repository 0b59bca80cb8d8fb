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
// unchanged, as parent_header and echo every routing identity.
//
// # Execution
//
// The protocol layer owns the execution counter (it advances for requests
// that store history; silent forces store_history off) and the session's
// input history (history_request: tail, range, search with glob patterns,
// with or without the text/plain output). An error returned by Execute
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
// new one.
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
// Run returns.
//
// References:
//   - Jupyter messaging protocol, jupyter_client documentation,
//     "Messaging in Jupyter" (versions 5.0 to 5.3).
//   - ZMTP 3.0, ZeroMQ RFC 23 (framing, greeting, NULL mechanism).
//   - HMAC: RFC 2104; test vectors RFC 4231.
package jupyter
