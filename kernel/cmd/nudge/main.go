// Command nudge runs cost models: `nudge exec FILE` runs a model file and its
// analysis commands, `nudge kernel -f CONNECTION_FILE` serves Jupyter, `nudge
// install` writes the Jupyter kernelspec, and `nudge bench` prints the engine's
// benchmark ratios.
//
// Exit codes: 0 success, 1 an error in the model or its analyses, 2 a usage error.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"

	"github.com/nudge-dev/nudge/kernel"
)

const usage = `nudge: sensitivity analysis of cost models

usage:
  nudge exec [--json] [--svg DIR] FILE...
                                   run model files (- reads standard input);
                                   --svg writes each chart into DIR
  nudge kernel -f CONNECTION_FILE  run the Jupyter kernel
  nudge install [--user | --sys-prefix | --prefix DIR]
                                   write the Jupyter kernelspec, with a copy
                                   of this program that Jupyter starts
  nudge bench                      print the engine's benchmark ratios
  nudge version                    print the version
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
	case "kernel":
		return kernelCmd(args[1:], stderr)
	case "install":
		return installCmd(args[1:], stdout, stderr)
	case "bench":
		return benchCmd(args[1:], stdout, stderr)
	case "version", "--version", "-version":
		fmt.Fprintln(stdout, "nudge", kernel.Version)
		return 0
	case "help", "-h", "--help", "-help":
		fmt.Fprint(stdout, usage)
		return 0
	}
	fmt.Fprintf(stderr, "nudge: unknown command %q\n\n%s", args[0], usage)
	return 2
}

func execCmd(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("exec", flag.ContinueOnError)
	fs.SetOutput(stderr)
	asJSON := fs.Bool("json", false, "print one JSON object per result and line")
	svgDir := fs.String("svg", "", "write each chart as an SVG file into `DIR`")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: nudge exec [--json] [--svg DIR] FILE...")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() == 0 {
		fs.Usage()
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	in := kernel.New()
	in.Opts.NoCharts = *svgDir == ""
	if *svgDir != "" {
		if err := os.MkdirAll(*svgDir, 0o755); err != nil {
			fmt.Fprintln(stderr, "nudge:", err)
			return 2
		}
	}
	sink := &kernel.WriterSink{Out: stdout, Err: stderr, JSON: *asJSON, SVGDir: *svgDir}
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
			fmt.Fprintln(stderr, "nudge:", err)
			return 2
		}
		if err := kernel.RunFile(ctx, in, name, string(src), sink); err != nil {
			return 1
		}
	}
	return 0
}

func kernelCmd(args []string, stderr io.Writer) int {
	fs := flag.NewFlagSet("kernel", flag.ContinueOnError)
	fs.SetOutput(stderr)
	conn := fs.String("f", "", "the connection file written by Jupyter")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if *conn == "" {
		fmt.Fprintln(stderr, "usage: nudge kernel -f CONNECTION_FILE")
		return 2
	}
	if err := kernel.Serve(*conn, stderr); err != nil && !errors.Is(err, context.Canceled) {
		fmt.Fprintln(stderr, "nudge kernel:", err)
		return 1
	}
	return 0
}
