package plan

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"strings"

	"gopkg.in/yaml.v3"
)

// Sensitivity is one sensitivity analysis fixed in the plan: the primary
// plan with a few of its keys changed (Changes), named and justified. Its
// Plan is the primary plan's text with the changes written in, read and
// checked as a whole plan is, so every check of a plan applies to it; a
// run fits its grid and applies the same rules to it as to the primary
// plan's (runner.Run).
type Sensitivity struct {
	Name string
	Why  string
	Key  string // its plan key, sensitivity[i]
	Line int    // where it begins in the plan
	// Changes are the keys it changes (SensitivityKeys), in the plan's
	// order.
	Changes []string
	// Plan is the primary plan with the changes applied. What a run of a
	// sensitivity analysis does not do is left out before it is read:
	// inference (its tests, effects and predictions), the report's chart
	// keys (focus_predictor, panels_by), assumptions, deviations and
	// data.imputation.write_sets; and data.imputation when the change
	// sets data.missing to another word than impute without giving it.
	Plan *Plan
}

// SensitivityKeys are the keys a sensitivity analysis may change, each
// replacing the primary plan's value whole: how missing values are
// handled, which rows are used, the predictor terms (and the
// categorical columns and partial set that go with them: a subset that
// leaves out a level, a term added or left out), the links, and the
// covariance. Every other key (the
// outcomes, the effect structures, the tests, the rules, ...) is the
// primary plan's in every sensitivity analysis, so that what differs is
// only what the plan states.
var SensitivityKeys = []string{"data.missing", "data.imputation", "data.cluster", "subset", "categorical",
	"predictors", "models.partial", "models.links", "covariance", "few_clusters"}

// Keys of a sensitivity analysis's mapping.
var sensitivityItemKeys = []string{"name", "why", "change"}

// writeSetsKey is the key of the imputed sets written among the outputs,
// which only the primary analysis writes.
const writeSetsKey = "data.imputation.write_sets"

// sensitivityLeftOut are the keys taken out of the primary plan before a
// sensitivity analysis is read (selection_stability: the bootstrap is of
// the primary analysis only; see Sensitivity.Plan).
var sensitivityLeftOut = []string{"sensitivity", "deviations", "inference", "assumptions",
	"report.focus_predictor", "report.panels_by", writeSetsKey, "selection_stability"}

// withSensitivity adds to spec the sensitivity key, whose changes are the
// keys of SensitivityKeys as spec describes them.
func withSensitivity(spec *Key) *Key {
	var changes []*Key
	for _, path := range SensitivityKeys {
		cur := spec
		for _, part := range strings.Split(path, ".") {
			i := slices.IndexFunc(cur.Keys, func(c *Key) bool { return c.Name == part })
			if i < 0 {
				panic("plan: no key " + path + " in Spec")
			}
			cur = cur.Keys[i]
		}
		c := *cur
		c.Name, c.Default, c.Required = path, "", false
		// A sensitivity analysis writes no imputed sets (notWritten).
		c.Keys = slices.DeleteFunc(slices.Clone(c.Keys), func(k *Key) bool { return path+"."+k.Name == writeSetsKey })
		changes = append(changes, &c)
	}
	sens := k("sensitivity", KindList, "Sensitivity analyses fixed in advance: each is the primary plan with a few keys changed, read and checked as a whole plan and run with the same rules; the report shows the model each chose and the primary chosen model's estimates under each. They show how the results move under the changes tried, and nothing beyond them. Part of the frozen form.").item(
		mkey("", "One sensitivity analysis.",
			k("name", KindName, "Its name in the report and decisions.json (unique).").req(),
			k("why", KindText, "Why it is done: the doubt about the primary analysis it answers.").req(),
			mkey("change", "The keys it changes, each written in full as a key path (data.missing, not data: {missing: ...}), its value replacing the primary plan's whole (a subset or predictors list is written out entirely). Only these keys can change; with data.missing other than impute, the primary's data.imputation is dropped unless given.", changes...).req(),
		))
	at := slices.IndexFunc(spec.Keys, func(c *Key) bool { return c.Name == "deviations" })
	spec.Keys = slices.Insert(slices.Clone(spec.Keys), at, sens)
	return spec
}

// sensitivityRead is what readSensitivity read, for finishSensitivity.
type sensitivityRead struct {
	items   []Sensitivity
	changes [][]change
	errs    []Errors // each analysis's plan's problems
}

// readSensitivity reads the sensitivity list of the primary plan p, read
// from root, and reads and checks each analysis's plan (derivePlan). It
// sets p.Sensitivity to every analysis read, so that the plan's checks
// count the columns they use (UsedColumns); finishSensitivity, after
// those checks, keeps those without a problem.
func (d *decoder) readSensitivity(root, n *yaml.Node, p *Plan, withData bool) *sensitivityRead {
	items, ok := d.list(n, "sensitivity")
	if !ok {
		return nil
	}
	out := &sensitivityRead{}
	names := map[string]struct {
		name string
		line int
	}{}
	for i, it := range items {
		path := itemPath("sensitivity", i)
		m := d.mapping(it, path, sensitivityItemKeys)
		if m == nil {
			continue
		}
		if m.node == nil {
			d.errorf(it, path, "want a mapping with keys %s; got null", strings.Join(sensitivityItemKeys, ", "))
			continue
		}
		s := Sensitivity{Key: path, Line: m.node.Line}
		if v := m.required("name"); v != nil {
			if name, ok := d.name(v, m.at("name")); ok {
				// Names are told apart as a reader of the report does:
				// without the spaces around them and the letter case.
				k := strings.ToLower(strings.TrimSpace(name))
				switch prev, dup := names[k]; {
				case k == "":
					d.errorf(deref(v), m.at("name"), "%s is only spaces; give the sensitivity analysis a name the report can show", quote(name))
				case dup && prev.name == name:
					d.errorf(deref(v), m.at("name"), "%s already names the sensitivity analysis at line %d; give each its own name", quote(name), prev.line)
				case dup:
					d.errorf(deref(v), m.at("name"), "%s differs from %s, the name of the sensitivity analysis at line %d, only in letter case or spaces, and the report would show the two alike; give each its own name", quote(name), quote(prev.name), prev.line)
				case k == "primary" || k == "primary analysis":
					d.errorf(deref(v), m.at("name"), "%s names the primary analysis in the report and its tables; give the sensitivity analysis a name of its own", quote(name))
				}
				if _, dup := names[k]; !dup {
					names[k] = struct {
						name string
						line int
					}{name, m.node.Line}
				}
				s.Name = name
			}
		}
		if v := m.required("why"); v != nil {
			if why, ok := d.text(v, m.at("why")); ok {
				if strings.TrimSpace(why) == "" {
					d.errorf(deref(v), m.at("why"), "is empty; say why this sensitivity analysis is done (the doubt about the primary analysis it answers)")
				}
				s.Why = strings.TrimSpace(why)
			}
		}
		changes := d.sensitivityChanges(m)
		if changes == nil {
			continue
		}
		for _, c := range changes {
			s.Changes = append(s.Changes, c.key)
		}
		sp, errs := derivePlan(root, changes, p, d.rows, withData)
		s.Plan = sp
		out.items = append(out.items, s)
		out.changes = append(out.changes, changes)
		out.errs = append(out.errs, errs)
		p.Sensitivity = append(p.Sensitivity, s)
	}
	return out
}

// finishSensitivity adds the problems of the analyses' plans to the
// plan's: a problem inside a change is named at its key under the
// analysis (sensitivity[1].change.subset[0].column); one elsewhere, which
// the primary plan does not have, at its own key with the analysis that
// brings it. A change that leaves its key as the primary plan has it is
// refused. p.Sensitivity keeps the analyses without a problem.
func (d *decoder) finishSensitivity(r *sensitivityRead, p *Plan) {
	primaryErrs := slices.Clone(d.errs)
	p.Sensitivity = nil
	canon := canonicalJSON(p)
	for i, s := range r.items {
		changes := r.changes[i]
		if d.missingWithImputed(p, changes) {
			continue
		}
		for _, e := range r.errs[i] {
			d.sensitivityError(e, s, primaryErrs)
		}
		if len(r.errs[i]) > 0 || s.Name == "" || s.Why == "" {
			continue
		}
		same := 0
		now := canonicalJSON(s.Plan)
		for _, c := range changes {
			if was := canonAt(canon, c.key); bytes.Equal(was, canonAt(now, c.key)) {
				same++
				d.errorf(c.keyNode, c.path, "changes nothing: the primary plan has this value already (%s); a sensitivity analysis states only what it changes", clip(string(was)))
			}
		}
		if same > 0 {
			continue
		}
		// A sensitivity analysis is run for its choice and estimates: no
		// inference beyond them (the primary plan's is left out).
		s.Plan.Inference = Inference{Multiplicity: MultiplicityNone, TermTests: TermTestsNone}
		p.Sensitivity = append(p.Sensitivity, s)
	}
}

// missingWithImputed refuses a change of data.missing in a plan that
// reads imputed sets made elsewhere (data.imputed): the sets are analysed
// whole whatever data.missing says (each must be complete, I6), so the
// analysis would repeat the primary one under another name (P62). It
// reports whether it refused one.
func (d *decoder) missingWithImputed(p *Plan, changes []change) bool {
	if p.Data.Imputed == nil {
		return false
	}
	for _, c := range changes {
		if c.key == "data.missing" {
			d.errorf(c.keyNode, c.path, "cannot be changed in a plan that reads imputed sets made elsewhere (data.imputed): every imputed set is analysed whole whatever data.missing says (each must be complete in the columns the plan uses), so this analysis would analyse the same imputed sets again; to analyse the complete cases of the data file %s, run a plan of its own on it without data.imputed (data.missing: drop), and compare its report with this one", quote(p.Data.Name()))
			return true
		}
	}
	return false
}

// change is one key a sensitivity analysis changes.
type change struct {
	key           string // the plan key, such as data.missing
	path          string // its key under the analysis: sensitivity[i].change.data.missing
	keyNode, node *yaml.Node
}

// sensitivityChanges reads an analysis's change mapping: only keys of
// SensitivityKeys, each once, at least one. nil when there is none to
// apply.
func (d *decoder) sensitivityChanges(m *mapping) []change {
	v := m.required("change")
	if v == nil {
		return nil
	}
	base := m.at("change")
	n := deref(v)
	if n.Kind != yaml.MappingNode || len(n.Content) == 0 {
		got := describe(n)
		if n.Kind == yaml.MappingNode {
			got = "an empty mapping: an analysis that changes nothing is the primary analysis"
		}
		d.errorf(n, base, "want a mapping of the keys it changes (one or more of %s) to their values; got %s", strings.Join(SensitivityKeys, ", "), got)
		return nil
	}
	var out []change
	bad := false
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, val := deref(n.Content[i]), n.Content[i+1]
		if k == nil || k.Kind != yaml.ScalarNode {
			d.errorf(k, base, "keys must be plain key paths, got %s", describe(k))
			bad = true
			continue
		}
		path := childPath(base, k.Value)
		if j := slices.IndexFunc(out, func(c change) bool { return c.key == k.Value }); j >= 0 {
			d.errorf(k, path, "key is given twice (first at line %d)", out[j].keyNode.Line)
			bad = true
			continue
		}
		if !slices.Contains(SensitivityKeys, k.Value) {
			d.errorf(k, path, "%s", notChangeable(k.Value))
			bad = true
			continue
		}
		if m := deref(val); k.Value == "data.imputation" && m != nil && m.Kind == yaml.MappingNode && indexOf(m, "write_sets") >= 0 {
			d.errorf(m.Content[indexOf(m, "write_sets")], childPath(path, "write_sets"), "a sensitivity analysis writes no imputed sets: only the primary analysis's are written among the outputs (%s); remove write_sets here", writeSetsKey)
			bad = true
			continue
		}
		d.record(path, val)
		out = append(out, change{key: k.Value, path: path, keyNode: k, node: val})
	}
	if bad {
		return nil
	}
	return out
}

// notChangeable says why a key cannot be changed by a sensitivity
// analysis.
func notChangeable(key string) string {
	allowed := strings.Join(SensitivityKeys, ", ")
	for _, sk := range SensitivityKeys {
		if strings.HasPrefix(sk, key+".") {
			return fmt.Sprintf("write the key path in full (such as %s: ...), not a section; a sensitivity analysis changes only %s", sk, allowed)
		}
		if strings.HasPrefix(key, sk+".") || strings.HasPrefix(key, sk+"[") {
			return fmt.Sprintf("a sensitivity analysis replaces %s whole: give %s with its full value", sk, sk)
		}
	}
	return fmt.Sprintf("%s cannot be changed by a sensitivity analysis, which changes only %s; every other key (the outcomes, the effect structures, the tests, the rules, ...) is the primary plan's, so that the analyses differ only where the plan says (analyse a different question in a plan of its own)", quote(key), allowed)
}

// sensitivityError adds a problem of a sensitivity analysis's plan to
// the primary plan's: inside a change, named at the change's key; else,
// unless the primary plan has it too, at its own key, with the analysis
// that brings it.
func (d *decoder) sensitivityError(e *Error, s Sensitivity, primary Errors) {
	if ce, ok := s.InChange(e); ok {
		d.errs = append(d.errs, ce)
		return
	}
	for _, pe := range primary {
		if pe.Key == e.Key && pe.Line == e.Line && pe.Col == e.Col && pe.Msg == e.Msg {
			return
		}
	}
	hint := ""
	for _, sk := range SensitivityKeys {
		if e.Key == sk || strings.HasPrefix(e.Key, sk+".") || strings.HasPrefix(e.Key, sk+"[") {
			// A key the analysis may change: the primary plan's value
			// can stay, and the analysis give its own.
			hint = fmt.Sprintf(" (for this analysis alone: give %s in its change, null to remove it)", sk)
			if sk == "predictors" { // required
				hint = " (for this analysis alone: give predictors in its change)"
			}
			break
		}
	}
	d.errs = append(d.errs, &Error{File: e.File, Line: e.Line, Col: e.Col, Key: e.Key,
		Msg: fmt.Sprintf("with %s applied: %s%s", s.Title(), e.Msg, hint)})
}

// InChange names a problem e of the analysis's plan that lies inside one
// of its changes (e's key is a changed key or below one) at its key under
// the analysis, sensitivity[1].change.subset[0].column, with the analysis
// named: the one form of such a problem, found by the plan's checks or
// against the data (runner.CheckData, a run). Not ok: e is elsewhere.
func (s Sensitivity) InChange(e *Error) (*Error, bool) {
	key, ok := s.ChangeKey(e.Key)
	if !ok {
		return nil, false
	}
	return &Error{File: e.File, Line: e.Line, Col: e.Col, Key: key, Msg: fmt.Sprintf("in sensitivity analysis %s: %s", quote(s.Name), e.Msg)}, true
}

// ChangeKey is key, a key of the analysis's plan, under the change that
// sets it (sensitivity[1].change.subset[0].column for subset[0].column);
// not ok when no change of the analysis sets it.
func (s Sensitivity) ChangeKey(key string) (string, bool) {
	for _, c := range s.Changes {
		if key == c || strings.HasPrefix(key, c+".") || strings.HasPrefix(key, c+"[") {
			return s.Key + ".change." + key, true
		}
	}
	return "", false
}

// derivePlan reads the primary plan's text root with the changes written
// in (Sensitivity.Plan), as a plan is read: decoded, defaults, checks,
// and with the data file's columns when withData.
func derivePlan(root *yaml.Node, changes []change, p *Plan, rows *Rows, withData bool) (*Plan, Errors) {
	top := shallowCopy(deref(root))
	setsImputation, dropsImputation := false, false
	for _, c := range changes {
		setNode(top, c.key, c.keyNode, c.node)
		if c.key == "data.imputation" {
			setsImputation = true
		}
		if n := deref(c.node); c.key == "data.missing" && n != nil && n.Kind == yaml.ScalarNode && n.Value != MissingImpute {
			dropsImputation = true
		}
	}
	for _, key := range sensitivityLeftOut {
		removeNode(top, key)
	}
	if dropsImputation && !setsImputation {
		removeNode(top, "data.imputation")
	}
	dd := newDecoder(p.Path)
	dd.rows, dd.derived = rows, true
	sp := &Plan{Path: p.Path, Dir: p.Dir, Hash: p.Hash}
	dd.decodePlan(top, sp)
	dd.applyDefaults(sp)
	dd.check(sp)
	if withData && len(dd.errs) == 0 {
		dd.checkDataColumns(sp)
	}
	return sp, dd.errs
}

// shallowCopy copies a node and its list of children (not the children):
// the copy's children can be replaced without changing the original.
func shallowCopy(n *yaml.Node) *yaml.Node {
	c := *n
	c.Content = slices.Clone(n.Content)
	return &c
}

// mappingAt gives the mapping at key inside mapping m, as a copy put in
// its place (made, empty, when absent or null, at where); nil when the
// value is not a mapping (the read of the plan says so).
func mappingAt(m *yaml.Node, key string, where *yaml.Node, create bool) *yaml.Node {
	i := indexOf(m, key)
	if i < 0 {
		if !create {
			return nil
		}
		k := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: key, Line: where.Line, Column: where.Column}
		v := &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map", Line: where.Line, Column: where.Column}
		m.Content = append(m.Content, k, v)
		return v
	}
	v := deref(m.Content[i+1])
	if isNull(v) && create {
		v = &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map", Line: where.Line, Column: where.Column}
	} else if v == nil || v.Kind != yaml.MappingNode {
		return nil
	}
	c := shallowCopy(v)
	m.Content[i+1] = c
	return c
}

// parentOf gives the mapping inside top that holds the last part of the
// key path key, and that part: the mappings on the way copied (mappingAt),
// and, with create, made when absent at where's place. nil when one on
// the way is not a mapping (or absent, without create).
func parentOf(top *yaml.Node, key string, where *yaml.Node, create bool) (*yaml.Node, string) {
	parts := strings.Split(key, ".")
	m := top
	for _, part := range parts[:len(parts)-1] {
		if m = mappingAt(m, part, where, create); m == nil {
			return nil, ""
		}
	}
	return m, parts[len(parts)-1]
}

// indexOf gives the index in mapping m of the key named key, or -1.
func indexOf(m *yaml.Node, key string) int {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if k := deref(m.Content[i]); k != nil && k.Kind == yaml.ScalarNode && k.Value == key {
			return i
		}
	}
	return -1
}

// setNode sets the key path key of mapping top to val (the change's
// value node, not copied), its key written at keyNode's place.
func setNode(top *yaml.Node, key string, keyNode, val *yaml.Node) {
	m, last := parentOf(top, key, keyNode, true)
	if m == nil {
		return
	}
	if i := indexOf(m, last); i >= 0 {
		m.Content[i+1] = val
		return
	}
	k := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: last, Line: keyNode.Line, Column: keyNode.Column}
	m.Content = append(m.Content, k, val)
}

// removeNode takes the key path key out of mapping top.
func removeNode(top *yaml.Node, key string) {
	if m, last := parentOf(top, key, nil, false); m != nil {
		if i := indexOf(m, last); i >= 0 {
			m.Content = slices.Delete(m.Content, i, i+2)
		}
	}
}

// canonicalJSON is the plan's canonical form, for canonAt.
func canonicalJSON(p *Plan) json.RawMessage { return p.Canonical() }

// canonAt is the value at the key path key of a canonical form, compacted
// ("null" when absent).
func canonAt(canon json.RawMessage, key string) []byte {
	cur := canon
	for _, part := range strings.Split(key, ".") {
		var m map[string]json.RawMessage
		if json.Unmarshal(cur, &m) != nil {
			return []byte("null")
		}
		v, ok := m[part]
		if !ok {
			return []byte("null")
		}
		cur = v
	}
	var b bytes.Buffer
	if json.Compact(&b, cur) != nil {
		return []byte("null")
	}
	return b.Bytes()
}

// canonSensitivity is a sensitivity analysis in the canonical form: its
// changes as the canonical form of its plan writes those keys.
type canonSensitivity struct {
	Name   string                     `json:"name"`
	Why    string                     `json:"why"`
	Change map[string]json.RawMessage `json:"change"`
}

func (p *Plan) canonicalSensitivity() []canonSensitivity {
	var out []canonSensitivity
	for _, s := range p.Sensitivity {
		c := canonSensitivity{Name: s.Name, Why: s.Why, Change: map[string]json.RawMessage{}}
		canon := canonicalJSON(s.Plan)
		for _, key := range s.Changes {
			c.Change[key] = canonAt(canon, key)
		}
		out = append(out, c)
	}
	return out
}

// Title names the analysis in messages: sensitivity analysis "NAME"
// (sensitivity[i], line L).
func (s Sensitivity) Title() string {
	return fmt.Sprintf("sensitivity analysis %s (%s, line %d)", quote(s.Name), s.Key, s.Line)
}

// OnData is the analysis's plan reading the data p reads (a rehearsal's
// simulated file in place of the plan's, read as ordplan wrote it:
// Data.Written), for a run of p.
func (s Sensitivity) OnData(p *Plan) *Plan {
	sp := *s.Plan
	sp.Data.File, sp.Data.Path = p.Data.File, p.Data.Path
	sp.Data.Parts, sp.Data.PartFiles, sp.Data.PartPaths, sp.Data.PartOf = p.Data.Parts, p.Data.PartFiles, p.Data.PartPaths, p.Data.PartOf
	sp.Data.Written = p.Data.Written
	// A subset the analysis changes is named at its change, so that
	// what the data say of it (no row kept, a value no row holds) names
	// sensitivity[1].change.subset[0], as a problem the plan's checks
	// find there does (InChange).
	sp.Subset = slices.Clone(sp.Subset)
	for i := range sp.Subset {
		if k, ok := s.ChangeKey(sp.Subset[i].Key); ok {
			sp.Subset[i].Key = k
		}
	}
	return &sp
}

// ChangeValue is one change of a sensitivity analysis: the key, its
// value in the primary plan and in the analysis, each as the canonical
// form writes it (compact JSON; null when the plan has none).
type ChangeValue struct {
	Key, Primary, Here string
}

// Values are the analysis's changes with their values, in its order;
// primary is the plan it belongs to.
func (s Sensitivity) Values(primary *Plan) []ChangeValue {
	was, now := canonicalJSON(primary), canonicalJSON(s.Plan)
	var out []ChangeValue
	for _, key := range s.Changes {
		out = append(out, ChangeValue{Key: key, Primary: string(canonAt(was, key)), Here: string(canonAt(now, key))})
	}
	return out
}
