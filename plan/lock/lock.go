package lock

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"ordplan/internal/newfile"
	"ordplan/plan"
)

// Format is the version of the lock file layout.
const Format = 1

// File is the content of a lock file.
type File struct {
	Format       int             `json:"ordplan_lock"`
	PlanFile     string          `json:"plan_file"`
	SHA256       string          `json:"canonical_sha256"`
	FrozenAt     string          `json:"frozen_at"`
	Version      string          `json:"program_version"`
	Registration string          `json:"registration"`
	Canonical    json.RawMessage `json:"canonical"`
	Checksum     string          `json:"lock_checksum"`
}

// PathFor gives the lock file of a plan: the plan's name with its
// extension replaced by .lock.json, in the plan's folder.
func PathFor(planPath string) string {
	ext := filepath.Ext(planPath)
	return strings.TrimSuffix(planPath, ext) + ".lock.json"
}

// canonicalSum is the hex SHA-256 of a plan's canonical form.
func canonicalSum(canon []byte) string {
	s := sha256.Sum256(canon)
	return hex.EncodeToString(s[:])
}

// checksum covers every field of the lock but the checksum itself.
func (f *File) checksum(canon []byte) string {
	h := sha256.New()
	fmt.Fprintf(h, "ordplan lock %d\nplan_file %s\ncanonical_sha256 %s\nfrozen_at %s\nprogram_version %s\nregistration %s\n",
		f.Format, f.PlanFile, f.SHA256, f.FrozenAt, f.Version, f.Registration)
	h.Write(canon)
	return hex.EncodeToString(h.Sum(nil))
}

// New builds the lock of a plan.
func New(p *plan.Plan, registration string, now time.Time, version string) *File {
	canon := p.Canonical()
	f := &File{Format: Format, PlanFile: filepath.Base(p.Path), SHA256: canonicalSum(canon),
		FrozenAt: now.UTC().Format(time.RFC3339), Version: version, Registration: registration,
		Canonical: json.RawMessage(bytes.TrimSpace(canon))}
	f.Checksum = f.checksum(canon)
	return f
}

// Encode gives the bytes of the lock file.
func (f *File) Encode() []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(f); err != nil {
		panic("lock: encoding failed: " + err.Error())
	}
	return buf.Bytes()
}

// ExistsError is returned when a lock is already there and may not be
// replaced.
type ExistsError struct {
	Path string
	Old  *File // nil when the old lock cannot be read
	// Missing is set when the lock file is a symbolic link to a file
	// that does not exist (DanglingLink).
	Missing error
}

func (e *ExistsError) Error() string {
	if e.Missing != nil {
		return fmt.Sprintf("%v. To freeze anew all the same (the link is kept as %s.replaced-TIME), pass --replace", e.Missing, filepath.Base(e.Path))
	}
	what := "a lock file"
	if e.Old != nil {
		what = fmt.Sprintf("the lock written at %s (canonical sha256 %.12s...)", e.Old.FrozenAt, e.Old.SHA256)
		if e.Old.Registration != "" {
			what += ", registration " + e.Old.Registration + ","
		}
	}
	return fmt.Sprintf("%s already exists: %s is not replaced silently; a registered plan's changes belong in its deviations list. To freeze anew (the old lock is kept as %s.replaced-TIME), pass --replace",
		e.Path, what, filepath.Base(e.Path))
}

// Write writes the lock beside the plan without ever clobbering a file:
// an existing lock is an ExistsError unless replace is set, and then the
// old lock is renamed to LOCK.replaced-<its frozen_at>, never deleted.
func Write(f *File, planPath string, replace bool) (path, kept string, err error) {
	path = PathFor(planPath)
	if _, err := os.Lstat(path); err == nil {
		old, _ := Read(path)
		if !replace {
			return path, "", &ExistsError{Path: path, Old: old, Missing: DanglingLink(path)}
		}
		stamp := time.Now().UTC().Format("20060102T150405Z")
		if old != nil {
			if t, err := time.Parse(time.RFC3339, old.FrozenAt); err == nil {
				stamp = t.UTC().Format("20060102T150405Z")
			}
		}
		// A name not taken: -2, -3, ... after the time when locks were
		// replaced within one second.
		kept = path + ".replaced-" + stamp
		for i := 2; ; i++ {
			if _, err := os.Lstat(kept); err != nil {
				break
			}
			kept = path + ".replaced-" + stamp + "-" + strconv.Itoa(i)
		}
		if err := os.Rename(path, kept); err != nil {
			return path, "", fmt.Errorf("%s: cannot keep the old lock: %w", path, err)
		}
	} else if !errors.Is(err, fs.ErrNotExist) {
		return path, "", err
	}
	if err := newfile.Create(path, f.Encode()); err != nil {
		var ee *newfile.ExistsError
		if errors.As(err, &ee) {
			return path, kept, &ExistsError{Path: path}
		}
		return path, kept, err
	}
	return path, kept, nil
}

// DanglingLink says that the lock file at path is a symbolic link to a
// file that does not exist (nil when it is not): a registration lost, not
// a plan never frozen.
func DanglingLink(path string) error {
	fi, err := os.Lstat(path)
	if err != nil || fi.Mode()&os.ModeSymlink == 0 {
		return nil
	}
	if _, err := os.Stat(path); !errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	target, _ := os.Readlink(path)
	return fmt.Errorf("%s is a symbolic link to %s, which does not exist: the plan's registration cannot be read (was the lock moved or deleted?); restore the file it points to, or remove the link if the plan was never frozen", path, target)
}

// Read reads and verifies a lock file: its layout, its own checksum, and
// the SHA-256 of the canonical form it holds.
func Read(path string) (*File, error) {
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		// A device or a named pipe would be read without end.
		return nil, fmt.Errorf("%s is not a regular file (a named pipe, a device or a folder): a lock file is the file ordplan freeze writes beside the plan; put the registered lock back, or remove this one if the plan was never frozen", path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	// A byte order mark that an editor saving the file added (as plans and
	// data files may start with one) is no edit of the lock: its checksum
	// covers the content, which JSON reads alike with CRLF line ends too.
	b = bytes.TrimPrefix(b, []byte("\ufeff"))
	var f File
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, fmt.Errorf("%s: not a lock file written by ordplan freeze (%v)", path, err)
	}
	if f.Format == 0 && f.SHA256 == "" && f.Checksum == "" {
		return nil, fmt.Errorf("%s: not a lock file written by ordplan freeze (it has none of a lock's fields: ordplan_lock, canonical_sha256, lock_checksum); put the registered lock back, or remove this file if the plan was never frozen", path)
	}
	if f.Format != Format {
		return nil, fmt.Errorf("%s: unsupported lock format %d (want %d)", path, f.Format, Format)
	}
	canon, err := indentCanonical(f.Canonical)
	if err != nil {
		return nil, fmt.Errorf("%s: canonical: %v", path, err)
	}
	edited := func(what string) error {
		return fmt.Errorf("%s: the lock file was edited by hand (%s); a lock is written only by `ordplan freeze`: restore the registered copy, or freeze anew with --replace if the registration itself is being replaced", path, what)
	}
	if f.Checksum != f.checksum(canon) {
		return nil, edited("its lock_checksum does not match its content")
	}
	if canonicalSum(canon) != f.SHA256 {
		return nil, edited("canonical_sha256 is not the SHA-256 of the canonical form it holds")
	}
	return &f, nil
}

// indentCanonical gives the canonical form's bytes as Plan.Canonical
// writes them.
func indentCanonical(raw json.RawMessage) ([]byte, error) {
	if len(raw) == 0 {
		return nil, errors.New("missing")
	}
	var buf bytes.Buffer
	if err := json.Indent(&buf, raw, "", "  "); err != nil {
		return nil, err
	}
	buf.WriteByte('\n')
	return buf.Bytes(), nil
}
