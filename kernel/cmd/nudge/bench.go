package main

import (
	"fmt"
	"io"

	"github.com/nudge-dev/nudge/sens"
)

func benchCmd(args []string, stdout, stderr io.Writer) int {
	if len(args) > 0 {
		fmt.Fprintln(stderr, "usage: nudge bench")
		return 2
	}
	if err := sens.RunBench(stdout); err != nil {
		fmt.Fprintln(stderr, "nudge bench:", err)
		return 1
	}
	return 0
}
