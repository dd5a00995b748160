package studies

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// Load reads and parses the study file at path; see [Parse]. A file that
// cannot be read, or is larger than MaxFileSize, gives an ErrorList with
// one *Error whose Err is the reading error (so errors.Is(err,
// fs.ErrNotExist) works) or ErrValue.
func Load(path string) (*Study, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, readError(path, err)
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
	if err != nil {
		return nil, readError(path, err)
	}
	return Parse(path, data)
}

func readError(path string, err error) error {
	msg := err.Error()
	var pe *os.PathError
	if errors.As(err, &pe) {
		msg = pe.Err.Error()
	}
	return ErrorList{{File: path, Err: err, Msg: "cannot read study file: " + msg}}
}

// Parse parses and validates a study file (DESIGN §4). filename is used in
// error messages and as Study.Source. On success the study has every
// default applied and passed every check below; otherwise Parse returns a
// nil study and an [ErrorList] of [*Error], sorted by position, with every
// problem found in one pass (only a YAML syntax error stops the pass).
// Past MaxErrors problems, the list ends with one entry saying how many
// more there were.
//
// Checks: well-formed UTF-8 YAML holding one mapping; no duplicate keys;
// no unknown keys at any level (with a suggestion of the nearest known
// one); the type of each value; numbers finite; name usable as a folder
// name; 1 ≤ cases ≤ MaxCases; seed a whole number in [0, 2⁶⁴); sampling
// lhs or random; every required parameter given, and rho1, rho2, perm_md
// and velocity_m_per_day as well when dip_deg is given and not fixed at
// 0; the fields of each distribution (sampler.Spec.Validate), same_as
// names and cycles; the DESIGN §2 validity rules on fixed values, and on
// distribution ranges that could never give a valid case (a range that
// sometimes does is fine: those samples become rejected cases);
// correlations between two distinct uncertain parameters that are not
// same_as followers, |rho| < 1, no pair twice; report.pvi positive,
// finite and strictly increasing; 0 < cut_limit ≤ 1; percentiles
// exceedance or cumulative; 0 < tornado.low < tornado.high < 1;
// sensitivity.sobol 0 or in [MinSobol, MaxSobol]. Whether the
// correlation matrix is positive definite is left to the sampler; see
// [Study.CorrelationError].
func Parse(filename string, data []byte) (*Study, error) {
	return ParseWith(filename, data, ParseOptions{})
}

// ParseWith is [Parse] with options: where the measured-curve table a
// study names is read from.
func ParseWith(filename string, data []byte, opts ParseOptions) (*Study, error) {
	p := &parser{file: filename, readTable: opts.ReadTable}
	s := p.parse(data)
	if len(p.errs) > 0 {
		return nil, p.finish()
	}
	sum := sha256.Sum256(data)
	s.Source = filename
	s.FileHash = hex.EncodeToString(sum[:])
	s.Hash = s.FileHash
	if s.Relperm.TableData != nil {
		// The table decides the results as much as the study file does.
		h := sha256.New()
		h.Write(data)
		h.Write([]byte("\x00relperm.table\x00"))
		h.Write(s.Relperm.TableData)
		s.Hash = hex.EncodeToString(h.Sum(nil))
	}
	return s, nil
}

// parser collects the errors of one Parse call.
type parser struct {
	file      string
	readTable TableReader // nil: relative to file
	errs      ErrorList
	dropped   int // errors beyond collectErrors
}

func posOf(n *yaml.Node) Pos {
	if n == nil {
		return Pos{}
	}
	return Pos{Line: n.Line, Column: n.Column}
}

func (p *parser) errAt(pos Pos, path string, cause error, format string, args ...any) {
	if len(p.errs) >= collectErrors {
		p.dropped++
		return
	}
	p.errs.Add(&Error{File: p.file, Line: pos.Line, Column: pos.Column, Path: path, Err: cause, Msg: fmt.Sprintf(format, args...)})
}

// collectErrors bounds the errors collected before sorting; MaxErrors of
// them are kept.
const collectErrors = 10 * MaxErrors

// finish sorts the errors and keeps the first MaxErrors, followed by one
// that says how many more there were, at the position of the first one
// left out.
func (p *parser) finish() ErrorList {
	p.errs.Sort()
	if len(p.errs) <= MaxErrors {
		return p.errs
	}
	first := p.errs[MaxErrors]
	more := len(p.errs) - MaxErrors + p.dropped
	list := p.errs[:MaxErrors:MaxErrors]
	return append(list, &Error{File: p.file, Line: first.Line, Column: first.Column, Err: first.Err,
		Msg: fmt.Sprintf("too many errors: %d more not shown", more)})
}

func (p *parser) errorf(n *yaml.Node, path string, cause error, format string, args ...any) {
	p.errAt(posOf(n), path, cause, format, args...)
}

// yamlLine finds the line number in a yaml/v3 error text.
var yamlLine = regexp.MustCompile(`^yaml: line (\d+): `)

// yamlParserErrors are the messages of yaml/v3's parser stage (parserc.go).
// For these it prints the 0-based line of the mark (the scanner's messages
// get a 1-based one), and no line at all when the mark is on the first
// line.
var yamlParserErrors = []string{
	"did not find expected <stream-start>",
	"did not find expected <document start>",
	"found undefined tag handle",
	"did not find expected node content",
	"did not find expected '-' indicator",
	"did not find expected key",
	"did not find expected ',' or ']'",
	"did not find expected ',' or '}'",
	"found duplicate %YAML directive",
	"found incompatible YAML document",
	"found duplicate %TAG directive",
}

// yamlAnchor finds the anchor name in yaml/v3's alias errors.
var yamlAnchor = regexp.MustCompile(`^(?:unknown anchor|anchor) '([^']*)'`)

// syntax turns a yaml/v3 error into ours, with a 1-based line. An alias
// error carries no line; it is found by searching the text for the alias.
func (p *parser) syntax(data []byte, err error) {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	var pos Pos
	if m := yamlLine.FindStringSubmatch(err.Error()); m != nil {
		pos.Line, _ = strconv.Atoi(m[1])
		msg = err.Error()[len(m[0]):]
	}
	switch {
	case contains(yamlParserErrors, msg):
		// The line is where the enclosing block or flow starts; the
		// offending token is often later. Point at the first line at
		// which the text stops parsing.
		pos.Line = firstBadLine(data, pos.Line+1)
	case strings.HasPrefix(msg, "found a tab character") && pos.Line > 0:
		// The scanner names the line where the scalar before the tab
		// starts (a plain scalar may go on over the next lines); the tab
		// itself can be lines later.
		pos.Line = firstBadLine(data, pos.Line)
	case pos.Line == 0:
		if m := yamlAnchor.FindStringSubmatch(msg); m != nil {
			sigil := "*"
			if !strings.HasPrefix(msg, "unknown") {
				sigil = "&"
			}
			if i := bytes.Index(data, []byte(sigil+m[1])); i >= 0 {
				pos = textPos(data, i)
			}
		} else {
			pos.Line = 1
		}
	}
	p.errAt(pos, "", ErrSyntax, "YAML syntax error: %s", msg)
}

// rescanBudget bounds the bytes firstBadLine parses in all, so that a
// large file costs a few megabytes of parsing, not its size squared.
const rescanBudget = 8 << 20

// firstBadLine returns the first line, from line from on, such that the
// text up to and including it fails to parse, or from if there is none
// within rescanBudget. A truncated flow collection fails at its opening
// line, so for an unclosed one this stays at from.
func firstBadLine(data []byte, from int) int {
	lines := bytes.SplitAfter(data, []byte("\n"))
	end := 0
	for i := 0; i < from-1 && i < len(lines); i++ {
		end += len(lines[i])
	}
	spent := 0
	for l := from; l <= len(lines); l++ {
		end += len(lines[l-1])
		if spent += end; spent > rescanBudget {
			break
		}
		dec := yaml.NewDecoder(bytes.NewReader(data[:end]))
		for {
			var n yaml.Node
			err := dec.Decode(&n)
			if err == io.EOF {
				break
			}
			if err != nil {
				return l
			}
		}
	}
	return from
}

// textPos returns the line and column (in characters) of byte offset off.
func textPos(data []byte, off int) Pos {
	line := 1 + bytes.Count(data[:off], []byte("\n"))
	start := bytes.LastIndexByte(data[:off], '\n') + 1
	return Pos{Line: line, Column: 1 + utf8.RuneCount(data[start:off])}
}

func (p *parser) parse(data []byte) *Study {
	if len(data) > MaxFileSize {
		p.errAt(Pos{}, "", ErrValue, "study file is larger than %d bytes", MaxFileSize)
		return nil
	}
	if i := bytes.IndexByte(data, 0); i >= 0 {
		p.errAt(textPos(data, i), "", ErrSyntax, "binary data (a NUL byte): a study file is UTF-8 YAML text")
		return nil
	}
	if !utf8.Valid(data) {
		off := 0
		for off < len(data) {
			r, size := utf8.DecodeRune(data[off:])
			if r == utf8.RuneError && size <= 1 {
				break
			}
			off += size
		}
		p.errAt(textPos(data, off), "", ErrSyntax, "invalid UTF-8 (byte 0x%02x): a study file is UTF-8 YAML text", data[off])
		return nil
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if err == io.EOF {
			p.errAt(Pos{Line: 1, Column: 1}, "", ErrMissing, "empty study file: a study needs at least name, cases and parameters (sweepstat init writes an example)")
			return nil
		}
		p.syntax(data, err)
		return nil
	}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case err == io.EOF:
	case err != nil:
		p.syntax(data, err)
		return nil
	default:
		p.errAt(posOf(&next), "", ErrSyntax, "a study file holds one YAML document; a second one starts here")
		return nil
	}
	root := &doc
	if root.Kind == yaml.DocumentNode {
		if len(root.Content) == 0 {
			p.errAt(Pos{Line: 1, Column: 1}, "", ErrMissing, "empty study file")
			return nil
		}
		root = root.Content[0]
	}
	root = deref(root)
	if isNull(root) {
		p.errAt(Pos{Line: 1, Column: 1}, "", ErrMissing, "empty study file: a study needs at least name, cases and parameters (sweepstat init writes an example)")
		return nil
	}
	return p.study(root)
}

// deref follows YAML aliases to the anchored node.
func deref(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && i < 100; i++ {
		n = n.Alias
	}
	return n
}

func isNull(n *yaml.Node) bool {
	return n == nil || (n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null")
}

// describe names what a node holds, for type errors.
func describe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.ShortTag() {
		case "!!null":
			return "nothing"
		case "!!str":
			return fmt.Sprintf("the text %s", quoteShort(n.Value))
		case "!!bool":
			return "the boolean " + n.Value
		case "!!int", "!!float":
			return "the number " + n.Value
		case "!!timestamp":
			return "the date " + n.Value
		}
		return fmt.Sprintf("a %s value", n.ShortTag())
	}
	return "an unsupported YAML node"
}

func quoteShort(s string) string {
	if utf8.RuneCountInString(s) > 40 {
		r := []rune(s)
		s = string(r[:40]) + "…"
	}
	return strconv.Quote(s)
}

// keyPath joins a mapping key to a path, quoting keys that are not plain
// names.
func keyPath(path, key string) string {
	if !plainKey(key) {
		key = strconv.Quote(key)
	}
	if path == "" {
		return key
	}
	return path + "." + key
}

func plainKey(key string) bool {
	if key == "" {
		return false
	}
	for _, r := range key {
		if !(r == '_' || r == '-' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9') {
			return false
		}
	}
	return true
}

func indexPath(path string, i int) string { return fmt.Sprintf("%s[%d]", path, i) }

// entry is one key/value pair of a mapping.
type entry struct {
	name     string
	key, val *yaml.Node // val is dereferenced
}

// mapping returns the entries of mapping node n in file order, reporting
// keys that are not plain scalars, merge keys and duplicates (the first
// occurrence is kept). It reports a type error and returns false if n is
// not a mapping.
func (p *parser) mapping(n *yaml.Node, path, want string) ([]entry, bool) {
	if n.Kind != yaml.MappingNode {
		if isNull(n) {
			p.errorf(n, path, ErrMissing, "no value; want %s", want)
		} else {
			p.errorf(n, path, ErrType, "want %s, got %s", want, describe(n))
		}
		return nil, false
	}
	var out []entry
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := deref(n.Content[i]), deref(n.Content[i+1])
		if k.Kind != yaml.ScalarNode {
			p.errorf(k, path, ErrType, "a key must be a name, not %s", describe(k))
			continue
		}
		if k.ShortTag() == "!!merge" {
			p.errorf(k, keyPath(path, k.Value), ErrUnknownKey, "YAML merge keys (<<) are not supported; write the keys out")
			continue
		}
		if first, dup := seen[k.Value]; dup {
			p.errorf(k, keyPath(path, k.Value), ErrDuplicateKey, "duplicate key %s (first given at line %d)", k.Value, first.Line)
			continue
		}
		seen[k.Value] = k
		out = append(out, entry{name: k.Value, key: k, val: v})
	}
	return out, true
}

// known reports the entries whose key is not in names, with a suggestion,
// and returns the others by name. noun is "key" or "parameter".
func (p *parser) known(es []entry, path string, names []string, noun string) map[string]entry {
	m := make(map[string]entry, len(es))
	for _, e := range es {
		if !contains(names, e.name) {
			msg := fmt.Sprintf("unknown %s %s", noun, quoteShort(e.name))
			if s := suggest(e.name, names); s != "" {
				msg += "; did you mean " + s + "?"
			} else {
				msg += "; known: " + strings.Join(names, ", ")
			}
			p.errorf(e.key, keyPath(path, e.name), ErrUnknownKey, "%s", msg)
			continue
		}
		m[e.name] = e
	}
	return m
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// fastNumber decodes a plain finite number without reporting anything,
// for long lists; false sends the caller to number for the message.
func fastNumber(n *yaml.Node) (float64, bool) {
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!int" && n.ShortTag() != "!!float" {
		return 0, false
	}
	var v float64
	if err := n.Decode(&v); err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, false
	}
	return v, true
}

// hugeNumber reports, as an error, a plain float literal beyond float64's
// range, which YAML leaves as text.
func (p *parser) hugeNumber(n *yaml.Node, path string) bool {
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!str" || n.Style != 0 {
		return false
	}
	if _, err := strconv.ParseFloat(n.Value, 64); !errors.Is(err, strconv.ErrRange) {
		return false
	}
	p.errorf(n, path, ErrValue, "%s is beyond the range of floating-point numbers", n.Value)
	return true
}

// number decodes a finite number.
func (p *parser) number(n *yaml.Node, path string) (float64, bool) {
	if len(p.errs) >= collectErrors {
		if v, ok := fastNumber(n); ok {
			return v, true
		}
		p.dropped++
		return 0, false
	}
	if isNull(n) {
		p.errorf(n, path, ErrMissing, "no value; want a number")
		return 0, false
	}
	tag := n.ShortTag()
	if p.hugeNumber(n, path) {
		return 0, false
	}
	if n.Kind != yaml.ScalarNode || (tag != "!!int" && tag != "!!float") {
		msg := fmt.Sprintf("want a number, got %s", describe(n))
		if quotedNumber(n) {
			msg += " (drop the quotes)"
		}
		p.errorf(n, path, ErrType, "%s", msg)
		return 0, false
	}
	var v float64
	if err := n.Decode(&v); err != nil {
		// An integer literal too large for float64 conversion by the
		// decoder: read it ourselves.
		f, perr := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
		if perr != nil {
			p.errorf(n, path, ErrType, "want a number, got %s", describe(n))
			return 0, false
		}
		v = f
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		p.errorf(n, path, ErrValue, "must be a finite number, not %s", n.Value)
		return 0, false
	}
	return v, true
}

// quotedNumber reports whether n is a quoted string that reads as a number.
func quotedNumber(n *yaml.Node) bool {
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!str" || n.Style&(yaml.DoubleQuotedStyle|yaml.SingleQuotedStyle) == 0 {
		return false
	}
	_, err := strconv.ParseFloat(strings.TrimSpace(n.Value), 64)
	return err == nil
}

// text decodes a scalar as its literal text (a number or date is taken as
// written).
func (p *parser) text(n *yaml.Node, path, want string) (string, bool) {
	if isNull(n) {
		p.errorf(n, path, ErrMissing, "no value; want %s", want)
		return "", false
	}
	if n.Kind != yaml.ScalarNode {
		p.errorf(n, path, ErrType, "want %s, got %s", want, describe(n))
		return "", false
	}
	return n.Value, true
}

// whole decodes a whole number in [lo, hi].
func (p *parser) whole(n *yaml.Node, path string, lo, hi float64) (float64, bool) {
	v, ok := p.number(n, path)
	if !ok {
		return 0, false
	}
	if v != math.Trunc(v) {
		p.errorf(n, path, ErrValue, "must be a whole number, got %s", n.Value)
		return 0, false
	}
	if v < lo || v > hi {
		p.errorf(n, path, ErrValue, "must be from %.0f to %.0f, got %s", lo, hi, n.Value)
		return 0, false
	}
	return v, true
}

// seed decodes a whole number in [0, 2⁶⁴).
func (p *parser) seed(n *yaml.Node, path string) (uint64, bool) {
	if n.Kind == yaml.ScalarNode && n.ShortTag() == "!!int" {
		var u uint64
		if err := n.Decode(&u); err == nil {
			return u, true
		}
		var i int64
		if err := n.Decode(&i); err == nil && i < 0 {
			p.errorf(n, path, ErrValue, "must not be negative, got %s", n.Value)
			return 0, false
		}
		p.errorf(n, path, ErrValue, "must be a whole number from 0 to %d, got %s", uint64(math.MaxUint64), n.Value)
		return 0, false
	}
	// A float literal is accepted when it is a whole number that float64
	// holds exactly.
	v, ok := p.number(n, path)
	switch {
	case !ok:
		return 0, false
	case v < 0:
		p.errorf(n, path, ErrValue, "must not be negative, got %s", n.Value)
	case v != math.Trunc(v):
		p.errorf(n, path, ErrValue, "must be a whole number, got %s", n.Value)
	case v >= 1<<64:
		p.errorf(n, path, ErrValue, "must be a whole number from 0 to %d, got %s", uint64(math.MaxUint64), n.Value)
	case v > 1<<53:
		p.errorf(n, path, ErrValue, "write a seed above 2^53 as a plain integer: %s is a floating-point number and may not be exact", n.Value)
	default:
		return uint64(v), true
	}
	return 0, false
}

// Top-level, phases, report, tornado and sensitivity keys.
var (
	topKeys         = []string{"name", "phases", "cases", "seed", "sampling", "relperm", "parameters", "volumes", "correlations", "report", "tornado", "sensitivity"}
	phaseKeys       = []string{"injected", "displaced"}
	reportKeys      = []string{"pvi", "cut_limit", "percentiles"}
	tornadoKeys     = []string{"low", "high"}
	sensitivityKeys = []string{"sobol"}
	samplingNames   = []string{SamplingLHS, SamplingRandom}
	percentileNames = []string{PercentilesExceedance, PercentilesCumulative}
)

func (p *parser) study(root *yaml.Node) *Study {
	s := &Study{
		Seed:     DefaultSeed,
		Sampling: DefaultSampling,
		Phases:   Phases{Injected: DefaultInjected, Displaced: DefaultDisplaced},
		Report:   Report{PVI: DefaultPVI(), CutLimit: DefaultCutLimit, Percentiles: DefaultPercentiles},
		Tornado:  Tornado{Low: DefaultTornadoLow, High: DefaultTornadoHigh},
	}
	es, ok := p.mapping(root, "", "a mapping of keys (name, cases, parameters, …)")
	if !ok {
		return nil
	}
	top := p.known(es, "", topKeys, "key")
	for _, req := range []string{"name", "cases", "parameters"} {
		if _, ok := top[req]; !ok {
			p.errorf(root, req, ErrMissing, "missing required key %s", req)
		}
	}
	if e, ok := top["name"]; ok {
		if name, ok := p.text(e.val, "name", "a study name"); ok {
			p.checkName(e.val, name)
			s.Name = name
		}
	}
	if e, ok := top["phases"]; ok && !isNull(e.val) {
		p.phases(e.val, &s.Phases)
	}
	if e, ok := top["cases"]; ok {
		if v, ok := p.whole(e.val, "cases", 1, MaxCases); ok {
			s.Cases = int(v)
		}
	}
	if e, ok := top["seed"]; ok {
		if v, ok := p.seed(e.val, "seed"); ok {
			s.Seed = v
		}
	}
	if e, ok := top["sampling"]; ok {
		if v, ok := p.choice(e.val, "sampling", samplingNames); ok {
			s.Sampling = v
		}
	}
	if e, ok := top["relperm"]; ok && !isNull(e.val) {
		p.relperm(e.val, &s.Relperm)
	}
	mp := &modelParams{family: s.Relperm.Model, tables: s.Relperm.Samples}
	if e, ok := top["volumes"]; ok && !isNull(e.val) {
		mp.volumes, mp.volKey = e.val, e.key
	}
	var ps *paramSet
	if e, ok := top["parameters"]; ok {
		s.parametersPos = posOf(e.key)
		ps = p.parameters(e.key, e.val, mp)
		s.Parameters = ps.list()
	}
	if mp.volumes != nil {
		p.volumes(mp, &s.Volumes)
	}
	s.model = mp.model(ps, &s.Volumes)
	if e, ok := top["correlations"]; ok {
		s.correlationsPos = posOf(e.key)
		if !isNull(e.val) {
			s.Correlations = p.correlations(e.val, ps)
		}
	}
	if e, ok := top["report"]; ok && !isNull(e.val) {
		p.report(e.val, &s.Report)
	}
	if e, ok := top["tornado"]; ok && !isNull(e.val) {
		p.tornado(e.val, &s.Tornado)
	}
	if e, ok := top["sensitivity"]; ok && !isNull(e.val) {
		p.sensitivity(e.val, &s.Sensitivity, ps)
	}
	return s
}

// checkName checks that a study name is usable as a folder name.
func (p *parser) checkName(n *yaml.Node, name string) {
	switch {
	case name == "":
		p.errorf(n, "name", ErrValue, "must not be empty")
	case len(name) > MaxNameLen:
		p.errorf(n, "name", ErrValue, "is %d bytes long; at most %d", len(name), MaxNameLen)
	case name[0] == '.':
		p.errorf(n, "name", ErrValue, "must not start with a dot: it names the output folder")
	default:
		for _, r := range name {
			if !(r == '-' || r == '_' || r == '.' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9') {
				p.errorf(n, "name", ErrValue, "%s has the character %q; a study name names the output folder, so use only letters, digits, '-', '_' and '.'", quoteShort(name), r)
				return
			}
		}
	}
}

// choice decodes one of a fixed set of names.
func (p *parser) choice(n *yaml.Node, path string, names []string) (string, bool) {
	v, ok := p.text(n, path, strings.Join(names, " or "))
	if !ok {
		return "", false
	}
	if contains(names, v) {
		return v, true
	}
	msg := fmt.Sprintf("must be %s, got %s", strings.Join(names, " or "), quoteShort(v))
	if s := suggest(v, names); s != "" {
		msg += "; did you mean " + s + "?"
	}
	p.errorf(n, path, ErrValue, "%s", msg)
	return "", false
}

func (p *parser) phases(n *yaml.Node, ph *Phases) {
	es, ok := p.mapping(n, "phases", "a mapping {injected: …, displaced: …}")
	if !ok {
		return
	}
	m := p.known(es, "phases", phaseKeys, "key")
	label := func(key string, dst *string) {
		e, ok := m[key]
		if !ok {
			return
		}
		path := "phases." + key
		v, ok := p.text(e.val, path, "a phase label")
		if !ok {
			return
		}
		switch {
		case strings.TrimSpace(v) == "":
			p.errorf(e.val, path, ErrValue, "must not be empty")
		case len(v) > MaxLabelLen:
			p.errorf(e.val, path, ErrValue, "is %d bytes long; at most %d", len(v), MaxLabelLen)
		case strings.ContainsFunc(v, func(r rune) bool { return r < ' ' || r == 0x7f }):
			p.errorf(e.val, path, ErrValue, "must be one line of printable text")
		default:
			*dst = v
		}
	}
	label("injected", &ph.Injected)
	label("displaced", &ph.Displaced)
}

func (p *parser) report(n *yaml.Node, r *Report) {
	es, ok := p.mapping(n, "report", "a mapping {pvi, cut_limit, percentiles}")
	if !ok {
		return
	}
	m := p.known(es, "report", reportKeys, "key")
	if e, ok := m["pvi"]; ok {
		if pvi, ok := p.pvi(e.val, "report.pvi"); ok {
			r.PVI = pvi
		}
	}
	if e, ok := m["cut_limit"]; ok {
		if v, ok := p.number(e.val, "report.cut_limit"); ok {
			if v > 0 && v <= 1 {
				r.CutLimit = v
			} else {
				p.errorf(e.val, "report.cut_limit", ErrValue, "must be in (0, 1], got %s", e.val.Value)
			}
		}
	}
	if e, ok := m["percentiles"]; ok {
		if v, ok := p.choice(e.val, "report.percentiles", percentileNames); ok {
			r.Percentiles = v
		}
	}
}

func (p *parser) pvi(n *yaml.Node, path string) ([]float64, bool) {
	if n.Kind != yaml.SequenceNode {
		if isNull(n) {
			p.errorf(n, path, ErrMissing, "no value; want a list of checkpoints such as [0.5, 1, 2]")
		} else {
			p.errorf(n, path, ErrType, "want a list of checkpoints such as [0.5, 1, 2], got %s", describe(n))
		}
		return nil, false
	}
	if len(n.Content) == 0 {
		p.errorf(n, path, ErrValue, "needs at least one checkpoint")
		return nil, false
	}
	if len(n.Content) > MaxCheckpoints {
		p.errorf(n, path, ErrValue, "has %d checkpoints; at most %d", len(n.Content), MaxCheckpoints)
		return nil, false
	}
	good := true
	var out []float64
	prev := math.Inf(-1)
	for i, c := range n.Content {
		c = deref(c)
		ip := indexPath(path, i)
		v, ok := p.number(c, ip)
		if !ok {
			good = false
			continue
		}
		switch {
		case !(v > 0):
			p.errorf(c, ip, ErrValue, "a checkpoint must be positive (pore volumes injected), got %s", c.Value)
			good = false
		case !(v > prev):
			p.errorf(c, ip, ErrValue, "checkpoints must be strictly increasing: %s follows %g", c.Value, prev)
			good = false
		default:
			prev = v
		}
		out = append(out, v)
	}
	return out, good
}

func (p *parser) tornado(n *yaml.Node, t *Tornado) {
	es, ok := p.mapping(n, "tornado", "a mapping {low, high}")
	if !ok {
		return
	}
	m := p.known(es, "tornado", tornadoKeys, "key")
	low, high := t.Low, t.High
	okLow, okHigh := true, true
	get := func(key string, dst *float64, ok *bool) {
		e, given := m[key]
		if !given {
			return
		}
		path := "tornado." + key
		v, good := p.number(e.val, path)
		switch {
		case !good:
			*ok = false
		case !(v > 0 && v < 1):
			p.errorf(e.val, path, ErrValue, "a quantile must be in (0, 1), got %s", e.val.Value)
			*ok = false
		default:
			*dst = v
		}
	}
	get("low", &low, &okLow)
	get("high", &high, &okHigh)
	if okLow && okHigh && !(low < high) {
		at, key := n, "tornado"
		if e, ok := m["high"]; ok {
			at, key = e.val, "tornado.high"
		} else if e, ok := m["low"]; ok {
			at, key = e.val, "tornado.low"
		}
		p.errorf(at, key, ErrValue, "low must be below high (low %g, high %g)", low, high)
		return
	}
	t.Low, t.High = low, high
}

func (p *parser) sensitivity(n *yaml.Node, sn *Sensitivity, ps *paramSet) {
	es, ok := p.mapping(n, "sensitivity", "a mapping {sobol: N}")
	if !ok {
		return
	}
	m := p.known(es, "sensitivity", sensitivityKeys, "key")
	e, ok := m["sobol"]
	if !ok {
		return
	}
	v, ok := p.whole(e.val, "sensitivity.sobol", 0, MaxSobol)
	if !ok {
		return
	}
	if v > 0 && v < MinSobol {
		p.errorf(e.val, "sensitivity.sobol", ErrValue, "must be 0 (off) or at least %d, got %s", MinSobol, e.val.Value)
		return
	}
	if v > 0 && ps != nil && ps.complete && len(ps.uncertain()) == 0 {
		p.errorf(e.val, "sensitivity.sobol", ErrValue, "no parameter is uncertain, so there are no Sobol indices to compute")
		return
	}
	sn.Sobol = int(v)
}
