//go:build !unix && !windows

package main

import "os"

// openNoFollow: no such flag here.
const openNoFollow = 0

// tryLock: systems with neither flock nor LockFileEx (such as WebAssembly)
// have no lock between processes; the folder is not locked there.
func tryLock(*os.File) (busy bool, err error) { return false, nil }

// unlockFile releases nothing.
func unlockFile(*os.File) {}
