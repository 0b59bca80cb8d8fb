package kernel

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"sort"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/jupyter"
	"github.com/nudge-dev/nudge/kernel/render"
)

// frontEndModel is an invented part-costing model that every command's
// example runs against.
const frontEndModel = `input units   = 1000                 (800..1300)
input mass    = 12 [kg]              (-5%..+8%)
input hours   = 1.5 [h]              (±20%)
input steel   = 0.9 [$/kg]           ~ pert(0.8, 0.9, 1.2)
input rate    = 60 [$/h]             ~ normal(60, 5)
input energy  = 40 [kWh]             (30..55)
input tariff  = 0.2 [$/kWh]          (0.15..0.3)
input tooling = 50000 [$]            (45000..60000)
unit_cost = mass * steel + hours * rate +
            energy * tariff
total     = units * unit_cost + tooling  [$]
`

// frontEndCells are the cells whose outputs the front-end tests read: the
// model, a value, every command's example (the command table's), the other
// forms results take (charts as text and PNG, a break-even with no answer, a
// result too large for a notebook), a stream-only cell and a failing one.
func frontEndCells() []string {
	cells := []string{frontEndModel, "total", "scenario lean: hours = 1.2, rate = 55"}
	verbs := make([]string, 0, len(commands))
	for v := range commands {
		verbs = append(verbs, v)
	}
	sort.Strings(verbs)
	for _, v := range verbs {
		switch v {
		case "reset", "charts":
			continue // below, where they change nothing that follows
		}
		cells = append(cells, commands[v].Example)
	}
	return append(cells,
		"sweep total over rate 40..80",
		"breakeven total = 1 over steel 0.8..1",
		"sweep total over rate 40..80 and hours 1..2 n=300 limit=90000",
		"charts text\ntornado total",
		"charts png\ndrivers total",
		"charts svg",
		`print "stdout only"`,
		"total2 = total * shop_rat",
		commands["reset"].Example,
	)
}

// notebookOutputs turns what a cell sent into its outputs as nbformat 4
// keeps them in a saved notebook.
func notebookOutputs(fe *frontEnd, result *jupyter.Bundle, err error, n int) []map[string]any {
	outs := []map[string]any{}
	for _, o := range fe.outputs {
		if o.stream != "" {
			outs = append(outs, map[string]any{"output_type": "stream", "name": o.stream, "text": o.data["text"]})
		} else {
			outs = append(outs, map[string]any{"output_type": "display_data", "data": o.data, "metadata": map[string]any{}})
		}
	}
	if result != nil {
		outs = append(outs, map[string]any{"output_type": "execute_result", "execution_count": n, "data": result.Data, "metadata": map[string]any{}})
	}
	var ee *jupyter.ExecError
	if errors.As(err, &ee) {
		outs = append(outs, map[string]any{"output_type": "error", "ename": ee.Name, "evalue": ee.Value, "traceback": ee.Traceback})
	}
	return outs
}

// TestFrontEndBundles runs frontEndCells through the Jupyter handler and
// checks what every front end relies on: no output offers application/json
// (JupyterLab's JSON viewer would take it ahead of HTML), every result
// carries text/plain, text/html and its JSON under render.ResultMIME, and
// every command that shows a result shows one. With NUDGE_BUNDLES set it
// writes the cells' outputs there, for the test that runs JupyterLab's own
// rendermime registry on them (kernel/testdata/rendermime).
func TestFrontEndBundles(t *testing.T) {
	h := NewHandler(New())
	type cell struct {
		Source  string           `json:"source"`
		Outputs []map[string]any `json:"outputs"`
	}
	var cells []cell
	kinds := map[string]bool{}
	for i, src := range frontEndCells() {
		fe := &frontEnd{}
		result, err := h.Execute(context.Background(), src, fe, jupyter.ExecOptions{ExecutionCount: i + 1})
		if err != nil && !strings.Contains(src, "shop_rat") {
			t.Fatalf("%q: %v", src, err)
		}
		outs := notebookOutputs(fe, result, err, i+1)
		for _, o := range outs {
			data, _ := o["data"].(map[string]any)
			if _, ok := data["application/json"]; ok {
				t.Errorf("%q: an output offers application/json", src)
			}
			raw, ok := data[render.ResultMIME].(json.RawMessage)
			if !ok {
				continue
			}
			var k struct{ Kind string }
			if err := json.Unmarshal(raw, &k); err != nil || k.Kind == "" {
				t.Errorf("%q: %s is not a result object: %v", src, render.ResultMIME, err)
			}
			kinds[k.Kind] = true
			if _, ok := data["text/html"].(string); !ok || data["text/plain"] == nil {
				t.Errorf("%q: a %s result without text/html or text/plain", src, k.Kind)
			}
		}
		cells = append(cells, cell{src, outs})
	}
	// Every command that shows a result showed one (print writes a line,
	// reset and charts change the session, spearman declares).
	for v, c := range commands {
		switch v {
		case "print", "reset", "charts", "spearman":
			continue
		}
		if strings.HasPrefix(c.Example, v) && !kinds[kindOfVerb(v)] {
			t.Errorf("no %s result from %q", kindOfVerb(v), c.Example)
		}
	}
	if !kinds["value"] {
		t.Error("no value result")
	}
	out := os.Getenv("NUDGE_BUNDLES")
	if out == "" {
		return
	}
	var list []string
	for k := range kinds {
		list = append(list, k)
	}
	sort.Strings(list)
	// Shown while a cell runs and gone from the saved notebook: a progress
	// line; and the caution, which follows the results.
	live := []map[string]any{
		{"what": "progress line", "data": progressBundle("sweep total", 2048, 8000).Data},
		{"what": "caution", "data": render.CautionBundle()},
	}
	b, err := json.MarshalIndent(map[string]any{"cells": cells, "kinds": list, "live": live, "language_info": h.Info().Language}, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(out, b, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("wrote %d cells (%s) to %s", len(cells), strings.Join(list, ", "), out)
}

// kindOfVerb is the kind of result a command's verb shows.
func kindOfVerb(v string) string {
	switch v {
	case "simulate":
		return "simulation"
	case "screen":
		return "screening"
	case "attribute":
		return "attribution"
	}
	return v
}
