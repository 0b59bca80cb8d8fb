package kernel

import (
	"context"
	"errors"
	"fmt"
	"html"
	"strings"
	"time"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/kernel/render"
)

// Progress lines: shown once an analysis has run for progressDelay,
// updated at most every progressEvery.
const (
	progressDelay = 500 * time.Millisecond
	progressEvery = 100 * time.Millisecond
)

// Execute runs a cell. The results go out as display_data as they come (the
// value of a bare expression that ends the cell as its execute_result),
// warnings on stderr, and the caution once after the cell's results; an
// error's first line is its headline. "exit" or "quit" alone asks a console
// to end the session.
func (h *Handler) Execute(ctx context.Context, code string, out jupyter.Output, opts jupyter.ExecOptions) (*jupyter.Bundle, error) {
	if h.isExit(code) {
		out.Payload(map[string]any{"source": "ask_exit", "keepkernel": false})
		out.Stream("stdout", "ending the session (a notebook carries on: stop its kernel from the Kernel menu)\n")
		return nil, nil
	}
	sink := &jupyterSink{h: h, out: out, console: h.console.Load(), now: h.now}
	name := fmt.Sprintf("cell[%d]", opts.ExecutionCount)
	err := h.in.Execute(ctx, name, code, sink)
	if err == nil {
		sink.finish()
		return sink.last, nil
	}
	var ce *CellError
	if !errors.As(err, &ce) {
		ce = asCellError(err)
	}
	ename := "ModelError"
	if ctx.Err() != nil {
		ename = "Interrupted"
	}
	first := ce.First()
	value := first.Msg
	if first.Pos.Line > 0 {
		value = fmt.Sprintf("line %d, column %d: %s", first.Pos.Line, first.Pos.Column, first.Msg)
	}
	sink.finish()
	// The error's first line is its headline, in bold red: the classic
	// Notebook prints an uncoloured traceback as plain text, less prominent
	// than a warning on stderr.
	return sink.last, &jupyter.ExecError{Name: ename, Value: value, Traceback: strings.Split(ce.Detail(), "\n"), Headline: true}
}

// isExit reports whether the cell is "exit" or "quit" alone (with or without
// "()"), and no name of the model.
func (h *Handler) isExit(code string) bool {
	word := strings.TrimSuffix(strings.TrimSpace(code), "()")
	if word != "exit" && word != "quit" {
		return false
	}
	for _, n := range h.in.Model.Names() {
		if n == word {
			return false
		}
	}
	return true
}

// jupyterSink turns the output of one cell into Jupyter messages.
type jupyterSink struct {
	h       *Handler
	out     jupyter.Output
	console bool // no progress lines: see Handler.console
	now     func() time.Time

	last      *jupyter.Bundle // the execute_result
	cautioned bool            // a result that carries the caution was shown
	// shown is what the cell has shown, to show again after a finished
	// progress line is cleared away.
	shown []shown
	// clearing is set while a clear_output(wait) waits for the next
	// output.
	clearing bool
	progress map[string]*progressLine
}

// shown is a stream or a display the cell has shown.
type shown struct {
	stream, text string
	bundle       *jupyter.Bundle
}

// progressLine is the state of one analysis's progress line.
type progressLine struct {
	id            string // the display id, unique in the session
	start, update time.Time
	visible       bool // shown, and not yet cleared away
	done          bool // cleared away: the analysis has shown its result
}

func (s *jupyterSink) Stream(name, text string) {
	s.out.Stream(name, text)
	s.shown = append(s.shown, shown{stream: name, text: text})
	s.clearing = false
}

func (s *jupyterSink) Result(r *render.Result, last bool) {
	s.settle()
	if r.Caution {
		s.cautioned = true
	}
	b := &jupyter.Bundle{Data: r.Bundle(), Metadata: map[string]any{}}
	if last {
		s.last = b
		return
	}
	s.display(b)
	s.shown = append(s.shown, shown{bundle: b})
}

func (s *jupyterSink) display(b *jupyter.Bundle) {
	s.out.Display(b, "")
	s.clearing = false
}

// Progress shows a progress line, updated in place, for an analysis that
// has run for half a second, and clears it away when the analysis's result
// arrives (or the cell ends), so that a saved notebook keeps only results.
// Jupyter cannot remove one output of a cell: the cell is cleared
// (clear_output with wait, so that nothing flickers) and what it showed
// before is shown again. The line is HTML alone, so a text front end prints
// nothing of it; consoles get none at all. A report of work done is not
// taken for the end: an analysis of several passes may reach its estimate
// of the work before it knows there is more.
func (s *jupyterSink) Progress(id, label string, done, total int) {
	if f := s.h.onProgress; f != nil {
		f(label, done, total)
		return
	}
	if s.progress == nil {
		s.progress = map[string]*progressLine{}
	}
	p := s.progress[id]
	now := s.now()
	if p == nil {
		p = &progressLine{id: fmt.Sprintf("nudge-progress-%d", s.h.progress.Add(1)), start: now}
		s.progress[id] = p
	}
	switch {
	case p.done, done >= total:
	case !p.visible:
		if s.console || now.Sub(p.start) < progressDelay {
			return
		}
		p.visible, p.update = true, now
		s.out.Display(progressBundle(label, done, total), p.id)
	case now.Sub(p.update) >= progressEvery:
		p.update = now
		s.out.UpdateDisplay(progressBundle(label, done, total), p.id)
	}
}

// settle clears away the progress lines on show: the cell is cleared and
// shows again what it had shown before them.
func (s *jupyterSink) settle() {
	cleared := false
	for _, p := range s.progress {
		if p.visible {
			p.visible, p.done = false, true
			cleared = true
		}
	}
	if !cleared {
		return
	}
	s.out.ClearOutput(true)
	s.clearing = true
	for _, o := range s.shown {
		if o.bundle != nil {
			s.out.Display(o.bundle, "")
		} else {
			s.out.Stream(o.stream, o.text)
		}
		s.clearing = false
	}
}

func progressBundle(label string, done, total int) *jupyter.Bundle {
	frac := 0.0
	if total > 0 {
		frac = float64(done) / float64(total)
	}
	return &jupyter.Bundle{Data: map[string]any{"text/html": fmt.Sprintf(
		`<div class="nudge-progress tex2jax_ignore mathjax_ignore"><progress value="%d" max="%d" style="width:12em;vertical-align:middle"></progress> %s: %.0f%% (%s of %s)</div>`,
		done, total, html.EscapeString(label), 100*frac, count(done), count(total))}, Metadata: map[string]any{}}
}

// finish ends the cell's output: the caution once, after the results that
// carry it, and the clearing of a progress line that no output has done.
func (s *jupyterSink) finish() {
	s.settle()
	if s.cautioned {
		s.display(&jupyter.Bundle{Data: render.CautionBundle(), Metadata: map[string]any{}})
	}
	if s.clearing && s.last == nil {
		s.out.ClearOutput(false)
		s.clearing = false
	}
}
