package plan

import (
	"fmt"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"ordplan/runner/data"
	"ordplan/runner/impute/chained"

	"gopkg.in/yaml.v3"
)

func (d *decoder) dataDefaults(data *Data) {
	data.Missing = "drop"
	data.WeightKind = "frequency"
	data.Delimiter = "comma"
	data.Decimal = "point"
}

// decodeData reads the data section.
func (d *decoder) decodeData(n *yaml.Node, data *Data) {
	d.dataDefaults(data)
	m := d.mapping(n, "data", dataKeys)
	if m == nil {
		return
	}
	if v := m.get("file"); v != nil {
		if s, ok := d.name(v, "data.file"); ok {
			data.File = s
			if n := deref(v); n != nil {
				data.FileAt = PartEntry{Line: n.Line, Col: n.Column}
			}
		}
	}
	if v := m.get("parts"); v != nil && d.nonEmpty(v, "data.parts", "part (a file name or pattern)") {
		data.Parts, _ = d.names(v, "data.parts")
		data.PartOf = partEntries(v, data.Parts)
	}
	where := m.node
	if where == nil {
		where = d.near("data")
	}
	switch {
	case m.get("file") != nil && m.get("parts") != nil:
		d.errorf(where, "data", "give either file (one data file) or parts (the data as several files with the same columns), not both")
	case m.get("file") == nil && m.get("parts") == nil:
		d.errorf(where, "data.file", "required key is missing (or give parts: the data as several files with the same columns)")
	}
	m.word("missing", "missing-data mode", missingWords, &data.Missing)
	if v := m.get("missing_values"); v != nil {
		data.MissingValues, _ = d.readList(v, "data.missing_values", d.missingCode)
	}
	d.charWord(m, "delimiter", "delimiter", dataDelimiterWords, dataDelimiters, &data.Delimiter)
	d.charWord(m, "decimal", "decimal mark", dataDecimalWords, dataDecimalMarks, &data.Decimal)
	m.text("sheet", &data.Sheet)
	if v := m.get("header_row"); v != nil {
		if h, ok := d.integer(v, "data.header_row"); ok {
			if h < 1 || h > 1<<20 {
				d.errorf(v, "data.header_row", "must be a sheet row number, 1 or more (got %d)", h)
			} else {
				data.HeaderRow = int(h)
			}
		}
	}
	m.name("weights", &data.Weights)
	m.word("weight_kind", "weight kind", weightKindWords, &data.WeightKind)
	m.name("offset", &data.Offset)
	m.name("cluster", &data.Cluster)
	if v := m.get("imputed"); v != nil {
		data.Imputed = d.decodeImputed(v)
		if data.Parts != nil {
			d.errorf(v, "data.imputed", "imputed data are not read with data.parts: give the original data as one file (data.file)")
		}
	}
	if v := m.get("imputation"); v != nil {
		data.Imputation = d.decodeImputation(v)
	} else if data.Imputes() {
		data.Imputation = &Imputation{Sets: defaultImputedSets, Iterations: defaultImputationIterations}
	}
}

// The defaults of data.imputation.
const (
	defaultImputedSets          = 20
	defaultImputationIterations = 10
)

// decodeImputation reads data.imputation; the seed's default (the plan's
// seed) is set by checkImputation.
func (d *decoder) decodeImputation(n *yaml.Node) *Imputation {
	im := &Imputation{Sets: defaultImputedSets, Iterations: defaultImputationIterations}
	m := d.mapping(n, "data.imputation", imputationKeys)
	if m == nil {
		return im
	}
	if v := m.get("sets"); v != nil {
		if k, ok := d.integer(v, m.at("sets")); ok {
			if k < 2 {
				d.errorf(deref(v), m.at("sets"), "pooling needs at least 2 imputed sets, got %d", k)
			} else if k > 10000 {
				d.errorf(deref(v), m.at("sets"), "at most 10000 imputed sets, got %d", k)
			} else {
				im.Sets = int(k)
			}
		}
	}
	if v := m.get("iterations"); v != nil {
		if k, ok := d.integer(v, m.at("iterations")); ok {
			if k < 1 || k > 10000 {
				d.errorf(deref(v), m.at("iterations"), "want 1 to 10000 iterations, got %d", k)
			} else {
				im.Iterations = int(k)
			}
		}
	}
	if v := m.get("seed"); v != nil {
		if s, ok := d.unsigned(v, m.at("seed")); ok {
			im.Seed = s
		}
	}
	if v := m.get("column_models"); v != nil {
		d.eachColumn(v, m.at("column_models"), chained.OrList(), func(k, v *yaml.Node, path string) {
			if w, ok := d.word(v, path, "imputation model", chained.PlanWords()); ok {
				meth, _ := chained.MethodWords.Parse(w)
				im.Models = append(im.Models, ColumnModel{Column: k.Value, Method: meth, Key: path})
			}
		})
	}
	m.boolean("convergence_table", &im.ConvergenceTable)
	m.boolean("write_sets", &im.WriteSets)
	return im
}

// partEntries gives the entries of the list n (data.parts) that parts,
// the names read from it in order (an item refused is left out), are,
// with their places in the plan.
func partEntries(n *yaml.Node, parts []string) []PartEntry {
	n = deref(n)
	if n == nil || n.Kind != yaml.SequenceNode {
		return nil
	}
	var out []PartEntry
	for i, it := range n.Content {
		if it = deref(it); it != nil && len(out) < len(parts) && it.Kind == yaml.ScalarNode && it.Value == parts[len(out)] {
			out = append(out, PartEntry{Index: i, Line: it.Line, Col: it.Column})
		}
	}
	return out
}

// ExpandParts resolves data.parts (and ordplan fit --parts, against the
// working folder): names against the plan's folder, a pattern (with * ? or
// [) into its matches in name order, named relative to the folder as the
// pattern is. A pattern that matches nothing stays as written, for
// checkParts to report. from gives, for each file, the index in parts
// of the name or pattern it comes from.
func ExpandParts(dir string, parts []string) (files, paths []string, from []int) {
	for k, pat := range parts {
		full := resolveDataPath(dir, pat)
		var matches []string
		if strings.ContainsAny(pat, "*?[") {
			matches, _ = filepath.Glob(full)
			sort.Strings(matches)
		}
		if len(matches) == 0 {
			files, paths, from = append(files, pat), append(paths, full), append(from, k)
			continue
		}
		for _, m := range matches {
			name := m
			if !filepath.IsAbs(filepath.FromSlash(pat)) {
				if rel, err := filepath.Rel(dir, m); err == nil {
					name = filepath.ToSlash(rel)
				}
			}
			files, paths, from = append(files, name), append(paths, m), append(from, k)
		}
	}
	return files, paths, from
}

// PartProblem is a problem with part Part of a list of parts (data.parts
// expanded, or ordplan fit --parts).
type PartProblem struct {
	Part int
	Msg  string
}

// PartsTwice says of each part that the expanded parts (ExpandParts: the
// files as named and their paths) give more than once how the list gives
// it, one problem a part (the later one): data.parts and ordplan fit
// --parts say it alike.
func PartsTwice(files, paths []string) []PartProblem {
	seen := map[string]string{}
	var out []PartProblem
	for i, path := range paths {
		file := files[i]
		if prev, dup := seen[path]; dup {
			how := "as " + strconv.Quote(prev) + " and as " + strconv.Quote(file)
			if prev == file {
				how = "a pattern and a name, or two patterns, both give it"
			}
			out = append(out, PartProblem{i, fmt.Sprintf("the part %s comes twice from the list (%s); every part is read once", strconv.Quote(file), how)})
		}
		seen[path] = file
	}
	return out
}

// PartsTwins says of each part that is an earlier part's file (through a
// link, or another path to it) or a copy of its bytes (data.Twins) that
// its rows would be read twice, naming both parts, one problem a part
// (the later one): data.parts and ordplan fit --parts say it alike.
func PartsTwins(files, paths []string) []PartProblem {
	var out []PartProblem
	for _, t := range data.Twins(paths) {
		out = append(out, PartProblem{t.Second, fmt.Sprintf("the parts %s and %s %s, so the same rows would be read twice; every part is read once: leave one of them out (name the parts one by one, or give a pattern that matches only one of them)",
			strconv.Quote(files[t.First]), strconv.Quote(files[t.Second]), twinHow(t, files))})
	}
	return out
}

// twinHow says how two files of a list (named files) are one (data.Twin).
func twinHow(t data.Twin, files []string) string {
	switch {
	case t.SameFile && t.Link >= 0:
		other := t.First + t.Second - t.Link
		return fmt.Sprintf("are one file (%s is a symbolic link to %s)", strconv.Quote(files[t.Link]), strconv.Quote(files[other]))
	case t.SameFile:
		return "are one file (a hard link, or another path to the same file)"
	}
	return "hold the same bytes (sha256 " + t.SHA256 + ")"
}

var (
	dataDelimiterWords = data.DelimiterWords
	dataDecimalWords   = data.DecimalWords
	dataDelimiters     = data.Delimiters
	dataDecimalMarks   = map[string]rune{"point": '.', "comma": ','}
)

// charWord reads the word of key (one of words) into dst, as mapping.word;
// a value that is the character a word stands for (";" for semicolon, a
// tab for tab) is refused with the word to write, and dst takes that word,
// so that the data file is not also said to be read in another dialect.
func (d *decoder) charWord(m *mapping, key, what string, words []string, chars map[string]rune, dst *string) {
	v := m.get(key)
	if n := deref(v); n != nil && n.Kind == yaml.ScalarNode {
		for _, w := range words {
			if r := chars[w]; n.Value == string(r) {
				d.errorf(n, m.at(key), "%s: write the word %s for %q", unknownWord(what, n.Value, words), w, n.Value)
				*dst = w
				return
			}
		}
	}
	m.word(key, what, words, dst)
}

// decodeImputed reads data.imputed: file and column (one stacked file), or
// files (one per imputed set, at least two).
func (d *decoder) decodeImputed(n *yaml.Node) *Imputed {
	m := d.mapping(n, "data.imputed", imputedKeys)
	if m == nil || m.node == nil {
		return nil
	}
	im := &Imputed{}
	if v := m.get("file"); v != nil {
		im.File, _ = d.name(v, "data.imputed.file")
	}
	m.name("column", &im.Column)
	if v := m.get("files"); v != nil {
		im.Files, _ = d.names(v, "data.imputed.files")
	}
	switch {
	case im.Files != nil && (im.File != "" || im.Column != ""):
		d.errorf(n, "data.imputed", "give either file and column (one stacked file) or files (one file per imputed set), not both")
	case im.Files != nil && len(im.Files) < 2:
		d.errorf(m.get("files"), "data.imputed.files", "lists %d file; pooling over imputed data needs at least two imputed sets", len(im.Files))
	case im.Files == nil && (im.File == "") != (im.Column == ""):
		d.errorf(n, "data.imputed", "a stacked file needs both file and column (the imputation-number column)")
	case im.Files == nil && im.File == "":
		d.errorf(n, "data.imputed", "want file and column (one stacked file) or files (one file per imputed set)")
	}
	return im
}

// resolveDataPath places the data file relative to the plan's directory.
func resolveDataPath(dir, file string) string {
	if file == "" {
		return ""
	}
	f := filepath.FromSlash(file)
	if filepath.IsAbs(f) {
		return filepath.Clean(f)
	}
	return filepath.Join(dir, f)
}

// decodeOutcomes reads the list of outcomes.
func (d *decoder) decodeOutcomes(n *yaml.Node) []Outcome {
	if !d.nonEmpty(n, "outcomes", "outcome") {
		return nil
	}
	items, ok := d.list(n, "outcomes")
	if !ok {
		return nil
	}
	out := make([]Outcome, len(items)) // bad items stay, so indexes match the plan
	for i, it := range items {
		path := itemPath("outcomes", i)
		o := &out[i]
		m := d.mapping(it, path, outcomeKeys)
		if m == nil {
			continue
		}
		if m.node == nil {
			d.errorf(it, path, "want a mapping with keys column, categories, label; got null")
			continue
		}
		if v := m.required("column"); v != nil {
			o.Column, _ = d.name(v, m.at("column"))
		}
		if v := m.get("categories"); v != nil {
			o.Categories = d.categories(v, m.at("categories"))
		}
		m.text("label", &o.Label)
		if v := m.get("predictors"); v != nil && d.nonEmpty(v, m.at("predictors"), "predictor") {
			o.Predictors, o.Terms = d.decodeTerms(v, m.at("predictors"))
			if o.Predictors == nil {
				o.Predictors = []string{}
			}
		}
	}
	return out
}

// categories reads an ordered list of at least two distinct labels.
func (d *decoder) categories(n *yaml.Node, path string) []string {
	list, ok := d.names(n, path)
	if !ok || !d.clean(path) {
		return nil
	}
	if len(list) < 2 {
		d.errorf(deref(n), path, "an ordinal outcome needs at least 2 categories, got %d", len(list))
		return nil
	}
	return list
}
