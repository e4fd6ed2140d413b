//go:build !unix

package sessions

import "os"

// lockDir does not lock on systems without flock(2): two servers on one
// data folder are not detected there. SQLite's own locking still keeps the
// database consistent, but their in-memory states would diverge.
func lockDir(dir string) (*os.File, error) { return nil, nil }

func unlockDir(f *os.File) error { return nil }
