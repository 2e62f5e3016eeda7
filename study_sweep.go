package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"regexp"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"gopkg.in/yaml.v3"
)

// Vary is one swept scenario key: a dotted path such as "supply.voltage"
// or "plunger.spring preload" and the values it takes, written as they
// would be in the scenario file ("20 V").
type Vary struct {
	Key    string
	Values []string
	Spec   string // the text it was read from, for messages ("supply.voltage=18 V:30 V:13")
}

// spec is the --vary text of v, rebuilt when v was not read by ParseVary.
func (v Vary) spec() string {
	if v.Spec != "" {
		return v.Spec
	}
	return v.Key + "=" + strings.Join(v.Values, ",")
}

// VarySyntax is the form of a --vary value, for messages and help.
const VarySyntax = `KEY=FROM:TO:STEPS (e.g. "supply.voltage=18 V:30 V:13": 13 values from 18 V to 30 V, both included) or KEY=V1,V2,... (e.g. "plunger.mass=5 g,8 g")`

// maxSweepSteps bounds STEPS of one range.
const maxSweepSteps = 1000000

// MaxSweepPoints bounds the number of points of a sweep (the product of
// the numbers of values of its keys): the grid is held in memory, and a
// million points of a millisecond each already take a quarter of an hour
// on all cores (common practice, no source).
const MaxSweepPoints = 1000000

// ParseVary reads "KEY=FROM:TO:STEPS" (STEPS values from FROM to TO, both
// ends included; TO may leave out FROM's unit) or "KEY=V1,V2,V3". Its
// errors name the flag (--vary) and state the syntax. The key is checked
// against the scenario by Sweeper.Check, the values by the loader at each
// point.
func ParseVary(spec string) (Vary, error) {
	bad := func(err error) (Vary, error) {
		return Vary{}, fmt.Errorf("--vary %q: %v; expected %s", spec, err, VarySyntax)
	}
	key, rng, ok := strings.Cut(spec, "=")
	if !ok {
		return bad(errors.New("no \"=\" between the key and its values"))
	}
	k, err := varyKey(key)
	if err != nil {
		return bad(err)
	}
	v := Vary{Key: k, Spec: spec}
	if want := keyExpects(k); want != "" {
		// A value's error names what the key takes: "supply.voltage takes a
		// voltage, e.g. \"24 V\"".
		bad = func(err error) (Vary, error) {
			return Vary{}, fmt.Errorf("--vary %q: %v; %s; expected %s", spec, err, want, VarySyntax)
		}
	}
	if strings.TrimSpace(rng) == "" {
		return bad(errors.New("no values after \"=\""))
	}
	if strings.Contains(rng, ":") {
		if strings.Contains(rng, ",") {
			return bad(fmt.Errorf("%q mixes a range (:) and a list (,)", rng))
		}
		if v.Values, err = varyRange(rng); err != nil {
			return bad(err)
		}
		return v, nil
	}
	for _, p := range strings.Split(rng, ",") {
		if p = strings.TrimSpace(p); p != "" {
			v.Values = append(v.Values, p)
		}
	}
	if len(v.Values) == 0 {
		return bad(errors.New("no values after \"=\""))
	}
	return v, nil
}

// varyKey returns the dotted key of a --vary value, its parts trimmed.
func varyKey(key string) (string, error) {
	parts := strings.Split(key, ".")
	for i, p := range parts {
		if parts[i] = strings.TrimSpace(p); parts[i] == "" {
			if strings.TrimSpace(key) == "" {
				return "", errors.New("no key before \"=\"")
			}
			return "", fmt.Errorf("key %q has an empty part; a key is a dotted path of scenario keys such as \"supply.voltage\"", strings.TrimSpace(key))
		}
	}
	k := strings.Join(parts, ".")
	for _, r := range k {
		if isControlRune(r) || r == utf8.RuneError {
			return "", fmt.Errorf("the key has the control character or invalid byte %U", r)
		}
	}
	return k, nil
}

// varyRange returns the values of a range FROM:TO:STEPS, with FROM's
// unit.
func varyRange(rng string) ([]string, error) {
	r := strings.Split(rng, ":")
	switch {
	case len(r) == 2:
		return nil, fmt.Errorf("the range %q has no STEPS (the number of values)", strings.TrimSpace(rng))
	case len(r) != 3:
		return nil, fmt.Errorf("the range %q has %d parts, not the three FROM:TO:STEPS", strings.TrimSpace(rng), len(r))
	}
	a, ua, err := splitValue(r[0])
	if err != nil {
		return nil, fmt.Errorf("FROM: %v", err)
	}
	b, ub, err := splitValue(r[1])
	if err != nil {
		return nil, fmt.Errorf("TO: %v", err)
	}
	if ub == "" {
		ub = ua
	}
	if ua != ub {
		return nil, fmt.Errorf("FROM and TO must use the same unit (%q, %q)", ua, ub)
	}
	n, err := strconv.Atoi(strings.TrimSpace(r[2]))
	switch {
	case err != nil || n < 1 || n > maxSweepSteps:
		return nil, fmt.Errorf("STEPS %q must be a whole number from 1 to %d", strings.TrimSpace(r[2]), maxSweepSteps)
	case n == 1 && a != b:
		return nil, fmt.Errorf("STEPS 1 gives FROM alone; a range from %q to %q needs STEPS of 2 or more", strings.TrimSpace(r[0]), strings.TrimSpace(r[1]))
	}
	values := make([]string, 0, n)
	var buf []byte // a value's text: the number, then the unit (one allocation per value)
	for k := 0; k < n; k++ {
		x := a
		if n > 1 {
			u := float64(k) / float64(n-1)
			if d := b - a; !math.IsInf(d, 0) {
				x = a + d*u
			} else {
				x = a*(1-u) + b*u // FROM and TO far apart: b − a overflows
			}
		}
		buf = strconv.AppendFloat(buf[:0], x, 'g', 10, 64)
		if ua != "" { // trimmed by splitValue
			buf = append(append(buf, ' '), ua...)
		}
		values = append(values, string(buf))
	}
	return values, nil
}

// splitValue splits "20 V" into 20 and "V".
func splitValue(s string) (float64, string, error) {
	s = strings.TrimSpace(s)
	i := 0
	for i < len(s) && strings.ContainsRune("+-.0123456789eE", rune(s[i])) {
		// stop at an 'e' that starts a unit rather than an exponent
		if (s[i] == 'e' || s[i] == 'E') && (i+1 >= len(s) || !strings.ContainsRune("+-0123456789", rune(s[i+1]))) {
			break
		}
		i++
	}
	x, err := strconv.ParseFloat(s[:i], 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, "", fmt.Errorf("%q is not a number with a unit", s)
	}
	return x, strings.TrimSpace(s[i:]), nil
}

// SweepFigures are the key figures of one run (NaN-free: a time that did
// not happen is an Interval without Happened).
type SweepFigures struct {
	PullIn, Release, Drop Interval
	PeakCurrent           float64 // A
	// HoldCurrent: the mean coil current over the hold window (A), when
	// HoldMeasured; a run without a hold window (a peak or boost phase
	// that outlasts the energized time) has none, and HoldCurrent is 0.
	HoldCurrent                  float64
	HoldMeasured                 bool
	PeakSwitchVoltage            float64 // V
	ClampEnergy, AvalancheEnergy float64 // J
	Failed                       bool    // a rating or requirement fails
	// DroppedOut: the plunger left the seat while energized (a failure;
	// release and drop do not apply then).
	DroppedOut bool
}

// SweepPoint is one point of a sweep. Exactly one of Figures, Invalid and
// Err is set.
type SweepPoint struct {
	Values  []string      // one per Vary, as written
	Figures *SweepFigures // the point's figures; nil when it is invalid or failed
	// Invalid is why the point's values break a rule of the scenario (such
	// as a supply below its low voltage): the loader's or Build's message,
	// on one line, without the file name.
	Invalid string
	Err     string // the point was valid but could not be simulated
	// Failed: the point did not pass: it is invalid, could not be
	// simulated, or a rating or requirement fails (Figures.Failed). A point
	// without figures has Figures nil (null in JSON), never zeros.
	Failed bool
}

// Sweeper runs a scenario over a grid of key values.
type Sweeper struct {
	path string
	data []byte
	root yaml.Node
}

// NewSweeper reads the scenario file at path.
func NewSweeper(path string) (*Sweeper, error) {
	data, err := ReadInput(path, "scenario file", MaxScenarioBytes)
	if err != nil {
		return nil, err
	}
	if _, err := Parse(data, path); err != nil {
		return nil, err
	}
	sw := &Sweeper{path: path, data: data}
	if err := yaml.Unmarshal(data, &sw.root); err != nil {
		return nil, err
	}
	return sw, nil
}

// Points returns the grid of a set of varied keys (the last key varies
// fastest).
func Points(vs []Vary) [][]string {
	grid := [][]string{{}}
	for _, v := range vs {
		var next [][]string
		for _, g := range grid {
			for _, x := range v.Values {
				p := append(append([]string{}, g...), x)
				next = append(next, p)
			}
		}
		grid = next
	}
	return grid
}

// Check tells whether each varied key is a value of the scenario the
// loader reads: a path through its sections to a single value, given once.
// Its errors name the --vary flag and list the keys allowed where the path
// goes wrong (with a close match when there is one). The allowed keys are
// the loader's own: they are recorded while it reads the scenario with the
// keys set to their first values. A key the loader allows only in some
// cases (such as suppression.zener voltage for a Zener clamp) passes here
// and makes the points invalid if it does not apply.
func (sw *Sweeper) Check(vs []Vary) error {
	if len(vs) == 0 {
		return fmt.Errorf("sweep needs at least one --vary %s", VarySyntax)
	}
	seen := map[string]bool{}
	first := make([]string, len(vs))
	points := 1
	for i, v := range vs {
		if seen[v.Key] {
			return fmt.Errorf("--vary %q: %s is varied twice; give all its values in one --vary", v.spec(), v.Key)
		}
		seen[v.Key] = true
		if len(v.Values) == 0 {
			return fmt.Errorf("--vary %q: no values; expected %s", v.spec(), VarySyntax)
		}
		first[i] = v.Values[0]
		if points > MaxSweepPoints/len(v.Values) {
			return fmt.Errorf("--vary: the sweep has more than %d points (the product of the numbers of values of its keys); sweep fewer values", MaxSweepPoints)
		}
		points *= len(v.Values)
	}
	sections := map[string][]string{}
	text, _, err := sw.text(vs, first)
	if err != nil {
		// A path through a value or to a section of the file: name the
		// allowed keys where the file's own sections tell them.
		parse(sw.data, sw.path, sections)
		for _, v := range vs {
			if e := checkKey(v, sections); e != nil {
				return e
			}
		}
		return err
	}
	parse(text, sw.path, sections) // its errors are the point's, not the key's
	for _, v := range vs {
		if err := checkKey(v, sections); err != nil {
			return err
		}
	}
	for _, v := range vs {
		if err := checkValues(v); err != nil {
			return err
		}
	}
	return nil
}

// keyDims returns the dimensions a scenario key's value may have when the
// loader reads it as a quantity (its spec and the variants of the same
// name, from the key specifications), and whether it is a unit alone
// (keyUnit, such as a table's "current unit"); none for a key that is not
// a quantity (text, a file, a section) or not a key of the scenario.
func keyDims(key string) (dims []Dim, unit bool) {
	walkSpecs(topSection, func(sec *sectionSpec) {
		for _, k := range slices.Concat(sec.keys, sec.variants) {
			if fieldPath(sec.path, k.name) != key {
				continue
			}
			switch {
			case k.kind == keyQuantity && k.rng.text != "":
			case k.kind == keyUnit:
				unit = true
			default:
				continue
			}
			if !slices.Contains(dims, k.rng.dim) {
				dims = append(dims, k.rng.dim)
			}
		}
	})
	return dims, unit
}

// keyChoices are the values of the text keys that take one of a list, as
// their loaders accept them: a --vary value outside the list is an error of
// the flag, like a value of the wrong unit.
var keyChoices = map[string][]string{
	"drive.mode":       driveModes,
	"drive.regulation": {"hysteresis", "fixed frequency"},
	"drive.decay":      {"slow", "fast"},
	"suppression.type": suppressionTypes,
}

// keyExpects says what a quantity key takes, for messages: "supply.voltage
// takes a voltage, e.g. \"24 V\""; "" for a key that is not a quantity.
func keyExpects(key string) string {
	dims, unit := keyDims(key)
	if len(dims) == 0 {
		return ""
	}
	d := dims[0]
	if unit {
		return fmt.Sprintf("%s takes a unit of %s alone, e.g. %q", key, d.Name(), strings.TrimLeft(d.Example(), "0123456789.+-e "))
	}
	return fmt.Sprintf("%s takes %s, e.g. %q", key, d.Name(), d.Example())
}

// checkValues tells whether every value of v is a quantity of its key's
// dimension, read as the loader reads it (a unit alone for a keyUnit key).
// A value that is not (an unknown unit, a unit of another kind, no unit, no
// number) is an error of the --vary flag, found before any point runs; a
// quantity of the right kind that breaks a rule of the scenario (its range,
// the low voltage) is the point's question: the point is marked invalid.
func checkValues(v Vary) error {
	if choices := keyChoices[v.Key]; choices != nil {
		for _, s := range v.Values {
			if !slices.Contains(choices, s) {
				return fmt.Errorf("--vary %q: %s: %q is not one of: %s", v.spec(), v.Key, s, strings.Join(choices, ", "))
			}
		}
		return nil
	}
	dims, unit := keyDims(v.Key)
	if len(dims) == 0 {
		return nil
	}
	for _, s := range v.Values {
		var first error
		for _, d := range dims {
			var err error
			if unit {
				if _, e := ParseQuantity("1 "+s, d); e != nil {
					err = fmt.Errorf("%q is not a unit of %s; expected a unit such as %q", s, d.Name(), strings.TrimLeft(d.Example(), "0123456789.+-e "))
				}
			} else {
				_, err = ParseQuantity(s, d)
			}
			if err == nil {
				first = nil
				break
			}
			if first == nil {
				first = err
			}
		}
		if first != nil {
			return fmt.Errorf("--vary %q: %s: %v", v.spec(), v.Key, first)
		}
	}
	return nil
}

// checkKey checks v.Key against the sections the loader read (path ->
// allowed keys).
func checkKey(v Vary, sections map[string][]string) error {
	if keys, ok := sections[v.Key]; ok {
		return fmt.Errorf("--vary %q: %s is a section, not a value; its keys: %s", v.spec(), v.Key, strings.Join(keys, ", "))
	}
	parts := strings.Split(v.Key, ".")
	for i := len(parts) - 1; i >= 0; i-- {
		parent := strings.Join(parts[:i], ".")
		allowed, ok := sections[parent]
		if !ok {
			continue // not read by the loader: look further up
		}
		if containsKey(allowed, parts[i]) {
			// Known here; deeper parts, if any, are in a section the loader
			// did not read with these values: it judges them at each point.
			return nil
		}
		hint := ""
		if h := closeKey(parts[i], allowed); h != "" {
			hint = fmt.Sprintf(" (did you mean %q?)", fieldPath(parent, h))
		}
		switch {
		case parent == "" && len(parts) == 1:
			return fmt.Errorf("--vary %q: unknown key %q%s; the scenario's top-level keys: %s", v.spec(), parts[0], hint, strings.Join(allowed, ", "))
		case parent == "":
			return fmt.Errorf("--vary %q: unknown section %q%s; the scenario's top-level keys: %s", v.spec(), parts[0], hint, strings.Join(allowed, ", "))
		}
		return fmt.Errorf("--vary %q: unknown key %q%s; keys in section %s: %s", v.spec(), fieldPath(parent, parts[i]), hint, parent, strings.Join(allowed, ", "))
	}
	return nil // the loader read no section: the file itself is in error
}

// closeKey returns the allowed key closest to key when it is close enough to
// be a likely typo: the same apart from case, underscores and hyphens
// (suggestKey), at most two edits away, or sharing its first four letters
// with key and with no other allowed key; "" otherwise (common practice, no
// source).
func closeKey(key string, allowed []string) string {
	if h := suggestKey(key, allowed); h != "" {
		return h
	}
	best, bestD := "", 3
	for _, a := range allowed {
		if d := editDistance(strings.ToLower(key), strings.ToLower(a)); d < bestD {
			best, bestD = a, d
		}
	}
	if best != "" {
		return best
	}
	r := []rune(strings.ToLower(key))
	if len(r) < 4 {
		return ""
	}
	prefix := string(r[:4])
	match := ""
	for _, a := range allowed {
		if strings.HasPrefix(strings.ToLower(a), prefix) {
			if match != "" {
				return ""
			}
			match = a
		}
	}
	return match
}

// editDistance is the Levenshtein distance between a and b, in runes.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// Model builds the model with the keys set to values. Its error is the
// loader's or Build's: the values break a rule of the scenario.
func (sw *Sweeper) Model(vs []Vary, values []string) (*Model, error) {
	md, _, err := sw.model(vs, values)
	return md, err
}

// model is Model; inPlace reports whether the positions in an error are
// those of the scenario file (see text).
func (sw *Sweeper) model(vs []Vary, values []string) (md *Model, inPlace bool, err error) {
	text, inPlace, err := sw.text(vs, values)
	if err != nil {
		return nil, false, err
	}
	s, err := Parse(text, sw.path)
	if err != nil {
		return nil, inPlace, err
	}
	md, err = Build(s)
	return md, inPlace, err
}

// text returns the scenario's YAML with the keys set to values. When every
// key is a one-line value of the file, the values are replaced in the file's
// own text (inPlace), so that the loader's messages keep the file's lines
// and columns; otherwise (a key the file does not give, say) the edited
// tree is written out anew and the positions are those of that text.
func (sw *Sweeper) text(vs []Vary, values []string) (text []byte, inPlace bool, err error) {
	var doc yaml.Node
	copyNode(&doc, &sw.root)
	root := &doc
	if root.Kind == yaml.DocumentNode {
		root = root.Content[0]
	}
	for i, v := range vs {
		if err := setPath(root, strings.Split(v.Key, "."), values[i]); err != nil {
			return nil, false, fmt.Errorf("--vary %q: %v", v.spec(), err)
		}
	}
	if t, ok := sw.splice(vs, values, root); ok {
		return t, true, nil
	}
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(&doc); err != nil {
		return nil, false, err
	}
	return buf.Bytes(), false, nil
}

// splice replaces the varied values in the file's text. want is the edited
// tree; the result is used only when it reads back as exactly that tree.
func (sw *Sweeper) splice(vs []Vary, values []string, want *yaml.Node) ([]byte, bool) {
	type edit struct {
		line, from, to int // 0-based line; rune offsets in it
		text           string
	}
	lines := strings.SplitAfter(string(sw.data), "\n")
	var edits []edit
	for i, v := range vs {
		n := findPath(&sw.root, strings.Split(v.Key, "."))
		if n == nil || n.Kind != yaml.ScalarNode || n.Line < 1 || n.Line > len(lines) || n.Column < 1 {
			return nil, false
		}
		out, err := yaml.Marshal(values[i])
		rep := strings.TrimSuffix(string(out), "\n")
		if err != nil || strings.Contains(rep, "\n") {
			return nil, false
		}
		line := []rune(lines[n.Line-1])
		from := n.Column - 1
		if from >= len(line) {
			return nil, false
		}
		to := scalarEnd(line, from, n.Style)
		if to < 0 {
			return nil, false
		}
		edits = append(edits, edit{n.Line - 1, from, to, rep})
	}
	// Apply from the right so that earlier offsets stay valid.
	sort.Slice(edits, func(a, b int) bool {
		if edits[a].line != edits[b].line {
			return edits[a].line > edits[b].line
		}
		return edits[a].from > edits[b].from
	})
	for k, e := range edits {
		if k > 0 && edits[k-1].line == e.line && edits[k-1].from < e.to {
			return nil, false // overlapping
		}
		line := []rune(lines[e.line])
		lines[e.line] = string(line[:e.from]) + e.text + string(line[e.to:])
	}
	text := []byte(strings.Join(lines, ""))
	var got yaml.Node
	if err := yaml.Unmarshal(text, &got); err != nil {
		return nil, false
	}
	g := &got
	if g.Kind == yaml.DocumentNode && len(g.Content) == 1 {
		g = g.Content[0]
	}
	if !sameTree(g, want) {
		return nil, false
	}
	return text, true
}

// scalarEnd returns where the scalar starting at line[from] ends on its
// line, or -1 when it does not end there (or has a style not handled).
func scalarEnd(line []rune, from int, style yaml.Style) int {
	switch style {
	case 0, yaml.TaggedStyle:
		// A plain scalar runs to a comment (" #") or the end of the line.
		end := len(line)
		for k := from; k < len(line); k++ {
			if line[k] == '#' && k > from && (line[k-1] == ' ' || line[k-1] == '\t') {
				end = k
				break
			}
		}
		for end > from && strings.ContainsRune(" \t\r\n", line[end-1]) {
			end--
		}
		return end
	case yaml.SingleQuotedStyle:
		for k := from + 1; k < len(line); k++ {
			if line[k] == '\'' {
				if k+1 < len(line) && line[k+1] == '\'' {
					k++
					continue
				}
				return k + 1
			}
		}
	case yaml.DoubleQuotedStyle:
		for k := from + 1; k < len(line); k++ {
			switch line[k] {
			case '\\':
				k++
			case '"':
				return k + 1
			}
		}
	}
	return -1
}

// findPath returns the value node at a key path, or nil.
func findPath(n *yaml.Node, path []string) *yaml.Node {
	if n.Kind == yaml.DocumentNode && len(n.Content) == 1 {
		n = n.Content[0]
	}
	for _, key := range path {
		if n.Kind != yaml.MappingNode {
			return nil
		}
		var next *yaml.Node
		for i := 0; i+1 < len(n.Content); i += 2 {
			if n.Content[i].Value == key {
				next = n.Content[i+1]
			}
		}
		if next == nil {
			return nil
		}
		n = next
	}
	return n
}

// sameTree compares two YAML trees by kind, value and content.
func sameTree(a, b *yaml.Node) bool {
	if a.Kind != b.Kind || a.Value != b.Value || len(a.Content) != len(b.Content) {
		return false
	}
	if a.Kind == yaml.AliasNode {
		return a.Alias != nil && b.Alias != nil && a.Alias.Value == b.Alias.Value
	}
	for i := range a.Content {
		if !sameTree(a.Content[i], b.Content[i]) {
			return false
		}
	}
	return true
}

func copyNode(dst, src *yaml.Node) {
	*dst = *src
	dst.Content = make([]*yaml.Node, len(src.Content))
	for i, c := range src.Content {
		dst.Content[i] = new(yaml.Node)
		copyNode(dst.Content[i], c)
	}
}

// setPath sets the scalar at a key path, creating missing keys (the loader
// rejects keys that do not exist).
func setPath(n *yaml.Node, path []string, value string) error {
	return setPathFrom(n, path, 0, value)
}

func setPathFrom(n *yaml.Node, path []string, at int, value string) error {
	if n.Kind != yaml.MappingNode {
		return fmt.Errorf("%s is a value, not a section: %s is not one of its keys", strings.Join(path[:at], "."), strings.Join(path, "."))
	}
	key := path[at]
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == key {
			if at == len(path)-1 {
				v := n.Content[i+1]
				switch v.Kind {
				case yaml.SequenceNode:
					return fmt.Errorf("%s is a list; a sweep sets single values", strings.Join(path, "."))
				case yaml.MappingNode:
					return fmt.Errorf("%s is a section, not a value", strings.Join(path, "."))
				case yaml.AliasNode:
					return fmt.Errorf("%s is an alias (*name) in the file; write its value there to sweep it", strings.Join(path, "."))
				}
				v.Value, v.Tag, v.Style = value, "!!str", 0
				return nil
			}
			return setPathFrom(n.Content[i+1], path, at+1, value)
		}
	}
	k := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: key}
	if at == len(path)-1 {
		n.Content = append(n.Content, k, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: value})
		return nil
	}
	m := &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map"}
	n.Content = append(n.Content, k, m)
	return setPathFrom(m, path, at+1, value)
}

// reason puts the loader's or Build's message for a point on one line
// without the file name; "line N:" stays only when the positions are the
// file's (inPlace).
func (sw *Sweeper) reason(err error, inPlace bool) string {
	var out []string
	for _, msg := range strings.Split(strings.TrimSpace(err.Error()), "\n") {
		msg = strings.TrimPrefix(strings.TrimSpace(msg), sw.path+": ")
		if rest, ok := strings.CutPrefix(msg, sw.path+":"); ok {
			msg = rest
			if m := positionRE.FindStringSubmatch(msg); m != nil {
				msg = m[3]
				if inPlace {
					msg = "line " + m[1] + ": " + msg
				}
			}
		}
		if msg != "" {
			out = append(out, msg)
		}
	}
	return strings.Join(out, "; ")
}

var positionRE = regexp.MustCompile(`^(\d+):(\d+): (.*)$`)

// Figures simulates a model and returns its key figures.
func Figures(md *Model) (SweepFigures, error) {
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		return SweepFigures{}, err
	}
	m := &res.Metrics
	as := md.Assess(res)
	return SweepFigures{PullIn: m.PullIn, Release: m.Release, Drop: m.Drop, PeakCurrent: m.PeakCurrent,
		HoldCurrent: m.Hold.MeanCurrent, HoldMeasured: m.Hold.Measured, PeakSwitchVoltage: m.PeakSwitchVoltage, ClampEnergy: m.ClampEnergy,
		AvalancheEnergy: m.AvalancheEnergy, Failed: as.Failed(), DroppedOut: m.DropOut.Happened}, nil
}

// point builds and simulates one point of the grid. A panic in it (a bug)
// becomes the point's error, so that a worker goroutine cannot end the
// process (whose exit status would then be the runtime's 2).
func (sw *Sweeper) point(vs []Vary, values []string) (p SweepPoint) {
	p.Values = values
	defer func() {
		if r := recover(); r != nil {
			p.Figures, p.Invalid = nil, ""
			p.Err = fmt.Sprintf("internal error (a bug in coilkick): %v", r)
		}
		p.Failed = p.Figures == nil || p.Figures.Failed
	}()
	if sweepPointHook != nil {
		sweepPointHook()
	}
	if md, inPlace, err := sw.model(vs, values); err != nil {
		p.Invalid = sw.reason(err, inPlace)
	} else if f, err := Figures(md); err != nil {
		p.Err = oneLine(err.Error())
	} else {
		p.Figures = &f
	}
	return p
}

// sweepPointHook, when set (by a test), runs at the start of every point.
var sweepPointHook func()

// Sweep runs every point of the grid on workers goroutines (0: all cores)
// and returns the points in grid order; the result does not depend on the
// number of workers. A point whose values break a rule of the scenario is
// marked Invalid and the others go on; check the keys with Check first. progress, when not nil, is called after each point
// with the number done.
func (sw *Sweeper) Sweep(vs []Vary, workers int, progress func(done, total int)) []SweepPoint {
	grid := Points(vs)
	out := make([]SweepPoint, len(grid))
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range jobs {
				out[k] = sw.point(vs, grid[k])
				if progress != nil {
					mu.Lock()
					done++
					progress(done, len(grid))
					mu.Unlock()
				}
			}
		}()
	}
	for k := range grid {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	return out
}

// oneLine joins the lines of a message with "; ".
func oneLine(msg string) string {
	var out []string
	for _, l := range strings.Split(strings.TrimSpace(msg), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			out = append(out, l)
		}
	}
	return strings.Join(out, "; ")
}
