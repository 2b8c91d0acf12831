//go:build unix

package logs

import "syscall"

// mkfifo makes a named pipe (POSIX.1-2017 mkfifo).
func mkfifo(path string) error { return syscall.Mkfifo(path, 0o644) }
