package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"slices"
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
// Every number must also lie in its key's range (listed in the README's
// "Scenario files"), whole numbers must be whole, and a pwm or
// fixed-frequency drive must give at least one period while it applies;
// the name must be printable text (control characters are refused). Table
// and curve files must be regular files of at most MaxTableBytes. A key
// given with no value ("mass:") is an error, even for an optional key; an
// optional section given empty ("ratings:") counts as empty.
//
// Sections and keys, with an example value each; a key is required unless
// its comment says optional (then with its default) or names the cases it
// is for. This list is generated from the key specifications of the
// scenario_<section>.go files (TestScenarioKeyReference; the README shows
// the same list and the ranges):
//
//	name: irrigation valve (demo data)        # optional; free text: printable, at most 200 characters
//	supply:
//	  voltage: 24 V
//	  source resistance: 0.5 ohm              # optional, default 0 ohm
//	  bulk capacitance: 470 uF                # optional; a capacitor at the drive's terminals behind the source resistance, which must then be > 0
//	  low voltage: 21.6 V                     # optional; the lowest supply in tolerance (hot-coil check), at most voltage
//	  storage capacitor:                      # optional; capacitor-discharge drive: a charged capacitor feeds the drive (instead of bulk capacitance)
//	    capacitance: 2200 uF
//	    esr: 0.1 ohm                          # optional, default 0 ohm; equivalent series resistance, in series with the drive
//	    charge voltage: 9 V                   # optional; the voltage it starts at, at most supply.voltage; default supply.voltage
//	    charge time: 500 ms                   # optional; instead of charge voltage: charged from empty through the charging resistance (and the source resistance) for this long before the run, so it starts at supply.voltage × (1 − e^(−t/RC)); needs charging resistance
//	    charging resistance: 100 ohm          # optional; from supply.voltage (in series with its source resistance), during and after the pulse; without it the capacitor has no charging path (the battery disconnected)
//	    recharge fraction: 1 %                # optional, default 1 %; recharged means back within this fraction of the charge voltage
//	coil:
//	  resistance: 72 ohm                      # at the reference temperature; or instead build
//	  reference temperature: 20 degC          # optional, default 20 degC
//	  temperature: 40 degC                    # optional; winding temperature during the run; default the reference temperature
//	  temperature coefficient: 0.00393 /K     # optional, default 0.00393 /K; annealed copper (IEC 60028); the resistance at the run temperature must stay > 0
//	  turns: 2400                             # optional; needed with magnet.gap law.pole area; with build, give the turns inside it
//	  build:                                  # instead of resistance (and turns): the winding from bobbin and wire (resistance at 20 degC from IEC 60028)
//	    inner diameter: 10 mm                 # winding space of the bobbin
//	    outer diameter: 26 mm                 # > inner diameter
//	    length: 22 mm
//	    wire gauge: 32                        # AWG (ASTM B258); or wire diameter
//	    wire diameter: 0.2 mm                 # bare copper; or wire gauge
//	    overall diameter: 0.23 mm             # insulated; or insulation grade
//	    insulation grade: 2                   # enamel grade 1..3 (approximate build-up); or overall diameter
//	    turns: 2500                           # or fill factor
//	    fill factor: 0.52                     # copper area / winding window; or turns
//	  winding capacitance: 150 pF             # optional, default none; the winding's capacitance across its terminals (see "Parasitics")
//	  core loss resistance: 20 kohm           # optional, default none; a resistance across the terminals for the core (iron) loss
//	magnet:                                   # exactly one of gap law, table, geometry, force curves
//	  gap law:                                # L(x) = L_leak + 1/(a + b·x), linear iron
//	    closed inductance: 300 mH             # at the seated gap
//	    open inductance: 120 mH               # at the rest gap, < closed inductance
//	    pole area: 50 mm2                     # optional; needs coil.turns; fixes b = 1/(µ0·A·N²) and solves the leakage
//	    magnet mmf: 300 A                     # optional; a permanent magnet in the circuit (latching): its MMF in ampere-turns, aiding a positive coil current; needs pole area; or give holding force
//	    holding force: 12 N                   # optional; a permanent magnet given by its pull at the seated gap with no current (measured); needs pole area; instead of magnet mmf
//	    demagnetising current: 2 A            # optional; the reverse coil current at which the magnet reaches its knee (its knee field as a coil current, from the magnet's data); a run whose current goes further negative is warned of; needs a magnet
//	  table:                                  # flux linkage versus current and gap, from a field solver or bench
//	    file: valve_flux.csv                  # relative to the scenario file's folder (see "Flux-linkage table")
//	    current unit: A                       # unit of the table's currents
//	    gap unit: mm                          # unit of the table's gaps
//	    flux linkage unit: mWb                # unit of the table's flux linkages
//	  geometry:                               # a plunger magnet from its dimensions (needs coil.build)
//	    plunger diameter: 8 mm
//	    plunger length: 12 mm                 # steel path from the working-gap face to the front-plate bushing
//	    pole diameter: 8 mm                   # fixed pole piece the plunger is pulled to (flat faces)
//	    pole length: 12 mm                    # from the back plate's inner face to the pole face
//	    shell outer diameter: 32 mm
//	    shell wall: 1.5 mm
//	    shell length: 28 mm                   # over both end plates
//	    end plate thickness: 2.5 mm
//	    sliding gap: 0.05 mm                  # radial clearance in the front-plate bushing
//	    sliding length: 4 mm
//	    steel saturation: 2.0 T               # Frohlich–Kennelly law: saturation polarization; or steel curve
//	    steel permeability: 1500              # and initial relative permeability of the same law
//	    steel curve:                          # instead of the analytic law: a measured B–H curve
//	      file: steel_bh.csv                  # rows H, B from 0, 0; relative to the scenario file's folder
//	      field unit: A/m
//	      flux density unit: T
//	    table currents: 40                    # optional, default 40; grid of the built table
//	    table gaps: 60                        # optional, default 60
//	    max current: 1 A                      # optional, default 3 × supply voltage / coil resistance; top of the table's current range
//	  force curves:                           # pull force versus gap at one or more currents or voltages, and LCR readings (see "Magnet from force curves")
//	    file: valve_force.csv                 # columns gap or stroke, current or voltage, force, each with its unit; relative to the scenario file's folder
//	    open inductance: 95 mH                # LCR reading with the plunger held at the rest gap; the model's anchor
//	    open inductance frequency: 1 kHz      # optional; the LCR meter's test frequency of the open reading (reported beside it)
//	    closed inductance: 240 mH             # optional; LCR reading at the seated gap; compared with the curves' value, not used by the model
//	    closed inductance frequency: 1 kHz    # optional; the LCR meter's test frequency of the closed reading
//	    coil temperature: 20 degC             # optional; the coil's temperature when the curves were taken; needed when the file gives voltages (current = V/R(T))
//	  eddy resistance: 400 ohm                # optional, default none; eddy currents as a shorted turn, referred to the coil's turns
//	plunger:
//	  mass: 8 g
//	  rest gap: 1.2 mm                        # air gap at the rest stop (de-energized), > seated gap
//	  seated gap: 0.05 mm                     # residual gap at the energized stop
//	  spring preload: 2 N                     # return-spring force at the rest gap, pushing the gap open
//	  spring rate: 0.5 N/mm
//	  damping: 0.5 N*s/m                      # optional, default 0 N*s/m; viscous
//	  restitution: 0.2                        # optional; plain number, at both stops; 0 when not given
//	  stick speed: 0.05 m/s                   # optional, default 0.05 m/s; slower impacts or rebounds end in sticking
//	  load:                                   # optional
//	    constant force: 0.5 N                 # optional, default 0 N; positive pushes the gap open
//	    pressure: 3 bar                       # optional; pressure on a valve orifice holding the seal shut; needs seal travel and one of orifice diameter, orifice area
//	    orifice diameter: 1.0 mm              # with pressure; or orifice area
//	    orifice area: 0.79 mm2                # with pressure; or orifice diameter
//	    seal travel: 0.3 mm                   # with pressure: lift over which the pressure force fades to zero, at most rest gap − seated gap
//	switch:                                   # low-side switch (MOSFET)
//	  on resistance: 40 mohm
//	  output capacitance: 300 pF              # optional, default 0 F; 0: ideal edges
//	  breakdown voltage: 60 V                 # where the switch avalanches, > supply.voltage
//	  body diode drop: 0.7 V                  # optional, default 0.7 V
//	  rise time: 100 ns                       # optional, default 0 s; edge times, for the switching-loss estimate
//	  fall time: 100 ns                       # optional, default 0 s
//	suppression:
//	  type: freewheel diode                   # none | freewheel diode | diode zener | tvs | rc snubber | switch clamp | reverse drive
//	  forward drop: 0.8 V                     # for freewheel diode, diode zener, reverse drive; diode forward drop; reverse drive: each bridge diode's
//	  zener voltage: 33 V                     # for diode zener
//	  clamp voltage: 36 V                     # for tvs, switch clamp; tvs: across the coil, > supply.voltage; switch clamp: switch node to ground, > supply.voltage and < switch.breakdown voltage
//	  resistance: 0.1 ohm                     # optional, default 0 ohm; for freewheel diode, diode zener, tvs, rc snubber, switch clamp, reverse drive; dynamic resistance of the diode, zener or tvs; rc snubber: the resistor, required, with a range of its own
//	  capacitance: 100 nF                     # for rc snubber
//	  reverse pulse: 2 ms                     # optional, default 0 s; for reverse drive; H-bridge: at turn-off the coil sees −(supply + 2 drops) and returns its energy to the supply; drive it in reverse this long first
//	  reverse pulse delay: 200 ms             # optional, default 0 s; for reverse drive; H-bridge: start the reverse pulse this long after turn-off, the bridge diodes returning the coil current meanwhile (a latching magnet holds at zero current, then the pulse releases it)
//	drive:                                    # optional; default constant (switch on while energized)
//	  mode: peak and hold                     # constant | pwm | peak and hold | boost then hold | pulses
//	  frequency: 20 kHz                       # for pwm, peak and hold; peak and hold: with fixed-frequency regulation only
//	  duty: 0.4                               # for pwm; fraction of the period
//	  peak current: 1.5 A                     # for peak and hold; at least hold current
//	  peak time: 30 ms                        # for peak and hold; from energize
//	  hold current: 0.4 A                     # for peak and hold
//	  regulation: fixed frequency             # for peak and hold; fixed frequency (with frequency) or hysteresis (with band)
//	  band: 40 mA                             # for peak and hold; hysteresis: the full band width, below twice the hold current
//	  decay: slow                             # optional, default slow; for pwm, peak and hold; slow: off-times recirculate through a diode across the coil; fast: through the suppression part
//	  recirculation drop: 0.7 V               # for pwm, peak and hold; slow decay: the recirculation path's drop
//	  recirculation resistance: 0.1 ohm       # optional, default 0 ohm; for pwm, peak and hold; slow decay
//	  boost voltage: 48 V                     # for boost then hold; > supply.voltage
//	  boost time: 10 ms                       # for boost then hold; the supply is raised that long
//	  brake at: 4 ms                          # optional; for constant, pwm; soft landing (with brake for): the switch turns off this long after energize; `coilkick land` finds it
//	  brake for: 2 ms                         # for constant, pwm; soft landing (with brake at): the switch stays off this long (constant: the current decays through the suppression part; pwm: as in its off-times), then the drive goes on; brake at + brake for before de-energize
//	  latch pulse: 20 ms                      # for pulses; forward polarity (the current that adds to a permanent magnet's flux), full voltage from timing.energize at for this long; it sets the de-energize time (no timing.de-energize at)
//	  release at: 221 ms                      # optional; for pulses; with release pulse: the run time the reverse pulse starts, at or after the latch pulse's end; needs suppression.type: reverse drive (the H-bridge)
//	  release pulse: 5 ms                     # for pulses; with release at: reverse polarity, −(supply + 2 bridge drops) across the coil this long; before timing.end
//	timing:
//	  energize at: 1 ms                       # optional, default 0 s
//	  de-energize at: 150 ms                  # > energize at; not with drive.mode pulses (its latch pulse sets it)
//	  end: 300 ms                             # > de-energize at
//	thermal:                                  # optional; the coil's thermal network (the winding temperature becomes a state): the ambient and exactly one of a rating, a surface or a two-node network
//	  ambient: 40 degC
//	  insulation class: F                     # optional; IEC 60085: A 105, E 120, B 130, F 155, H 180, N 200, R 220 degC
//	  temperature rise: 80 K                  # one node from a rating: the steady rise (in K) at a power
//	  at power: 10 W
//	  time constant: 12 min                   # and the thermal time constant
//	  surface area: 60 cm2                    # or one node from a surface: its area
//	  convection coefficient: 12 W*m^-2*K^-1  # 12 W*m^-2*K^-1 is common practice for still air
//	  heat capacity: 150 J/K                  # may be left out with coil.build: copper mass × 385 J/(kg·K)
//	  winding heat capacity: 60 J/K           # or a two-node network
//	  winding to housing: 2 K/W
//	  housing heat capacity: 300 J/K
//	  housing to ambient: 5 K/W
//	duty:                                     # optional; the operating pattern for `coilkick heat`
//	  on time: 1.25 s                         # with period; or segments
//	  period: 5 s                             # > on time
//	  duration: 480 min                       # optional, default until the periodic steady state; the study's length
//	  segments: ["1 s on", "2 s off", "500 ms on", "6.5 s off"] # instead of on time and period: a cycle of segments (each a duration and on or off), repeated
//	tolerances:                               # optional; for `coilkick corners`
//	  supply: 10 %                            # optional, default 0 %; ± of the supply voltage
//	  coil resistance: 7 %                    # optional, default 0 %
//	  spring: 10 %                            # optional, default 0 %; ± of spring preload and rate
//	  load: 20 %                              # optional, default 0 %; ± of the load (pressure, constant force)
//	  ambient: 10 K                           # optional, default 0 K; ± on the winding temperature, in K
//	  hot winding: 100 degC                   # optional; the winding temperature of the hot corner, as it stands; default the run's temperature + ambient
//	sense:                                    # optional; the driver's current-sense chain, for `coilkick signature`
//	  bandwidth: 2 kHz                        # optional, default 0 Hz, no filter; −3 dB frequency of the first-order current-sense filter
//	  sample rate: 10 kHz                     # the ADC's sampling rate
//	  resolution: 0.49 mA                     # optional, default 0 A, none; the ADC's step (one LSB, in A): 12 bits over 2 A is 2 A/4096
//	  noise: 3 mA                             # optional, default 0 A, none; rms of white Gaussian noise added to each reading before quantisation
//	  seed: 1                                 # optional, default 1; of the noise (repeatable)
//	  required margin: 5                      # optional; requirement: the dip depth ÷ the noise rms at every point, and a detection setting that works
//	ratings:                                  # optional; each key optional; a missing one is not checked
//	  switch voltage: 60 V                    # optional; the peak switch voltage must not exceed it
//	  avalanche energy: 20 mJ                 # optional; single pulse
//	  clamp energy: 50 mJ                     # optional; per operation
//	  clamp current: 2 A                      # optional
//	  pull-in time: 40 ms                     # optional; requirement: a maximum
//	  release time: 80 ms                     # optional; a maximum
//	  drop time: 100 ms                       # optional; a maximum
//	  hold force margin: 1.2                  # optional; a minimum: pull at the lowest hold current ÷ spring + load at the seat
//	solver:                                   # optional
//	  tolerance: 1e-8                         # optional; relative tolerance; default the integrator's own (1e-8)
//	  max steps: 2000000                      # optional; attempted steps before the run fails with a clear error; default the integrator's own (2000000)
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
	spec *sectionSpec
	pos  Pos // where the section's key was written (the root: its first key)
	vals map[string]*yaml.Node
}

// section checks that n is a mapping whose keys are all keys of spec and
// records each key's position. n == nil or an empty value gives an empty
// section. It returns nil when n is not a mapping (the error is recorded).
func (l *scenarioLoader) section(spec *sectionSpec, at Pos, n *yaml.Node) *yamlSection {
	path, allowed := spec.path, spec.names()
	sec := &yamlSection{path: path, spec: spec, pos: at, vals: map[string]*yaml.Node{}}
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
func (l *scenarioLoader) sub(sec *yamlSection, key string) *yamlSection {
	if sec == nil {
		return nil
	}
	n, ok := sec.vals[key]
	if !ok {
		return nil
	}
	return l.section(sec.spec.key(key).sub, l.s.pos[fieldPath(sec.path, key)], n)
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

// read reads the quantity key of sec as its spec says (see keyNeed):
// it checks the value against the key's range and stores it in *dst, or
// stores the default of an optional key that is missing. It reports
// whether *dst now holds a checked value or the default.
func (l *scenarioLoader) read(sec *yamlSection, key string, dst *float64) bool {
	if sec == nil {
		return false
	}
	return l.readSpec(sec, sec.spec.key(key), dst)
}

// readWhole is read for a whole number.
func (l *scenarioLoader) readWhole(sec *yamlSection, key string, dst *int) bool {
	var v float64
	if !l.read(sec, key, &v) {
		return false
	}
	*dst = int(v)
	return true
}

// readSpec is read with the spec k (a variant with its own range).
func (l *scenarioLoader) readSpec(sec *yamlSection, k *keySpec, dst *float64) bool {
	if sec == nil {
		return false
	}
	path := fieldPath(sec.path, k.name)
	if k.kind != keyQuantity || k.rng.text == "" {
		panic("coilkick: " + path + " is not a quantity with a range") // a programmer error
	}
	if !sec.has(k.name) {
		switch k.need {
		case optional:
			*dst = k.def
			l.ok[path] = true
			l.text[path] = "default " + k.defText
			return true
		case whenGiven:
			return false
		}
	}
	v, ok := l.quantity(sec, k.name, k.rng.dim, true)
	if !ok {
		return false
	}
	if !k.rng.contains(v) {
		l.errf(path, "%s", k.rng.problem(l.text[path], v))
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

// choice is a "give either ... or ..." rule of a section.
type choice struct {
	alts      [][]string // the keys of each alternative
	both      string     // the message when more than one alternative is given
	bothAt    string     // the field it names (at its place); "": the later of the first two given
	missing   string     // the message when none is given; "": none is no error here
	missingAt string     // the field that message names, at the section's place
}

// bothGiven is what pick returns when more than one alternative is given.
const bothGiven = -2

// pick returns the index of the one alternative of c that sec gives, -1
// when it gives none and bothGiven when it gives more than one, recording
// c's message for those cases.
func (l *scenarioLoader) pick(sec *yamlSection, c choice) int {
	var given []int
	var first []string // the first key given of each alternative given
	for i, alt := range c.alts {
		for _, k := range alt {
			if sec.has(k) {
				given = append(given, i)
				first = append(first, fieldPath(sec.path, k))
				break
			}
		}
	}
	switch len(given) {
	case 0:
		if c.missing != "" {
			l.errAt(c.missingAt, sec.pos, "%s", c.missing)
		}
		return -1
	case 1:
		return given[0]
	}
	at := c.bothAt
	if at == "" {
		at = l.later(first[0], first[1])
	}
	l.errf(at, "%s", c.both)
	return bothGiven
}

// readChoice reads the one alternative of c that sec gives (each
// alternative one key) into its destination, a *float64 or a *int.
func (l *scenarioLoader) readChoice(sec *yamlSection, c choice, dst ...any) {
	k := l.pick(sec, c)
	if k < 0 {
		return
	}
	switch d := dst[k].(type) {
	case *float64:
		l.read(sec, c.alts[k][0], d)
	case *int:
		l.readWhole(sec, c.alts[k][0], d)
	}
}

// refuse records why at each of keys that sec gives (keys that do not
// apply in the present case).
func (l *scenarioLoader) refuse(sec *yamlSection, why string, keys ...string) {
	for _, k := range keys {
		if sec.has(k) {
			l.errf(fieldPath(sec.path, k), "%s", why)
		}
	}
}

// refuseOthers records an error at each key of sec, other than its first
// (the mode or type), that does not apply to mode (see keySpec.only);
// why(applies) says so, given the keys that do.
func (l *scenarioLoader) refuseOthers(sec *yamlSection, mode string, why func(applies []string) string) {
	applies := sec.spec.keysFor(mode)
	for _, k := range sec.spec.keys[1:] {
		if sec.has(k.name) && !slices.Contains(k.only, mode) {
			l.errf(fieldPath(sec.path, k.name), "%s", why(applies))
		}
	}
}

// topSection is the scenario file's top level: its name and sections.
var topSection = &sectionSpec{path: "", keys: []*keySpec{
	{name: "name", kind: keyText, need: whenGiven, example: "irrigation valve (demo data)",
		doc: "free text: printable, at most 200 characters"},
	{name: "supply", kind: keySection, sub: supplySection},
	{name: "coil", kind: keySection, sub: coilSection},
	{name: "magnet", kind: keySection, sub: magnetSection, doc: "exactly one of gap law, table, geometry, force curves"},
	{name: "plunger", kind: keySection, sub: plungerSection},
	{name: "switch", kind: keySection, sub: switchSection, doc: "low-side switch (MOSFET)"},
	{name: "suppression", kind: keySection, sub: suppressionSection},
	{name: "drive", kind: keySection, sub: driveSection, need: whenGiven,
		doc: "default constant (switch on while energized)"},
	{name: "timing", kind: keySection, sub: timingSection},
	{name: "thermal", kind: keySection, sub: thermalSection, need: whenGiven,
		doc: "the coil's thermal network (the winding temperature becomes a state): the ambient and exactly one of a rating, a surface or a two-node network"},
	{name: "duty", kind: keySection, sub: dutySection, need: whenGiven, doc: "the operating pattern for `coilkick heat`"},
	{name: "tolerances", kind: keySection, sub: tolerancesSection, need: whenGiven, doc: "for `coilkick corners`"},
	{name: "sense", kind: keySection, sub: senseSection, need: whenGiven,
		doc: "the driver's current-sense chain, for `coilkick signature`"},
	{name: "ratings", kind: keySection, sub: ratingsSection, need: whenGiven,
		doc: "each key optional; a missing one is not checked"},
	{name: "solver", kind: keySection, sub: solverSection, need: whenGiven},
}}

// Keys of sections, for messages and tests.
var (
	topKeys     = topSection.names()
	supplyKeys  = supplySection.names()
	plungerKeys = plungerSection.names()
	loadKeys    = plungerLoadSection.names()
)

// load reads the scenario from the root of its YAML tree: the name, then
// each section in the order of its cross-checks (a section's checks may use
// the values of those read before it).
func (l *scenarioLoader) load(root *yaml.Node) {
	top := l.section(topSection, nodePos(root), root)
	if top == nil {
		return
	}
	l.loadName(top)
	secs := map[string]*yamlSection{}
	for _, k := range topSection.keys {
		if k.kind != keySection {
			continue
		}
		if k.need == required && !top.has(k.name) {
			l.errAt(k.name, top.pos, "missing section (required); its keys: %s", strings.Join(k.sub.names(), ", "))
		}
		secs[k.name] = l.sub(top, k.name)
	}
	for _, step := range []struct {
		section string
		load    func(*yamlSection)
	}{
		{"supply", l.loadSupply}, {"coil", l.loadCoil}, {"magnet", l.loadMagnet}, {"plunger", l.loadPlunger},
		{"switch", l.loadSwitch}, {"suppression", l.loadSuppression}, {"drive", l.loadDrive},
		{"thermal", l.loadThermal}, {"tolerances", l.loadTolerances}, {"sense", l.loadSense}, {"duty", l.loadDuty},
		{"timing", l.loadTiming}, {"ratings", l.loadRatings}, {"solver", l.loadSolver},
	} {
		step.load(secs[step.section])
	}
}

// loadName reads the scenario's name: printable text (see badName).
func (l *scenarioLoader) loadName(top *yamlSection) {
	if text, ok := l.scalar(top, "name", false, "a name (text)"); ok {
		if why := badName(text); why != "" {
			l.errf("name", "%s", why)
		} else {
			l.s.Name = text
		}
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

// inputDetail is the message of a CSV reader's error without the package
// prefix: "file:line:column: message".
func inputDetail(err error) string {
	var ie *magnet.InputError
	if errors.As(err, &ie) {
		return ie.Detail()
	}
	return trimPackagePrefix(err.Error())
}

// unit reads a unit alone (such as "mWb": a keyUnit of its spec's
// dimension) and stores its SI value.
func (l *scenarioLoader) unit(sec *yamlSection, key string, dst *float64) {
	if sec == nil {
		return
	}
	k := sec.spec.key(key)
	dim := k.rng.dim
	want := fmt.Sprintf("a unit of %s, e.g. %q", strings.SplitN(dim.Name(), " ", 2)[1], k.example)
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
