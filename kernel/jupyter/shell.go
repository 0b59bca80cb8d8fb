package jupyter

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"runtime/debug"
	"strings"
	"sync"
	"unicode/utf8"
)

// handleShell serves one shell request.
func (k *Kernel) handleShell(m *message) {
	switch m.header.MsgType {
	case "execute_request":
		k.execute(m)
	case "kernel_info_request":
		k.kernelInfoRequest(m)
	case "complete_request":
		k.complete(m)
	case "inspect_request":
		k.inspect(m)
	case "is_complete_request":
		k.isComplete(m)
	case "history_request":
		k.historyRequest(m)
	case "comm_info_request":
		k.commInfo(m)
	case "comm_open":
		k.commOpen(m)
	case "shutdown_request":
		k.shutdown(m)
	case "interrupt_request":
		k.interruptRequest(m)
	case "connect_request":
		k.connect(m)
	default:
		// comm_msg, comm_close and anything unknown: no reply is due
		// (the spec lets a kernel ignore what it does not handle), but
		// the client still sees busy and idle.
		k.serveRequest(m, nil, func() {
			if m.header.MsgType != "comm_msg" && m.header.MsgType != "comm_close" {
				k.log.Printf("jupyter: shell: ignored %s", m.header.MsgType)
			}
		})
	}
}

// handleControl serves one control request. Only requests that do not
// call the Handler are served here, so the Handler never runs two calls at
// once; anything else is acknowledged with busy and idle and logged.
func (k *Kernel) handleControl(m *message) {
	switch m.header.MsgType {
	case "kernel_info_request":
		k.kernelInfoRequest(m)
	case "shutdown_request":
		k.shutdown(m)
	case "interrupt_request":
		k.interruptRequest(m)
	case "connect_request":
		k.connect(m)
	case "comm_info_request":
		k.commInfo(m)
	default:
		k.serveRequest(m, nil, func() {
			k.log.Printf("jupyter: control: ignored %s", m.header.MsgType)
		})
	}
}

// serveRequest decodes the request content into req (when not nil) and
// runs f between a busy and an idle status published with the request as
// parent. Content that does not decode drops the request, logged, and
// serveRequest reports false.
func (k *Kernel) serveRequest(m *message, req any, f func()) bool {
	if req != nil {
		if err := json.Unmarshal(m.content, req); err != nil {
			k.log.Printf("jupyter: %s: dropped %s with bad content: %v", m.channel, m.header.MsgType, err)
			return false
		}
	}
	k.status(m.rawHeader, "busy")
	defer k.status(m.rawHeader, "idle")
	f()
	return true
}

// safe calls f and turns a panic into an error, logging the stack.
func (k *Kernel) safe(what string, f func()) (err error) {
	defer func() {
		if r := recover(); r != nil {
			k.log.Printf("jupyter: panic in Handler.%s: %v\n%s", what, r, debug.Stack())
			v := what + " failed: " + strings.Join(strings.Fields(fmt.Sprint(r)), " ") // one line
			err = &ExecError{
				Name:  "InternalError",
				Value: v,
				Traceback: []string{
					"InternalError: " + v,
					"This is a bug in the kernel. It recovered and keeps running; the details are in its log.",
				},
			}
		}
	}()
	f()
	return nil
}

// replyError answers with status "error".
func (k *Kernel) replyError(m *message, msgType string, err error) {
	name, value, tb := errorFields(err)
	k.reply(m, msgType, map[string]any{"status": "error", "ename": name, "evalue": value, "traceback": tb})
}

// ---- execute ----

type executeRequest struct {
	Code            string                     `json:"code"`
	Silent          bool                       `json:"silent"`
	StoreHistory    *bool                      `json:"store_history"`
	UserExpressions map[string]json.RawMessage `json:"user_expressions"`
	AllowStdin      *bool                      `json:"allow_stdin"`
	StopOnError     *bool                      `json:"stop_on_error"`
}

type streamContent struct {
	Name string `json:"name"`
	Text string `json:"text"`
}

type displayContent struct {
	Data      map[string]any `json:"data"`
	Metadata  map[string]any `json:"metadata"`
	Transient map[string]any `json:"transient,omitempty"`
}

type executeResult struct {
	ExecutionCount int            `json:"execution_count"`
	Data           map[string]any `json:"data"`
	Metadata       map[string]any `json:"metadata"`
}

type errorContent struct {
	Ename     string   `json:"ename"`
	Evalue    string   `json:"evalue"`
	Traceback []string `json:"traceback"`
}

// execute runs one execute_request:
//
//	busy, execute_input, outputs, execute_result or error,
//	execute_reply, idle
//
// with execute_input, outputs, execute_result and error left out when the
// request is silent. The execution counter advances only for a request
// that stores history (store_history defaults to true and silent forces
// it to false). When the cell fails and stop_on_error (default true) is
// set, every execute_request received up to then is to be aborted: the
// cut (Kernel.abortBefore) is taken before the error reply goes out, so a
// request the front end sends once it has seen that reply always runs.
func (k *Kernel) execute(m *message) {
	var req executeRequest
	k.serveRequest(m, &req, func() {
		parent := m.rawHeader
		store := !req.Silent && (req.StoreHistory == nil || *req.StoreHistory)
		stopOnError := req.StopOnError == nil || *req.StopOnError
		if store {
			k.count++
			if !k.hist.add(k.count, req.Code) {
				k.log.Printf("jupyter: cell %d (%d bytes) is too large to keep in the history", k.count, len(req.Code))
			}
		}
		n := k.count
		if !req.Silent {
			k.publish(parent, "execute_input", map[string]any{"code": req.Code, "execution_count": n})
		}
		opts := ExecOptions{
			Silent:         req.Silent,
			StoreHistory:   store,
			AllowStdin:     req.AllowStdin == nil || *req.AllowStdin,
			ExecutionCount: n,
		}

		ctx, cancel := context.WithCancelCause(k.root)
		k.execMu.Lock()
		k.cancelExec, k.interrupted = cancel, false
		k.execMu.Unlock()

		out := &cellOutput{k: k, parent: parent, silent: req.Silent}
		var result *Bundle
		var err error
		if perr := k.safe("Execute", func() { result, err = k.h.Execute(ctx, req.Code, out, opts) }); perr != nil {
			result, err = nil, perr
		}
		out.finish()
		if err == nil && result != nil && !req.Silent {
			data, meta := bundleMaps(result)
			if perr := k.publish(parent, "execute_result", executeResult{n, data, meta}); perr != nil {
				err = &ExecError{Name: "EncodingError", Value: "the result cannot be sent: " + perr.Error()}
			} else if text, ok := data["text/plain"].(string); ok && store {
				k.hist.setOutput(n, text)
			}
		}
		ue := k.userExpressions(ctx, req.UserExpressions)

		k.execMu.Lock()
		interrupted := k.interrupted
		k.cancelExec, k.interrupted = nil, false
		k.execMu.Unlock()
		cancel(nil)

		if err == nil {
			k.reply(m, "execute_reply", map[string]any{
				"status": "ok", "execution_count": n, "user_expressions": ue, "payload": out.payloads(),
			})
			return
		}
		var ee *ExecError
		if interrupted && !errors.As(err, &ee) {
			err = &ExecError{Name: "Interrupted", Value: "the cell was interrupted", Traceback: []string{"Interrupted: the cell was stopped by the user"}}
		}
		if stopOnError {
			k.abortBefore = k.shellSeq.Load()
		}
		name, value, tb := errorFields(err)
		tb = headline(err, tb)
		if !req.Silent {
			k.publish(parent, "error", errorContent{name, value, tb})
		}
		k.reply(m, "execute_reply", map[string]any{
			"status": "error", "execution_count": n,
			"ename": name, "evalue": value, "traceback": tb,
			"user_expressions": ue, "payload": []any{},
		})
	})
}

// abortExecute answers a queued execute_request without running it, after
// an earlier cell failed with stop_on_error. Protocol 5.1 deprecated the
// status "abort" in favour of "error", so the reply is an error reply
// (ename "Aborted"); no error message goes to iopub, the cell just does
// not run, and the execution counter does not move.
func (k *Kernel) abortExecute(m *message) {
	k.serveRequest(m, nil, func() {
		k.reply(m, "execute_reply", map[string]any{
			"status": "error", "execution_count": k.count,
			"ename": "Aborted", "evalue": "not run because an earlier cell failed",
			"traceback":        []string{"Aborted: not run because an earlier cell failed"},
			"user_expressions": map[string]any{}, "payload": []any{},
		})
	})
}

// userExpressions evaluates the request's user_expressions when the
// Handler is an Evaluator; otherwise the result is empty.
func (k *Kernel) userExpressions(ctx context.Context, exprs map[string]json.RawMessage) map[string]any {
	out := map[string]any{}
	ev, ok := k.h.(Evaluator)
	if !ok || len(exprs) == 0 {
		return out
	}
	for name, raw := range exprs {
		var expr string
		var b *Bundle
		err := json.Unmarshal(raw, &expr)
		if err == nil {
			if perr := k.safe("Evaluate", func() { b, err = ev.Evaluate(ctx, expr) }); perr != nil {
				err = perr
			}
		}
		if err != nil {
			name2, value, tb := errorFields(err)
			out[name] = map[string]any{"status": "error", "ename": name2, "evalue": value, "traceback": tb}
			continue
		}
		data, meta := bundleMaps(b)
		out[name] = map[string]any{"status": "ok", "data": data, "metadata": meta}
	}
	return out
}

func bundleMaps(b *Bundle) (data, meta map[string]any) {
	if b != nil {
		data, meta = b.Data, b.Metadata
	}
	if data == nil {
		data = map[string]any{}
	}
	if meta == nil {
		meta = map[string]any{}
	}
	return data, meta
}

// cellOutput is the Output of one running cell; everything it publishes
// has the execute_request as parent.
type cellOutput struct {
	k      *Kernel
	parent []byte
	silent bool

	mu      sync.Mutex
	done    bool
	payload []any
}

func (o *cellOutput) Payload(p map[string]any) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.done {
		o.k.log.Printf("jupyter: payload after its cell finished: dropped")
		return
	}
	o.payload = append(o.payload, p)
}

// payloads returns the payload list of the reply, never nil.
func (o *cellOutput) payloads() []any {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.payload == nil {
		return []any{}
	}
	return o.payload
}

func (o *cellOutput) finish() {
	o.mu.Lock()
	o.done = true
	o.mu.Unlock()
}

func (o *cellOutput) emit(msgType string, content any) {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.silent {
		return
	}
	if o.done {
		o.k.log.Printf("jupyter: %s after its cell finished: dropped", msgType)
		return
	}
	if err := o.k.publish(o.parent, msgType, content); err != nil {
		o.k.log.Printf("jupyter: cannot encode %s: %v", msgType, err)
		o.k.publish(o.parent, "stream", streamContent{"stderr", fmt.Sprintf("kernel: %s not shown: %v\n", msgType, err)})
	}
}

func (o *cellOutput) Stream(name, text string) {
	if text == "" {
		return
	}
	if name != "stdout" && name != "stderr" {
		o.k.log.Printf("jupyter: stream %q is neither stdout nor stderr; sent as stdout", name)
		name = "stdout"
	}
	o.emit("stream", streamContent{name, text})
}

func (o *cellOutput) Display(b *Bundle, displayID string) {
	data, meta := bundleMaps(b)
	c := displayContent{Data: data, Metadata: meta}
	if displayID != "" {
		c.Transient = map[string]any{"display_id": displayID}
	}
	o.emit("display_data", c)
}

func (o *cellOutput) UpdateDisplay(b *Bundle, displayID string) {
	if displayID == "" {
		o.k.log.Printf("jupyter: update_display_data without a display id: dropped")
		return
	}
	data, meta := bundleMaps(b)
	o.emit("update_display_data", displayContent{data, meta, map[string]any{"display_id": displayID}})
}

func (o *cellOutput) ClearOutput(wait bool) {
	o.emit("clear_output", map[string]bool{"wait": wait})
}

// ---- the other requests ----

func (k *Kernel) kernelInfo() ([]byte, error) {
	var ki KernelInfo
	if err := k.safe("Info", func() { ki = k.h.Info() }); err != nil {
		return nil, err
	}
	links := ki.HelpLinks
	if links == nil {
		links = []HelpLink{}
	}
	return marshal(map[string]any{
		"status":                 "ok",
		"protocol_version":       ProtocolVersion,
		"implementation":         ki.Implementation,
		"implementation_version": ki.ImplementationVersion,
		"language_info":          ki.Language,
		"banner":                 ki.Banner,
		"help_links":             links,
		"debugger":               false,
	})
}

func (k *Kernel) kernelInfoRequest(m *message) {
	k.serveRequest(m, nil, func() {
		k.reply(m, "kernel_info_reply", json.RawMessage(k.info))
	})
}

type cursorRequest struct {
	Code        string `json:"code"`
	CursorPos   *int   `json:"cursor_pos"`
	DetailLevel int    `json:"detail_level"`
}

// cursor is the request's cursor as a byte offset (end of code if absent).
func (r *cursorRequest) cursor() int {
	if r.CursorPos == nil {
		return len(r.Code)
	}
	return byteOffset(r.Code, *r.CursorPos)
}

func (k *Kernel) complete(m *message) {
	var req cursorRequest
	k.serveRequest(m, &req, func() {
		cur := req.cursor()
		var c Completion
		if err := k.safe("Complete", func() { c = k.h.Complete(req.Code, cur) }); err != nil {
			k.replyError(m, "complete_reply", err)
			return
		}
		start, end := clampRange(c.Start, c.End, len(req.Code))
		matches := c.Matches
		if matches == nil {
			matches = []string{}
		}
		meta := c.Metadata
		if meta == nil {
			meta = map[string]any{}
		}
		k.reply(m, "complete_reply", map[string]any{
			"status":       "ok",
			"matches":      matches,
			"cursor_start": codePoints(req.Code, start),
			"cursor_end":   codePoints(req.Code, end),
			"metadata":     meta,
		})
	})
}

func clampRange(start, end, n int) (int, int) {
	start = max(0, min(start, n))
	end = max(0, min(end, n))
	if end < start {
		start, end = end, start
	}
	return start, end
}

func (k *Kernel) inspect(m *message) {
	var req cursorRequest
	k.serveRequest(m, &req, func() {
		var b *Bundle
		var found bool
		if err := k.safe("Inspect", func() { b, found = k.h.Inspect(req.Code, req.cursor(), req.DetailLevel) }); err != nil {
			k.replyError(m, "inspect_reply", err)
			return
		}
		data, meta := bundleMaps(b)
		k.reply(m, "inspect_reply", map[string]any{"status": "ok", "found": found, "data": data, "metadata": meta})
	})
}

func (k *Kernel) isComplete(m *message) {
	var req struct {
		Code string `json:"code"`
	}
	k.serveRequest(m, &req, func() {
		var status, indent string
		if err := k.safe("IsComplete", func() { status, indent = k.h.IsComplete(req.Code) }); err != nil {
			status = "unknown"
		}
		content := map[string]any{"status": status}
		switch status {
		case "incomplete":
			content["indent"] = indent
		case "complete", "invalid", "unknown":
		default:
			k.log.Printf("jupyter: IsComplete returned status %q; sent as unknown", status)
			content["status"] = "unknown"
		}
		k.reply(m, "is_complete_reply", content)
	})
}

func (k *Kernel) historyRequest(m *message) {
	var req historyRequest
	k.serveRequest(m, &req, func() {
		h, err := k.hist.query(req)
		if err != nil {
			k.replyError(m, "history_reply", &ExecError{Name: "BadRequest", Value: err.Error()})
			return
		}
		k.reply(m, "history_reply", map[string]any{"status": "ok", "history": h})
	})
}

func (k *Kernel) commInfo(m *message) {
	k.serveRequest(m, nil, func() {
		k.reply(m, "comm_info_reply", map[string]any{"status": "ok", "comms": map[string]any{}})
	})
}

// commOpen refuses every comm: the kernel has no comm targets, and the
// spec asks a kernel that does not know a target to close the comm at
// once so that the front end does not keep a dangling one.
func (k *Kernel) commOpen(m *message) {
	var req struct {
		CommID     string `json:"comm_id"`
		TargetName string `json:"target_name"`
	}
	k.serveRequest(m, &req, func() {
		k.log.Printf("jupyter: comm_open for unknown target %q: closed", req.TargetName)
		k.publish(m.rawHeader, "comm_close", map[string]any{"comm_id": req.CommID, "data": map[string]any{}})
	})
}

// shutdown replies (on the request's channel and, for other clients, on
// iopub), publishes idle, then stops the kernel; Serve flushes the queues
// and returns. With restart the kernel exits just the same: the client
// that asked starts a new process.
//
// A shutdown_request whose content does not decode (restart not a
// boolean, content not an object) is dropped like any other request with
// bad content: no reply, and the kernel keeps running. A request the
// kernel could not read is not acted on, least of all by ending the
// session and its state; and the messaging protocol lets a client that
// gets no shutdown_reply fall back on stopping the process itself
// (jupyter_client's KernelManager waits, then terminates it).
func (k *Kernel) shutdown(m *message) {
	var req struct {
		Restart bool `json:"restart"`
	}
	if k.serveRequest(m, &req, func() {
		content := map[string]any{"status": "ok", "restart": req.Restart}
		k.reply(m, "shutdown_reply", content)
		k.publish(m.rawHeader, "shutdown_reply", content)
	}) {
		k.Stop()
	}
}

func (k *Kernel) interruptRequest(m *message) {
	k.serveRequest(m, nil, func() {
		k.Interrupt()
		k.reply(m, "interrupt_reply", map[string]any{"status": "ok"})
	})
}

// connect answers the deprecated connect_request with the bound ports.
func (k *Kernel) connect(m *message) {
	k.serveRequest(m, nil, func() {
		k.reply(m, "connect_reply", map[string]any{
			"status":       "ok",
			"shell_port":   k.ci.ShellPort,
			"iopub_port":   k.ci.IOPubPort,
			"stdin_port":   k.ci.StdinPort,
			"control_port": k.ci.ControlPort,
			"hb_port":      k.ci.HBPort,
		})
	})
}

// byteOffset converts a position in Unicode code points to a byte offset
// into s, clamped to s.
func byteOffset(s string, cp int) int {
	i := 0
	for n := 0; n < cp && i < len(s); n++ {
		_, w := utf8.DecodeRuneInString(s[i:])
		i += w
	}
	return i
}

// codePoints converts a byte offset into s to a count of code points; an
// offset inside a character counts from that character's start.
func codePoints(s string, off int) int {
	off = max(0, min(off, len(s)))
	for off > 0 && off < len(s) && !utf8.RuneStart(s[off]) {
		off--
	}
	return utf8.RuneCountInString(s[:off])
}
