package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"coilkick/magnet"

	"gopkg.in/yaml.v3"
)

// Load reads and checks the scenario file at path. See Parse for the
// file's keys, units and defaults. The file must be a regular file of at
// most MaxScenarioBytes (see ReadInput).
func Load(path string) (*Scenario, error) {
	data, err := ReadInput(path, "scenario file", MaxScenarioBytes)
	if err != nil {
		return nil, err
	}
	return Parse(data, path)
}

// Parse reads a scenario from YAML text. name (the file's path) is used in
// messages, becomes Scenario.Source, and its folder is where a magnet
// table file is looked for (the current folder when name is ""). Every error names name:line:column, the
// field's path (such as "plunger.mass") and, for quantities, the expected
// dimension with an example; all errors found are returned together.
//
// Quantities are written as text with a unit ("24 V", "250 mH", "1.2 mm",
// "0.8 N/mm", "3 bar", "20 degC"); see ParseQuantity. A bare number is
// accepted only where a plain number is meant. Keys are lower case with
// spaces. Unknown keys, duplicate keys, empty values and keys that do not
// apply (to the suppression type, say) are errors.
//
// Every number must also lie in its key's range (scenarioRanges, listed in
// the README), whole numbers must be whole, and a pwm or fixed-frequency
// drive must give at least one period while it applies; the name must be
// printable text (control characters are refused). Table and curve files
// must be regular files of at most MaxTableBytes.
//
// Keys (required unless marked optional) and the defaults of optional ones:
//
//	name: text                                  optional, default ""
//	supply:
//	  voltage: 24 V                             > 0
//	  source resistance: 0.5 ohm                optional, default 0; >= 0
//	coil:
//	  resistance: 48 ohm                        > 0, at the reference temperature
//	  reference temperature: 20 degC            optional, default 20 degC (293.15 K)
//	  temperature: 40 degC                      optional, default: the reference temperature
//	  temperature coefficient: 0.00393 /K       optional, default 0.00393 /K (annealed copper,
//	                                            IEC 60028); the resistance at the run
//	                                            temperature must stay > 0
//	  turns: 1800                               optional whole number > 0; default 0 (not given)
//	  build:                                    instead of resistance: the winding from bobbin
//	                                            and wire (resistance at 20 degC from IEC 60028)
//	    inner diameter: 10 mm                   > 0, winding space
//	    outer diameter: 26 mm                   > inner diameter
//	    length: 22 mm                           > 0
//	    wire gauge: 32                          AWG 0..46, or
//	    wire diameter: 0.2 mm                   bare copper
//	    insulation grade: 2                     enamel grade 1, 2 or 3, or
//	    overall diameter: 0.23 mm               insulated diameter
//	    turns: 2500                             whole number, or
//	    fill factor: 0.5                        copper area / winding window, < 0.91
//	magnet:                                     exactly one of "gap law", "table", "geometry"
//	  eddy resistance: 200 ohm                  optional, default none; > 0: equivalent
//	                                            shorted turn for eddy currents, referred
//	                                            to the coil's turns
//	  gap law:
//	    closed inductance: 250 mH               > 0, at the seated gap
//	    open inductance: 120 mH                 > 0, < closed inductance
//	    pole area: 50 mm2                       optional, default 0 (not given); > 0; needs coil.turns
//	  table:
//	    file: valve_flux.csv                    relative to the scenario file's folder; must exist
//	    current unit: A                         unit of the table's currents
//	    gap unit: mm                            unit of the table's gaps
//	    flux linkage unit: mWb                  unit of the table's flux linkages
//	  geometry:                                 a plunger magnet from its dimensions; needs coil.build
//	    plunger diameter, plunger length, pole diameter, pole length, shell outer diameter,
//	    shell wall, shell length, end plate thickness, sliding gap, sliding length: lengths > 0
//	    steel saturation: 2.0 T                 saturation polarization (analytic law), with
//	    steel permeability: 1500                initial relative permeability > 1, or
//	    steel curve:                            a measured B–H curve
//	      file: steel.csv                       rows "H, B"
//	      field unit: A/m
//	      flux density unit: T
//	    table currents: 40                      optional, default 40 (4..400)
//	    table gaps: 60                          optional, default 60 (4..400)
//	    max current: 2 A                        optional, default 3 × supply voltage / coil resistance
//	plunger:
//	  mass: 6 g                                 > 0
//	  rest gap: 1.2 mm                          > seated gap
//	  seated gap: 0.05 mm                       >= 0
//	  spring preload: 2 N                       >= 0, spring force at the rest gap
//	  spring rate: 0.8 N/mm                     >= 0
//	  damping: 0.5 N*s/m                        optional, default 0; >= 0
//	  restitution: 0.3                          optional plain number 0..1, default 0
//	  stick speed: 0.05 m/s                     optional, default 0.05 m/s; > 0
//	  load:                                     optional section
//	    constant force: 0.5 N                   optional, default 0; any sign, > 0 pushes the gap open
//	    pressure: 3 bar                         optional, default 0 (none); >= 0; when given,
//	                                            seal travel and exactly one of orifice
//	                                            diameter / orifice area are required
//	    orifice diameter: 1.2 mm                > 0; OrificeArea = π d²/4
//	    orifice area: 1.1 mm2                   > 0
//	    seal travel: 0.3 mm                     > 0, <= rest gap − seated gap
//	switch:
//	  on resistance: 50 mohm                    >= 0
//	  output capacitance: 300 pF                optional, default 0 (ideal edges); >= 0
//	  breakdown voltage: 60 V                   > supply voltage
//	  body diode drop: 0.7 V                    optional, default 0.7 V; > 0
//	suppression:
//	  type: freewheel diode                     none | freewheel diode | diode zener | tvs |
//	                                            rc snubber | switch clamp
//	  forward drop: 0.8 V                       freewheel diode, diode zener: required, > 0
//	  zener voltage: 33 V                       diode zener: required, > 0
//	  clamp voltage: 36 V                       tvs: required, > supply voltage;
//	                                            switch clamp: required, > supply voltage
//	                                            and < breakdown voltage
//	  resistance: 0.2 ohm                       freewheel diode, diode zener, tvs, switch clamp:
//	                                            optional, default 0, >= 0;
//	                                            rc snubber: required, > 0
//	  capacitance: 100 nF                       rc snubber: required, > 0
//	timing:
//	  energize at: 1 ms                         optional, default 0; >= 0
//	  de-energize at: 100 ms                    > energize at
//	  end: 200 ms                               > de-energize at
//	ratings:                                    optional section; every key optional and,
//	                                            when given, > 0; a missing key is not checked
//	  switch voltage: 60 V                      -> Limits.SwitchVoltage
//	  avalanche energy: 20 mJ                   -> Limits.AvalancheEnergy
//	  clamp energy: 50 mJ                       -> Limits.ClampEnergy
//	  clamp current: 2 A                        -> Limits.ClampCurrent
//	  pull-in time: 30 ms                       -> Limits.MaxPullIn (a maximum)
//	  release time: 20 ms                       -> Limits.MaxRelease (a maximum)
//	  drop time: 40 ms                          -> Limits.MaxDrop (a maximum)
//	solver:                                     optional section
//	  tolerance: 1e-8                           optional plain number in [1e-12, 1e-3];
//	                                            default 0 (the integrator's own)
//	  max steps: 500000                         optional whole number > 0 (5e5 is accepted);
//	                                            default 0 (the integrator's own)
//
// A key given with no value ("mass:") is an error, even for an optional
// key; an optional section given empty ("ratings:") counts as empty.
func Parse(data []byte, name string) (*Scenario, error) { return parse(data, name, nil) }

// parse is Parse; when sections is not nil, the loader records there the
// allowed keys of every section it reads, by path ("" for the top level).
func parse(data []byte, name string, sections map[string][]string) (s *Scenario, err error) {
	defer func() {
		if r := recover(); r != nil {
			s, err = nil, fmt.Errorf("%sinternal error while reading the scenario (please report this): %v", filePrefix(name), r)
		}
		if err != nil {
			err = escapeLines(err)
		}
	}()
	s = &Scenario{Source: name, pos: map[string]Pos{}}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, fmt.Errorf("%sfile is empty", filePrefix(name))
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if err == io.EOF {
			return nil, fmt.Errorf("%sfile is empty (it has only comments or blank lines)", filePrefix(name))
		}
		return nil, yamlError(name, err)
	}
	var second yaml.Node
	switch err := dec.Decode(&second); {
	case err == io.EOF:
	case err != nil:
		return nil, yamlError(name, err)
	default:
		return nil, fmt.Errorf("%s:%d: a second YAML document starts here; a scenario file holds one", name, second.Line)
	}

	l := &scenarioLoader{s: s, name: name, text: map[string]string{}, ok: map[string]bool{}, sections: sections}
	l.dir = "."
	if name != "" {
		l.dir = filepath.Dir(name)
	}
	root := &doc
	if root.Kind == yaml.DocumentNode && len(root.Content) == 1 {
		root = root.Content[0]
	}
	root = derefAlias(root)
	if root.Kind == yaml.ScalarNode && root.Tag == "!!null" {
		return nil, fmt.Errorf("%sfile is empty (it has no keys)", filePrefix(name))
	}
	l.load(root)
	if len(l.errs) > 0 {
		return nil, l.joined()
	}
	return s, nil
}

// filePrefix is "name: ", or "" for a scenario without a file name.
func filePrefix(name string) string {
	if name == "" {
		return ""
	}
	return name + ": "
}

var yamlLineRE = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// yamlError turns a yaml.v3 syntax error into "name:line: not valid YAML: ...".
func yamlError(name string, err error) error {
	msg := err.Error()
	if m := yamlLineRE.FindStringSubmatch(msg); m != nil {
		if name == "" {
			return fmt.Errorf("line %s: not valid YAML: %s", m[1], m[2])
		}
		return fmt.Errorf("%s:%s: not valid YAML: %s", name, m[1], m[2])
	}
	return fmt.Errorf("%snot valid YAML: %s", filePrefix(name), strings.TrimPrefix(msg, "yaml: "))
}

// scenarioLoader walks the YAML tree into a Scenario, collecting errors.
type scenarioLoader struct {
	s    *Scenario
	name string
	dir  string
	errs []loadError
	text map[string]string // field path -> the value as written
	ok   map[string]bool   // field path -> value read (or defaulted) and in range

	sections map[string][]string // when not nil: section path -> its allowed keys, for each section read
}

type loadError struct {
	pos Pos
	msg string
}

const maxLoadErrors = 20

func (l *scenarioLoader) joined() error {
	sort.SliceStable(l.errs, func(i, j int) bool {
		a, b := l.errs[i].pos, l.errs[j].pos
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Column < b.Column
	})
	var msgs []string
	seen := map[string]bool{}
	for _, e := range l.errs {
		if seen[e.msg] {
			continue
		}
		seen[e.msg] = true
		msgs = append(msgs, e.msg)
	}
	if len(msgs) > maxLoadErrors {
		n := len(msgs) - maxLoadErrors
		msgs = append(msgs[:maxLoadErrors], fmt.Sprintf("%s(%d more errors not shown)", filePrefix(l.name), n))
	}
	return errors.New(strings.Join(msgs, "\n"))
}

// errAt records an error about field at p (a zero p: the file alone),
// in the same form as Scenario.Errorf.
func (l *scenarioLoader) errAt(field string, p Pos, format string, args ...any) {
	msg := fmt.Sprintf(format, args...)
	var full string
	switch {
	case p.Line > 0 && l.name != "":
		full = fmt.Sprintf("%s:%d:%d: %s: %s", l.name, p.Line, p.Column, field, msg)
	case p.Line > 0:
		full = fmt.Sprintf("line %d, column %d: %s: %s", p.Line, p.Column, field, msg)
	default:
		full = fmt.Sprintf("%s%s: %s", filePrefix(l.name), field, msg)
	}
	l.errs = append(l.errs, loadError{p, escapeControl(full)})
}

// errf records an error at the recorded position of field.
func (l *scenarioLoader) errf(field, format string, args ...any) {
	l.errAt(field, l.s.pos[field], format, args...)
}

func nodePos(n *yaml.Node) Pos { return Pos{Line: n.Line, Column: n.Column} }

// derefAlias follows YAML aliases (*name) to the node they stand for.
func derefAlias(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && n.Alias != nil && i < 100; i++ {
		n = n.Alias
	}
	return n
}

func fieldPath(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// describeNode names a node's kind for messages.
func describeNode(n *yaml.Node) string {
	switch n.Kind {
	case yaml.SequenceNode:
		return "a list"
	case yaml.MappingNode:
		return "a section of keys"
	case yaml.ScalarNode:
		if n.Tag == "!!null" {
			return "nothing"
		}
		v := n.Value
		if r := []rune(v); len(r) > 40 {
			v = string(r[:40]) + "..."
		}
		return fmt.Sprintf("the value %q", v)
	case yaml.AliasNode:
		return "an unresolved alias"
	}
	return "something else"
}

// yamlSection is one YAML mapping of the scenario, checked for unknown and
// duplicate keys.
type yamlSection struct {
	path string
	pos  Pos // where the section's key was written (the root: its first key)
	vals map[string]*yaml.Node
}

// section checks that n is a mapping whose keys are all in allowed and
// records each key's position. n == nil or an empty value gives an empty
// section. It returns nil when n is not a mapping (the error is recorded).
func (l *scenarioLoader) section(path string, at Pos, n *yaml.Node, allowed []string) *yamlSection {
	sec := &yamlSection{path: path, pos: at, vals: map[string]*yaml.Node{}}
	if l.sections != nil {
		l.sections[path] = allowed
	}
	if n == nil {
		return sec
	}
	n = derefAlias(n)
	if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
		return sec
	}
	where := "section " + path
	if path == "" {
		where = "top level"
	}
	if n.Kind != yaml.MappingNode {
		field := path
		if field == "" {
			field = "(top level)"
		}
		l.errAt(field, nodePos(n), "expected a section of keys (%s), got %s", strings.Join(allowed, ", "), describeNode(n))
		return nil
	}
	keyPos := map[string]Pos{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := derefAlias(n.Content[i]), derefAlias(n.Content[i+1])
		if k.Kind != yaml.ScalarNode {
			l.errAt(fieldPath(path, "?"), nodePos(k), "a key must be a plain word, got %s", describeNode(k))
			continue
		}
		field := fieldPath(path, k.Value)
		if first, dup := keyPos[k.Value]; dup {
			l.errAt(field, nodePos(k), "duplicate key %q (first given at line %d)", k.Value, first.Line)
			continue
		}
		keyPos[k.Value] = nodePos(k)
		if !containsKey(allowed, k.Value) {
			hint := ""
			if h := suggestKey(k.Value, allowed); h != "" {
				hint = fmt.Sprintf(" (did you mean %q?)", h)
			}
			l.errAt(field, nodePos(k), "unknown key %q in the %s%s; allowed keys: %s", k.Value, where, hint, strings.Join(allowed, ", "))
			continue
		}
		// Point later checks at the value (a single value or a list), else
		// at the key (sections, empty values).
		p := nodePos(k)
		if ((v.Kind == yaml.ScalarNode && v.Tag != "!!null") || v.Kind == yaml.SequenceNode) && v.Line > 0 {
			p = nodePos(v)
		}
		l.s.pos[field] = p
		sec.vals[k.Value] = v
	}
	return sec
}

func containsKey(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// suggestKey finds an allowed key that differs from key only in case,
// underscores or hyphens.
func suggestKey(key string, allowed []string) string {
	norm := func(s string) string {
		return strings.NewReplacer("_", " ", "-", " ").Replace(strings.ToLower(strings.TrimSpace(s)))
	}
	for _, a := range allowed {
		if norm(a) == norm(key) {
			return a
		}
	}
	return ""
}

// has reports whether the section gives key.
func (sec *yamlSection) has(key string) bool {
	if sec == nil {
		return false
	}
	_, ok := sec.vals[key]
	return ok
}

// sub returns the sub-section key of sec (nil when absent or not a map).
func (l *scenarioLoader) sub(sec *yamlSection, key string, allowed []string) *yamlSection {
	if sec == nil {
		return nil
	}
	n, ok := sec.vals[key]
	if !ok {
		return nil
	}
	path := fieldPath(sec.path, key)
	return l.section(path, l.s.pos[path], n, allowed)
}

// scalar returns the text of sec's key. Missing: "" and false, with an
// error when required (want describes what is expected).
func (l *scenarioLoader) scalar(sec *yamlSection, key string, required bool, want string) (string, bool) {
	if sec == nil {
		return "", false
	}
	path := fieldPath(sec.path, key)
	n, ok := sec.vals[key]
	if !ok {
		if required {
			l.errAt(path, sec.pos, "missing (required); expected %s", want)
		}
		return "", false
	}
	if n.Kind != yaml.ScalarNode {
		l.errf(path, "expected %s, got %s", want, describeNode(n))
		return "", false
	}
	if n.Tag == "!!null" {
		l.errf(path, "has no value; expected %s", want)
		return "", false
	}
	l.text[path] = n.Value
	return n.Value, true
}

// quantity reads a quantity of dimension dim.
func (l *scenarioLoader) quantity(sec *yamlSection, key string, dim Dim, required bool) (float64, bool) {
	text, ok := l.scalar(sec, key, required, fmt.Sprintf("%s, e.g. %q", dim.Name(), dim.Example()))
	if !ok {
		return 0, false
	}
	path := fieldPath(sec.path, key)
	v, err := ParseQuantity(text, dim)
	if err != nil {
		l.errf(path, "%v", err)
		return 0, false
	}
	l.ok[path] = true
	return v, true
}

// get reads a quantity, checks it against its key's range (see
// scenarioRanges) and stores it in *dst. An optional missing key stores def
// (describing it as defText for messages).
func (l *scenarioLoader) get(sec *yamlSection, key string, dim Dim, dst *float64, required bool, def float64, defText string) bool {
	if sec == nil {
		return false
	}
	return l.getIn(sec, key, dim, fieldPath(sec.path, key), dst, required, def, defText)
}

// getIn is get with the range of scenarioRanges[rangeKey].
func (l *scenarioLoader) getIn(sec *yamlSection, key string, dim Dim, rangeKey string, dst *float64, required bool, def float64, defText string) bool {
	if sec == nil {
		return false
	}
	path := fieldPath(sec.path, key)
	r, ok := scenarioRanges[rangeKey]
	if !ok || r.dim != dim {
		panic(fmt.Sprintf("no range of %s for %s", dim.Name(), rangeKey)) // a programmer error: every key has one
	}
	if !sec.has(key) && !required {
		*dst = def
		l.ok[path] = true
		l.text[path] = "default " + defText
		return true
	}
	v, ok := l.quantity(sec, key, dim, required)
	if !ok {
		return false
	}
	if !r.contains(v) {
		l.errf(path, "%s", r.problem(l.text[path], v))
		l.ok[path] = false
		return false
	}
	*dst = v
	return true
}

// show is how a checked value appears in a cross-field message.
func (l *scenarioLoader) show(path string) string {
	t := l.text[path]
	if strings.HasPrefix(t, "default ") {
		return "(" + t + ")"
	}
	return strconv.Quote(t)
}

// showAt is show plus the line where the value was written.
func (l *scenarioLoader) showAt(path string) string {
	if p, ok := l.s.pos[path]; ok && !strings.HasPrefix(l.text[path], "default ") {
		return fmt.Sprintf("%s (line %d)", l.show(path), p.Line)
	}
	return l.show(path)
}

// later returns whichever of a and b was written later in the file.
func (l *scenarioLoader) later(a, b string) string {
	pa, oka := l.s.pos[a]
	pb, okb := l.s.pos[b]
	if strings.HasPrefix(l.text[a], "default ") {
		oka = false
	}
	if strings.HasPrefix(l.text[b], "default ") {
		okb = false
	}
	switch {
	case !oka:
		return b
	case !okb:
		return a
	case pb.Line > pa.Line || (pb.Line == pa.Line && pb.Column > pa.Column):
		return b
	}
	return a
}

// exceed checks vBig > vSmall (or >= when orEqual), reporting at the
// field written later and naming both.
func (l *scenarioLoader) exceed(big string, vBig float64, small string, vSmall float64, orEqual bool) {
	if !l.ok[big] || !l.ok[small] {
		return
	}
	if vBig > vSmall || (orEqual && vBig == vSmall) {
		return
	}
	rel := "greater than"
	inv := "less than"
	if orEqual {
		rel, inv = "at least", "at most"
	}
	if l.later(big, small) == big {
		l.errf(big, "%s must be %s %s %s", l.show(big), rel, small, l.showAt(small))
	} else {
		l.errf(small, "%s must be %s %s %s", l.show(small), inv, big, l.showAt(big))
	}
}

// Keys of each section.
var (
	topKeys     = []string{"name", "supply", "coil", "magnet", "plunger", "switch", "suppression", "drive", "timing", "thermal", "duty", "tolerances", "ratings", "solver"}
	supplyKeys  = []string{"voltage", "source resistance", "bulk capacitance", "low voltage"}
	thermalKeys = []string{"ambient", "insulation class", "temperature rise", "at power", "time constant",
		"surface area", "convection coefficient", "heat capacity",
		"winding heat capacity", "winding to housing", "housing heat capacity", "housing to ambient"}
	dutyKeys      = []string{"on time", "period", "duration", "segments"}
	toleranceKeys = []string{"supply", "coil resistance", "spring", "load", "ambient", "hot winding"}
	driveKeys     = []string{"mode", "frequency", "duty", "peak current", "peak time", "hold current", "regulation", "band",
		"decay", "recirculation drop", "recirculation resistance", "boost voltage", "boost time"}
	driveModes    = []string{DriveConstant, DrivePWM, DrivePeakHold, DriveBoostHold}
	driveModeKeys = map[string][]string{
		DriveConstant:  {},
		DrivePWM:       {"frequency", "duty", "decay", "recirculation drop", "recirculation resistance"},
		DrivePeakHold:  {"frequency", "peak current", "peak time", "hold current", "regulation", "band", "decay", "recirculation drop", "recirculation resistance"},
		DriveBoostHold: {"boost voltage", "boost time"},
	}
	coilKeys = []string{"resistance", "reference temperature", "temperature", "temperature coefficient", "turns", "build",
		"winding capacitance", "core loss resistance"}
	coilBuildKeys = []string{"inner diameter", "outer diameter", "length", "wire gauge", "wire diameter", "overall diameter", "insulation grade", "turns", "fill factor"}
	magnetKeys    = []string{MagnetGapLaw, MagnetTable, MagnetGeom, "eddy resistance"}
	geometryKeys  = []string{"plunger diameter", "plunger length", "pole diameter", "pole length", "shell outer diameter", "shell wall",
		"shell length", "end plate thickness", "sliding gap", "sliding length", "steel saturation", "steel permeability", "steel curve",
		"table currents", "table gaps", "max current"}
	steelCurveKeys  = []string{"file", "field unit", "flux density unit"}
	gapLawKeys      = []string{"closed inductance", "open inductance", "pole area"}
	tableKeys       = []string{"file", "current unit", "gap unit", "flux linkage unit"}
	plungerKeys     = []string{"mass", "rest gap", "seated gap", "spring preload", "spring rate", "damping", "restitution", "stick speed", "load"}
	loadKeys        = []string{"constant force", "pressure", "orifice diameter", "orifice area", "seal travel"}
	switchKeys      = []string{"on resistance", "output capacitance", "breakdown voltage", "body diode drop", "rise time", "fall time"}
	suppressionKeys = []string{"type", "forward drop", "zener voltage", "clamp voltage", "resistance", "capacitance", "reverse pulse"}
	timingKeys      = []string{"energize at", "de-energize at", "end"}
	ratingsKeys     = []string{"switch voltage", "avalanche energy", "clamp energy", "clamp current", "pull-in time", "release time", "drop time", "hold force margin"}
	solverKeys      = []string{"tolerance", "max steps"}

	suppressionTypes = []string{SuppressNone, SuppressFreewheel, SuppressDiodeZener, SuppressTVS, SuppressSnubber, SuppressSwitchClamp, SuppressBridge}
	// keys that apply to each suppression type, besides "type"
	suppressionTypeKeys = map[string][]string{
		SuppressNone:        {},
		SuppressFreewheel:   {"forward drop", "resistance"},
		SuppressDiodeZener:  {"forward drop", "zener voltage", "resistance"},
		SuppressTVS:         {"clamp voltage", "resistance"},
		SuppressSnubber:     {"resistance", "capacitance"},
		SuppressSwitchClamp: {"clamp voltage", "resistance"},
		SuppressBridge:      {"forward drop", "resistance", "reverse pulse"},
	}
)

// Defaults of optional keys (see Parse).
const (
	defaultRefTemperature = 293.15  // K, 20 °C
	defaultTempCoeff      = 0.00393 // 1/K, annealed copper at 20 °C (IEC 60028)
	defaultStickSpeed     = 0.05    // m/s
	defaultBodyDiodeDrop  = 0.7     // V
)

func (l *scenarioLoader) load(root *yaml.Node) {
	top := l.section("", nodePos(root), root, topKeys)
	if top == nil {
		return
	}
	s := l.s
	if text, ok := l.scalar(top, "name", false, "a name (text)"); ok {
		if why := badName(text); why != "" {
			l.errf("name", "%s", why)
		} else {
			s.Name = text
		}
	}
	need := func(key string, keys []string) *yamlSection {
		if !top.has(key) {
			l.errAt(key, top.pos, "missing section (required); its keys: %s", strings.Join(keys, ", "))
			return nil
		}
		return l.sub(top, key, keys)
	}
	supply := need("supply", supplyKeys)
	coil := need("coil", coilKeys)
	magnet := need("magnet", magnetKeys)
	plunger := need("plunger", plungerKeys)
	sw := need("switch", switchKeys)
	supp := need("suppression", suppressionKeys)
	timing := need("timing", timingKeys)
	ratings := l.sub(top, "ratings", ratingsKeys)
	solver := l.sub(top, "solver", solverKeys)

	// supply
	l.get(supply, "voltage", Voltage, &s.Supply.Voltage, true, 0, "")
	l.get(supply, "source resistance", Resistance, &s.Supply.SourceResistance, false, 0, "0 ohm")
	if supply != nil && supply.has("low voltage") {
		if l.get(supply, "low voltage", Voltage, &s.Supply.LowVoltage, true, 0, "") {
			l.exceed("supply.voltage", s.Supply.Voltage, "supply.low voltage", s.Supply.LowVoltage, true)
		}
	}
	if supply != nil && supply.has("bulk capacitance") {
		if l.get(supply, "bulk capacitance", Capacitance, &s.Supply.BulkCapacitance, true, 0, "") && !(s.Supply.SourceResistance > 0) {
			l.errf("supply.bulk capacitance", "needs a supply.source resistance > 0 (the capacitor would be tied to an ideal source)")
		}
	}

	l.loadCoil(coil)
	l.loadMagnet(magnet)
	l.loadPlunger(plunger)

	// switch
	l.get(sw, "on resistance", Resistance, &s.Switch.OnResistance, true, 0, "")
	l.get(sw, "output capacitance", Capacitance, &s.Switch.OutputCapacitance, false, 0, "0 F")
	l.get(sw, "breakdown voltage", Voltage, &s.Switch.BreakdownVoltage, true, 0, "")
	l.get(sw, "body diode drop", Voltage, &s.Switch.BodyDiodeDrop, false, defaultBodyDiodeDrop, "0.7 V")
	l.get(sw, "rise time", Time, &s.Switch.RiseTime, false, 0, "0 s")
	l.get(sw, "fall time", Time, &s.Switch.FallTime, false, 0, "0 s")
	l.exceed("switch.breakdown voltage", s.Switch.BreakdownVoltage, "supply.voltage", s.Supply.Voltage, false)

	l.loadSuppression(supp)
	l.loadDrive(l.sub(top, "drive", driveKeys))
	l.loadThermal(l.sub(top, "thermal", thermalKeys))
	if tol := l.sub(top, "tolerances", toleranceKeys); tol != nil {
		t := &s.Tolerances
		frac := func(key string, dst *float64) {
			l.get(tol, key, Dimensionless, dst, false, 0, "0 %")
		}
		frac("supply", &t.Supply)
		frac("coil resistance", &t.CoilResistance)
		frac("spring", &t.Spring)
		frac("load", &t.Load)
		if l.get(tol, "ambient", Temperature, &t.Ambient, false, 0, "0 K") {
			if txt := l.text["tolerances.ambient"]; strings.Contains(txt, "C") {
				l.errf("tolerances.ambient", "%q: a temperature spread is written in K, e.g. \"10 K\"", txt)
			}
		}
		if tol.has("hot winding") {
			l.get(tol, "hot winding", Temperature, &t.HotWinding, true, 0, "")
		}
	}
	if duty := l.sub(top, "duty", dutyKeys); duty != nil {
		d := &DutySpec{}
		s.Duty = d
		if n, ok := duty.vals["segments"]; ok {
			if duty.has("on time") || duty.has("period") {
				l.errf("duty.segments", "give either segments or on time and period, not both")
			}
			l.loadSegments(n, d)
		} else {
			l.get(duty, "on time", Time, &d.OnTime, true, 0, "")
			l.get(duty, "period", Time, &d.Period, true, 0, "")
			l.exceed("duty.period", d.Period, "duty.on time", d.OnTime, false)
		}
		l.get(duty, "duration", Time, &d.Duration, false, 0, "until the periodic steady state")
	}

	// timing
	l.get(timing, "energize at", Time, &s.Timing.EnergizeAt, false, 0, "0 s")
	l.get(timing, "de-energize at", Time, &s.Timing.DeenergizeAt, true, 0, "")
	l.get(timing, "end", Time, &s.Timing.End, true, 0, "")
	l.exceed("timing.de-energize at", s.Timing.DeenergizeAt, "timing.energize at", s.Timing.EnergizeAt, false)
	l.exceed("timing.end", s.Timing.End, "timing.de-energize at", s.Timing.DeenergizeAt, false)
	l.checkFrequency()

	// ratings: every key optional; a missing key stays 0 (not checked)
	rating := func(key string, dim Dim, dst *float64) {
		if ratings.has(key) {
			l.get(ratings, key, dim, dst, true, 0, "")
		}
	}
	rating("switch voltage", Voltage, &s.Limits.SwitchVoltage)
	rating("avalanche energy", Energy, &s.Limits.AvalancheEnergy)
	rating("clamp energy", Energy, &s.Limits.ClampEnergy)
	rating("clamp current", Current, &s.Limits.ClampCurrent)
	rating("pull-in time", Time, &s.Limits.MaxPullIn)
	rating("release time", Time, &s.Limits.MaxRelease)
	rating("drop time", Time, &s.Limits.MaxDrop)
	rating("hold force margin", Dimensionless, &s.Limits.MinHoldMargin)

	// solver
	if solver.has("tolerance") {
		l.get(solver, "tolerance", Dimensionless, &s.Solver.Tolerance, true, 0, "")
	}
	if solver.has("max steps") {
		var n float64
		if l.get(solver, "max steps", Dimensionless, &n, true, 0, "") {
			s.Solver.MaxSteps = int(n)
		}
	}
}

// checkFrequency checks that a PWM or fixed-frequency chopping frequency
// gives at least one whole period while it applies: the energized time
// (de-energize at − energize at), less the peak time of a peak-and-hold
// drive. A slower one never completes a period, and its hold figures would
// mean nothing.
func (l *scenarioLoader) checkFrequency() {
	d, t := &l.s.Drive, &l.s.Timing
	if !l.ok["drive.frequency"] || !l.ok["timing.energize at"] || !l.ok["timing.de-energize at"] || !(t.DeenergizeAt > t.EnergizeAt) {
		return
	}
	window := t.DeenergizeAt - t.EnergizeAt
	what := "the drive is energized (timing.de-energize at − timing.energize at)"
	if d.Mode == DrivePeakHold {
		if !l.ok["drive.peak time"] || !(window > d.PeakTime) {
			return // no hold: the peak phase lasts until de-energize
		}
		window -= d.PeakTime
		what = "the hold lasts (timing.de-energize at − timing.energize at − drive.peak time)"
	}
	if d.Frequency*window < 1 {
		l.errf("drive.frequency", "%s gives less than one period in the %.4g s %s; expected a frequency of at least %.4g Hz",
			l.show("drive.frequency"), window, what, 1/window)
	}
}

// maxNameRunes bounds the scenario's name, which is printed in every
// output (common practice, no source).
const maxNameRunes = 200

// badName says why a scenario name cannot be printed as it is, or "" when
// it can: control characters (a terminal would act on escape sequences),
// bidirectional-text controls (they reorder what is shown), invalid UTF-8
// and names longer than maxNameRunes are rejected, not escaped, so that
// what the file says and what the outputs print are the same.
func badName(text string) string {
	if !utf8.ValidString(text) {
		return fmt.Sprintf("%q is not valid UTF-8 text", text)
	}
	for _, r := range text {
		if isControlRune(r) {
			return fmt.Sprintf("%q contains the control character %U; expected printable text (control characters are refused, so that no terminal acts on them)", text, r)
		}
	}
	if n := utf8.RuneCountInString(text); n > maxNameRunes {
		return fmt.Sprintf("is %d characters long; expected at most %d", n, maxNameRunes)
	}
	return ""
}

// isControlRune reports control characters (C0, DEL, C1) and the
// bidirectional-text controls (U+200E, U+200F, U+202A–U+202E,
// U+2066–U+2069), which a terminal acts on or which reorder text.
func isControlRune(r rune) bool {
	return unicode.IsControl(r) || r == '\u200e' || r == '\u200f' || (r >= '\u202a' && r <= '\u202e') || (r >= '\u2066' && r <= '\u2069')
}

// escapeControl writes the control characters of msg (see isControlRune)
// and its invalid UTF-8 bytes as Go escapes (\x1b, \u202e), so that a
// message quoting the file never prints them raw.
func escapeControl(msg string) string {
	clean := true
	for _, r := range msg {
		if r == utf8.RuneError || isControlRune(r) {
			clean = false
			break
		}
	}
	if clean {
		return msg
	}
	var b strings.Builder
	for i := 0; i < len(msg); {
		r, size := utf8.DecodeRuneInString(msg[i:])
		switch {
		case r == utf8.RuneError && size <= 1:
			fmt.Fprintf(&b, "\\x%02x", msg[i])
		case isControlRune(r) && r < 0x100:
			fmt.Fprintf(&b, "\\x%02x", r)
		case isControlRune(r):
			fmt.Fprintf(&b, "\\u%04x", r)
		default:
			b.WriteString(msg[i : i+size])
		}
		i += size
	}
	return b.String()
}

// escapeLines is err with the control characters of each of its lines
// escaped (see escapeControl); the lines stay one message each.
func escapeLines(err error) error {
	msg := err.Error()
	lines := strings.Split(msg, "\n")
	for i, line := range lines {
		lines[i] = escapeControl(line)
	}
	if out := strings.Join(lines, "\n"); out != msg {
		return errors.New(out)
	}
	return err
}

func (l *scenarioLoader) loadCoil(coil *yamlSection) {
	if coil == nil {
		return
	}
	c := &l.s.Coil
	switch hasR, hasB := coil.has("resistance"), coil.has("build"); {
	case hasR && hasB:
		l.errf(l.later("coil.resistance", "coil.build"), "give either coil.resistance (measured) or coil.build (bobbin and wire), not both")
	case hasB:
		l.loadCoilBuild(coil)
		if coil.has("turns") {
			l.errf("coil.turns", "with coil.build, give the turns (or a fill factor) inside the build")
		}
	default:
		l.get(coil, "resistance", Resistance, &c.Resistance, true, 0, "")
	}
	l.get(coil, "reference temperature", Temperature, &c.RefTemperature, false, defaultRefTemperature, "20 degC")
	if coil.has("temperature") {
		l.get(coil, "temperature", Temperature, &c.Temperature, true, 0, "")
	} else if l.ok["coil.reference temperature"] {
		c.Temperature = c.RefTemperature
		l.ok["coil.temperature"] = true
		l.text["coil.temperature"] = "default reference temperature"
	}
	l.get(coil, "temperature coefficient", PerKelvin, &c.TempCoeff, false, defaultTempCoeff, "0.00393 /K")
	l.get(coil, "winding capacitance", Capacitance, &c.WindingCapacitance, false, 0, "none")
	l.get(coil, "core loss resistance", Resistance, &c.CoreLossResistance, false, 0, "none")
	if coil.has("turns") {
		l.get(coil, "turns", Dimensionless, &c.Turns, true, 0, "")
	}
	// The winding resistance at the run temperature must stay positive.
	if (l.ok["coil.resistance"] || c.Build != nil) && l.ok["coil.reference temperature"] && l.ok["coil.temperature"] && l.ok["coil.temperature coefficient"] {
		if f := 1 + c.TempCoeff*(c.Temperature-c.RefTemperature); !(f > 0) {
			at := l.later("coil.temperature coefficient", "coil.temperature")
			l.errf(at, "coil.temperature coefficient %s at coil.temperature %s gives a resistance of zero or less",
				l.show("coil.temperature coefficient"), l.show("coil.temperature"))
		}
	}
}

func (l *scenarioLoader) loadMagnet(magnet *yamlSection) {
	if magnet == nil {
		return
	}
	m := &l.s.Magnet
	l.get(magnet, "eddy resistance", Resistance, &m.EddyResistance, false, 0, "none")
	var given []string
	for _, k := range []string{MagnetGapLaw, MagnetTable, MagnetGeom} {
		if magnet.has(k) {
			given = append(given, k)
		}
	}
	switch {
	case len(given) == 0:
		l.errAt("magnet", magnet.pos, "needs one of the sections %q, %q or %q", MagnetGapLaw, MagnetTable, MagnetGeom)
		return
	case len(given) > 1:
		at := l.later("magnet."+given[0], "magnet."+given[1])
		l.errf(at, "give only one of %q, %q and %q", MagnetGapLaw, MagnetTable, MagnetGeom)
		return
	}
	hasGap := given[0] == MagnetGapLaw
	if given[0] == MagnetGeom {
		l.loadGeometry(magnet)
		return
	}
	if hasGap {
		m.Kind = MagnetGapLaw
		g := l.sub(magnet, MagnetGapLaw, gapLawKeys)
		if g == nil {
			return
		}
		l.get(g, "closed inductance", Inductance, &m.ClosedInductance, true, 0, "")
		l.get(g, "open inductance", Inductance, &m.OpenInductance, true, 0, "")
		l.exceed("magnet.gap law.closed inductance", m.ClosedInductance, "magnet.gap law.open inductance", m.OpenInductance, false)
		if g.has("pole area") {
			if l.get(g, "pole area", Area, &m.PoleArea, true, 0, "") && !l.ok["coil.turns"] {
				l.errf("magnet.gap law.pole area", "needs coil.turns, which is not given")
			}
		}
		return
	}
	m.Kind = MagnetTable
	t := l.sub(magnet, MagnetTable, tableKeys)
	if t == nil {
		return
	}
	if file, ok := l.scalar(t, "file", true, `a file name, e.g. "valve_flux.csv"`); ok {
		m.TableFile = l.inputFile("magnet.table.file", file, "table")
	}
	l.unit(t, "current unit", Current, "A", &m.CurrentScale)
	l.unit(t, "gap unit", Length, "mm", &m.GapScale)
	l.unit(t, "flux linkage unit", FluxLinkage, "mWb", &m.FluxScale)
	m.TableUnits = fmt.Sprintf("current in %s, gap in %s, flux linkage in %s (magnet.table)",
		strings.TrimSpace(l.text["magnet.table.current unit"]), strings.TrimSpace(l.text["magnet.table.gap unit"]),
		strings.TrimSpace(l.text["magnet.table.flux linkage unit"]))
}

// inputFile checks the CSV file named at path (a field such as
// "magnet.table.file"), resolved against the scenario's folder: it must be
// a regular file of at most MaxTableBytes. It returns the resolved name, or
// "" after recording an error. kind names the file in messages ("table").
func (l *scenarioLoader) inputFile(path, file, kind string) string {
	if strings.TrimSpace(file) == "" {
		l.errf(path, "is empty; expected a file name")
		return ""
	}
	for _, r := range file {
		if isControlRune(r) || r == utf8.RuneError {
			l.errf(path, "%q: a file name with the control character or invalid byte %U is refused; expected a file name", file, r)
			return ""
		}
	}
	resolved := file
	if !filepath.IsAbs(file) {
		resolved = filepath.Join(l.dir, file)
	}
	fi, err := os.Stat(resolved)
	switch {
	case err != nil:
		l.errf(path, "%s file %q not found (looked for %q, relative to the scenario file's folder)", kind, file, resolved)
	case fi.IsDir():
		l.errf(path, "%q is a folder, not a %s file", resolved, kind)
	case !fi.Mode().IsRegular():
		l.errf(path, "%q is not a regular file (%s): refused; expected a CSV file", resolved, describeFileMode(fi.Mode()))
	case fi.Size() > MaxTableBytes:
		l.errf(path, "%q has %d bytes, more than the limit of %d bytes (%d MiB): refused", resolved, fi.Size(), int64(MaxTableBytes), MaxTableBytes>>20)
	default:
		return resolved
	}
	return ""
}

// readFluxTable reads the scenario's flux-linkage table file through
// OpenInput (a regular file of at most MaxTableBytes). Its errors point at
// magnet.table.file and name the table's file, line and column, and the
// table's units.
func readFluxTable(s *Scenario) (*magnet.Table, error) {
	m := &s.Magnet
	f, err := OpenInput(m.TableFile, "flux-linkage table", MaxTableBytes)
	if err != nil {
		return nil, s.Errorf("magnet.table.file", "%v", err)
	}
	defer f.Close()
	tb, err := magnet.ReadTableCSV(f, m.TableFile, m.CurrentScale, m.GapScale, m.FluxScale)
	if err != nil {
		return nil, s.Errorf("magnet.table.file", "%s; the table's units: %s", inputDetail(err), m.TableUnits)
	}
	return tb, nil
}

// readSteelCurve reads the scenario's B–H curve file as readFluxTable
// reads the table.
func readSteelCurve(s *Scenario) (*magnet.BHTable, error) {
	gs := &s.Magnet.Geometry
	const field = "magnet.geometry.steel curve.file"
	f, err := OpenInput(gs.SteelCurveFile, "steel curve", MaxTableBytes)
	if err != nil {
		return nil, s.Errorf(field, "%v", err)
	}
	defer f.Close()
	bh, err := magnet.ReadBHCSV(f, gs.SteelCurveFile, gs.HScale, gs.BScale)
	if err != nil {
		return nil, s.Errorf(field, "%s; the curve's units: %s", inputDetail(err), gs.CurveUnits)
	}
	return bh, nil
}

// inputDetail is the message of a CSV reader's error without the package
// prefix: "file:line:column: message".
func inputDetail(err error) string {
	var ie *magnet.InputError
	if errors.As(err, &ie) {
		return ie.Detail()
	}
	return trimPackagePrefix(err.Error())
}

// unit reads a unit alone (such as "mWb") and stores its SI value.
func (l *scenarioLoader) unit(sec *yamlSection, key string, dim Dim, example string, dst *float64) {
	want := fmt.Sprintf("a unit of %s, e.g. %q", strings.SplitN(dim.Name(), " ", 2)[1], example)
	text, ok := l.scalar(sec, key, true, want)
	if !ok {
		return
	}
	path := fieldPath(sec.path, key)
	u := strings.TrimSpace(text)
	if u == "" {
		l.errf(path, "is empty; expected %s", want)
		return
	}
	if _, _, _, isNum := splitNumber(u); isNum {
		l.errf(path, "%q is not a unit; expected %s", text, want)
		return
	}
	pu, err := parseUnit(u)
	if err != nil {
		l.errf(path, "%q: %v; expected %s", text, err, want)
		return
	}
	if pu.dim != dim {
		l.errf(path, "%q is a unit of %s; expected %s", text, strings.SplitN(pu.dim.Name(), " ", 2)[1], want)
		return
	}
	v, err := ParseQuantity("1 "+u, dim)
	if err != nil {
		l.errf(path, "%q: %v", text, err)
		return
	}
	*dst = v
	l.ok[path] = true
}

func (l *scenarioLoader) loadPlunger(pl *yamlSection) {
	if pl == nil {
		return
	}
	p := &l.s.Plunger
	l.get(pl, "mass", Mass, &p.Mass, true, 0, "")
	l.get(pl, "rest gap", Length, &p.RestGap, true, 0, "")
	l.get(pl, "seated gap", Length, &p.SeatedGap, true, 0, "")
	l.exceed("plunger.rest gap", p.RestGap, "plunger.seated gap", p.SeatedGap, false)
	l.get(pl, "spring preload", Force, &p.SpringPreload, true, 0, "")
	l.get(pl, "spring rate", ForcePerLength, &p.SpringRate, true, 0, "")
	l.get(pl, "damping", Damping, &p.Damping, false, 0, "0 N*s/m")
	if pl.has("restitution") {
		l.get(pl, "restitution", Dimensionless, &p.Restitution, true, 0, "")
	}
	l.get(pl, "stick speed", Velocity, &p.StickSpeed, false, defaultStickSpeed, "0.05 m/s")

	ld := l.sub(pl, "load", loadKeys)
	if ld == nil {
		return
	}
	l.get(ld, "constant force", Force, &p.ConstantLoad, false, 0, "0 N")
	if !ld.has("pressure") {
		for _, k := range []string{"orifice diameter", "orifice area", "seal travel"} {
			if ld.has(k) {
				l.errf("plunger.load."+k, "applies only when plunger.load.pressure is given")
			}
		}
		return
	}
	l.get(ld, "pressure", Pressure, &p.Pressure, true, 0, "")
	hasD, hasA := ld.has("orifice diameter"), ld.has("orifice area")
	switch {
	case hasD && hasA:
		at := l.later("plunger.load.orifice diameter", "plunger.load.orifice area")
		l.errf(at, "give either plunger.load.orifice diameter or plunger.load.orifice area, not both")
	case hasD:
		var d float64
		if l.get(ld, "orifice diameter", Length, &d, true, 0, "") {
			p.OrificeArea = math.Pi * d * d / 4
		}
	case hasA:
		l.get(ld, "orifice area", Area, &p.OrificeArea, true, 0, "")
	default:
		l.errf("plunger.load.pressure", "needs plunger.load.orifice diameter or plunger.load.orifice area")
	}
	if !ld.has("seal travel") {
		l.errf("plunger.load.pressure", "needs plunger.load.seal travel, e.g. \"0.3 mm\"")
		return
	}
	if l.get(ld, "seal travel", Length, &p.SealTravel, true, 0, "") &&
		l.ok["plunger.rest gap"] && l.ok["plunger.seated gap"] && p.RestGap > p.SeatedGap {
		if stroke := p.RestGap - p.SeatedGap; p.SealTravel > stroke {
			l.errf("plunger.load.seal travel", "%s must not exceed the stroke plunger.rest gap − plunger.seated gap = %s − %s (lines %d, %d)",
				l.show("plunger.load.seal travel"), l.show("plunger.rest gap"), l.show("plunger.seated gap"),
				l.s.pos["plunger.rest gap"].Line, l.s.pos["plunger.seated gap"].Line)
		}
	}
}

func (l *scenarioLoader) loadSuppression(sec *yamlSection) {
	if sec == nil {
		return
	}
	sp := &l.s.Suppression
	kind, ok := l.scalar(sec, "type", true, "one of: "+strings.Join(suppressionTypes, ", "))
	if !ok {
		return
	}
	if !containsKey(suppressionTypes, kind) {
		hint := ""
		if h := suggestKey(kind, suppressionTypes); h != "" {
			hint = fmt.Sprintf(" (did you mean %q?)", h)
		}
		l.errf("suppression.type", "unknown suppression type %q%s; expected one of: %s", kind, hint, strings.Join(suppressionTypes, ", "))
		return
	}
	sp.Kind = kind
	applies := suppressionTypeKeys[kind]
	for _, k := range suppressionKeys[1:] {
		if sec.has(k) && !containsKey(applies, k) {
			list := "only type"
			if len(applies) > 0 {
				list = "type, " + strings.Join(applies, ", ")
			}
			l.errf("suppression."+k, "does not apply to suppression type %q (its keys: %s)", kind, list)
		}
	}
	switch kind {
	case SuppressFreewheel:
		l.get(sec, "forward drop", Voltage, &sp.ForwardDrop, true, 0, "")
		l.get(sec, "resistance", Resistance, &sp.Resistance, false, 0, "0 ohm")
	case SuppressDiodeZener:
		l.get(sec, "forward drop", Voltage, &sp.ForwardDrop, true, 0, "")
		l.get(sec, "zener voltage", Voltage, &sp.ZenerVoltage, true, 0, "")
		l.get(sec, "resistance", Resistance, &sp.Resistance, false, 0, "0 ohm")
	case SuppressTVS:
		l.get(sec, "clamp voltage", Voltage, &sp.ClampVoltage, true, 0, "")
		l.get(sec, "resistance", Resistance, &sp.Resistance, false, 0, "0 ohm")
		l.exceed("suppression.clamp voltage", sp.ClampVoltage, "supply.voltage", l.s.Supply.Voltage, false)
	case SuppressSwitchClamp:
		l.get(sec, "clamp voltage", Voltage, &sp.ClampVoltage, true, 0, "")
		l.get(sec, "resistance", Resistance, &sp.Resistance, false, 0, "0 ohm")
		l.exceed("suppression.clamp voltage", sp.ClampVoltage, "supply.voltage", l.s.Supply.Voltage, false)
		l.exceed("switch.breakdown voltage", l.s.Switch.BreakdownVoltage, "suppression.clamp voltage", sp.ClampVoltage, false)
	case SuppressSnubber:
		l.getIn(sec, "resistance", Resistance, rangeSnubberResistance, &sp.Resistance, true, 0, "")
		l.get(sec, "capacitance", Capacitance, &sp.Capacitance, true, 0, "")
	case SuppressBridge:
		l.get(sec, "forward drop", Voltage, &sp.ForwardDrop, true, 0, "")
		l.get(sec, "resistance", Resistance, &sp.Resistance, false, 0, "0 ohm")
		l.get(sec, "reverse pulse", Time, &sp.ReversePulse, false, 0, "0 s")
	}
}

// loadCoilBuild reads coil.build: a winding from bobbin and wire.
func (l *scenarioLoader) loadCoilBuild(coil *yamlSection) {
	b := l.sub(coil, "build", coilBuildKeys)
	if b == nil {
		return
	}
	cb := &CoilBuildSpec{}
	l.s.Coil.Build = cb
	l.get(b, "inner diameter", Length, &cb.InnerDiameter, true, 0, "")
	l.get(b, "outer diameter", Length, &cb.OuterDiameter, true, 0, "")
	l.get(b, "length", Length, &cb.Length, true, 0, "")
	l.exceed("coil.build.outer diameter", cb.OuterDiameter, "coil.build.inner diameter", cb.InnerDiameter, false)
	switch g, d := b.has("wire gauge"), b.has("wire diameter"); {
	case g && d:
		l.errf(l.later("coil.build.wire gauge", "coil.build.wire diameter"), "give either a wire gauge (AWG) or a wire diameter, not both")
	case g:
		var v float64
		if l.get(b, "wire gauge", Dimensionless, &v, true, 0, "") {
			cb.WireGauge = int(v)
		}
	case d:
		l.get(b, "wire diameter", Length, &cb.WireDiameter, true, 0, "")
	default:
		l.errAt("coil.build.wire gauge", b.pos, "missing: give a wire gauge (AWG number) or a bare wire diameter")
	}
	switch o, gr := b.has("overall diameter"), b.has("insulation grade"); {
	case o && gr:
		l.errf(l.later("coil.build.overall diameter", "coil.build.insulation grade"), "give either the insulated overall diameter or the insulation grade, not both")
	case o:
		l.get(b, "overall diameter", Length, &cb.OverallDiameter, true, 0, "")
	case gr:
		var v float64
		if l.get(b, "insulation grade", Dimensionless, &v, true, 0, "") {
			cb.Grade = int(v)
		}
	default:
		l.errAt("coil.build.insulation grade", b.pos, "missing: give the enamel insulation grade (1, 2 or 3) or the insulated overall diameter")
	}
	switch t, f := b.has("turns"), b.has("fill factor"); {
	case t && f:
		l.errf(l.later("coil.build.turns", "coil.build.fill factor"), "give either the turns or a fill factor, not both")
	case t:
		l.get(b, "turns", Dimensionless, &cb.Turns, true, 0, "")
	case f:
		l.get(b, "fill factor", Dimensionless, &cb.FillFactor, true, 0, "")
	default:
		l.errAt("coil.build.turns", b.pos, "missing: give the turns or a copper fill factor")
	}
}

// Defaults of the geometry section.
const (
	defaultTableCurrents = 40
	defaultTableGaps     = 60
)

// loadGeometry reads magnet.geometry: a plunger magnet from dimensions.
func (l *scenarioLoader) loadGeometry(magnet *yamlSection) {
	m := &l.s.Magnet
	m.Kind = MagnetGeom
	g := l.sub(magnet, MagnetGeom, geometryKeys)
	if g == nil {
		return
	}
	gs := &m.Geometry
	for _, f := range []struct {
		key string
		dst *float64
	}{
		{"plunger diameter", &gs.PlungerDiameter}, {"plunger length", &gs.PlungerLength},
		{"pole diameter", &gs.PoleDiameter}, {"pole length", &gs.PoleLength},
		{"shell outer diameter", &gs.ShellOuterDiameter}, {"shell wall", &gs.ShellWall},
		{"shell length", &gs.ShellLength}, {"end plate thickness", &gs.EndPlateThickness},
		{"sliding gap", &gs.SlidingGap}, {"sliding length", &gs.SlidingLength},
	} {
		l.get(g, f.key, Length, f.dst, true, 0, "")
	}
	if l.s.Coil.Build == nil {
		l.errAt("magnet.geometry", g.pos, "needs coil.build: the winding space and turns come from the bobbin")
	}
	switch a, c := g.has("steel saturation") || g.has("steel permeability"), g.has("steel curve"); {
	case a && c:
		l.errf("magnet.geometry.steel curve", "give either the analytic steel law (steel saturation, steel permeability) or a steel curve file, not both")
	case c:
		sc := l.sub(g, "steel curve", steelCurveKeys)
		if sc != nil {
			if file, ok := l.scalar(sc, "file", true, `a file name, e.g. "steel_bh.csv"`); ok {
				gs.SteelCurveFile = l.inputFile("magnet.geometry.steel curve.file", file, "steel curve")
			}
			l.unit(sc, "field unit", FieldStrength, "A/m", &gs.HScale)
			l.unit(sc, "flux density unit", FluxDensity, "T", &gs.BScale)
			gs.CurveUnits = fmt.Sprintf("field strength in %s, flux density in %s (magnet.geometry.steel curve)",
				strings.TrimSpace(l.text["magnet.geometry.steel curve.field unit"]), strings.TrimSpace(l.text["magnet.geometry.steel curve.flux density unit"]))
		}
	default:
		l.get(g, "steel saturation", FluxDensity, &gs.SteelSaturation, true, 0, "")
		l.get(g, "steel permeability", Dimensionless, &gs.SteelPermeability, true, 0, "")
	}
	for _, f := range []struct {
		key string
		dst *int
		def int
	}{{"table currents", &gs.TableCurrents, defaultTableCurrents}, {"table gaps", &gs.TableGaps, defaultTableGaps}} {
		var v float64
		if l.get(g, f.key, Dimensionless, &v, false, float64(f.def), strconv.Itoa(f.def)) {
			*f.dst = int(v)
		}
	}
	l.get(g, "max current", Current, &gs.MaxCurrent, false, 0, "3 × supply voltage / coil resistance")
}

// loadDrive reads the optional drive section (default: constant drive).
func (l *scenarioLoader) loadDrive(sec *yamlSection) {
	d := &l.s.Drive
	d.Mode = DriveConstant
	if sec == nil {
		return
	}
	mode, ok := l.scalar(sec, "mode", true, "one of: "+strings.Join(driveModes, ", "))
	if !ok {
		return
	}
	if !containsKey(driveModes, mode) {
		l.errf("drive.mode", "unknown drive mode %q; expected one of: %s", mode, strings.Join(driveModes, ", "))
		return
	}
	d.Mode = mode
	applies := driveModeKeys[mode]
	for _, k := range driveKeys[1:] {
		if sec.has(k) && !containsKey(applies, k) {
			l.errf("drive."+k, "does not apply to drive mode %q (its keys: mode, %s)", mode, strings.Join(applies, ", "))
		}
	}
	decay := func() {
		text, ok := l.scalar(sec, "decay", false, `"slow" or "fast"`)
		switch {
		case !ok && !sec.has("decay"):
			d.Decay = "slow"
		case text == "slow" || text == "fast":
			d.Decay = text
		case ok:
			l.errf("drive.decay", "%q: expected \"slow\" (through the recirculation path) or \"fast\" (through the suppression part)", text)
		}
		if d.Decay == "slow" {
			l.get(sec, "recirculation drop", Voltage, &d.RecirculationDrop, true, 0, "")
			l.get(sec, "recirculation resistance", Resistance, &d.RecirculationResistance, false, 0, "0 ohm")
		} else {
			for _, k := range []string{"recirculation drop", "recirculation resistance"} {
				if sec.has(k) {
					l.errf("drive."+k, "applies to slow decay only")
				}
			}
		}
	}
	switch mode {
	case DrivePWM:
		l.get(sec, "frequency", Frequency, &d.Frequency, true, 0, "")
		l.get(sec, "duty", Dimensionless, &d.Duty, true, 0, "")
		decay()
	case DrivePeakHold:
		l.get(sec, "peak current", Current, &d.PeakCurrent, true, 0, "")
		l.get(sec, "peak time", Time, &d.PeakTime, true, 0, "")
		l.get(sec, "hold current", Current, &d.HoldCurrent, true, 0, "")
		l.exceed("drive.peak current", d.PeakCurrent, "drive.hold current", d.HoldCurrent, true)
		reg, ok := l.scalar(sec, "regulation", true, `"hysteresis" or "fixed frequency"`)
		switch {
		case !ok:
		case reg == "hysteresis":
			d.Regulation = reg
			l.get(sec, "band", Current, &d.Band, true, 0, "")
			if sec.has("frequency") {
				l.errf("drive.frequency", "applies to fixed-frequency regulation only")
			}
			if d.Band >= 2*d.HoldCurrent && d.HoldCurrent > 0 {
				l.errf("drive.band", "%q must be below twice the hold current", l.text["drive.band"])
			}
		case reg == "fixed frequency":
			d.Regulation = reg
			l.get(sec, "frequency", Frequency, &d.Frequency, true, 0, "")
			if sec.has("band") {
				l.errf("drive.band", "applies to hysteresis regulation only")
			}
		default:
			l.errf("drive.regulation", "%q: expected \"hysteresis\" or \"fixed frequency\"", reg)
		}
		decay()
	case DriveBoostHold:
		l.get(sec, "boost voltage", Voltage, &d.BoostVoltage, true, 0, "")
		l.get(sec, "boost time", Time, &d.BoostTime, true, 0, "")
		l.exceed("drive.boost voltage", d.BoostVoltage, "supply.voltage", l.s.Supply.Voltage, false)
	}
}

// loadThermal reads the optional thermal section: one of three ways to give
// the network (a datasheet rating, a surface, or an explicit two-node
// network).
func (l *scenarioLoader) loadThermal(sec *yamlSection) {
	if sec == nil {
		return
	}
	t := &ThermalSpec{}
	l.s.Thermal = t
	l.get(sec, "ambient", Temperature, &t.Ambient, true, 0, "")
	if text, ok := l.scalar(sec, "insulation class", false, "an IEC 60085 class letter: A, E, B, F, H, N or R"); ok {
		t.Class = strings.TrimSpace(text)
	}
	rating := sec.has("temperature rise") || sec.has("at power") || sec.has("time constant")
	surface := sec.has("surface area") || sec.has("convection coefficient") || sec.has("heat capacity")
	network := sec.has("winding heat capacity") || sec.has("winding to housing") || sec.has("housing heat capacity") || sec.has("housing to ambient")
	n := 0
	for _, b := range []bool{rating, surface, network} {
		if b {
			n++
		}
	}
	if n != 1 {
		l.errAt("thermal", sec.pos, "give exactly one of: a rating (temperature rise, at power, time constant), a surface (surface area, convection coefficient, heat capacity) or a two-node network (winding heat capacity, winding to housing, housing heat capacity, housing to ambient)")
		return
	}
	switch {
	case rating:
		t.Kind = "rating"
		if l.get(sec, "temperature rise", Temperature, &t.Rise, true, 0, "") {
			if txt := l.text["thermal.temperature rise"]; strings.Contains(txt, "C") {
				l.errf("thermal.temperature rise", "%q: a temperature rise is written in K, e.g. \"60 K\"", txt)
			}
		}
		l.get(sec, "at power", Power, &t.AtPower, true, 0, "")
		l.get(sec, "time constant", Time, &t.TimeConstant, true, 0, "")
	case surface:
		t.Kind = "surface"
		l.get(sec, "surface area", Area, &t.SurfaceArea, true, 0, "")
		l.get(sec, "convection coefficient", HeatTransfer, &t.Convection, true, 0, "")
		if l.s.Coil.Build == nil || sec.has("heat capacity") {
			l.get(sec, "heat capacity", HeatCapacity, &t.HeatCapacity, true, 0, "")
		}
	case network:
		t.Kind = "network"
		l.get(sec, "winding heat capacity", HeatCapacity, &t.HeatCapacity, true, 0, "")
		l.get(sec, "winding to housing", ThermalResistance, &t.WindingToHousing, true, 0, "")
		l.get(sec, "housing heat capacity", HeatCapacity, &t.HousingCapacity, true, 0, "")
		l.get(sec, "housing to ambient", ThermalResistance, &t.HousingToAmbient, true, 0, "")
	}
}

// loadSegments reads duty.segments: a list such as ["2 s on", "3 s off"],
// repeated as the operating cycle.
func (l *scenarioLoader) loadSegments(n *yaml.Node, d *DutySpec) {
	n = derefAlias(n)
	if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
		l.errAt("duty.segments", nodePos(n), `expected a list of segments, e.g. ["2 s on", "3 s off"]`)
		return
	}
	anyOn, anyOff := false, false
	for k, item := range n.Content {
		item = derefAlias(item)
		at := fmt.Sprintf("duty.segments[%d]", k+1)
		text := strings.TrimSpace(item.Value)
		fields := strings.Fields(text)
		if item.Kind != yaml.ScalarNode || len(fields) < 2 {
			l.errAt(at, nodePos(item), `%q: expected a duration and "on" or "off", e.g. "2 s on"`, text)
			continue
		}
		state := fields[len(fields)-1]
		if state != "on" && state != "off" {
			l.errAt(at, nodePos(item), `%q: expected it to end in "on" or "off"`, text)
			continue
		}
		durText := strings.Join(fields[:len(fields)-1], " ")
		dur, err := ParseQuantity(durText, Time)
		if err != nil {
			l.errAt(at, nodePos(item), "%v", err)
			continue
		}
		if r := scenarioRanges[rangeDutySegment]; !r.contains(dur) {
			l.errAt(at, nodePos(item), "%s", r.problem(durText, dur))
			continue
		}
		d.Segments = append(d.Segments, DutySegment{On: state == "on", Duration: dur})
		anyOn, anyOff = anyOn || state == "on", anyOff || state == "off"
	}
	if len(d.Segments) == len(n.Content) && (!anyOn || !anyOff) {
		l.errAt("duty.segments", nodePos(n), "the segments need at least one on and one off")
	}
}
