package kernel

import (
	"context"
	"io"
	"log"
	"os"
	"os/signal"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/nudge-dev/nudge/kernel/jupyter"
)

// Serve runs the Jupyter kernel on the connection file until the client shuts
// it down. Log lines go to logw.
func Serve(connFile string, logw io.Writer) error {
	ctx, stop := signal.NotifyContext(context.Background(), syscall.SIGTERM)
	defer stop()
	logger := log.New(logw, "nudge: ", log.LstdFlags)
	if env := os.Getenv("JPY_PARENT_PID"); env != "" {
		ctx = watchParent(ctx, logger, time.Second, parentPID(env))
	}
	in := New()
	in.DebugLog = logw
	return jupyter.Run(ctx, connFile, NewHandler(in), logger)
}

// parentPID returns the process JPY_PARENT_PID names: the Jupyter process
// that launched the kernel, which need not be the kernel's parent (a
// launcher may start it through a shell or a wrapper script). A value that
// is not a process id names the kernel's parent.
func parentPID(env string) int {
	if pid, err := strconv.Atoi(strings.TrimSpace(env)); err == nil && pid > 1 {
		return pid
	}
	return os.Getppid()
}

// watchParent returns a context that ends when process pid, the one that
// started the kernel (JPY_PARENT_PID), exits, checking every interval. A
// front end that dies, or exits before its shutdown_request leaves its
// socket, must not leave an orphaned kernel behind.
func watchParent(ctx context.Context, logger *log.Logger, every time.Duration, pid int) context.Context {
	ctx, cancel := context.WithCancel(ctx)
	direct := pid == os.Getppid() // the parent: when it exits, the kernel is reparented
	go func() {
		t := time.NewTicker(every)
		defer t.Stop()
		for {
			select {
			case <-ctx.Done():
				return
			case <-t.C:
				if gone(pid) || direct && os.Getppid() != pid {
					logger.Printf("the process that started this kernel (pid %d) has exited; shutting down", pid)
					cancel()
					return
				}
			}
		}
	}()
	return ctx
}

// Handler adapts an Interp to the Jupyter protocol layer.
type Handler struct {
	in       *Interp
	progress atomic.Int64 // numbers the progress lines of the session
	// console is set once a client asks is_complete: a terminal console
	// (jupyter console asks before every cell) prints every display and
	// ignores updates, so the session shows no progress lines.
	console atomic.Bool
	// now is the clock of progress lines (time.Now; tests set their own).
	now func() time.Time
	// onProgress, when set, receives every progress report instead of the
	// notebook's progress lines (the headless runner's terminal bar).
	onProgress func(label string, done, total int)
	// scans keeps what the last text of is_complete, complete and inspect
	// requests gave when scanned and parsed.
	scans scanCache
}

// NewHandler returns a jupyter.Handler running cells in in.
func NewHandler(in *Interp) *Handler { return &Handler{in: in, now: time.Now} }

var _ jupyter.Handler = (*Handler)(nil)

// Info describes nudge to Jupyter front ends.
func (h *Handler) Info() jupyter.KernelInfo {
	return jupyter.KernelInfo{
		Implementation:        "nudge",
		ImplementationVersion: Version,
		Banner:                "nudge " + Version + ": sensitivity analysis of cost models\nType a model (input x = 1 [kg] (±10%), y = 2 * x) and commands (drivers y, tornado y).",
		HelpLinks:             []jupyter.HelpLink{{Text: "nudge language reference", URL: "https://github.com/nudge-dev/nudge#language-reference"}},
		Language: jupyter.LanguageInfo{
			Name:          Language,
			Version:       Version,
			MIMEType:      "text/x-nudge",
			FileExtension: ".nudge",
			// No front end can load a highlighter of ours without a
			// package of its own (a Python package for Pygments, an
			// extension for JupyterLab). Julia's rules are the closest that
			// every front end has: # comments, numbers with _ and
			// exponents, double-quoted strings, ^ and Unicode operators
			// such as ± and ×; they mark no token of a model as an error.
			PygmentsLexer:  "julia",
			CodeMirrorMode: "julia",
		},
	}
}

// IsComplete tells a console whether the text is ready to run: incomplete
// when the parser would read the next line with it (syntax.Incomplete),
// invalid when it does not parse, else complete. Only consoles ask.
func (h *Handler) IsComplete(code string) (string, string) {
	h.console.Store(true)
	if strings.TrimSpace(code) == "" {
		return "complete", ""
	}
	if h.scans.incomplete(code) {
		return "incomplete", "    "
	}
	if _, err := h.scans.parse(code); err != nil {
		return "invalid", ""
	}
	return "complete", ""
}
