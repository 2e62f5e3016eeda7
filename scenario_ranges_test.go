package coilkick

import (
	"os"
	"sort"
	"strings"
	"testing"
)

// nonNumericKeys are the scenario keys that are not numbers (sections,
// words, file names, units); every other key has a range.
var nonNumericKeys = map[string]bool{
	"coil.build": true, "magnet.gap law": true, "magnet.table": true, "magnet.geometry": true,
	"magnet.table.file": true, "magnet.table.current unit": true, "magnet.table.gap unit": true, "magnet.table.flux linkage unit": true,
	"magnet.geometry.steel curve": true, "magnet.geometry.steel curve.file": true,
	"magnet.geometry.steel curve.field unit": true, "magnet.geometry.steel curve.flux density unit": true,
	"plunger.load": true, "suppression.type": true, "drive.mode": true, "drive.regulation": true, "drive.decay": true,
	"thermal.insulation class": true, "duty.segments": true,
}

// loaderSections are the loader's sections and their keys.
func loaderSections() map[string][]string {
	return map[string][]string{
		"supply": supplyKeys, "coil": coilKeys, "coil.build": coilBuildKeys, "magnet": magnetKeys,
		"magnet.gap law": gapLawKeys, "magnet.table": tableKeys, "magnet.geometry": geometryKeys,
		"magnet.geometry.steel curve": steelCurveKeys, "plunger": plungerKeys, "plunger.load": loadKeys,
		"switch": switchKeys, "suppression": suppressionKeys, "drive": driveKeys, "timing": timingKeys,
		"thermal": thermalKeys, "duty": dutyKeys, "tolerances": toleranceKeys, "ratings": ratingsKeys, "solver": solverKeys,
	}
}

// Every numeric key of every section has a range, and every range belongs
// to a key the loader reads.
func TestRangesCoverEveryKey(t *testing.T) {
	t.Parallel()
	known := map[string]bool{rangeSnubberResistance: true, rangeDutySegment: true}
	for sec, keys := range loaderSections() {
		for _, k := range keys {
			p := sec + "." + k
			known[p] = true
			if _, ok := scenarioRanges[p]; !ok && !nonNumericKeys[p] {
				t.Errorf("%s: no range in scenarioRanges (and not listed as non-numeric)", p)
			}
		}
	}
	for p := range scenarioRanges {
		if !known[p] {
			t.Errorf("scenarioRanges has %q, which is no key of the loader", p)
		}
	}
}

// The README's key reference lists every range as the messages state it.
func TestRangesInREADME(t *testing.T) {
	t.Parallel()
	readme, err := os.ReadFile("README.md")
	if err != nil {
		t.Fatal(err)
	}
	var keys []string
	for k := range scenarioRanges {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		r := scenarioRanges[k]
		text := r.text
		if r.whole {
			text = "whole number " + text
		}
		row := "| `" + k + "` | " + text + " | " + r.note + " |"
		if !strings.Contains(string(readme), row) {
			t.Errorf("README lacks the row %q", row)
		}
	}
}

// The defaults of optional keys lie in their ranges.
func TestRangesHoldDefaults(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		key string
		v   float64
	}{
		{"coil.reference temperature", defaultRefTemperature},
		{"coil.temperature coefficient", defaultTempCoeff},
		{"plunger.stick speed", defaultStickSpeed},
		{"switch.body diode drop", defaultBodyDiodeDrop},
		{"magnet.geometry.table currents", defaultTableCurrents},
		{"magnet.geometry.table gaps", defaultTableGaps},
		{"switch.output capacitance", 0},
		{"supply.source resistance", 0},
	} {
		if r := scenarioRanges[c.key]; !r.contains(c.v) {
			t.Errorf("default %s = %g is outside its range %s", c.key, c.v, r.expected())
		}
	}
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
