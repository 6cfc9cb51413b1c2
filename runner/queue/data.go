package queue

import (
	"context"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner/data"
)

// HashFile returns the hex SHA-256 of the file's bytes.
func HashFile(path string) (string, error) {
	b, err := data.ReadFile(path)
	if err != nil {
		return "", err
	}
	return hashBytes(b), nil
}

func hashBytes(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// PutData makes sure the data store holds the file at path under hash: it
// uploads the bytes unless an object with that name and the right digest is
// already there. The file must hash to hash.
func (c *Client) PutData(ctx context.Context, path, hash string) error {
	b, err := data.ReadFile(path) // the bytes a running plan pinned, if it did
	if err != nil {
		return fmt.Errorf("data file: %v", err)
	}
	return c.putBytes(ctx, b, hash, path)
}

// putBytes makes sure the data store holds b under hash, which b must hash
// to (name is for messages).
func (c *Client) putBytes(ctx context.Context, b []byte, hash, name string) error {
	if got := hashBytes(b); got != hash {
		return fmt.Errorf("data file %s: its bytes hash to %s, not %s (did it change during the run?)", name, got, hash)
	}
	want := sha256.Sum256(b)
	info, err := c.data.GetInfo(ctx, hash)
	if err == nil && info.Digest == "SHA-256="+base64.URLEncoding.EncodeToString(want[:]) && time.Since(info.ModTime) < DataTTL/2 {
		return nil // present, and far from expiring
	}
	if err != nil && !errors.Is(err, jetstream.ErrObjectNotFound) {
		return fmt.Errorf("data store: %v", err)
	}
	if _, err := c.data.PutBytes(ctx, hash, b); err != nil {
		return fmt.Errorf("data store: uploading %s: %v", name, err)
	}
	return nil
}

// dataCache keeps data files fetched from the store in a local folder,
// named by their hash.
type dataCache struct {
	dir      string
	mu       sync.Mutex
	verified map[string]stamp // files checked by this process
}

// stamp identifies a checked file: a file changed since gets checked again.
type stamp struct {
	size int64
	mod  int64
}

func stampOf(p string) (stamp, bool) {
	fi, err := os.Stat(p)
	if err != nil {
		return stamp{}, false
	}
	return stamp{fi.Size(), fi.ModTime().UnixNano()}, true
}

func newDataCache(dir string) *dataCache {
	return &dataCache{dir: dir, verified: map[string]stamp{}}
}

// DefaultCacheDir is the user's cache folder for ordplan data files.
func DefaultCacheDir() (string, error) {
	base, err := os.UserCacheDir()
	if err != nil {
		return "", err
	}
	return filepath.Join(base, "ordplan", "data"), nil
}

// CacheUsable is dataCache.usable of the folder dir: ordplan worker
// checks its --cache before it connects.
func CacheUsable(dir string) error { return newDataCache(dir).usable() }

// usable makes the cache folder when it is missing and checks that a file
// can be written in it: a worker says it is ready only when it can keep
// the data files it fetches.
func (dc *dataCache) usable() error {
	if err := os.MkdirAll(dc.dir, 0o755); err != nil {
		return dc.failed(err)
	}
	f, err := os.CreateTemp(dc.dir, "probe.*.part")
	if err != nil {
		return dc.failed(err)
	}
	f.Close()
	return os.Remove(f.Name())
}

// failed words a file the cache folder could not take, with what to do:
// a full folder wants room, any other failure a folder this worker can
// write.
func (dc *dataCache) failed(err error) error {
	if errors.Is(err, syscall.ENOSPC) {
		return fmt.Errorf("data cache %s: the folder is full (%v): free space there, or give --cache a folder with room for the data files", dc.dir, err)
	}
	return fmt.Errorf("data cache %s: %v (give --cache a folder this worker can write)", dc.dir, err)
}

// path returns the local path of the data file with the given hash,
// fetching it when it is absent or its bytes do not hash to hash. A file
// whose fetched bytes do not match is refused.
func (dc *dataCache) path(ctx context.Context, store jetstream.ObjectStore, hash, name string, limit int64) (string, error) {
	if len(hash) != 64 {
		return "", fmt.Errorf("data %s: %q is not a SHA-256 hash", name, hash)
	}
	if _, err := hex.DecodeString(hash); err != nil {
		return "", fmt.Errorf("data %s: %q is not a SHA-256 hash", name, hash)
	}
	dc.mu.Lock()
	defer dc.mu.Unlock()
	p := filepath.Join(dc.dir, hash+formatExt(name))
	if st, ok := stampOf(p); ok && dc.verified[hash] == st {
		return p, nil
	}
	if b, err := os.ReadFile(p); err == nil && hashBytes(b) == hash {
		dc.remember(hash, p)
		return p, nil
	}
	info, err := store.GetInfo(ctx, hash)
	if err != nil {
		return "", fmt.Errorf("data %s (sha256 %s): fetching it from the data store: %v", name, hash, err)
	}
	if info.Size > uint64(limit) {
		return "", fmt.Errorf("data %s has %d bytes; this worker takes at most %d (ordplan worker --max-data-mb)", name, info.Size, limit)
	}
	b, err := store.GetBytes(ctx, hash)
	if err != nil {
		return "", fmt.Errorf("data %s (sha256 %s): fetching it from the data store: %v", name, hash, err)
	}
	if got := hashBytes(b); got != hash {
		return "", fmt.Errorf("data %s: the data store's copy hashes to %s, not %s; refusing to fit on it", name, got, hash)
	}
	if err := os.MkdirAll(dc.dir, 0o755); err != nil {
		return "", dc.failed(err)
	}
	tmp, err := os.CreateTemp(dc.dir, hash+".*.part")
	if err != nil {
		return "", dc.failed(err)
	}
	_, werr := tmp.Write(b)
	cerr := tmp.Close()
	if werr == nil {
		werr = cerr
	}
	if werr == nil {
		werr = os.Rename(tmp.Name(), p)
	}
	if werr != nil {
		os.Remove(tmp.Name())
		return "", dc.failed(werr)
	}
	dc.remember(hash, p)
	return p, nil
}

func (dc *dataCache) remember(hash, p string) {
	if st, ok := stampOf(p); ok {
		dc.verified[hash] = st
	}
}

// formatExt is the extension that keeps a cached data file's format (the
// reader knows a workbook or a Parquet file by its name): ".xlsx",
// ".parquet", or "" for CSV text.
func formatExt(name string) string {
	switch {
	case data.IsWorkbook(name):
		return ".xlsx"
	case data.IsParquet(name):
		return ".parquet"
	}
	return ""
}
