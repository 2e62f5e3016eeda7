package coilkick

import (
	"math"
	"os"
	"strings"
	"testing"
)

// Every quantity key has a range, and no other key has one; the ranges
// of scenarioRanges are those of the keys.
func TestRangesCoverEveryKey(t *testing.T) {
	t.Parallel()
	n := 0
	walkSpecs(topSection, func(sec *sectionSpec) {
		for _, k := range sec.keys {
			p := fieldPath(sec.path, k.name)
			switch {
			case k.kind == keyQuantity && k.rng.text == "":
				t.Errorf("%s: a quantity without a range", p)
			case k.kind == keyUnit && k.rng.dim == (Dim{}):
				t.Errorf("%s: a unit without a dimension", p)
			case k.kind != keyQuantity && k.kind != keyList && k.rng.text != "":
				t.Errorf("%s: a range on a key that is no number", p)
			case k.kind == keySection && k.sub == nil, k.kind != keySection && k.sub != nil:
				t.Errorf("%s: kind and sub disagree", p)
			case k.sub != nil && k.sub.path != p:
				t.Errorf("%s: its section's path is %q", p, k.sub.path)
			}
			if k.rng.text != "" {
				n++
			}
		}
		n += len(sec.variants)
	})
	if len(scenarioRanges) != n {
		t.Errorf("scenarioRanges has %d ranges, the keys %d (two keys of one path?)", len(scenarioRanges), n)
	}
}

// The default of every optional key is what its text says and lies in its
// range; a default that is no quantity ("none", "until the periodic steady
// state") is 0, the loader's "not given".
func TestRangesHoldDefaults(t *testing.T) {
	t.Parallel()
	walkSpecs(topSection, func(sec *sectionSpec) {
		for _, k := range sec.keys {
			if k.need != optional || k.kind != keyQuantity {
				continue
			}
			p := fieldPath(sec.path, k.name)
			v, err := ParseQuantity(k.defText, k.rng.dim)
			switch {
			case err != nil && k.def != 0:
				t.Errorf("%s: default %g, written %q (%v)", p, k.def, k.defText, err)
			case err != nil:
			case math.Abs(v-k.def) > 1e-12*math.Abs(k.def):
				t.Errorf("%s: default %g, but its text %q is %g", p, k.def, k.defText, v)
			case !k.rng.contains(k.def):
				t.Errorf("%s: default %q is outside its range %s", p, k.defText, k.rng.expected())
			}
		}
	})
}

// The range's edges and its messages (common practice, no source: the
// wording is ours).
func TestRangeEdgesAndMessages(t *testing.T) {
	t.Parallel()
	mass := scenarioRanges["plunger.mass"]
	perm := scenarioRanges["magnet.geometry.steel permeability"]
	tol := scenarioRanges["tolerances.supply"]
	coss := scenarioRanges["switch.output capacitance"]
	turns := scenarioRanges["coil.turns"]
	cases := []struct {
		r    valueRange
		text string
		v    float64
		ok   bool
		want string // the problem, when not ok
	}{
		{mass, "1 mg", 1e-6, true, ""},
		{mass, "100 kg", 100, true, ""},
		{mass, "0.9 mg", 0.9e-6, false, `"0.9 mg" is too small; expected a mass from 1 mg to 100 kg`},
		{mass, "101 kg", 101, false, `"101 kg" is too large; expected a mass from 1 mg to 100 kg`},
		{mass, "0 g", 0, false, `"0 g" must be greater than 0; expected a mass from 1 mg to 100 kg`},
		{mass, "-6 g", -0.006, false, `"-6 g" must be greater than 0`},
		{perm, "1", 1, false, `"1" is too small; expected a plain number above 1, up to 1000000`},
		{perm, "1.0001", 1.0001, true, ""},
		{tol, "100 %", 1, false, `"100 %" is too large; expected a plain number from 0 % to below 100 %`},
		{tol, "99.9 %", 0.999, true, ""},
		{tol, "-1 %", -0.01, false, `"-1 %" must not be negative`},
		{coss, "0 pF", 0, true, ""},
		{coss, "0.1 pF", 0.1e-12, false, `"0.1 pF" is too small; expected a capacitance of 0, or from 1 pF to 1 µF`},
		{turns, "2400", 2400, true, ""},
		{turns, "2400.5", 2400.5, false, `"2400.5" must be a whole number; expected a whole number from 1 to 1000000 (turns)`},
		{turns, "0", 0, false, `"0" must be greater than 0`},
	}
	for _, c := range cases {
		if got := c.r.contains(c.v); got != c.ok {
			t.Errorf("%s: contains(%s) = %v, want %v", c.r.text, c.text, got, c.ok)
		}
		if !c.ok {
			if got := c.r.problem(c.text, c.v); !strings.Contains(got, c.want) {
				t.Errorf("problem(%q) = %q, want it to contain %q", c.text, got, c.want)
			}
		}
	}
}

// A PWM or chopping frequency must give one whole period while it applies:
// the edges of the rule, on the minimal file (de-energize at 100 ms).
func TestLoadFrequencyWindow(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile("testdata/good/minimal.yaml")
	if err != nil {
		t.Fatal(err)
	}
	pwm := func(f string) string {
		return string(data) + "drive:\n  mode: pwm\n  frequency: " + f + "\n  duty: 0.5\n  recirculation drop: 0.7 V\n"
	}
	chop := func(f string) string {
		return string(data) + "drive:\n  mode: peak and hold\n  peak current: 0.8 A\n  peak time: 60 ms\n  hold current: 0.3 A\n" +
			"  regulation: fixed frequency\n  frequency: " + f + "\n  recirculation drop: 0.7 V\n"
	}
	for _, c := range []struct {
		text string
		ok   bool
	}{
		{pwm("10 Hz"), true},     // exactly one period in 100 ms
		{pwm("9.9 Hz"), false},   // less than one
		{pwm("10 MHz"), true},    // the top of the range
		{pwm("10.1 MHz"), false}, // above it
		{chop("25 Hz"), true},    // one period in the 40 ms hold
		{chop("24 Hz"), false},
	} {
		_, err := Parse([]byte(c.text), "f.yaml")
		if (err == nil) != c.ok {
			t.Errorf("%s: err = %v, want ok %v", c.text[len(data):], err, c.ok)
		}
		if err != nil && !strings.Contains(err.Error(), "drive.frequency") {
			t.Errorf("error does not name drive.frequency: %v", err)
		}
	}
}
