package main

import (
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/nudge-dev/nudge/sens/linebench"
)

// fixedB is a tapebench.B that runs a body's loop n times.
type fixedB struct {
	n, i  int
	start time.Time
	extra map[string]float64
	err   error
}

func (b *fixedB) Loop() bool {
	if b.i == 0 {
		b.start = time.Now()
	}
	b.i++
	return b.i <= b.n
}
func (b *fixedB) ReportAllocs() {}
func (b *fixedB) ReportMetric(v float64, unit string) {
	if b.extra == nil {
		b.extra = map[string]float64{}
	}
	b.extra[unit] = v
}
func (b *fixedB) StopTimer()             {}
func (b *fixedB) Elapsed() time.Duration { return time.Since(b.start) }
func (b *fixedB) Fatal(args ...any) {
	b.err = fmt.Errorf("%v", fmt.Sprint(args...))
	b.n = 0
}

// benchLineItems runs the line-item benchmarks (package linebench) on the
// invented bid at 100,000 lines and writes their rows: loading and
// compiling against encoding/csv alone, the roll-up's forward pass against
// a Go loop, its gradient against the forward pass, and drivers end to end
// through nudge exec against nudge exec of the declarations alone (load,
// compile and the check at the baseline), each as a process of its own.
func benchLineItems(row func(string, testing.BenchmarkResult, string, string, string), w io.Writer) error {
	bn, err := linebench.New(linebench.Lines)
	if err != nil {
		return err
	}
	const n = "100,000 lines"
	// A load takes a good part of a second: testing.Benchmark would time one
	// pair; eleven pairs give a median.
	fb := &fixedB{n: 11}
	bn.LoadVsCSV(fb)
	if fb.err != nil {
		return fb.err
	}
	row("line items ("+n+"): load and compile vs encoding/csv alone", testing.BenchmarkResult{Extra: fb.extra}, "load", "csv", "<= 3")
	row("line items: roll-up forward vs Go loop over the same slices", testing.Benchmark(func(b *testing.B) { bn.ForwardVsGo(b) }), "tape", "go", "<= 2")
	row("line items: gradient (200,000 partials) vs forward", testing.Benchmark(func(b *testing.B) { bn.GradientVsForward(b) }), "gradient", "forward", "<= 3")

	self, err := os.Executable()
	if err != nil {
		return err
	}
	dir, err := os.MkdirTemp("", "nudge-bench-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	decl := filepath.Join(dir, "load.nudge")
	drv := filepath.Join(dir, "drivers.nudge")
	for _, f := range []struct {
		path string
		data []byte
	}{
		{filepath.Join(dir, "bid.csv"), bn.CSV},
		{decl, []byte(linebench.Model)},
		{drv, []byte(linebench.Model + "drivers total\n")},
	} {
		if err := os.WriteFile(f.path, f.data, 0o644); err != nil {
			return err
		}
	}
	// Interleaved runs; the median of each.
	const runs = 7
	var tl, td []float64
	for range runs {
		for _, c := range []struct {
			file string
			out  *[]float64
		}{{decl, &tl}, {drv, &td}} {
			start := time.Now()
			cmd := exec.Command(self, "exec", c.file)
			cmd.Stdout, cmd.Stderr = io.Discard, io.Discard
			if err := cmd.Run(); err != nil {
				return fmt.Errorf("nudge exec %s: %v", filepath.Base(c.file), err)
			}
			*c.out = append(*c.out, float64(time.Since(start)))
		}
	}
	slices.Sort(tl)
	slices.Sort(td)
	ml, md := tl[runs/2], td[runs/2]
	fmt.Fprintf(w, "line items: drivers end to end (nudge exec) vs load and compile (nudge exec of the declarations)\t%s\t%s\t%.2f\t<= 2\n",
		fmtNs(md), fmtNs(ml), md/ml)
	return nil
}
