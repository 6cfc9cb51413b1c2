package plan

import (
	"errors"
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
	if p.Data.Path == "" || !d.clean("data.file") {
		return
	}
	header, err := data.HeaderDialect(p.Data.Path, p.Data.Dialect())
	if err == nil && !data.IsWorkbook(p.Data.Path) && !data.IsParquet(p.Data.Path) {
		if raw, rerr := data.ReadFile(p.Data.Path); rerr == nil {
			if msg := data.SuggestDialect(raw, p.Data.Dialect()); msg != "" {
				key := "data.delimiter"
				if !strings.Contains(msg, "delimiter: ") {
					key = "data.decimal"
				}
				d.errAt(key, "data file %s: %s", p.Data.File, msg)
				return
			}
		}
	}
	if err != nil {
		var de *data.Error
		if errors.As(err, &de) && de.Line == 0 && strings.HasPrefix(de.Msg, "cannot open file") {
			where := ""
			if p.Data.Path != filepath.Clean(filepath.FromSlash(p.Data.File)) {
				where = " (looked for " + p.Data.Path + ")"
			}
			d.errAt("data.file", "cannot open the data file %s%s: %s", strconv.Quote(p.Data.File), where, openReason(de.Err))
		}
		return
	}
	missing := func(key, col string) {
		if col == "" || !d.clean(key) || slices.Contains(header, col) {
			return
		}
		d.errAt(key, "column %s is not in the data file %s%s", quote(col), p.Data.File, columnHint(col, header))
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
// separators, or else lists the columns of the file.
func columnHint(col string, header []string) string {
	for _, h := range header {
		if looseEqual(h, col, "-. ") {
			return `; did you mean "` + clip(h) + `"?`
		}
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
