package words

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Set is the vocabulary of an enumerated type T whose values are 0..n-1,
// in the order of names.
type Set[T ~int] struct {
	what  string // what one word names, e.g. "link"
	names []string
}

// New returns the vocabulary of T: value i is written names[i].
func New[T ~int](what string, names ...string) Set[T] {
	return Set[T]{what: what, names: names}
}

// What is what one word names, e.g. "link".
func (s Set[T]) What() string { return s.what }

// Name gives the word of v.
func (s Set[T]) Name(v T) string {
	if int(v) >= 0 && int(v) < len(s.names) {
		return s.names[v]
	}
	return fmt.Sprintf("%s(%d)", s.what, int(v))
}

// Names gives every word, in order.
func (s Set[T]) Names() []string { return append([]string(nil), s.names...) }

// All gives every value, in order.
func (s Set[T]) All() []T {
	out := make([]T, len(s.names))
	for i := range out {
		out[i] = T(i)
	}
	return out
}

// Parse turns a word into its value; the error lists the allowed words and
// suggests one that differs only in letter case or separators.
func (s Set[T]) Parse(w string) (T, error) {
	for i, n := range s.names {
		if w == n {
			return T(i), nil
		}
	}
	return 0, fmt.Errorf("%s", Unknown(s.what, w, s.names))
}

// Text gives the word of v as bytes, or an error for a value outside the set
// (for MarshalText).
func (s Set[T]) Text(v T) ([]byte, error) {
	if int(v) < 0 || int(v) >= len(s.names) {
		return nil, fmt.Errorf("no %s numbered %d", s.what, int(v))
	}
	return []byte(s.names[v]), nil
}

// Unknown explains why w is not one of names, suggesting a match that
// differs only in letter case or separators.
func Unknown(what, w string, names []string) string {
	msg := fmt.Sprintf("unknown %s %q (want %s)", what, w, OrList(names))
	norm := func(x string) string {
		return strings.NewReplacer("-", "_", " ", "_").Replace(strings.ToLower(strings.TrimSpace(x)))
	}
	for _, n := range names {
		if norm(w) == norm(n) {
			return msg + `; did you mean "` + n + `"?`
		}
	}
	return msg
}

// AndList renders ["a", "b", "c"] as "a, b and c" ("a and b", "a"; "" for
// none): the one way the program lists names in a sentence.
func AndList(words []string) string { return list(words, " and ") }

// Count writes a count with its noun in the number it takes: "1 key",
// "2 keys", "0 keys".
func Count(n int, one, many string) string {
	return strconv.Itoa(n) + " " + Form(n, one, many)
}

// Form is the word in the number a count takes, without the count: one
// for 1, many otherwise ("is" or "are", "it" or "them").
func Form(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// Some renders the first n of xs joined by commas and says how many more
// there are: "a, b, c and 2 more" (all of them, joined by commas, when
// there are at most n).
func Some(xs []string, n int) string {
	if len(xs) <= n {
		return strings.Join(xs, ", ")
	}
	return strings.Join(xs[:n], ", ") + fmt.Sprintf(" and %d more", len(xs)-n)
}

// Level writes a level (a category, a value of a column read as text) in
// running text or a list: as it is, or quoted when it is empty or holds a
// space or punctuation that would blur the list ("site in {north, \"so,
// uth\"}", "site = \"east side\", x = 5"): the one way the program
// decides whether a level needs quotes.
func Level(l string) string {
	if l == "" || strings.ContainsAny(l, " ,;:(){}=\"'") {
		return strconv.Quote(l)
	}
	return l
}

// OrList renders ["a", "b", "c"] as "a, b or c".
func OrList(words []string) string { return list(words, " or ") }

// Each writes every one of xs by text, in order: the words of a list
// (words.AndList(words.Each(codes, num))).
func Each[T any](xs []T, text func(T) string) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = text(x)
	}
	return out
}

// list joins words with ", " and the last pair with last.
func list(words []string, last string) string {
	switch len(words) {
	case 0:
		return ""
	case 1:
		return words[0]
	}
	return strings.Join(words[:len(words)-1], ", ") + last + words[len(words)-1]
}

// OrList renders the words of the set as "a, b or c".
func (s Set[T]) OrList() string { return OrList(s.names) }

// Nearest gives up to n of names closest to w by edit distance (letters
// inserted, deleted, replaced or two neighbours swapped, letter case
// ignored), nearest first, ties in the order given; names farther than
// half the length of w and at least 3 edits away are left out, so a word
// unlike every name gets none.
func Nearest(w string, names []string, n int) []string {
	type cand struct {
		name string
		d, i int
	}
	lw := []rune(strings.ToLower(w))
	var cs []cand
	seen := map[string]bool{}
	for i, name := range names {
		if seen[name] || name == w {
			continue
		}
		seen[name] = true
		d := editDistance(lw, []rune(strings.ToLower(name)))
		if d >= 3 && 2*d > len(lw) {
			continue
		}
		cs = append(cs, cand{name, d, i})
	}
	slices.SortStableFunc(cs, func(a, b cand) int { return a.d - b.d })
	var out []string
	for _, c := range cs[:min(n, len(cs))] {
		out = append(out, c.name)
	}
	return out
}

// editDistance counts the insertions, deletions, replacements and swaps
// of neighbouring letters that turn a into b.
func editDistance(a, b []rune) int {
	prev2 := make([]int, len(b)+1)
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				cur[j] = min(cur[j], prev2[j-2]+1)
			}
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(b)]
}
