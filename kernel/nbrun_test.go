package kernel

import (
	"regexp"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/notebook"
)

// TestDropOverwritten checks the carriage-return rule against the regular
// expression nbconvert uses (`.*\r(?=[^\n])`, removed), rewritten without
// the look-ahead Go's regexp lacks: a \r followed by a character other than
// a newline, and everything on its line before it.
func TestDropOverwritten(t *testing.T) {
	re := regexp.MustCompile(`[^\n]*\r([^\n])`)
	ref := func(s string) string {
		// Apply the greedy match repeatedly from the left, as re.sub does:
		// each match ends at the last qualifying \r of its line.
		return re.ReplaceAllString(s, "$1")
	}
	for _, s := range []string{"10%\r50%\r100%\n", "a\r\nb", "x\r", "one\rtwo\nthree\rfour", "\r\r\n", "plain\n", "a\rb\rc\r"} {
		if got, want := dropOverwritten(s), ref(s); got != want {
			t.Errorf("dropOverwritten(%q) = %q, want %q", s, got, want)
		}
	}
}

// TestRecorderClear: clear_output with wait clears when the next output
// arrives; update_display_data replaces the display shown under its id
// (nbclient's rules, nbclient/client.py output and clear_output).
func TestRecorderClear(t *testing.T) {
	r := &recorder{}
	r.Stream("stdout", "a\n")
	r.ClearOutput(true)
	if len(r.outs) != 1 {
		t.Fatal("clear with wait cleared at once")
	}
	r.Display(progressBundle("simulate", 1, 4), "p1")
	r.UpdateDisplay(progressBundle("simulate", 3, 4), "p1")
	if len(r.outs) != 1 || !strings.Contains(r.outs[0].DataText("text/html"), `value="3"`) {
		t.Fatalf("outputs %+v", r.outs)
	}
	r.ClearOutput(false)
	r.Stream("stderr", "w\n")
	r.Stream("stderr", "x\n")
	outs := coalesceStreams(r.outs)
	if len(outs) != 1 || outs[0].Text != "w\nx\n" {
		t.Fatalf("outputs %+v", outs)
	}
}

// TestRunNotebookOutputs: results become display_data, the value that ends
// a cell its execute_result with the cell's number, and the caution follows
// the results that carry it; empty code cells do not run or count.
func TestRunNotebookOutputs(t *testing.T) {
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{
		{Type: "code", Source: "input rate = 60 [$/h] (50..70)\ncost = 2 [h] * rate"},
		{Type: "code", Source: "  \n"},
		{Type: "code", Source: "drivers cost\ncost"},
	}
	failed, err := RunNotebook(t.Context(), nb, nil)
	if err != nil || failed != -1 {
		t.Fatalf("failed %d: %v", failed, err)
	}
	if nb.Cells[1].ExecutionCount != nil || *nb.Cells[2].ExecutionCount != 2 {
		t.Errorf("execution counts %v %v", nb.Cells[1].ExecutionCount, nb.Cells[2].ExecutionCount)
	}
	var types []string
	for _, o := range nb.Cells[2].Outputs {
		types = append(types, o.Type)
	}
	if strings.Join(types, " ") != "display_data display_data execute_result" {
		t.Errorf("outputs %v", types)
	}
	last := nb.Cells[2].Outputs[2]
	if *last.ExecutionCount != 2 || !strings.Contains(last.DataText("text/plain"), "$120") {
		t.Errorf("execute_result %+v", last)
	}
	if nb.Cells[0].ID == "" || nb.Cells[0].ID == nb.Cells[1].ID || nb.NbformatMinor != 5 {
		t.Error("cells lack ids, or the notebook is not 4.5")
	}
}
