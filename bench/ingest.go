package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"

	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// ingestTarget is the reading speed the CSV reader aims at on this machine,
// in MB/s (10^6 bytes per second).
const ingestTarget = 250

// ingestFile is one data file the ingest benchmark reads.
type ingestFile struct {
	what    string
	path    string
	dialect data.Dialect
}

// ingestResult is what one reading of a file in a fresh process measured.
type ingestResult struct {
	Seconds  float64 `json:"seconds"`
	CPU      float64 `json:"cpu"` // user and system seconds of the reading
	Rows     int     `json:"rows"`
	HeapPeak uint64  `json:"heap_peak"` // largest heap in use while reading
	RSSPeak  uint64  `json:"rss_peak"`  // the process's peak resident set (VmHWM), bytes
}

// writeIngestFiles writes the generator's rows (K predictors, two
// categories) as CSV in three ways (comma and point with six significant
// digits; semicolon and decimal comma; comma with every digit a float64
// needs to round-trip) and as Parquet, into dir.
func writeIngestFiles(dir string, n, K int) ([]ingestFile, error) {
	d := generate(n, K, 2, 11)
	names := []string{"y"}
	for k := 1; k <= K; k++ {
		names = append(names, fmt.Sprintf("x%02d", k))
	}
	type variant struct {
		what   string
		file   string
		delim  byte
		digits int
		comma  bool
	}
	variants := []variant{
		{"CSV, comma, 6 significant digits", "six.csv", ',', 6, false},
		{"CSV, semicolon, decimal comma, 6 digits", "semicolon.csv", ';', 6, true},
		{"CSV, comma, round-trip digits (up to 17)", "full.csv", ',', -1, false},
	}
	var out []ingestFile
	for _, v := range variants {
		path := filepath.Join(dir, v.file)
		f, err := os.Create(path)
		if err != nil {
			return nil, err
		}
		w := bufio.NewWriterSize(f, 1<<20)
		w.WriteString(strings.Join(names, string(v.delim)) + "\n")
		var buf []byte
		for i := 0; i < n; i++ {
			buf = strconv.AppendInt(buf[:0], int64(d.Y[i]), 10)
			for k := 0; k < K; k++ {
				buf = append(buf, v.delim)
				x := d.X[i*K+k]
				if k%2 == 0 {
					buf = strconv.AppendInt(buf, int64(x), 10)
					continue
				}
				start := len(buf)
				buf = strconv.AppendFloat(buf, x, 'g', v.digits, 64)
				if v.comma {
					for j := start; j < len(buf); j++ {
						if buf[j] == '.' {
							buf[j] = ','
						}
					}
				}
			}
			buf = append(buf, '\n')
			w.Write(buf)
		}
		if err := w.Flush(); err != nil {
			return nil, err
		}
		if err := f.Close(); err != nil {
			return nil, err
		}
		dl := data.Dialect{}
		if v.delim == ';' {
			dl = data.Dialect{Delimiter: ';', DecimalComma: true}
		}
		out = append(out, ingestFile{v.what, path, dl})
	}
	path := filepath.Join(dir, "rows.parquet")
	if err := writeParquet(path, d, names); err != nil {
		return nil, err
	}
	out = append(out, ingestFile{"Parquet, int64 outcome, double predictors", path, data.Dialect{}})
	return out, nil
}

// writeParquet writes the rows as a flat Parquet file: the outcome as
// int64, the predictors as doubles.
func writeParquet(path string, d *fit.Data, names []string) error {
	group := parquet.Group{names[0]: parquet.Leaf(parquet.Int64Type)}
	for _, n := range names[1:] {
		group[n] = parquet.Leaf(parquet.DoubleType)
	}
	schema := parquet.NewSchema("rows", group)
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer f.Close()
	w := parquet.NewWriter(f, schema)
	K := len(names) - 1
	col := map[string]int{}
	for j, n := range names {
		col[n] = j
	}
	rows := make([]parquet.Row, 0, 4096)
	for i := 0; i < len(d.Y); i++ {
		row := make(parquet.Row, 0, K+1)
		for ci, p := range schema.Columns() {
			j := col[p[0]]
			if j == 0 {
				row = append(row, parquet.Int64Value(int64(d.Y[i])).Level(0, 0, ci))
			} else {
				row = append(row, parquet.DoubleValue(d.X[i*K+j-1]).Level(0, 0, ci))
			}
		}
		rows = append(rows, row)
		if len(rows) == cap(rows) || i == len(d.Y)-1 {
			if _, err := w.WriteRows(rows); err != nil {
				return err
			}
			rows = rows[:0]
		}
	}
	return w.Close()
}

// ingestChild reads one file once, in this (fresh) process, and prints
// what it measured as JSON: called by ingest through the -ingest-child flag.
func ingestChild(path, mode string, delim string, decimalComma bool, K int) {
	opt := data.Options{Outcome: "y"}
	for k := 1; k <= K; k++ {
		opt.Predictors = append(opt.Predictors, fmt.Sprintf("x%02d", k))
	}
	if delim != "" {
		opt.Dialect.Delimiter = rune(delim[0])
	}
	opt.Dialect.DecimalComma = decimalComma
	var ds *data.Dataset
	var err error
	var secs float64
	cpu0 := cpuSeconds()
	pk := peak(func() {
		t0 := time.Now()
		switch mode {
		case "stream":
			var f *os.File
			if f, err = os.Open(path); err == nil {
				ds, err = data.ReadStream(f, path, opt)
				f.Close()
			}
		case "pin":
			// As a plan run reads its data: the bytes read once and
			// checked (UTF-8), then parsed while they are hashed for
			// run.json; done when both are.
			var unpin func()
			var hash func() string
			if hash, unpin, err = data.PinEarly(path); err == nil {
				ds, err = data.Load(path, opt)
				hash()
				unpin()
			}
		default:
			ds, err = data.Load(path, opt)
		}
		secs = time.Since(t0).Seconds()
	})
	if err != nil {
		fmt.Fprintln(os.Stderr, "bench:", err)
		os.Exit(1)
	}
	json.NewEncoder(os.Stdout).Encode(ingestResult{Seconds: secs, CPU: cpuSeconds() - cpu0, Rows: ds.N, HeapPeak: pk, RSSPeak: vmHWM()})
}

// cpuSeconds is the user and system time of the process so far.
func cpuSeconds() float64 { return fit.CPUTime().Seconds() }

// vmHWM is the process's peak resident set size in bytes (0 when unknown).
func vmHWM() uint64 { return procStatus("VmHWM:") }

// vmRSS is this process's resident set now, bytes (Linux; 0 elsewhere).
func vmRSS() uint64 { return procStatus("VmRSS:") }

// procStatus reads one kB field of /proc/self/status, in bytes.
func procStatus(field string) uint64 {
	raw, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, ln := range strings.Split(string(raw), "\n") {
		if rest, ok := strings.CutPrefix(ln, field); ok {
			kb, _ := strconv.ParseUint(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(rest), "kB")), 10, 64)
			return kb << 10
		}
	}
	return 0
}

// ingest writes the files, then reads each of them `repeats` times in fresh
// processes, the record-at-a-time reader (ReadStream), the chunked
// parallel reader (Load, as `ordplan fit` reads) and the reading of a plan
// run (Pin: the bytes read, UTF-8 checked and hashed for run.json, then
// Load) taking turns, and reports the best and the median.
func ingest(w io.Writer, n, repeats int) {
	const K = 10
	dir, err := os.MkdirTemp("", "ordplan-ingest-")
	if err != nil {
		fmt.Fprintln(w, "ingest: ", err)
		return
	}
	defer os.RemoveAll(dir)
	files, err := writeIngestFiles(dir, n, K)
	if err != nil {
		fmt.Fprintln(w, "ingest: ", err)
		return
	}
	self, err := os.Executable()
	if err != nil {
		fmt.Fprintln(w, "ingest: ", err)
		return
	}
	xBytes := float64(n * K * 8)
	fmt.Fprintf(w, "\n## Reading data\n\nn = %d rows, K = %d predictors (half 0/1), two categories; each reading in a fresh process (file in the page cache), %d times, the readers taking turns (\"as a plan run\": the file's bytes read once and checked (a CSV file for UTF-8), then parsed while they are hashed (SHA-256, for run.json) on a goroutine of their own; done when both are). MB = 10^6 bytes; target %d MB/s. \"CPU s\": user and system time of the best reading (the sampling of the heap included). \"Peak heap / X\" and \"peak RSS / X\": the largest heap in use while reading, and the process's peak resident set, over the design matrix (n K 8 bytes = %.0f MB).\n\n", n, K, repeats, ingestTarget, xBytes/1e6)
	fmt.Fprintln(w, "| file | MB | reader | best s | median s | CPU s | MB/s (best) | ratio to target | peak heap / X | peak RSS / X |\n|---|---|---|---|---|---|---|---|---|---|")
	for _, f := range files {
		fi, err := os.Stat(f.path)
		if err != nil {
			continue
		}
		mb := float64(fi.Size()) / 1e6
		modes := []string{"stream", "load", "pin"}
		if strings.HasSuffix(f.path, ".parquet") {
			modes = []string{"load", "pin"}
		}
		res := map[string][]ingestResult{}
		for r := 0; r < repeats; r++ {
			for _, m := range modes {
				args := []string{"-ingest-child", f.path, "-ingest-mode", m}
				if f.dialect.Delimiter != 0 {
					args = append(args, "-ingest-delim", string(f.dialect.Delimiter))
				}
				if f.dialect.DecimalComma {
					args = append(args, "-ingest-decimal-comma")
				}
				out, err := exec.Command(self, args...).Output()
				var ir ingestResult
				if err == nil {
					err = json.Unmarshal(out, &ir)
				}
				if err != nil {
					fmt.Fprintf(w, "| %s | %.1f | %s | error: %v | | | | | | |\n", f.what, mb, m, err)
					continue
				}
				res[m] = append(res[m], ir)
			}
		}
		for _, m := range modes {
			rs := res[m]
			if len(rs) == 0 {
				continue
			}
			secs := make([]float64, len(rs))
			var heap, rss uint64
			fastest := 0
			for i, r := range rs {
				secs[i] = r.Seconds
				heap = max(heap, r.HeapPeak)
				rss = max(rss, r.RSSPeak)
				if r.Seconds < rs[fastest].Seconds {
					fastest = i
				}
			}
			cpu := rs[fastest].CPU
			slices.Sort(secs)
			best, med := secs[0], secs[len(secs)/2]
			if len(secs)%2 == 0 {
				med = (secs[len(secs)/2-1] + secs[len(secs)/2]) / 2
			}
			name := map[string]string{"stream": "record at a time (ReadStream)", "load": "chunked, parallel (Load)",
				"pin": "as a plan run: PinEarly (read, checks) + Load, SHA-256 beside"}[m]
			fmt.Fprintf(w, "| %s | %.1f | %s | %.3f | %.3f | %.3f | %.0f | %.2f | %.2f | %.2f |\n",
				f.what, mb, name, best, med, cpu, mb/best, mb/best/ingestTarget, float64(heap)/xBytes, float64(rss)/xBytes)
		}
	}
}
