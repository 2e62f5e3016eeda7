package coilkick

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Key specifications and their accepted ranges. Each section of a scenario
// file states its keys once, as keySpecs in its own file (scenario_supply.go,
// scenario_coil.go, ...): name, dimension and range, whether the key must be
// given, its default, and the words of the key reference. The loader reads
// every key through its spec; the README's key reference and range table and
// the key listing in Parse's doc comment are generated from the same specs
// (TestScenarioKeyReference), so that they cannot go stale.
//
// Every value the loader reads is checked against its key's range, so that a
// typo of a few orders of magnitude (1e21 Hz, 1e-30 g, a 1e-20 mm shell
// wall) is an error that states the range and its unit, rather than a run
// that ends in "step size underflow" or prints +Inf. The ranges are wide:
// they hold every solenoid drive we know of with room to spare, and stop
// where the models or the numbers stop making sense (common practice, no
// source).

// valueRange is the accepted range of one scenario value, in SI units.
type valueRange struct {
	dim              Dim
	min, max         float64
	minOpen, maxOpen bool   // the bound itself is excluded
	zeroOK           bool   // 0 is accepted besides [min, max] (0: none, or ideal)
	whole            bool   // a whole number
	text             string // the range for people: "from 1 mg to 100 kg"
	note             string // why, for messages ("" for none)
}

// contains reports whether v is in the range.
func (r valueRange) contains(v float64) bool {
	if r.zeroOK && v == 0 {
		return true
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	if r.whole && v != math.Trunc(v) {
		return false
	}
	lo := v > r.min || (!r.minOpen && v == r.min)
	hi := v < r.max || (!r.maxOpen && v == r.max)
	return lo && hi
}

// expected is the range for a message: "a mass from 1 mg to 100 kg".
func (r valueRange) expected() string {
	s := r.dim.Name()
	if r.whole {
		s = "a whole number"
	}
	if r.zeroOK {
		s += " of"
	}
	s += " " + r.text
	if r.note != "" {
		s += " (" + r.note + ")"
	}
	return s
}

// problem says what is wrong with text (the value as written, v in SI)
// when it is out of range, in the loader's words: "must be greater than 0"
// and "must not be negative" for those cases (the commonest typos), "is
// too small" or "is too large" otherwise; then the range.
func (r valueRange) problem(text string, v float64) string {
	var what string
	switch {
	case r.whole && v != math.Trunc(v):
		what = "must be a whole number"
	case v <= 0 && r.min >= 0 && !r.zeroOK && (r.min > 0 || r.minOpen):
		what = "must be greater than 0"
	case v < 0 && r.min >= 0:
		what = "must not be negative"
	case v < r.min || (r.minOpen && v == r.min):
		what = "is too small"
	default:
		what = "is too large"
	}
	return fmt.Sprintf("%q %s; expected %s", text, what, r.expected())
}

// newRange reads a range written as "A to B" (both included), with "above
// A" or "below B" to exclude a bound and a leading "0 or " to accept 0
// besides. A and B are quantities of dimension dim as ParseQuantity reads
// them. It panics on a malformed spec: the ranges are fixed in the code.
func newRange(dim Dim, spec, note string) valueRange {
	r := valueRange{dim: dim, note: note}
	rest := spec
	if s, ok := strings.CutPrefix(rest, "0 or "); ok {
		r.zeroOK, rest = true, s
	}
	a, b, ok := strings.Cut(rest, " to ")
	if !ok {
		panic("coilkick: range " + spec + ": no \" to \"")
	}
	if s, ok := strings.CutPrefix(a, "above "); ok {
		r.minOpen, a = true, s
	}
	if s, ok := strings.CutPrefix(b, "below "); ok {
		r.maxOpen, b = true, s
	}
	var err error
	if r.min, err = ParseQuantity(a, dim); err != nil {
		panic("coilkick: range " + spec + ": " + err.Error())
	}
	if r.max, err = ParseQuantity(b, dim); err != nil {
		panic("coilkick: range " + spec + ": " + err.Error())
	}
	if !(r.min < r.max) {
		panic("coilkick: range " + spec + ": empty")
	}
	switch {
	case r.minOpen:
		r.text = "above " + a + ", up to " + b
	case r.maxOpen:
		r.text = "from " + a + " to below " + b
	default:
		r.text = "from " + a + " to " + b
	}
	if r.zeroOK {
		r.text = "0, or " + r.text
	}
	return r
}

// wholeRange is newRange for a whole number.
func wholeRange(spec, note string) valueRange {
	r := newRange(Dimensionless, spec, note)
	r.whole = true
	return r
}

// keyKind is what a key's value is.
type keyKind int

const (
	keyQuantity keyKind = iota // a number with its unit (or a plain number), in rng
	keyText                    // a word or free text: a name, a type, a mode
	keyFile                    // a file name, relative to the scenario file's folder
	keyUnit                    // a unit alone, such as "mWb"
	keyList                    // a list (duty.segments)
	keySection                 // a section of keys (sub)
)

// keyNeed says whether a key must be given.
type keyNeed int

const (
	// required: a missing key is an error (where the key applies).
	required keyNeed = iota
	// optional: a missing key takes the default (def, shown as defText).
	optional
	// whenGiven: a missing key stays zero ("not given") and is not checked.
	whenGiven
	// needWhere: required in the cases its doc names (one of a choice,
	// with another key); the section's loader decides.
	needWhere
)

// keySpec states one key of a scenario section: the one place for its
// name, what its value is (dimension and range), whether it must be given
// and its default, and the words the key reference shows for it.
type keySpec struct {
	name    string     // as written in the file: "rest gap"
	kind    keyKind    // keyQuantity unless said
	rng     valueRange // of a quantity: dimension and accepted range (rng.whole: a whole number)
	rangeAs string     // a variant of another key's range: its label, such as "rc snubber" ("": none)
	need    keyNeed
	def     float64      // SI value taken when an optional key is missing
	defText string       // the default as messages and the key reference show it: "0 ohm"
	only    []string     // the modes or types the key applies to (drive, suppression); nil: always
	example string       // a value, as the key reference shows it
	doc     string       // what the key is and its rules beyond the range, for the key reference
	sub     *sectionSpec // the keys of a section
}

// sectionSpec is a section of a scenario file and its keys, in the order
// messages list them.
type sectionSpec struct {
	path     string // "plunger.load"; "" for the top level
	keys     []*keySpec
	variants []*keySpec // the same keys in special cases, with their own range (rangeAs)
}

// names lists the keys of the section, in order.
func (sec *sectionSpec) names() []string {
	names := make([]string, len(sec.keys))
	for i, k := range sec.keys {
		names[i] = k.name
	}
	return names
}

// key returns the spec of the section's key name. It panics on a name the
// section has not: the loader asks only for its own keys.
func (sec *sectionSpec) key(name string) *keySpec {
	for _, k := range sec.keys {
		if k.name == name {
			return k
		}
	}
	panic(fmt.Sprintf("coilkick: section %q has no key %q", sec.path, name))
}

// keysFor lists the keys that apply to a mode or type (see keySpec.only),
// in the section's order.
func (sec *sectionSpec) keysFor(mode string) []string {
	var keys []string
	for _, k := range sec.keys {
		if slices.Contains(k.only, mode) {
			keys = append(keys, k.name)
		}
	}
	return keys
}

// rangeKey is the key's name in scenarioRanges: its path, followed by the
// variant's label in parentheses.
func (k *keySpec) rangeKey(path string) string {
	p := fieldPath(path, k.name)
	if k.rangeAs != "" {
		p += " (" + k.rangeAs + ")"
	}
	return p
}

// walkSpecs calls f for every section, depth first in the order of the
// keys (the order of the key reference).
func walkSpecs(sec *sectionSpec, f func(*sectionSpec)) {
	f(sec)
	for _, k := range sec.keys {
		if k.sub != nil {
			walkSpecs(k.sub, f)
		}
	}
}

// scenarioRanges maps each numeric key (its path, or rangeKey for a
// variant) to its range, from the specs.
var scenarioRanges = collectRanges(topSection)

// collectRanges gathers the ranges of the specs below top.
func collectRanges(top *sectionSpec) map[string]valueRange {
	ranges := map[string]valueRange{}
	walkSpecs(top, func(sec *sectionSpec) {
		for _, k := range slices.Concat(sec.keys, sec.variants) {
			if k.rng.text != "" {
				ranges[k.rangeKey(sec.path)] = k.rng
			}
		}
	})
	return ranges
}

// unitOf is the "range" of a keyUnit key: its dimension alone.
func unitOf(dim Dim) valueRange { return valueRange{dim: dim} }

// variant returns the spec of key name in mode: the variant for that mode
// (rangeAs) when the section has one, else the key's own.
func (sec *sectionSpec) variant(name, mode string) *keySpec {
	for _, v := range sec.variants {
		if v.name == name && v.rangeAs == mode {
			return v
		}
	}
	return sec.key(name)
}
