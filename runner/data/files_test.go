package data

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
	"unicode/utf16"
)

func utf16le(s string, bom bool) []byte {
	var b []byte
	if bom {
		b = append(b, 0xff, 0xfe)
	}
	for _, u := range utf16.Encode([]rune(s)) {
		b = append(b, byte(u), byte(u>>8))
	}
	return b
}

// Files that are not CSV text are named as what they are; a named pipe and
// a device are refused without being opened (no hang, no endless read).
func TestNotCSVNamed(t *testing.T) {
	dir := t.TempDir()
	csv := "y,a\n1,0.5\n2,0.7\n1,0.1\n"
	var gz bytes.Buffer
	w := gzip.NewWriter(&gz)
	w.Write([]byte(csv))
	w.Close()
	be := []byte{0xfe, 0xff}
	for _, u := range utf16.Encode([]rune(csv)) {
		be = append(be, byte(u>>8), byte(u))
	}
	files := map[string][]byte{
		"gz.csv":      gz.Bytes(),
		"u16bom.csv":  utf16le(csv, true),
		"u16be.csv":   be,
		"u16nul.csv":  utf16le(csv, false),
		"cr.csv":      []byte(strings.ReplaceAll(csv, "\n", "\r")),
		"zip.csv":     append([]byte("PK\x03\x04"), make([]byte, 40)...),
		"book.csv":    append(append([]byte("PK\x03\x04"), make([]byte, 26)...), "xl/worksheets/sheet1.xml"...),
		"pq.csv":      []byte("PAR1\x15\x00"),
		"binary.csv":  []byte("y,a\n1,\x00\x01\x02\n"),
		"crlf.csv":    []byte(strings.ReplaceAll(csv, "\n", "\r\n")),
		"plain.csv":   []byte(csv),
		"bomutf8.csv": append([]byte{0xef, 0xbb, 0xbf}, csv...),
	}
	for n, b := range files {
		os.WriteFile(filepath.Join(dir, n), b, 0o644)
	}
	fifo := filepath.Join(dir, "fifo.csv")
	if err := mkfifo(fifo); err != nil {
		t.Fatal(err)
	}
	cases := map[string]string{
		"gz.csv":      "is gzip-compressed; ordplan reads plain CSV or TSV text, .xlsx workbooks and Parquet files: decompress it first (gunzip)",
		"book.csv":    "is an .xlsx workbook under a name that does not end in .xlsx: give it a name ending in .xlsx",
		"pq.csv":      "is a Parquet file under a name that does not end in .parquet: give it a name ending in .parquet",
		"u16bom.csv":  "is UTF-16 text (it starts with a UTF-16 byte order mark): save it as UTF-8",
		"u16be.csv":   "is UTF-16 text (it starts",
		"u16nul.csv":  "is UTF-16 text (every other byte is NUL)",
		"cr.csv":      "carriage return alone",
		"zip.csv":     "is a ZIP archive, not CSV text; ordplan reads plain CSV or TSV text, .xlsx workbooks and Parquet files: extract the data file from it first",
		"binary.csv":  "contains NUL bytes",
		"fifo.csv":    "is a named pipe (FIFO), not a regular file",
		"crlf.csv":    "",
		"plain.csv":   "",
		"bomutf8.csv": "",
	}
	paths := map[string]string{}
	for n := range cases {
		paths[n] = filepath.Join(dir, n)
	}
	paths["/dev/zero"] = "/dev/zero"
	cases["/dev/zero"] = "is a device (such as /dev/zero or a terminal), not a regular file"
	for n, want := range cases {
		p := paths[n]
		for what, read := range map[string]func() error{
			"Load":     func() error { _, err := Load(p, Options{Outcome: "y", Predictors: []string{"a"}}); return err },
			"Header":   func() error { _, err := Header(p); return err },
			"LoadRows": func() error { _, err := LoadRows(p, []string{"a"}, "", nil); return err },
		} {
			done := make(chan error, 1)
			go func() { done <- read() }()
			var err error
			select {
			case err = <-done:
			case <-time.After(5 * time.Second):
				t.Fatalf("%s %s: hangs", what, n)
			}
			switch {
			case want == "" && err != nil:
				t.Errorf("%s %s: %v", what, n, err)
			case want != "" && (err == nil || !strings.Contains(err.Error(), want) || !strings.HasPrefix(err.Error(), p+": ")):
				t.Errorf("%s %s: %v, want %q", what, n, err, want)
			case want != "" && !errors.Is(err, ErrFileFormat) && !errors.Is(err, ErrNotRegular):
				// The plan's check names the key of such a file
				// (plan.unreadableFile).
				t.Errorf("%s %s: %v is not marked ErrFileFormat", what, n, err)
			}
		}
	}
}

// A pinned file is read once: replaced afterwards, every reader still sees
// the pinned bytes, and the hash is theirs.
func TestPinnedBytes(t *testing.T) {
	p := filepath.Join(t.TempDir(), "d.csv")
	first := "y,a\n1,0.5\n2,0.7\n1,0.1\n"
	os.WriteFile(p, []byte(first), 0o644)
	hash, unpin, err := Pin(p)
	if err != nil {
		t.Fatal(err)
	}
	if hash != HashBytes([]byte(first)) {
		t.Fatal("hash")
	}
	os.WriteFile(p, []byte("y,a\n1,5\n2,7\n2,1\n2,3\n"), 0o644)
	ds, err := Load(p, Options{Outcome: "y", Predictors: []string{"a"}})
	if err != nil || ds.N != 3 || ds.X[0] != 0.5 {
		t.Fatalf("after the file was replaced: %v %+v", err, ds)
	}
	_, unpin2, _ := Pin(p) // nested
	unpin()
	if ds, _ := Load(p, Options{Outcome: "y", Predictors: []string{"a"}}); ds.N != 3 {
		t.Fatal("a nested pin was dropped by the outer unpin")
	}
	unpin2()
	if ds, _ := Load(p, Options{Outcome: "y", Predictors: []string{"a"}}); ds.N != 4 {
		t.Fatal("unpinned, the file is not read again")
	}
}

// A large file is read in pieces on the workers: the bytes are the file's,
// whatever the size (a piece boundary, one byte more or less).
func TestFileBytesInPieces(t *testing.T) {
	dir := t.TempDir()
	for _, size := range []int{2 * readBlock, 2*readBlock + 1, 3*readBlock - 1, 2*readBlock + 12345} {
		want := make([]byte, size)
		for i := range want {
			want[i] = byte(i*7 + i/4093)
		}
		path := filepath.Join(dir, "big.csv")
		if err := os.WriteFile(path, want, 0o644); err != nil {
			t.Fatal(err)
		}
		got, err := fileBytes(path)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Fatalf("size %d: the bytes read differ from the file's", size)
		}
	}
}

// The UTF-8 check by pieces finds the first bad byte the check of the
// whole finds (unicode/utf8 is the reference), wherever runes, whole or
// broken, fall against the pieces' edges.
func TestInvalidUTF8Blocks(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	parts := []string{"a", "\n", "é", "€", "😀", "\xe2\x82", "\x82", "\xff", "\xf0\x9f\x98", "\xed\xa0\x80"}
	for trial := 0; trial < 3000; trial++ {
		var b []byte
		for len(b) < 1+rng.IntN(60) {
			if rng.IntN(3) == 0 {
				b = append(b, parts[rng.IntN(len(parts))]...)
			} else {
				b = append(b, parts[rng.IntN(5)]...)
			}
		}
		want := invalidUTF8(b, true)
		for _, block := range []int{1, 2, 3, 5, 7, 64} {
			if got := invalidUTF8Blocks(b, block); got != want {
				t.Fatalf("%q in pieces of %d: first bad byte %d, whole %d", b, block, got, want)
			}
		}
	}
}

// Pin's hash, taken while a large file is read in pieces, is the SHA-256
// of the file (crypto/sha256 over the bytes as written), and a bad byte
// past the first pieces is named at its line as the check of the whole
// names it.
func TestPinLargeFile(t *testing.T) {
	dir := t.TempDir()
	var b bytes.Buffer
	b.WriteString("y,a\n")
	for b.Len() < 3*readBlock+12345 {
		b.WriteString("1,0.5\n2,-1.25e3\n")
	}
	good := b.Bytes()
	path := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(path, good, 0o644); err != nil {
		t.Fatal(err)
	}
	sum, unpin, err := Pin(path)
	if err != nil {
		t.Fatal(err)
	}
	unpin()
	if want := sha256.Sum256(good); sum != hex.EncodeToString(want[:]) {
		t.Fatalf("Pin's hash %s, sha256 of the file %x", sum, want)
	}
	bad := bytes.Clone(good)
	at := 2*readBlock + 3 // a Latin-1 byte in the third piece
	bad[at] = 0xe9
	if err := os.WriteFile(path, bad, 0o644); err != nil {
		t.Fatal(err)
	}
	line := 1 + bytes.Count(bad[:at], []byte{'\n'})
	want := fmt.Sprintf("%s: is not UTF-8 text (byte 0xe9 on line %d is not valid UTF-8; perhaps Latin-1 or Windows-1252): save the file as UTF-8", path, line)
	if _, _, err := Pin(path); err == nil || err.Error() != want {
		t.Fatalf("got %v, want %s", err, want)
	}
	if _, err := ReadFile(path); err == nil || err.Error() != want {
		t.Fatalf("ReadFile: got %v, want %s", err, want)
	}
}

// HeaderWithRows: a header that no data row follows, blank lines aside, is
// ErrNoRows; one data row, or a first row the reader of rows will refuse
// at its line, is not.
func TestHeaderWithRows(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		text string
		none bool
	}{{"a,b\n", true}, {"a,b\n,\n\n", true}, {"a,b\n1,2\n", false}, {"a,b\n\"1,2\n", false}} {
		path := filepath.Join(dir, "f.csv")
		if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		names, err := HeaderWithRows(path, Dialect{})
		if got := errors.Is(err, ErrNoRows); got != c.none || (!c.none && (err != nil || len(names) != 2)) {
			t.Errorf("%q: names %q, error %v", c.text, names, err)
		}
	}
}
