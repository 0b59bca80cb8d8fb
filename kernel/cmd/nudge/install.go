package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/nudge-dev/nudge/kernel"
)

func installCmd(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("install", flag.ContinueOnError)
	user := fs.Bool("user", false, "install for the current user (the default)")
	sysPrefix := fs.Bool("sys-prefix", false, "install under the prefix of the Python that runs Jupyter")
	prefix := fs.String("prefix", "", "install under `DIR`/share/jupyter/kernels")
	if code, done := parseFlags(fs, args, "nudge install [--user | --sys-prefix | --prefix DIR]", stdout, stderr); done {
		return code
	}
	n := 0
	for _, b := range []bool{*user, *sysPrefix, *prefix != ""} {
		if b {
			n++
		}
	}
	if n > 1 || fs.NArg() > 0 {
		fmt.Fprintln(stderr, "usage: nudge install [--user | --sys-prefix | --prefix DIR]")
		return 2
	}
	scope := "user"
	switch {
	case *sysPrefix:
		scope = "sys-prefix"
	case *prefix != "":
		scope = "prefix"
	}
	dir, err := kernel.SpecDir(scope, *prefix)
	if err == nil {
		dir, err = filepath.Abs(dir)
	}
	if err != nil {
		fmt.Fprintln(stderr, "nudge install:", err)
		return 1
	}
	exe, err := os.Executable()
	if err == nil {
		exe, err = filepath.EvalSymlinks(exe)
	}
	if err != nil {
		fmt.Fprintln(stderr, "nudge install: cannot find this program's path:", err)
		return 1
	}
	prog, err := kernel.InstallSpec(dir, exe)
	if err != nil {
		fmt.Fprintln(stderr, "nudge install:", err)
		return 1
	}
	fmt.Fprintf(stdout, "installed the nudge kernelspec in %s\nJupyter starts %s (a copy of %s)\n", dir, prog, exe)
	return 0
}
