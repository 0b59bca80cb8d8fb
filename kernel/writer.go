package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/plotting"
)

// WriterSink writes results to a terminal or a pipe: text tables (or one JSON
// object per line with JSON set) on Out, warnings and progress on Err. Each
// write to one stream first flushes the other when it buffers (has a Flush
// method), so a warning appears next to the result it concerns however the
// two streams are buffered or merged.
type WriterSink struct {
	Out, Err io.Writer
	JSON     bool
	// SVGDir, when set, receives each chart as an SVG file, numbered in order.
	SVGDir string
	// CSVDir, when set, receives each result's tables as CSV files named by
	// file, line and command: model-12-tornado.csv.
	CSVDir string
	// Cautioned is set once a result that carries the caution was written.
	Cautioned bool
	// OnProgress, when set, receives the progress reports of long analyses
	// (the command line's progress bar on a terminal), and Pause is called
	// before anything is written, so that such a bar is cleared first.
	OnProgress func(id, label string, done, total int)
	Pause      func()
	// Failed is set once a result could not be written whole (its JSON
	// does not encode: a number that is not finite); the command line then
	// exits with a failure status.
	Failed bool

	charts int
	last   byte // the last byte written to Out, 0 before any
}

type flusher interface{ Flush() error }

func flush(w io.Writer) {
	if f, ok := w.(flusher); ok {
		f.Flush()
	}
}

// out writes text to Out after flushing Err.
func (s *WriterSink) out(text string) {
	if text == "" {
		return
	}
	if s.Pause != nil {
		s.Pause()
	}
	flush(s.Err)
	io.WriteString(s.Out, text)
	s.last = text[len(text)-1]
}

// errf writes a line to Err after flushing Out, and flushes it.
func (s *WriterSink) errf(format string, args ...any) {
	if s.Pause != nil {
		s.Pause()
	}
	flush(s.Out)
	fmt.Fprintf(s.Err, format, args...)
	flush(s.Err)
}

// Stream writes stdout text to Out (in JSON mode, as a "print" object) and
// stderr text to Err.
func (s *WriterSink) Stream(name, text string) {
	if name == "stderr" {
		s.errf("%s", text)
		return
	}
	if s.JSON {
		b, _ := json.Marshal(map[string]string{"kind": "print", "text": text})
		s.out(string(b) + "\n")
		return
	}
	s.out(text)
}

// Result writes one result, and its chart and tables into SVGDir and CSVDir.
func (s *WriterSink) Result(r *render.Result, _ bool) {
	if r.Caution {
		s.Cautioned = true
	}
	if s.SVGDir != "" && r.SVG() != "" {
		s.charts++
		path := filepath.Join(s.SVGDir, fmt.Sprintf("%02d-%s.svg", s.charts, r.Kind))
		if err := os.WriteFile(path, []byte(r.SVG()), 0o644); err != nil {
			s.errf("nudge: %v\n", err)
		} else {
			s.errf("chart: %s\n", path)
		}
	}
	if s.CSVDir != "" {
		s.writeCSV(r)
	}
	b, err := r.EncodeJSON()
	if err != nil {
		s.Failed = true
		if !s.JSON {
			where := ""
			if r.Line > 0 {
				where = fmt.Sprintf("%s:%d: ", r.File, r.Line)
			}
			s.errf("error: %sthe %s result holds a number that is not finite (%v)\n", where, r.Kind, err)
		}
	}
	if s.JSON {
		s.out(string(b) + "\n")
		return
	}
	s.out(r.Text() + "\n")
}

// writeCSV writes each table of r into CSVDir.
func (s *WriterSink) writeCSV(r *render.Result) {
	for _, t := range r.Tables() {
		path := filepath.Join(s.CSVDir, csvName(r, t.Name))
		f, err := os.Create(path)
		if err == nil {
			err = t.WriteCSV(f)
			if cerr := f.Close(); err == nil {
				err = cerr
			}
		}
		if err != nil {
			s.errf("nudge: %v\n", err)
			continue
		}
		s.errf("table: %s\n", path)
	}
}

// csvName names a result's table file by the file, line and command it came
// from: "plant-12-tornado.csv", "plant-30-basis-constants.csv".
func csvName(r *render.Result, table string) string {
	base := strings.TrimSuffix(filepath.Base(r.File), filepath.Ext(r.File))
	base = strings.Map(func(c rune) rune {
		if c == ' ' || c == '/' || c == '\\' || c == ':' {
			return '_'
		}
		return c
	}, base)
	if base == "" || base == "." {
		base = "stdin"
	}
	cmd := r.Command
	if cmd == "" {
		cmd = r.Kind
	}
	name := fmt.Sprintf("%s-%d-%s", base, r.Line, cmd)
	if table != "" {
		name += "-" + table
	}
	return name + ".csv"
}

// Progress passes a progress report to OnProgress, if set: the command line
// draws a bar on a terminal, and nothing into pipes.
func (s *WriterSink) Progress(id, label string, done, total int) {
	if s.OnProgress != nil {
		flush(s.Out) // the results so far show above the bar
		s.OnProgress(id, label, done, total)
	}
}

// Finish ends standard output with a newline when text was written to it
// without one, and flushes both streams.
func (s *WriterSink) Finish() {
	if s.last != 0 && s.last != '\n' {
		s.out("\n")
	}
	flush(s.Out)
	flush(s.Err)
}

// RunFile runs a whole model file through the interpreter, as `nudge exec`
// does. It returns the cell error, if any, after writing it (as text to Err, or
// as JSON error objects to Out).
func RunFile(ctx context.Context, in *Interp, name, src string, sink *WriterSink) error {
	dir := in.Dir
	in.Dir = filepath.Dir(name) // tables are read relative to the model file
	err := in.Execute(ctx, name, src, sink)
	in.Dir = dir
	if err != nil {
		var ce *CellError
		if !errors.As(err, &ce) {
			ce = asCellError(err)
		}
		if sink.JSON {
			for _, o := range ce.ErrorObjects() {
				b, _ := json.Marshal(o)
				sink.out(string(b) + "\n")
			}
		} else {
			// The source line an error quotes may hold escape sequences:
			// a terminal must not run them.
			sink.errf("%s\n", jupyter.PlainText("error: "+ce.Detail()))
		}
		return ce
	}
	if sink.Cautioned && !sink.JSON {
		sink.out(plotting.Wrap(render.Caution, in.Opts.Width) + "\n")
	}
	return nil
}
