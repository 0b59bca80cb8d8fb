package kernel

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/kernel/notebook"
)

// KernelDisplayName is the name Jupyter shows for the kernel.
const KernelDisplayName = "nudge (cost-model sensitivity)"

// NotebookRun says how RunNotebook runs a notebook. A nil *NotebookRun
// means the defaults.
type NotebookRun struct {
	// Dir is the directory tables are read relative to: the notebook's,
	// where Jupyter starts the kernel ("" is the working directory).
	Dir string
	// Cell, when set, is called before each code cell runs: the cell's
	// index in the notebook, and the code cell's number of all of them.
	Cell func(index, n, of int)
	// Progress, when set, receives the progress reports of long analyses.
	// The notebook never gets progress lines: the Jupyter kernel clears
	// them away when an analysis ends, so the saved outputs are the same.
	Progress func(label string, done, total int)
}

// RunNotebook executes the code cells of nb in order in a new session, as
// the Jupyter kernel does when nbconvert or nbclient runs the notebook, and
// stores the outputs in the cells exactly as the kernel sends them (the same
// bundles, execution counts, streams and errors, with clear_output and
// update_display_data applied as nbclient applies them, and consecutive
// pieces of one stream joined as nbconvert and the notebook front ends save
// them). Empty code cells
// are skipped, as nbclient skips them. It stops at the first cell that fails:
// that cell keeps its outputs and its error output, and the cells after it
// are left without outputs. It returns the index of the failed cell and its
// error, or -1 and nil.
//
// The notebook's metadata gets the kernel's language_info (as nbclient sets
// it), a kernelspec when it has none, nbformat 4.5, and an id for each cell
// that lacks one.
func RunNotebook(ctx context.Context, nb *notebook.Notebook, opts *NotebookRun) (failed int, err error) {
	if opts == nil {
		opts = &NotebookRun{}
	}
	in := New()
	in.Dir = opts.Dir
	h := NewHandler(in)
	h.onProgress = opts.Progress
	if h.onProgress == nil {
		h.onProgress = func(string, int, int) {}
	}
	setMetadata(nb, h.Info())
	codeCells := 0
	for _, c := range nb.Cells {
		if c.Type == "code" {
			c.Outputs, c.ExecutionCount = nil, nil
			if strings.TrimSpace(c.Source) != "" {
				codeCells++
			}
		}
	}
	count, n := 0, 0
	for i, c := range nb.Cells {
		if c.Type != "code" || strings.TrimSpace(c.Source) == "" {
			continue
		}
		n++
		if opts.Cell != nil {
			opts.Cell(i, n, codeCells)
		}
		count++
		ec := count
		c.ExecutionCount = &ec
		rec := &recorder{}
		var result *jupyter.Bundle
		var xerr error
		func() {
			defer func() {
				// The kernel turns a panic of its handler into an error
				// output (jupyter.Kernel.safe); so does the runner.
				if r := recover(); r != nil {
					v := fmt.Sprint(r)
					xerr = &jupyter.ExecError{Name: "InternalError", Value: v, Traceback: []string{
						"InternalError: " + v,
						"This is a bug in the kernel. It recovered and keeps running; the details are in its log.",
					}}
				}
			}()
			result, xerr = h.Execute(ctx, c.Source, rec, jupyter.ExecOptions{StoreHistory: true, AllowStdin: true, ExecutionCount: ec})
		}()
		if xerr == nil && result != nil {
			rec.add(&notebook.Output{Type: "execute_result", Data: plainData(result.Data), Metadata: orEmpty(result.Metadata), ExecutionCount: &ec})
		}
		if xerr != nil {
			var ee *jupyter.ExecError
			if ctx.Err() != nil && !errors.As(xerr, &ee) {
				xerr = &jupyter.ExecError{Name: "Interrupted", Value: "the cell was interrupted", Traceback: []string{"Interrupted: the cell was stopped by the user"}}
			}
			ename, evalue, tb := jupyter.ErrorContent(xerr)
			rec.add(&notebook.Output{Type: "error", Ename: ename, Evalue: evalue, Traceback: tb})
		}
		c.Outputs = coalesceStreams(rec.outs)
		if xerr != nil {
			return i, xerr
		}
	}
	return -1, nil
}

// setMetadata gives the notebook the kernel's language_info, a kernelspec
// when it has none, nbformat 4.5 and cell ids.
func setMetadata(nb *notebook.Notebook, info jupyter.KernelInfo) {
	if nb.Metadata == nil {
		nb.Metadata = map[string]any{}
	}
	li, _ := json.Marshal(info.Language)
	var lang map[string]any
	json.Unmarshal(li, &lang)
	nb.Metadata["language_info"] = lang
	if _, ok := nb.Metadata["kernelspec"]; !ok {
		nb.Metadata["kernelspec"] = map[string]any{"name": "nudge", "display_name": KernelDisplayName, "language": Language}
	}
	nb.Nbformat, nb.NbformatMinor = 4, max(nb.NbformatMinor, 5)
	seen := map[string]bool{}
	for _, c := range nb.Cells {
		seen[c.ID] = true
	}
	for i, c := range nb.Cells {
		if c.ID != "" {
			continue
		}
		id := fmt.Sprintf("cell-%d", i+1)
		for k := 2; seen[id]; k++ {
			id = fmt.Sprintf("cell-%d-%d", i+1, k)
		}
		c.ID, seen[id] = id, true
	}
}

// plainData turns a bundle's data into the values a notebook holds: JSON
// already encoded (the result object) is decoded, keeping its numbers as
// written, so that the notebook stores it with sorted keys as nbformat does.
func plainData(data map[string]any) map[string]any {
	out := make(map[string]any, len(data))
	for k, v := range data {
		if raw, ok := v.(json.RawMessage); ok {
			dec := json.NewDecoder(bytes.NewReader(raw))
			dec.UseNumber()
			var x any
			if dec.Decode(&x) == nil {
				v = x
			}
		}
		out[k] = v
	}
	return out
}

func orEmpty(m map[string]any) map[string]any {
	if m == nil {
		return map[string]any{}
	}
	return m
}

// recorder is the jupyter.Output of a cell run headless: it keeps the
// outputs as nbclient keeps the messages of a cell in the notebook.
type recorder struct {
	outs []*notebook.Output
	// ids maps a display id to the outputs shown under it.
	ids map[string][]*notebook.Output
	// clearNext is a clear_output with wait, done when the next output
	// arrives.
	clearNext bool
}

func (r *recorder) add(o *notebook.Output) {
	if r.clearNext {
		r.outs, r.ids, r.clearNext = nil, nil, false
	}
	r.outs = append(r.outs, o)
}

func (r *recorder) Stream(name, text string) {
	if text == "" {
		return
	}
	if name != "stdout" && name != "stderr" {
		name = "stdout"
	}
	r.add(&notebook.Output{Type: "stream", Name: name, Text: text})
}

func (r *recorder) Display(b *jupyter.Bundle, displayID string) {
	o := &notebook.Output{Type: "display_data", Data: plainData(b.Data), Metadata: orEmpty(b.Metadata)}
	r.add(o)
	if displayID != "" {
		if r.ids == nil {
			r.ids = map[string][]*notebook.Output{}
		}
		r.ids[displayID] = append(r.ids[displayID], o)
	}
}

func (r *recorder) UpdateDisplay(b *jupyter.Bundle, displayID string) {
	for _, o := range r.ids[displayID] {
		o.Data, o.Metadata = plainData(b.Data), orEmpty(b.Metadata)
	}
}

func (r *recorder) ClearOutput(wait bool) {
	if wait {
		r.clearNext = true
		return
	}
	r.outs, r.ids, r.clearNext = nil, nil, false
}

func (r *recorder) Payload(map[string]any) {}

// coalesceStreams joins consecutive outputs of one stream and drops the text
// that a carriage return overwrites, as nbconvert's coalesce_streams does
// (and as the notebook front ends show streams): a stream that arrives in
// several messages is one output in a saved notebook.
func coalesceStreams(outs []*notebook.Output) []*notebook.Output {
	var merged []*notebook.Output
	for _, o := range outs {
		if n := len(merged); n > 0 && o.Type == "stream" && merged[n-1].Type == "stream" && merged[n-1].Name == o.Name {
			merged[n-1] = &notebook.Output{Type: "stream", Name: o.Name, Text: merged[n-1].Text + o.Text}
			continue
		}
		merged = append(merged, o)
	}
	for _, o := range merged {
		if o.Type == "stream" && strings.Contains(o.Text, "\r") {
			o.Text = dropOverwritten(o.Text)
		}
	}
	return merged
}

// dropOverwritten removes, from each line, the text before the last carriage
// return that some character of the line follows (nbconvert's pattern
// `.*\r(?=[^\n])`).
func dropOverwritten(s string) string {
	lines := strings.SplitAfter(s, "\n")
	for i, line := range lines {
		body := strings.TrimSuffix(line, "\n")
		for j := len(body) - 2; j >= 0; j-- {
			if body[j] == '\r' {
				lines[i] = line[j+1:]
				break
			}
		}
	}
	return strings.Join(lines, "")
}
