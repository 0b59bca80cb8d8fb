package kernel

import (
	"bufio"
	"context"
	"strings"
	"testing"
)

// logWriter records which stream each write went to, in order.
type logWriter struct {
	name string
	log  *[]string
}

func (w logWriter) Write(p []byte) (int, error) {
	*w.log = append(*w.log, w.name+": "+string(p))
	return len(p), nil
}

// TestWarningsNextToResults: with standard output buffered, a warning still
// lands between the result before it and the result it concerns, because
// writing to one stream flushes the other; and Finish ends standard output
// with a newline.
func TestWarningsNextToResults(t *testing.T) {
	var log []string
	out := bufio.NewWriterSize(logWriter{"out", &log}, 1<<16)
	sink := &WriterSink{Out: out, Err: logWriter{"err", &log}}
	src := "input a = 2 (1..3)\ninput b = 3\ny = a * b\ny\ntornado y\nprint \"done\""
	if err := RunFile(context.Background(), New(), "m", src, sink); err != nil {
		t.Fatal(err)
	}
	sink.Finish()
	all := strings.Join(log, "")
	value := strings.Index(all, "out: y = 6")
	warning := strings.Index(all, "err: warning: tornado y: b has no range")
	table := strings.Index(all, "tornado of y")
	done := strings.Index(all, "done")
	if value < 0 || warning < value || table < warning || done < table {
		t.Errorf("out of order (value %d, warning %d, tornado %d, print %d):\n%s", value, warning, table, done, all)
	}
	if !strings.HasSuffix(log[len(log)-1], "\n") {
		t.Errorf("standard output does not end with a newline: %q", log[len(log)-1])
	}

	// Text without a final newline gets one.
	log = nil
	sink = &WriterSink{Out: logWriter{"out", &log}, Err: logWriter{"err", &log}}
	sink.Stream("stdout", "no newline")
	sink.Finish()
	if got := strings.Join(log, ""); got != "out: no newlineout: \n" {
		t.Errorf("Finish wrote %q", got)
	}
}
