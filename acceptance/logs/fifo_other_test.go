//go:build !unix

package logs

import "errors"

// mkfifo reports that named pipes are not available on this system.
func mkfifo(string) error { return errors.New("no named pipes on this system") }
