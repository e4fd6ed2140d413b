//go:build unix

package sessions

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"syscall"
)

// lockDir takes an exclusive flock(2) on the data folder's lock file and
// writes this process's id into it. flock locks belong to the open file,
// so a second lockDir on the same folder fails even within one process;
// the kernel drops the lock when the process ends, however it ends.
func lockDir(dir string) (*os.File, error) {
	path := filepath.Join(dir, LockFile)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		return nil, fmt.Errorf("sessions: opening lock file: %w", err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		holder := ""
		if b, rerr := os.ReadFile(path); rerr == nil {
			if pid, perr := strconv.Atoi(string(bytes.TrimSpace(b))); perr == nil {
				holder = " (process " + strconv.Itoa(pid) + ")"
			}
		}
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("%w: %s is used by another matchbench server%s; stop that one or give this one another data folder",
				ErrLocked, dir, holder)
		}
		return nil, fmt.Errorf("sessions: locking %s: %w", path, err)
	}
	if err := f.Truncate(0); err == nil {
		f.WriteAt([]byte(strconv.Itoa(os.Getpid())+"\n"), 0)
	}
	return f, nil
}

// unlockDir releases the lock taken by lockDir. The lock file stays.
func unlockDir(f *os.File) error {
	if f == nil {
		return nil
	}
	syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
	return f.Close()
}
