package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"time"

	"github.com/nudge-dev/nudge/kernel"
	"github.com/nudge-dev/nudge/kernel/notebook"
	"github.com/nudge-dev/nudge/kernel/report"
)

const runUse = "nudge run [-o OUT.ipynb] [--html FILE] [--timestamp] [--json] NOTEBOOK.ipynb|MODEL.nudge"

// runCmd executes a notebook (or a model file, as a notebook of one cell)
// headless and writes its report.
func runCmd(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	out := fs.String("o", "", "write the executed notebook to `OUT.ipynb` (nbformat 4.5)")
	htmlOut := fs.String("html", "", "write the HTML report to `FILE` (default: the input's name with .html, beside it)")
	stamp := fs.Bool("timestamp", false, "add the time of the run to the report (without it, two runs give the same bytes)")
	asJSON := fs.Bool("json", false, "print one JSON object describing the run, and no progress bar")
	if code, done := parseFlags(fs, args, runUse, stdout, stderr); done {
		return code
	}
	if fs.NArg() != 1 {
		if fs.NArg() > 1 {
			fmt.Fprintf(stderr, "nudge run: one notebook or model file at a time, found %d: run each in turn\n", fs.NArg())
		}
		fmt.Fprintln(stderr, "usage: "+runUse)
		fs.PrintDefaults()
		return 2
	}
	input := fs.Arg(0)
	report := *htmlOut
	if report == "" {
		report = strings.TrimSuffix(input, filepath.Ext(input)) + ".html"
	}
	// Never write over the input, except a notebook executed in place
	// (-o the notebook itself), nor write both files to one path.
	isNotebook := strings.EqualFold(filepath.Ext(input), ".ipynb")
	switch {
	case sameFile(report, input):
		fmt.Fprintf(stderr, "nudge run: the report would replace the input %s: give the report another name with --html FILE\n", input)
		return 2
	case *out != "" && !isNotebook && sameFile(*out, input):
		fmt.Fprintf(stderr, "nudge run: -o %s would replace the model file with a notebook: give the notebook another name, such as %s\n", *out, strings.TrimSuffix(input, filepath.Ext(input))+".ipynb")
		return 2
	case *out != "" && sameFile(*out, report):
		fmt.Fprintf(stderr, "nudge run: the notebook and the report would both be written to %s: give them different names\n", report)
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, *asJSON)
	res, err := runNotebook(ctx, input, runOptions{notebook: *out, report: report, timestamp: *stamp}, bar)
	if err != nil {
		fmt.Fprintln(stderr, "nudge run:", err)
		return 1
	}
	if *asJSON {
		b, _ := json.Marshal(res)
		fmt.Fprintln(stdout, string(b))
	} else {
		res.print(stdout, stderr)
	}
	if res.FailedCell != nil {
		return 1
	}
	return 0
}

// sameFile reports whether paths a and b name one file: the same file on
// disk when both exist, else the same cleaned absolute path.
func sameFile(a, b string) bool {
	if sa, err := os.Stat(a); err == nil {
		if sb, err := os.Stat(b); err == nil {
			return os.SameFile(sa, sb)
		}
	}
	aa, errA := filepath.Abs(a)
	ab, errB := filepath.Abs(b)
	return errA == nil && errB == nil && aa == ab
}

// runOptions say where a run's files go.
type runOptions struct {
	notebook  string // the executed notebook; "" writes none
	report    string // the HTML report; "" writes none
	timestamp bool
}

// runResult describes a run: what `nudge run --json` prints.
type runResult struct {
	Kind     string `json:"kind"` // "run"
	Source   string `json:"source"`
	Notebook string `json:"notebook,omitempty"`
	Report   string `json:"report,omitempty"`
	// Cells is the number of code cells that ran.
	Cells int `json:"cells"`
	// FailedCell is the execution count of the cell that failed, and
	// Error its error's first line.
	FailedCell *int          `json:"failed_cell"`
	Error      string        `json:"error,omitempty"`
	Files      []report.File `json:"files"`
	Seeds      []report.Seed `json:"seeds"`

	nb        *notebook.Notebook
	traceback []string
}

func (r *runResult) print(stdout, stderr io.Writer) {
	if r.FailedCell != nil {
		fmt.Fprintf(stderr, "%s: cell [%d] failed: %s\n", r.Source, *r.FailedCell, r.Error)
		for _, line := range r.traceback {
			fmt.Fprintln(stderr, "  "+line)
		}
	}
	if r.Notebook != "" {
		fmt.Fprintln(stdout, "notebook:", r.Notebook)
	}
	if r.Report != "" {
		fmt.Fprintln(stdout, "report:", r.Report)
	}
}

// loadInput reads a notebook, or a model file as a notebook of one code
// cell.
func loadInput(name string, data []byte) (*notebook.Notebook, error) {
	if strings.EqualFold(filepath.Ext(name), ".ipynb") {
		nb, err := notebook.Read(data)
		if err != nil {
			return nil, err
		}
		// A notebook of another language would fail at its first line
		// with a message about our syntax: say what it is instead.
		if ks, ok := nb.Metadata["kernelspec"].(map[string]any); ok {
			if lang, ok := ks["language"].(string); ok && lang != "" && !strings.EqualFold(lang, kernel.Language) {
				return nil, fmt.Errorf("a notebook in %s (its kernelspec's language), not in nudge's model language: nudge runs the notebooks of its own kernel", lang)
			}
		}
		return nb, nil
	}
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{{ID: "model", Type: "code", Source: string(data), Metadata: map[string]any{}}}
	return nb, nil
}

// runNotebook runs one notebook or model file and writes its files. A cell
// that fails is not an error here (the result says which); a file that
// cannot be read or written is.
func runNotebook(ctx context.Context, input string, opts runOptions, bar *progress) (*runResult, error) {
	data, err := os.ReadFile(input)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return nil, fmt.Errorf("cannot read %s: %v", input, err)
	}
	nb, err := loadInput(input, data)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", input, err)
	}
	base := filepath.Base(input)
	isModel := !strings.EqualFold(filepath.Ext(input), ".ipynb")
	bar.start(codeCells(nb), base)
	failed, xerr := kernel.RunNotebook(ctx, nb, &kernel.NotebookRun{
		Dir: filepath.Dir(input),
		Cell: func(_, n, of int) {
			bar.step(n-1, fmt.Sprintf("%s cell %d of %d", base, n, of))
		},
		Progress: bar.analysis,
	})
	bar.stop()
	files, seeds := report.Collect(nb)
	res := &runResult{Kind: "run", Source: input, Files: files, Seeds: seeds, nb: nb}
	if files == nil {
		res.Files = []report.File{}
	}
	if seeds == nil {
		res.Seeds = []report.Seed{}
	}
	for _, c := range nb.Cells {
		if c.Type == "code" && c.ExecutionCount != nil {
			res.Cells++
		}
	}
	if xerr != nil {
		c := nb.Cells[failed]
		n := *c.ExecutionCount
		res.FailedCell = &n
		for _, o := range c.Outputs {
			if o.Type == "error" {
				res.Error = o.Ename + ": " + o.Evalue
				for _, line := range o.Traceback {
					res.traceback = append(res.traceback, stripSGR(line))
				}
			}
		}
	}
	replaced := false
	if opts.notebook != "" {
		replaced = sameFile(input, opts.notebook)
		b, err := nb.Marshal()
		if err == nil {
			err = writeFile(opts.notebook, b)
		}
		if err != nil {
			return nil, err
		}
		res.Notebook = opts.notebook
	}
	if opts.report != "" {
		facts := &report.Facts{
			Tool:         "nudge " + kernel.Version,
			Source:       base,
			SourceSHA256: report.SHA256(data),
			Replaced:     replaced,
			Files:        files,
			Seeds:        seeds,
			Rerun:        "nudge run " + base,
			Dir:          filepath.Dir(input),
		}
		if isModel {
			facts.Title = base
			facts.Model, facts.ModelSHA256 = "the model file itself", report.SHA256(data)
		} else {
			n := 0
			for _, c := range nb.Cells {
				if c.Type == "code" {
					n++
				}
			}
			facts.Model = fmt.Sprintf("the %d code cells, in order, each ending with a newline", n)
			if n == 1 {
				facts.Model = "the one code cell, ending with a newline"
			}
			facts.ModelSHA256 = report.SHA256([]byte(nb.CodeText()))
		}
		if opts.timestamp {
			facts.Generated = time.Now().UTC().Format(time.RFC3339)
		}
		var b strings.Builder
		if err := report.Write(&b, nb, facts); err != nil {
			return nil, err
		}
		if err := writeFile(opts.report, []byte(b.String())); err != nil {
			return nil, err
		}
		res.Report = opts.report
	}
	return res, nil
}

// codeCells counts the code cells that are not empty: those that run.
func codeCells(nb *notebook.Notebook) int {
	n := 0
	for _, c := range nb.Cells {
		if c.Type == "code" && strings.TrimSpace(c.Source) != "" {
			n++
		}
	}
	return n
}

// writeFile writes data to name, creating its directory.
func writeFile(name string, data []byte) error {
	if dir := filepath.Dir(name); dir != "." {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
	}
	return os.WriteFile(name, data, 0o644)
}

// stripSGR removes terminal colour codes from an error line.
func stripSGR(s string) string {
	for {
		i := strings.Index(s, "\x1b[")
		if i < 0 {
			return s
		}
		j := i + 2
		for j < len(s) && (s[j] >= '0' && s[j] <= '9' || s[j] == ';') {
			j++
		}
		if j < len(s) {
			j++
		}
		s = s[:i] + s[j:]
	}
}
