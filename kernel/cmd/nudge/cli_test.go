package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestHelpFlags: --help (and -h) on every subcommand prints its usage to
// standard output and exits 0.
func TestHelpFlags(t *testing.T) {
	for _, args := range [][]string{{"--help"}, {"exec", "--help"}, {"exec", "-h"}, {"kernel", "--help"}, {"install", "--help"}, {"bench", "--help"}, {"version", "--help"}, {"run", "--help"}, {"demo", "--help"}, {"demo", "-h"}, {"bench", "model", "--help"}, {"bench", "scale", "-h"}} {
		code, out, errs := runNudge(args, "")
		if code != 0 || !strings.Contains(out, "usage:") || errs != "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q", args, code, out, errs)
		}
	}
}

// TestWidth: --width wins over $COLUMNS, which wins over 100; headings and
// notes wrap at words to it.
func TestWidth(t *testing.T) {
	src := "input a = 2 (1..3)\ninput b = 3 (2..4)\ny = a * b\ntornado y\n"
	longest := func(out string) int {
		n := 0
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, "tornado of") || strings.HasPrefix(l, "  ") && !strings.Contains(l, "│") {
				n = max(n, utf8.RuneCountInString(l))
			}
		}
		return n
	}
	t.Setenv("COLUMNS", "50")
	_, out, _ := runNudge([]string{"exec", "-"}, src)
	if n := longest(out); n > 50 || n < 30 {
		t.Errorf("COLUMNS=50: explanation lines up to %d columns:\n%s", n, out)
	}
	_, out, _ = runNudge([]string{"exec", "--width", "40", "-"}, src)
	if n := longest(out); n > 40 {
		t.Errorf("--width 40: explanation lines up to %d columns:\n%s", n, out)
	}
	if !strings.Contains(out, "tornado of y: baseline 6; each input\n  from the low to the high end of its\n") {
		t.Errorf("the heading is not wrapped at words:\n%s", out)
	}
	t.Setenv("COLUMNS", "")
	if textWidth(0) != 100 {
		t.Errorf("default width %d", textWidth(0))
	}
	if !strings.HasSuffix(out, "\n") {
		t.Error("standard output does not end with a newline")
	}
}

// TestCSVExport: --csv writes one file per result table, named by file,
// line and command, with plain numbers in the units shown and unit columns.
// By hand: y = a·b = 6; a over 1..3 gives 3..9, b over 2..4 gives 4..8.
func TestCSVExport(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "tables")
	model := filepath.Join(t.TempDir(), "part.nudge")
	os.WriteFile(model, []byte("input a = 2 [kg] (1..3)\ninput b = 3 [$/kg] (2..4)\ny = a * b\ny\ntornado y\nbasis\ng = 9.81 [m/s^2]\nbasis\nsimulate y n=200 seed=1\nmorris y r=4 seed=1\n"), 0o644)
	code, _, errs := runNudge([]string{"exec", "--csv", dir, model}, "")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	read := func(name string) [][]string {
		f, err := os.Open(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		rows, err := csv.NewReader(f).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		return rows
	}
	v := read("part-4-value.csv")
	if strings.Join(v[1], ",") != "y,6,$" {
		t.Errorf("value table %v", v)
	}
	tor := read("part-5-tornado.csv")
	if strings.Join(tor[0][:9], ",") != "input,low,high,input_unit,range_from,output_at_low,output_at_high,swing,output_unit" {
		t.Errorf("tornado header %v", tor[0])
	}
	if strings.Join(tor[1][:9], ",") != "a,1,3,kg,range,3,9,6,$" {
		t.Errorf("tornado row %v", tor[1])
	}
	if share, err := strconv.ParseFloat(tor[1][9], 64); err != nil || share < 0.69 || share > 0.7 { // 36 / (36 + 16)
		t.Errorf("swing share %q", tor[1][9])
	}
	if b := read("part-6-basis.csv"); len(b) != 3 || b[1][0] != "a" || b[1][9] != "1" {
		t.Errorf("basis table %v", b)
	}
	if c := read("part-8-basis-constants.csv"); len(c) != 2 || strings.Join(c[1][:3], ",") != "g,9.81,m/s^2" {
		t.Errorf("constants table %v", c)
	}
	if s := read("part-9-simulate.csv"); s[0][0] != "statistic" || s[1][0] != "mean" || s[1][2] != "$" {
		t.Errorf("simulation table %v", s)
	}
	if rc := read("part-9-simulate-rank-correlations.csv"); len(rc) != 3 {
		t.Errorf("rank correlations %v", rc)
	}
	if m := read("part-10-morris.csv"); len(m) != 3 || m[0][5] != "mu_star" {
		t.Errorf("morris table %v", m)
	}
	if !strings.Contains(errs, filepath.Join(dir, "part-5-tornado.csv")) {
		t.Errorf("stderr does not name the tables: %s", errs)
	}
}

func TestBenchVerdict(t *testing.T) {
	for _, tc := range []struct {
		v      float64
		target string
		want   string
	}{{1.9, "<= 2.5", "met"}, {2.5, "<= 2.5", "met"}, {2.6, "<= 2.5", "MISSED"}, {9, "none", ""}, {29, "<= 32", "met"}} {
		if got := verdict(tc.v, tc.target); got != tc.want {
			t.Errorf("verdict(%v, %q) = %q, want %q", tc.v, tc.target, got, tc.want)
		}
	}
}

// TestCSVVector: a vector's value and a table's loading export as CSV too
// (two rows written here; 2 × 3 kg and 4 × 5 kg, by hand).
func TestCSVVector(t *testing.T) {
	src := t.TempDir()
	os.WriteFile(filepath.Join(src, "parts.csv"), []byte("item,qty [each],mass [kg]\nA,2,3\nB,4,5\n"), 0o644)
	os.WriteFile(filepath.Join(src, "m.nudge"), []byte("table parts = \"parts.csv\" key item\nw = parts.qty * parts.mass\nw\n"), 0o644)
	dir := filepath.Join(t.TempDir(), "out")
	if code, _, errs := runNudge([]string{"exec", "--csv", dir, filepath.Join(src, "m.nudge")}, ""); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	b, err := os.ReadFile(filepath.Join(dir, "m-3-value.csv"))
	if err != nil {
		entries, _ := os.ReadDir(dir)
		t.Fatalf("%v (files: %v)", err, entries)
	}
	if got := string(b); !strings.Contains(got, "A,6,kg") || !strings.Contains(got, "B,20,kg") {
		t.Errorf("vector CSV:\n%s", got)
	}
	if _, err := os.Stat(filepath.Join(dir, "m-1-table.csv")); err != nil {
		t.Errorf("no table CSV: %v", err)
	}
}
