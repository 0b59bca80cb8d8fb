//go:build unix

package main

import (
	"runtime"
	"syscall"
)

// peakRSS returns the process's peak resident memory in bytes, or 0 when
// unknown.
func peakRSS() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	if runtime.GOOS == "darwin" || runtime.GOOS == "ios" {
		return ru.Maxrss // bytes there
	}
	return ru.Maxrss * 1024 // kilobytes on Linux and the BSDs
}
