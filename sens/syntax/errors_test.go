package syntax

import (
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestErrorCorpus parses every malformed model in testdata/errors. Each file
// starts with a line "# want: LINE:COL: text" (LINE counted without that
// header): the first error must sit at that line and column, its message
// must contain the text, and show the line with a caret.
func TestErrorCorpus(t *testing.T) {
	files, err := filepath.Glob("testdata/errors/*.nudge")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 20 {
		t.Fatalf("want at least 20 malformed models, found %d", len(files))
	}
	for _, file := range files {
		t.Run(strings.TrimSuffix(filepath.Base(file), ".nudge"), func(t *testing.T) {
			line, col, text, src := readErrorCase(t, file)
			_, _, err := Parse("model", []byte(src))
			var el ErrorList
			if !errors.As(err, &el) {
				t.Fatalf("want an ErrorList, got %v", err)
			}
			first := el[0]
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

// readErrorCase reads a file of an error corpus: its header
// "# want: LINE:COL: text" and the source after it.
func readErrorCase(t testing.TB, file string) (line, col int, text, src string) {
	t.Helper()
	b, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	header, src, _ := strings.Cut(string(b), "\n")
	want, ok := strings.CutPrefix(header, "# want: ")
	parts := strings.SplitN(want, ":", 3)
	if !ok || len(parts) != 3 {
		t.Fatalf("%s: the first line must be \"# want: LINE:COL: text\", found %q", file, header)
	}
	line, e1 := strconv.Atoi(parts[0])
	col, e2 := strconv.Atoi(parts[1])
	if e1 != nil || e2 != nil {
		t.Fatalf("%s: bad line or column in %q", file, header)
	}
	return line, col, strings.TrimSpace(parts[2]), src
}
