package jupyter

import (
	"context"
	"errors"
	"strings"
	"unicode/utf8"
)

// Handler is the language side of a kernel: the cell interpreter plugs in
// here. The kernel calls Execute, Complete, Inspect and IsComplete from
// one goroutine, one call at a time, in the order the requests arrived, so
// a Handler needs no locking of its own for them. Info is called once,
// when the kernel starts.
//
// Text positions are byte offsets into the code string, as Go slices it.
// The protocol counts cursor positions in Unicode code points; the kernel
// converts in both directions, so a Handler never sees a code-point count.
//
// A panic in any method is recovered: in Execute it becomes an error reply
// (ename "InternalError"), elsewhere a reply with status "error"; the
// stack goes to the kernel's log and the kernel keeps serving. A panic in
// a goroutine the Handler starts itself cannot be recovered by the kernel.
type Handler interface {
	// Info describes the kernel and its language for kernel_info_reply.
	Info() KernelInfo

	// Execute runs one cell. Output produced on the way goes through out
	// (streams, displays, display updates, clear_output) and is published
	// at once. The returned bundle, if not nil, becomes the cell's
	// execute_result. A non-nil error becomes an error message and an
	// error reply; return an *ExecError to control its name, value and
	// traceback. ctx is cancelled when the user interrupts (an
	// interrupt_request on the control channel, or SIGINT when the kernel
	// was started by Run) and on shutdown; a long computation should check
	// it and return ctx.Err() or an error wrapping it. The kernel cannot
	// stop an Execute that ignores ctx.
	Execute(ctx context.Context, code string, out Output, opts ExecOptions) (*Bundle, error)

	// Complete proposes completions for the text at byte offset cursor.
	Complete(code string, cursor int) Completion

	// Inspect describes what is at byte offset cursor (a name's formula,
	// value, unit ...). detail is 0 for a short and 1 for a long
	// description. found reports whether there was anything to describe.
	Inspect(code string, cursor int, detail int) (b *Bundle, found bool)

	// IsComplete tells a console whether code is ready to run. status is
	// one of "complete", "incomplete", "invalid" or "unknown"; indent is a
	// hint for the next line and matters only for "incomplete".
	IsComplete(code string) (status, indent string)
}

// Evaluator is an optional extension of a Handler: when implemented, the
// user_expressions of an execute_request are evaluated after the cell and
// returned in the reply. Without it user_expressions is always {}.
type Evaluator interface {
	// Evaluate computes one expression in the interpreter's current state
	// and returns its representation.
	Evaluate(ctx context.Context, expr string) (*Bundle, error)
}

// Output receives what a running cell shows. Its methods are safe for
// concurrent use; messages keep the order of the calls. Calls made after
// Execute returned are dropped (and logged), since their request is over.
// For a silent execute_request every call is dropped.
type Output interface {
	// Stream appends text to the cell's "stdout" or "stderr" stream.
	Stream(name, text string)
	// Display shows a bundle (display_data). A non-empty displayID names
	// the display so that UpdateDisplay can replace it later.
	Display(b *Bundle, displayID string)
	// UpdateDisplay replaces every display shown under displayID
	// (update_display_data), e.g. a progress line that updates in place.
	UpdateDisplay(b *Bundle, displayID string)
	// ClearOutput clears the cell's output; with wait the clearing
	// happens when the next output arrives, which avoids flicker.
	ClearOutput(wait bool)
	// Payload adds an entry to the payload list of the execute_reply,
	// for example {"source": "ask_exit", "keepkernel": false}, which asks
	// a console to end the session. Payloads go with an "ok" reply only.
	Payload(p map[string]any)
}

// Bundle is a MIME bundle: representations of one value keyed by MIME
// type ("text/plain", "text/html", "image/svg+xml", "application/json"),
// with optional metadata (for example image sizes keyed by MIME type).
// Values must be JSON-encodable: strings for text and SVG, base64 strings
// for PNG, any JSON value for application/json.
type Bundle struct {
	Data     map[string]any
	Metadata map[string]any
}

// ExecError is an error a Handler returns to control the error message:
// Name and Value become ename and evalue, and Traceback the lines the
// front end prints (it may carry the source line and a caret). An empty
// Traceback is replaced by the single line "Name: Value".
//
// All three are sent as plain text: a terminal front end (jupyter
// console) prints them as they come, and an error line that quotes a
// cell could otherwise carry the cell's escape sequences into the
// user's terminal. Control characters other than tab and newline become
// their visible Unicode control pictures (ESC is sent as U+241B, "␛"),
// C1 controls and invalid UTF-8 become U+FFFD; each is still one
// character, so a caret under a quoted line stays in its column. ANSI
// colour codes are therefore not available in tracebacks.
type ExecError struct {
	Name      string
	Value     string
	Traceback []string
	// Headline shows the first line of the traceback in bold red, with the
	// ANSI SGR codes that front ends render in tracebacks (as IPython
	// colours its error lines): the classic Notebook prints a traceback
	// without them as plain text, less prominent than a warning on stderr.
	// The codes are added after the text is made safe to print.
	Headline bool
}

// headline wraps a traceback's first line in bold red for an *ExecError
// with Headline set.
func headline(err error, tb []string) []string {
	var ee *ExecError
	if !errors.As(err, &ee) || !ee.Headline || len(tb) == 0 {
		return tb
	}
	out := append([]string{"\x1b[1;31m" + tb[0] + "\x1b[0m"}, tb[1:]...)
	return out
}

func (e *ExecError) Error() string {
	if e.Name == "" {
		return e.Value
	}
	return e.Name + ": " + e.Value
}

// ExecOptions are the flags of an execute_request.
type ExecOptions struct {
	// Silent asks for no output at all: no execute_input, no output, no
	// execute_result, no history. Out discards everything.
	Silent bool
	// StoreHistory reports whether the cell counts: it is stored in the
	// history and advances the execution counter.
	StoreHistory bool
	// AllowStdin is as requested; the kernel itself never asks for input.
	AllowStdin bool
	// ExecutionCount is the cell's number: the counter after this cell
	// advanced it, or the current value when it does not count.
	ExecutionCount int
}

// Completion is the answer to a complete_request. Start and End are byte
// offsets of the text the matches replace; both equal to the cursor means
// insert at the cursor.
type Completion struct {
	Matches    []string
	Start, End int
	Metadata   map[string]any
}

// KernelInfo is what kernel_info_reply reports about the kernel.
type KernelInfo struct {
	Implementation        string // e.g. "nudge"
	ImplementationVersion string
	Banner                string
	HelpLinks             []HelpLink
	Language              LanguageInfo
}

// HelpLink is one entry of a front end's help menu.
type HelpLink struct {
	Text string `json:"text"`
	URL  string `json:"url"`
}

// LanguageInfo describes the kernel's language to front ends.
type LanguageInfo struct {
	Name              string `json:"name"`
	Version           string `json:"version"`
	MIMEType          string `json:"mimetype"`
	FileExtension     string `json:"file_extension"` // with the dot
	PygmentsLexer     string `json:"pygments_lexer,omitempty"`
	CodeMirrorMode    any    `json:"codemirror_mode,omitempty"` // string or object
	NbconvertExporter string `json:"nbconvert_exporter,omitempty"`
}

// errorFields turns any error into ename, evalue and traceback, the
// traceback never empty.
func errorFields(err error) (name, value string, tb []string) {
	var ee *ExecError
	if errors.As(err, &ee) {
		name, value, tb = ee.Name, ee.Value, ee.Traceback
	} else {
		name, value = "Error", err.Error()
	}
	if name == "" {
		name = "Error"
	}
	if len(tb) == 0 {
		tb = []string{name + ": " + value}
	}
	clean := make([]string, len(tb))
	for i, line := range tb {
		clean[i] = PlainText(line)
	}
	return PlainText(name), PlainText(value), clean
}

// PlainText makes s safe to print on a terminal (the kernel's tracebacks,
// and the command line's error lines, which quote the source): C0 controls other than
// tab and newline, and DEL, become their control pictures (U+2400 to
// U+2421); C1 controls and invalid UTF-8 become U+FFFD. Text without any
// of them is returned as it is.
func PlainText(s string) string {
	clean := true
	for _, r := range s {
		if unsafeRune(r) {
			clean = false
			break
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	for _, r := range s {
		switch {
		case !unsafeRune(r):
			b.WriteRune(r)
		case r < 0x20:
			b.WriteRune(0x2400 + r)
		case r == 0x7f:
			b.WriteRune(0x2421)
		default:
			b.WriteRune(utf8.RuneError)
		}
	}
	return b.String()
}

// unsafeRune reports whether r may not be printed as it is: a control
// character other than tab and newline, or an invalid byte (decoded as
// U+FFFD, which is replaced by itself).
func unsafeRune(r rune) bool {
	return r < 0x20 && r != '\t' && r != '\n' || r >= 0x7f && r <= 0x9f || r == utf8.RuneError
}
