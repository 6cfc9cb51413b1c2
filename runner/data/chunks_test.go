package data

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"math/big"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// withChunks runs f with chunks cut at size bytes and the given number of
// parsing goroutines.
func withChunks(size, workers int, f func()) {
	oldSize, oldWorkers := chunkBytes, chunkWorkers
	chunkBytes, chunkWorkers = size, workers
	defer func() { chunkBytes, chunkWorkers = oldSize, oldWorkers }()
	f()
}

// sameRead compares two readings of the same bytes: the same error text,
// or data sets equal in every field with bit-identical numbers.
func sameRead(d1 *Dataset, e1 error, d2 *Dataset, e2 error) string {
	if (e1 == nil) != (e2 == nil) || e1 != nil && e1.Error() != e2.Error() {
		return fmt.Sprintf("errors differ:\n  %v\n  %v", e1, e2)
	}
	if e1 != nil {
		return ""
	}
	for _, p := range [][2][]float64{{d1.X, d2.X}, {d1.Weights, d2.Weights}, {d1.Offset, d2.Offset}, {d1.Counts, d2.Counts}} {
		if len(p[0]) != len(p[1]) {
			return fmt.Sprintf("lengths differ: %d, %d", len(p[0]), len(p[1]))
		}
		for i := range p[0] {
			if math.Float64bits(p[0][i]) != math.Float64bits(p[1][i]) {
				return fmt.Sprintf("value %d differs: %v, %v", i, p[0][i], p[1][i])
			}
		}
	}
	c1, c2 := *d1, *d2 // the numbers are compared: NaN (a missing predictor kept) is not equal to itself
	c1.X, c2.X, c1.Weights, c2.Weights, c1.Offset, c2.Offset = nil, nil, nil, nil, nil, nil
	if !reflect.DeepEqual(c1, c2) {
		return fmt.Sprintf("data sets differ:\n  %+v\n  %+v", d1, d2)
	}
	return ""
}

// checkChunked reads in with the record-by-record reader and with chunks
// of several sizes on one and on three goroutines, and reports any
// difference.
func checkChunked(t *testing.T, in []byte, opt Options) {
	t.Helper()
	want, wantErr := ReadStream(bytes.NewReader(in), "t.csv", opt)
	for _, size := range []int{1, 7, 64, 1 << 20} {
		for _, workers := range []int{1, 3} {
			withChunks(size, workers, func() {
				got, err := Read(bytes.NewReader(in), "t.csv", opt)
				if msg := sameRead(want, wantErr, got, err); msg != "" {
					t.Fatalf("chunks of %d bytes, %d workers: %s\ninput:\n%s", size, workers, msg, in)
				}
			})
		}
	}
}

// randomCell writes a cell of a numeric column in many forms: plain and
// long decimals, exponents, signs, zeros, spaces around, missing markers,
// and now and then something that is not a number.
func randomCell(rng *rand.Rand, comma bool, bad float64) string {
	var s string
	switch rng.IntN(12) {
	case 0:
		s = strconv.Itoa(rng.IntN(3))
	case 1:
		s = strconv.FormatFloat(rng.NormFloat64(), 'g', 6, 64)
	case 2:
		s = strconv.FormatFloat(rng.NormFloat64()*1e3, 'g', -1, 64)
	case 3:
		s = strconv.FormatFloat(rng.ExpFloat64()*math.Pow(10, float64(rng.IntN(60)-30)), 'e', rng.IntN(20), 64)
	case 4:
		s = []string{"-0", "+0.0", ".5", "5.", "-.25e1", "1E+2", "007", "0.000", "123456789012345678901234", "9007199254740993", "1e-320", "4.9e-324"}[rng.IntN(12)]
	case 5:
		return []string{"", "NA", "NaN", ".", " NA "}[rng.IntN(5)]
	case 6:
		s = " " + strconv.FormatFloat(rng.Float64(), 'f', rng.IntN(8), 64) + "  "
	case 7:
		s = "-9"
	default:
		s = strconv.FormatFloat(rng.NormFloat64(), 'f', 4, 64)
	}
	if rng.Float64() < bad {
		s = []string{"abc", "1_000", "Inf", "1e999", "nan", "1,5", "1.5.5", "0x1p3", "--1", "1e", "\u00a01.5", "2,5,5"}[rng.IntN(12)]
	}
	if comma {
		s = strings.Replace(s, ".", ",", 1)
	}
	return s
}

// randomFile writes a CSV file of seeded random rows: columns y (codes 1
// to 3, or labels), a and b (numbers), c (levels), w (weights), o
// (offsets), g (cluster), z (text, unused); with quoted fields, empty lines,
// CRLF line ends, ragged rows and bad cells at the given rates.
func randomFile(rng *rand.Rand, rows int, delim byte, comma, labels bool, bad float64) []byte {
	var b bytes.Buffer
	d := string(delim)
	b.WriteString(strings.Join([]string{"y", "a", "b", "c", "w", "o", "g", "z"}, d) + "\n")
	for i := 0; i < rows; i++ {
		y := strconv.Itoa(1 + rng.IntN(3))
		if labels {
			y = []string{"low", "mid", "high"}[rng.IntN(3)]
		}
		if rng.Float64() < bad {
			y = []string{"", "7.5", "huge", "NA"}[rng.IntN(4)]
		}
		cells := []string{y, randomCell(rng, comma, bad), randomCell(rng, comma, bad),
			[]string{"p", "q", "r", "NA", " p "}[rng.IntN(5)],
			[]string{"1", "2", "0", "0.5", "-1", "3"}[rng.IntN(6)],
			randomCell(rng, comma, bad/4),
			[]string{"g1", "g2", "g3", ""}[rng.IntN(4)],
			[]string{"x", "some text", `"quoted` + d + ` text"`, `"say ""hi"""`, ""}[rng.IntN(5)]}
		if rng.Float64() < 0.05 {
			cells[1] = `"` + cells[1] + `"`
		}
		if rng.Float64() < bad/3 {
			cells = cells[:rng.IntN(len(cells))]
		}
		b.WriteString(strings.Join(cells, d))
		switch r := rng.Float64(); {
		case r < 0.1:
			b.WriteString("\r\n")
		case r < 0.13:
			b.WriteString("\n\n")
		case r < 0.14:
			b.WriteString("\n\r\n")
		default:
			b.WriteString("\n")
		}
	}
	if rng.IntN(2) == 0 {
		b.Truncate(b.Len() - 1)
	}
	return b.Bytes()
}

// The chunked reader gives what the record-by-record reader gives (data,
// counts, missing-value tables, the message of the first bad cell) on
// seeded random files, whatever the chunk size and the number of workers:
// comma and point, semicolon and decimal comma, tab; codes and labels;
// categorical levels, weights, offsets, clusters, subset conditions,
// column missing codes, refused missing values.
func TestChunkedReadsLikeRecords(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 1))
	levels := map[string][]string{"c": {"p", "q", "r"}}
	for trial := 0; trial < 150; trial++ {
		delim, comma := byte(','), false
		switch trial % 3 {
		case 1:
			delim, comma = ';', true
		case 2:
			delim = '\t'
		}
		labels := trial%4 == 3
		bad := []float64{0, 0, 0.002, 0.02}[trial%4]
		in := randomFile(rng, 1+rng.IntN(60), delim, comma, labels, bad)
		opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: Dialect{Delimiter: rune(delim), DecimalComma: comma}}
		if labels {
			opt.Categories = []string{"low", "mid", "high"}
		}
		switch trial % 5 {
		case 1:
			opt.Predictors = append(opt.Predictors, "c")
			opt.PredictorLevels = levels
			opt.Weights = "w"
		case 2:
			opt.Offset, opt.Cluster = "o", "g"
			opt.ColumnMissing = map[string][]string{"a": {"-9"}, "o": {"0"}}
		case 3:
			// a value no row has: a note ("zz"), or refused as another
			// spelling of a value the rows have ("Q")
			vals := [][]string{{"p", "q"}, {"p", "q", "zz"}, {"p", "Q"}}[trial%3]
			opt.Keep = []Condition{{Column: "o", Op: ">", Number: -1}, {Column: "c", Op: "in", Values: vals, Key: "subset[1]"}}
		case 4:
			opt.Refuse = trial%2 == 0
			opt.KeepIncomplete = trial%3 == 0
			opt.MissingTokens = []string{"", "-9"}
		}
		t.Run(fmt.Sprint(trial), func(t *testing.T) { checkChunked(t, in, opt) })
	}
}

// Hand-made cases around the edges of lines and chunks.
func TestChunkedEdges(t *testing.T) {
	opt := Options{Outcome: "y", Predictors: []string{"a", "b"}}
	for _, in := range []string{
		"y,a,b\n1,2,3\n2,3,4",                 // no final line end
		"y,a,b\r\n1,2,3\r\n2,3,4\r",           // CR before the end of the file
		"y,a,b\n\n\n1,2,3\n\r\n2,3,4\n\n",     // empty lines
		"\uFEFFy,a,b\n1,2,3\n2,3,4\n",         // byte order mark
		"\"y\",\"a\",\"b\"\n1,2,3\n2,3,4\n",   // quoted header
		"\"y\",\"a\n\",\"b\"\n1,2,3\n2,3,4\n", // header spanning lines
		"y,a,b\n1,\"2\n\",3\n2,3,4\n",         // quoted field spanning lines: record by record
		"y,a,b\n1,\"2\",3\n2,\"3\"\"\",4\n",   // quoted fields within lines
		"y,a,b\n1,\"2\"x,3\n2,3,4\n",          // bad quote
		"y,a,b\n1,2,3\n2,3\n2,3,4,5\n",        // ragged rows: the first is reported
		"y,a,b\n1,2,3\n2,x,4\n1,y,3\n",        // two bad cells: the first is reported
		"y,a,b\n1,2,3\r\r\n2,3,4\n",           // a CR inside the line end
		"y,a,b\n1, 2 ,\t3\n2,3,4\n",           // spaces around cells
		"y,a,b\n1,\u00a02,3\n2,3,4\u2003\n",   // white space beyond ASCII
		"y,a,b\n",                             // no rows
		"y,a,b\n\n\n",                         // only empty lines
		"y,a,b\n1,NA,3\n1,2,3\n",              // all kept rows one category
		"y,a,b\n1,2,3\n2,1e400,4\n",           // overflow
		"y,a,b\n1,-0,0\n2,0e999,1e-400\n",     // signed zero, underflow
	} {
		checkChunked(t, []byte(in), opt)
	}
	tab := Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: Dialect{Delimiter: '\t'}}
	for _, in := range []string{
		"y\ta\tb\n1\t2\t3\n2\t3\t4\n",
		"y\ta\tb\n1\t\t3\n2\t3\t4\n", // an empty cell, which the CSV reader's trimming merges away
		"y\ta\tb\n1\t 2\t3\n2\t3\t4\n",
		"y\ta\tb\n1\t2\t\n2\t3\t4\n",
		"y\ta\tb\n 1\t2\t3\n2\t3\t4\n",
	} {
		checkChunked(t, []byte(in), tab)
	}
	// A comma between fields and a decimal comma: an unquoted 2,5 is two
	// cells, so the row has a field too many (it was read as 2.5, silently);
	// quoted, it is the number 2.5.
	commas := Options{Outcome: "y", Predictors: []string{"a"}, Dialect: Dialect{DecimalComma: true}}
	for _, in := range []string{"y,a\n1,\"2,5\"\n2,3\n", "y,a\n1,2,5\n2,3\n"} {
		checkChunked(t, []byte(in), commas)
	}
	d, err := Read(strings.NewReader("y,a\n1,\"2,5\"\n2,3\n"), "t.csv", commas)
	if err != nil || d.X[0] != 2.5 {
		t.Fatalf("quoted 2,5 with a decimal comma: %v, %v", d, err)
	}
	_, err = Read(strings.NewReader("y,a\n1,2,5\n2,3\n"), "t.csv", commas)
	if want := "t.csv:2: row has 3 fields but the header has 2"; err == nil || err.Error() != want {
		t.Fatalf("unquoted 2,5 with a decimal comma: got %v, want %s", err, want)
	}
}

// decimal gives bit for bit strconv.ParseFloat's value, and accepts only
// what ParseFloat accepts (with the dialect's checks) as a finite number.
func TestDecimalMatchesParseFloat(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 3))
	check := func(s string) {
		t.Helper()
		got, ok := decimal(s, '.')
		want, msg := Dialect{}.number(s)
		if ok && msg != "" {
			t.Fatalf("decimal(%q) = %v, but the general path says %s", s, got, msg)
		}
		if ok && math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("decimal(%q) = %v (%x), ParseFloat %v (%x)", s, got, math.Float64bits(got), want, math.Float64bits(want))
		}
		if strings.Contains(s, ",") {
			return
		}
		cs := strings.Replace(s, ".", ",", 1)
		gotc, okc := decimal(cs, ',')
		if okc != ok || okc && math.Float64bits(gotc) != math.Float64bits(got) {
			t.Fatalf("decimal(%q, ',') = %v %v, decimal(%q) = %v %v", cs, gotc, okc, s, got, ok)
		}
	}
	for _, s := range []string{"0", "-0", "+0", "1", "-1", ".5", "5.", "1e5", "1E-5", "1e+22", "1e23", "1e-22", "1e-23",
		"9007199254740992", "9007199254740993", "9007199254740992e3", "123456789012345678", "1234567890123456789",
		"12345678901234567890", "0.1", "0.2", "0.3", "2.2250738585072014e-308", "4.9e-324", "1e-400", "1.7976931348623157e308",
		"1e309", "0e999", "-0e-999", "00000000000000000000001.5", "1.000000000000000000000001", ".", "e5", "1e", "1e+", "+", "-",
		"1..2", "1.2.3", "--1", "1_0", "inf", "NaN", "0x10", "1,5", " 1", "1 ", "١",
		"1." + strings.Repeat("0", 70) + "1", "-0.000000000000000000000000000000000000000000000000000000000000123456", "12345678901234567890.5e-3"} {
		check(s)
	}
	for i := 0; i < 300000; i++ {
		var s string
		switch i % 6 {
		case 4: // 15 to 19 digits and a power beyond 22: the Eisel-Lemire path
			b := make([]byte, 15+rng.IntN(5))
			for j := range b {
				b[j] = byte('0' + rng.IntN(10))
			}
			s = string(b[:1]) + "." + string(b[1:]) + "e" + strconv.Itoa(rng.IntN(240)-120)
		case 5: // a float64 halfway between two neighbours, and its neighbours' round-trip digits
			x := math.Float64frombits(rng.Uint64() >> 2)
			s = new(big.Float).SetPrec(200).Quo(new(big.Float).Add(new(big.Float).SetFloat64(x), new(big.Float).SetFloat64(math.Nextafter(x, 2*x+1))), big.NewFloat(2)).Text('g', 19)
			if rng.IntN(2) == 0 {
				s = strconv.FormatFloat(math.Nextafter(x, 0), 'g', -1, 64)
			}
		case 0:
			s = strconv.FormatFloat(rng.NormFloat64()*math.Pow(10, float64(rng.IntN(40)-20)), 'g', 1+rng.IntN(17), 64)
		case 1:
			s = strconv.FormatFloat(math.Float64frombits(rng.Uint64()), 'g', -1, 64)
		case 2:
			s = strconv.FormatFloat(rng.Float64()*1e6, 'f', rng.IntN(12), 64)
		default:
			b := make([]byte, 1+rng.IntN(12))
			for j := range b {
				b[j] = "0123456789.e-+"[rng.IntN(14)]
			}
			s = string(b)
		}
		check(s)
	}
}

// Outcome codes get their indices among the sorted distinct codes, few or
// many; a missing outcome kept for imputation (-1) stays so.
func TestCodeCategories(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	for _, distinct := range []int{1, 5, 255, 256, 257, 1000, -5, -1000} {
		step := 7
		if distinct < 0 { // codes too far apart for the table: sorted instead
			distinct, step = -distinct, 123456789
		}
		codes := make([]int64, 3000)
		y := make([]int, len(codes))
		var seen []int64
		for i := range codes {
			codes[i] = int64(rng.IntN(distinct)*step - 50)
			if rng.IntN(10) == 0 {
				y[i] = -1
			} else {
				seen = append(seen, codes[i])
			}
		}
		slices.Sort(seen)
		seen = slices.Compact(seen)
		labels := codeCategories(codes, y)
		if len(labels) != len(seen) {
			t.Fatalf("%d codes: %d labels, want %d", distinct, len(labels), len(seen))
		}
		for i := range codes {
			if y[i] >= 0 && (seen[y[i]] != codes[i] || labels[y[i]] != strconv.FormatInt(codes[i], 10)) {
				t.Fatalf("%d codes: row %d code %d got index %d", distinct, i, codes[i], y[i])
			}
		}
	}
}

// integer accepts what strconv.ParseInt accepts, with the same value, up
// to 18 digits.
func TestIntegerMatchesParseInt(t *testing.T) {
	for _, s := range []string{"0", "-0", "+7", "007", "123456789012345678", "1234567890123456789", "", "+", "1.0", "1e3", " 1", "x"} {
		got, ok := integer(s)
		want, err := strconv.ParseInt(s, 10, 64)
		if ok && (err != nil || got != want) {
			t.Errorf("integer(%q) = %d, ParseInt %d %v", s, got, want, err)
		}
		if !ok && err == nil && len(strings.TrimLeft(s, "+-")) <= 18 {
			t.Errorf("integer(%q) refused, ParseInt %d", s, want)
		}
	}
}

// FuzzChunked: on any input, the chunked reader gives what the record by
// record reader gives, with small chunks on several goroutines.
func FuzzChunked(f *testing.F) {
	for _, s := range []string{
		"y,a,b\n1,2,3\n2,3,4\n",
		"y,a,b\r\n1,2.5,3\r\n3,NA,1\r\n\r\n2,1e999,0\r\n",
		"y,a,b\n1,\"2\",3\n2,\"3,5\",\"\"\"\"\n",
		"y,a,b\n1,\"2\n\",3\n",
		"y;a;b\n1;2,5;3\n2;-0,25;1e3\n",
		"y\ta\tb\n1\t2\t3\n2\t\t4\n",
		"y,a,b\n1,2\n3,4,5,6\n",
	} {
		f.Add([]byte(s), uint8(0))
	}
	f.Fuzz(func(t *testing.T, in []byte, mode uint8) {
		if len(in) > 1<<12 {
			return
		}
		opt := Options{Outcome: "y", Predictors: []string{"a", "b"}}
		switch mode % 4 {
		case 1:
			opt.Dialect = Dialect{Delimiter: ';', DecimalComma: true}
		case 2:
			opt.Dialect = Dialect{Delimiter: '\t'}
		case 3:
			opt.Weights, opt.Categories = "b", []string{"1", "2", "3"}
		}
		want, wantErr := ReadStream(bytes.NewReader(in), "t.csv", opt)
		withChunks(5, 3, func() {
			got, err := Read(bytes.NewReader(in), "t.csv", opt)
			if msg := sameRead(want, wantErr, got, err); msg != "" {
				t.Fatal(msg)
			}
		})
	})
}

// benchFile is n rows of 10 predictors (half 0/1, half numbers with six
// significant digits) and a 0/1 outcome.
func benchFile(n int) []byte {
	rng := rand.New(rand.NewPCG(1, 2))
	var b bytes.Buffer
	b.WriteString("y,x1,x2,x3,x4,x5,x6,x7,x8,x9,x10\n")
	var buf []byte
	for i := 0; i < n; i++ {
		buf = strconv.AppendInt(buf[:0], int64(rng.IntN(2)), 10)
		for k := 0; k < 10; k++ {
			buf = append(buf, ',')
			if k%2 == 0 {
				buf = strconv.AppendInt(buf, int64(rng.IntN(2)), 10)
			} else {
				buf = strconv.AppendFloat(buf, rng.NormFloat64(), 'g', 6, 64)
			}
		}
		b.Write(append(buf, '\n'))
	}
	return b.Bytes()
}

var benchOpt = Options{Outcome: "y", Predictors: []string{"x1", "x2", "x3", "x4", "x5", "x6", "x7", "x8", "x9", "x10"}}

// go test -run '^$' -bench Read ./runner/data/ (ratios, never asserted)
func BenchmarkReadChunked(b *testing.B) {
	in := benchFile(100000)
	b.SetBytes(int64(len(in)))
	for b.Loop() {
		if _, err := readBytes(in, "b.csv", benchOpt); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkReadStream(b *testing.B) {
	in := benchFile(100000)
	b.SetBytes(int64(len(in)))
	for b.Loop() {
		if _, err := ReadStream(bytes.NewReader(in), "b.csv", benchOpt); err != nil {
			b.Fatal(err)
		}
	}
}

// benchParquet is benchFile's rows as a flat Parquet file (int64 outcome,
// double predictors).
func benchParquet(b testing.TB, n int) []byte {
	d, err := readBytes(benchFile(n), "b.csv", benchOpt)
	if err != nil {
		b.Fatal(err)
	}
	group := parquet.Group{"y": parquet.Leaf(parquet.Int64Type)}
	for _, p := range benchOpt.Predictors {
		group[p] = parquet.Leaf(parquet.DoubleType)
	}
	schema := parquet.NewSchema("rows", group)
	var buf bytes.Buffer
	w := parquet.NewWriter(&buf, schema)
	pos := map[string]int{}
	for k, p := range benchOpt.Predictors {
		pos[p] = k
	}
	for i := 0; i < d.N; i++ {
		var row parquet.Row
		for ci, path := range schema.Columns() {
			if path[0] == "y" {
				row = append(row, parquet.Int64Value(int64(d.Y[i])).Level(0, 0, ci))
			} else {
				row = append(row, parquet.DoubleValue(d.X[i*d.K+pos[path[0]]]).Level(0, 0, ci))
			}
		}
		if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
			b.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	return buf.Bytes()
}

func BenchmarkReadParquet(b *testing.B) {
	in := benchParquet(b, 100000)
	b.SetBytes(int64(len(in)))
	for b.Loop() {
		if _, err := readBytes(in, "b.parquet", benchOpt); err != nil {
			b.Fatal(err)
		}
	}
}

// randomParquet writes a flat Parquet file of seeded random rows whose
// columns take many kinds: y int64 codes (or text labels), a double (with
// nulls, NaN, infinities, signed zeros), b int32, c text levels, f float,
// t boolean, s numbers as text, g cluster text.
func randomParquet(t *testing.T, rng *rand.Rand, rows int, labels, bad bool) []byte {
	pick := func(good int, all ...string) string {
		if bad && rng.IntN(rows) == 0 {
			return all[rng.IntN(len(all))]
		}
		return all[rng.IntN(good)]
	}
	opt := func(n parquet.Node) parquet.Node { return parquet.Optional(n) }
	ykind := parquet.Leaf(parquet.Int64Type)
	if labels {
		ykind = parquet.String()
	}
	schema := parquet.NewSchema("rows", parquet.Group{
		"y": opt(ykind), "a": opt(parquet.Leaf(parquet.DoubleType)), "b": opt(parquet.Leaf(parquet.Int32Type)),
		"c": opt(parquet.String()), "f": opt(parquet.Leaf(parquet.FloatType)), "t": opt(parquet.Leaf(parquet.BooleanType)),
		"s": opt(parquet.String()), "g": opt(parquet.String()),
	})
	var buf bytes.Buffer
	// Several row groups and small pages, so that units start inside row
	// groups and pages.
	w := parquet.NewWriter(&buf, schema, parquet.MaxRowsPerRowGroup(int64(20+rng.IntN(200))), parquet.PageBufferSize(256))
	for i := 0; i < rows; i++ {
		var row parquet.Row
		for ci, path := range schema.Columns() {
			var v parquet.Value
			switch path[0] {
			case "y":
				if labels {
					v = parquet.ValueOf(pick(4, "low", "mid", "high", " mid", "huge"))
				} else {
					v = parquet.Int64Value(int64(1 + rng.IntN(3)))
				}
			case "a":
				x := rng.NormFloat64() * math.Pow(10, float64(rng.IntN(10)-5))
				if rng.IntN(40) == 0 {
					x = []float64{math.Copysign(0, -1), 1e300, 5e-324, -9, math.NaN(), math.Inf(1)}[rng.IntN(4)]
				}
				if bad && rng.IntN(rows) == 0 {
					x = math.Inf(-1)
				}
				v = parquet.DoubleValue(x)
			case "b":
				v = parquet.Int32Value(int32(rng.IntN(2000) - 1000))
			case "c":
				v = parquet.ValueOf(pick(5, "p", "q", "r", "NA", " p", "z"))
			case "f":
				v = parquet.FloatValue(float32(rng.NormFloat64()))
			case "t":
				v = parquet.BooleanValue(rng.IntN(2) == 0)
			case "s":
				v = parquet.ValueOf(pick(4, "1.5", " 2 ", "-9", "NA", "x"))
			case "g":
				v = parquet.ValueOf([]string{"g1", "g2", "", "NA"}[rng.IntN(4)])
			}
			if rng.IntN(30) == 0 {
				row = append(row, parquet.NullValue().Level(0, 0, ci))
			} else {
				row = append(row, v.Level(0, 1, ci))
			}
		}
		if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// A Parquet file read from its values gives what reading the values'
// texts record by record gives: data, counts and the first error.
func TestParquetValuesReadLikeTexts(t *testing.T) {
	oldRows, oldWorkers := unitRows, chunkWorkers
	defer func() { unitRows, chunkWorkers = oldRows, oldWorkers }()
	rng := rand.New(rand.NewPCG(23, 5))
	levels := map[string][]string{"c": {"p", "q", "r"}}
	for trial := 0; trial < 60; trial++ {
		labels := trial%2 == 1
		in := randomParquet(t, rng, 1+rng.IntN(300), labels, trial%3 == 0)
		opt := Options{Outcome: "y", Predictors: []string{"a", "b"}}
		if labels {
			opt.Categories = []string{"low", "mid", "high"}
		}
		switch trial % 6 {
		case 1:
			opt.Predictors = append(opt.Predictors, "c", "t")
			opt.PredictorLevels = levels
		case 2:
			opt.Predictors = append(opt.Predictors, "f")
		case 3:
			opt.Weights, opt.Cluster = "t", "g"
			opt.ColumnMissing = map[string][]string{"a": {"-9"}}
		case 4:
			opt.Offset = "s"
		case 5:
			opt.Keep = []Condition{{Column: "b", Op: ">", Number: -500}}
		}
		opt.Dialect.DecimalComma = trial%4 == 1
		unitRows, chunkWorkers = int64(1+rng.IntN(80)), 1+trial%3
		want, wantErr := ReadStream(bytes.NewReader(in), "t.parquet", opt)
		got, err := Read(bytes.NewReader(in), "t.parquet", opt)
		if msg := sameRead(want, wantErr, got, err); msg != "" {
			t.Fatalf("trial %d: %s", trial, msg)
		}
	}
}

// Required double columns are read straight as numbers: the same data,
// counts and first error as the values' texts read record by record, with
// non-finite values, signed zeros, negative weights and a decimal comma.
func TestParquetRequiredDoubles(t *testing.T) {
	oldRows, oldWorkers := unitRows, chunkWorkers
	defer func() { unitRows, chunkWorkers = oldRows, oldWorkers }()
	rng := rand.New(rand.NewPCG(31, 7))
	schema := parquet.NewSchema("rows", parquet.Group{
		"y": parquet.Leaf(parquet.Int64Type), "a": parquet.Leaf(parquet.DoubleType),
		"w": parquet.Leaf(parquet.DoubleType), "o": parquet.Leaf(parquet.DoubleType),
	})
	for trial := 0; trial < 24; trial++ {
		var buf bytes.Buffer
		w := parquet.NewWriter(&buf, schema, parquet.MaxRowsPerRowGroup(int64(10+rng.IntN(100))), parquet.PageBufferSize(128))
		rows := 1 + rng.IntN(400)
		for i := 0; i < rows; i++ {
			x := rng.NormFloat64() * math.Pow(10, float64(rng.IntN(9)-4))
			if trial%3 == 0 && rng.IntN(rows) == 0 {
				x = []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1)}[rng.IntN(4)]
			}
			wt := float64(rng.IntN(3))
			if trial%4 == 1 && rng.IntN(rows) == 0 {
				wt = -1
			}
			row := parquet.Row{
				parquet.DoubleValue(x).Level(0, 0, 0), parquet.DoubleValue(rng.Float64()).Level(0, 0, 1),
				parquet.DoubleValue(wt).Level(0, 0, 2), parquet.Int64Value(int64(1+rng.IntN(3))).Level(0, 0, 3),
			}
			if _, err := w.WriteRows([]parquet.Row{row}); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		opt := Options{Outcome: "y", Predictors: []string{"a"}}
		if trial%2 == 0 {
			opt.Weights, opt.Offset = "w", "o"
		}
		opt.Dialect.DecimalComma = trial%3 == 1
		unitRows, chunkWorkers = int64(1+rng.IntN(60)), 1+trial%3
		want, wantErr := ReadStream(bytes.NewReader(buf.Bytes()), "r.parquet", opt)
		got, err := Read(bytes.NewReader(buf.Bytes()), "r.parquet", opt)
		if msg := sameRead(want, wantErr, got, err); msg != "" {
			t.Fatalf("trial %d: %s", trial, msg)
		}
		if trial == 2 && (err != nil || got.N == 0) {
			t.Fatalf("trial 2 reads no rows: %v", err)
		}
	}
}

// A Parquet double has no decimal mark: a plan's decimal comma (meant for
// the text of CSV files) reads it as the same number.
func TestParquetDoublesUnderDecimalComma(t *testing.T) {
	in := benchParquet(t, 500)
	opt := benchOpt
	point, err := Read(bytes.NewReader(in), "p.parquet", opt)
	if err != nil {
		t.Fatal(err)
	}
	opt.Dialect.DecimalComma = true
	for _, read := range []func(io.Reader, string, Options) (*Dataset, error){Read, ReadStream} {
		comma, err := read(bytes.NewReader(in), "p.parquet", opt)
		if err != nil {
			t.Fatalf("decimal comma: %v", err)
		}
		if !reflect.DeepEqual(comma.X, point.X) || !reflect.DeepEqual(comma.Y, point.Y) {
			t.Fatal("decimal comma: other values than with a point")
		}
	}
}

// Every entry of pow10Mantissas is the first 128 bits of 10^q, rounded
// down, recomputed here with math/big.
func TestPow10Mantissas(t *testing.T) {
	for q := pow10Min; q <= pow10Max; q++ {
		var m big.Int
		if q >= 0 {
			m.Exp(big.NewInt(10), big.NewInt(int64(q)), nil)
			if n := m.BitLen(); n <= 128 {
				m.Lsh(&m, uint(128-n))
			} else {
				m.Rsh(&m, uint(n-128))
			}
		} else {
			var d big.Int
			d.Exp(big.NewInt(10), big.NewInt(int64(-q)), nil)
			m.Lsh(big.NewInt(1), uint(127+d.BitLen()))
			m.Quo(&m, &d)
		}
		var lo, hi big.Int
		lo.And(&m, new(big.Int).SetUint64(math.MaxUint64))
		hi.Rsh(&m, 64)
		if got := pow10Mantissas[q-pow10Min]; m.BitLen() != 128 || got[0] != lo.Uint64() || got[1] != hi.Uint64() {
			t.Fatalf("1e%d: table %x %x, math/big %x", q, got[1], got[0], &m)
		}
	}
}

// A one_of or none_of value that no row holds: noted when it is like no
// value of the column, refused (with the plan key) when it is one of them
// written otherwise.
func TestSubsetValuesNoRowHolds(t *testing.T) {
	in := "y,a,c\n1,0.5,north\n2,1.5,east\n1,2.5,east\n2,0.1,north\n"
	opt := Options{Outcome: "y", Predictors: []string{"a"}, Keep: []Condition{{Column: "c", Op: "not_in", Values: []string{"west"}, Key: "subset[0]"}}}
	d, err := Read(strings.NewReader(in), "t.csv", opt)
	if err != nil || len(d.Notes) != 1 || d.Notes[0] != `The subset condition c not in {west} (subset[0]) names "west", which no row of column c holds: it keeps or drops no row` {
		t.Errorf("a value no row holds: %v %q", err, d.Notes)
	}
	opt.Keep[0].Values = []string{"North "}
	_, err = Read(strings.NewReader(in), "t.csv", opt)
	var de *Error
	if !errors.As(err, &de) || de.Key != "subset[0]" || !strings.Contains(err.Error(), `names the value "North ", which no row of the column holds and which is not a declared level; the column holds "north", written differently`) {
		t.Errorf("a value written otherwise: %v", err)
	}
}
