package skeleton

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode"

	"ordplan/internal/words"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// Input is what the skeleton is written from.
type Input struct {
	DataFile string         // as the plan will name it (relative to the plan)
	Columns  []data.Profile // with Rows == 0 when only a header is known
	HaveData bool           // false: only the header is known
	Outcome  string         // chosen outcome column ("" = guess)
	// Dialect is how the data file was read (delimiter and decimal mark of
	// CSV text, sheet and header row of a workbook); DialectFound says
	// that the delimiter and decimal mark were read off the file.
	Dialect      data.Dialect
	DialectFound bool
}

// Kind says what a column seems to be.
type Kind struct {
	Word      string // numeric, binary, categorical, ordered?, identifier, text, unknown
	Describe  string // for the comment beside the column
	Candidate bool   // could be the ordinal outcome
}

// KindOf classifies a profiled column.
func KindOf(p data.Profile, haveData bool) Kind {
	if !haveData {
		return Kind{Word: "unknown", Describe: "no data yet: numeric, categorical or ordered?"}
	}
	miss := ""
	if p.Missing > 0 {
		miss = fmt.Sprintf("; %d of %d missing", p.Missing, p.Rows)
	}
	switch {
	case data.BreaksInName(p.Name):
		return Kind{Word: "badname", Describe: "its name holds a line break (or another control character), which a plan cannot write: rename the column in the file, on one line, to use it"}
	case p.Nested != "":
		return Kind{Word: "nested", Describe: p.Nested + ", a nested Parquet column: not readable by ordplan (write it as a flat column to use it)"}
	case p.Formatted != "":
		return Kind{Word: "formatted", Describe: fmt.Sprintf("numbers written with a currency sign or with grouped digits (%s): write them as plain numbers to use the column%s", strconv.Quote(p.Formatted), miss)}
	case len(p.Merged) > 0:
		ranges := p.Merged
		if len(ranges) > 3 {
			ranges = append(slices.Clone(ranges[:3]), "...")
		}
		return Kind{Word: "merged", Describe: fmt.Sprintf("merged cells (%s) cover some of its cells, which hold no value of their own: not readable by ordplan until they are unmerged and each row's value written in its own cell", strings.Join(ranges, ", "))}
	case p.Rows == p.Missing:
		return Kind{Word: "empty", Describe: "every cell is missing" + miss}
	case p.Numeric && p.Distinct == 2 && p.Min == 0 && p.Max == 1:
		return Kind{Word: "binary", Describe: "numeric 0/1" + miss}
	case p.Numeric && p.Integer && p.Many && p.Missing == 0 && p.Max-p.Min+1 == float64(p.Rows) && (p.Min == 0 || p.Min == 1):
		// 1..n (or 0..n-1) in n rows with more than MaxValues values: a row
		// number, not a measurement; as a predictor it would give the row
		// order an effect.
		return Kind{Word: "identifier", Describe: fmt.Sprintf("numeric, whole numbers from %s to %s in %d rows: a row number or identifier?", num(p.Min), num(p.Max), p.Rows)}
	case clusterLike(p):
		// Codes repeated over rows, as the ids of clinics or schools are:
		// a cluster column, or an identifier, not a measurement whose
		// numbers mean an amount.
		what := "text"
		if p.Numeric {
			what = fmt.Sprintf("numeric, whole numbers from %s to %s", num(p.Min), num(p.Max))
		}
		return Kind{Word: "cluster?", Describe: fmt.Sprintf("%s, %d distinct codes over %d rows (%.3g rows each on average): cluster ids (clinics, schools, ...) or identifiers, not an amount?%s",
			what, p.Count, p.Rows-p.Missing, float64(p.Rows-p.Missing)/float64(p.Count), miss)}
	case p.Numeric && p.Integer && !p.Many && p.Distinct >= 3 && p.Distinct <= 10:
		return Kind{Word: "ordered?", Candidate: true,
			Describe: fmt.Sprintf("integer codes %s (%d values%s): ordered categories, or a count?%s", strings.Join(p.Values, ", "), p.Distinct, zeroFraction(p), miss)}
	case p.Numeric:
		what := "numeric"
		if p.Integer {
			what = "numeric, whole numbers"
		}
		if p.ThousandsPoint != "" {
			miss += "; its " + thousandsMarks(p) + " " + thousandsLike(p) + ": see data.decimal"
		}
		return Kind{Word: "numeric", Describe: fmt.Sprintf("%s from %s to %s%s", what, num(p.Min), num(p.Max), miss)}
	case !p.Many && p.Distinct <= 12 && p.Distinct >= 3 && scaleLike(p.Values):
		return Kind{Word: "categorical", Candidate: true,
			Describe: fmt.Sprintf("text, %d values: %s (the words of an ordered scale?)%s", p.Distinct, strings.Join(p.Values, ", "), miss)}
	case !p.Many && p.Distinct <= 12:
		return Kind{Word: "categorical", Candidate: p.Distinct >= 3 && 2*p.Distinct <= p.Rows-p.Missing,
			Describe: fmt.Sprintf("text, %d values: %s (categorical; ordered?)%s", p.Distinct, strings.Join(p.Values, ", "), miss)}
	case !p.Many:
		return Kind{Word: "categorical", Describe: fmt.Sprintf("text, %d values: %s, ... (categorical, or an id?)%s", p.Distinct, strings.Join(p.Values[:8], ", "), miss)}
	}
	return Kind{Word: "text", Describe: fmt.Sprintf("text, more than %d values: an identifier or free text?%s", data.MaxValues, miss)}
}

// shownName is a column's name as a comment of the plan shows it: quoted
// with its escapes when it holds a line break or another control
// character (data.BreaksInName), which would end the comment.
func shownName(name string) string {
	if data.BreaksInName(name) {
		return strconv.Quote(name)
	}
	return name
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// Write gives the plan text.
func Write(in Input) ([]byte, error) {
	kinds := make([]Kind, len(in.Columns))
	for i, c := range in.Columns {
		kinds[i] = KindOf(c, in.HaveData)
	}
	outcome, guessed, err := in.outcome(kinds)
	if err != nil {
		return nil, err
	}
	var preds, skipped, constant, weighty, clustery []string
	var cats []int // text columns used as categorical predictors
	for i, c := range in.Columns {
		if i == outcome {
			continue
		}
		switch {
		case c.Numeric && weightLike(c):
			weighty = append(weighty, c.Name)
		case kinds[i].Word == "nested" || kinds[i].Word == "merged" || kinds[i].Word == "formatted" || kinds[i].Word == "badname":
			// Described as not readable above; never a predictor.
		case kinds[i].Word == "cluster?":
			clustery = append(clustery, c.Name)
		case kinds[i].Word == "numeric" && in.HaveData && constantValue(c) != "":
			// A range needs its minimum below its maximum, and a
			// predictor that does not vary has no effect to estimate.
			constant = append(constant, fmt.Sprintf("%s (every value %s)", c.Name, constantValue(c)))
		case kinds[i].Word == "numeric" || kinds[i].Word == "binary" || kinds[i].Word == "ordered?" || kinds[i].Word == "unknown":
			preds = append(preds, c.Name)
		case kinds[i].Word == "categorical" && !c.Many && c.Distinct >= 2 && c.Distinct <= 12 && 2*c.Distinct <= c.Rows-c.Missing:
			preds = append(preds, c.Name)
			cats = append(cats, i)
		default:
			skipped = append(skipped, c.Name)
		}
	}

	var b strings.Builder
	w := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
	source := ""
	if in.HaveData {
		rows := 0
		if len(in.Columns) > 0 {
			rows = in.Columns[0].Rows
		}
		source = fmt.Sprintf("%d data rows", rows)
	}
	from := in.DataFile
	if in.HaveData {
		w("# Analysis plan started by `ordplan init` from %s (%s).", from, source)
	} else {
		from = "the header line" // in.DataFile is then the placeholder of data.file
		w("# Analysis plan started by `ordplan init` from a header line.")
	}
	w("# Edit every line marked EDIT, read the others, then check and freeze the plan")
	w("# before the data are analysed:")
	w("#   ordplan check PLAN.yaml --no-data      (or without --no-data once the data exist)")
	w("#   ordplan freeze PLAN.yaml --registration ID")
	w("# Paths are relative to this file. `null` means \"not set\".")
	w("version: 1")
	w("title: EDIT the title of the report")
	w("seed: 1                  # fixes every random draw (constrained-model starts, simulations)")
	w("")
	w("# The columns of %s and what they seem to be:", from)
	width := 0
	for _, c := range in.Columns {
		width = max(width, len(shownName(c.Name)))
	}
	for i, c := range in.Columns {
		role := ""
		switch {
		case i == outcome && guessed:
			role = "  <- outcome (guessed: see outcomes)"
		case i == outcome:
			role = "  <- outcome"
		case contains(weighty, c.Name):
			role = "  (weights? not a predictor below: see data.weights)"
		case contains(clustery, c.Name):
			role = "  (clusters? not a predictor below: see data.cluster)"
		case contains(skipped, c.Name):
			role = "  (not a predictor below: declare it or leave it out)"
		}
		if c.Hidden {
			// Read as data all the same: often an old version of a column.
			role += "  (hidden in the sheet, read as data: check that the plan should use it)"
		}
		w("#   %-*s  %s%s", width, shownName(c.Name), kinds[i].Describe, role)
	}
	w("")
	w("data:")
	w("  file: %s", yamlString(in.DataFile))
	writeDialect(w, in)
	w("  missing: drop           # drop rows with a missing value (counted in the report), refuse, or impute (multiple imputation by chained equations, data.imputation)")
	w("  missing_values: [\"\", \"NA\", \"NaN\", \".\"]   # cells that mean \"missing\"")
	if len(weighty) > 0 {
		look := " looks"
		if len(weighty) > 1 {
			look = " look"
		}
		var fractional []string
		for _, c := range in.Columns {
			if contains(weighty, c.Name) && !c.Integer {
				fractional = append(fractional, c.Name)
			}
		}
		kind := ""
		if len(fractional) > 0 {
			// Frequency weights are counts: the reader refuses others (D33).
			kind = fmt.Sprintf(" (%s not whole numbers: sampling weights, weight_kind: sampling; frequency weights are counts)", words.AndList(fractional))
		}
		w("  weights: null           # a column of case weights (and weight_kind: frequency or sampling); %s%s like weights%s", words.AndList(weighty), look, kind)
	} else {
		w("  weights: null           # a column of case weights")
	}
	w("  offset: null            # a known term added to x'b: L = tau - x'b - offset")
	if len(clustery) > 0 {
		look := " looks"
		if len(clustery) > 1 {
			look = " look"
		}
		w("  cluster: null           # a column of cluster ids (needs covariance: clustered); %s%s like cluster ids or identifiers (a predictor only as a categorical column, one effect per cluster)", words.AndList(clustery), look)
	} else {
		w("  cluster: null           # a column of cluster ids (needs covariance: clustered)")
	}
	w("")
	w("outcomes:")
	if outcome >= 0 {
		c := in.Columns[outcome]
		if guessed {
			w("  - column: %s   # EDIT: guessed from the columns; check that it is the outcome", yamlString(c.Name))
		} else {
			w("  - column: %s", yamlString(c.Name))
		}
		switch {
		case in.HaveData && kinds[outcome].Candidate && !c.Numeric:
			w("    categories: [%s]   # EDIT: put them in order, lowest first", yamlList(naturalOrder(c.Values)))
		case in.HaveData && c.Numeric && !c.Many && data.StrayCodeAt(c.Values) >= 0:
			code := c.Values[data.StrayCodeAt(c.Values)]
			w("    categories: [%s]   # EDIT: code %s lies apart from the others, as codes for \"don't know\" or a missing answer often do: if it is not a point of the scale, remove it here and list it as missing (dictionary: %s {missing: [\"%s\"]})%s", yamlList(c.Values), code, yamlString(c.Name)+":", code, zeroFraction(c))
		case in.HaveData && c.Numeric && !c.Many:
			w("    categories: [%s]   # lowest first; integer codes as found%s", yamlList(c.Values), zeroFraction(c))
		default:
			w("    categories: null     # EDIT: the categories in order, lowest first")
		}
		w("    label: %s", yamlString(c.Name))
	}
	w("")
	if len(cats) > 0 {
		w("# Text columns read as categorical predictors: levels in the order found")
		w("# (EDIT: order them, pick the reference; ordered: true if they are ordered).")
		w("categorical:")
		for _, i := range cats {
			c := in.Columns[i]
			w("  %s {levels: [%s], reference: %s}", yamlString(c.Name)+":", yamlList(c.Values), yamlString(c.Values[0]))
		}
		w("")
	}
	if len(preds) == 0 {
		w("predictors: [EDIT]       # no numeric column was found")
	} else {
		w("predictors: [%s]", yamlList(preds))
	}
	if len(skipped) > 0 {
		w("# Not listed: %s (empty columns, row numbers or identifiers, or text with too many values for a categorical predictor).", strings.Join(skipped, ", "))
	}
	if len(constant) > 0 {
		w("# Not listed, the same number in every row of the file: %s (a predictor that does not vary has no effect to estimate).", strings.Join(constant, ", "))
	}
	w("")
	if len(preds) > 0 {
		w("# What each column holds: check and run validate the data file against it and")
		w("# the report prints it. Numeric columns: range [min, max] or values; any column:")
		w("# its own missing-value codes (missing: [\"-9\"]), a label and a unit.")
		w("dictionary:")
		// Each column found by its name once (a file of 100000 columns
		// took minutes when each was searched for).
		index := make(map[string]int, len(in.Columns))
		for i := len(in.Columns) - 1; i >= 0; i-- {
			index[in.Columns[i].Name] = i // the first of a name, as a search from the start
		}
		for _, name := range preds {
			i := index[name]
			c, k := in.Columns[i], kinds[i]
			key := fmt.Sprintf("  %-*s ", width+1, yamlString(c.Name)+":")
			switch {
			case k.Word == "categorical":
				w("%s{label: null, unit: null}   # EDIT the label (levels: categorical.%s)", key, c.Name)
			case k.Word == "binary" || k.Word == "ordered?":
				w("%s{values: [%s], label: null, unit: null}   # EDIT the label", key, yamlList(c.Values))
			case k.Word == "numeric" && (lowCodes(c) || topCodes(c)):
				// -9 below values that are all 0 or more, 999 far above
				// the others: missing-value codes, offered as the
				// column's own (the line is to be edited anyway).
				lo, hi := c.Min, c.Max
				var codes, why []string
				if lowCodes(c) {
					lo = c.MinOther
					low := words.Each(c.Codes, num)
					codes = append(codes, low...)
					why = append(why, fmt.Sprintf("%s, %s below values that are all 0 or more", words.AndList(low), codeLike(len(low))))
				}
				if topCodes(c) {
					hi = c.MaxOther
					top := words.Each(c.TopCodes, num)
					codes = append(codes, top...)
					why = append(why, fmt.Sprintf("%s, %s far above the other values", words.AndList(top), codeLike(len(top))))
				}
				w("%s{range: [%s, %s], missing: [%s], label: null, unit: null}   # EDIT: the possible range (observed %s to %s, and %s: check)",
					key, num(lo), num(hi), yamlList(codes), num(lo), num(hi), strings.Join(why, "; and "))
			case k.Word == "numeric":
				w("%s{range: [%s, %s], label: null, unit: null}   # EDIT: the possible range (observed %s to %s)", key, num(c.Min), num(c.Max), num(c.Min), num(c.Max))
			default:
				w("%s{range: null, label: null, unit: null}   # EDIT: the possible range (or values), label and unit", key)
			}
		}
		w("")
	}
	w("models:")
	w("  approaches: [cumulative, stage, adjacent]")
	w("  direction: forward      # stage models only: forward | backward")
	w("  effects: [parallel, nonparallel]  # also: partial, constrained (with partial: free: [...]), stereotype")
	w("  links: [logit]          # %s", strings.Join(fit.LinkWords.Names(), " | "))
	w("")
	w("tests:")
	w("  parallel_lines: [brant, lr, score, wald]")
	w("  alpha: 0.05")
	w("")
	w("# Rules run in order: the reject_ rules drop fits, the last rule picks one.")
	w("rules:")
	w("  - reject_unconverged: true")
	w("  - reject_negative_probabilities: true")
	w("  - reject_if_test_rejects: {test: lr, alpha: 0.05}")
	w("  - prefer_simpler: {by: bic, margin: 2}")
	w("")
	w("covariance: observed      # %s", strings.Join(fit.CovarianceWords.Names(), " | "))
	w("")
	w("report:")
	w("  confidence_level: 0.95")
	w("  timestamp: false        # keep reports byte-identical between runs")
	return []byte(b.String()), nil
}

// thousandsMarks names the decimal marks that look like thousands
// separators in a column (data.Profile.ThousandsPoint): points, or commas
// in a file read with a decimal comma.
func thousandsMarks(c data.Profile) string {
	if strings.Contains(c.ThousandsPoint, ",") {
		return "commas"
	}
	return "points"
}

// thousandsLike says how a column's points look like thousands
// separators (data.Profile.ThousandsPoint).
func thousandsLike(c data.Profile) string {
	if c.ThousandsBeside == "" {
		return fmt.Sprintf("may separate thousands (every value has one and three digits after it, such as %s)", c.ThousandsPoint)
	}
	return fmt.Sprintf("look like thousands separators (%s beside %s)", c.ThousandsPoint, c.ThousandsBeside)
}

// outcome is the index of the outcome column (-1: none), and whether it
// was guessed, not given (Input.Outcome); kinds are the columns' kinds.
func (in Input) outcome(kinds []Kind) (int, bool, error) {
	outcome := -1
	for i, c := range in.Columns {
		if c.Name == in.Outcome {
			outcome = i
		}
	}
	if in.Outcome != "" && outcome < 0 {
		var names []string
		for _, c := range in.Columns {
			names = append(names, strconv.Quote(c.Name))
		}
		return -1, false, fmt.Errorf("--outcome: column %q is not in the file (its columns are %s)", in.Outcome, strings.Join(names, ", "))
	}
	if outcome >= 0 && in.Columns[outcome].Nested != "" {
		return -1, false, fmt.Errorf("--outcome: column %q is %s, a nested Parquet column, which ordplan does not read: write it as a flat column (one value per row), or name another", in.Outcome, in.Columns[outcome].Nested)
	}
	if outcome >= 0 {
		return outcome, false, nil
	}
	best := 0
	for i, c := range in.Columns {
		if sc := outcomeScore(c, kinds[i]); sc > best {
			outcome, best = i, sc
		}
	}
	if outcome < 0 {
		outcome = outcomeByName(in.Columns)
	}
	return outcome, true, nil
}

// Notes are the remarks `ordplan init` prints beside the plan Write
// writes: outcome codes the file writes with a zero fraction, listed as
// the codes they are read as.
func Notes(in Input) []string {
	kinds := make([]Kind, len(in.Columns))
	for i, c := range in.Columns {
		kinds[i] = KindOf(c, in.HaveData)
	}
	o, _, err := in.outcome(kinds)
	if err != nil || o < 0 || !in.HaveData {
		return nil
	}
	if c := in.Columns[o]; c.ZeroFraction != "" && c.Numeric && !c.Many {
		return []string{fmt.Sprintf("the outcome %s writes its codes with a zero fraction (%s): the plan lists them as the codes they are read as (%s), which match the cells however the file writes them", c.Name, c.ZeroFraction, strings.Join(c.Values, ", "))}
	}
	return nil
}

// zeroFraction says, for a column of integers some of which the file
// writes with a zero fraction (data.Profile.ZeroFraction), that its values
// are listed as the integers the reader reads them as; "" otherwise.
func zeroFraction(c data.Profile) string {
	if c.ZeroFraction == "" {
		return ""
	}
	whole, _, _ := strings.Cut(strings.ReplaceAll(c.ZeroFraction, ",", "."), ".")
	return fmt.Sprintf("; the file writes codes with a zero fraction (%s is read as the code %s)", c.ZeroFraction, whole)
}

// lowCodes reports whether a numeric column holds conventional
// missing-value codes (-9, -99, ...) below values that are all 0 or more.
func lowCodes(c data.Profile) bool {
	return len(c.Codes) > 0 && c.MinOther >= 0 && c.MinOther <= c.Max
}

// topCodes reports whether a numeric column holds conventional codes
// (99, 999, ...) far above its other values (data.Profile.TopCodes).
func topCodes(c data.Profile) bool {
	return len(c.TopCodes) > 0 && !math.IsInf(c.MaxOther, -1) && c.MaxOther >= c.MinOther
}

// constantValue is the one value of a numeric column that holds no other
// (besides what look like missing-value codes), as written in a plan; ""
// when it varies or holds no value.
func constantValue(c data.Profile) string {
	lo, hi := c.Min, c.Max
	if lowCodes(c) {
		lo = c.MinOther
	}
	if topCodes(c) {
		hi = c.MaxOther
	}
	if c.Rows-c.Missing <= 0 || math.IsInf(lo, 0) || math.IsNaN(lo) || lo != hi {
		return ""
	}
	return num(lo)
}

// codeLike says that n codes look like missing-value codes.
func codeLike(n int) string {
	if n > 1 {
		return "which look like missing-value codes"
	}
	return "which looks like a missing-value code"
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

// yamlString quotes s when YAML would read it as something else.
func yamlString(s string) string {
	plain := s != ""
	for _, r := range s {
		if !(r == '_' || r == '-' || r == '.' || r == '/' || r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z') {
			plain = false
		}
	}
	switch strings.ToLower(s) {
	case "null", "true", "false", "yes", "no", "on", "off", "~", "y", "n":
		plain = false
	}
	if plain && (s[0] == '-' || s[0] == '.') {
		plain = false
	}
	if plain {
		return s
	}
	return strconv.Quote(s)
}

func yamlList(xs []string) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = yamlString(x)
	}
	return strings.Join(q, ", ")
}

// writeDialect writes the data keys that say how the file is read: the
// delimiter and decimal mark of CSV text, the sheet and header row of a
// workbook (a Parquet file needs none).
func writeDialect(w func(string, ...any), in Input) {
	d := in.Dialect
	switch {
	case data.IsParquet(in.DataFile) || data.IsWorkbook(in.DataFile):
		if data.IsWorkbook(in.DataFile) {
			if d.Sheet != "" {
				w("  sheet: %s", yamlString(d.Sheet))
			} else {
				w("  # sheet: NAME        # the worksheet to read (default: the one visible sheet with cells filled)")
			}
			w("  header_row: %-10d # the sheet row holding the column names", max(d.HeaderRow, 1))
		}
		if d.DecimalComma {
			w("  decimal: comma          # numbers held as text are written 1,5 (number cells are numbers either way)")
		}
		for _, c := range in.Columns {
			if c.CommaNumber != "" {
				w("  # EDIT: column %s holds numbers as text written with a decimal comma (%s): add decimal: comma here to read them as numbers (ordplan init --decimal comma)", c.Name, yamlString(c.CommaNumber))
				break
			}
		}
	default:
		how := ""
		if in.HaveData && in.DialectFound {
			how = " (as the file's first lines show)"
		}
		w("  delimiter: %-12s # %s%s", d.DelimiterWord(), strings.Join(data.DelimiterWords, " | "), how)
		w("  decimal: %-14s # %s: 1.5 or 1,5", d.DecimalWord(), strings.Join(data.DecimalWords, " | "))
		for _, c := range in.Columns {
			switch {
			case c.ThousandsPoint != "" && c.ThousandsBeside != "":
				w("  # EDIT: the %s of column %s %s, which check and run refuse: write the file's numbers without them", thousandsMarks(c), c.Name, thousandsLike(c))
			case c.ThousandsPoint != "":
				w("  # EDIT: the %s of column %s %s: if they do, write the file's numbers without them", thousandsMarks(c), c.Name, thousandsLike(c))
			}
		}
	}
}

// The guess of the outcome: every candidate column (integer codes with 3
// to 10 values, or text with 3 to 12 values) gets a score, and the
// highest wins (the first column among equals):
//
//   - text whose values are the words of an ordered scale (all values but
//     at most one hold a word of scaleWords, such as never/often,
//     unsafe/safe, poor/good, mild/severe, or a degree such as very,
//     somewhat, strongly): 4;
//   - integer codes: 2 (0 when every row has its own value);
//   - other text with few values (at most half as many values as rows): 1;
//   - a name that says rating or order (a word beginning rating, score,
//     grade, level, severity, stage, ...): +1; integer codes under a name
//     that says count, measure or identifier (count, number, visits, days,
//     age, year, n, id, ...): -2;
//   - numbers under a name that says weights (weight, wt, fw, sw, ...:
//     weightLike): never (they are offered as data.weights).
//
// So a four-value text scale on a small file beats an integer column, and
// integer codes beat a text column of places or groups. When no column is
// a candidate (a header line without data), the name alone decides:
// outcomeByName.
func outcomeScore(c data.Profile, k Kind) int {
	if !k.Candidate {
		return 0
	}
	name := strings.ToLower(c.Name)
	score := 1
	switch {
	case c.Numeric && c.Distinct == c.Rows-c.Missing:
		return 0 // every row its own value: an identifier or a measure
	case c.Numeric && weightLike(c):
		return 0 // case weights: data.weights, not the outcome
	case c.Numeric:
		score = 2
		if hasAny(name, countNames) {
			score -= 2
		}
	case scaleLike(c.Values):
		score = 4
	}
	if hasAny(name, orderNames) {
		score++
	}
	return max(score, 0)
}

// scaleWords are words of ordered answer scales (frequency, agreement,
// quality, amount, severity, change, and adjectives with their negation),
// and words of degree.
var scaleWords = map[string]bool{}

func init() {
	for _, w := range strings.Fields(`never rarely seldom sometimes occasionally often frequently usually always
		disagree agree neutral neither undecided poor fair good excellent bad average
		none low medium moderate high little some much mild severe worse same better
		unchanged improved worsened small large safe unsafe likely unlikely satisfied
		dissatisfied unsatisfied happy unhappy important unimportant comfortable uncomfortable
		easy difficult hard slight slightly partial partly complete full minimal minor major marked
		substantial strong weak
		very extremely somewhat slightly fairly quite not strongly completely totally rather`) {
		scaleWords[w] = true
	}
}

// orderNames and countNames begin words of column names (split at every
// character that is not a letter) that say rating or order, and count or
// measure.
var (
	orderNames = []string{"rating", "score", "grade", "level", "severity", "satisf", "agree", "stage", "rank", "scale"}
	countNames = []string{"count", "number", "num", "n", "id", "visit", "times", "day", "age", "year", "size"}
)

// outcomeByName guesses the outcome among columns without values to judge
// (a header line): the first whose name says rating or order, else the
// first whose name says neither count, measure or identifier (countNames,
// idName), else the first column.
func outcomeByName(cols []data.Profile) int {
	for i, c := range cols {
		if hasAny(strings.ToLower(c.Name), orderNames) && c.Nested == "" {
			return i
		}
	}
	for i, c := range cols {
		name := strings.ToLower(c.Name)
		if !hasAny(name, countNames) && !idName(c.Name) && c.Nested == "" {
			return i
		}
	}
	for i, c := range cols {
		if c.Nested == "" {
			return i
		}
	}
	return -1
}

// weightNames begin words of the names of weight columns (one or two
// letters: the whole word).
var weightNames = []string{"weight", "wgt", "wt", "fw", "sw", "pw"}

// bodyWeightWords, beside a weight name, say that the column measures a
// weight (weight_kg, body weight, birth_weight_g), a predictor, not case
// weights.
var bodyWeightWords = []string{"kg", "kgs", "kilo", "kilos", "kilogram", "kilograms", "g", "gram", "grams", "lb", "lbs", "pound", "pounds", "oz", "body", "birth", "baby", "infant"}

// weightLike reports whether a numeric column looks like case weights: a
// weight name without a word of a measured weight (bodyWeightWords) and
// no negative value.
func weightLike(c data.Profile) bool {
	name := strings.ToLower(c.Name)
	return c.Numeric && c.Min >= 0 && hasAny(name, weightNames) && !slices.ContainsFunc(strings.FieldsFunc(name, func(r rune) bool { return !unicode.IsLetter(r) }), func(w string) bool { return slices.Contains(bodyWeightWords, w) })
}

// idWords are the words that, ending a column's name, say the column holds
// identifiers or the ids of clusters (clinic, school_id, ward_no, ClinicID).
// A name whose last word is something else (class_size, subject_age,
// household_income) names a measurement of the unit, not its id.
var idWords = map[string]bool{}

// idTails end a name after an id word without changing what it names
// (ward_no, clinic_number).
var idTails = map[string]bool{"no": true, "nr": true, "num": true, "number": true}

func init() {
	for _, w := range strings.Fields(`id ids identifier code key record row subject participant respondent
		patient case uuid clinic cluster school site centre center hospital hosp practice household
		village ward family class team`) {
		idWords[w] = true
	}
}

// nameWords splits a column name into lower-case words: at every character
// that is not a letter and where a lower-case letter meets a capital
// (ClinicID: clinic, id).
func nameWords(name string) []string {
	var words []string
	var cur []rune
	var prev rune
	for _, r := range name {
		if !unicode.IsLetter(r) || (unicode.IsUpper(r) && unicode.IsLower(prev)) {
			if len(cur) > 0 {
				words = append(words, strings.ToLower(string(cur)))
				cur = cur[:0]
			}
		}
		if unicode.IsLetter(r) {
			cur = append(cur, r)
		}
		prev = r
	}
	if len(cur) > 0 {
		words = append(words, strings.ToLower(string(cur)))
	}
	return words
}

// idName reports whether a column's name says identifier or cluster: its
// last word is an id word (idWords), or an id word followed by no, nr, num
// or number.
func idName(name string) bool {
	w := nameWords(name)
	if len(w) >= 2 && idTails[w[len(w)-1]] {
		w = w[:len(w)-1]
	}
	return len(w) > 0 && idWords[w[len(w)-1]]
}

// clusterLike reports whether a column holds codes repeated over rows, as
// the ids of clinics or schools do: more than 10 distinct values, each in
// two rows or more on average, that are whole numbers or texts under a
// name that says identifier or cluster (idName: clinic, school_id), or
// texts of a few letters and a number (c1..c48) when there are more than
// MaxValues of them. Counts alone cannot tell clinic ids 1..48 from hours
// 0..50, so an unnamed whole-number column stays a predictor. Such a
// column is offered as data.cluster, not as a predictor.
func clusterLike(p data.Profile) bool {
	n := p.Rows - p.Missing
	if p.Count <= 10 || 2*p.Count > n || weightLike(p) {
		return false
	}
	switch {
	case p.Numeric && !p.Integer:
		return false
	case !p.Numeric && p.Many && codeLabels(p.Values):
		return true
	}
	return idName(p.Name)
}

// codeLabels reports whether every text is a few letters (the same for
// all) followed by a number, as c1, c2, ..., c48.
func codeLabels(values []string) bool {
	prefix := ""
	for i, v := range values {
		j := strings.IndexFunc(v, unicode.IsDigit)
		if j < 0 || j > 4 || strings.TrimLeftFunc(v[j:], unicode.IsDigit) != "" {
			return false
		}
		if i == 0 {
			prefix = v[:j]
		} else if v[:j] != prefix {
			return false
		}
	}
	return len(values) > 0
}

// scaleLike reports whether text values look like the points of an
// ordered scale: all but at most one (and at least two) hold a scale word.
func scaleLike(values []string) bool {
	hits := 0
	for _, v := range values {
		for _, w := range strings.FieldsFunc(strings.ToLower(v), func(r rune) bool { return !unicode.IsLetter(r) }) {
			if scaleWords[w] {
				hits++
				break
			}
		}
	}
	return hits >= 2 && hits >= len(values)-1
}

// hasAny reports whether a word of the name begins with one of the
// prefixes (a prefix of one or two letters, such as "n" or "id", must be
// the whole word).
func hasAny(name string, prefixes []string) bool {
	for _, w := range strings.FieldsFunc(name, func(r rune) bool { return !unicode.IsLetter(r) }) {
		for _, p := range prefixes {
			if strings.HasPrefix(w, p) && (len(p) > 2 || w == p) {
				return true
			}
		}
	}
	return false
}

// naturalOrder is labels sorted with the numbers inside them compared as
// numbers (c2 before c12, q1.2 before q1.10) and the text between them
// as text: a first guess at the order of an outcome's text labels, which
// the user checks (the line stays marked EDIT).
func naturalOrder(labels []string) []string {
	out := slices.Clone(labels)
	slices.SortStableFunc(out, func(a, b string) int {
		if c := naturalCompare(a, b); c != 0 {
			return c
		}
		return strings.Compare(a, b)
	})
	return out
}

// naturalCompare compares a and b run by run: runs of ASCII digits by
// their value (then the one with fewer leading zeros first), other runs
// byte by byte.
func naturalCompare(a, b string) int {
	digit := func(c byte) bool { return '0' <= c && c <= '9' }
	run := func(s string, i int) int {
		j := i + 1
		for j < len(s) && digit(s[j]) == digit(s[i]) {
			j++
		}
		return j
	}
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		ei, ej := run(a, i), run(b, j)
		x, y := a[i:ei], b[j:ej]
		switch {
		case digit(a[i]) && digit(b[j]):
			tx, ty := strings.TrimLeft(x, "0"), strings.TrimLeft(y, "0")
			if c := cmp.Compare(len(tx), len(ty)); c != 0 {
				return c
			}
			if c := strings.Compare(tx, ty); c != 0 {
				return c
			}
			if c := cmp.Compare(len(x), len(y)); c != 0 {
				return c
			}
		default:
			if c := strings.Compare(x, y); c != 0 {
				return c
			}
		}
		i, j = ei, ej
	}
	return cmp.Compare(len(a)-i, len(b)-j)
}
