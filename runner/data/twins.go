package data

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"io"
	"os"
)

// Twin is a file of a list that is an earlier one of the list: the same
// file under another path (a symbolic or hard link, another way of
// writing the path), or a file holding the same bytes (a copy).
type Twin struct {
	First, Second int    // indexes in the list, First < Second
	SameFile      bool   // one file under two paths (else two files, one content)
	Link          int    // of one file, the index of the path that is a symbolic link (-1: neither)
	SHA256        string // the bytes' hex SHA-256 (of a copy; "" for one file)
}

// Twins finds, in a list of files read as distinct (the parts of a data
// set, imputed sets), each file that is an earlier one or holds its
// bytes, paired with the first such earlier file; a path written twice is
// not a twin of itself (the list's own check names it). Only regular files of
// one size are compared, and their bytes only then, a block at a time;
// a path that cannot be read is passed over (its reader says why).
func Twins(paths []string) []Twin {
	infos := make([]os.FileInfo, len(paths))
	for i, p := range paths {
		if fi, err := os.Stat(p); err == nil && fi.Mode().IsRegular() {
			infos[i] = fi
		}
	}
	var out []Twin
	for j := range paths {
		if infos[j] == nil {
			continue
		}
		for i := 0; i < j; i++ {
			if paths[i] == paths[j] || infos[i] == nil || infos[i].Size() != infos[j].Size() {
				continue
			}
			if os.SameFile(infos[i], infos[j]) {
				out = append(out, Twin{First: i, Second: j, SameFile: true, Link: symlinkOf(paths, j, i)})
				break
			}
			if sum, same := sameBytes(paths[i], paths[j]); same {
				out = append(out, Twin{First: i, Second: j, SHA256: sum, Link: -1})
				break
			}
		}
	}
	return out
}

// symlinkOf gives the first of the indexes whose path is a symbolic link,
// or -1.
func symlinkOf(paths []string, idx ...int) int {
	for _, k := range idx {
		if fi, err := os.Lstat(paths[k]); err == nil && fi.Mode()&os.ModeSymlink != 0 {
			return k
		}
	}
	return -1
}

// sameBytes says whether the files at a and b hold the same bytes and
// gives their hex SHA-256 when they do; it stops at the first block that
// differs.
func sameBytes(a, b string) (string, bool) {
	fa, err := os.Open(a)
	if err != nil {
		return "", false
	}
	defer fa.Close()
	fb, err := os.Open(b)
	if err != nil {
		return "", false
	}
	defer fb.Close()
	h := sha256.New()
	ba, bb := make([]byte, 1<<20), make([]byte, 1<<20)
	for {
		na, ea := io.ReadFull(fa, ba)
		nb, eb := io.ReadFull(fb, bb)
		if na != nb || !bytes.Equal(ba[:na], bb[:nb]) {
			return "", false
		}
		h.Write(ba[:na])
		endA := ea == io.EOF || ea == io.ErrUnexpectedEOF
		endB := eb == io.EOF || eb == io.ErrUnexpectedEOF
		switch {
		case endA && endB:
			return hex.EncodeToString(h.Sum(nil)), true
		case endA || endB || ea != nil || eb != nil:
			return "", false
		}
	}
}
