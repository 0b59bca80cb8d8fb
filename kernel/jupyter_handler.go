package kernel

import (
	"context"
	"fmt"
	"html"
	"io"
	"log"
	"os"
	"os/signal"
	"sort"
	"strings"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/unit"
)

// Serve runs the Jupyter kernel on the connection file until the client shuts
// it down. Log lines go to logw.
func Serve(connFile string, logw io.Writer) error {
	ctx, stop := signal.NotifyContext(context.Background(), syscall.SIGTERM)
	defer stop()
	logger := log.New(logw, "nudge: ", log.LstdFlags)
	if os.Getenv("JPY_PARENT_PID") != "" {
		ctx = watchParent(ctx, logger, time.Second)
	}
	return jupyter.Run(ctx, connFile, NewHandler(New()), logger)
}

// watchParent returns a context that ends when the process that started the
// kernel exits. A Jupyter launcher sets JPY_PARENT_PID; a front end that dies,
// or exits before its shutdown_request leaves its socket, must not leave an
// orphaned kernel behind.
func watchParent(ctx context.Context, logger *log.Logger, every time.Duration) context.Context {
	ctx, cancel := context.WithCancel(ctx)
	parent := os.Getppid()
	go func() {
		t := time.NewTicker(every)
		defer t.Stop()
		for {
			select {
			case <-ctx.Done():
				return
			case <-t.C:
				if os.Getppid() != parent {
					logger.Printf("the process that started this kernel (pid %d) has exited; shutting down", parent)
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
	if syntax.Incomplete(code) {
		return "incomplete", "    "
	}
	if _, _, err := syntax.Parse("", []byte(code)); err != nil {
		return "invalid", ""
	}
	return "complete", ""
}

func isWordByte(c byte) bool {
	return c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c >= 0x80
}

// wordAt returns the word around byte offset cursor: its start and end.
func wordAt(code string, cursor int) (start, end int) {
	if cursor > len(code) {
		cursor = len(code)
	}
	start, end = cursor, cursor
	for start > 0 && isWordByte(code[start-1]) {
		start--
	}
	for end < len(code) && isWordByte(code[end]) {
		end++
	}
	return start, end
}

// Complete proposes names, functions, commands, units and distributions.
func (h *Handler) Complete(code string, cursor int) jupyter.Completion {
	if cursor > len(code) {
		cursor = len(code)
	}
	start, _ := wordAt(code, cursor)
	prefix := code[start:cursor]
	lineStart := strings.LastIndexByte(code[:cursor], '\n') + 1
	line := code[lineStart:cursor]
	var cands []string
	switch {
	case strings.Count(line, "[") > strings.Count(line, "]"):
		// Inside a unit: the unit symbols, completed after the last operator.
		ustart := cursor
		for ustart > lineStart && !strings.ContainsRune("[*/(· ", rune(code[ustart-1])) {
			ustart--
		}
		start, prefix = ustart, code[ustart:cursor]
		cands = unit.Symbols()
	case strings.HasSuffix(strings.TrimRight(code[lineStart:start], " "), "~"):
		for _, d := range sens.Distributions {
			cands = append(cands, d.Name)
		}
	default:
		cands = append(cands, h.in.Model.Names()...)
		cands = append(cands, h.in.Model.ScenarioNames()...)
		// Names declared in the cell itself, before it has run.
		_, stmts, _ := syntax.Parse("", []byte(code))
		for _, st := range stmts {
			switch st := st.(type) {
			case *syntax.InputStmt:
				cands = append(cands, st.Name.Name)
			case *syntax.FormulaStmt:
				cands = append(cands, st.Name.Name)
			case *syntax.CommandStmt:
				if st.Verb == "scenario" && st.Name != nil {
					cands = append(cands, st.Name.Name)
				}
			}
		}
		for _, f := range sens.Functions {
			cands = append(cands, f.Name)
		}
		cands = append(cands, "pi")
		if strings.TrimSpace(code[lineStart:start]) == "" {
			cands = append(cands, syntax.Verbs...)
			cands = append(cands, "input")
		} else {
			cands = append(cands, "over", "across", "and", "or", "not")
		}
	}
	seen := map[string]bool{}
	var matches []string
	for _, c := range cands {
		if strings.HasPrefix(c, prefix) && !seen[c] {
			seen[c] = true
			matches = append(matches, c)
		}
	}
	sort.Strings(matches)
	return jupyter.Completion{Matches: matches, Start: start, End: cursor, Metadata: map[string]any{}}
}

// Inspect describes the name under the cursor: an input's value, unit, range
// and distribution; a formula's text, value, unit and top drivers; a function,
// distribution or command's documentation.
func (h *Handler) Inspect(code string, cursor int, detail int) (*jupyter.Bundle, bool) {
	start, end := wordAt(code, cursor)
	if start == end && cursor > 0 {
		start, end = wordAt(code, cursor-1)
	}
	word := code[start:end]
	if word == "" {
		return nil, false
	}
	text := h.describe(word, detail)
	if text == "" {
		return nil, false
	}
	return &jupyter.Bundle{Data: map[string]any{
		"text/plain": text,
		"text/html":  "<pre>" + html.EscapeString(text) + "</pre>",
	}, Metadata: map[string]any{}}, true
}

func (h *Handler) describe(word string, detail int) string {
	if prog, err := h.in.Model.Compile(); err == nil {
		if in, f := prog.Lookup(word); in != nil {
			s := fmt.Sprintf("input %s = %s\nrange: %s .. %s (%s)", in.Name, unit.Format(in.Value, in.Unit),
				unit.Format(in.Low, in.Unit), unit.Format(in.High, in.Unit), in.Source)
			if in.Dist != nil {
				ps := make([]string, len(in.Dist.Params()))
				for i, v := range in.Dist.Params() {
					ps[i] = unit.Format(v, "")
				}
				s += fmt.Sprintf("\ndistribution: %s(%s), mean %s, sd %s", in.Dist.Name(), strings.Join(ps, ", "),
					unit.Format(in.Dist.Mean(), in.Unit), unit.Format(in.Dist.StdDev(), in.Unit))
			}
			return s + fmt.Sprintf("\ndeclared at %s", in.Pos)
		} else if f != nil {
			s := fmt.Sprintf("%s = %s", f.Name, f.Text)
			if f.Declared {
				s += "  [" + f.Unit + "]"
			}
			if pr, err := prog.Problem(f.Name); err == nil {
				if d, err := sens.Drivers(pr, nil); err == nil {
					s += "\nvalue: " + unit.Format(d.Value, d.Unit)
					n := 3
					if detail > 0 {
						n = len(d.Inputs)
					}
					el := unit.Fixed("", 4)
					var top []string
					for i, x := range d.Inputs {
						if i >= n || x.Elasticity == 0 {
							break
						}
						top = append(top, fmt.Sprintf("%s (elasticity %s)", x.Name, el.Signed(x.Elasticity)))
					}
					if len(top) > 0 {
						s += "\ntop drivers: " + strings.Join(top, ", ")
					}
				} else {
					s += "\nvalue: " + err.Error()
				}
			}
			return s + fmt.Sprintf("\ndefined at %s", f.Pos)
		}
	}
	for _, fn := range sens.Functions {
		if fn.Name == word {
			return fmt.Sprintf("function %s: %s", fn.Name, fn.Doc)
		}
	}
	if d := sens.LookupDist(word); d != nil {
		return fmt.Sprintf("distribution %s(%s): %s\nexample: %s", d.Name, strings.Join(d.Params, ", "), d.Doc, d.Example)
	}
	if c := commands[word]; c != nil {
		return "command " + c.Usage() + ": " + c.Doc + ". Example: " + c.Example
	}
	return ""
}
