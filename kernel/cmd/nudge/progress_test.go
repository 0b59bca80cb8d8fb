package main

import (
	"bytes"
	"os"
	"strings"
	"testing"
	"time"
)

// TestProgressQuiet: no bar into a pipe or a file, nor with --json.
func TestProgressQuiet(t *testing.T) {
	if newProgress(&bytes.Buffer{}, false) != nil {
		t.Error("a bar into a buffer")
	}
	f, err := os.CreateTemp(t.TempDir(), "out")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if newProgress(f, false) != nil {
		t.Error("a bar into a file")
	}
	if newProgress(os.Stderr, true) != nil {
		t.Error("a bar with --json")
	}
	var p *progress // a nil progress draws nothing and does not panic
	p.start(3, "x")
	p.step(1, "x")
	p.analysis("simulate", 1, 2)
	p.track("a", "simulate", 1, 2)
	p.pause()
	p.stop()
}

// TestProgressBar draws the bar as it would on a terminal (show is called at
// once rather than after the delay): the step of a cell is filled by its
// analysis, the description names both, and stop clears the line.
func TestProgressBar(t *testing.T) {
	var buf bytes.Buffer
	p := &progress{w: &buf}
	p.start(2, "nb.ipynb cell 1 of 2")
	p.show()
	p.step(1, "nb.ipynb cell 2 of 2")
	p.analysis("simulate total", 5, 10)
	// 1 step done and half of the next: 1,500 of 2,000.
	if d, pos := p.description(), p.position(); d != "nb.ipynb cell 2 of 2: simulate total" || pos != 1500 {
		t.Errorf("description %q, position %d", d, pos)
	}
	// The bar redraws at most every 100 ms; a longer wait (however much
	// longer) lets the next update draw.
	time.Sleep(150 * time.Millisecond)
	p.analysis("simulate total", 6, 10)
	p.stop()
	out := buf.String()
	if !strings.Contains(out, "nb.ipynb cell 2 of 2: simulate total  80%") {
		t.Errorf("bar %q", out)
	}
	if !strings.HasSuffix(strings.TrimRight(out, " "), "\r") {
		t.Errorf("the bar is not cleared at the end: %q", out[max(0, len(out)-40):])
	}
	// A stopped progress does not show when its timer fires late.
	buf.Reset()
	p.show()
	if buf.Len() != 0 {
		t.Errorf("a stopped bar showed: %q", buf.String())
	}
}
