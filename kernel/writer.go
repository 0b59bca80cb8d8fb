package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/nudge-dev/nudge/kernel/render"
)

// WriterSink writes results to a terminal or a pipe: text tables (or one JSON
// object per line with JSON set) on Out, warnings and progress on Err.
type WriterSink struct {
	Out, Err io.Writer
	JSON     bool
	// SVGDir, when set, receives each chart as an SVG file, numbered in order.
	SVGDir string
	// Cautioned is set once a result that carries the caution was written.
	Cautioned bool

	charts int
}

// Stream writes stdout text to Out (in JSON mode, as a "print" object) and
// stderr text to Err.
func (s *WriterSink) Stream(name, text string) {
	if name == "stderr" {
		fmt.Fprint(s.Err, text)
		return
	}
	if s.JSON {
		b, _ := json.Marshal(map[string]string{"kind": "print", "text": text})
		fmt.Fprintf(s.Out, "%s\n", b)
		return
	}
	fmt.Fprint(s.Out, text)
}

// Result writes one result.
func (s *WriterSink) Result(r *render.Result, _ bool) {
	if r.Caution {
		s.Cautioned = true
	}
	if s.SVGDir != "" && r.SVG() != "" {
		s.charts++
		path := filepath.Join(s.SVGDir, fmt.Sprintf("%02d-%s.svg", s.charts, r.Kind))
		if err := os.WriteFile(path, []byte(r.SVG()), 0o644); err != nil {
			fmt.Fprintf(s.Err, "nudge: %v\n", err)
		} else {
			fmt.Fprintf(s.Err, "chart: %s\n", path)
		}
	}
	if s.JSON {
		fmt.Fprintf(s.Out, "%s\n", r.JSON())
		return
	}
	fmt.Fprintln(s.Out, r.Text())
}

// Progress is silent for writers: the command line prints no progress bars into
// pipes.
func (s *WriterSink) Progress(string, string, int, int) {}

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
				fmt.Fprintf(sink.Out, "%s\n", b)
			}
		} else {
			fmt.Fprintln(sink.Err, "error: "+ce.Detail())
		}
		return ce
	}
	if sink.Cautioned && !sink.JSON {
		fmt.Fprintln(sink.Out, render.Caution)
	}
	return nil
}
