package data

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// quickPlan is the fast way's plan of a CSV text's header for opt, as the
// chunked reader builds it.
func quickPlan(t testing.TB, in []byte, opt Options) (*reader, *fastPlan, *rowTally) {
	t.Helper()
	r := &reader{file: "t.csv", opt: opt, missing: opt.missingSet(), raw: in}
	cols, err := r.opt.plan()
	if err != nil {
		t.Fatal(err)
	}
	if err := r.start(bytes.NewReader(in)); err != nil {
		t.Fatal(err)
	}
	if err := r.header(cols); err != nil {
		t.Fatal(err)
	}
	tally := r.newRowTally(len(opt.Predictors))
	return r, r.newFastPlan(tally), tally
}

// sameQuick checks that quickRow takes the line s[i:hi] only as fastRow
// takes it, with the same row and values, given the line's end or (for a
// plan without unused fields) finding it.
func sameQuick(t *testing.T, r *reader, p *fastPlan, tally *rowTally, s string, i, hi, K int) bool {
	t.Helper()
	took := false
	for _, end := range []int{hi, -1} {
		if end < 0 && p.skips {
			continue
		}
		xq, xf := make([]float64, K), make([]float64, K)
		var rq, rf cells
		e, ok := p.quickRow(s, i, end, xq, &rq)
		if !ok {
			continue
		}
		took = true
		if e != hi {
			t.Fatalf("%q (end %d): quickRow ends the line at %d, not %d", s, end, e, hi)
		}
		if !r.fastRow(p, tally, s, i, hi, xf, &rf) {
			t.Fatalf("quickRow took %q, fastRow does not", s[i:hi])
		}
		for k := range xq {
			if math.Float64bits(xq[k]) != math.Float64bits(xf[k]) {
				t.Fatalf("%q: value %d: quickRow %v, fastRow %v", s[i:hi], k, xq[k], xf[k])
			}
		}
		if rq != rf {
			t.Fatalf("%q: quickRow %+v, fastRow %+v", s[i:hi], rq, rf)
		}
	}
	return took
}

// quickCell writes a numeric cell in the forms quickRow reads and around
// their edges: up to nine digits on either side of the mark, signs, no
// digit, spaces, exponents, marks in the wrong place.
func quickCell(rng *rand.Rand, mark byte) string {
	digits := func(n int) string {
		b := make([]byte, n)
		for i := range b {
			b[i] = byte('0' + rng.IntN(10))
		}
		return string(b)
	}
	var s string
	switch rng.IntN(8) {
	case 0:
		s = digits(rng.IntN(10))
	case 1, 2, 3:
		s = digits(rng.IntN(10)) + string(mark) + digits(rng.IntN(18))
	case 4:
		s = strconv.FormatFloat(rng.NormFloat64(), 'g', 1+rng.IntN(17), 64)
		s = strings.Replace(s, ".", string(mark), 1)
	case 5:
		s = []string{"", ".", ",", "-", "+", "e5", "1e5", "1.5e-3", " 1", "1 ", "1.2.3", "0x10", "1_0", "--1", "+-1", "\u00a01", "NA"}[rng.IntN(17)]
	default:
		s = digits(1 + rng.IntN(3))
	}
	if rng.IntN(4) == 0 {
		s = []string{"-", "+"}[rng.IntN(2)] + s
	}
	return s
}

// quickRow reads a line only as fastRow reads it: on seeded random lines
// of plain and nearly plain cells, in each dialect, with integer codes,
// numbers, weights, offsets and unused columns.
func TestQuickRowAsFastRow(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 5))
	for _, dl := range []Dialect{{}, {Delimiter: ';', DecimalComma: true}, {Delimiter: '\t'}} {
		d := string(dl.delim())
		mark := byte('.')
		if dl.DecimalComma {
			mark = ','
		}
		for oi, opt := range []Options{
			{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: dl},
			{Outcome: "y", Predictors: []string{"b"}, Weights: "w", Offset: "o", Dialect: dl},
			{Outcome: "y", Predictors: []string{"a", "b", "z"}, Weights: "w", Offset: "o", Dialect: dl},
		} {
			head := strings.Join([]string{"y", "a", "b", "w", "o", "z"}, d) + "\n"
			r, p, tally := quickPlan(t, []byte(head), opt)
			if p == nil || !p.plain {
				t.Fatalf("%+v: no plain plan", opt)
			}
			took := 0
			for trial := 0; trial < 20000; trial++ {
				cells := []string{quickCell(rng, mark), quickCell(rng, mark), quickCell(rng, mark), quickCell(rng, mark), quickCell(rng, mark), []string{"x", "", "1,5", "a b"}[rng.IntN(4)]}
				if oi == 2 { // every field used: quickRow finds the line end
					cells[5] = quickCell(rng, mark)
				}
				if rng.IntN(5) == 0 {
					cells = cells[:rng.IntN(len(cells))]
				}
				line := strings.Join(cells, d)
				end := []string{"\n", "\r\n", "\n\n", "\r\r\n", "\r"}[rng.IntN(5)]
				// The text after the line: the next line, long enough for
				// quickRow's reads past the line end.
				s := line + end + "1" + d + "2" + d + "3" + d + "4" + d + "5" + d + "6\n" + strings.Repeat("7,8,9,10\n", 4)
				hi := len(line)
				if end == "\r\r\n" {
					hi++ // the line end as fastLines finds it: a CR before the line feed is not in the line
				}
				if end == "\r" {
					hi = len(line) + 1 + strings.IndexByte(s[len(line)+1:], '\n')
				}
				if sameQuick(t, r, p, tally, s, 0, hi, len(opt.Predictors)) {
					took++
				}
			}
			if took < 150 {
				t.Fatalf("%+v: quickRow took only %d lines", opt, took)
			}
		}
	}
}

// FuzzQuickRow: on any line, quickRow gives what fastRow gives, or gives up.
func FuzzQuickRow(f *testing.F) {
	for _, s := range []string{"1,2.5,-3\n", "-1,0.1234567,12345678\n", "1,2,3,4\n", "1,,3\n", "1,2e5,3\n", "+1,-.5,5.\n", "0,-0.00914823,1.23456789012345\n", "1,0.123456789012345,1234567.12345678\n"} {
		f.Add(s, uint8(0))
	}
	f.Fuzz(func(t *testing.T, line string, mode uint8) {
		dl := []Dialect{{}, {Delimiter: ';', DecimalComma: true}, {Delimiter: '\t'}}[mode%3]
		d := string(dl.delim())
		opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: dl}
		r, p, tally := quickPlan(t, []byte("y"+d+"a"+d+"b\n"), opt)
		if p.skips {
			t.Fatal("every field is used")
		}
		hi := strings.IndexByte(line, '\n')
		if hi < 0 {
			hi = len(line)
			line += "\n"
		}
		if hi > 0 && line[hi-1] == '\r' {
			hi--
		}
		s := line + strings.Repeat("9", quickSlack)
		sameQuick(t, r, p, tally, s, 0, hi, 2)
	})
}

// Files whose every field is used (quickRow finds the line ends) read as
// the record-by-record reader reads them: plain and nearly plain cells,
// CRLF and empty lines, bad cells and ragged rows among them.
func TestQuickLinesReadLikeRecords(t *testing.T) {
	rng := rand.New(rand.NewPCG(29, 3))
	read := 0
	for trial := 0; trial < 40; trial++ {
		dl := []Dialect{{}, {Delimiter: ';', DecimalComma: true}, {Delimiter: '\t'}}[trial%3]
		d, mark := string(dl.delim()), byte('.')
		if dl.DecimalComma {
			mark = ','
		}
		var b strings.Builder
		b.WriteString("y" + d + "a" + d + "b\n")
		for i := 0; i < 200; i++ {
			y := strconv.Itoa(1 + rng.IntN(3))
			a, c := quickCell(rng, mark), quickCell(rng, mark)
			if trial%2 == 0 || rng.IntN(200) > 0 { // mostly plain cells
				a = strconv.FormatFloat(rng.NormFloat64(), 'f', rng.IntN(8), 64)
				a = strings.Replace(a, ".", string(mark), 1)
				c = strconv.Itoa(rng.IntN(100))
			}
			cells := []string{y, a, c}
			if trial%8 == 7 && i == 150 {
				cells = cells[:2]
			}
			b.WriteString(strings.Join(cells, d) + []string{"\n", "\n", "\n", "\r\n", "\n\n", "\r\r\n"}[rng.IntN(6)])
		}
		opt := Options{Outcome: "y", Predictors: []string{"a", "b"}, Dialect: dl, MissingTokens: []string{""}}
		checkChunked(t, []byte(b.String()), opt)
		if _, err := Read(strings.NewReader(b.String()), "t.csv", opt); err == nil {
			read++
		}
	}
	if read < 10 {
		t.Fatalf("only %d of the files read without an error", read)
	}
}
