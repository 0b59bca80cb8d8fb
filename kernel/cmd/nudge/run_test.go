package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/notebook"
	"github.com/nudge-dev/nudge/kernel/render"
)

// copyNotebooks copies the repository's notebooks and the files they read
// into a new directory.
func copyNotebooks(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	names, _ := filepath.Glob("../../../notebooks/*")
	for _, n := range names {
		if strings.HasSuffix(n, ".go") {
			continue
		}
		data, err := os.ReadFile(n)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(n)), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func readNotebook(t *testing.T, name string) *notebook.Notebook {
	t.Helper()
	data, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	nb, err := notebook.Read(data)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return nb
}

// plain decodes v's JSON form into plain values (numbers as float64), so
// that two encoders' ways of writing one number compare equal.
func plain(t *testing.T, v any) any {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	var x any
	if err := json.Unmarshal(b, &x); err != nil {
		t.Fatal(err)
	}
	return x
}

// TestRunMatchesNbconvert runs every bundled notebook through `nudge run`
// and through nbconvert with the nudge kernel (Jupyter's own client,
// nbclient, driving the real kernel over ZeroMQ), and checks that the two
// give the same outputs: the same MIME bundles, streams, errors and
// execution counts, cell by cell; they differ only in the metadata nbconvert
// adds (timings). It also checks that nbformat itself writes the notebook
// `nudge run` wrote byte for byte as nudge wrote it (keys sorted, one
// space of indent, text as lists of lines).
func TestRunMatchesNbconvert(t *testing.T) {
	const py = "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import nbconvert, nbformat").Run(); err != nil {
		t.Skipf("skipped: %s cannot import nbconvert and nbformat (%v); on Debian: apt install jupyter-nbconvert", py, err)
	}
	if testing.Short() || raceEnabled {
		// Under the race detector the other run tests cover the same code
		// in this process; Jupyter's side has no Go to check.
		t.Skip("skipped in -short and under -race: it starts Jupyter")
	}
	tmp := t.TempDir()
	bin := filepath.Join(tmp, "nudge")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	jp := filepath.Join(tmp, "jp")
	if out, err := exec.Command(bin, "install", "--prefix", jp).CombinedOutput(); err != nil {
		t.Fatalf("nudge install: %v\n%s", err, out)
	}
	dir := copyNotebooks(t)
	names, _ := filepath.Glob(filepath.Join(dir, "*.ipynb"))
	if len(names) < 4 {
		t.Fatalf("found %d notebooks", len(names))
	}
	for _, name := range names {
		base := strings.TrimSuffix(filepath.Base(name), ".ipynb")
		t.Run(base, func(t *testing.T) {
			nbcDir := filepath.Join(tmp, "nbconvert")
			cmd := exec.Command(py, "-m", "nbconvert", "--to", "notebook", "--execute",
				"--ExecutePreprocessor.kernel_name=nudge", "--ExecutePreprocessor.timeout=600",
				"--output-dir", nbcDir, name)
			cmd.Env = append(os.Environ(), "JUPYTER_PATH="+filepath.Join(jp, "share", "jupyter"))
			if out, err := cmd.CombinedOutput(); err != nil {
				t.Fatalf("nbconvert: %v\n%s", err, out)
			}
			ours := filepath.Join(tmp, "run", base+".ipynb")
			if code, out, errs := runNudge([]string{"run", name, "-o", ours, "--html", filepath.Join(tmp, "run", base+".html")}, ""); code != 0 {
				t.Fatalf("nudge run: exit %d\n%s\n%s", code, out, errs)
			}
			want := readNotebook(t, filepath.Join(nbcDir, base+".ipynb"))
			got := readNotebook(t, ours)
			if len(got.Cells) != len(want.Cells) {
				t.Fatalf("%d cells, nbconvert %d", len(got.Cells), len(want.Cells))
			}
			if g, w := plain(t, got.Metadata["language_info"]), plain(t, want.Metadata["language_info"]); !reflect.DeepEqual(g, w) {
				t.Errorf("language_info %v, nbconvert %v", g, w)
			}
			for i := range got.Cells {
				g, w := got.Cells[i], want.Cells[i]
				if g.Type != w.Type || g.Source != w.Source || g.ID != w.ID {
					t.Fatalf("cell %d: not the same cell", i)
				}
				if !reflect.DeepEqual(g.ExecutionCount, w.ExecutionCount) {
					t.Errorf("cell %d: execution_count %v, nbconvert %v", i, g.ExecutionCount, w.ExecutionCount)
				}
				if len(g.Outputs) != len(w.Outputs) {
					t.Errorf("cell %d: %d outputs, nbconvert %d", i, len(g.Outputs), len(w.Outputs))
					continue
				}
				for j := range g.Outputs {
					if go1, wo := plain(t, g.Outputs[j]), plain(t, w.Outputs[j]); !reflect.DeepEqual(go1, wo) {
						gb, _ := json.Marshal(go1)
						wb, _ := json.Marshal(wo)
						t.Errorf("cell %d output %d:\n nudge run %.600s\n nbconvert %.600s", i, j, gb, wb)
					}
				}
			}
			// nbformat rewrites our notebook byte for byte.
			script := "import sys, nbformat\nnb = nbformat.read(sys.argv[1], as_version=4)\nnbformat.validate(nb)\nsys.stdout.write(nbformat.writes(nb) + '\\n')"
			out, err := exec.Command(py, "-c", script, ours).Output()
			if err != nil {
				t.Fatalf("nbformat: %v", err)
			}
			if mine, _ := os.ReadFile(ours); !bytes.Equal(out, mine) {
				t.Errorf("nbformat writes the notebook differently from nudge run (%d against %d bytes)", len(out), len(mine))
			}
		})
	}
}

// TestRunReproducible: two runs of a notebook with sampling analyses and of
// one that reads a table give byte-identical notebooks and reports; the
// report states the tool, the hashes and every seed. The SHA-256 sums are
// checked against sha256sum (GNU coreutils) where it is installed, else
// against crypto/sha256.
func TestRunReproducible(t *testing.T) {
	dir := copyNotebooks(t)
	for _, base := range []string{"energy", "steel_bid"} {
		var first [2][]byte
		for run := range 2 {
			out := filepath.Join(t.TempDir(), base)
			if code, so, se := runNudge([]string{"run", "-o", out + ".ipynb", "--html", out + ".html", filepath.Join(dir, base+".ipynb")}, ""); code != 0 {
				t.Fatalf("%s: exit %d\n%s\n%s", base, code, so, se)
			}
			nb, _ := os.ReadFile(out + ".ipynb")
			rep, _ := os.ReadFile(out + ".html")
			if run == 0 {
				first = [2][]byte{nb, rep}
				continue
			}
			if !bytes.Equal(nb, first[0]) {
				t.Errorf("%s: the notebooks of two runs differ", base)
			}
			if !bytes.Equal(rep, first[1]) {
				t.Errorf("%s: the reports of two runs differ", base)
			}
		}
		rep := string(first[1])
		if !strings.Contains(rep, "nudge ") || !strings.Contains(rep, sha256Of(t, filepath.Join(dir, base+".ipynb"))) {
			t.Errorf("%s: the report lacks the tool or the notebook's SHA-256", base)
		}
		// The model text: the code cells joined, each ending with a newline,
		// hashed here by sha256sum on the text written out.
		code := ""
		for _, c := range readNotebook(t, filepath.Join(dir, base+".ipynb")).Cells {
			if c.Type == "code" {
				code += strings.TrimSuffix(c.Source, "\n") + "\n"
			}
		}
		codeFile := filepath.Join(t.TempDir(), "code.txt")
		os.WriteFile(codeFile, []byte(code), 0o644)
		if !strings.Contains(rep, "Model text</th><td>the ") || !strings.Contains(rep, sha256Of(t, codeFile)) {
			t.Errorf("%s: the report lacks the model text's SHA-256", base)
		}
		if strings.Contains(rep, "Generated") {
			t.Errorf("%s: a time stamp without --timestamp", base)
		}
		if !strings.Contains(rep, "Caution.") {
			t.Errorf("%s: no caution", base)
		}
	}
	// energy.ipynb runs simulate, sobol, morris and screen, each with seed=42.
	code, out, _ := runNudge([]string{"run", "--json", "--html", filepath.Join(t.TempDir(), "e.html"), filepath.Join(dir, "energy.ipynb")}, "")
	var res runResult
	if err := json.Unmarshal([]byte(out), &res); code != 0 || err != nil {
		t.Fatalf("exit %d, %v: %s", code, err, out)
	}
	var kinds []string
	for _, s := range res.Seeds {
		if s.Seed != 42 || s.Output != "npv" {
			t.Errorf("seed %+v", s)
		}
		kinds = append(kinds, s.Kind)
	}
	if strings.Join(kinds, " ") != "simulation sobol morris screening" {
		t.Errorf("seeds of %v", kinds)
	}
	// steel_bid.ipynb reads steel_bid.csv.
	code, out, _ = runNudge([]string{"run", "--json", "--html", filepath.Join(t.TempDir(), "s.html"), filepath.Join(dir, "steel_bid.ipynb")}, "")
	res = runResult{}
	if err := json.Unmarshal([]byte(out), &res); code != 0 || err != nil {
		t.Fatalf("exit %d, %v: %s", code, err, out)
	}
	if len(res.Files) != 1 || res.Files[0].Path != "steel_bid.csv" || res.Files[0].SHA256 != sha256Of(t, filepath.Join(dir, "steel_bid.csv")) {
		t.Errorf("files %+v", res.Files)
	}
	// --timestamp adds the time.
	rep := filepath.Join(t.TempDir(), "h.html")
	runNudge([]string{"run", "--timestamp", "--html", rep, filepath.Join(dir, "housing.ipynb")}, "")
	if b, _ := os.ReadFile(rep); !regexp.MustCompile(`Generated</th><td>\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ`).Match(b) {
		t.Error("--timestamp: no time in the report")
	}
}

// sha256Of is a file's SHA-256 by sha256sum when installed, else by
// crypto/sha256.
func sha256Of(t *testing.T, name string) string {
	t.Helper()
	if out, err := exec.Command("sha256sum", name).Output(); err == nil {
		return strings.Fields(string(out))[0]
	}
	data, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	s := sha256.Sum256(data)
	return hex.EncodeToString(s[:])
}

// writeNotebook writes a notebook of the given cells ("md:" starts a
// markdown cell) and returns its path.
func writeNotebook(t *testing.T, dir, name string, cells ...string) string {
	t.Helper()
	nb := notebook.New()
	for i, c := range cells {
		cell := &notebook.Cell{ID: "c" + string(rune('a'+i)), Type: "code", Source: c, Metadata: map[string]any{}}
		if src, ok := strings.CutPrefix(c, "md:"); ok {
			cell.Type, cell.Source = "markdown", src
		}
		nb.Cells = append(nb.Cells, cell)
	}
	b, err := nb.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestRunFailingCell: the report shows the error where it happened, with
// its line, column and caret, keeps the outputs before it, marks the cells
// after it as not run, and the command exits 1.
func TestRunFailingCell(t *testing.T) {
	dir := t.TempDir()
	path := writeNotebook(t, dir, "fail.ipynb",
		"md:# A failing run",
		"input rate = 60 [$/h] (50..70)\ncost = 2 [h] * rate\ncost",
		"print \"before the error\"\ntotal = cost * shop_rat\ntotal",
		"cost * 2")
	code, out, errs := runNudge([]string{"run", path, "-o", filepath.Join(dir, "out.ipynb")}, "")
	if code != 1 {
		t.Fatalf("exit %d, want 1\n%s\n%s", code, out, errs)
	}
	if !strings.Contains(errs, "cell [2] failed") || !strings.Contains(errs, "undefined: shop_rat") {
		t.Errorf("stderr %q", errs)
	}
	nb := readNotebook(t, filepath.Join(dir, "out.ipynb"))
	c1, c2, c3 := nb.Cells[1], nb.Cells[2], nb.Cells[3]
	if c1.ExecutionCount == nil || *c1.ExecutionCount != 1 || len(c1.Outputs) == 0 || c1.Outputs[len(c1.Outputs)-1].Type != "execute_result" {
		t.Errorf("cell 1 lost its outputs: %+v", c1.Outputs)
	}
	last := c2.Outputs[len(c2.Outputs)-1]
	if last.Type != "error" || !strings.Contains(last.Evalue, "line 2, column 16: undefined: shop_rat") {
		t.Errorf("cell 2 ends with %+v", last)
	}
	if c2.Outputs[0].Type != "stream" || c2.Outputs[0].Text != "before the error\n" {
		t.Errorf("cell 2's output before the error: %+v", c2.Outputs[0])
	}
	if c3.ExecutionCount != nil || len(c3.Outputs) != 0 {
		t.Errorf("cell 3 ran after the failure")
	}
	rep, err := os.ReadFile(filepath.Join(dir, "fail.html"))
	if err != nil {
		t.Fatal(err)
	}
	r := string(rep)
	for _, want := range []string{"This run stopped at", "Cell [2] failed: ModelError: line 2, column 16: undefined: shop_rat", "before the error", "$120", "Not run: an earlier cell failed", "^"} {
		if !strings.Contains(r, want) {
			t.Errorf("the report lacks %q", want)
		}
	}
	if strings.Index(r, "before the error") > strings.Index(r, "Cell [2] failed") {
		t.Error("the error is not where it happened")
	}
}

// TestRunModelFile: a .nudge file becomes a report of one cell, with the
// results nudge exec gives.
func TestRunModelFile(t *testing.T) {
	dir := copyNotebooks(t)
	rep := filepath.Join(t.TempDir(), "housing.html")
	code, out, errs := runNudge([]string{"run", "--html", rep, "-o", rep + ".ipynb", filepath.Join(dir, "housing.nudge")}, "")
	if code != 0 {
		t.Fatalf("exit %d\n%s\n%s", code, out, errs)
	}
	nb := readNotebook(t, rep+".ipynb")
	if len(nb.Cells) != 1 || nb.Cells[0].Type != "code" {
		t.Fatalf("%d cells", len(nb.Cells))
	}
	_, jsonOut, _ := runNudge([]string{"exec", "--json", filepath.Join(dir, "housing.nudge")}, "")
	var execKinds, runKinds []string
	for _, line := range strings.Split(strings.TrimSpace(jsonOut), "\n") {
		var obj map[string]any
		json.Unmarshal([]byte(line), &obj)
		execKinds = append(execKinds, obj["kind"].(string))
	}
	for _, o := range nb.Cells[0].Outputs {
		if o.Type == "stream" && o.Name == "stdout" {
			runKinds = append(runKinds, "print")
		}
		if obj, ok := o.Data["application/vnd.nudge.result+json"].(map[string]any); ok {
			runKinds = append(runKinds, obj["kind"].(string))
		}
	}
	if strings.Join(execKinds, " ") != strings.Join(runKinds, " ") {
		t.Errorf("nudge run shows %v, nudge exec %v", runKinds, execKinds)
	}
	b, _ := os.ReadFile(rep)
	if !strings.Contains(string(b), "the model file itself<br><code class=\"nudge-hash\">SHA-256 "+sha256Of(t, filepath.Join(dir, "housing.nudge"))) {
		t.Error("the report lacks the model file's SHA-256")
	}
}

// externalRef finds what a page would load from elsewhere: a src or href
// to an absolute URL (http, https or protocol-relative) on an element that
// loads it (img, script, link, iframe, source, video, audio, embed, object),
// a CSS url() or @import of one.
var externalRef = regexp.MustCompile(`(?i)<(img|script|link|iframe|source|video|audio|embed|object|image|use)\b[^>]*\b(src|href|data|xlink:href)\s*=\s*["']?\s*(https?:)?//|url\(\s*["']?\s*(https?:)?//|@import`)

// TestDemoReportsLoadNothing runs `nudge demo` into a new directory: every
// notebook runs, the summary names the top drivers, draws a tornado and
// gives each report's path, and no report loads anything from elsewhere.
func TestDemoReportsLoadNothing(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "demo")
	code, out, errs := runNudge([]string{"demo", dir}, "")
	if code != 0 {
		t.Fatalf("exit %d\n%s\n%s", code, out, errs)
	}
	for _, want := range []string{"top drivers of unit_cost", "baseline $97.41", "│", "report: " + filepath.Join(dir, "housing.html")} {
		if !strings.Contains(out, want) {
			t.Errorf("the summary lacks %q:\n%s", want, out)
		}
	}
	reports, _ := filepath.Glob(filepath.Join(dir, "*.html"))
	if len(reports) != 4 {
		t.Fatalf("%d reports", len(reports))
	}
	for _, r := range reports {
		if !strings.Contains(out, "report: "+r) {
			t.Errorf("the summary does not give %s", r)
		}
		b, _ := os.ReadFile(r)
		if m := externalRef.Find(b); m != nil {
			t.Errorf("%s loads %s", r, m)
		}
		if !bytes.Contains(b, []byte("<svg class=\"nudge-svg\"")) {
			t.Errorf("%s has no inline chart", r)
		}
	}
	// --json: one object per notebook, nothing else.
	code, out, errs = runNudge([]string{"demo", "--json", filepath.Join(t.TempDir(), "j")}, "")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if code != 0 || errs != "" || len(lines) != 4 {
		t.Fatalf("--json: exit %d, %d lines, stderr %q", code, len(lines), errs)
	}
	for _, line := range lines {
		var res runResult
		if err := json.Unmarshal([]byte(line), &res); err != nil || res.Kind != "run" || res.FailedCell != nil || res.Cells == 0 {
			t.Errorf("--json line %s: %v", line, err)
		}
	}
	// The pattern catches what it is meant to.
	for _, bad := range []string{`<img src="https://x.test/a.png">`, `<script src="//cdn.test/x.js">`, `<link rel="stylesheet" href="http://x.test/s.css">`, `a { background: url("https://x.test/i.png") }`} {
		if !externalRef.MatchString(bad) {
			t.Errorf("externalRef misses %s", bad)
		}
	}
}

// TestReportImages: a markdown image from elsewhere is not loaded but shown
// as its text and address; a local image and a cell attachment are embedded.
func TestReportImages(t *testing.T) {
	dir := t.TempDir()
	// A 1x1 PNG (the smallest valid image: signature, IHDR, IDAT, IEND).
	png := []byte("\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x00\x01\x00\x00\x00\x01\x08\x06\x00\x00\x00\x1f\x15\xc4\x89\x00\x00\x00\rIDATx\x9cc\xf8\x0f\x00\x00\x01\x01\x00\x05\x18\xd8N\x00\x00\x00\x00IEND\xaeB`\x82")
	os.WriteFile(filepath.Join(dir, "dot.png"), png, 0o644)
	path := writeNotebook(t, dir, "img.ipynb",
		"md:# Images\n\n![far](https://example.test/far.png) and ![near](dot.png) and <img src=\"https://example.test/raw.png\">",
		"1 + 1")
	if code, out, errs := runNudge([]string{"run", path}, ""); code != 0 {
		t.Fatalf("exit %d\n%s\n%s", code, out, errs)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "img.html"))
	r := string(b)
	if m := externalRef.FindString(r); m != "" {
		t.Errorf("the report loads %s", m)
	}
	if !strings.Contains(r, "[image not included: far (https://example.test/far.png)]") {
		t.Error("the remote image is not named")
	}
	if !strings.Contains(r, `<img alt="near" src="data:image/png;base64,`) {
		t.Error("the local image is not embedded")
	}
}

// TestFlagsAfterArguments: flags parse the same before and after the file
// name; after "--" everything is a file name; a run into a pipe writes
// nothing on standard error.
func TestFlagsAfterArguments(t *testing.T) {
	dir := copyNotebooks(t)
	for _, args := range [][]string{
		{"run", "--html", filepath.Join(dir, "a.html"), filepath.Join(dir, "housing.ipynb")},
		{"run", filepath.Join(dir, "housing.ipynb"), "--html", filepath.Join(dir, "a.html")},
	} {
		// Standard error is no terminal here: no progress bar, nothing at all.
		if code, _, errs := runNudge(args, ""); code != 0 || errs != "" {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
	}
	if code, _, errs := runNudge([]string{"run", "--", "--html"}, ""); code != 1 || !strings.Contains(errs, "cannot read --html") {
		t.Errorf("after --: exit %d %q", code, errs)
	}
	if code, _, errs := runNudge([]string{"run", "a.ipynb", "b.ipynb"}, ""); code != 2 || !strings.Contains(errs, "one notebook or model file at a time, found 2") {
		t.Errorf("two notebooks: exit %d, want 2; stderr %q", code, errs)
	}
}

// TestRunNeverReplacesItsInput: a careless -o or --html that names the
// input, or one path for both files, is a usage error (exit 2) that leaves
// every file as it was; a notebook executed in place (-o the notebook) is
// allowed, and its report says the source's hash is of the file as read.
func TestRunNeverReplacesItsInput(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "m.nudge")
	src := []byte("input a = 2 (1..3)\ny = a * a\ny\n")
	if err := os.WriteFile(model, src, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"run", "-o", model, model},
		{"run", "--html", model, model},
		{"run", "-o", filepath.Join(dir, "x.html"), "--html", filepath.Join(dir, "x.html"), model},
	} {
		code, _, errs := runNudge(args, "")
		if code != 2 || !strings.Contains(errs, "give") {
			t.Errorf("%q: exit %d, stderr %q", args, code, errs)
		}
		if b, _ := os.ReadFile(model); !bytes.Equal(b, src) {
			t.Fatalf("%q replaced the model file", args)
		}
		if _, err := os.Stat(filepath.Join(dir, "x.html")); err == nil {
			t.Fatalf("%q wrote x.html", args)
		}
	}

	// In place: allowed, and said.
	nbPath := filepath.Join(dir, "n.ipynb")
	nb := notebook.New()
	nb.Cells = []*notebook.Cell{{ID: "c", Type: "code", Source: string(src), Metadata: map[string]any{}}}
	data, err := nb.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(nbPath, data, 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runNudge([]string{"run", "-o", nbPath, nbPath}, "")
	if code != 0 {
		t.Fatalf("in place: exit %d\n%s\n%s", code, out, errs)
	}
	page, _ := os.ReadFile(filepath.Join(dir, "n.html"))
	sum := sha256.Sum256(data)
	if !bytes.Contains(page, []byte("SHA-256 "+hex.EncodeToString(sum[:]))) || !bytes.Contains(page, []byte("as read, before this run wrote the executed notebook over it")) {
		t.Errorf("in place: the report does not say its source hash is of the notebook as read")
	}
	// Executed elsewhere: no such note.
	code, _, _ = runNudge([]string{"run", "-o", filepath.Join(dir, "out.ipynb"), "--html", filepath.Join(dir, "other.html"), nbPath}, "")
	if page, _ := os.ReadFile(filepath.Join(dir, "other.html")); code != 0 || bytes.Contains(page, []byte("as read, before")) {
		t.Errorf("elsewhere: exit %d, or the report says the source was replaced", code)
	}
}

// TestDemoLeavesOtherFiles: the demo does not write over a file of a
// bundled name that it did not write (a notebook of other code, a page
// nudge did not make), and writes again over its own.
func TestDemoLeavesOtherFiles(t *testing.T) {
	dir := t.TempDir()
	if _, err := writeDemoFiles(dir); err != nil {
		t.Fatalf("an empty directory: %v", err)
	}
	if _, err := writeDemoFiles(dir); err != nil {
		t.Fatalf("the demo's own files: %v", err)
	}
	mine := []byte(`{"cells": [], "metadata": {}, "nbformat": 4, "nbformat_minor": 5}`)
	if err := os.WriteFile(filepath.Join(dir, "tour.ipynb"), mine, 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := writeDemoFiles(dir); err == nil || !strings.Contains(err.Error(), "tour.ipynb exists and is not from the demo") {
		t.Errorf("another notebook: %v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "tour.ipynb")); !bytes.Equal(b, mine) {
		t.Error("the user's notebook was replaced")
	}
	// What an earlier demo (of another version, other notebooks) recorded
	// it wrote may be replaced; the same file changed since may not.
	if err := writeDemoRecord(dir); err != nil {
		t.Fatal(err)
	}
	if _, err := writeDemoFiles(dir); err != nil {
		t.Errorf("a notebook of other code that the record lists: %v", err)
	}
	if err := os.WriteFile(filepath.Join(dir, "tour.ipynb"), append(mine, ' '), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := writeDemoFiles(dir); err == nil {
		t.Error("a notebook changed since the record was replaced")
	}
	dir = t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "housing.html"), []byte("<p>my page</p>"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runNudge([]string{"demo", dir}, "")
	if code != 1 || !strings.Contains(errs, "housing.html exists and is not from the demo") {
		t.Errorf("another page: exit %d, stderr %q", code, errs)
	}
}

// TestRunOtherLanguage: a notebook of another kernel's language is named as
// such (exit 1, no files written), not run line by line into syntax errors.
func TestRunOtherLanguage(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "py.ipynb")
	nb := notebook.New()
	nb.Metadata["kernelspec"] = map[string]any{"name": "python3", "display_name": "Python 3", "language": "python"}
	nb.Cells = []*notebook.Cell{{ID: "c", Type: "code", Source: "import numpy as np\n", Metadata: map[string]any{}}}
	data, err := nb.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runNudge([]string{"run", path}, "")
	if code != 1 || !strings.Contains(errs, "a notebook in python (its kernelspec's language)") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
	if _, err := os.Stat(filepath.Join(dir, "py.html")); err == nil {
		t.Error("a report was written")
	}
}

// TestRunReportScriptOnce: a report of two what-if panels carries the
// panels' evaluator once, after both panels (where it sets up each), while
// each panel in the notebook keeps its own copy, so that one cell's HTML
// works on its own. The browser test (test_5_two_panels_in_a_report) moves
// the sliders of both in a real browser.
func TestRunReportScriptOnce(t *testing.T) {
	dir := copyNotebooks(t)
	model, err := os.ReadFile(filepath.Join(dir, "housing.nudge"))
	if err != nil {
		t.Fatal(err)
	}
	src := filepath.Join(dir, "two-panels.nudge")
	if err := os.WriteFile(src, append(model, "\nexplore unit_cost top=3\nexplore unit_cost top=5\n"...), 0o644); err != nil {
		t.Fatal(err)
	}
	rep := filepath.Join(t.TempDir(), "two.html")
	if code, out, errs := runNudge([]string{"run", "--html", rep, "-o", rep + ".ipynb", src}, ""); code != 0 {
		t.Fatalf("exit %d\n%s\n%s", code, out, errs)
	}
	b, err := os.ReadFile(rep)
	if err != nil {
		t.Fatal(err)
	}
	h := string(b)
	if n := strings.Count(h, render.ExploreScript); n != 1 {
		t.Errorf("the report holds %d copies of the panels' script, want 1", n)
	}
	if n := strings.Count(h, `class="nudge-explore-data"`); n != 2 {
		t.Errorf("the report holds %d panels' data, want 2", n)
	}
	if last, s := strings.LastIndex(h, `class="nudge-explore-data"`), strings.Index(h, render.ExploreScript); s < last {
		t.Error("the panels' script comes before the last panel: it would not set that panel up")
	}
	nb := readNotebook(t, rep+".ipynb")
	panels := 0
	for _, c := range nb.Cells {
		for _, o := range c.Outputs {
			if strings.Contains(o.DataText("text/html"), `class="nudge-explore-data"`) {
				panels++
				if !strings.Contains(o.DataText("text/html"), render.ExploreScript) {
					t.Error("a panel in the notebook lacks its own script")
				}
			}
		}
	}
	if panels != 2 {
		t.Errorf("%d panels in the notebook, want 2", panels)
	}
}
