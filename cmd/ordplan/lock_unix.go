//go:build unix

package main

import (
	"errors"
	"os"
	"syscall"
)

// openNoFollow makes opening the lock file fail on a symlink.
const openNoFollow = syscall.O_NOFOLLOW

// tryLock takes an exclusive lock on f without waiting (flock); busy says
// that another process holds it. The lock goes with the process.
func tryLock(f *os.File) (busy bool, err error) {
	err = syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
	return errors.Is(err, syscall.EWOULDBLOCK), err
}

// unlockFile releases tryLock's lock.
func unlockFile(f *os.File) { syscall.Flock(int(f.Fd()), syscall.LOCK_UN) }
