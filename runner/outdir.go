package runner

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// LockFile is the lock a run holds in its output folder.
const LockFile = ".ordplan.lock"

// OutputLock is a held lock on an output folder.
type OutputLock struct{ f *os.File }

// LockOutput creates the output folder if needed and takes its lock, so
// that one run at a time writes there. The lock is released by Unlock or
// when the process ends (however it ends); a second run meanwhile is
// refused with a message naming the holder.
func LockOutput(dir string) (*OutputLock, error) {
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		return nil, fmt.Errorf("output folder %s: exists and is not a folder", dir)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("output folder: %w", err)
	}
	path := filepath.Join(dir, LockFile)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|syscall.O_NOFOLLOW, 0o644)
	if err != nil {
		return nil, fmt.Errorf("output folder %s: cannot open its lock file %s: %w", dir, LockFile, err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		holder := ""
		if b, rerr := os.ReadFile(path); rerr == nil && len(b) > 0 {
			holder = " (held by " + strings.TrimSpace(string(b)) + ")"
		}
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("output folder %s: another ordplan run is writing there%s; wait for it to finish or give another --out", dir, holder)
		}
		return nil, fmt.Errorf("output folder %s: cannot lock %s: %v", dir, LockFile, err)
	}
	host, _ := os.Hostname()
	f.Truncate(0)
	f.WriteAt([]byte("process "+strconv.Itoa(os.Getpid())+" on "+host+"\n"), 0)
	return &OutputLock{f: f}, nil
}

// Unlock releases the lock.
func (l *OutputLock) Unlock() {
	if l != nil && l.f != nil {
		syscall.Flock(int(l.f.Fd()), syscall.LOCK_UN)
		l.f.Close()
		l.f = nil
	}
}

// writeAll writes every file into dir all or nothing: each goes to a new
// temporary file in dir (created exclusively, so no symlink is followed),
// is synced, and only when all are written are they renamed into place
// (a rename replaces a symlink planted under the name, never its target).
// On a failure before the renames the folder keeps what it had. names
// gives the order of the renames; the last one marks a complete run.
func writeAll(dir string, names []string, files map[string][]byte) error {
	for _, n := range names {
		if n == "" || n != filepath.Base(n) || strings.HasPrefix(n, ".") {
			return fmt.Errorf("output file name %q is not a plain file name", n)
		}
	}
	tmp := make([]string, 0, len(names))
	defer func() {
		for _, t := range tmp {
			os.Remove(t)
		}
	}()
	for _, n := range names {
		f, err := os.CreateTemp(dir, "."+n+".tmp-*")
		if err != nil {
			return fmt.Errorf("writing %s: %w", filepath.Join(dir, n), err)
		}
		tmp = append(tmp, f.Name())
		_, err = f.Write(files[n])
		if err == nil {
			err = f.Sync()
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err == nil {
			err = os.Chmod(f.Name(), 0o644)
		}
		if err != nil {
			return fmt.Errorf("writing %s: %w (the previous outputs in %s are unchanged)", filepath.Join(dir, n), err, dir)
		}
	}
	for i, n := range names {
		if err := os.Rename(tmp[i], filepath.Join(dir, n)); err != nil {
			return fmt.Errorf("writing %s: %w", filepath.Join(dir, n), err)
		}
	}
	tmp = nil
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}
