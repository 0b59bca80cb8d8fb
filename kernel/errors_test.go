package kernel

import (
	"context"
	"errors"
	"github.com/nudge-dev/nudge/kernel/render"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestErrorCorpus runs every ill-posed model in testdata/errors, and every
// malformed one of the parser's corpus (sens/syntax/testdata/errors), through
// the interpreter. Each file starts with a line "# want: LINE:COL: text": the
// first error must sit at that line and column (counted without the header
// line), its message must contain the text, and nothing may panic.
func TestErrorCorpus(t *testing.T) {
	var files []string
	for _, dir := range []string{"testdata/errors", "../sens/syntax/testdata/errors"} {
		fs, err := filepath.Glob(dir + "/*.nudge")
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, fs...)
	}
	if len(files) < 50 {
		t.Fatalf("want at least 50 malformed models, found %d", len(files))
	}
	for _, file := range files {
		t.Run(strings.TrimSuffix(filepath.Base(file), ".nudge"), func(t *testing.T) {
			b, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			header, src, _ := strings.Cut(string(b), "\n")
			want := strings.TrimPrefix(header, "# want: ")
			parts := strings.SplitN(want, ":", 3)
			if len(parts) != 3 {
				t.Fatalf("the first line must be \"# want: LINE:COL: text\", found %q", header)
			}
			line, e1 := strconv.Atoi(parts[0])
			col, e2 := strconv.Atoi(parts[1])
			if e1 != nil || e2 != nil {
				t.Fatalf("bad line or column in %q", header)
			}
			text := strings.TrimSpace(parts[2])
			in := New()
			in.Dir = filepath.Dir(file) // tables are read beside the model
			sink := &captureSink{}
			err = in.Execute(context.Background(), "model", src, sink)
			var ce *CellError
			if !errors.As(err, &ce) {
				t.Fatalf("want a *CellError, got %v", err)
			}
			first := ce.First()
			if !strings.Contains(first.Msg, text) {
				t.Errorf("message %q does not contain %q", first.Msg, text)
			}
			if first.Pos.Line != line || first.Pos.Column != col {
				t.Errorf("error at %d:%d, want %d:%d (%s)", first.Pos.Line, first.Pos.Column, line, col, first.Msg)
			}
			if first.Caret() == "" {
				t.Errorf("no caret display for %q", first.Msg)
			}
		})
	}
}

// captureSink records everything a cell produces.
type captureSink struct {
	stdout, stderr strings.Builder
	results        []*render.Result
	progress       int
}

func (s *captureSink) Stream(name, text string) {
	if name == "stderr" {
		s.stderr.WriteString(text)
	} else {
		s.stdout.WriteString(text)
	}
}
func (s *captureSink) Result(r *render.Result, _ bool)       { s.results = append(s.results, r) }
func (s *captureSink) Progress(_, _ string, done, total int) { s.progress++ }
