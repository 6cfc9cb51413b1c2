package plan

import (
	"errors"
	"fmt"
	"io/fs"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"ordplan/runner/data"
)

// checkDataColumns opens the data file and checks that every column the
// plan names (outcomes, predictors, weights, offset, cluster) is in its
// header, reporting a missing one at the key that names it. A data file
// that cannot be opened is reported at data.file. Other problems with the
// file, including a bad header, are left to the data reader, which names
// the line of the data file.
func (d *decoder) checkDataColumns(p *Plan) {
	d.checkImputedTwins(p)
	d.checkOtherFiles(p)
	var header []string
	if p.Data.Parts != nil {
		var ok bool
		if header, ok = d.checkParts(p); !ok {
			return
		}
	} else {
		var ok bool
		if header, ok = d.dataHeader(p); !ok {
			return
		}
	}
	d.checkHeader(p, header)
}

// checkParts checks the parts of data.parts: every pattern matches a
// file, no file is listed twice, every part opens, has data rows
// (fileProblem) and has the columns of the first; it returns the first
// part's header.
func (d *decoder) checkParts(p *Plan) ([]string, bool) {
	if !d.clean("data.parts") || len(p.Data.PartPaths) == 0 {
		return nil, false
	}
	ok := true
	for _, pp := range slices.Concat(PartsTwice(p.Data.PartFiles, p.Data.PartPaths), PartsTwins(p.Data.PartFiles, p.Data.PartPaths)) {
		d.errAt(p.Data.PartKey(pp.Part), "%s", pp.Msg)
		ok = false
	}
	var first []string
	for i, path := range p.Data.PartPaths {
		file, key := p.Data.PartFiles[i], p.Data.PartKey(i)
		h, err := data.HeaderWithRows(path, p.Data.Dialect())
		if err != nil {
			if _, _, unopened := notOpened(err, path, file); unopened && strings.ContainsAny(file, "*?[") {
				d.errAt(key, "the pattern %s matches no file%s", strconv.Quote(file), lookedFor(path, file))
				ok = false
			} else if d.fileProblem(key, "the part", file, path, err, "every part needs rows: leave it out of data.parts") {
				ok = false
			}
			continue // other problems with a part are the reader's to name
		}
		if i == 0 {
			first = h
			if d.reportDialect(path, "data part "+file, p.Data.Dialect()) {
				ok = false
			}
		} else if first != nil {
			if data.OtherColumns(first, h) != "" {
				raw, _ := data.ReadFile(path) // only when the names differ
				d.errAt(key, "the part %s %s", file, data.PartColumns(first, p.Data.PartFiles[0], h, raw, p.Data.Dialect()))
				ok = false
			}
		}
	}
	return first, ok && first != nil
}

// checkImputedTwins reports imputed sets of data.imputed.files that are
// one file under two paths (a link; data.Twins): Rubin's rules would
// count one set twice. Two files of the same bytes are not refused (sets
// drawn apart may coincide where few values are missing): the run notes
// them (runner.ImputedCopies).
func (d *decoder) checkImputedTwins(p *Plan) {
	im := p.Data.Imputed
	if im == nil || len(im.Paths) < 2 || !d.clean("data.imputed.files") {
		return
	}
	for _, t := range data.Twins(im.Paths) {
		if t.SameFile {
			d.errAt("data.imputed.files", "imputed sets %d and %d (%s and %s) %s: one set counted twice understates the variance between the imputed sets, so intervals come out too narrow and tests reject too often; list each imputed set once",
				t.First+1, t.Second+1, strconv.Quote(im.Files[t.First]), strconv.Quote(im.Files[t.Second]), twinHow(t, im.Files))
		}
	}
}

// reportDialect reports, at data.delimiter or data.decimal, a CSV file
// (named in what) that looks written in another dialect than dl, with
// what check suggests; it says whether it did (never for a workbook, a
// Parquet file, or a file it cannot read).
func (d *decoder) reportDialect(path, what string, dl data.Dialect) bool {
	if data.IsWorkbook(path) || data.IsParquet(path) {
		return false
	}
	raw, err := data.ReadFile(path)
	if err != nil {
		return false
	}
	msg := data.SuggestDialect(raw, dl)
	if msg == "" {
		return false
	}
	key := "data.delimiter"
	if !strings.Contains(msg, "delimiter: ") {
		key = "data.decimal"
	}
	d.errAt(key, "%s: %s", what, msg)
	return true
}

// notOpened says whether err is the reader's failure to open the file
// (named file in the plan, looked for at path), with where it looked
// when that differs from the name (" (looked for PATH)") and why.
func notOpened(err error, path, file string) (where, reason string, ok bool) {
	var de *data.Error
	if !errors.As(err, &de) || de.Line != 0 || !strings.HasPrefix(de.Msg, "cannot open file") {
		return "", "", false
	}
	return lookedFor(path, file), openReason(de.Err), true
}

// lookedFor says where the file named file in the plan was looked for,
// " (looked for PATH)", when that differs from the name.
func lookedFor(path, file string) string {
	if path != filepath.Clean(filepath.FromSlash(file)) {
		return " (looked for " + path + ")"
	}
	return ""
}

// unreadableFile gives what makes the file at path no data file at all
// ("is empty (...)", "has a header line and no data rows after it", "is a
// folder, not a regular file: ...", "is gzip-compressed; ..."), when err
// is the reader's saying so.
func unreadableFile(err error) (string, bool) {
	var de *data.Error
	if !errors.As(err, &de) || de.Line != 0 {
		return "", false
	}
	switch {
	case errors.Is(err, data.ErrEmptyFile):
		return strings.TrimPrefix(de.Msg, "file "), true
	case errors.Is(err, data.ErrNoRows):
		return "has a header line and no data rows after it", true
	case errors.Is(err, data.ErrNotRegular), errors.Is(err, data.ErrFileFormat):
		return de.Msg, true
	}
	return "", false
}

// fileProblem reports at key a file the plan names there (file, looked
// for at path; what: "the data file", "the part", ...) that err, the
// reader's failure to read its header, says cannot be opened or is no
// data file at all (unreadableFile: empty, a header alone where rows are
// needed, not a regular file, not in a form ordplan reads); it says
// whether it did. needRows, when not "", follows the sentence of an
// empty file or a header alone ("every part needs rows: ..."). Other
// problems are the reader's to name, at the file's line.
func (d *decoder) fileProblem(key, what, file, path string, err error, needRows string) bool {
	if where, reason, unopened := notOpened(err, path, file); unopened {
		d.errAt(key, "cannot open %s %s%s: %s", what, strconv.Quote(file), where, reason)
		return true
	}
	if why, ok := unreadableFile(err); ok {
		if needRows != "" && (errors.Is(err, data.ErrEmptyFile) || errors.Is(err, data.ErrNoRows)) {
			why += "; " + needRows
		}
		d.errAt(key, "%s %s%s %s", what, strconv.Quote(file), lookedFor(path, file), why)
		return true
	}
	return false
}

// checkOtherFiles checks the other files the plan names, the imputed
// sets (data.imputed.file, data.imputed.files) and the new rows
// (inference.predict), as data.file and the parts are checked: one that
// cannot be opened, is no data file at all or has a header and no data
// rows is reported at its key (fileProblem), before anything is read.
func (d *decoder) checkOtherFiles(p *Plan) {
	dl := p.Data.Dialect()
	check := func(key, what, file, path string) {
		if file == "" || path == "" || !d.clean(key) {
			return
		}
		if _, err := data.HeaderWithRows(path, dl); err != nil {
			d.fileProblem(key, what, file, path, err, "")
		}
	}
	// With data.missing: impute the plan's check refuses data.imputed
	// (give one or the other): the sets are not read.
	if im := p.Data.Imputed; im != nil && !p.Data.Imputes() {
		check("data.imputed.file", "the file of imputed sets", im.File, im.Path)
		for i, f := range im.Files {
			if i < len(im.Paths) {
				check(itemPath("data.imputed.files", i), fmt.Sprintf("imputed set %d", i+1), f, im.Paths[i])
			}
		}
	}
	check("inference.predict", "the file of new rows", p.Inference.Predict, p.Inference.PredictPath)
}

// dataHeader reads the header of data.file, reporting a file that cannot
// be opened, has no data rows after its header (fileProblem) or is in a
// dialect that does not fit it.
func (d *decoder) dataHeader(p *Plan) ([]string, bool) {
	if p.Data.Path == "" || !d.clean("data.file") {
		return nil, false
	}
	header, err := data.HeaderWithRows(p.Data.Path, p.Data.Dialect())
	if err != nil {
		if !d.fileProblem("data.file", "the data file", p.Data.File, p.Data.Path, err, "") {
			d.reportDialect(p.Data.Path, "data file "+p.Data.File, p.Data.Dialect())
		}
		return nil, false
	}
	if d.reportDialect(p.Data.Path, "data file "+p.Data.File, p.Data.Dialect()) {
		return nil, false
	}
	return header, true
}

// checkHeader reports every column the plan names (outcomes, predictors,
// weights, offset, cluster, subset, rules) that the data's header lacks,
// at the key that names it.
func (d *decoder) checkHeader(p *Plan, header []string) {
	missing := func(key, col string) {
		if col == "" || !d.clean(key) || data.HasColumn(header, col) {
			return
		}
		d.errAt(key, "column %s is not in the data file %s%s", quote(col), p.Data.Name(), columnHint(col, header))
	}
	for i, o := range p.Outcomes {
		missing(itemPath("outcomes", i)+".column", o.Column)
	}
	for _, t := range p.Terms {
		if t.Source != "" && d.clean(t.Key) {
			missing(t.Key, t.Source)
		}
	}
	for _, o := range p.Outcomes {
		for _, t := range o.Terms {
			if t.Source != "" && d.clean(t.Key) {
				missing(t.Key, t.Source)
			}
		}
	}
	for _, c := range p.Categorical {
		missing(c.Key, c.Column)
	}
	for _, c := range p.Subset {
		missing(c.Key+".column", c.Column)
	}
	missing("data.weights", p.Data.Weights)
	missing("data.offset", p.Data.Offset)
	missing("data.cluster", p.Data.Cluster)
	for i, r := range p.Rules {
		if r.Within != "" {
			missing(itemPath("rules", i)+"."+r.Kind+".within", r.Within)
		}
	}
}

func openReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	if err == nil {
		return "unknown error"
	}
	return err.Error()
}

// columnHint suggests a column that differs only in letter case or
// separators (data.NearColumn), or else lists the columns of the file.
func columnHint(col string, header []string) string {
	if hint := data.SpacedColumn(col, header); hint != "" {
		return "; " + hint
	}
	if h, ok := data.NearColumn(col, header); ok {
		return `; did you mean "` + clip(h) + `"?`
	}
	const most = 12
	shown := header
	more := ""
	if len(header) > most {
		shown, more = header[:most], ", ..."
	}
	q := make([]string, len(shown))
	for i, h := range shown {
		q[i] = quote(h)
	}
	return "; its columns are " + strings.Join(q, ", ") + more
}
