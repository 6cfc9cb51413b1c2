package fit

import (
	"encoding/binary"
	"math"
)

// compressed returns the design with identical rows (same predictors,
// indicator group, outcome and offset) merged into one row carrying the
// summed weight, in order of first appearance, when that at least halves
// the rows; otherwise
// d itself. Tabulated data and registers of categorical predictors fit in
// time proportional to their distinct rows. mult counts the original rows
// behind each merged row (for row-level diagnostics).
func (d *design) compressed() *design {
	n, K := d.n, d.width()
	if n < 64 {
		return d
	}
	key := d.rowKinds()
	// A sample decides cheaply whether merging can pay.
	sample := min(n, 4096)
	seen := make(map[int]struct{}, sample)
	for i := 0; i < sample; i++ {
		seen[key(i)] = struct{}{}
	}
	if 4*len(seen) > 3*sample {
		return d
	}
	var index []int // kind -> merged row (-1: none yet)
	var rows []int
	for i := 0; i < n; i++ {
		if d.weight(i) == 0 {
			continue
		}
		k := key(i)
		for len(index) <= k {
			index = append(index, -1)
		}
		if index[k] < 0 {
			if 2*len(rows) >= n {
				return d // too few repeats after all
			}
			index[k] = len(rows)
			rows = append(rows, i)
		}
	}
	c := &design{n: len(rows), K: d.K, x: make([]float64, len(rows)*K), y: make([]int, len(rows)),
		w: make([]float64, len(rows)), mult: make([]int, len(rows)), groups: d.groups}
	if d.off != nil {
		c.off = make([]float64, len(rows))
	}
	if d.group != nil {
		c.group = make([]int, len(rows))
	}
	for j, i := range rows {
		copy(c.x[j*K:(j+1)*K], d.x[i*K:(i+1)*K])
		c.y[j] = d.y[i]
		if d.off != nil {
			c.off[j] = d.off[i]
		}
		if d.group != nil {
			c.group[j] = d.group[i]
		}
	}
	for i := 0; i < n; i++ {
		w := d.weight(i)
		if w == 0 {
			continue
		}
		j := index[key(i)]
		c.w[j] += w
		c.mult[j]++
	}
	return c
}

// rowKinds returns a function giving each row a number, the same for rows
// that are the same (predictors, indicator group, outcome and offset) and
// different otherwise, numbered from 0 without gaps in the order first
// asked. Rows of the outcome alone (no predictor, no offset: the
// thresholds-only model) are numbered by their category.
func (d *design) rowKinds() func(i int) int {
	K := d.width()
	if K == 0 && d.off == nil && d.group == nil {
		return func(i int) int { return d.y[i] }
	}
	buf := make([]byte, 0, 8*(K+3))
	keyOf := func(i int) []byte {
		buf = buf[:0]
		for _, v := range d.x[i*K : (i+1)*K] {
			buf = binary.LittleEndian.AppendUint64(buf, math.Float64bits(v))
		}
		buf = binary.LittleEndian.AppendUint64(buf, uint64(d.y[i]))
		if d.group != nil {
			buf = binary.LittleEndian.AppendUint64(buf, uint64(d.group[i]))
		}
		if d.off != nil {
			buf = binary.LittleEndian.AppendUint64(buf, math.Float64bits(d.off[i]))
		}
		return buf
	}
	ids := map[string]int{}
	return func(i int) int {
		k := keyOf(i)
		if id, ok := ids[string(k)]; ok {
			return id
		}
		id := len(ids)
		ids[string(k)] = id
		return id
	}
}
