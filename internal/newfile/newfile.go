package newfile

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

// ExistsError says the file is already there.
type ExistsError struct{ Path string }

func (e *ExistsError) Error() string { return e.Path + " already exists" }

// Check says whether Create could make path: an ExistsError when it is
// there, an error naming the folder when that does not exist or is not a
// folder; nil otherwise.
func Check(path string) error {
	if _, err := os.Lstat(path); err == nil {
		return &ExistsError{Path: path}
	}
	dir := filepath.Dir(path)
	fi, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return fmt.Errorf("cannot write %s: the folder %s does not exist: make it first, or give another path", path, dir)
	case err == nil && !fi.IsDir():
		return fmt.Errorf("cannot write %s: %s is not a folder", path, dir)
	}
	return nil
}

// Create writes data to path, which must not exist.
func Create(path string, data []byte) error {
	if err := Check(path); err != nil {
		return err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		// The temporary file's name is not one the user gave.
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	name := tmp.Name()
	defer os.Remove(name)
	_, werr := tmp.Write(data)
	if werr == nil {
		werr = tmp.Sync()
	}
	if cerr := tmp.Close(); werr == nil {
		werr = cerr
	}
	if werr != nil {
		return fmt.Errorf("cannot write %s: %w", path, werr)
	}
	if err := os.Chmod(name, 0o644); err != nil {
		return err
	}
	if err := os.Link(name, path); err != nil {
		if errors.Is(err, fs.ErrExist) {
			return &ExistsError{Path: path}
		}
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	return nil
}
