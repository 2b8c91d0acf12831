package acceptance

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/metrics"
)

// Problem is one thing wrong in a spec file: where it is, the key path
// (e.g. "limits.overshoot_pct.max") and what is wrong. Line and Column are
// 1-based; 0 means the position is not known.
type Problem struct {
	Line, Column int
	Key          string
	Msg          string
}

// SpecError lists every problem found in one spec file. Its Error method
// prints one problem per line as "file:line:column: key: message".
type SpecError struct {
	File     string
	Problems []Problem
}

// Error lists the problems, one per line.
func (e *SpecError) Error() string {
	lines := make([]string, 0, len(e.Problems))
	for _, p := range e.Problems {
		var b strings.Builder
		b.WriteString(e.File)
		if p.Line > 0 {
			fmt.Fprintf(&b, ":%d", p.Line)
			if p.Column > 0 {
				fmt.Fprintf(&b, ":%d", p.Column)
			}
		}
		b.WriteString(": ")
		if p.Key != "" {
			b.WriteString(p.Key)
			b.WriteString(": ")
		}
		b.WriteString(p.Msg)
		lines = append(lines, b.String())
	}
	if len(lines) == 0 {
		return e.File + ": invalid spec"
	}
	return strings.Join(lines, "\n")
}

// Spec defaults, applied by ParseSpec to keys the file leaves out.
const (
	DefaultTimeUnit         = "s"
	DefaultRiseLowPct       = 10.0
	DefaultRiseHighPct      = 90.0
	DefaultSettlingBandPct  = 2.0
	DefaultDeadTimeLevelPct = 2.0
	DefaultFinalWindowPct   = 20.0
	DefaultDelimiter        = "auto"
)

// LoadSpec reads, parses and validates the spec file at path. Besides the
// checks of ParseSpec it verifies that report.logo, when set, names an
// existing file (relative paths are taken from the spec file's folder).
// Problems in the file are returned together as a *SpecError.
func LoadSpec(path string) (*Spec, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read spec: %w", err)
	}
	s, p := parseSpecDoc(data, path)
	if logo := p.spec.Report.Logo; logo != "" && !p.skip("report.logo") {
		full := logo
		if !filepath.IsAbs(full) {
			full = filepath.Join(filepath.Dir(path), logo)
		}
		fi, serr := os.Stat(full)
		switch {
		case serr != nil:
			p.problem("report.logo", specValNode, "cannot use logo %s (paths are relative to the spec file): %v", full, specStatReason(serr))
		case fi.IsDir():
			p.problem("report.logo", specValNode, "%s is a folder, not an image file", full)
		}
	}
	if err := p.err(); err != nil {
		return nil, err
	}
	return s, nil
}

// specStatReason shortens an os.Stat error to its cause.
func specStatReason(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, os.ErrNotExist) {
			return "no such file"
		}
		return pe.Err.Error()
	}
	return err.Error()
}

// ParseSpec parses and validates a spec from data; name is the file name
// used in messages and stored as Source. Parsing is strict: unknown keys,
// wrong types and out-of-range values are all reported, each with its line,
// column and key path, in one *SpecError. On success the defaults are
// applied and SHA256 holds the hex digest of data.
func ParseSpec(data []byte, name string) (*Spec, error) {
	s, p := parseSpecDoc(data, name)
	if err := p.err(); err != nil {
		return nil, err
	}
	return s, nil
}

// LogoPath returns the report logo's path resolved against the folder of
// the spec file (Source), or "" when the spec sets no logo.
func (s *Spec) LogoPath() string {
	if s.Report.Logo == "" {
		return ""
	}
	if filepath.IsAbs(s.Report.Logo) || s.Source == "" {
		return s.Report.Logo
	}
	return filepath.Join(filepath.Dir(s.Source), s.Report.Logo)
}

// Options returns the measurement levels as fractions (the spec holds
// percentages). A level the spec leaves unset takes the default.
func (s *Spec) Options() metrics.Options {
	o := metrics.DefaultOptions()
	m := s.Metrics
	if len(m.RiseLevelsPct) == 2 {
		o.RiseLow = m.RiseLevelsPct[0] / 100
		o.RiseHigh = m.RiseLevelsPct[1] / 100
	}
	if m.SettlingBandPct > 0 {
		o.Band = m.SettlingBandPct / 100
	}
	if m.DeadTimeLevelPct > 0 {
		o.DeadTimeLevel = m.DeadTimeLevelPct / 100
	}
	if m.FinalWindowPct > 0 {
		o.FinalWindow = m.FinalWindowPct / 100
	}
	return o
}

// TimeScale returns the factor that converts the log's time column to
// seconds: 1 for s (and for an unset unit), 1e-3 for ms, 1e-6 for us. A
// unit ParseSpec would reject gives NaN, so that no time is silently
// misread.
func (s *Spec) TimeScale() float64 {
	switch s.TimeUnit {
	case "", "s":
		return 1
	case "ms":
		return 1e-3
	case "us":
		return 1e-6
	}
	return math.NaN()
}

// LimitNames returns the limited metric names in metrics.Names order. Names
// that are not metrics (possible only in a spec that was not validated)
// follow, sorted.
func (s *Spec) LimitNames() []metrics.Name {
	out := make([]metrics.Name, 0, len(s.Limits))
	for _, n := range metrics.Names {
		if _, ok := s.Limits[n]; ok {
			out = append(out, n)
		}
	}
	var rest []metrics.Name
	for k := range s.Limits {
		if metrics.Index(k) < 0 {
			rest = append(rest, k)
		}
	}
	slices.Sort(rest)
	return append(out, rest...)
}

// Explain returns a readable summary of what the spec makes stepgate do:
// the columns read from each log, how steps are found, the measurement
// levels, every limit in words and the model, if any.
func (s *Spec) Explain() string {
	var b strings.Builder
	line := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
	ru := specUnitSuffix(s.ResponseUnit)
	head := fmt.Sprintf("Spec %s revision %s", s.SpecID, s.Revision)
	if s.Title != "" {
		head += ": " + s.Title
	}
	line("%s", head)
	line("")
	line("Read from each log:")
	tu := s.TimeUnit
	if tu == "" {
		tu = DefaultTimeUnit
	}
	line("  time      column %q, in %s", s.Signals.Time, tu)
	line("  command   column %q%s", s.Signals.Command, specInUnit(s.ResponseUnit))
	line("  response  column %q%s", s.Signals.Response, specInUnit(s.ResponseUnit))
	if s.Signals.Effort != "" {
		line("  effort    column %q%s", s.Signals.Effort, specInUnit(s.EffortUnit))
	} else {
		line("  effort    not read (signals.effort not set)")
	}
	delim := map[string]string{
		"": "detected from the header row", "auto": "detected from the header row",
		"comma": "comma", "semicolon": "semicolon", "tab": "tab",
	}[s.Log.Delimiter]
	if delim == "" {
		delim = s.Log.Delimiter
	}
	mark := "point (1.5)"
	if s.Log.DecimalComma {
		mark = "comma (1,5)"
	}
	line("  fields separated by: %s; decimal mark: %s", delim, mark)
	line("")
	line("Steps:")
	line("  a step is a change of the command by at least %s%s; each step is", specFormatFloat(s.Steps.MinChange), ru)
	line("  measured from its step instant (the first sample at the new command)")
	line("  to the next step or the end of the record")
	line("")
	o := s.Options()
	line("Measurement levels:")
	line("  rise time between %s %% and %s %% of the transition", specPct(o.RiseLow), specPct(o.RiseHigh))
	line("  settling band ±%s %% of the step size around the final value", specPct(o.Band))
	line("  dead time ends when the response has moved %s %% of the transition", specPct(o.DeadTimeLevel))
	line("  final value taken from the last %s %% of each step's record", specPct(o.FinalWindow))
	line("")
	line("Limits (a unit passes only when every limited metric of every step is")
	line("measured and within its limits; a value on a limit passes):")
	names := s.LimitNames()
	if len(names) == 0 {
		line("  none")
	}
	for _, n := range names {
		line("  %s", s.describeLimit(n))
	}
	line("")
	if s.Model == nil {
		line("Model: none (no prediction, no comparison with a model)")
	} else {
		line("Model:")
		for _, l := range specExplainModel(s.Model, ru) {
			line("  %s", l)
		}
	}
	if r := s.Report; r.Company != "" || r.Site != "" || r.Customer != "" || r.Logo != "" {
		line("")
		line("Report:")
		for _, kv := range [][2]string{{"company", r.Company}, {"site", r.Site}, {"address", r.Address}, {"customer", r.Customer}, {"logo", r.Logo}} {
			if kv[1] != "" {
				line("  %-9s %s", kv[0], kv[1])
			}
		}
	}
	return b.String()
}

// describeLimit words one limit, e.g. "overshoot_pct ≤ 8 %".
func (s *Spec) describeLimit(name metrics.Name) string {
	l := s.Limits[name]
	u := specUnitSuffix(name.Unit(s.ResponseUnit))
	switch {
	case l.Min != nil && l.Max != nil:
		return fmt.Sprintf("%s ≤ %s ≤ %s%s", specFormatFloat(*l.Min), name, specFormatFloat(*l.Max), u)
	case l.Max != nil:
		return fmt.Sprintf("%s ≤ %s%s", name, specFormatFloat(*l.Max), u)
	case l.Min != nil:
		return fmt.Sprintf("%s ≥ %s%s", name, specFormatFloat(*l.Min), u)
	}
	return string(name) + ": no bound"
}

// specExplainModel words the model section.
func specExplainModel(m *model.Config, ru string) []string {
	var out []string
	switch {
	case m.ReferenceTest != nil:
		r := m.ReferenceTest
		out = append(out, fmt.Sprintf("plant backed out of a closed-loop reference test at proportional gain %s:", specFormatFloat(r.Gain)),
			fmt.Sprintf("  G·ωn²/(s² + 2ζωn s + ωn²) with G = %s, ζ = %s, ωn = %s rad/s",
				specFormatFloat(r.StaticGain), specFormatFloat(r.Damping), specFormatFloat(r.NaturalFrequency)))
	case m.Plant != nil:
		out = append(out, fmt.Sprintf("plant (%s) / (%s)", specPoly(m.Plant.Numerator), specPoly(m.Plant.Denominator)))
	}
	if m.PlantDeadTime > 0 {
		out = append(out, fmt.Sprintf("plant dead time %s s", specFormatFloat(m.PlantDeadTime)))
	}
	c := m.Controller
	ctl := fmt.Sprintf("controller kp = %s, ki = %s, kd = %s", specFormatFloat(c.Kp), specFormatFloat(c.Ki), specFormatFloat(c.Kd))
	if c.Kd > 0 {
		if c.DerivativeFilterHz > 0 {
			ctl += fmt.Sprintf(", derivative filtered at %s Hz", specFormatFloat(c.DerivativeFilterHz))
		} else {
			ctl += ", derivative unfiltered"
		}
	}
	out = append(out, ctl)
	if m.Loop != nil {
		out = append(out, fmt.Sprintf("loop sampled every %s s, controller output delayed %s s", specFormatFloat(m.Loop.SamplePeriod), specFormatFloat(m.Loop.Delay)))
	} else {
		out = append(out, "loop continuous (no sampling or delay given)")
	}
	if a := m.Actuator; a != nil {
		lim := "no effort limit"
		if a.EffortLimit > 0 {
			lim = "effort limited to ±" + specFormatFloat(a.EffortLimit)
		}
		db := "no deadband"
		if a.Deadband > 0 {
			db = "deadband " + specFormatFloat(a.Deadband)
		}
		out = append(out, "actuator: "+lim+", "+db)
	}
	if m.Loop != nil || m.Actuator != nil || m.PlantDeadTime > 0 {
		out = append(out, "each step is predicted ideal (continuous, linear) and realised (as above)")
	} else {
		out = append(out, "each step is predicted ideal (continuous, linear)")
	}
	return out
}

// specPoly writes coefficients, highest power first, as a polynomial in s,
// e.g. [1, 20, 0] → "s^2 + 20·s".
func specPoly(c []float64) string {
	var b strings.Builder
	for i, v := range c {
		p := len(c) - 1 - i
		if v == 0 {
			continue
		}
		a := math.Abs(v)
		switch {
		case b.Len() == 0 && v < 0:
			b.WriteString("−")
		case b.Len() > 0 && v < 0:
			b.WriteString(" − ")
		case b.Len() > 0:
			b.WriteString(" + ")
		}
		if a != 1 || p == 0 {
			b.WriteString(specFormatFloat(a))
			if p > 0 {
				b.WriteString("·")
			}
		}
		switch {
		case p == 1:
			b.WriteString("s")
		case p > 1:
			b.WriteString("s^" + strconv.Itoa(p))
		}
	}
	if b.Len() == 0 {
		return "0"
	}
	return b.String()
}

func specUnitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " " + u
}

func specInUnit(u string) string {
	if u == "" {
		return ""
	}
	return ", in " + u
}

// specPct writes a fraction as a percentage without float noise.
func specPct(f float64) string {
	return strconv.FormatFloat(f*100, 'g', 10, 64)
}

// specFormatFloat writes a number as the shortest text that reads back to
// it, so a limit appears as written in the spec.
func specFormatFloat(f float64) string {
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// ---- parsing ----

// specLoc is where a key path was found: its key node (nil for list
// elements) and its value node.
type specLoc struct {
	key, val *yaml.Node
}

// specParser collects problems while reading one spec.
type specParser struct {
	file  string
	root  *yaml.Node
	locs  map[string]specLoc
	bad   map[string]bool
	probs []Problem
	spec  *Spec
	// drop holds the nodes the walk rejected; they are left out when the
	// rest of the file is decoded, so that the remaining checks still run.
	drop map[*yaml.Node]bool
}

// specNodeSide picks which node of a key a problem points at.
type specNodeSide int

const (
	specValNode specNodeSide = iota
	specKeyNode
)

var specYAMLLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// parseSpecDoc does all of ParseSpec's work and keeps the parser, so that
// LoadSpec can add its own problems.
func parseSpecDoc(data []byte, name string) (*Spec, *specParser) {
	p := &specParser{file: name, locs: map[string]specLoc{}, bad: map[string]bool{}, spec: &Spec{}, drop: map[*yaml.Node]bool{}}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			p.probs = append(p.probs, Problem{Msg: "the file is empty; `stepgate spec init` prints a template"})
		} else {
			p.probs = append(p.probs, specSyntaxProblem(err, data))
		}
		return nil, p
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		p.probs = append(p.probs, Problem{Line: extra.Line, Column: extra.Column, Msg: "only one YAML document is allowed; remove the '---' separator and what follows"})
	} else if !errors.Is(err, io.EOF) {
		p.probs = append(p.probs, specSyntaxProblem(err, data))
	}
	root := &doc
	if root.Kind == yaml.DocumentNode && len(root.Content) == 1 {
		root = root.Content[0]
	}
	root = specDeref(root)
	p.root = root
	if specIsNull(root) {
		line, col := root.Line, root.Column
		if line > lastLine(data) {
			// An empty document ("---" alone) has no token to point at; the
			// parser places it after the end of the file.
			line, col = 0, 0
		}
		p.probs = append(p.probs, Problem{Line: line, Column: col, Msg: "the file holds no keys; `stepgate spec init` prints a template"})
		return nil, p
	}
	if root.Kind != yaml.MappingNode {
		p.probs = append(p.probs, Problem{Line: root.Line, Column: root.Column,
			Msg: fmt.Sprintf("a spec must be a mapping of keys (%s), got %s", strings.Join(specKeys(reflect.TypeOf(Spec{})), ", "), specDescribe(root))})
		return nil, p
	}
	p.walk(root, reflect.TypeOf(Spec{}), "")

	if len(p.probs) == 0 {
		// The walk has checked every key and type; the strict decoder
		// confirms it.
		strict := yaml.NewDecoder(bytes.NewReader(data))
		strict.KnownFields(true)
		if err := strict.Decode(p.spec); err != nil {
			p.probs = append(p.probs, Problem{Msg: "cannot decode: " + strings.TrimPrefix(err.Error(), "yaml: ")})
		}
	} else if err := p.clean(root).Decode(p.spec); err != nil {
		// The rejected nodes are gone, so this is not expected; report it
		// rather than judge with a half-read spec.
		p.probs = append(p.probs, Problem{Msg: "cannot decode: " + strings.TrimPrefix(err.Error(), "yaml: ")})
	}
	p.defaults()
	p.validate()
	s := p.spec
	s.Source = name
	sum := sha256.Sum256(data)
	s.SHA256 = hex.EncodeToString(sum[:])
	return s, p
}

// specSyntaxProblem turns a YAML syntax error into a problem with its line.
// The YAML library counts lines from 1 for errors found while scanning, but
// from 0 for "did not find expected …" errors, whose line is where the
// unclosed part starts; those are shifted to count from 1 and say so. When
// the library points past the last line (it places the end of the file on
// a line of its own), the problem is put on the last line and said to be
// at the end of the file.
func specSyntaxProblem(err error, data []byte) Problem {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	last := lastLine(data)
	atEnd := func(msg string) Problem {
		return Problem{Line: last, Msg: "invalid YAML: " + msg + " at the end of the file: a bracket, brace or quote opened earlier is not closed"}
	}
	if m := specYAMLLine.FindStringSubmatch(err.Error()); m != nil {
		n, _ := strconv.Atoi(m[1])
		msg = m[2]
		if strings.HasPrefix(msg, "did not find expected") {
			if n+1 > last {
				return atEnd(msg)
			}
			return Problem{Line: n + 1, Msg: "invalid YAML: " + msg + " in the part that starts on this line"}
		}
		if n > last {
			return atEnd(msg)
		}
		return Problem{Line: n, Msg: "invalid YAML: " + msg}
	}
	if strings.HasPrefix(msg, "did not find expected") {
		return Problem{Line: 1, Msg: "invalid YAML: " + msg + " in the part that starts on this line"}
	}
	return Problem{Msg: "invalid YAML: " + msg}
}

// err returns the collected problems sorted by position, or nil.
func (p *specParser) err() error {
	if len(p.probs) == 0 {
		return nil
	}
	probs := append([]Problem(nil), p.probs...)
	sort.SliceStable(probs, func(i, j int) bool {
		li, lj := probs[i].Line, probs[j].Line
		if li == 0 {
			li = math.MaxInt
		}
		if lj == 0 {
			lj = math.MaxInt
		}
		if li != lj {
			return li < lj
		}
		return probs[i].Column < probs[j].Column
	})
	return &SpecError{File: p.file, Problems: probs}
}

// problem records a problem at a key path and marks the path bad, so that
// later checks of the same value stay quiet.
func (p *specParser) problem(path string, side specNodeSide, format string, a ...any) {
	n := p.node(path, side)
	pr := Problem{Key: path, Msg: fmt.Sprintf(format, a...)}
	if n != nil {
		pr.Line, pr.Column = n.Line, n.Column
	}
	p.probs = append(p.probs, pr)
	p.bad[path] = true
}

// problemAt records a problem at a node found by the walk and drops the
// node from what is decoded.
func (p *specParser) problemAt(n *yaml.Node, path, format string, a ...any) {
	p.probs = append(p.probs, Problem{Line: n.Line, Column: n.Column, Key: path, Msg: fmt.Sprintf(format, a...)})
	p.bad[path] = true
	p.drop[n] = true
}

// clean copies a node tree without the nodes the walk rejected: a mapping
// loses the pairs whose key or value was rejected, and a rejected list
// element drops its whole list (the walk marks the list).
func (p *specParser) clean(n *yaml.Node) *yaml.Node {
	n = specDeref(n)
	c := *n
	switch n.Kind {
	case yaml.MappingNode:
		c.Content = nil
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if p.drop[k] || p.drop[v] || p.drop[specDeref(v)] {
				continue
			}
			c.Content = append(c.Content, k, p.clean(v))
		}
	case yaml.SequenceNode:
		c.Content = nil
		for _, e := range n.Content {
			c.Content = append(c.Content, p.clean(e))
		}
	}
	return &c
}

// skipTree reports whether a path, an ancestor or a descendant already has
// a problem: checks of a whole section use it, since a rejected part was
// left out of the decoded section.
func (p *specParser) skipTree(path string) bool {
	if p.skip(path) {
		return true
	}
	for k := range p.bad {
		if strings.HasPrefix(k, path+".") || strings.HasPrefix(k, path+"[") {
			return true
		}
	}
	return false
}

// node finds the node for a path; for a missing key, the nearest present
// ancestor's key, or the document's root.
func (p *specParser) node(path string, side specNodeSide) *yaml.Node {
	if l, ok := p.locs[path]; ok {
		if side == specKeyNode && l.key != nil {
			return l.key
		}
		return l.val
	}
	for q := specParent(path); q != ""; q = specParent(q) {
		if l, ok := p.locs[q]; ok {
			if l.key != nil {
				return l.key
			}
			return l.val
		}
	}
	return p.root
}

// specParent strips the last element of a key path ("a.b[2]" → "a.b").
func specParent(path string) string {
	i := strings.LastIndexAny(path, ".[")
	if i < 0 {
		return ""
	}
	return path[:i]
}

// skip reports whether a path or one of its ancestors already has a
// problem.
func (p *specParser) skip(path string) bool {
	for q := path; q != ""; q = specParent(q) {
		if p.bad[q] {
			return true
		}
	}
	return false
}

// present reports whether the key path is in the file with a non-null
// value.
func (p *specParser) present(path string) bool {
	l, ok := p.locs[path]
	return ok && !specIsNull(l.val)
}

func specJoin(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func specDeref(n *yaml.Node) *yaml.Node {
	for n != nil && n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	return n
}

func specIsNull(n *yaml.Node) bool {
	return n == nil || n.Kind == 0 || (n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null")
}

// specDescribe names what a node holds, for messages.
func specDescribe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		if n.ShortTag() == "!!str" {
			return fmt.Sprintf("text %q", n.Value)
		}
		return n.Value
	}
	return "an empty value"
}

// specField is one YAML key of a struct.
type specField struct {
	name string
	typ  reflect.Type
}

// specFields lists a struct type's YAML keys in declaration order.
func specFields(t reflect.Type) []specField {
	var out []specField
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		tag := f.Tag.Get("yaml")
		name, _, _ := strings.Cut(tag, ",")
		if name == "-" {
			continue
		}
		if name == "" {
			name = strings.ToLower(f.Name)
		}
		out = append(out, specField{name, f.Type})
	}
	return out
}

func specKeys(t reflect.Type) []string {
	var out []string
	for _, f := range specFields(t) {
		out = append(out, f.name)
	}
	return out
}

// walk checks a node against the Go type it will be decoded into: unknown
// and duplicate keys, and values of the wrong kind or not finite. It
// records the position of every key path it meets.
func (p *specParser) walk(n *yaml.Node, t reflect.Type, path string) {
	n = specDeref(n)
	if specIsNull(n) {
		return
	}
	switch t.Kind() {
	case reflect.Pointer:
		p.walk(n, t.Elem(), path)
	case reflect.Struct:
		fields := specFields(t)
		keys := specKeys(t)
		if n.Kind != yaml.MappingNode {
			p.problemAt(n, path, "must be a mapping with keys %s; got %s", strings.Join(keys, ", "), specDescribe(n))
			return
		}
		p.walkMapping(n, path, func(k, v *yaml.Node, kp string) {
			for _, f := range fields {
				if f.name == k.Value {
					p.walk(v, f.typ, kp)
					return
				}
			}
			p.problemAt(k, kp, "unknown key; valid keys here: %s", strings.Join(keys, ", "))
		})
	case reflect.Map:
		if n.Kind != yaml.MappingNode {
			p.problemAt(n, path, "must be a mapping of metric names to {min, max}; got %s", specDescribe(n))
			return
		}
		p.walkMapping(n, path, func(k, v *yaml.Node, kp string) { p.walk(v, t.Elem(), kp) })
	case reflect.Slice:
		if n.Kind != yaml.SequenceNode {
			p.problemAt(n, path, "must be a list of numbers such as [1, 2]; got %s", specDescribe(n))
			return
		}
		for i, e := range n.Content {
			ep := fmt.Sprintf("%s[%d]", path, i)
			p.locs[ep] = specLoc{val: e}
			p.walk(e, t.Elem(), ep)
			if p.bad[ep] {
				p.bad[path] = true
				p.drop[n] = true
			}
		}
	case reflect.Float64:
		var f float64
		if n.Kind != yaml.ScalarNode || n.Decode(&f) != nil {
			p.problemAt(n, path, "must be a number, got %s", specDescribe(n))
			return
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			p.problemAt(n, path, "must be a finite number, got %s", n.Value)
		}
	case reflect.String:
		if n.Kind != yaml.ScalarNode {
			p.problemAt(n, path, "must be text, got %s", specDescribe(n))
		}
	case reflect.Bool:
		var b bool
		if n.Kind != yaml.ScalarNode || n.Decode(&b) != nil {
			p.problemAt(n, path, "must be true or false, got %s", specDescribe(n))
		}
	default:
		p.problemAt(n, path, "cannot be read (unsupported type %s)", t)
	}
}

// walkMapping visits the keys of a mapping node, reporting keys that are
// not plain names and keys given twice. Keys merged in with YAML's "<<" are
// visited after the mapping's own keys, which override them.
func (p *specParser) walkMapping(n *yaml.Node, path string, visit func(k, v *yaml.Node, kp string)) {
	seen := map[string]*yaml.Node{}
	var merged []*yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := specDeref(n.Content[i]), n.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.ShortTag() == "!!merge" {
			v = specDeref(v)
			switch v.Kind {
			case yaml.MappingNode:
				merged = append(merged, v)
			case yaml.SequenceNode:
				for _, e := range v.Content {
					if e = specDeref(e); e.Kind == yaml.MappingNode {
						merged = append(merged, e)
					}
				}
			}
			continue
		}
		if k.Kind != yaml.ScalarNode {
			p.problemAt(k, path, "a key must be a plain name, got %s", specDescribe(k))
			continue
		}
		kp := specJoin(path, k.Value)
		if first, dup := seen[k.Value]; dup {
			p.problemAt(k, kp, "key given twice (first at line %d)", first.Line)
			continue
		}
		seen[k.Value] = k
		p.locs[kp] = specLoc{key: k, val: v}
		visit(k, v, kp)
	}
	for _, m := range merged {
		for i := 0; i+1 < len(m.Content); i += 2 {
			k, v := specDeref(m.Content[i]), m.Content[i+1]
			if k.Kind != yaml.ScalarNode || seen[k.Value] != nil {
				continue
			}
			kp := specJoin(path, k.Value)
			seen[k.Value] = k
			p.locs[kp] = specLoc{key: k, val: v}
			visit(k, v, kp)
		}
	}
}

// defaults fills the keys the file leaves out.
func (p *specParser) defaults() {
	s := p.spec
	if !p.present("time_unit") {
		s.TimeUnit = DefaultTimeUnit
	}
	if !p.present("metrics.rise_levels_pct") {
		s.Metrics.RiseLevelsPct = []float64{DefaultRiseLowPct, DefaultRiseHighPct}
	}
	if !p.present("metrics.settling_band_pct") {
		s.Metrics.SettlingBandPct = DefaultSettlingBandPct
	}
	if !p.present("metrics.dead_time_level_pct") {
		s.Metrics.DeadTimeLevelPct = DefaultDeadTimeLevelPct
	}
	if !p.present("metrics.final_window_pct") {
		s.Metrics.FinalWindowPct = DefaultFinalWindowPct
	}
	if !p.present("log.delimiter") {
		s.Log.Delimiter = DefaultDelimiter
	}
}

// validate applies the value rules to the decoded spec.
func (p *specParser) validate() {
	s := p.spec
	p.requireText("spec_id", s.SpecID, "the spec's identifier, printed on every report page")
	p.requireText("revision", s.Revision, "the spec's revision, printed on every report page")

	// Signals.
	sig := []struct{ key, val, what string }{
		{"signals.time", s.Signals.Time, "the log column holding the time"},
		{"signals.command", s.Signals.Command, "the log column holding the commanded position"},
		{"signals.response", s.Signals.Response, "the log column holding the measured position"},
	}
	for _, c := range sig {
		p.requireText(c.key, c.val, c.what)
	}
	if s.Signals.Effort != "" || p.present("signals.effort") {
		if strings.TrimSpace(s.Signals.Effort) == "" && !p.skip("signals.effort") {
			p.problem("signals.effort", specValNode, "must not be empty; leave the key out when the logs have no effort column")
		}
		sig = append(sig, struct{ key, val, what string }{"signals.effort", s.Signals.Effort, ""})
	}
	for i := range sig {
		for j := 0; j < i; j++ {
			a, b := sig[j], sig[i]
			if a.val != "" && a.val == b.val && !p.skip(b.key) && !p.skip(a.key) {
				p.problem(b.key, specValNode, "must differ from %s (both are %q)", a.key, a.val)
			}
		}
	}

	if !p.skip("time_unit") {
		switch s.TimeUnit {
		case "s", "ms", "us":
		default:
			p.problem("time_unit", specValNode, "must be one of s, ms, us; got %q", s.TimeUnit)
		}
	}

	// Log format.
	if !p.skip("log.delimiter") {
		switch s.Log.Delimiter {
		case "auto", "comma", "semicolon", "tab":
			if s.Log.DecimalComma && s.Log.Delimiter == "comma" && !p.skip("log.decimal_comma") {
				p.problem("log.decimal_comma", specValNode, "cannot be true with delimiter comma: the comma cannot both separate fields and mark decimals; use semicolon or tab")
			}
		default:
			p.problem("log.delimiter", specValNode, "must be one of auto, comma, semicolon, tab; got %q", s.Log.Delimiter)
		}
	}

	// Steps.
	if !p.skip("steps.min_change") {
		if !p.present("steps.min_change") {
			p.problem("steps.min_change", specValNode, "required: the smallest command change that counts as a step, > 0, in response units")
		} else if !(s.Steps.MinChange > 0) {
			p.problem("steps.min_change", specValNode, "must be > 0, got %s", specFormatFloat(s.Steps.MinChange))
		}
	}

	// Measurement levels.
	if !p.skip("metrics.rise_levels_pct") {
		r := s.Metrics.RiseLevelsPct
		switch {
		case len(r) != 2:
			p.problem("metrics.rise_levels_pct", specValNode, "must be two numbers [low, high], got %d", len(r))
		case !(0 < r[0] && r[0] < r[1] && r[1] < 100):
			p.problem("metrics.rise_levels_pct", specValNode, "must satisfy 0 < low < high < 100, got [%s, %s]", specFormatFloat(r[0]), specFormatFloat(r[1]))
		}
	}
	p.openRange("metrics.settling_band_pct", s.Metrics.SettlingBandPct, 0, 100, false)
	p.openRange("metrics.dead_time_level_pct", s.Metrics.DeadTimeLevelPct, 0, 50, false)
	p.openRange("metrics.final_window_pct", s.Metrics.FinalWindowPct, 0, 100, true)

	p.validateLimits()

	// Report.
	if logo := s.Report.Logo; logo != "" && !p.skip("report.logo") {
		switch strings.ToLower(filepath.Ext(logo)) {
		case ".png", ".jpg", ".jpeg":
		default:
			p.problem("report.logo", specValNode, "must be a .png, .jpg or .jpeg file, got %q", logo)
		}
	}

	if s.Model != nil && !p.skip("model") {
		p.validateModel(s.Model)
	}
}

// requireText checks a required, non-blank text key.
func (p *specParser) requireText(path, v, what string) {
	if p.skip(path) {
		return
	}
	if !p.present(path) {
		p.problem(path, specValNode, "required: %s", what)
	} else if strings.TrimSpace(v) == "" {
		p.problem(path, specValNode, "must not be empty: %s", what)
	}
}

// openRange checks lo < v < hi, or lo < v ≤ hi when hiIncl.
func (p *specParser) openRange(path string, v, lo, hi float64, hiIncl bool) {
	if p.skip(path) {
		return
	}
	ok := v > lo && (v < hi || (hiIncl && v == hi))
	if ok {
		return
	}
	op := "<"
	if hiIncl {
		op = "≤"
	}
	p.problem(path, specValNode, "must be > %s and %s %s, got %s", specFormatFloat(lo), op, specFormatFloat(hi), specFormatFloat(v))
}

func specMetricList() string {
	var b strings.Builder
	for i, n := range metrics.Names {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(string(n))
	}
	return b.String()
}

// validateLimits checks the limits section.
func (p *specParser) validateLimits() {
	s := p.spec
	if p.skipTree("limits") && len(s.Limits) == 0 {
		return
	}
	if len(s.Limits) == 0 {
		p.problem("limits", specKeyNode, "at least one limit is required, e.g. overshoot_pct: {max: 8}; metric names: %s", specMetricList())
		return
	}
	names := make([]metrics.Name, 0, len(s.Limits))
	for k := range s.Limits {
		names = append(names, k)
	}
	slices.Sort(names)
	for _, name := range names {
		path := "limits." + string(name)
		if p.skipTree(path) {
			continue
		}
		m, known := metrics.Lookup(name)
		if !known {
			p.problem(path, specKeyNode, "unknown metric; valid names: %s", specMetricList())
			continue
		}
		l := s.Limits[name]
		if l.Min == nil && l.Max == nil {
			p.problem(path, specKeyNode, "needs min, max or both, e.g. {max: 8}")
			continue
		}
		bad := false
		if m.NonNegative {
			for _, b := range []struct {
				key string
				v   *float64
			}{{"min", l.Min}, {"max", l.Max}} {
				if b.v != nil && *b.v < 0 && !p.skip(path+"."+b.key) {
					p.problem(path+"."+b.key, specValNode, "must be ≥ 0, got %s", specFormatFloat(*b.v))
					bad = true
				}
			}
		}
		if !bad && l.Min != nil && l.Max != nil && *l.Min > *l.Max && !p.skip(path+".min") && !p.skip(path+".max") {
			p.problem(path+".min", specValNode, "must be ≤ max, got min %s > max %s", specFormatFloat(*l.Min), specFormatFloat(*l.Max))
		}
	}
}

// validateModel applies the structural rules to the model section; whether
// the loop is stable is decided by the model package.
func (p *specParser) validateModel(m *model.Config) {
	// A rejected reference_test or plant section was left out, so which of
	// the two the file gives is not known; its problem is already reported.
	if !p.skip("model.reference_test") && !p.skip("model.plant") {
		switch {
		case m.ReferenceTest != nil && m.Plant != nil:
			p.problem("model.plant", specKeyNode, "give either reference_test or plant, not both")
		case m.ReferenceTest == nil && m.Plant == nil:
			p.problem("model", specKeyNode, "needs reference_test (a closed-loop step test at a known gain) or plant (the transfer function)")
		case m.ReferenceTest != nil:
			r := m.ReferenceTest
			p.positive("model.reference_test.gain", r.Gain, "the proportional gain during the reference test")
			p.positive("model.reference_test.static_gain", r.StaticGain, "the closed-loop steady-state gain G")
			p.positive("model.reference_test.damping", r.Damping, "the damping ratio ζ")
			p.positive("model.reference_test.natural_frequency_rad_s", r.NaturalFrequency, "the natural frequency ωn in rad/s")
		default:
			p.validatePlant(m.Plant)
		}
	}
	p.nonNegative("model.plant_dead_time_s", m.PlantDeadTime)

	c := m.Controller
	p.nonNegative("model.controller.kp", c.Kp)
	p.nonNegative("model.controller.ki", c.Ki)
	p.nonNegative("model.controller.kd", c.Kd)
	p.nonNegative("model.controller.derivative_filter_hz", c.DerivativeFilterHz)
	if !(c.Kp > 0 || c.Ki > 0) && !p.skip("model.controller.kp") && !p.skip("model.controller.ki") {
		p.problem("model.controller", specKeyNode, "kp or ki must be > 0, got kp %s and ki %s", specFormatFloat(c.Kp), specFormatFloat(c.Ki))
	}
	if m.Loop != nil {
		p.positive("model.loop.sample_period_s", m.Loop.SamplePeriod, "the controller's sample period in s")
		p.nonNegative("model.loop.delay_s", m.Loop.Delay)
	}
	if m.Actuator != nil {
		p.nonNegative("model.actuator.effort_limit", m.Actuator.EffortLimit)
		p.nonNegative("model.actuator.deadband", m.Actuator.Deadband)
	}
	// The model package has rules of its own (a derivative needs its
	// filter, a deadband must lie below the effort limit); a model it
	// refuses would leave every run without predictions, so it is a spec
	// problem at the key it names.
	if !p.skipTree("model") {
		if _, err := model.Build(*m); err != nil {
			var fe *model.FieldError
			if errors.As(err, &fe) {
				p.problem(fe.Key, specValNode, "%s", fe.Msg)
			} else {
				p.problem("model", specKeyNode, "%v", err)
			}
		}
	}
}

// validatePlant checks that the plant is a proper rational function.
func (p *specParser) validatePlant(tf *model.TransferFunc) {
	num, den := "model.plant.numerator", "model.plant.denominator"
	if p.skip("model.plant") {
		return
	}
	okDen, okNum := false, false
	if !p.skip(den) {
		switch {
		case len(tf.Denominator) == 0:
			p.problem(den, specValNode, "required: at least one coefficient, highest power of s first, e.g. [1, 20, 0]")
		case tf.Denominator[0] == 0:
			p.problem(den+"[0]", specValNode, "the leading coefficient must not be 0")
		default:
			okDen = true
		}
	}
	if !p.skip(num) {
		switch {
		case len(tf.Numerator) == 0:
			p.problem(num, specValNode, "required: at least one coefficient, highest power of s first, e.g. [200]")
		case specDegree(tf.Numerator) < 0:
			p.problem(num, specValNode, "must not be all zero: the plant would never move")
		default:
			okNum = true
		}
	}
	if okDen && okNum {
		if dn, dd := specDegree(tf.Numerator), len(tf.Denominator)-1; dn > dd {
			p.problem(num, specValNode, "degree %d exceeds the denominator's degree %d: the plant must be proper", dn, dd)
		}
	}
}

// specDegree is a polynomial's degree ignoring leading zeros; −1 for the
// zero polynomial.
func specDegree(c []float64) int {
	for i, v := range c {
		if v != 0 {
			return len(c) - 1 - i
		}
	}
	return -1
}

func (p *specParser) positive(path string, v float64, what string) {
	if p.skip(path) {
		return
	}
	if !p.present(path) {
		p.problem(path, specValNode, "required: %s, > 0", what)
	} else if !(v > 0) {
		p.problem(path, specValNode, "must be > 0, got %s", specFormatFloat(v))
	}
}

func (p *specParser) nonNegative(path string, v float64) {
	if !p.skip(path) && v < 0 {
		p.problem(path, specValNode, "must be ≥ 0, got %s", specFormatFloat(v))
	}
}

// lastLine is the number of the last line of data that holds anything (a
// final line break opens no line of its own), at least 1.
func lastLine(data []byte) int {
	last := bytes.Count(data, []byte("\n"))
	if len(data) > 0 && data[len(data)-1] != '\n' {
		last++
	}
	return max(last, 1)
}
