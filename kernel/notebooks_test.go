package kernel

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// shippedCells returns the cells of every notebook in notebooks/.
func shippedCells(t *testing.T) map[string][]struct {
	CellType string `json:"cell_type"`
	Source   any    `json:"source"`
} {
	files, err := filepath.Glob("../notebooks/*.ipynb")
	if err != nil || len(files) == 0 {
		t.Fatalf("no notebooks: %v", err)
	}
	out := map[string][]struct {
		CellType string `json:"cell_type"`
		Source   any    `json:"source"`
	}{}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		var nb struct {
			Cells []struct {
				CellType string `json:"cell_type"`
				Source   any    `json:"source"`
			} `json:"cells"`
		}
		if err := json.Unmarshal(b, &nb); err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		out[filepath.Base(f)] = nb.Cells
	}
	return out
}

// source joins a cell's source, a string or a list of lines in nbformat.
func source(s any) string {
	switch s := s.(type) {
	case string:
		return s
	case []any:
		var b strings.Builder
		for _, l := range s {
			b.WriteString(l.(string))
		}
		return b.String()
	}
	return ""
}

// TestShippedMarkdownHasNoMath: notebook front ends run MathJax over
// markdown, and text between two dollar signs becomes mathematics ("hours
// times $/h gives $" turned into garbage). Every dollar sign in the prose of
// a shipped notebook is written \$; inside code spans and fenced blocks it
// stays as it is, since front ends leave code alone (JupyterLab's removeMath
// in @jupyterlab/rendermime, which the rendermime test runs too).
func TestShippedMarkdownHasNoMath(t *testing.T) {
	for nb, cells := range shippedCells(t) {
		for i, c := range cells {
			if c.CellType != "markdown" {
				continue
			}
			if at := unescapedDollar(source(c.Source)); at != "" {
				t.Errorf("%s, cell %d: a dollar sign MathJax would take for mathematics (write \\$): %q", nb, i, at)
			}
		}
	}
}

// unescapedDollar returns the line of the first '$' outside code that no
// backslash escapes, or "".
func unescapedDollar(md string) string {
	fence := ""
	for _, line := range strings.Split(md, "\n") {
		trim := strings.TrimLeft(line, " ")
		if fence != "" {
			if strings.HasPrefix(trim, fence) {
				fence = ""
			}
			continue
		}
		if strings.HasPrefix(trim, "```") || strings.HasPrefix(trim, "~~~") {
			fence = trim[:3]
			continue
		}
		for i := 0; i < len(line); i++ {
			switch line[i] {
			case '\\':
				i++ // an escaped character
			case '`':
				// A code span: a run of n backticks up to the next run of
				// exactly n on the line.
				n := 1
				for i+n < len(line) && line[i+n] == '`' {
					n++
				}
				run := strings.Repeat("`", n)
				j := i + n
				for {
					k := strings.Index(line[j:], run)
					if k < 0 {
						j = -1
						break
					}
					j += k
					if j+n < len(line) && line[j+n] == '`' {
						for j < len(line) && line[j] == '`' {
							j++
						}
						continue
					}
					break
				}
				if j < 0 {
					i += n - 1 // no closing run: the backticks are text
				} else {
					i = j + n - 1
				}
			case '$':
				return line
			}
		}
	}
	return ""
}

func TestUnescapedDollar(t *testing.T) {
	for md, want := range map[string]bool{
		"hours times $/h gives $":           true,
		"hours times \\$/h gives \\$":       false,
		"currencies: `$` by default":        false,
		"``a ` $ b`` and more":              false,
		"```\nx = 1 [$]\n```\nafter":        false,
		"a cap of 105 $ a unit":             true,
		"`unclosed $":                       true,
		"`code` then $ outside":             true,
		"~~~\n$ in a tilde fence\n~~~\nend": false,
	} {
		if got := unescapedDollar(md) != ""; got != want {
			t.Errorf("unescapedDollar(%q) found one: %v, want %v", md, got, want)
		}
	}
}

// TestTourHasEveryCommand: the README says the tour shows every form of the
// language with an example that runs; every command of the command table is
// in one of its code cells.
func TestTourHasEveryCommand(t *testing.T) {
	cells := shippedCells(t)["tour.ipynb"]
	used := map[string]bool{}
	for _, c := range cells {
		if c.CellType != "code" {
			continue
		}
		for _, line := range strings.Split(source(c.Source), "\n") {
			if f := strings.Fields(line); len(f) > 0 {
				used[f[0]] = true
			}
		}
	}
	for verb := range commands {
		if !used[verb] {
			t.Errorf("the tour has no example of %s", verb)
		}
	}
}
