package data

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sync"
	"sync/atomic"
)

// Data files are read whole, from regular files only: a named pipe or a
// device (/dev/zero, a terminal) would hang a reader or never end. While a
// file is pinned (a plan run pins its data and new-rows files), every
// reader of that path in the process gets the bytes read when it was
// pinned, so that the hash a run records is the hash of the bytes it
// parsed, even if the file is replaced during the run.

var pins = struct {
	sync.Mutex
	m map[string]*pinned
}{m: map[string]*pinned{}}

type pinned struct {
	raw  []byte
	sum  func() string // the bytes' hex SHA-256 (waiting for it while it is taken)
	refs int
}

func pinKey(path string) string {
	if abs, err := filepath.Abs(path); err == nil {
		return abs
	}
	return filepath.Clean(path)
}

// pinnedBytes returns the bytes of a pinned path, if it is pinned.
func pinnedBytes(path string) ([]byte, bool) {
	pins.Lock()
	defer pins.Unlock()
	if p, ok := pins.m[pinKey(path)]; ok {
		return p.raw, true
	}
	return nil, false
}

// Pin reads the file at path once (as ReadFile does, the hash taken while
// it is read) and makes every reader of this package use these bytes
// until the returned function is called. It returns the bytes' hex
// SHA-256. Pins nest: the bytes of the first pin are kept until the last
// unpin.
func Pin(path string) (string, func(), error) {
	sum, unpin, err := PinEarly(path)
	if err != nil {
		return "", nil, err
	}
	return sum(), unpin, nil
}

// PinEarly is Pin returning as soon as the bytes are read and checked:
// their SHA-256 is still being taken, on a goroutine of its own, beside
// whatever the caller does next (such as parsing them); sum waits for it
// and returns it.
func PinEarly(path string) (sum func() string, unpin func(), err error) {
	key := pinKey(path)
	pins.Lock()
	p, ok := pins.m[key]
	pins.Unlock()
	if !ok {
		raw, sum, err := readChecked(path, true)
		if err != nil {
			return nil, nil, err
		}
		pins.Lock()
		if p, ok = pins.m[key]; !ok {
			p = &pinned{raw: raw, sum: sum}
			pins.m[key] = p
		}
		pins.Unlock()
	}
	pins.Lock()
	p.refs++
	pins.Unlock()
	var once sync.Once
	unpin = func() {
		once.Do(func() {
			pins.Lock()
			defer pins.Unlock()
			if p.refs--; p.refs == 0 && pins.m[key] == p {
				delete(pins.m, key)
			}
		})
	}
	return p.sum, unpin, nil
}

// HashBytes returns the hex SHA-256 of b.
func HashBytes(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// ReadFile returns the bytes of a data file: the pinned ones, or the whole
// file when it is a regular file; anything else is an *Error saying what
// the path is. The bytes are checked for a recognizable non-CSV format
// and, for text, for UTF-8.
func ReadFile(path string) ([]byte, error) {
	if raw, ok := pinnedBytes(path); ok {
		return raw, nil
	}
	raw, _, err := readChecked(path, false)
	return raw, err
}

// readChecked reads the file at path whole and checks its bytes (see
// ReadFile), and gives their hex SHA-256 when sum is true (see readWhole).
func readChecked(path string, sum bool) ([]byte, func() string, error) {
	if err := CheckRegular(path); err != nil {
		return nil, nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, &Error{File: path, Msg: "cannot read file: " + osReason(err), Err: err}
	}
	defer f.Close()
	text := !IsWorkbook(path) && !IsParquet(path)
	raw, hash, bad, err := readWhole(f, path, sum, text)
	if err != nil {
		return nil, nil, err
	}
	if text {
		if msg := sniff(raw); msg != "" {
			return nil, nil, &Error{File: path, Msg: msg, Err: ErrFileFormat}
		}
		if bad >= 0 {
			return nil, nil, &Error{File: path, Msg: notUTF8(raw, bad)}
		}
	}
	return raw, hash, nil
}

// fileBytes returns the bytes of a data file, the pinned ones or the whole
// file as read now, with the errors of openData; unlike ReadFile it does
// not check the bytes (the reader checks the first ones).
func fileBytes(path string) ([]byte, error) {
	if raw, ok := pinnedBytes(path); ok {
		return raw, nil
	}
	f, err := openData(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if of, ok := f.(*os.File); ok {
		raw, _, _, err := readWhole(of, path, false, false)
		return raw, err
	}
	var buf bytes.Buffer
	if _, err := buf.ReadFrom(f); err != nil {
		return nil, &Error{File: path, Msg: "cannot read file: " + osReason(err), Err: err}
	}
	return buf.Bytes(), nil
}

// readWhole reads the open file f (at path) whole, with, when sum is
// true, a function giving the hex SHA-256 of its bytes (else nil; for a
// large file it may still be being taken: the function waits for it) and,
// when check is true, the index of the first byte that is not valid UTF-8
// (invalidUTF8 of the whole, -1 when none or when check is false). A
// large file is read in blocks on the workers (readBlocks); a small one,
// or one that changed while read that way, in one stream.
func readWhole(f *os.File, path string, sum, check bool) ([]byte, func() string, int, error) {
	var size int64
	if fi, err := f.Stat(); err == nil {
		size = fi.Size()
	}
	if size >= 2*readBlock {
		if raw, hash, bad, ok := readBlocks(f, size, sum, check); ok {
			return raw, hash, bad, nil
		}
		if _, err := f.Seek(0, io.SeekStart); err != nil {
			return nil, nil, -1, &Error{File: path, Msg: "cannot read file: " + osReason(err), Err: err}
		}
	}
	buf := bytes.NewBuffer(make([]byte, 0, size+bytes.MinRead))
	if _, err := buf.ReadFrom(f); err != nil {
		return nil, nil, -1, &Error{File: path, Msg: "cannot read file: " + osReason(err), Err: err}
	}
	raw, bad := buf.Bytes(), -1
	var hash func() string
	if sum {
		h := HashBytes(raw)
		hash = func() string { return h }
	}
	if check {
		bad = invalidUTF8(raw, true)
	}
	return raw, hash, bad, nil
}

// readBlock is the size of the pieces readBlocks reads.
const readBlock = 4 << 20

// readBlocks reads a large file of the given size in pieces on the
// workers (the copying out of the page cache, and the first touch of the
// new memory, are then shared), once: each piece goes straight into its
// place. The SHA-256 (when sum is true) is taken on a goroutine of its
// own, piece after piece as they arrive, so that it runs beside the
// reading, the UTF-8 check (when check is true; on the workers, by
// pieces: invalidUTF8Blocks) and what the caller does next: hash waits
// for it. False when the file turned out not to be of that size (it
// changed while read) or a piece failed: the caller then reads it from
// the start, in one stream, and reports any error.
func readBlocks(f *os.File, size int64, sum, check bool) (raw []byte, hash func() string, bad int, ok bool) {
	raw = make([]byte, size)
	adviseHuge(raw)
	n := int((size + readBlock - 1) / readBlock)
	read := make([]chan struct{}, n) // closed once piece i is read (or failed)
	for i := range read {
		read[i] = make(chan struct{})
	}
	hashed := make(chan string, 1)
	if sum {
		go func() {
			h := sha256.New()
			for i := range n {
				<-read[i]
				lo := int64(i) * readBlock
				h.Write(raw[lo:min(lo+readBlock, size)])
			}
			hashed <- hex.EncodeToString(h.Sum(nil))
		}()
	}
	var failed atomic.Bool
	forEach(n, func(i int) {
		defer close(read[i])
		lo := int64(i) * readBlock
		if _, err := f.ReadAt(raw[lo:min(lo+readBlock, size)], lo); err != nil {
			failed.Store(true)
		}
	})
	var one [1]byte
	if k, _ := f.ReadAt(one[:], size); k != 0 || failed.Load() {
		if sum {
			<-hashed
		}
		return nil, nil, -1, false
	}
	bad = -1
	if check {
		bad = invalidUTF8Blocks(raw, readBlock)
	}
	if sum {
		hash = sync.OnceValue(func() string { return <-hashed })
	}
	return raw, hash, bad, true
}

// invalidUTF8Blocks is invalidUTF8(raw, true), found by pieces of block
// bytes on the workers: each piece from its first byte that
// does not continue a rune begun before it (at most three are skipped:
// the rune is the previous piece's) to the next piece's, so that every
// rune is checked once, whole, and the first bad byte in the file is the
// first one found in the pieces in order.
func invalidUTF8Blocks(raw []byte, block int) int {
	n := (len(raw) + block - 1) / block
	start := func(i int) int {
		at := min(i*block, len(raw))
		for k := 0; i > 0 && k < 3 && at < len(raw) && raw[at]&0xC0 == 0x80; k++ {
			at++
		}
		return at
	}
	first := make([]int, n)
	forEach(n, func(i int) {
		lo, hi := start(i), start(i+1)
		first[i] = -1
		if j := invalidUTF8(raw[lo:hi], hi == len(raw)); j >= 0 {
			first[i] = lo + j
		}
	})
	for _, j := range first {
		if j >= 0 {
			return j
		}
	}
	return -1
}

// openData opens a data file for reading (see ReadFile).
func openData(path string) (io.ReadCloser, error) {
	if raw, ok := pinnedBytes(path); ok {
		return io.NopCloser(bytes.NewReader(raw)), nil
	}
	if err := CheckRegular(path); err != nil {
		return nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &Error{File: path, Msg: "cannot open file: " + osReason(err), Err: err}
	}
	return f, nil
}

// CheckRegular refuses a path that is not a regular file (after
// symlinks), without opening it: opening a named pipe would wait for a
// writer.
func CheckRegular(path string) error {
	fi, err := os.Stat(path)
	if err != nil {
		return &Error{File: path, Msg: "cannot open file: " + osReason(err), Err: err}
	}
	m := fi.Mode()
	var what string
	switch {
	case m.IsRegular():
		return nil
	case m.IsDir():
		what = "a folder"
	case m&fs.ModeNamedPipe != 0:
		what = "a named pipe (FIFO)"
	case m&fs.ModeCharDevice != 0 || m&fs.ModeDevice != 0:
		what = "a device (such as /dev/zero or a terminal)"
	case m&fs.ModeSocket != 0:
		what = "a socket"
	default:
		what = "not a regular file"
	}
	return &Error{File: path, Msg: "is " + what + ", not a regular file: ordplan reads data from files only (save the data to a file first)", Err: ErrNotRegular}
}

// sniff names formats that are not CSV text, from the first bytes:
// compressed files, archives (a workbook among them), Parquet files,
// UTF-16 text (with a byte order mark, or with every other byte NUL),
// other binary data, and text whose lines end in a carriage return alone.
// It returns "" for anything else.
func sniff(b []byte) string {
	head := b[:min(len(b), 4096)]
	compressed := func(how, tool string) string {
		return "is " + how + "-compressed; " + formats + ": decompress it first (" + tool + ")"
	}
	switch {
	case bytes.HasPrefix(head, []byte{0x1f, 0x8b}):
		return compressed("gzip", "gunzip")
	case bytes.HasPrefix(head, []byte("PK\x03\x04")):
		if zipWorkbook(b) {
			return "is an .xlsx workbook under a name that does not end in .xlsx: give it a name ending in .xlsx"
		}
		return "is a ZIP archive, not CSV text; " + formats + ": extract the data file from it first"
	case bytes.HasPrefix(head, []byte("PAR1")):
		return "is a Parquet file under a name that does not end in .parquet: give it a name ending in .parquet"
	case bytes.HasPrefix(head, []byte("BZh")) && len(head) > 3 && head[3] >= '1' && head[3] <= '9':
		return compressed("bzip2", "bunzip2")
	case bytes.HasPrefix(head, []byte{0xfd, '7', 'z', 'X', 'Z', 0}):
		return compressed("xz", "unxz")
	case bytes.HasPrefix(head, []byte{0x28, 0xb5, 0x2f, 0xfd}):
		return compressed("zstd", "unzstd")
	case bytes.HasPrefix(head, []byte{0xff, 0xfe}) || bytes.HasPrefix(head, []byte{0xfe, 0xff}):
		return "is UTF-16 text (it starts with a UTF-16 byte order mark): save it as UTF-8"
	}
	if n := bytes.Count(head, []byte{0}); n > 0 {
		even, odd := 0, 0
		for i, c := range head {
			if c == 0 {
				if i%2 == 0 {
					even++
				} else {
					odd++
				}
			}
		}
		if len(head) >= 4 && (even >= len(head)/2-1 && odd == 0 || odd >= len(head)/2-1 && even == 0) {
			return "is UTF-16 text (every other byte is NUL): save it as UTF-8"
		}
		return "contains NUL bytes: it is a binary file, not CSV text; " + formats
	}
	if bytes.IndexByte(head, '\r') >= 0 && bytes.IndexByte(head, '\n') < 0 {
		return "ends its lines with a carriage return alone (CR, an old Mac format): convert the line ends to LF or CRLF"
	}
	return ""
}
