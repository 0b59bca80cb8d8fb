package kernel

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"runtime/debug"
	"strconv"
	"strings"
	"syscall"
	"testing"
)

// The hostile-cell test runs the interpreter and the Jupyter handler's
// text services (is_complete, completion, inspection) in a child process
// under a memory ceiling, so that a regression of issue 8's language items
// (an error copying its line per character, a recursion per operator or
// per formula, a "did you mean" per reference, an option that sizes an
// allocation) fails the test instead of taking the machine down:
//
//   - the child limits its own address space (RLIMIT_AS) to what it has
//     mapped at start plus four times the ceiling: an allocation past it
//     fails inside the child, which dies, and the parent reports it;
//   - GOMEMLIMIT makes the child's garbage collector work to stay below
//     a third of the ceiling;
//   - debug.SetMaxStack lowers the runtime's 1 GB stack limit to 64 MB:
//     a recursion that grows with the input ends the child at once;
//   - the child reads its peak resident memory (VmHWM) at the end and
//     fails past the ceiling.
//
// It works unprivileged on Linux; elsewhere only GOMEMLIMIT and the stack
// limit apply. It does not run under the race detector (one goroutine does
// the work); were it run there, the ceiling is scaled for its shadow memory.

// hostileCellCeiling is the most memory the interpreter may use on the
// hostile cells: several times what the largest legitimate case (100,000
// formulas) needs.
func hostileCellCeiling() int64 {
	if raceEnabled {
		return 1536 << 20
	}
	return 512 << 20
}

const hostileChildEnv = "NUDGE_HOSTILE_CELLS_CHILD"

// hostileCell is one hostile input: src run as a cell (after the cells in
// before), whose error must contain want ("" for no error).
type hostileCell struct {
	name   string
	before []string
	src    string
	want   string
	// services: also ask is_complete, completion and inspection about src,
	// as a console does on every key.
	services bool
}

func hostileCells() []hostileCell {
	model := "input rate = 60 [$/h] (40..80) ~ normal(60, 5)\ninput hours = 1.5 [h] (1..2) ~ normal(1.5, 0.1)\ncost = rate * hours\n"
	var reversed, cycle, renamed, manyErrs strings.Builder
	reversed.WriteString("input a = 1 (0..2)\n")
	cycle.WriteString("input a = 1\n")
	const n = 100_000
	for i := range n - 1 {
		fmt.Fprintf(&reversed, "f%d = f%d + 1\n", i, i+1)
		fmt.Fprintf(&cycle, "f%d = f%d + a\n", i, i+1)
	}
	fmt.Fprintf(&reversed, "f%d = a\nf0\nbasis f0\ndrivers f0\n", n-1)
	fmt.Fprintf(&cycle, "f%d = f0\n", n-1)
	renamed.WriteString("input shop_rate = 60 [$/h]\n")
	for i := range 8000 {
		fmt.Fprintf(&renamed, "cost_%d = shop_rat * %d [h]\n", i, i+1)
	}
	for range 50_000 {
		manyErrs.WriteString("x = @ $ ` ? ! ;\n")
	}
	return []hostileCell{
		{name: "a 50 KB line of @", src: "x = " + strings.Repeat("@", 50_000), want: "1:5: unexpected character '@'", services: true},
		{name: "a 256 KB line of @ after a model", src: model + "y = cost + " + strings.Repeat("@", 256<<10) + "\n", want: "4:12: unexpected character '@'", services: true},
		{name: "50,000 lines of errors", src: manyErrs.String(), want: "1:5: unexpected character '@'", services: true},
		{name: "a 1 MB line of open parentheses", src: "y = " + strings.Repeat("(", 1<<20), want: "nested too deeply", services: true},
		{name: "200,000 products on one line", src: "input a = 1\ny = a" + strings.Repeat(" * a", 200_000) + "\n", want: "2:40007: expression too long: more than 10000 operations", services: true},
		{name: "200,000 terms on one line", src: "input a = 1\ny = a" + strings.Repeat(" + a*2", 200_000) + "\n", want: "expression too long: more than 100000 terms in one sum", services: true},
		{name: "100,000 formulas each before the one it uses", src: reversed.String()},
		{name: "a cycle through 100,000 formulas", src: cycle.String(), want: "cycle: f0 -> f1 -> f2 -> f3 -> f4 -> f5 -> … (99989 more) -> f99995"},
		{name: "8,000 formulas with their input renamed", src: renamed.String(), want: "undefined: shop_rat (did you mean shop_rate?)"},
		{name: "sweep n=10000000", before: []string{model}, src: "sweep cost over rate 40..80 n=10000000", want: "a sweep computes at most 1,000,000 points"},
		{name: "2-D sweep n=10000", before: []string{model}, src: "sweep cost over rate 40..80 and hours 1..2 n=10000", want: "a sweep computes at most 1,000,000 points"},
		{name: "spider points=10000000", before: []string{model}, src: "spider cost points=10000000", want: "points must be a whole number from 3 to 1,000"},
		{name: "simulate n=10000000", before: []string{model}, src: "simulate cost n=10000000", want: "n must be a whole number from 2 to 1,000,000"},
		{name: "sobol n=10000000", before: []string{model}, src: "sobol cost n=10000000", want: "n must be a whole number from 2 to 1,048,576"},
		{name: "sobol bootstrap=10000000", before: []string{model}, src: "sobol cost bootstrap=10000000", want: "bootstrap must be a whole number from 10 to 10,000"},
		{name: "morris r=10000000", before: []string{model}, src: "morris cost r=10000000", want: "r must be a whole number from 2 to 100,000"},
		{name: "screen n=10000000", before: []string{model}, src: "screen cost n=10000000", want: "n must be a whole number from 2 to 1,000,000"},
		{name: "a table read from /dev/zero", src: "table t = \"/dev/zero\"", want: "cannot read /dev/zero: it is not a regular file"},
		{name: "tornado top=1e300", before: []string{model}, src: "tornado cost top=1e300", want: "top must be a whole number from 1 to 10,000,000"},
	}
}

// TestHostileCells runs the hostile cells in a child process under the
// memory ceiling (issue 8, items 6 to 9).
func TestHostileCells(t *testing.T) {
	if os.Getenv(hostileChildEnv) != "" {
		t.Skip("the child runs TestHostileCellsChild")
	}
	if testing.Short() {
		t.Skip("short")
	}
	if raceEnabled {
		// One goroutine does all the work: the race detector has nothing
		// to find and makes it ten times slower (70 s); make gotest runs it.
		t.Skip("no concurrency to check; run without -race")
	}
	ceiling := hostileCellCeiling()
	cmd := exec.Command(os.Args[0], "-test.run=^TestHostileCellsChild$", "-test.v", "-test.count=1")
	cmd.Env = append(os.Environ(), hostileChildEnv+"="+strconv.FormatInt(ceiling, 10),
		"GOMEMLIMIT="+strconv.FormatInt(ceiling/3, 10))
	out, err := cmd.CombinedOutput()
	if err != nil {
		// The head holds the runtime's reason (out of memory, stack
		// overflow) and the failing case, the tail the last test lines.
		tail := string(out)
		if len(tail) > 8000 {
			tail = tail[:4000] + "\n…\n" + tail[len(tail)-4000:]
		}
		t.Fatalf("the child failed (%v): a hostile cell broke the memory ceiling, the stack limit or a check:\n%s", err, tail)
	}
	for _, line := range strings.Split(string(out), "\n") {
		if strings.Contains(line, "peak resident memory") {
			t.Log(strings.TrimSpace(line))
		}
	}
}

// TestHostileCellsChild is the child of TestHostileCells.
func TestHostileCellsChild(t *testing.T) {
	env := os.Getenv(hostileChildEnv)
	if env == "" {
		t.Skip("run by TestHostileCells")
	}
	ceiling, err := strconv.ParseInt(env, 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	if vm := procStatusKB("VmSize:"); vm > 0 {
		lim := uint64(vm)<<10 + uint64(4*ceiling)
		if err := syscall.Setrlimit(syscall.RLIMIT_AS, &syscall.Rlimit{Cur: lim, Max: lim}); err != nil {
			t.Fatal(err)
		}
	}
	debug.SetMaxStack(64 << 20)
	for _, c := range hostileCells() {
		t.Run(c.name, func(t *testing.T) {
			in := New()
			for _, b := range c.before {
				if err := in.Execute(context.Background(), "", b, &analysisSink{}); err != nil {
					t.Fatal(err)
				}
			}
			if c.services {
				h := NewHandler(in)
				if status, _ := h.IsComplete(c.src); status == "complete" && c.want != "" {
					t.Errorf("is_complete: %s", status)
				}
				h.Complete(c.src, len([]rune(c.src)))
				h.Complete(c.src, len([]rune(c.src))/2)
				h.Inspect(c.src, len([]rune(c.src))/2, 0)
			}
			err := in.Execute(context.Background(), "", c.src, &analysisSink{})
			var ce *CellError
			switch {
			case c.want == "" && err != nil:
				t.Fatalf("error: %v", err)
			case c.want == "":
			case !errors.As(err, &ce):
				t.Fatalf("got %v, want an error with %q", err, c.want)
			case !strings.Contains(ce.Detail(), c.want):
				t.Fatalf("got %.600s, want %q", ce.Detail(), c.want)
			case len(ce.Detail()) > 40<<10:
				t.Errorf("the error's text is %d bytes", len(ce.Detail()))
			}
		})
	}
	peak := procStatusKB("VmHWM:") << 10
	t.Logf("peak resident memory %.1f MB (ceiling %d MB)", float64(peak)/(1<<20), ceiling>>20)
	if peak > ceiling {
		t.Errorf("peak resident memory %d MB, ceiling %d MB", peak>>20, ceiling>>20)
	}
}

// procStatusKB reads a field in kB of this process's /proc status (0 where
// there is none).
func procStatusKB(field string) int64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, field); ok {
			kb, _ := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "kB")), 10, 64)
			return kb
		}
	}
	return 0
}
