package data

import (
	"math"
	"math/bits"
	"strings"
)

// The fast way through a line: the used cells are read straight from the
// line's text, without splitting it into cells first. It only ever takes a
// row the general way (parseRow) would take identically: every used cell
// present (not a missing-value marker) and valid, and as many fields as the
// header. Anything else gives up, and the line goes the general way, which
// decides and words what is wrong.

// fastKind is how the fast way reads a field.
type fastKind int

const (
	fastSkip    fastKind = iota // not used
	fastCode                    // outcome: an integer code
	fastLabel                   // outcome: a declared category
	fastNumber                  // numeric predictor
	fastLevel                   // categorical predictor: a declared level
	fastWeight                  // frequency weight: a number, zero or more
	fastOffset                  // offset: a number
	fastCluster                 // cluster id: any text
)

// fastField is how one field of the file is read.
type fastField struct {
	kind   fastKind
	name   string         // the column
	pos    int            // position among the predictors
	levels map[string]int // fastLabel, fastLevel: text -> index
	// check: some missing-value marker of the column reads as a valid
	// cell, so a valid cell must also be checked against the markers.
	check bool
	// typed: a Parquet column with a logical type (a decimal, an unsigned
	// integer, a date or time), read only the general way, through its
	// values' texts (columnRecords.text).
	typed bool
}

// fastPlan says how the fast way reads each field of a line.
type fastPlan struct {
	fields []fastField
	delim  byte
	mark   byte // decimal mark
	// plain: every used field is a number or an integer code with no
	// missing-value marker that reads as valid (quickRow can read lines);
	// skips: some field is not used.
	plain, skips bool
}

// newFastPlan builds the plan of the fast way for the used columns, or
// returns nil when rows need the general way (subset conditions).
func (r *reader) newFastPlan(t *rowTally) *fastPlan {
	if len(r.opt.Keep) > 0 {
		return nil
	}
	p := &fastPlan{fields: make([]fastField, r.width), delim: byte(r.opt.Dialect.delim()), mark: r.opt.Dialect.mark()}
	for _, c := range r.cols {
		f := fastField{name: c.name, pos: c.pos}
		switch c.role {
		case roleOutcome:
			f.kind = fastCode
			if len(r.opt.Categories) > 0 {
				f.kind, f.levels = fastLabel, t.labels
			}
		case rolePredictor:
			f.kind = fastNumber
			if idx, cat := t.levelIndex[c.name]; cat {
				f.kind, f.levels = fastLevel, idx
			}
		case roleWeights:
			f.kind = fastWeight
		case roleOffset:
			f.kind = fastOffset
		case roleCluster:
			f.kind = fastCluster
		default:
			return nil
		}
		f.check = f.kind == fastCluster
		for tok := range r.missing {
			f.check = f.check || p.valid(&f, tok)
		}
		for _, tok := range r.opt.ColumnMissing[c.name] {
			f.check = f.check || p.valid(&f, strings.TrimSpace(tok))
		}
		// A code that is a number written otherwise than the file writes
		// numbers (-99.0 in a plan for a decimal-comma file: codeNumber)
		// is not a valid cell, yet marks the number.
		f.check = f.check || len(r.numCodes[c.name]) > 0
		p.fields[c.index] = f
	}
	p.plain = true
	for _, f := range p.fields {
		p.skips = p.skips || f.kind == fastSkip
		switch f.kind {
		case fastSkip, fastCode, fastNumber, fastWeight, fastOffset:
			p.plain = p.plain && !f.check
		default:
			p.plain = false
		}
	}
	return p
}

// delimEndsNumbers reports whether the delimiter cannot continue a number
// (it is not a digit, a sign, a point, the decimal mark or an exponent's
// e), so that reading a number from the text stops at the delimiter as
// splitting the line at the delimiters would: not so for a comma between
// fields with a decimal comma, where 2,5 is two cells unless quoted.
func (p *fastPlan) delimEndsNumbers() bool {
	c := p.delim
	return !(c >= '0' && c <= '9' || c == '+' || c == '-' || c == '.' || c == p.mark || c|0x20 == 'e')
}

// valid reports whether the fast way reads cell as a valid value of f.
func (p *fastPlan) valid(f *fastField, cell string) bool {
	switch f.kind {
	case fastCode:
		_, ok := integer(cell)
		return ok
	case fastLabel, fastLevel:
		_, ok := f.levels[cell]
		return ok
	case fastNumber, fastWeight, fastOffset:
		_, ok := decimal(cell, p.mark)
		return ok
	}
	return true
}

// fastLines reads the lines of a chunk's text from lr's position the fast
// way, while it can: each line straight from the text into the chunk's
// next row (its predictor values written where they stay); empty lines
// are skipped. It stops at the end of the text or before a line the fast
// way does not take (a line with a quote character, any line fastRow
// gives up on), which the caller reads the general way; lr is left before
// that line.
func (r *reader) fastLines(p *fastPlan, c *chunk, lr *lineRecords) {
	s, pos, line := lr.s, lr.pos, lr.line
	d, t := c.d, c.t
	K := d.K
	var row cells
	whole := p.plain && !p.skips && !c.quotes // quickRow finds the line end
	// After a line quickRow gives up on, the next lines skip it: one after
	// the first, twice as many after each further one in a row, up to 64
	// (in a file of long numbers it would give up on every line).
	rest, fails := 0, 0
	gaveUp := func() {
		rest = 1 << min(fails, 6)
		fails++
	}
	for pos < len(s) {
		if r.mayRepeatHeader(s, pos, p.delim) {
			break // the general way decides (record: repeatsHeader)
		}
		n := len(d.X)
		x := d.X[n : n+K]
		next, ok := 0, false
		if rest > 0 {
			rest--
		} else if whole {
			var e int
			if e, ok = p.quickRow(s, pos, -1, x, &row); ok {
				next = e + 1
				if s[e] == '\r' {
					next++
				}
				fails = 0
			} else {
				gaveUp()
			}
		}
		if !ok {
			hi := len(s)
			next = len(s)
			if e := strings.IndexByte(s[pos:], '\n'); e >= 0 {
				hi = pos + e
				next = hi + 1
			}
			if hi > pos && s[hi-1] == '\r' {
				hi--
			}
			if hi == pos { // an empty line, skipped as the CSV reader skips it
				line++
				pos = next
				continue
			}
			if c.quotes && strings.IndexByte(s[pos:hi], '"') >= 0 {
				break
			}
			if p.plain && !whole && rest == 0 {
				if _, ok = p.quickRow(s, pos, hi, x, &row); ok {
					fails = 0
				} else {
					gaveUp()
				}
			}
			if !ok && !r.fastRow(p, t, s, pos, hi, x, &row) {
				break
			}
		}
		line++
		d.RowsRead++
		if row.w == 0 {
			t.zeroWeight++
		} else {
			d.X = d.X[:n+K]
			r.keepValues(t, d, &row, line)
		}
		pos = next
	}
	lr.pos, lr.line = pos, line
}

// mayRepeatHeader reports whether the line from s[i] may repeat the
// header: its first field, spaces aside, is the header's first name (the
// one comparison a row costs the general way too, repeatsHeader). Such a
// line goes the general way, which refuses it if every named column
// repeats its name, so that a repeated header is refused on every path
// (its cells may all read as valid values: the outcome's category "y",
// a level "g").
func (r *reader) mayRepeatHeader(s string, i int, delim byte) bool {
	if len(r.headerNames) == 0 {
		return false
	}
	for i < len(s) && (s[i] == ' ' || s[i] == '\t') {
		i++
	}
	name := r.headerNames[0]
	if !strings.HasPrefix(s[i:], name) {
		return false
	}
	i += len(name)
	return i == len(s) || s[i] == delim || s[i] == ' ' || s[i] == '\t' || s[i] == '\r' || s[i] == '\n'
}

// fastRow reads the line s[i:hi] the fast way into row (its predictor
// values into x); false when the line needs the general way. The byte at
// hi, if any, is a line end.
func (r *reader) fastRow(p *fastPlan, t *rowTally, s string, i, hi int, x []float64, row *cells) bool {
	*row = cells{miss: -1, w: 1}
	last := len(p.fields) - 1
	for fi := range p.fields {
		f := &p.fields[fi]
		if f.kind == fastNumber && !f.check {
			// The usual cell: a number, then the delimiter or the line end.
			if v, e, ok := scanDecimal(s, i, hi, p.mark); ok && (e == hi) == (fi == last) && (e == hi || s[e] == p.delim) {
				x[f.pos] = v
				i = e + 1
				continue
			}
		}
		var cell string // the field, trimmed
		var end int     // where the field ends: the next delimiter or the end of the line
		var v float64
		ok := true
		switch f.kind {
		case fastNumber, fastWeight, fastOffset:
			if i < hi && isSpaceByte(s[i]) {
				i = p.skipSpace(s, i, hi)
			}
			var e int
			v, e, ok = scanDecimal(s, i, hi, p.mark)
			end = e
			if end < hi && s[end] != p.delim {
				end = p.skipSpace(s, end, hi)
			}
			if !ok || end < hi && s[end] != p.delim {
				return false
			}
			cell = s[i:e]
		default:
			if end = strings.IndexByte(s[i:hi], p.delim); end < 0 {
				end = hi
			} else {
				end += i
			}
			if f.kind != fastSkip {
				cell = trimASCII(s[i:end])
				if cell != "" && (cell[0] >= 0x80 || cell[len(cell)-1] >= 0x80) {
					return false // perhaps white space beyond ASCII, which the general way trims
				}
			}
		}
		if (fi == last) != (end == hi) {
			return false // not as many fields as the header
		}
		i = end + 1
		switch f.kind {
		case fastSkip:
			continue
		case fastCode:
			row.code, ok = integer(cell)
		case fastLabel:
			row.y, ok = f.levels[cell]
		case fastNumber:
			x[f.pos] = v
		case fastLevel:
			var l int
			l, ok = f.levels[cell]
			x[f.pos] = float64(l)
		case fastWeight:
			row.w = v
			ok = ok && weightInRange(v)
		case fastOffset:
			row.off = v
			ok = ok && offsetInRange(v)
		case fastCluster:
			row.cl = cell
		}
		if !ok || f.check && (r.missingText(f.name, cell) || r.missingNumber(f.name, v)) {
			return false
		}
	}
	return true
}

// quickSlack is the number of bytes of the text quickRow needs after the
// start of a field: it reads eight bytes at a time, a cell of at most 24
// bytes and what follows it.
const quickSlack = 32

// quickRow reads the line from s[i] as fastRow would, for a plan whose
// used fields are all numbers and integer codes (plain), when every used
// cell is written plainly: an optional sign, at most seven digits, and for
// a number an optional decimal mark and at most seven digits (or eight to
// fifteen, when the digits of the cell are fifteen at most), then the
// delimiter (or the line end). The digits are found and read eight bytes
// at a time, in line, with no call per field. It returns where the last
// field ends: at hi, the line's end as fastLines finds it, or when hi is
// -1 (a plan without unused fields: whole, found here) at a line feed or
// a CR and a line feed. False for any other line, which fastRow then
// reads (or gives to the general way).
func (p *fastPlan) quickRow(s string, i, hi int, x []float64, row *cells) (int, bool) {
	*row = cells{miss: -1, w: 1}
	last := len(p.fields) - 1
	for fi := range p.fields {
		f := &p.fields[fi]
		if i+quickSlack > len(s) {
			return 0, false
		}
		if f.kind == fastSkip {
			e := -1
			if hi >= 0 {
				e = strings.IndexByte(s[i:hi], p.delim)
			}
			if e < 0 {
				e = hi
			} else {
				e += i
			}
			if e < 0 || (fi == last) != (e == hi) {
				return 0, false
			}
			i = e + 1
			continue
		}
		// The sign, then the digits before the mark: those below the
		// first byte that is not a digit, moved to the top of the word
		// (for n = 8, when the shift is 0 mod 64, the cell is refused).
		sg := signs[s[i]]
		j := i + int(sg&1)
		w := load8(s, j)
		nd := nonDigits(w)
		n := bits.TrailingZeros64(nd) >> 3
		mant := eightDigits(w << (uint(56-8*n) & 63) << 8)
		j += n
		m, nd2 := 0, uint64(1)
		if s[j] == p.mark && f.kind != fastCode {
			w = load8(s, j+1)
			nd2 = nonDigits(w)
			m = bits.TrailingZeros64(nd2) >> 3
			if nd2 == 0 {
				// Eight digits after the mark: the next ones too, when the
				// cell's digits stay at most fifteen (below 2^53, so the
				// division below stays exact in its operands).
				w2 := load8(s, j+9)
				nd2 = nonDigits(w2)
				m2 := bits.TrailingZeros64(nd2) >> 3
				if n+8+m2 > 15 {
					return 0, false
				}
				mant = (mant*pow10u[8]+eightDigits(w))*pow10u[m2] + eightDigits(w2<<(uint(56-8*m2)&63)<<8)
				m = 8 + m2
			} else {
				mant = mant*pow10u[m] + eightDigits(w<<(uint(56-8*m)&63)<<8)
			}
			j += m + 1
		}
		var end bool
		switch {
		case fi < last:
			end = s[j] == p.delim
		case hi >= 0:
			end = j == hi
		default:
			end = s[j] == '\n' || s[j] == '\r' && s[j+1] == '\n'
		}
		// Eight digits in a row (perhaps more), no digit at all, or
		// anything else after the number: not for this way.
		if nd == 0 || nd2 == 0 || n+m == 0 || !end {
			return 0, false
		}
		i = j + 1
		if f.kind == fastCode {
			row.code = int64(mant) * (1 - 2*int64(sg>>1))
			continue
		}
		// At most 15 digits and a power of ten of at most 15: one
		// correctly rounded division (see decimal).
		v := math.Float64frombits(math.Float64bits(float64(mant)/pow10[m]) | uint64(sg>>1)<<63)
		switch f.kind {
		case fastNumber:
			x[f.pos] = v
		case fastWeight:
			if !weightInRange(v) {
				return 0, false
			}
			row.w = v
		case fastOffset:
			if !offsetInRange(v) {
				return 0, false
			}
			row.off = v
		}
	}
	return i - 1, true
}

// skipSpace skips ASCII white space other than the delimiter from s[i],
// up to hi.
func (p *fastPlan) skipSpace(s string, i, hi int) int {
	for i < hi && isSpaceByte(s[i]) && s[i] != p.delim {
		i++
	}
	return i
}

// fork returns a tally for a chunk of the rows: the same lookups, its own
// counts.
func (t *rowTally) fork() *rowTally {
	f := &rowTally{
		labels:        t.labels,
		condCol:       t.condCol,
		levelIndex:    t.levelIndex,
		levelSeen:     make(map[string][]float64, len(t.levelSeen)),
		drops:         make([]int, len(t.drops)),
		subsetDrops:   make([]int, len(t.subsetDrops)),
		patterns:      map[string]int{},
		catMiss:       map[string][]int{},
		catIncomplete: map[string]int{},
		pat:           make([]byte, len(t.pat)),
		xs:            make([]float64, len(t.xs)),
		clusters:      map[string]string{},
		spelled:       map[string]string{},
		respelled:     map[string]string{},
	}
	for col, seen := range t.levelSeen {
		f.levelSeen[col] = make([]float64, len(seen))
	}
	f.listSeen = make(ListValues, len(t.listSeen))
	for i, seen := range t.listSeen {
		if seen != nil {
			f.listSeen[i] = map[string]bool{}
		}
	}
	return f
}

// join adds the counts of a chunk's tally (not its codes) to t.
func (t *rowTally) join(c *rowTally) {
	for col, seen := range c.levelSeen {
		for l, w := range seen {
			t.levelSeen[col][l] += w
		}
	}
	for i, n := range c.drops {
		t.drops[i] += n
	}
	for i, n := range c.subsetDrops {
		t.subsetDrops[i] += n
	}
	t.listSeen.Add(c.listSeen)
	t.joinSpellings(c)
	t.zeroWeight += c.zeroWeight
	for k, n := range c.patterns {
		t.patterns[k] += n
	}
	for k, m := range c.catMiss {
		if tm, ok := t.catMiss[k]; ok {
			for i, n := range m {
				tm[i] += n
			}
		} else {
			t.catMiss[strings.Clone(k)] = m
		}
	}
	for k, n := range c.catIncomplete {
		if _, ok := t.catIncomplete[k]; !ok {
			k = strings.Clone(k)
		}
		t.catIncomplete[k] += n
	}
}
