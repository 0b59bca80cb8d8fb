//go:build unix

package tape_test

import (
	"syscall"
	"time"
)

// processCPU returns the CPU time (user and system) the process has used,
// on every thread: a clock that other processes on a loaded machine do not
// advance.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return -1
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
