package plan

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"gopkg.in/yaml.v3"

	"ordplan/runner/fit"
)

// MaxPlanBytes is the largest plan file Load reads.
const MaxPlanBytes = 4 << 20

// Load reads the plan file at path (ReadFile), checks it and applies
// defaults. Unlike Parse it also opens the data file and checks that every
// column the plan names is in its header, so that a misspelt column is
// reported at its line in the plan.
func Load(path string) (*Plan, error) {
	src, err := ReadFile(path)
	if err != nil {
		return nil, err
	}
	return parse(src, path, true, nil)
}

// ReadFile reads the plan file at path, for every command that takes one.
// A plan is a short text file: a named pipe, a device, a folder or a huge
// file is refused before it is read. A problem is one of the plan (Errors,
// "PLAN: message"): a file that does not exist says so, one that cannot
// be read gives the reason.
func ReadFile(path string) ([]byte, error) {
	fi, err := os.Stat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, Errors{{File: path, Msg: "the plan file does not exist: check its name and folder"}}
	case err != nil:
		return nil, Errors{{File: path, Msg: "cannot read the plan file: " + pathReason(err)}}
	case !fi.Mode().IsRegular():
		return nil, Errors{{File: path, Msg: "is not a regular file (a named pipe, a device or a folder): give the plan as a file"}}
	case fi.Size() > MaxPlanBytes:
		return nil, Errors{{File: path, Msg: fmt.Sprintf("has %d bytes; a plan is a short text file of at most %d bytes", fi.Size(), MaxPlanBytes)}}
	}
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, Errors{{File: path, Msg: "cannot read the plan file: " + pathReason(err)}}
	}
	return src, nil
}

// pathReason is the reason of a file-system error without the operation
// and the path the message already names ("permission denied").
func pathReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Parse checks the plan in src, read from path, and applies defaults. On
// failure the error is an Errors value listing every problem found. Parse
// does not look at the data file.
func Parse(src []byte, path string) (*Plan, error) {
	return parse(src, path, false, nil)
}

// The bounds of a number of rows simulated from a plan's assumptions, the
// one bound of assumptions.n and of the sizes given on the command line
// (rehearse --n, power --n).
const (
	MinSimulatedRows = 10
	MaxSimulatedRows = 10_000_000
)

// Rows are the rows a command simulates from a plan's assumptions.
type Rows struct {
	// Sizes are the numbers of rows simulated, given by the command-line
	// option Flag (such as "--n"); none when the command simulates
	// assumptions.n rows, stated or by default.
	Sizes []int
	Flag  string
}

// ParseSimulation is Parse for a command that simulates rows from the
// plan's assumptions: what the rows must hold (A27) is checked against
// the rows the command simulates, not against assumptions.n alone.
func ParseSimulation(src []byte, path string, rows Rows) (*Plan, error) {
	return parse(src, path, false, &rows)
}

func parse(src []byte, path string, withData bool, rows *Rows) (*Plan, error) {
	d := newDecoder(path)
	d.rows = rows
	root, perr := readYAML(src, path)
	if perr != nil {
		return nil, Errors{perr}
	}
	sum := sha256.Sum256(src)
	p := &Plan{Path: path, Dir: filepath.Dir(path), Hash: hex.EncodeToString(sum[:])}
	d.decodePlan(root, p)
	d.applyDefaults(p)
	// The sensitivity analyses are read before the plan's checks, which
	// count the columns they use among the plan's (UsedColumns), and
	// finished after them (their problems that the plan has too are said
	// once).
	var sens *sensitivityRead
	if v := d.nodes["sensitivity"]; !isNull(v) {
		sens = d.readSensitivity(root, v, p, withData)
	}
	d.check(p)
	if withData {
		d.checkDataColumns(p)
	}
	if sens != nil {
		d.finishSensitivity(sens, p)
	}
	if len(d.errs) > 0 {
		sortErrors(d.errs)
		return nil, d.errs
	}
	p.Unedited = d.unedited(src, root)
	sortErrors(d.warns)
	p.Warnings = d.warns
	return p, nil
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// readYAML parses src as exactly one YAML document and gives its root node.
func readYAML(src []byte, path string) (root *yaml.Node, e *Error) {
	defer func() {
		if r := recover(); r != nil {
			root, e = nil, &Error{File: path, Msg: fmt.Sprintf("not valid YAML (parser failed: %v)", r)}
		}
	}()
	if e := notUTF8(src, path); e != nil {
		return nil, e
	}
	dec := yaml.NewDecoder(bytes.NewReader(src))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, &Error{File: path, Msg: "plan file is empty"}
		}
		return nil, tabError(syntaxError(path, err), src)
	}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case errors.Is(err, io.EOF):
	case err != nil:
		return nil, syntaxError(path, err)
	default:
		return nil, &Error{File: path, Line: next.Line, Col: next.Column,
			Msg: "a plan file holds one YAML document, but a second one starts here"}
	}
	if len(doc.Content) == 0 || isNull(doc.Content[0]) {
		return nil, &Error{File: path, Msg: "plan file is empty"}
	}
	if e := mergeKey(doc.Content[0], "", path); e != nil {
		return nil, e
	}
	return doc.Content[0], nil
}

// notUTF8 refuses a plan that is not UTF-8 text (a file saved as
// Windows-1252 or Latin-1), naming the line, the column and the first byte
// that is not UTF-8; nil when it is UTF-8 (or UTF-16 with its byte order
// mark, which the YAML reader decodes).
func notUTF8(src []byte, path string) *Error {
	if bytes.HasPrefix(src, []byte{0xff, 0xfe}) || bytes.HasPrefix(src, []byte{0xfe, 0xff}) || utf8.Valid(src) {
		return nil
	}
	line, col := 1, 1
	for i := 0; i < len(src); {
		r, size := utf8.DecodeRune(src[i:])
		if r == utf8.RuneError && size <= 1 {
			return &Error{File: path, Line: line, Col: col,
				Msg: fmt.Sprintf("the plan file is not UTF-8 text (byte 0x%02x on line %d is not valid UTF-8; perhaps Latin-1 or Windows-1252): save the plan as UTF-8", src[i], line)}
		}
		if r == '\n' {
			line, col = line+1, 0
		}
		i += size
		col++
	}
	return nil
}

// tabError names the tab of a line the YAML reader could not read for
// it: YAML indents with spaces only, and its message ("found character
// that cannot start any token") does not say which character.
func tabError(e *Error, src []byte) *Error {
	if e.Line < 1 || !strings.Contains(e.Msg, "cannot start any token") && !strings.Contains(e.Msg, "tab character") {
		return e
	}
	lines := bytes.Split(src, []byte("\n"))
	if e.Line > len(lines) {
		return e
	}
	l := lines[e.Line-1]
	i := bytes.IndexByte(l, '\t')
	if i < 0 {
		return e
	}
	e.Col = utf8.RuneCount(l[:i]) + 1
	e.Msg = fmt.Sprintf("not valid YAML: a tab at column %d of line %d; YAML indents with spaces, never tabs: replace the tab with spaces", e.Col, e.Line)
	return e
}

// mergeKey refuses the first YAML merge key (<<: *anchor) under n (path
// its key), in one message: a plan writes its keys out, and a merged
// mapping would be read as an unknown key "<<" beside keys said missing.
func mergeKey(n *yaml.Node, path, file string) *Error {
	switch n.Kind {
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			key := k.Value
			if path != "" {
				key = path + "." + k.Value
			}
			if k.Kind == yaml.ScalarNode && k.ShortTag() == "!!merge" {
				from := ""
				if v.Kind == yaml.AliasNode && v.Alias != nil {
					from = fmt.Sprintf(" of the anchor &%s (line %d)", v.Value, v.Alias.Line)
				}
				where := "here"
				if path != "" {
					where = "under " + path
				}
				return &Error{File: file, Line: k.Line, Col: k.Column, Key: key,
					Msg: fmt.Sprintf("YAML merge keys (<<) are not supported in a plan: write the keys%s out %s", from, where)}
			}
			if e := mergeKey(v, key, file); e != nil {
				return e
			}
		}
	case yaml.SequenceNode:
		for i, it := range n.Content {
			if e := mergeKey(it, fmt.Sprintf("%s[%d]", path, i), file); e != nil {
				return e
			}
		}
	}
	return nil
}

// parserErrors begin the messages of the YAML library's parser (the
// scanner's are other words), whose lines it counts from 0.
var parserErrors = []string{"did not find expected <document start>", "did not find expected node content",
	"did not find expected key", "did not find expected '-' indicator", "did not find expected ',' or ']'",
	"did not find expected ',' or '}'", "found incompatible YAML document", "found duplicate %YAML directive",
	"found duplicate %TAG directive", "found undefined tag handle"}

func parserError(msg string) bool {
	for _, p := range parserErrors {
		if strings.HasPrefix(msg, p) {
			return true
		}
	}
	return false
}

func syntaxError(path string, err error) *Error {
	msg := err.Error()
	e := &Error{File: path}
	if m := yamlLine.FindStringSubmatch(msg); m != nil {
		e.Line, _ = strconv.Atoi(m[1])
		msg = m[2]
		if parserError(msg) {
			// The YAML library numbers the lines of its parser's errors
			// (not its scanner's) from 0: an unclosed { on line 3 was
			// said at line 2.
			e.Line++
		}
	} else if len(msg) > 6 && msg[:6] == "yaml: " {
		msg = msg[6:]
	}
	e.Msg = "not valid YAML: " + msg
	return e
}

// decodePlan reads the top-level mapping, applying the simple defaults.
func (d *decoder) decodePlan(root *yaml.Node, p *Plan) {
	d.record("", root)
	p.Seed = 1
	m := d.mapping(root, "", topKeys)
	if m == nil {
		return
	}
	if v := m.required("version"); v != nil {
		if n, ok := d.integer(v, "version"); ok && n != 1 {
			d.errorf(deref(v), "version", "unsupported plan version %d (want 1)", n)
		}
	}
	m.text("title", &p.Title)
	if v := m.get("seed"); v != nil {
		if s, ok := d.unsigned(v, "seed"); ok {
			p.Seed = s
		}
	}
	if v := m.required("data"); v != nil {
		d.decodeData(v, &p.Data)
	} else {
		d.dataDefaults(&p.Data)
	}
	if v := m.required("outcomes"); v != nil {
		p.Outcomes = d.decodeOutcomes(v)
	}
	if v := m.get("subset"); v != nil {
		p.Subset = d.decodeSubset(v)
	}
	if v := m.get("categorical"); v != nil {
		p.Categorical = d.decodeCategorical(v)
		d.categorical = map[string]bool{}
		for _, c := range p.Categorical {
			d.categorical[c.Column] = true
		}
	}
	if v := m.required("predictors"); v != nil && d.nonEmpty(v, "predictors", "predictor") {
		p.Predictors, p.Terms = d.decodeTerms(v, "predictors")
	}
	d.decodeModels(m.get("models"), &p.Models)
	d.decodeTests(m.get("tests"), &p.Tests)
	if v := m.required("rules"); v != nil {
		p.Rules = d.decodeRules(v)
	}
	typedWord(m, "covariance", "covariance", fit.CovarianceWords, fit.CovarianceWords.All(), &p.Covariance)
	typedWord(m, "few_clusters", "few-cluster correction", fit.ClusterCorrectionWords, fit.ClusterCorrectionWords.All(), &p.FewClusters)
	d.decodeReport(m.get("report"), &p.Report)
	terms := slices.Clone(p.Terms)
	for _, o := range p.Outcomes {
		terms = append(terms, o.Terms...)
	}
	d.decodeInference(m.get("inference"), &p.Inference, p.Dir, terms)
	if v := m.get("selection_stability"); v != nil {
		p.SelectionStability = d.decodeStability(v)
	}
	if v := m.get("dictionary"); v != nil {
		p.Dictionary = d.decodeDictionary(v)
	}
	if v := m.get("assumptions"); v != nil {
		p.Assumptions = d.decodeAssumptions(v)
	}
	if v := m.get("deviations"); v != nil {
		p.Deviations = d.decodeDeviations(v)
	}
}

// decodeStability reads selection_stability: both keys are required,
// resamples within the bounds Spec gives.
func (d *decoder) decodeStability(n *yaml.Node) *SelectionStability {
	m := d.mapping(n, "selection_stability", stabilityKeys)
	if m == nil {
		return nil
	}
	st := &SelectionStability{Draw: StabilityBootstrap}
	m.word("draw", "way of drawing", stabilityDrawWords, &st.Draw)
	if m.required("resamples") != nil {
		if r, ok := m.wholeInRange(Spec.find("selection_stability.resamples")); ok {
			st.Resamples = int(r)
		}
	}
	if v := m.required("seed"); v != nil {
		if s, ok := d.unsigned(v, m.at("seed")); ok {
			st.Seed = s
		}
	}
	return st
}
