//go:build windows

package main

import (
	"errors"
	"os"

	"golang.org/x/sys/windows"
)

// openNoFollow: Windows has no such flag for opening a file.
const openNoFollow = 0

// tryLock takes an exclusive lock on the first byte of f without waiting
// (LockFileEx); busy says that another process holds it. Windows releases
// the lock when the process ends.
func tryLock(f *os.File) (busy bool, err error) {
	var ov windows.Overlapped
	err = windows.LockFileEx(windows.Handle(f.Fd()), windows.LOCKFILE_EXCLUSIVE_LOCK|windows.LOCKFILE_FAIL_IMMEDIATELY, 0, 1, 0, &ov)
	return errors.Is(err, windows.ERROR_LOCK_VIOLATION), err
}

// unlockFile releases tryLock's lock.
func unlockFile(f *os.File) {
	var ov windows.Overlapped
	windows.UnlockFileEx(windows.Handle(f.Fd()), 0, 1, 0, &ov)
}
