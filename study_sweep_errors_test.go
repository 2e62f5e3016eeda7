package coilkick

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// The door-strike demo states supply.low voltage: 21.6 V on line 10, so a
// supply below it breaks a rule of the scenario.
const lowVoltageDemo = "scenarios/door-strike-duty.yaml"

func mustVary(t *testing.T, spec string) Vary {
	t.Helper()
	v, err := ParseVary(spec)
	if err != nil {
		t.Fatalf("ParseVary(%q): %v", spec, err)
	}
	return v
}

// A key that is not a value of the scenario is an error of the flag that
// lists the keys the loader allows there; it never points into the file.
func TestSweepCheckUnknownKey(t *testing.T) {
	t.Parallel()
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		spec string
		want []string // substrings of the error
	}{
		{"supply.volts=18 V:30 V:3", append([]string{`--vary "supply.volts=18 V:30 V:3"`, `unknown key "supply.volts"`,
			`did you mean "supply.voltage"?`, "keys in section supply: "}, supplyKeys...)},
		{"suply.voltage=18 V", append([]string{`--vary "suply.voltage=18 V"`, `unknown section "suply"`, `did you mean "supply"?`}, topKeys...)},
		{"plunger.lod.pressure=3 bar", append([]string{`unknown key "plunger.lod"`, `did you mean "plunger.load"?`, "keys in section plunger"}, plungerKeys...)},
		{"plunger.load=3 N", append([]string{"plunger.load is a section, not a value"}, loadKeys...)},
		{"supply=24 V", []string{"supply is a section, not a value", "voltage, source resistance"}},
		{"supply.voltage.x=3", []string{"supply.voltage is a value, not a section"}},
		// A whole made-up section under a real one.
		{"magnet.gap law.inductance=1 H", []string{`unknown key "magnet.gap law.inductance"`, "keys in section magnet.gap law: closed inductance"}},
	}
	for _, c := range cases {
		checkFlagError(t, sw, c.spec, c.want)
	}
	// Every key the loader allows in a section the file has passes, also one
	// the file does not give (it is added), and a list of several.
	var ok []Vary
	for _, k := range supplySection.keys {
		if k.kind == keySection {
			continue // a section (supply.storage capacitor) is not a value
		}
		ok = append(ok, mustVary(t, "supply."+k.name+"="+k.example))
	}
	ok = append(ok, mustVary(t, "plunger.load.constant force=1 N"), mustVary(t, "ratings.pull-in time=20 ms"))
	if err := sw.Check(ok); err != nil {
		t.Errorf("Check rejected keys of the loader: %v", err)
	}
	if err := sw.Check([]Vary{mustVary(t, "supply.voltage=20 V"), mustVary(t, "supply.voltage=22 V")}); err == nil ||
		!strings.Contains(err.Error(), "varied twice") {
		t.Errorf("a key varied twice: %v", err)
	}
}

// A value that is not a quantity of its key's kind (an unknown unit, a
// unit of another kind, no unit, no number) is an error of the flag that
// names the key and what it takes, found before any point runs; it used to
// become an invalid row of the sweep. A quantity of the right kind out of
// the key's range stays the point's question (an invalid row).
func TestSweepCheckValueUnits(t *testing.T) {
	t.Parallel()
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		spec string
		want []string // substrings of the error
	}{
		{"supply.voltage=10 V,12 Ohm", []string{`--vary "supply.voltage=10 V,12 Ohm"`, "supply.voltage", `unknown unit "Ohm"`, `did you mean "ohm"?`, `expected a voltage, e.g. "24 V"`}},
		{"supply.voltage=10 V,12 ohm", []string{`"12 ohm" is a resistance; expected a voltage`}},
		{"supply.voltage=10:14:3", []string{`"10" has no unit; expected a voltage`}},
		{"plunger.mass=5 g,8 N", []string{"plunger.mass", `"8 N" is a force; expected a mass`}},
		{"magnet.gap law.closed inductance=60 mH,abc", []string{`"abc" is not a quantity`, "expected an inductance"}},
		{"plunger.load.pressure=3 bar,2 V", []string{"plunger.load.pressure", `"2 V" is a voltage; expected a pressure`}},
		{"suppression.type=freewheel diode,foo", []string{"suppression.type", `"foo" is not one of: none, freewheel diode`}},
		{"drive.mode=constant,pwn", []string{"drive.mode", `"pwn" is not one of: constant, pwm`}},
	}
	for _, c := range cases {
		checkFlagError(t, sw, c.spec, c.want)
	}
	// Right kind, out of the key's range or below the scenario's rule: the
	// flag is fine, the point will be invalid.
	for _, spec := range []string{"supply.voltage=10 V,1e9 V", "supply.voltage=24 V,0.1 kV", "tolerances.supply=5 %,10 %",
		"suppression.type=freewheel diode,tvs"} {
		if err := sw.Check([]Vary{mustVary(t, spec)}); err != nil {
			t.Errorf("%s: %v", spec, err)
		}
	}
	// A range whose TO has another unit names what the key takes.
	if _, err := ParseVary("supply.voltage=10 V:14 m:5"); err == nil || !strings.Contains(err.Error(), `supply.voltage takes a voltage, e.g. "24 V"`) ||
		!strings.Contains(err.Error(), "KEY=FROM:TO:STEPS") {
		t.Errorf("10 V:14 m:5: %v", err)
	}
}

// Every quantity key of the scenario's specifications accepts the example
// value of its own spec (so the value check knows each key's dimension
// and rejects no value the loader reads), and a unit key accepts its
// example unit.
func TestSweepValueCheckKnowsEveryKey(t *testing.T) {
	t.Parallel()
	n := 0
	walkSpecs(topSection, func(sec *sectionSpec) {
		for _, k := range slices.Concat(sec.keys, sec.variants) {
			if (k.kind != keyQuantity && k.kind != keyUnit) || k.example == "" {
				continue
			}
			key := fieldPath(sec.path, k.name)
			if dims, _ := keyDims(key); len(dims) == 0 {
				t.Errorf("%s: no dimension found", key)
			}
			if err := checkValues(Vary{Key: key, Values: []string{k.example}}); err != nil {
				t.Errorf("%s: its example %q refused: %v", key, k.example, err)
			}
			n++
		}
	})
	if n < 50 {
		t.Errorf("only %d quantity keys checked", n)
	}
	if err := checkValues(Vary{Key: "magnet.table.current unit", Values: []string{"mA", "V"}}); err == nil ||
		!strings.Contains(err.Error(), `"V" is not a unit of a current`) {
		t.Errorf("a unit key with a voltage unit: %v", err)
	}
}

// A point whose values break a rule of the scenario is marked invalid with
// the loader's reason and the sweep goes on with the others.
func TestSweepInvalidPointGoesOn(t *testing.T) {
	t.Parallel()
	sw, err := NewSweeper(lowVoltageDemo)
	if err != nil {
		t.Fatal(err)
	}
	vs := []Vary{mustVary(t, "supply.voltage=21 V:25 V:5")}
	if err := sw.Check(vs); err != nil {
		t.Fatal(err)
	}
	pts := sw.Sweep(vs, 2, nil)
	if len(pts) != 5 {
		t.Fatalf("%d points, want 5", len(pts))
	}
	p := pts[0]
	if p.Values[0] != "21 V" || p.Figures != nil || p.Err != "" || !p.Failed {
		t.Errorf("21 V: want invalid and failed without figures, got %+v", p)
	}
	// In JSON a point without figures has null figures and failed true,
	// never zeros.
	js, err := json.Marshal(p)
	if err != nil || !strings.Contains(string(js), `"Figures":null`) || !strings.Contains(string(js), `"Failed":true`) {
		t.Errorf("21 V in JSON: %s (%v)", js, err)
	}
	// The reason is the loader's, on one line, at the file's own line 10.
	for _, s := range []string{"line 10:", "supply.low voltage", `"21.6 V"`, `"21 V"`} {
		if !strings.Contains(p.Invalid, s) {
			t.Errorf("21 V: reason lacks %q: %q", s, p.Invalid)
		}
	}
	if strings.Contains(p.Invalid, "\n") || strings.Contains(p.Invalid, lowVoltageDemo) {
		t.Errorf("reason not on one line or names the file: %q", p.Invalid)
	}
	for _, p := range pts[1:] {
		if p.Figures == nil || p.Invalid != "" || p.Err != "" || !p.Figures.PullIn.Happened {
			t.Errorf("%s: want a valid point that pulls in, got %+v", p.Values[0], p)
		}
		if p.Figures != nil && p.Failed != p.Figures.Failed {
			t.Errorf("%s: Failed %v, figures' verdict %v", p.Values[0], p.Failed, p.Figures.Failed)
		}
	}
}

// Missing STEPS or another malformed range states the syntax and names the
// flag (it used to become the value "10 V:14 V" and fail in the loader with
// "unexpected ':14 V' in unit").
func TestParseVarySyntax(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{
		"supply.voltage=10 V:14 V",
		"supply.voltage=10 V:14 V:",
		"supply.voltage=10 V:14 V:5:2",
		"supply.voltage=:14 V:5",
		"supply.voltage=10 V:14 V:0",
		"supply.voltage=10 V:14 V:1",
		"supply.voltage=10 V:14 V:5,20 V",
		"supply.voltage=10 V:14 A:5",
		"supply.voltage",
		"=10 V",
		"supply..voltage=10 V",
		"supply.voltage=",
	} {
		_, err := ParseVary(spec)
		if err == nil {
			t.Errorf("ParseVary(%q) accepted it", spec)
			continue
		}
		for _, s := range []string{"--vary " + `"` + spec + `"`, "KEY=FROM:TO:STEPS", "KEY=V1,V2,..."} {
			if !strings.Contains(err.Error(), s) {
				t.Errorf("ParseVary(%q): error lacks %q: %v", spec, s, err)
			}
		}
	}
	if _, err := ParseVary("supply.voltage=10 V:14 V"); err == nil || !strings.Contains(err.Error(), "no STEPS") {
		t.Errorf("missing STEPS not named: %v", err)
	}
	v := mustVary(t, "supply.voltage=10 V:14 V:5")
	if strings.Join(v.Values, ",") != "10 V,11 V,12 V,13 V,14 V" {
		t.Errorf("range values %q", v.Values)
	}
	v = mustVary(t, " plunger . mass = 5 g, 8 g ")
	if v.Key != "plunger.mass" || strings.Join(v.Values, ",") != "5 g,8 g" {
		t.Errorf("list: key %q values %q", v.Key, v.Values)
	}
}

// The swept values replace the file's own text where the key is a one-line
// value (comments, quotes and other lines kept, so positions in messages
// are the file's); a key the file does not give is added.
func TestSweepTextInPlace(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile(lowVoltageDemo)
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(data), "voltage: 24 V\n", "voltage: \"24 V\"   # quoted, °C \n", 1)
	text = strings.Replace(text, "mass: 15 g", "mass: '15 g'", 1)
	path := filepath.Join(t.TempDir(), "s.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	sw, err := NewSweeper(path)
	if err != nil {
		t.Fatal(err)
	}
	vs := []Vary{mustVary(t, "supply.voltage=30 V"), mustVary(t, "supply.low voltage=25 V"), mustVary(t, "plunger.mass=20 g")}
	out, inPlace, err := sw.text(vs, []string{"30 V", "25 V", "20 g"})
	if err != nil || !inPlace {
		t.Fatalf("in place: %v, %v", inPlace, err)
	}
	if got, want := strings.Count(string(out), "\n"), strings.Count(text, "\n"); got != want {
		t.Errorf("%d lines, want %d", got, want)
	}
	for _, s := range []string{"voltage: 30 V   # quoted, °C \n", "low voltage: 25 V              # -10 %\n", "mass: 20 g\n"} {
		if !strings.Contains(string(out), s) {
			t.Errorf("text lacks %q", s)
		}
	}
	s, err := Parse(out, path)
	if err != nil {
		t.Fatal(err)
	}
	if s.Supply.Voltage != 30 || s.Supply.LowVoltage != 25 || s.Plunger.Mass != 0.02 {
		t.Errorf("read back %g V, %g V, %g kg", s.Supply.Voltage, s.Supply.LowVoltage, s.Plunger.Mass)
	}
	// Not in the file: written anew (positions not the file's).
	vs = []Vary{mustVary(t, "supply.source resistance=1 ohm")}
	out, inPlace, err = sw.text(vs, []string{"1 ohm"})
	if err != nil || inPlace {
		t.Fatalf("added key: in place %v, %v", inPlace, err)
	}
	if s, err := Parse(out, path); err != nil || s.Supply.SourceResistance != 1 {
		t.Errorf("added key read back: %v", err)
	}
}

func TestCloseKey(t *testing.T) {
	t.Parallel()
	cases := []struct{ key, want string }{
		{"volts", "voltage"},           // shares "volt" with one key only
		{"Low_Voltage", "low voltage"}, // case and underscore
		{"voltge", "voltage"},          // one edit
		{"frequency", ""},              // nothing close
		{"vol", ""},                    // too short to guess
	}
	for _, c := range cases {
		if got := closeKey(c.key, supplyKeys); got != c.want {
			t.Errorf("closeKey(%q) = %q, want %q", c.key, got, c.want)
		}
	}
}

// A sweep whose grid is larger than MaxSweepPoints is refused before any
// point is made (a 10⁶ × 10⁶ grid used to exhaust memory), and so is a
// key given twice.
func TestSweepCheckLimits(t *testing.T) {
	t.Parallel()
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	big := []Vary{mustVary(t, "supply.voltage=18 V:30 V:1000000"), mustVary(t, "plunger.mass=5 g:9 g:1000000")}
	if err := sw.Check(big); err == nil || !strings.Contains(err.Error(), "more than 1000000 points") {
		t.Errorf("10⁶ × 10⁶ grid: %v", err)
	}
	ok := []Vary{mustVary(t, "supply.voltage=18 V:30 V:1000"), mustVary(t, "plunger.mass=5 g:9 g:1000")}
	if err := sw.Check(ok); err != nil {
		t.Errorf("10³ × 10³ grid: %v", err)
	}
	twice := []Vary{mustVary(t, "supply.voltage=20 V"), mustVary(t, "plunger.mass=5 g"), mustVary(t, " supply . voltage =22 V")}
	if err := sw.Check(twice); err == nil || !strings.Contains(err.Error(), "supply.voltage is varied twice") {
		t.Errorf("a key given twice: %v", err)
	}
}

// A range whose ends are far apart gives finite values (b − a overflowed to
// +Inf and every inner value read "+Inf V"); a key with a control
// character is refused.
func TestParseVaryFiniteValues(t *testing.T) {
	t.Parallel()
	v := mustVary(t, "supply.voltage=-1e308 V:1e308 V:5")
	want := []string{"-1e+308 V", "-5e+307 V", "0 V", "5e+307 V", "1e+308 V"}
	if strings.Join(v.Values, ",") != strings.Join(want, ",") {
		t.Errorf("values %q, want %q", v.Values, want)
	}
	if _, err := ParseVary("supply.\x1bvoltage=1 V"); err == nil || !strings.Contains(err.Error(), "control character") {
		t.Errorf("key with a control character: %v", err)
	}
}

// FuzzParseVary: ParseVary never panics; an error names the flag, quotes
// the text (no raw control character) and states the syntax, on one line;
// a parsed sweep has a clean dotted key and 1 to maxSweepSteps values, and
// the values of a range are finite numbers with the unit.
func FuzzParseVary(f *testing.F) {
	for _, s := range []string{"supply.voltage=18 V:30 V:13", "plunger.mass=5 g,8 g", " plunger . mass = 5 g, 8 g ",
		"supply.voltage=10 V:14:5", "supply.voltage=-1e308 V:1e308 V:3", "supply.voltage=10 V:14 V", "supply.voltage=:14 V:5",
		"supply.voltage=10 V:14 V:0", "supply.voltage=10 V:14 A:5", "=10 V", "supply..voltage=10 V", "supply.voltage=",
		"drive.frequency=1e3 Hz:2e3 Hz:2", "timing.end=1e-3 s:1 s:1000", "a=1e+3:2e-3:3", "a=1e:2e:2", "a=.5:-.5:3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, spec string) {
		v, err := ParseVary(spec)
		if err != nil {
			msg := err.Error()
			if !strings.HasPrefix(msg, "--vary ") || !strings.Contains(msg, VarySyntax) || strings.Contains(msg, "\n") {
				t.Fatalf("ParseVary(%q): malformed error %q", spec, msg)
			}
			for _, r := range msg {
				if isControlRune(r) {
					t.Fatalf("ParseVary(%q): error holds the raw control character %U", spec, r)
				}
			}
			return
		}
		if v.Key == "" || v.Spec != spec {
			t.Fatalf("ParseVary(%q): key %q, spec %q", spec, v.Key, v.Spec)
		}
		for _, p := range strings.Split(v.Key, ".") {
			if p == "" || p != strings.TrimSpace(p) {
				t.Fatalf("ParseVary(%q): key %q has an empty or padded part", spec, v.Key)
			}
		}
		for _, r := range v.Key {
			if isControlRune(r) {
				t.Fatalf("ParseVary(%q): key %q holds a control character", spec, v.Key)
			}
		}
		if len(v.Values) < 1 || len(v.Values) > maxSweepSteps {
			t.Fatalf("ParseVary(%q): %d values", spec, len(v.Values))
		}
		_, rng, _ := strings.Cut(spec, "=")
		isRange := strings.Contains(rng, ":")
		for _, x := range v.Values {
			if x == "" || x != strings.TrimSpace(x) {
				t.Fatalf("ParseVary(%q): value %q empty or padded", spec, x)
			}
			if isRange {
				num, _, _ := strings.Cut(x, " ")
				if f, err := strconv.ParseFloat(num, 64); err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
					t.Fatalf("ParseVary(%q): range value %q is not a finite number", spec, x)
				}
			}
		}
	})
}

// TestSweepPointPanicBecomesError: a panic while building or simulating a
// point is the point's error, not the end of the process (a panicking
// worker goroutine would exit with the runtime's status 2, which is
// reserved for failing ratings).
func TestSweepPointPanicBecomesError(t *testing.T) {
	// Not parallel: it sets a package hook.
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	v, _ := ParseVary("supply.voltage=22 V,24 V")
	sweepPointHook = func() { panic("injected") }
	pts := sw.Sweep([]Vary{v}, 2, nil)
	sweepPointHook = nil
	for _, p := range pts {
		if !strings.Contains(p.Err, "internal error") || !p.Failed || p.Figures != nil {
			t.Errorf("point %+v", p)
		}
	}
}

// checkFlagError checks that sw refuses the --vary spec with a flag error
// (one that does not point into the scenario file) containing want.
func checkFlagError(t *testing.T, sw *Sweeper, spec string, want []string) {
	t.Helper()
	err := sw.Check([]Vary{mustVary(t, spec)})
	if errorHas(t, spec, err, want) && strings.Contains(err.Error(), ".yaml:") {
		t.Errorf("%s: a flag error must not point into the file:\n%v", spec, err)
	}
}
