//go:build unix

package kernel

import "syscall"

// gone reports whether process pid has exited: signal 0 checks that it
// exists without sending anything (a process of another user answers
// EPERM, and exists).
func gone(pid int) bool {
	return syscall.Kill(pid, 0) == syscall.ESRCH
}
