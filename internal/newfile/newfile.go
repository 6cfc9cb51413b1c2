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

// Create writes data to path, which must not exist.
func Create(path string, data []byte) error {
	if _, err := os.Lstat(path); err == nil {
		return &ExistsError{Path: path}
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
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
