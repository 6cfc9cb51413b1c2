package design

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
)

// Row fills out (len(Columns)) with the design row of one raw row (len
// Sources: numbers, or level indices for categorical columns).
func (d *Design) Row(raw, out []float64) error {
	return d.row(raw, out, -1, nil)
}

// Derivative fills der with the derivative of the design row in the raw
// numeric column s, at raw row raw; out gets the design row itself.
func (d *Design) Derivative(raw []float64, s int, out, der []float64) error {
	if d.Sources[s].Cat != nil {
		return fmt.Errorf("column %q is categorical", d.Sources[s].Name)
	}
	return d.row(raw, out, s, der)
}

// row evaluates every term in order; when s >= 0 it also carries the
// derivative in raw column s (product rule through interactions).
func (d *Design) row(raw, out []float64, s int, der []float64) error {
	for k := range d.Terms {
		t := &d.Terms[k]
		o := out[t.First : t.First+len(t.Columns)]
		var dd []float64
		if der != nil {
			dd = der[t.First : t.First+len(t.Columns)]
		}
		switch t.Kind {
		case KindCategorical:
			x := raw[t.Source]
			code, ok := t.code[int(x)]
			if !ok || x != math.Trunc(x) {
				src := d.Sources[t.Source]
				if i := int(x); float64(i) == x && i >= 0 && i < len(src.Cat.Levels) && slices.Contains(t.Dropped, src.Cat.Levels[i]) {
					return fmt.Errorf("column %q: level %q occurs in no row the model was fitted to (its column was dropped: unobserved: drop), so the model has no effect of it", src.Name, src.Cat.Levels[i])
				}
				return fmt.Errorf("column %q: level %v is not one of the coded levels", src.Name, levelText(src, x))
			}
			copy(o, code)
			for i := range dd {
				dd[i] = 0
			}
		case KindNumeric:
			var td []float64
			if dd != nil {
				if t.Source == s {
					td = dd
				} else {
					for i := range dd {
						dd[i] = 0
					}
				}
			}
			if err := t.numericColumns(raw[t.Source], o, td); err != nil {
				if u, ok := err.(*UndefinedError); ok {
					u.Column = d.Sources[t.Source].Name
					return u
				}
				return fmt.Errorf("column %q: %v", d.Sources[t.Source].Name, err)
			}
		case KindInteraction:
			d.product(t, out, der, o, dd)
		}
	}
	return nil
}

// product fills the interaction's columns (and derivatives) from its
// components' columns, already computed in out (and der).
func (d *Design) product(t *Term, out, der, o, dd []float64) {
	vals := []float64{1}
	ders := []float64{0}
	for _, p := range t.Parts {
		c := &d.Terms[p]
		var nv, nd []float64
		for a := range vals {
			for j := range c.Columns {
				v := out[c.First+j]
				nv = append(nv, vals[a]*v)
				if der != nil {
					nd = append(nd, ders[a]*v+vals[a]*der[c.First+j])
				}
			}
		}
		vals, ders = nv, nd
	}
	copy(o, vals)
	if dd != nil {
		copy(dd, ders)
	}
}

func levelText(src Source, x float64) string {
	i := int(x)
	if src.Cat != nil && i >= 0 && i < len(src.Cat.Levels) && float64(i) == x {
		return fmt.Sprintf("%q", src.Cat.Levels[i])
	}
	return fmt.Sprint(x)
}

// Matrix builds the design matrix (n x len(Columns)) of n raw rows; the
// error names the row (0-based) and the problem (the first such row).
// Rows are made in parallel chunks; each row's values are its own.
func (d *Design) Matrix(raw []float64, n int) ([]float64, int, error) {
	S, K := len(d.Sources), len(d.Columns)
	X := make([]float64, n*K)
	const chunk = 1 << 14
	nc := (n + chunk - 1) / chunk
	bad := make([]int, nc)
	errs := make([]error, nc)
	var wg sync.WaitGroup
	next := make(chan int, nc)
	for c := range nc {
		next <- c
	}
	close(next)
	for range min(runtime.GOMAXPROCS(0), nc) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for c := range next {
				for i := c * chunk; i < min(n, (c+1)*chunk); i++ {
					if err := d.Row(raw[i*S:(i+1)*S], X[i*K:(i+1)*K]); err != nil {
						bad[c], errs[c] = i, err
						break
					}
				}
			}
		}()
	}
	wg.Wait()
	for c, err := range errs {
		if err != nil {
			return nil, bad[c], err
		}
	}
	return X, -1, nil
}

// Identity reports whether the design columns are the raw columns
// themselves, in order: a Trivial design whose terms take the sources one
// by one, so the design matrix of raw rows is the raw rows.
func (d *Design) Identity() bool {
	if !d.Trivial() || len(d.Terms) != len(d.Sources) || len(d.Columns) != len(d.Sources) {
		return false
	}
	for k, t := range d.Terms {
		if t.Source != k || t.First != k || len(t.Columns) != 1 {
			return false
		}
	}
	return true
}

// Level returns the index of a level of categorical column s, or -1.
func (d *Design) Level(s int, level string) int {
	c := d.Sources[s].Cat
	if c == nil {
		return -1
	}
	for i, l := range c.Levels {
		if l == level {
			return i
		}
	}
	return -1
}

// Coded returns the levels of categorical column s that the design codes
// (declared order, unobserved levels dropped), and the reference level.
func (d *Design) Coded(s int) ([]string, string) {
	for _, t := range d.Terms {
		if t.Kind == KindCategorical && t.Source == s {
			return t.Kept, referenceOf(d.Sources[s].Cat)
		}
	}
	return nil, ""
}

// Source returns the index of the raw column name, or -1.
func (d *Design) Source(name string) int {
	for i, s := range d.Sources {
		if s.Name == name {
			return i
		}
	}
	return -1
}
