package zipparts

import (
	"archive/zip"
	"bytes"
	"io"
)

// Rewrite is the ZIP container raw with each entry's body passed through
// edit, in the container's order. When edit also gives a header, the
// body it gives is written as it is under that header (zip.Writer's
// CreateRaw: the body already compressed as the header says, its sizes
// and checksum unchecked); otherwise the body is compressed as usual.
func Rewrite(raw []byte, edit func(name string, body []byte) ([]byte, *zip.FileHeader)) ([]byte, error) {
	zr, err := zip.NewReader(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	for _, f := range zr.File {
		rc, err := f.Open()
		if err != nil {
			return nil, err
		}
		body, err := io.ReadAll(rc)
		rc.Close()
		if err != nil {
			return nil, err
		}
		body, h := edit(f.Name, body)
		var w io.Writer
		if h != nil {
			w, err = zw.CreateRaw(h)
		} else {
			w, err = zw.Create(f.Name)
		}
		if err != nil {
			return nil, err
		}
		if _, err := w.Write(body); err != nil {
			return nil, err
		}
	}
	if err := zw.Close(); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}
