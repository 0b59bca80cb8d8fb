package kernel

import (
	"context"
	"fmt"
	"os/exec"
	"slices"
	"strings"
	"testing"

	"github.com/nudge-dev/nudge/kernel/render"
	"github.com/nudge-dev/nudge/sens"
)

func TestCellsShareStateAndRollBack(t *testing.T) {
	in := New()
	ctx := context.Background()
	s := &captureSink{}
	if err := in.Execute(ctx, "", "input a = 2 [kg]\ninput p = 3 [$/kg]\nc = a * p", s); err != nil {
		t.Fatal(err)
	}
	// A failing cell leaves the model as it was.
	if err := in.Execute(ctx, "", "p = 4\nc = a * q", s); err == nil {
		t.Fatal("want an error for an undefined name")
	}
	s = &captureSink{}
	if err := in.Execute(ctx, "", "c", s); err != nil {
		t.Fatal(err)
	}
	if len(s.results) != 1 || s.results[0].Text() != "c = $6" {
		t.Fatalf("after the failed cell: %+v", s.results)
	}
	// Redefining replaces; reset forgets.
	s = &captureSink{}
	in.Execute(ctx, "", "input p = 5 [$/kg]\nc", s)
	if s.results[0].Text() != "c = $10" {
		t.Errorf("redefined: %s", s.results[0].Text())
	}
	in.Execute(ctx, "", "reset", s)
	if err := in.Execute(ctx, "", "c", s); err == nil || !strings.Contains(err.Error(), "undefined: c") {
		t.Errorf("after reset: %v", err)
	}
}

func TestPrintAndStepWarning(t *testing.T) {
	s := &captureSink{}
	if err := New().Execute(context.Background(), "", "print \"hi\"\ninput q = 3.5\ny = floor(q) * 2\ndrivers y", s); err != nil {
		t.Fatal(err)
	}
	if s.stdout.String() != "hi\n" {
		t.Errorf("stdout %q", s.stdout.String())
	}
	if !strings.Contains(s.stderr.String(), "step-shaped") {
		t.Errorf("stderr %q lacks the step warning", s.stderr.String())
	}
	b := s.results[0].Bundle()
	for _, mime := range []string{"text/plain", "text/html", render.ResultMIME} {
		if _, ok := b[mime]; !ok {
			t.Errorf("bundle lacks %s", mime)
		}
	}
	// The caution is shown once per cell, not in every result's bundle.
	if !s.results[0].Caution || strings.Contains(b["text/plain"].(string), "Caution") {
		t.Errorf("drivers result: caution %v, in its text %q", s.results[0].Caution, b["text/plain"])
	}
}

func TestInterruptedCell(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	err := New().Execute(ctx, "", "input a = 1\nb = a", &captureSink{})
	if err == nil || !strings.Contains(err.Error(), "interrupted") {
		t.Errorf("cancelled cell: %v", err)
	}
}

// TestImportDirection checks the layering: sens never imports plotting, zmq4 or
// kernel; plotting imports no nudge package but the quantity formatter
// (sens/unit); the renderer nothing of the kernel or Jupyter; the report
// nothing of the engine, the renderer or Jupyter; syntax, unit, tape and the
// notebook format only the standard library; nothing but the binary imports kernel; and no
// package under sens brings testing into the binaries that use it.
func TestImportDirection(t *testing.T) {
	deps := func(pkg string) []string {
		out, err := exec.Command("go", "list", "-deps", pkg).Output()
		if err != nil {
			t.Fatalf("go list %s: %v", pkg, err)
		}
		return strings.Fields(string(out))
	}
	for _, tc := range []struct {
		pkg       string
		forbidden []string
	}{
		{"github.com/nudge-dev/nudge/sens", []string{"/plotting", "/kernel", "zmq4"}},
		{"github.com/nudge-dev/nudge/plotting", []string{"nudge-dev/nudge/sens/syntax", "/kernel", "zmq4"}},
		{"github.com/nudge-dev/nudge/kernel/render", []string{"/kernel/jupyter", "zmq4"}},
		{"github.com/nudge-dev/nudge/kernel/jupyter", []string{"nudge-dev/nudge/sens", "/plotting"}},
		// The report is built from a notebook alone.
		{"github.com/nudge-dev/nudge/kernel/report", []string{"nudge-dev/nudge/sens", "/plotting", "/kernel/jupyter", "/kernel/render", "zmq4"}},
	} {
		for _, d := range deps(tc.pkg) {
			for _, f := range tc.forbidden {
				if strings.Contains(d, f) {
					t.Errorf("%s depends on %s", tc.pkg, d)
				}
			}
			if strings.HasSuffix(tc.pkg, "/plotting") && d == "github.com/nudge-dev/nudge/sens" {
				t.Errorf("plotting depends on the engine, %s", d)
			}
		}
	}
	for _, pkg := range []string{"github.com/nudge-dev/nudge/sens/syntax", "github.com/nudge-dev/nudge/sens/unit", "github.com/nudge-dev/nudge/sens/tape", "github.com/nudge-dev/nudge/kernel/notebook"} {
		for _, d := range deps(pkg) {
			if strings.Contains(d, ".") && d != pkg {
				t.Errorf("%s imports %s, not only the standard library", pkg, d)
			}
		}
	}
	const module, binary = "github.com/nudge-dev/nudge", "github.com/nudge-dev/nudge/kernel/cmd/nudge"
	out, err := exec.Command("go", "list", "-f", "{{.ImportPath}} {{join .Imports \" \"}}", module+"/...").Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	var sensPkgs int
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Fields(line)
		pkg, imports := f[0], f[1:]
		if slices.Contains(imports, module+"/kernel") && pkg != binary {
			t.Errorf("%s imports kernel: only the binary may", pkg)
		}
		if pkg == module+"/sens" || strings.HasPrefix(pkg, module+"/sens/") {
			sensPkgs++
			if slices.Contains(deps(pkg), "testing") {
				t.Errorf("%s imports testing (directly or through its imports)", pkg)
			}
		}
	}
	if sensPkgs < 5 {
		t.Errorf("go list found %d packages under sens", sensPkgs)
	}
}

func TestCompileWarningShownOnce(t *testing.T) {
	s := &captureSink{}
	src := "input r = 30 (25..35) ~ normal(60, 5)\ny = r * 2\ndrivers y\ndrivers y"
	if err := New().Execute(context.Background(), "", src, s); err != nil {
		t.Fatal(err)
	}
	// normal(60, 5) puts 30 six standard deviations below the mean; with a
	// range of its own that is legal, but worth a warning (without one, the
	// 10th to 90th percentiles exclude it: an error).
	if n := strings.Count(s.stderr.String(), "far tail"); n != 1 {
		t.Errorf("far-tail warning shown %d times:\n%s", n, s.stderr.String())
	}
}

func TestChartsSetting(t *testing.T) {
	in := New()
	ctx := context.Background()
	model := "input a = 2 (1..3)\ninput b = 3\ny = a * b\n"
	for _, tc := range []struct {
		setting      string
		svg, png     bool
		errSubstring string
	}{
		{"svg", true, false, ""},
		{"png", true, true, ""},
		{"text", false, false, ""},
		{"pgn", false, false, "did you mean png?"},
	} {
		s := &captureSink{}
		err := in.Execute(ctx, "", model+"charts "+tc.setting+"\ntornado y", s)
		if tc.errSubstring != "" {
			if err == nil || !strings.Contains(err.Error(), tc.errSubstring) {
				t.Errorf("charts %s: error %v", tc.setting, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("charts %s: %v", tc.setting, err)
		}
		// The chart is the HTML's one image: SVG, PNG, or the Unicode
		// chart of the text.
		r := s.results[len(s.results)-1]
		h := r.Bundle()["text/html"].(string)
		svg := strings.Contains(h, `src="data:image/svg+xml;base64,`)
		png := strings.Contains(h, `src="data:image/png;base64,`)
		text := strings.Contains(h, `<pre class="nudge-chart-text"`) && strings.Contains(h, "█")
		if svg != (tc.svg && !tc.png) || png != tc.png || text != !tc.svg || strings.Count(h, "<img") > 1 {
			t.Errorf("charts %s: HTML with svg %v, png %v, text chart %v", tc.setting, svg, png, text)
		}
		if (len(r.PNG()) > 0) != tc.png || (len(r.SVG()) > 0) != tc.svg {
			t.Errorf("charts %s: %d bytes of PNG, %d of SVG", tc.setting, len(r.PNG()), len(r.SVG()))
		}
	}
}

func TestDriversTopAndLongTables(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 40; i++ {
		fmt.Fprintf(&b, "input x%d = %d\n", i, i+1)
	}
	b.WriteString("y = x0")
	for i := 1; i < 40; i++ {
		fmt.Fprintf(&b, " + x%d", i)
	}
	b.WriteString("\ndrivers y\ndrivers y top=3\n")
	s := &captureSink{}
	if err := New().Execute(context.Background(), "", b.String(), s); err != nil {
		t.Fatal(err)
	}
	full, top := s.results[0], s.results[1]
	if n := len(full.Data.(*sens.DriversResult).Inputs); n != 40 {
		t.Errorf("JSON of drivers y holds %d inputs, want all 40", n)
	}
	if !strings.Contains(full.Text(), "… and 10 more inputs") || !strings.Contains(full.HTML(), "… and 10 more inputs") {
		t.Errorf("long table not summarised:\n%s", full.Text())
	}
	d := top.Data.(*sens.DriversResult)
	// y = sum of x_i with x_i = i+1: elasticity of x_i is (i+1)/820, so x39, x38, x37 lead.
	if len(d.Inputs) != 3 || d.Inputs[0].Name != "x39" || d.Inputs[2].Name != "x37" {
		t.Errorf("top=3: %+v", d.Inputs)
	}
}

func TestValueInAnotherUnit(t *testing.T) {
	s := &captureSink{}
	src := "input q = 200 [L]\ninput p = 3 [$/L]\nprice = q * p\nprice [k$]\nq [m3]\n"
	if err := New().Execute(context.Background(), "", src, s); err != nil {
		t.Fatal(err)
	}
	// 600 $ is 0.6 k$; 200 L is 0.2 m3 (SI Brochure: 1 L = 1 dm3).
	if s.results[0].Text() != "price = 0.6 k$" || s.results[1].Text() != "q = 0.2 m3" {
		t.Errorf("got %q and %q", s.results[0].Text(), s.results[1].Text())
	}
}
