// Package kernel is the cell interpreter of nudge: it turns cell text into
// results and each result into a MIME bundle. The same interpreter serves the
// Jupyter kernel (kernel/jupyter), the headless notebook runner and the command
// line (kernel/cmd/nudge), so every front gives the same numbers and the same
// JSON.
package kernel

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime/debug"
	"strings"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
)

// Sink receives what a cell produces, in order.
type Sink interface {
	// Stream writes text to "stdout" or "stderr".
	Stream(name, text string)
	// Result shows a result. last is true for the value of a bare expression
	// that ends the cell (Jupyter's execute_result).
	Result(r *render.Result, last bool)
	// Progress reports the progress of a long analysis: id names it, done of
	// total units of work are finished; done == total closes it.
	Progress(id, label string, done, total int)
}

// Interp is the state of one session: the model and the counters. It is not
// safe for concurrent use.
type Interp struct {
	Model *sens.Model
	// Opts say how results are drawn; the charts command changes them.
	Opts render.Options
	// Dir is the directory a table's file is read relative to: the model
	// file's (RunFile sets it) or the notebook's, where Jupyter starts the
	// kernel ("" is the working directory).
	Dir string
	// DebugLog, when set, receives the Go stack of an internal error (a
	// panic inside the engine, recovered); the user sees one line that says
	// what failed. The Jupyter kernel logs to its stderr, the command line
	// to the file NUDGE_DEBUG_LOG names.
	DebugLog io.Writer

	cells  int
	warned *sens.Program // the last program whose compile warnings were shown

	// noticed names the inputs already said to be sampled uniformly over
	// their range, for noticedProg.
	noticedProg *sens.Program
	noticed     map[string]bool
}

// New returns an interpreter with an empty model.
func New() *Interp {
	return &Interp{Model: sens.NewModel(), Opts: render.Options{Width: 60}}
}

// CellError is the failure of a cell: positioned errors with their source lines.
type CellError struct {
	Errors []*syntax.Error
}

func (e *CellError) Error() string {
	msgs := make([]string, len(e.Errors))
	for i, x := range e.Errors {
		msgs[i] = x.Error()
	}
	return strings.Join(msgs, "\n")
}

// Detail returns every error with its caret display.
func (e *CellError) Detail() string {
	var b strings.Builder
	for i, x := range e.Errors {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(x.Detail())
	}
	return b.String()
}

// First returns the first error.
func (e *CellError) First() *syntax.Error { return e.Errors[0] }

// asCellError converts the errors of parsing, compiling and evaluating into a
// CellError.
func asCellError(err error) *CellError {
	var ce *CellError
	var el syntax.ErrorList
	var se *syntax.Error
	var ee *sens.EvalError
	switch {
	case errors.As(err, &ce):
		return ce
	case errors.As(err, &el):
		return &CellError{Errors: el}
	case errors.As(err, &se):
		return &CellError{Errors: []*syntax.Error{se}}
	case errors.As(err, &ee):
		return &CellError{Errors: []*syntax.Error{ee.SyntaxError()}}
	}
	return &CellError{Errors: []*syntax.Error{{Msg: err.Error()}}}
}

// Execute runs one cell named name ("cell 3", a file name). It stops at the
// first failing statement and returns its error as a *CellError; a panic inside
// the engine is turned into an error too, so a session survives it.
func (in *Interp) Execute(ctx context.Context, name, src string, sink Sink) (err error) {
	in.cells++
	if name == "" {
		name = fmt.Sprintf("cell %d", in.cells)
	}
	// A cell applies as a whole: when it fails, or the engine panics, the
	// session is as it was before: the model and every setting (charts).
	saved, savedOpts, savedWarned := in.Model.Clone(), in.Opts, in.warned
	var f *syntax.File
	var running syntax.Stmt // the statement being run, for an internal error
	defer func() {
		if r := recover(); r != nil {
			err = in.internalError(r, f, running, debug.Stack())
		}
		if err != nil {
			in.Model, in.Opts, in.warned = saved, savedOpts, savedWarned
		}
	}()
	var stmts []syntax.Stmt
	var perr error
	f, stmts, perr = syntax.Parse(name, []byte(src))
	if perr != nil {
		return asCellError(perr)
	}
	if err := sens.CheckDuplicates(f, stmts); err != nil {
		return asCellError(err)
	}
	pending := false // declarations not yet checked by a compile
	// While declarations are pending, the outputs of the statements run
	// after them (scenarios, print) are held until the model is checked (an
	// analysis compiled it, or the check at the end of the cell passed),
	// then shown in order. When the cell fails, those of statements before
	// the place of the error are shown, as for any failing statement, and
	// those after it dropped: a cell applies as a whole, so a statement
	// after a failing declaration shows nothing (settle).
	held := &holdSink{out: sink}
	sink = held
	defer func() {
		if err != nil {
			held.settle(err, f)
		}
	}()
	for i, s := range stmts {
		interrupted := func() error {
			return &CellError{Errors: []*syntax.Error{syntax.ErrorAt(f, f.Position(s.Pos()), "interrupted: the cell stopped here; the model is as it was before the cell")}}
		}
		if ctx.Err() != nil {
			return interrupted()
		}
		running = s
		held.at = f.Position(s.Pos())
		if err := in.stmt(ctx, f, s, i == len(stmts)-1, sink); err != nil {
			if ctx.Err() != nil {
				return interrupted()
			}
			return asCellError(err)
		}
		switch s := s.(type) {
		case *syntax.InputStmt, *syntax.FormulaStmt, *syntax.TableStmt, *syntax.PeriodsStmt:
			pending = true
		case *syntax.CommandStmt:
			switch s.Verb {
			case "spearman", "exchange": // declarations too
				pending = true
			case "scenario", "print", "charts", "help":
				// These compile no model: declarations before them are
				// still to check (a file of declarations and scenarios
				// with a wrong unit was passed as sound).
			default: // an analysis compiled the model; reset emptied it
				pending = false
			}
		default:
			pending = false
		}
		if !pending {
			held.flush()
		}
		held.holding = pending
	}
	running = nil
	if pending {
		// A cell that ends with declarations is checked at once: names, cycles,
		// units, ranges, and every formula at the baseline.
		prog, err := in.Model.CompileContext(ctx)
		if err == nil {
			err = prog.Check()
		}
		if err != nil && ctx.Err() != nil {
			return &CellError{Errors: []*syntax.Error{{Msg: "interrupted while the model was checked; the model is as it was before the cell"}}}
		}
		if err != nil {
			return asCellError(err)
		}
		held.flush()
		in.compileWarnings(prog, sink)
	}
	return nil
}

// holdSink passes output on to out, or holds it while holding is set, until
// flush passes it on in order; progress always passes.
type holdSink struct {
	out     Sink
	holding bool
	at      syntax.Position // the statement running
	held    []heldOutput
}

// heldOutput is one output held, with the statement that made it.
type heldOutput struct {
	at   syntax.Position
	show func()
}

func (h *holdSink) Stream(name, text string) {
	if h.holding {
		h.held = append(h.held, heldOutput{h.at, func() { h.out.Stream(name, text) }})
		return
	}
	h.out.Stream(name, text)
}

func (h *holdSink) Result(r *render.Result, last bool) {
	if h.holding {
		h.held = append(h.held, heldOutput{h.at, func() { h.out.Result(r, last) }})
		return
	}
	h.out.Result(r, last)
}

func (h *holdSink) Progress(id, label string, done, total int) {
	h.out.Progress(id, label, done, total)
}

// flush passes the held output on and stops holding.
func (h *holdSink) flush() {
	for _, o := range h.held {
		o.show()
	}
	h.held, h.holding = nil, false
}

// settle ends a failing cell's held output: that of statements before the
// place of the error err (in the cell f) is shown, the rest dropped; all of
// it is dropped when the error is placed in another cell or nowhere.
func (h *holdSink) settle(err error, f *syntax.File) {
	var e syntax.Position
	if ce := asCellError(err); len(ce.Errors) > 0 {
		e = ce.First().Pos
	}
	before := func(p syntax.Position) bool {
		return f != nil && e.Line > 0 && e.Filename == f.Name &&
			(p.Line < e.Line || p.Line == e.Line && p.Column < e.Column)
	}
	for _, o := range h.held {
		if before(o.at) {
			o.show()
		}
	}
	h.held, h.holding = nil, false
}

// internalError turns a panic recovered while running statement s of file f
// (nil: outside any statement) into a one-line error that says what failed,
// placed at the statement; the stack goes to DebugLog only.
func (in *Interp) internalError(r any, f *syntax.File, s syntax.Stmt, stack []byte) *CellError {
	what := "the cell"
	e := &syntax.Error{}
	if f != nil && s != nil {
		e.Pos = f.Position(s.Pos())
		e.Source = f.Line(e.Pos.Line)
		switch s := s.(type) {
		case *syntax.CommandStmt:
			what = "the command " + s.Verb
		case *syntax.ExprStmt:
			what = "the expression"
		default:
			what = "the declaration"
		}
	}
	msg := strings.Join(strings.Fields(fmt.Sprint(r)), " ") // one line
	e.Msg = fmt.Sprintf("internal error: %s failed (%s); this is a bug in nudge: please report it with the cell that caused it", what, msg)
	if in.DebugLog != nil {
		fmt.Fprintf(in.DebugLog, "nudge: %s: %s\n%s\n", e.Error(), r, stack)
	}
	return &CellError{Errors: []*syntax.Error{e}}
}

func (in *Interp) stmt(ctx context.Context, f *syntax.File, s syntax.Stmt, last bool, sink Sink) error {
	switch s := s.(type) {
	case *syntax.InputStmt, *syntax.FormulaStmt, *syntax.PeriodsStmt:
		in.Model.Define(f, s)
		return nil
	case *syntax.TableStmt:
		r, err := in.Model.DefineTable(f, s, in.Dir)
		if err != nil {
			return err
		}
		res := render.Table(r, &in.Opts)
		res.File, res.Line, res.Command = f.Name, f.Position(s.Pos()).Line, "table"
		sink.Result(res, false)
		return nil
	case *syntax.ExprStmt:
		r, err := in.value(ctx, f, s)
		if err != nil {
			return err
		}
		r.File, r.Line, r.Command = f.Name, f.Position(s.Pos()).Line, "value"
		sink.Result(r, last)
		return nil
	case *syntax.CommandStmt:
		return in.command(ctx, f, s, sink)
	}
	return fmt.Errorf("unknown statement %T", s)
}

func warn(sink Sink, format string, args ...any) {
	sink.Stream("stderr", "warning: "+fmt.Sprintf(format, args...)+"\n")
}

// compileWarnings shows a program's compile warnings, once per compilation.
func (in *Interp) compileWarnings(prog *sens.Program, sink Sink) {
	if prog == in.warned {
		return
	}
	in.warned = prog
	for _, w := range prog.Warnings {
		warn(sink, "%s", w.Error())
	}
}

// warnings sends the compile warnings and the step-function warning to stderr.
func (in *Interp) warnings(prog *sens.Program, pr *sens.Problem, sink Sink) {
	in.compileWarnings(prog, sink)
	if first, lines := pr.StepSummary(); lines > 0 {
		at := strings.Join(first, ", ")
		switch more := lines - len(first); {
		case more == 1:
			at += " and 1 more line"
		case more > 1:
			at += fmt.Sprintf(" and %d more lines", more)
		}
		warn(sink, "%s: a step-shaped operation (floor, ceil, round, if or a comparison) lies on the path of %s: its derivative is taken as 0, so local results can miss a jump", at, pr.Output)
	}
}

// value shows the value of a bare expression. A name is looked up as it is;
// an expression becomes a formula of its own, and with a unit to show it in,
// its name carries the unit, so that it never clashes with a formula of the
// model ("price [k$]" beside price).
func (in *Interp) value(ctx context.Context, f *syntax.File, s *syntax.ExprStmt) (*render.Result, error) {
	name := syntax.String(s.X)
	internal := name
	var prog *sens.Program
	var err error
	if _, ok := s.X.(*syntax.Ident); ok && s.Unit == nil {
		prog, err = in.Model.CompileContext(ctx)
	} else {
		if s.Unit != nil {
			internal += " [" + s.Unit.Text + "]"
		}
		prog, err = in.Model.CompileExprContext(ctx, internal, f, s.X, s.Unit)
	}
	if err != nil {
		return nil, err
	}
	if prog.Vector(internal) != nil {
		vr, err := prog.VectorValue(internal)
		if err != nil {
			return nil, err
		}
		vr.Name = name
		return render.Vector(vr, &in.Opts), nil
	}
	v, err := prog.Value(internal)
	if err != nil {
		var ee *sens.EvalError
		if errors.As(err, &ee) {
			return nil, err
		}
		return nil, posErr(f, s.X.Pos(), "%v", err)
	}
	v.Name = name
	return render.Value(v, &in.Opts), nil
}

// ErrorObject is the JSON object of a failed statement.
type ErrorObject struct {
	Kind    string `json:"kind"` // "error"
	Message string `json:"message"`
	Line    int    `json:"line"`
	Column  int    `json:"column"`
	File    string `json:"file,omitempty"`
}

// ErrorObjects returns the JSON objects of a cell error, one per error.
func (e *CellError) ErrorObjects() []ErrorObject {
	out := make([]ErrorObject, len(e.Errors))
	for i, x := range e.Errors {
		out[i] = ErrorObject{Kind: "error", Message: x.Msg, Line: x.Pos.Line, Column: x.Pos.Column, File: x.Pos.Filename}
	}
	return out
}
