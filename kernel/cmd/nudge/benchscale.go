package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"runtime"
	"slices"
	"text/tabwriter"
	"time"

	"github.com/nudge-dev/nudge/kernel"
	"github.com/nudge-dev/nudge/sens"
	"github.com/nudge-dev/nudge/sens/syntax"
	"github.com/nudge-dev/nudge/sens/tapebench"
)

// scaleFlags are the flags of `nudge bench model` and `nudge bench scale`.
type scaleFlags struct {
	lines  int
	ifs    bool
	seed   uint64
	repeat int
	// compileOnly stops `nudge bench scale` after the first parse and
	// compile, so that the process's peak memory is theirs.
	compileOnly bool
}

// parseScaleFlags parses the flags of `nudge bench model` and `nudge bench
// scale` with parseFlags, as every command does. done says whether the
// command should return code now (--help, or a usage error).
func parseScaleFlags(name string, args []string, stdout, stderr io.Writer, repeat bool) (sf *scaleFlags, code int, done bool) {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	sf = &scaleFlags{}
	fs.IntVar(&sf.lines, "lines", 100_000, "the number of formula lines")
	fs.BoolVar(&sf.ifs, "if", false, "give about one line item in five an if(...)")
	fs.Uint64Var(&sf.seed, "seed", 1, "the generator's seed")
	use := "nudge bench " + name + " [--lines N] [--if] [--seed S]"
	if repeat {
		fs.IntVar(&sf.repeat, "repeat", 3, "rounds of timings (medians are shown)")
		fs.BoolVar(&sf.compileOnly, "compile-only", false, "stop after the first parse and compile (their times and the peak memory)")
		use += " [--repeat R] [--compile-only]"
	}
	if code, done := parseFlags(fs, args, use, stdout, stderr); done {
		return nil, code, true
	}
	if fs.NArg() > 0 || sf.lines < 3 {
		fmt.Fprintln(stderr, "usage: "+use)
		fs.PrintDefaults()
		return nil, 2, true
	}
	sf.repeat = max(sf.repeat, 1)
	return sf, 0, false
}

// benchModel prints the scale model (tapebench.ScaleModel) as a model file.
func benchModel(args []string, stdout, stderr io.Writer) int {
	sf, code, done := parseScaleFlags("model", args, stdout, stderr, false)
	if done {
		return code
	}
	if _, err := stdout.Write(tapebench.ScaleModel(sf.lines, sf.ifs, sf.seed)); err != nil {
		fmt.Fprintln(stderr, "nudge bench model:", err)
		return 1
	}
	return 0
}

// benchScale measures the engine on the scale model: parse and compile
// times, the process's peak memory after compiling, one forward evaluation,
// drivers and tornado of the total, and `nudge exec` of the model with
// drivers and tornado commands (through the cell interpreter, output
// discarded). Times are medians of --repeat runs.
func benchScale(args []string, stdout, stderr io.Writer) int {
	sf, code, done := parseScaleFlags("scale", args, stdout, stderr, true)
	if done {
		return code
	}
	if err := runScale(sf, stdout); err != nil {
		fmt.Fprintln(stderr, "nudge bench scale:", err)
		return 1
	}
	return 0
}

func runScale(sf *scaleFlags, w io.Writer) error {
	src := tapebench.ScaleModel(sf.lines, sf.ifs, sf.seed)
	var stmts []syntax.Stmt
	var file *syntax.File
	compile := func() (*sens.Program, error) {
		m := sens.NewModel()
		for _, s := range stmts {
			m.Define(file, s)
		}
		return m.Compile()
	}
	// Memory first, while nothing else has been allocated.
	var err error
	start := time.Now()
	if file, stmts, err = syntax.Parse("bid", src); err != nil {
		return err
	}
	parse1 := time.Since(start)
	start = time.Now()
	prog, err := compile()
	if err != nil {
		return err
	}
	compile1 := time.Since(start)
	peak := peakRSS()
	if sf.compileOnly {
		fmt.Fprintf(w, "nudge bench scale: a generated bid of %d lines, %d inputs, %d tape nodes: parse and compile once\n",
			sf.lines, len(prog.Inputs), prog.TapeLen())
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "parse\t%s\n", fmtNs(float64(parse1)))
		fmt.Fprintf(tw, "compile (declare and compile)\t%s\n", fmtNs(float64(compile1)))
		fmt.Fprintf(tw, "compile / parse\t%.2f\n", float64(compile1)/float64(parse1))
		if peak > 0 {
			fmt.Fprintf(tw, "peak memory after parse and compile (max RSS)\t%.0f MB\n", float64(peak)/1e6)
		}
		return tw.Flush()
	}
	pr, err := prog.Problem("total")
	if err != nil {
		return err
	}
	x0 := pr.Baseline()
	cell := string(src) + "drivers total top=10\ntornado total top=10\n"

	// Each round times every step in turn, so that a change of load on the
	// machine falls on a whole round; a ratio is the median of the rounds'
	// ratios.
	var tParse, tCompile, tEval, tDrivers, tTornado, tExec []time.Duration
	var tr *sens.TornadoResult
	timed := func(ts *[]time.Duration, f func() error) error {
		runtime.GC()
		start := time.Now()
		err := f()
		*ts = append(*ts, time.Since(start))
		return err
	}
	for r := 0; r < sf.repeat; r++ {
		if err := timed(&tParse, func() error { _, _, err := syntax.Parse("bid", src); return err }); err != nil {
			return err
		}
		if err := timed(&tCompile, func() error { _, err := compile(); return err }); err != nil {
			return err
		}
		evals := 0
		err := timed(&tEval, func() error {
			start := time.Now()
			for evals == 0 || time.Since(start) < 100*time.Millisecond {
				if _, err := pr.F.Eval(x0); err != nil {
					return err
				}
				evals++
			}
			return nil
		})
		if err != nil {
			return err
		}
		tEval[r] /= time.Duration(evals)
		if err := timed(&tDrivers, func() error { _, err := sens.Drivers(pr, nil); return err }); err != nil {
			return err
		}
		if err := timed(&tTornado, func() error { tr, err = sens.Tornado(pr, &sens.TornadoSettings{Top: 10}); return err }); err != nil {
			return err
		}
		err = timed(&tExec, func() error {
			in := kernel.New()
			in.Opts.NoCharts = true
			sink := &kernel.WriterSink{Out: io.Discard, Err: io.Discard}
			return kernel.RunFile(context.Background(), in, "bid", cell, sink)
		})
		if err != nil {
			return err
		}
	}
	med := func(ts []time.Duration) float64 {
		s := slices.Clone(ts)
		slices.Sort(s)
		return float64(s[len(s)/2])
	}
	ratio := func(a, b []time.Duration) float64 {
		rs := make([]float64, len(a))
		for r := range a {
			rs[r] = float64(a[r]) / float64(b[r])
		}
		slices.Sort(rs)
		return rs[len(rs)/2]
	}

	what := "products and max"
	if sf.ifs {
		what += ", if"
	}
	fmt.Fprintf(w, "nudge bench scale: a generated bid of %d lines (%s), %d inputs, %d tape nodes\n",
		sf.lines, what, len(prog.Inputs), prog.TapeLen())
	fmt.Fprintf(w, "(%d rounds; times are medians, ratios medians of each round's ratio)\n", sf.repeat)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "figure\tvalue\tper line or ratio")
	perLine := func(d float64) string { return fmtNs(d / float64(sf.lines)) }
	fmt.Fprintf(tw, "parse\t%s\t%s a line\n", fmtNs(med(tParse)), perLine(med(tParse)))
	fmt.Fprintf(tw, "compile (declare and compile)\t%s\t%s a line\n", fmtNs(med(tCompile)), perLine(med(tCompile)))
	fmt.Fprintf(tw, "compile / parse\t\t%.2f\n", ratio(tCompile, tParse))
	if peak > 0 {
		fmt.Fprintf(tw, "peak memory after parse and compile (max RSS)\t%.0f MB\t\n", float64(peak)/1e6)
	}
	fmt.Fprintf(tw, "one forward evaluation of total\t%s\t\n", fmtNs(med(tEval)))
	fmt.Fprintf(tw, "drivers total\t%s\t%.1f forward evaluations\n", fmtNs(med(tDrivers)), ratio(tDrivers, tEval))
	fmt.Fprintf(tw, "tornado total (%d points)\t%s\t%.1f forward evaluations\n", tr.Evaluations, fmtNs(med(tTornado)), ratio(tTornado, tEval))
	fmt.Fprintf(tw, "exec: model, drivers and tornado\t%s\t%.2f compile times\n", fmtNs(med(tExec)), ratio(tExec, tCompile))
	return tw.Flush()
}
