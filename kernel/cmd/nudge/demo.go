package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"strings"

	"github.com/nudge-dev/nudge/kernel/notebook"
	"github.com/nudge-dev/nudge/kernel/report"
	"github.com/nudge-dev/nudge/notebooks"
	"github.com/nudge-dev/nudge/plotting"
	"github.com/nudge-dev/nudge/sens"
)

const demoUse = "nudge demo [--json] [DIR]"

// demoOrder is the order the bundled notebooks run in: the short ones
// first; any other notebook follows in name order.
var demoOrder = []string{"housing.ipynb", "energy.ipynb", "steel_bid.ipynb", "tour.ipynb"}

// demoCmd runs the bundled notebooks into DIR and prints a summary.
func demoCmd(args []string, stdout, stderr io.Writer) int {
	fset := flag.NewFlagSet("demo", flag.ContinueOnError)
	asJSON := fset.Bool("json", false, "print one JSON object per notebook run, and no progress bar")
	if code, done := parseFlags(fset, args, demoUse+"\n\nruns the bundled demo notebooks into DIR (default ./nudge-demo): each\nexecuted notebook, its HTML report and the data files it reads", stdout, stderr); done {
		return code
	}
	if fset.NArg() > 1 {
		fmt.Fprintln(stderr, "usage: "+demoUse)
		return 2
	}
	dir := "nudge-demo"
	if fset.NArg() == 1 {
		dir = fset.Arg(0)
	}
	names, err := writeDemoFiles(dir)
	if err != nil {
		fmt.Fprintln(stderr, "nudge demo:", err)
		return 1
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, *asJSON)
	code := 0
	tornadoShown := false
	if !*asJSON {
		fmt.Fprintf(stdout, "nudge demo: %d notebooks into %s\n", len(names), dir)
	}
	for _, name := range names {
		path := filepath.Join(dir, name)
		res, err := runNotebook(ctx, path, runOptions{notebook: path, report: strings.TrimSuffix(path, ".ipynb") + ".html"}, bar)
		if err != nil {
			_ = writeDemoRecord(dir)
			fmt.Fprintln(stderr, "nudge demo:", err)
			return 1
		}
		if *asJSON {
			b, _ := json.Marshal(res)
			fmt.Fprintln(stdout, string(b))
		} else {
			fmt.Fprintln(stdout)
			summarize(stdout, res, !tornadoShown)
			tornadoShown = tornadoShown || firstResult(res.nb, "tornado") != nil
		}
		if res.FailedCell != nil {
			if !*asJSON {
				fmt.Fprintf(stderr, "%s: cell [%d] failed: %s\n", name, *res.FailedCell, res.Error)
			}
			code = 1
		}
		if ctx.Err() != nil {
			_ = writeDemoRecord(dir)
			return 1
		}
	}
	if err := writeDemoRecord(dir); err != nil {
		fmt.Fprintln(stderr, "nudge demo:", err)
		return 1
	}
	if !*asJSON {
		fmt.Fprintf(stdout, "\nOpen a report in a browser: every one is a single file that loads nothing.\n%s\n", plotting.Wrap("Caution: "+strings.TrimPrefix(cautionText, "Caution: "), 80))
	}
	return code
}

// cautionText is the caution the summary ends with.
const cautionText = "Results describe the models, not the world: they hold only within the stated ranges and distributions, one-at-a-time charts miss interactions, and a cost model is not a quote."

// writeDemoFiles writes the bundled notebooks and the files they read into
// dir and returns the notebooks' names in the order they run.
func writeDemoFiles(dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	entries, err := fs.ReadDir(notebooks.FS, ".")
	if err != nil {
		return nil, err
	}
	// Check first, write after: a directory that holds files of the same
	// names that no demo wrote is left as it is.
	written := readDemoRecord(dir)
	for _, e := range entries {
		data, err := fs.ReadFile(notebooks.FS, e.Name())
		if err != nil {
			return nil, err
		}
		if err := demoMayReplace(filepath.Join(dir, e.Name()), data, written); err != nil {
			return nil, err
		}
		if name, ok := strings.CutSuffix(e.Name(), ".ipynb"); ok {
			if err := demoMayReplace(filepath.Join(dir, name+".html"), nil, written); err != nil {
				return nil, err
			}
		}
	}
	var names []string
	for _, e := range entries {
		data, err := fs.ReadFile(notebooks.FS, e.Name())
		if err != nil {
			return nil, err
		}
		if err := os.WriteFile(filepath.Join(dir, e.Name()), data, 0o644); err != nil {
			return nil, err
		}
		if strings.HasSuffix(e.Name(), ".ipynb") {
			names = append(names, e.Name())
		}
	}
	slices.SortStableFunc(names, func(a, b string) int {
		ia, ib := slices.Index(demoOrder, a), slices.Index(demoOrder, b)
		if ia < 0 {
			ia = len(demoOrder)
		}
		if ib < 0 {
			ib = len(demoOrder)
		}
		if ia != ib {
			return ia - ib
		}
		return strings.Compare(a, b)
	})
	return names, nil
}

// demoRecord is the file in a demo's directory that lists what the demo
// wrote there, as sha256sum does: so that a later demo, of another version
// with other notebooks, may replace them, and nothing a user changed since.
const demoRecord = ".nudge-demo"

// readDemoRecord returns the SHA-256 of each file the last demo left in
// dir, by name; empty when there is no record.
func readDemoRecord(dir string) map[string]string {
	m := map[string]string{}
	b, err := os.ReadFile(filepath.Join(dir, demoRecord))
	if err != nil {
		return m
	}
	for _, line := range strings.Split(string(b), "\n") {
		if sum, name, ok := strings.Cut(line, "  "); ok && len(sum) == 64 && !strings.ContainsAny(name, "/\\") {
			m[name] = sum
		}
	}
	return m
}

// writeDemoRecord records the SHA-256 of every file the demo left in dir:
// the bundled files and the reports.
func writeDemoRecord(dir string) error {
	entries, err := fs.ReadDir(notebooks.FS, ".")
	if err != nil {
		return err
	}
	var b strings.Builder
	for _, e := range entries {
		names := []string{e.Name()}
		if name, ok := strings.CutSuffix(e.Name(), ".ipynb"); ok {
			names = append(names, name+".html")
		}
		for _, n := range names {
			if data, err := os.ReadFile(filepath.Join(dir, n)); err == nil {
				fmt.Fprintf(&b, "%s  %s\n", report.SHA256(data), n)
			}
		}
	}
	return os.WriteFile(filepath.Join(dir, demoRecord), []byte(b.String()), 0o644)
}

// demoMayReplace returns an error when path holds a file that the demo did
// not write: one that differs from what the last demo recorded (written)
// and is not a notebook of the bundled one's code (bundled), a data file of
// the bundled bytes, or a page that nudge wrote (bundled nil). A missing
// file may be written.
func demoMayReplace(path string, bundled []byte, written map[string]string) error {
	old, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	ours := false
	switch {
	case written[filepath.Base(path)] == report.SHA256(old):
		ours = true // as a demo left it, whatever version wrote it
	case bundled == nil:
		ours = bytes.Contains(old, []byte(`<meta name="generator" content="nudge `))
	case strings.HasSuffix(path, ".ipynb"):
		a, errA := notebook.Read(old)
		b, errB := notebook.Read(bundled)
		ours = errA == nil && errB == nil && a.CodeText() == b.CodeText()
	default:
		ours = bytes.Equal(old, bundled)
	}
	if !ours {
		return fmt.Errorf("%s exists and is not from the demo: it is left as it is; run the demo into another directory (nudge demo DIR)", path)
	}
	return nil
}

// summarize prints a notebook's line of the summary: its cells, the top
// drivers of its first drivers result, with tornado its first tornado as
// text, and the path of its report.
func summarize(w io.Writer, res *runResult, tornado bool) {
	name := filepath.Base(res.Source)
	fmt.Fprintf(w, "%s: %d cells ran\n", name, res.Cells)
	var d sens.DriversResult
	if obj := firstResult(res.nb, "drivers"); obj != nil && decode(obj, &d) == nil && len(d.Inputs) > 0 {
		var parts []string
		for _, in := range d.Inputs[:min(3, len(d.Inputs))] {
			parts = append(parts, fmt.Sprintf("%s (%+.2f)", in.Name, in.Elasticity))
		}
		fmt.Fprintf(w, "  top drivers of %s, by elasticity: %s\n", d.Output, strings.Join(parts, ", "))
	}
	var t sens.TornadoResult
	if obj := firstResult(res.nb, "tornado"); tornado && obj != nil && decode(obj, &t) == nil && len(t.Bars) > 0 {
		ch := &plotting.Tornado{Output: t.Output, Unit: t.Unit, Baseline: t.Baseline}
		for _, b := range t.Bars[:min(5, len(t.Bars))] {
			ch.Bars = append(ch.Bars, plotting.Bar{Name: b.Name, Low: b.Low, High: b.High, InputUnit: b.Unit,
				OutLow: b.OutputAtLow, OutHigh: b.OutputAtHigh, Min: b.OutMin, Max: b.OutMax,
				NonMonotone: b.NonMonotone, DefaultRange: b.DefaultRange})
		}
		for _, line := range strings.Split(strings.TrimRight(ch.Text(78), "\n"), "\n") {
			fmt.Fprintln(w, "  "+line)
		}
	}
	if res.Report != "" {
		fmt.Fprintf(w, "  report: %s\n", res.Report)
	}
}

// firstResult returns the first result object of a kind in the notebook's
// outputs.
func firstResult(nb *notebook.Notebook, kind string) map[string]any {
	if nb == nil {
		return nil
	}
	for _, c := range nb.Cells {
		for _, o := range c.Outputs {
			if obj, ok := o.Data["application/vnd.nudge.result+json"].(map[string]any); ok && obj["kind"] == kind {
				return obj
			}
		}
	}
	return nil
}

func decode(obj map[string]any, v any) error {
	b, err := json.Marshal(obj)
	if err != nil {
		return err
	}
	return json.Unmarshal(b, v)
}
