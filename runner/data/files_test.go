package data

import (
	"bytes"
	"compress/gzip"
	"os"
	"path/filepath"
	"strings"
	"syscall"
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
		"binary.csv":  []byte("y,a\n1,\x00\x01\x02\n"),
		"crlf.csv":    []byte(strings.ReplaceAll(csv, "\n", "\r\n")),
		"plain.csv":   []byte(csv),
		"bomutf8.csv": append([]byte{0xef, 0xbb, 0xbf}, csv...),
	}
	for n, b := range files {
		os.WriteFile(filepath.Join(dir, n), b, 0o644)
	}
	fifo := filepath.Join(dir, "fifo.csv")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	cases := map[string]string{
		"gz.csv":      "is gzip-compressed, not CSV text",
		"u16bom.csv":  "is UTF-16 text (it starts with a UTF-16 byte order mark): save it as UTF-8",
		"u16be.csv":   "is UTF-16 text (it starts",
		"u16nul.csv":  "is UTF-16 text (every other byte is NUL)",
		"cr.csv":      "carriage return alone",
		"zip.csv":     "is a ZIP archive",
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
