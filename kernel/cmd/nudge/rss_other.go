//go:build !unix

package main

// peakRSS returns 0: the peak resident memory is not known here.
func peakRSS() int64 { return 0 }
