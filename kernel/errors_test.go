package kernel

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestErrorCorpus runs every malformed or ill-posed model in testdata/errors.
// Each file starts with a line "# want: LINE:COL: text": the first error must
// sit at that line and column (counted without the header line), its message
// must contain the text, and nothing may panic.
func TestErrorCorpus(t *testing.T) {
	files, err := filepath.Glob("testdata/errors/*.nudge")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 30 {
		t.Fatalf("want at least 30 malformed models, found %d", len(files))
	}
	for _, file := range files {
		t.Run(strings.TrimSuffix(filepath.Base(file), ".nudge"), func(t *testing.T) {
			b, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			header, src, _ := strings.Cut(string(b), "\n")
			want := strings.TrimPrefix(header, "# want: ")
			line, col, text := -1, -1, want
			if parts := strings.SplitN(want, ":", 3); len(parts) == 3 {
				l, e1 := strconv.Atoi(parts[0])
				c, e2 := strconv.Atoi(parts[1])
				if e1 == nil && e2 == nil {
					line, col, text = l, c, strings.TrimSpace(parts[2])
				}
			}
			in := New()
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
			if line >= 0 && (first.Pos.Line != line || first.Pos.Column != col) {
				t.Errorf("error at %d:%d, want %d:%d (%s)", first.Pos.Line, first.Pos.Column, line, col, first.Msg)
			}
			if line >= 0 && first.Caret() == "" {
				t.Errorf("no caret display for %q", first.Msg)
			}
		})
	}
}

// captureSink records everything a cell produces.
type captureSink struct {
	stdout, stderr strings.Builder
	results        []*Result
	progress       int
}

func (s *captureSink) Stream(name, text string) {
	if name == "stderr" {
		s.stderr.WriteString(text)
	} else {
		s.stdout.WriteString(text)
	}
}
func (s *captureSink) Result(r *Result, _ bool)              { s.results = append(s.results, r) }
func (s *captureSink) Progress(_, _ string, done, total int) { s.progress++ }
