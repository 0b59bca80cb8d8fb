package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"encoding/xml"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runNudge(args []string, stdin string) (code int, stdout, stderr string) {
	var out, errb bytes.Buffer
	code = run(args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

func TestExecDemoText(t *testing.T) {
	code, out, errs := runNudge([]string{"exec", "../../../notebooks/housing.nudge"}, "")
	if code != 0 {
		t.Fatalf("exit %d, stderr %s", code, errs)
	}
	for _, want := range []string{"unit_cost = $97.41", "elasticity", "shop_rate", "Caution:"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

// TestExecJSONContract checks the JSON Lines of DESIGN.md: one object per line,
// each with "kind", the drivers fields present and sorted by |elasticity|.
func TestExecJSONContract(t *testing.T) {
	src := "input mass = 12 [kg]\ninput steel = 0.9 [$/kg]\ninput hours = 1.5 [h]\ninput rate = 60 [$/h]\n" +
		"cost = mass * steel + hours * rate\ncost\ndrivers cost\n"
	code, out, errs := runNudge([]string{"exec", "--json", "-"}, src)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var kinds []string
	sc := bufio.NewScanner(strings.NewReader(out))
	for sc.Scan() {
		var obj map[string]any
		if err := json.Unmarshal(sc.Bytes(), &obj); err != nil {
			t.Fatalf("line %q is not JSON: %v", sc.Text(), err)
		}
		kinds = append(kinds, obj["kind"].(string))
		if obj["kind"] == "drivers" {
			for _, k := range []string{"output", "value", "unit", "inputs"} {
				if _, ok := obj[k]; !ok {
					t.Errorf("drivers lacks %q", k)
				}
			}
			ins := obj["inputs"].([]any)
			if len(ins) != 4 {
				t.Fatalf("want 4 inputs, got %d", len(ins))
			}
			prev := 1e300
			for _, x := range ins {
				m := x.(map[string]any)
				for _, k := range []string{"name", "value", "unit", "partial", "partial_unit", "elasticity"} {
					if _, ok := m[k]; !ok {
						t.Errorf("input lacks %q", k)
					}
				}
				e := m["elasticity"].(float64)
				if e < 0 {
					e = -e
				}
				if e > prev {
					t.Errorf("inputs not sorted by |elasticity|")
				}
				prev = e
			}
		}
	}
	if strings.Join(kinds, ",") != "value,drivers" {
		t.Errorf("kinds %v, want value,drivers", kinds)
	}
}

func TestExitCodes(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.nudge")
	os.WriteFile(bad, []byte("input a = 1\nb = a * c\n"), 0o644)
	code, out, errs := runNudge([]string{"exec", bad}, "")
	if code != 1 || !strings.Contains(errs, "bad.nudge:2:9: undefined: c") || !strings.Contains(errs, "^") {
		t.Errorf("model error: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	code, out, _ = runNudge([]string{"exec", "--json", bad}, "")
	var obj map[string]any
	if code != 1 || json.Unmarshal([]byte(strings.TrimSpace(out)), &obj) != nil || obj["kind"] != "error" || obj["line"] != 2.0 || obj["column"] != 9.0 {
		t.Errorf("JSON error: exit %d, %q", code, out)
	}
	for _, args := range [][]string{{}, {"exec"}, {"frobnicate"}, {"exec", "--nope", bad}, {"install", "--user", "--sys-prefix"}, {"exec", "--width", "-3", bad}} {
		if code, _, _ := runNudge(args, ""); code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
	}
	// A missing input file is an error in a file (1), named in the message.
	missing := filepath.Join(dir, "missing.nudge")
	if code, _, errs := runNudge([]string{"exec", missing}, ""); code != 1 || !strings.Contains(errs, "cannot read "+missing+": no such file or directory") {
		t.Errorf("missing file: exit %d, stderr %q", code, errs)
	}
}

func TestInstallPrefix(t *testing.T) {
	dir := t.TempDir()
	code, _, errs := runNudge([]string{"install", "--prefix", dir}, "")
	if code != 0 {
		t.Fatalf("install: %d %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(dir, "share", "jupyter", "kernels", "nudge", "kernel.json"))
	if err != nil {
		t.Fatal(err)
	}
	var spec struct {
		Argv          []string `json:"argv"`
		Language      string   `json:"language"`
		InterruptMode string   `json:"interrupt_mode"`
	}
	if err := json.Unmarshal(b, &spec); err != nil {
		t.Fatal(err)
	}
	if spec.Language != "nudge" || spec.InterruptMode != "message" || spec.Argv[len(spec.Argv)-1] != "{connection_file}" {
		t.Errorf("kernelspec %+v", spec)
	}
	// Jupyter starts a copy of the program in the kernelspec's directory,
	// which outlives a `go run` build cache or a build directory.
	kdir := filepath.Join(dir, "share", "jupyter", "kernels", "nudge")
	if spec.Argv[0] != filepath.Join(kdir, "nudge") {
		t.Errorf("argv[0] = %s, want the copy in %s", spec.Argv[0], kdir)
	}
	exe, _ := os.Executable()
	want, _ := os.ReadFile(exe)
	got, err := os.ReadFile(spec.Argv[0])
	if fi, serr := os.Stat(spec.Argv[0]); err != nil || serr != nil || !bytes.Equal(got, want) || fi.Mode()&0o111 == 0 {
		t.Errorf("the copy differs from %s or is not executable: %v %v", exe, err, serr)
	}
	// Installing again replaces the copy and leaves no temporary file.
	if code, out, errs := runNudge([]string{"install", "--prefix", dir}, ""); code != 0 || !strings.Contains(out, "Jupyter starts "+spec.Argv[0]) {
		t.Fatalf("second install: %d %q %s", code, out, errs)
	}
	if names, _ := filepath.Glob(filepath.Join(kdir, ".*")); len(names) != 0 {
		t.Errorf("left behind: %v", names)
	}
	for _, logo := range []string{"logo-32x32.png", "logo-64x64.png", "logo-svg.svg"} {
		if _, err := os.Stat(filepath.Join(dir, "share", "jupyter", "kernels", "nudge", logo)); err != nil {
			t.Errorf("missing %s", logo)
		}
	}
}

// A relative prefix gives absolute paths: Jupyter starts kernels in the
// notebook's directory.
func TestInstallRelativePrefix(t *testing.T) {
	t.Chdir(t.TempDir())
	if code, out, errs := runNudge([]string{"install", "--prefix", "jp"}, ""); code != 0 || !strings.Contains(out, "installed the nudge kernelspec in /") {
		t.Fatalf("exit %d, %q %s", code, out, errs)
	}
	b, err := os.ReadFile(filepath.Join("jp", "share", "jupyter", "kernels", "nudge", "kernel.json"))
	var spec struct{ Argv []string }
	if err != nil || json.Unmarshal(b, &spec) != nil || !filepath.IsAbs(spec.Argv[0]) {
		t.Errorf("kernel.json %s (%v): argv[0] is not absolute", b, err)
	}
}

// --sys-prefix installs under sys.prefix of the Python that runs the jupyter
// command on PATH (the interpreter on its first line), not the first python3.
func TestInstallSysPrefix(t *testing.T) {
	bin, env := t.TempDir(), filepath.Join(t.TempDir(), "env")
	py := filepath.Join(bin, "jupyter-python")
	os.WriteFile(py, []byte("#!/bin/sh\n[ \"$1\" = -c ] && echo "+env+"\n"), 0o755)
	os.WriteFile(filepath.Join(bin, "python3"), []byte("#!/bin/sh\necho /wrong/prefix\n"), 0o755)
	os.WriteFile(filepath.Join(bin, "jupyter"), []byte("#!"+py+"\nimport sys\n"), 0o755)
	t.Setenv("PATH", bin)
	code, out, errs := runNudge([]string{"install", "--sys-prefix"}, "")
	want := filepath.Join(env, "share", "jupyter", "kernels", "nudge")
	if code != 0 || !strings.Contains(out, "installed the nudge kernelspec in "+want) {
		t.Fatalf("exit %d, stdout %q, stderr %q; want the kernelspec in %s", code, out, errs, want)
	}
	if _, err := os.Stat(filepath.Join(want, "kernel.json")); err != nil {
		t.Error(err)
	}
	// A jupyter that is not a script, or none at all, is an error that
	// says what to do.
	os.WriteFile(filepath.Join(bin, "jupyter"), []byte("\x7fELF"), 0o755)
	if code, _, errs := runNudge([]string{"install", "--sys-prefix"}, ""); code != 1 || !strings.Contains(errs, "use --prefix DIR") {
		t.Errorf("binary jupyter: exit %d, %q", code, errs)
	}
	os.Remove(filepath.Join(bin, "jupyter"))
	if code, _, errs := runNudge([]string{"install", "--sys-prefix"}, ""); code != 1 || !strings.Contains(errs, "no jupyter command on PATH") {
		t.Errorf("no jupyter: exit %d, %q", code, errs)
	}
}

func TestExecWritesCharts(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "charts")
	src := "input a = 2 (1..3)\ninput b = 3 (2..4)\ny = a * b\ntornado y\nsweep y over a 1..3\n"
	code, _, errs := runNudge([]string{"exec", "--svg", dir, "-"}, src)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, name := range []string{"01-tornado.svg", "02-sweep.svg"} {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		if err := xml.Unmarshal(b, new(struct{})); err != nil || !strings.Contains(string(b), "<svg") {
			t.Errorf("%s is not an SVG document: %v", name, err)
		}
		if !strings.Contains(errs, filepath.Join(dir, name)) {
			t.Errorf("stderr does not name %s: %s", name, errs)
		}
	}
}
