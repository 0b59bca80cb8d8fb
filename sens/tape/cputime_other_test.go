//go:build !unix

package tape_test

import "time"

// processCPU is unknown here: the CPU-time ratios are not reported.
func processCPU() time.Duration { return -1 }
