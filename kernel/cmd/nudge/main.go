// Command nudge runs cost models: `nudge exec FILE` runs a model file and its
// analysis commands, `nudge run NOTEBOOK` executes a notebook headless and
// writes its HTML report, `nudge demo` runs the bundled notebooks, `nudge
// kernel -f CONNECTION_FILE` serves Jupyter, `nudge install` writes the
// Jupyter kernelspec, and `nudge bench` prints the engine's benchmark ratios.
//
// Exit codes: 0 success, 1 an error in the model or its analyses, 2 a usage error.
package main

import (
	"bufio"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strconv"

	"github.com/nudge-dev/nudge/kernel"
	"github.com/nudge-dev/nudge/kernel/render"
)

const usage = `nudge: sensitivity analysis of cost models

usage:
  nudge demo [--json] [DIR]        run the bundled notebooks into DIR (default
                                   ./nudge-demo): executed notebooks and HTML
                                   reports, and a summary
  nudge run [-o OUT.ipynb] [--html FILE] [--timestamp] [--json] NOTEBOOK
                                   execute a notebook (or a .nudge model file)
                                   headless; write the executed notebook to
                                   OUT.ipynb and a self-contained HTML report
                                   to FILE (default NOTEBOOK with .html)
  nudge exec [--json] [--svg DIR] [--csv DIR] [--width N] FILE...
                                   run model files (- reads standard input);
                                   --svg writes each chart into DIR, --csv
                                   each result table; text is N columns wide
                                   (else $COLUMNS, else 100)
  nudge kernel -f CONNECTION_FILE  run the Jupyter kernel
  nudge install [--user | --sys-prefix | --prefix DIR]
                                   write the Jupyter kernelspec, with a copy
                                   of this program that Jupyter starts
  nudge bench                      print the engine's benchmark ratios, each
                                   marked met or missed against its target
  nudge bench model [--lines N] [--if] [--seed S]
                                   print the generated scale model
  nudge bench scale [--lines N] [--if] [--seed S] [--repeat R]
                                   time parse, compile and analyses of it
  nudge version                    print the version

Every command takes --help; flags may come before or after the file names.
Progress bars show on a terminal for work longer than half a second. Exit codes: 0 success, 1 an error in a model,
its analyses or a file, 2 a usage error.
`

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// run is main without the process: it returns the exit code.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return 2
	}
	switch args[0] {
	case "exec":
		return execCmd(args[1:], stdin, stdout, stderr)
	case "run":
		return runCmd(args[1:], stdout, stderr)
	case "demo":
		return demoCmd(args[1:], stdout, stderr)
	case "kernel":
		return kernelCmd(args[1:], stdout, stderr)
	case "install":
		return installCmd(args[1:], stdout, stderr)
	case "bench":
		return benchCmd(args[1:], stdout, stderr)
	case "version", "--version", "-version":
		if len(args) > 1 && isHelp(args[1]) {
			fmt.Fprintln(stdout, "usage: nudge version")
			return 0
		}
		fmt.Fprintln(stdout, "nudge", kernel.Version)
		return 0
	case "help", "-h", "--help", "-help":
		fmt.Fprint(stdout, usage)
		return 0
	}
	fmt.Fprintf(stderr, "nudge: unknown command %q\n\n%s", args[0], usage)
	return 2
}

// parseFlags parses a subcommand's flags, before and after its other
// arguments ("nudge run model.ipynb -o out.ipynb"); after "--" everything is
// an argument. fs.Args() holds the arguments afterwards. --help prints the
// usage to stdout and exits 0; a bad flag prints it to stderr and exits 2.
// done says whether the command should return code now.
func parseFlags(fs *flag.FlagSet, args []string, usage string, stdout, stderr io.Writer) (code int, done bool) {
	fs.SetOutput(stderr)
	fs.Usage = func() {}
	var pos []string
	var err error
	for {
		if err = fs.Parse(args); err != nil {
			break
		}
		rest := fs.Args()
		if len(rest) == 0 {
			break
		}
		if used := len(args) - len(rest); used > 0 && args[used-1] == "--" {
			pos = append(pos, rest...)
			break
		}
		pos, args = append(pos, rest[0]), rest[1:]
	}
	if err == nil {
		// Leave the arguments in fs.Args(): "--" ends the flags.
		err = fs.Parse(append([]string{"--"}, pos...))
	}
	switch {
	case errors.Is(err, flag.ErrHelp):
		fs.SetOutput(stdout)
		fmt.Fprintln(stdout, "usage: "+usage)
		fs.PrintDefaults()
		return 0, true
	case err != nil:
		fmt.Fprintln(stderr, "usage: "+usage)
		fs.PrintDefaults()
		return 2, true
	}
	return 0, false
}

// textWidth is the width of text output: the --width flag, else $COLUMNS,
// else render.DefaultWidth.
func textWidth(flagWidth int) int {
	if flagWidth > 0 {
		return flagWidth
	}
	if n, err := strconv.Atoi(os.Getenv("COLUMNS")); err == nil && n > 0 {
		return n
	}
	return render.DefaultWidth
}

func isHelp(a string) bool { return a == "-h" || a == "-help" || a == "--help" }

func execCmd(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	const use = "nudge exec [--json] [--svg DIR] [--csv DIR] [--width N] FILE..."
	fs := flag.NewFlagSet("exec", flag.ContinueOnError)
	asJSON := fs.Bool("json", false, "print one JSON object per result and line")
	svgDir := fs.String("svg", "", "write each chart as an SVG file into `DIR`")
	csvDir := fs.String("csv", "", "write each result table as a CSV file into `DIR`, named by file, line and command")
	width := fs.Int("width", 0, "text output `N` columns wide (default $COLUMNS, else 100)")
	if code, done := parseFlags(fs, args, use, stdout, stderr); done {
		return code
	}
	if fs.NArg() == 0 {
		fmt.Fprintln(stderr, "usage: "+use)
		fs.PrintDefaults()
		return 2
	}
	if *width < 0 {
		fmt.Fprintln(stderr, "nudge exec: --width must be positive")
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	in := kernel.New()
	if name := os.Getenv("NUDGE_DEBUG_LOG"); name != "" {
		// The stack of an internal error goes here, never to the user.
		f, err := os.OpenFile(name, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
		if err != nil {
			fmt.Fprintln(stderr, "nudge:", err)
			return 2
		}
		defer f.Close()
		in.DebugLog = f
	}
	in.Opts.NoCharts = *svgDir == ""
	in.Opts.Width = textWidth(*width)
	for _, dir := range []string{*svgDir, *csvDir} {
		if dir == "" {
			continue
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			fmt.Fprintln(stderr, "nudge:", err)
			return 2
		}
	}
	out := bufio.NewWriter(stdout)
	sink := &kernel.WriterSink{Out: out, Err: stderr, JSON: *asJSON, SVGDir: *svgDir, CSVDir: *csvDir}
	if bar := newProgress(stderr, *asJSON); bar != nil {
		sink.OnProgress, sink.Pause = bar.track, bar.pause
		defer bar.stop()
	}
	defer sink.Finish()
	for _, name := range fs.Args() {
		var src []byte
		var err error
		if name == "-" {
			src, err = io.ReadAll(stdin)
			name = "stdin"
		} else {
			src, err = os.ReadFile(name)
		}
		if err != nil {
			sink.Stream("stderr", fmt.Sprintf("nudge: cannot read %s: %v\n", name, errors.Unwrap(err)))
			return 1
		}
		if err := kernel.RunFile(ctx, in, name, string(src), sink); err != nil {
			return 1
		}
	}
	if sink.Failed {
		return 1
	}
	return 0
}

func kernelCmd(args []string, stdout, stderr io.Writer) int {
	const use = "nudge kernel -f CONNECTION_FILE"
	fs := flag.NewFlagSet("kernel", flag.ContinueOnError)
	conn := fs.String("f", "", "the connection `FILE` written by Jupyter")
	if code, done := parseFlags(fs, args, use, stdout, stderr); done {
		return code
	}
	if *conn == "" {
		fmt.Fprintln(stderr, "usage: "+use)
		return 2
	}
	if err := kernel.Serve(*conn, stderr); err != nil && !errors.Is(err, context.Canceled) {
		fmt.Fprintln(stderr, "nudge kernel:", err)
		return 1
	}
	return 0
}
