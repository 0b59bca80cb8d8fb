//go:build !goexperiment.simd || !amd64

package tape

// vecKernels reports whether run uses vector kernels: never in a build
// without GOEXPERIMENT=simd on amd64 (planvec.go).
var vecKernels = false

// vecKernelsBuilt: this build has no vector kernels.
const vecKernelsBuilt = false

// runVec is not called in this build.
func (e *planExec) runVec(m int) (lanes int, bad bool) { return 0, false }
