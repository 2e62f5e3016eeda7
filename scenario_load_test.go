package coilkick

import (
	"bytes"
	"fmt"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"
	"time"
)

func TestLoadMinimal(t *testing.T) {
	path := filepath.Join("testdata", "good", "minimal.yaml")
	s, err := Load(path)
	if err != nil {
		t.Fatalf("Load(%s): %v", path, err)
	}
	want := Scenario{
		Name:   "test valve",
		Source: path,
		Supply: SupplySpec{Voltage: 24},
		Coil: CoilSpec{
			Resistance:     48,
			RefTemperature: 293.15,  // default 20 °C; 0 °C = 273.15 K (SI brochure 2.3.1)
			Temperature:    293.15,  // default: the reference temperature
			TempCoeff:      0.00393, // default, annealed copper (IEC 60028)
		},
		Magnet: MagnetSpec{Kind: MagnetGapLaw, ClosedInductance: 0.25, OpenInductance: 0.12},
		Plunger: PlungerSpec{
			Mass:          0.006,  // 6 g; 1 g = 1e-3 kg
			RestGap:       0.0012, // 1.2 mm; m = 1e-3 (SI brochure table 7)
			SeatedGap:     0.00005,
			SpringPreload: 2,
			SpringRate:    800, // 0.8 N/mm
			StickSpeed:    0.05,
		},
		Switch:      SwitchSpec{OnResistance: 0.05, BreakdownVoltage: 60, BodyDiodeDrop: 0.7},
		Suppression: SuppressionSpec{Kind: SuppressFreewheel, ForwardDrop: 0.8},
		Drive:       DriveSpec{Mode: DriveConstant}, // default: constant drive
		Timing:      TimingSpec{DeenergizeAt: 0.1, End: 0.2},
	}
	got := *s
	got.pos = nil
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Load(%s) =\n%+v\nwant\n%+v", path, got, want)
	}
	// Positions are recorded for later checks, and Errorf uses them.
	if p := s.pos["plunger.mass"]; p != (Pos{12, 9}) {
		t.Errorf(`pos["plunger.mass"] = %v, want {12 9}`, p)
	}
	if p := s.pos["magnet.gap law.closed inductance"]; p != (Pos{9, 24}) {
		t.Errorf(`pos["magnet.gap law.closed inductance"] = %v, want {9 24}`, p)
	}
	if p, ok := s.pos["plunger"]; !ok || p.Line != 11 {
		t.Errorf(`pos["plunger"] = %v, %v; want line 11`, p, ok)
	}
	e := s.Errorf("plunger.mass", "too heavy")
	if want := path + ":12:9: plunger.mass: too heavy"; e.Error() != want {
		t.Errorf("Errorf = %q, want %q", e, want)
	}
}

func TestLoadFull(t *testing.T) {
	path := filepath.Join("testdata", "good", "full.yaml")
	s, err := Load(path)
	if err != nil {
		t.Fatalf("Load(%s): %v", path, err)
	}
	d := 0.0012 // orifice diameter, m (a variable: rounded as the loader rounds)
	checks := []struct {
		name      string
		got, want float64
	}{
		{"supply.source resistance", s.Supply.SourceResistance, 0.5},
		{"coil.resistance (Ω)", s.Coil.Resistance, 48},
		{"coil.reference temperature (0 °C = 273.15 K, SI brochure 2.3.1)", s.Coil.RefTemperature, 293.15},
		{"coil.temperature", s.Coil.Temperature, 313.15},
		{"coil.temperature coefficient", s.Coil.TempCoeff, 0.004},
		{"coil.turns", s.Coil.Turns, 1800},
		{"coil.winding capacitance (p = 1e-12)", s.Coil.WindingCapacitance, 150e-12},
		{"coil.core loss resistance (k = 1e3)", s.Coil.CoreLossResistance, 22e3},
		{"magnet.gap law.pole area (mm² = 1e-6 m²)", s.Magnet.PoleArea, 50e-6},
		{"plunger.damping", s.Plunger.Damping, 0.5},
		{"plunger.restitution", s.Plunger.Restitution, 0.3},
		{"plunger.stick speed", s.Plunger.StickSpeed, 0.1},
		{"plunger.load.constant force", s.Plunger.ConstantLoad, -0.5},
		{"plunger.load.pressure (1 bar = 1e5 Pa exactly, ISO 80000-4)", s.Plunger.Pressure, 3e5},
		{"plunger.load.orifice area = π d²/4", s.Plunger.OrificeArea, math.Pi * d * d / 4},
		{"plunger.load.seal travel", s.Plunger.SealTravel, 0.0003},
		{"switch.output capacitance (p = 1e-12)", s.Switch.OutputCapacitance, 300e-12},
		{"switch.body diode drop", s.Switch.BodyDiodeDrop, 0.8},
		{"suppression.clamp voltage", s.Suppression.ClampVoltage, 36},
		{"suppression.resistance", s.Suppression.Resistance, 0.2},
		{"timing.energize at", s.Timing.EnergizeAt, 0.001},
		{"ratings.switch voltage", s.Limits.SwitchVoltage, 60},
		{"ratings.avalanche energy", s.Limits.AvalancheEnergy, 0.02},
		{"ratings.clamp energy", s.Limits.ClampEnergy, 0.05},
		{"ratings.clamp current", s.Limits.ClampCurrent, 2},
		{"ratings.pull-in time", s.Limits.MaxPullIn, 0.03},
		{"ratings.release time", s.Limits.MaxRelease, 0.02},
		{"ratings.drop time", s.Limits.MaxDrop, 0.04},
		{"solver.tolerance", s.Solver.Tolerance, 1e-8},
		{"solver.max steps", float64(s.Solver.MaxSteps), 500000},
	}
	for _, c := range checks {
		if c.got != c.want {
			t.Errorf("%s = %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	if s.Name != "full valve" || s.Suppression.Kind != SuppressSwitchClamp {
		t.Errorf("name %q, suppression %q", s.Name, s.Suppression.Kind)
	}
	for _, p := range []string{"plunger.load.pressure", "ratings.switch voltage", "solver.max steps", "plunger.load"} {
		if _, ok := s.pos[p]; !ok {
			t.Errorf("no position recorded for %q", p)
		}
	}
}

func TestLoadTable(t *testing.T) {
	path := filepath.Join("testdata", "good", "table.yaml")
	s, err := Load(path)
	if err != nil {
		t.Fatalf("Load(%s): %v", path, err)
	}
	m := s.Magnet
	if m.Kind != MagnetTable || m.CurrentScale != 1e-3 || m.GapScale != 1e-3 || m.FluxScale != 1e-3 {
		t.Errorf("magnet = %+v", m)
	}
	if want := filepath.Join("testdata", "good", "table_flux.csv"); m.TableFile != want {
		t.Errorf("TableFile = %q, want %q (resolved against the scenario's folder)", m.TableFile, want)
	}
	if s.Suppression.Kind != SuppressNone || s.Plunger.SeatedGap != 0.1e-3 {
		t.Errorf("suppression %q, seated gap %v", s.Suppression.Kind, s.Plunger.SeatedGap)
	}
}

func TestLoadBad(t *testing.T) {
	cases := []struct {
		file      string
		line, col int // 0: not checked (no position exists)
		want      []string
	}{
		{"unknown_key.yaml", 13, 3, []string{"plunger.colour", `unknown key "colour"`, "allowed keys: mass, rest gap"}},
		{"missing_unit.yaml", 12, 9, []string{"plunger.mass", `"6" has no unit; expected a mass, e.g. "6 g"`}},
		{"wrong_unit.yaml", 12, 9, []string{`plunger.mass: "6 N" is a force; expected a mass, e.g. "6 g"`}},
		{"negative_mass.yaml", 12, 9, []string{"plunger.mass", `"-6 g" must be greater than 0`}},
		{"zero_inductance.yaml", 9, 24, []string{"magnet.gap law.closed inductance", `"0 mH" must be greater than 0`}},
		{"empty.yaml", 0, 0, []string{"file is empty"}},
		{"not_yaml.yaml", 4, 0, []string{"not valid YAML"}},
		{"list_instead_of_map.yaml", 12, 3, []string{"plunger", "expected a section of keys (mass, rest gap", "got a list"}},
		{"duplicate_key.yaml", 17, 3, []string{"plunger.mass", `duplicate key "mass" (first given at line 12)`}},
		{"missing_required.yaml", 11, 1, []string{"plunger.spring rate", "missing (required)", `expected a spring rate (force per length), e.g. "0.8 N/mm"`}},
		{"drive_key_not_for_mode.yaml", 25, 14, []string{"drive.frequency", `does not apply to drive mode "constant" (its keys: mode, brake at, brake for)`}},
		{"key_not_for_type.yaml", 23, 18, []string{"suppression.zener voltage", `does not apply to suppression type "freewheel diode"`, "type, forward drop, resistance"}},
		{"unknown_suppression.yaml", 21, 9, []string{"suppression.type", `unknown suppression type "flyback diode"`, "none, freewheel diode, diode zener, tvs, rc snubber, switch clamp"}},
		{"open_not_below_closed.yaml", 10, 22, []string{"magnet.gap law.open inductance", `"300 mH" must be less than magnet.gap law.closed inductance "250 mH" (line 9)`}},
		{"breakdown_below_supply.yaml", 19, 22, []string{"switch.breakdown voltage", `"20 V" must be greater than supply.voltage "24 V" (line 4)`}},
		{"timing_order.yaml", 25, 8, []string{"timing.end", `"50 ms" must be greater than timing.de-energize at "100 ms" (line 24)`}},
		{"pole_area_without_turns.yaml", 11, 16, []string{"magnet.gap law.pole area", "needs coil.turns"}},
		{"magnet_without_pole_area.yaml", 12, 20, []string{"magnet.gap law.holding force", "needs magnet.gap law.pole area"}},
		{"magnet_mmf_and_holding.yaml", 14, 20, []string{"magnet.gap law.holding force", `give only one of "magnet mmf" and "holding force"`}},
		{"missing_table_file.yaml", 9, 11, []string{"magnet.table.file", `"no_such_table.csv" not found`, filepath.Join("testdata", "bad", "no_such_table.csv")}},
		{"table_unit_wrong.yaml", 10, 19, []string{"magnet.table.current unit", `"mm" is a unit of length; expected a unit of current, e.g. "A"`}},
		{"two_documents.yaml", 26, 0, []string{"second YAML document"}},
		{"tab_indent.yaml", 4, 0, []string{"not valid YAML"}},
		{"missing_section.yaml", 2, 1, []string{"timing: missing section (required)", "de-energize at"}},
		{"demag_without_magnet.yaml", 20, 28, []string{"magnet.gap law.demagnetising current", "needs a permanent magnet"}},
		{"reverse_delay_without_pulse.yaml", 29, 24, []string{"suppression.reverse pulse delay", "needs suppression.reverse pulse"}},
		{"snubber_without_resistance.yaml", 20, 1, []string{"suppression.resistance", "missing (required)", "expected a resistance"}},
		{"clamp_above_breakdown.yaml", 22, 18, []string{"suppression.clamp voltage", `"70 V" must be less than switch.breakdown voltage "60 V" (line 19)`}},
		{"sense_resolution_volts.yaml", 28, 15, []string{"sense.resolution", `"0.5 mV" is a voltage; expected a current`}},
		{"sense_no_sample_rate.yaml", 26, 1, []string{"sense.sample rate", "missing (required)", "expected a frequency"}},
		{"seal_travel_too_long.yaml", 20, 18, []string{"plunger.load.seal travel", `"2 mm" must not exceed`, "plunger.rest gap"}},
		{"nan_value.yaml", 4, 12, []string{"supply.voltage", "not a finite number", "expected a voltage"}},
		{"scalar_top.yaml", 2, 1, []string{"(top level)", "expected a section of keys"}},

		// Ranges: every value is bounded, the message states the range and its unit.
		{"pwm_frequency_huge.yaml", 29, 14, []string{`drive.frequency: "1e21 Hz" is too large; expected a frequency from 1 Hz to 10 MHz`}},
		{"pwm_frequency_below_window.yaml", 29, 14, []string{`drive.frequency: "5 Hz" gives less than one period in the 0.1 s the drive is energized`, "expected a frequency of at least 10 Hz"}},
		{"chopping_frequency_below_hold.yaml", 33, 14, []string{`drive.frequency: "20 Hz" gives less than one period in the 0.04 s the hold lasts`, "drive.peak time", "expected a frequency of at least 25 Hz"}},
		{"mass_underflow.yaml", 13, 9, []string{`plunger.mass: "1e-30 g" is too small; expected a mass from 1 mg to 100 kg`}},
		{"solver_tolerance_tiny.yaml", 28, 14, []string{`solver.tolerance: "1e-30" is too small; expected a plain number from 1e-12 to 1e-3`}},
		{"duty_duration_huge.yaml", 30, 13, []string{`duty.duration: "1e18 min" is too large; expected a time from 0 s to 525600 min (at most a year)`}},
		{"duty_segment_tiny.yaml", 28, 14, []string{`duty.segments[1]: "1 ns" is too small; expected a time from 1 ms to 1440 min`}},
		{"stick_speed_zeno.yaml", 19, 16, []string{`plunger.stick speed: "1e-30 m/s" is too small; expected a velocity from 100 µm/s to 10 m/s`}},
		{"bulk_capacitance_huge.yaml", 7, 21, []string{`supply.bulk capacitance: "1e30 uF" is too large; expected a capacitance from 1 nF to 1 F`}},
		{"supply_voltage_huge.yaml", 5, 12, []string{`supply.voltage: "24 MV" is too large; expected a voltage from 100 mV to 1 kV`}},
		{"temperature_coefficient_negative.yaml", 8, 28, []string{`coil.temperature coefficient: "-0.004 /K" must not be negative; expected a temperature coefficient (per kelvin) from 0 /K to 0.01 /K`}},
		{"coil_temperature_hot.yaml", 8, 16, []string{`coil.temperature: "900 degC" is too large; expected a temperature from -100 degC to 400 degC`}},
		{"max_steps_huge.yaml", 28, 14, []string{`solver.max steps: "1e12" is too large; expected a whole number from 1 to 100000000`}},
		{"timing_end_long.yaml", 26, 8, []string{`timing.end: "1e9 s" is too large; expected a time from 1 µs to 60 min`}},
		{"switch_capacitance_tiny.yaml", 20, 23, []string{`switch.output capacitance: "1e-30 F" is too small; expected a capacitance of 0, or from 1 pF to 1 µF`}},
		{"shell_wall_tiny.yaml", 25, 17, []string{`magnet.geometry.shell wall: "1e-20 mm" is too small; expected a length from 100 µm to 1 m`}},
		// Whole numbers.
		{"turns_fractional.yaml", 8, 10, []string{`coil.turns: "2400.5" must be a whole number; expected a whole number from 1 to 1000000`}},
		{"build_turns_fractional.yaml", 17, 12, []string{`coil.build.turns: "2500.5" must be a whole number; expected a whole number from 1 to 1000000`}},
		// Control characters: refused in the name, escaped wherever else a message quotes the file.
		{"name_escape.yaml", 3, 7, []string{`name: "test valve \x1b[2J\x1b[31mRED" contains the control character U+001B`, "expected printable text"}},
		{"name_bidi.yaml", 3, 7, []string{`name: "test \u202eevlav" contains the control character U+202E`, "expected printable text"}},
		{"unknown_key_control.yaml", 18, 3, []string{`plunger.\x1b[31mcolour: unknown key "\x1b[31mcolour"`, "allowed keys: mass"}},
		// Input files that are not regular files.
		{"table_device.yaml", 9, 11, []string{`magnet.table.file: "/dev/zero" is not a regular file (a device): refused; expected a CSV file`}},
		{"table_folder.yaml", 9, 11, []string{`magnet.table.file: "testdata/bad" is a folder, not a table file`}},
		{"table_file_control.yaml", 9, 11, []string{`magnet.table.file: "table\x1b[31m.csv": a file name with the control character or invalid byte U+001B is refused`}},
		{"curve_device.yaml", 31, 13, []string{`magnet.geometry.steel curve.file: "/dev/zero" is not a regular file (a device): refused`}},
		// CSV inputs (read by Build): the scenario's field, the CSV's line and column, the units.
		{"table_bad_cell.yaml", 9, 11, []string{"magnet.table.file: testdata/bad/table_bad_cell.csv:9:32: flux linkage at gap 0.3 mm (cell 5), in mWb: not a finite number: \"abc\"",
			"the table's units: current in mA, gap in mm, flux linkage in mWb"}},
		{"table_bom_bad.yaml", 9, 11, []string{"magnet.table.file: testdata/bad/table_bom_bad.csv:9:14: flux linkage must be strictly increasing in current",
			"the table's units: current in mA, gap in mm, flux linkage in mWb"}},
		{"table_too_many_gaps.yaml", 9, 11, []string{"magnet.table.file: testdata/bad/table_too_many_gaps.csv:2:3342: header has 501 gaps, more than the 500 a table may have"}},
		{"curve_bad_cell.yaml", 31, 13, []string{"magnet.geometry.steel curve.file: testdata/bad/curve_bad_cell.csv:8:6: B (cell 2), in T: not a finite number: \"1.2x\"",
			"the curve's units: field strength in kA/m, flux density in T"}},
		{"curve_bom_bad.yaml", 31, 13, []string{"magnet.geometry.steel curve.file: testdata/bad/curve_bom_bad.csv:9:6: flux density must be strictly increasing: 0.85 T is not above the previous point's 0.9 T"}},
		// Geometry: plain words, no Go field names.
		{"geometry_pole_too_fat.yaml", 19, 3, []string{"magnet.geometry: plunger geometry: pole diameter 12 mm must fit in the coil bore, the winding's inner diameter 10 mm"}},
		{"geometry_plunger_too_fat.yaml", 19, 3, []string{"magnet.geometry: plunger geometry: the plunger with its sliding gap (plunger diameter + 2 × sliding gap = 11 mm) must fit in the coil bore"}},
	}
	seen := map[string]bool{}
	for _, c := range cases {
		seen[c.file] = true
		path := filepath.Join("testdata", "bad", c.file)
		t.Run(c.file, func(t *testing.T) {
			s, err := Load(path)
			if err == nil {
				// Defects of the files a scenario names show when it is built.
				if _, err = Build(s); err == nil {
					t.Fatalf("LoadModel(%s) succeeded: %+v", path, s)
				}
			}
			msg := err.Error()
			checkMessage(t, msg)
			where := path + ":"
			if c.line > 0 {
				where = fmt.Sprintf("%s:%d:", path, c.line)
				if c.col > 0 {
					where = fmt.Sprintf("%s:%d:%d: ", path, c.line, c.col)
				}
			}
			if !strings.Contains(msg, where) {
				t.Errorf("error does not name %q:\n%s", where, msg)
			}
			for _, w := range c.want {
				if !strings.Contains(msg, w) {
					t.Errorf("error does not contain %q:\n%s", w, msg)
				}
			}
			if strings.Count(msg, "\n") > 0 {
				t.Errorf("want exactly one error for a file with one defect, got:\n%s", msg)
			}
		})
	}
	// Every file in testdata/bad is covered by a case.
	files, _ := filepath.Glob(filepath.Join("testdata", "bad", "*.yaml"))
	for _, f := range files {
		if !seen[filepath.Base(f)] {
			t.Errorf("%s has no test case", f)
		}
	}
}

// camelCase matches a Go identifier with an inner capital letter
// (SlidingGap, WindingInnerRadius): internal names a message must not show.
var camelCase = regexp.MustCompile(`\b[A-Za-z][a-z]+[A-Z][a-z]+`)

// checkMessage fails on what no user message may hold: a raw control
// character (a terminal would act on it), a package prefix after a file
// position ("coilkick: " is the CLI's own), a Go field name, NaN or Inf.
func checkMessage(t *testing.T, msg string) {
	t.Helper()
	for _, line := range strings.Split(msg, "\n") {
		for _, r := range line {
			if isControlRune(r) {
				t.Errorf("message holds the raw control character %U: %q", r, line)
			}
		}
		if strings.Contains(line, "coilkick: ") || strings.Contains(line, ": magnet: ") {
			t.Errorf("message repeats a package prefix: %q", line)
		}
		if m := camelCase.FindString(line); m != "" {
			t.Errorf("message names the internal %q: %q", m, line)
		}
		if strings.Contains(line, "NaN") || strings.Contains(line, "Inf") {
			t.Errorf("message holds a non-finite number: %q", line)
		}
	}
}

func TestLoadMissingFile(t *testing.T) {
	_, err := Load(filepath.Join("testdata", "no_such_scenario.yaml"))
	if err == nil || !strings.Contains(err.Error(), "no_such_scenario.yaml: cannot read scenario file") {
		t.Errorf("err = %v", err)
	}
}

func TestLoadParseNoName(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "good", "minimal.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	bad := bytes.Replace(data, []byte("mass: 6 g"), []byte("mass: 6 N"), 1)
	_, err = Parse(bad, "")
	if err == nil || !strings.Contains(err.Error(), "line 12, column 9: plunger.mass:") {
		t.Errorf("err = %v", err)
	}
	if _, err := Parse(data, ""); err != nil {
		t.Errorf("Parse(minimal, \"\"): %v", err)
	}
}

func TestLoadManyErrors(t *testing.T) {
	data := []byte("supply:\n  voltage: 24\ncoil:\n  resistance: 48 V\n")
	_, err := Parse(data, "x.yaml")
	if err == nil {
		t.Fatal("no error")
	}
	msg := err.Error()
	for _, w := range []string{
		`x.yaml:2:12: supply.voltage: "24" has no unit`,
		`x.yaml:4:15: coil.resistance: "48 V" is a voltage; expected a resistance`,
		"x.yaml:1:1: magnet: missing section",
		"x.yaml:1:1: timing: missing section",
	} {
		if !strings.Contains(msg, w) {
			t.Errorf("error does not contain %q:\n%s", w, msg)
		}
	}
	// Sorted by position: line 2 before line 4.
	if strings.Index(msg, "x.yaml:2:12") > strings.Index(msg, "x.yaml:4:15") {
		t.Errorf("errors not in file order:\n%s", msg)
	}
}

// TestLoadMutations feeds random byte mutations of the good files to
// Parse: it must never panic, and every failure must be a non-empty error
// naming the file.
func TestLoadMutations(t *testing.T) {
	var seeds [][]byte
	for _, f := range []string{"minimal.yaml", "full.yaml", "table.yaml"} {
		data, err := os.ReadFile(filepath.Join("testdata", "good", f))
		if err != nil {
			t.Fatal(err)
		}
		seeds = append(seeds, data)
	}
	rng := rand.New(rand.NewSource(20240607))
	alphabet := []byte(" :-\t\n#[]{}\"'&*!|>%@,0123456789.eEabcVmgNs/^µΩ°\x00\xff")
	const name = "testdata/good/mutated.yaml"
	for i := 0; i < 600; i++ {
		data := append([]byte(nil), seeds[i%len(seeds)]...)
		for n := 1 + rng.Intn(4); n > 0 && len(data) > 0; n-- {
			p := rng.Intn(len(data))
			switch rng.Intn(4) {
			case 0: // replace a byte
				data[p] = alphabet[rng.Intn(len(alphabet))]
			case 1: // delete a run
				q := min(len(data), p+1+rng.Intn(8))
				data = append(data[:p], data[q:]...)
			case 2: // insert a byte
				data = append(data[:p], append([]byte{alphabet[rng.Intn(len(alphabet))]}, data[p:]...)...)
			case 3: // duplicate a line
				start := bytes.LastIndexByte(data[:p], '\n') + 1
				end := bytes.IndexByte(data[p:], '\n')
				if end < 0 {
					continue
				}
				line := append([]byte(nil), data[start:p+end+1]...)
				data = append(data[:start], append(line, data[start:]...)...)
			}
		}
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("Parse panicked on mutation %d: %v\n%s", i, r, data)
				}
			}()
			s, err := Parse(data, name)
			if err != nil {
				msg := err.Error()
				if msg == "" || !strings.Contains(msg, name) {
					t.Errorf("mutation %d: error %q does not name the file\n%s", i, msg, data)
				}
				if strings.Contains(msg, "internal error") {
					t.Errorf("mutation %d: %s", i, msg)
				}
				return
			}
			if s == nil {
				t.Errorf("mutation %d: nil scenario without error", i)
				return
			}
			checkFinite(t, i, reflect.ValueOf(*s))
		}()
	}
}

// checkFinite fails on any NaN or infinite float field.
func checkFinite(t *testing.T, i int, v reflect.Value) {
	t.Helper()
	switch v.Kind() {
	case reflect.Struct:
		for j := 0; j < v.NumField(); j++ {
			if v.Type().Field(j).IsExported() {
				checkFinite(t, i, v.Field(j))
			}
		}
	case reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			t.Errorf("mutation %d: a non-finite value was accepted", i)
		}
	}
}

// FuzzParse: the loader never panics (an "internal error" is a recovered
// panic); every error line names the file and holds no raw control
// character; a scenario read has finite values inside their ranges and a
// printable name.
func FuzzParse(f *testing.F) {
	for _, name := range []string{"good/minimal.yaml", "good/full.yaml", "good/coilbuild.yaml", "bad/name_escape.yaml",
		"bad/pwm_frequency_below_window.yaml", "bad/duty_segment_tiny.yaml", "bad/turns_fractional.yaml"} {
		data, err := os.ReadFile(filepath.Join("testdata", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	demos, _ := filepath.Glob(filepath.Join("scenarios", "*.yaml"))
	for _, name := range demos {
		data, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := Parse(data, "fuzz.yaml")
		if err != nil {
			for _, line := range strings.Split(err.Error(), "\n") {
				if !strings.Contains(line, "fuzz.yaml") || strings.Contains(line, "internal error") {
					t.Fatalf("bad error: %q", line)
				}
				for _, r := range line {
					if isControlRune(r) {
						t.Fatalf("error holds the raw control character %U: %q", r, line)
					}
				}
			}
			return
		}
		checkFinite(t, 0, reflect.ValueOf(*s))
		if badName(s.Name) != "" {
			t.Fatalf("name %q accepted: %s", s.Name, badName(s.Name))
		}
		for path, r := range map[string]valueRange{"supply.voltage": scenarioRanges["supply.voltage"], "plunger.mass": scenarioRanges["plunger.mass"],
			"timing.end": scenarioRanges["timing.end"], "coil.temperature": scenarioRanges["coil.temperature"]} {
			v := map[string]float64{"supply.voltage": s.Supply.Voltage, "plunger.mass": s.Plunger.Mass,
				"timing.end": s.Timing.End, "coil.temperature": s.Coil.Temperature}[path]
			if !r.contains(v) {
				t.Fatalf("%s = %g accepted outside %s", path, v, r.text)
			}
		}
	})
}

// TestLoadEdits checks a few more defects, each made by one edit of the
// good minimal file.
func TestLoadEdits(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "good", "minimal.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		old, new string
		want     []string
	}{
		{"mass: 6 g", "mass:", []string{"e.yaml:12:3: plunger.mass: has no value; expected a mass"}},
		{"mass: 6 g", "mass: [6 g]", []string{"e.yaml:12:9: plunger.mass: expected a mass", "got a list"}},
		{"resistance: 48 ohm", "resistance: 48 ohm\n  temperature coefficient: 0.004 /degC", []string{"e.yaml:7:28: coil.temperature coefficient", "degC can only stand alone"}},
		{"resistance: 48 ohm", "resistance: 48 ohm\n  temperature: -300 degC", []string{"coil.temperature", "below absolute zero"}},
		{"    open inductance: 120 mH\n", "    open inductance: 120 mH\n  table:\n    file: x.csv\n", []string{"e.yaml:11:3: magnet.table", `give only one of "gap law", "table", "geometry" and "force curves"`}},
		{"  gap law:\n    closed inductance: 250 mH\n    open inductance: 120 mH\n", "", []string{"e.yaml:7:1: magnet", "needs one of"}},
		{"  spring rate: 0.8 N/mm\n", "  spring rate: 0.8 N/mm\n  restitution: 1.5\n", []string{"plunger.restitution", `"1.5" is too large; expected a plain number from 0 to 1`}},
		{"  spring rate: 0.8 N/mm\n", "  spring rate: 0.8 N/mm\n  load:\n    seal travel: 0.3 mm\n", []string{"plunger.load.seal travel", "applies only when plunger.load.pressure is given"}},
		{"  spring rate: 0.8 N/mm\n", "  spring rate: 0.8 N/mm\n  load:\n    pressure: 3 bar\n    seal travel: 0.3 mm\n", []string{"plunger.load.pressure", "needs plunger.load.orifice diameter or plunger.load.orifice area"}},
		{"  spring rate: 0.8 N/mm\n", "  spring rate: 0.8 N/mm\n  damping: 0.5 Ns/m\n", []string{"plunger.damping", `unknown unit "Ns"`, `"N*s"`, "expected a damping coefficient"}},
		{"  voltage: 24 V\n", "  voltage: 24 V\n  Source_Resistance: 1 ohm\n", []string{"supply.Source_Resistance", `did you mean "source resistance"`}},
		{"end: 200 ms", "end: 200 ms\nsolver:\n  tolerance: 0.1", []string{"solver.tolerance", `"0.1" is too large; expected a plain number from 1e-12 to 1e-3`}},
		{"end: 200 ms", "end: 200 ms\nsolver:\n  max steps: 2.5", []string{"solver.max steps", "whole number"}},
		{"end: 200 ms", "end: 200 ms\nratings:\n  drop time: 0 ms", []string{"ratings.drop time", "greater than 0"}},
		{"end: 200 ms", "end: 200 ms\nratings:", nil}, // an empty optional section is fine
		{"type: freewheel diode\n  forward drop: 0.8 V", "type: tvs\n  clamp voltage: 20 V", []string{"suppression.clamp voltage", `"20 V" must be greater than supply.voltage "24 V" (line 4)`}},
	}
	for i, c := range cases {
		if !bytes.Contains(data, []byte(c.old)) {
			t.Fatalf("case %d: %q not in minimal.yaml", i, c.old)
		}
		edited := bytes.Replace(data, []byte(c.old), []byte(c.new), 1)
		_, err := Parse(edited, "e.yaml")
		if c.want == nil {
			if err != nil {
				t.Errorf("case %d: unexpected error %v", i, err)
			}
			continue
		}
		if err == nil {
			t.Errorf("case %d: no error for edit %q", i, c.new)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("case %d: error does not contain %q:\n%s", i, w, err)
			}
		}
	}
}

func TestLoadCoilBuild(t *testing.T) {
	t.Parallel()
	md, err := LoadModel(filepath.Join("testdata", "good", "coilbuild.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	// source: R = ρ·ℓ/A with ρ = 1/58 Ω·mm²/m (IEC 60028), ℓ = N·π·(Di + Do)/2
	// for a full window (mean turn length of a round bobbin).
	const n, di, do, d = 2500.0, 10e-3, 26e-3, 0.2e-3
	want := (1 / 58e6) * n * math.Pi * (di + do) / 2 / (math.Pi * d * d / 4)
	if got := md.Coil.Resistance; math.Abs(got-want)/want > 1e-12 || md.Coil.Turns != n {
		t.Errorf("coil from build: R20 = %g ohm, turns %g; want %g ohm, %g", got, md.Coil.Turns, want, n)
	}
	if md.CoilBuild == nil || md.EddyResistance != 300 {
		t.Errorf("CoilBuild %v, eddy %g", md.CoilBuild, md.EddyResistance)
	}
}

func TestLoadCoilBuildErrors(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(filepath.Join("testdata", "good", "coilbuild.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct{ from, to, want string }{
		{"    turns: 2500\n", "    turns: 2500\n    fill factor: 0.5\n", "coil.build.fill factor: give either the turns or a fill factor"},
		{"    turns: 2500\n", "", "coil.build.turns: missing"},
		{"    wire diameter: 0.2 mm\n", "    wire diameter: 0.2 mm\n    wire gauge: 32\n", "give either a wire gauge"},
		{"    wire diameter: 0.2 mm\n", "    wire gauge: 32.5\n", `"32.5" must be a whole number; expected a whole number from 0 to 46`},
		{"    overall diameter: 0.23 mm\n", "    insulation grade: 4\n", "expected a whole number from 1 to 3"},
		{"  build:\n", "  resistance: 48 ohm\n  build:\n", "not both"},
		{"    outer diameter: 26 mm\n", "    outer diameter: 8 mm\n", "coil.build.outer diameter"},
		{"  eddy resistance: 300 ohm\n", "  eddy resistance: 300 mH\n", "expected a resistance"},
		{"    turns: 2500\n", "    turns: 25000\n", "do not fit"},
	}
	for _, c := range cases {
		text := strings.Replace(string(good), c.from, c.to, 1)
		s, err := Parse([]byte(text), "cb.yaml")
		if err == nil {
			_, err = Build(s)
		}
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "cb.yaml:") {
			t.Errorf("edit %q → %q: error %v, want one naming cb.yaml and containing %q", c.from, c.to, err, c.want)
		}
	}
}

func TestLoadGeometryErrors(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(filepath.Join("scenarios", "dosing-valve-geometry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct{ from, to, want string }{
		{"  seated gap: 0.05 mm\n", "  seated gap: 0 mm\n", "plunger.seated gap: a magnet from geometry needs a residual gap"},
		{"    steel permeability: 1500", "    steel permeability: 0.5", "expected a plain number above 1, up to 1000000"},
		{"    steel saturation: 2.0 T", "    steel saturation: 2.0 A", "expected a flux density"},
		{"    steel saturation: 2.0 T", "    steel saturation: 2.0 T\n    steel curve:\n      file: nope.csv\n      field unit: A/m\n      flux density unit: T", "not both"},
		{"    sliding gap: 0.05 mm\n", "", "magnet.geometry.sliding gap: missing"},
		{"    pole diameter: 8 mm\n", "    pole diameter: 12 mm\n", "magnet.geometry"},
	}
	for _, c := range cases {
		text := strings.Replace(string(good), c.from, c.to, 1)
		if text == string(good) {
			t.Fatalf("edit %q did not apply", c.from)
		}
		s, err := Parse([]byte(text), filepath.Join("scenarios", "g.yaml"))
		if err == nil {
			_, err = Build(s)
		}
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "g.yaml:") {
			t.Errorf("edit %q → %q: error %v, want one naming g.yaml and containing %q", c.from, c.to, err, c.want)
		}
	}
	// Geometry without a coil build.
	text := strings.Replace(string(good), "coil:\n  build:", "coil:\n  resistance: 87 ohm\n  turns: 2800\n  unused:", 1)
	if _, err := Parse([]byte(text), "g.yaml"); err == nil || !strings.Contains(err.Error(), "needs coil.build") {
		t.Errorf("geometry without coil.build: %v", err)
	}
}

func TestLoadGeometrySteelCurve(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(filepath.Join("scenarios", "dosing-valve-geometry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(good), "    steel saturation: 2.0 T        # typical of low-carbon steel, from memory\n    steel permeability: 1500       # initial relative permeability, from memory\n",
		"    steel curve:\n      file: ../magnet/steel_bh.csv\n      field unit: kA/m\n      flux density unit: T\n", 1)
	if text == string(good) {
		t.Fatal("edit did not apply")
	}
	s, err := Parse([]byte(text), filepath.Join("testdata", "good", "curve.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	md, err := Build(s)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Metrics.PullIn.Happened || res.Metrics.EnergyResidualRel() > 1e-4 {
		t.Errorf("steel-curve magnet: %+v", res.Metrics)
	}
}

func TestLoadDriveErrors(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(filepath.Join("scenarios", "peak-hold-valve.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Parse(good, "d.yaml"); err != nil {
		t.Fatal(err)
	}
	cases := []struct{ from, to, want string }{
		{"  mode: peak and hold", "  mode: peak hold", "unknown drive mode"},
		{"  frequency: 20 kHz", "  frequency: 20 kV", "expected a frequency"},
		{"  hold current: 0.4 A", "  hold current: 2 A", "drive.hold current"},
		{"  regulation: fixed frequency", "  regulation: hysteresis", "drive.band: missing"},
		{"  decay: slow", "  decay: medium", "expected \"slow\""},
		{"  recirculation drop: 0.7 V\n", "", "drive.recirculation drop: missing"},
		{"  peak time: 30 ms", "  peak time: 30 ms\n  duty: 0.5", "does not apply to drive mode"},
		{"  bulk capacitance: 470 uF", "  bulk capacitance: 470 uH", "expected a capacitance"},
		{"  source resistance: 0.3 ohm\n", "", "needs a supply.source resistance"},
		{"  rise time: 100 ns", "  rise time: -1 ns", "must not be negative"},
	}
	for _, c := range cases {
		text := strings.Replace(string(good), c.from, c.to, 1)
		if text == string(good) {
			t.Fatalf("edit %q did not apply", c.from)
		}
		_, err := Parse([]byte(text), "d.yaml")
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "d.yaml:") {
			t.Errorf("edit %q → %q: error %v, want one naming d.yaml and containing %q", c.from, c.to, err, c.want)
		}
	}
}

func TestLoadThermalErrors(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(filepath.Join("scenarios", "door-strike-duty.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := LoadModel(filepath.Join("scenarios", "door-strike-duty.yaml")); err != nil {
		t.Fatal(err)
	}
	cases := []struct{ from, to, want string }{
		{"  ambient: 40 degC\n", "", "thermal.ambient: missing"},
		{"  temperature rise: 80 K ", "  temperature rise: 80 degC ", "written in K"},
		{"  time constant: 12 min", "  time constant: 12 min\n  surface area: 40 mm2", "give exactly one of"},
		{"  insulation class: F", "  insulation class: Q", "thermal.insulation class"},
		{"  on time: 1.25 s", "  on time: 6 s", "duty.period"},
		{"  low voltage: 21.6 V ", "  low voltage: 26 V ", "supply.low voltage"},
		{"  at power: 10 W", "  at power: 10 V", "expected a power"},
	}
	for _, c := range cases {
		text := strings.Replace(string(good), c.from, c.to, 1)
		if text == string(good) {
			t.Fatalf("edit %q did not apply", c.from)
		}
		s, err := Parse([]byte(text), "h.yaml")
		if err == nil {
			_, err = Build(s)
		}
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "h.yaml:") {
			t.Errorf("edit %q → %q: error %v, want one naming h.yaml and containing %q", c.from, c.to, err, c.want)
		}
	}
}

// A flux-linkage table saved with a UTF-8 byte-order mark (as spreadsheet
// programs write) loads as the same table without it; so does a B–H curve.
func TestLoadCSVWithByteOrderMark(t *testing.T) {
	t.Parallel()
	plain, err := LoadModel(filepath.Join("testdata", "good", "table.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	bom, err := LoadModel(filepath.Join("testdata", "good", "table_bom.yaml"))
	if err != nil {
		t.Fatalf("table with a byte-order mark: %v", err)
	}
	for _, x := range []float64{0.1e-3, 0.7e-3, 2e-3} {
		for _, i := range []float64{0.1, 0.5, 1.5} {
			if a, b := plain.Magnet.FluxLinkage(i, x), bom.Magnet.FluxLinkage(i, x); a != b {
				t.Errorf("λ(%g A, %g m): %g with the mark, %g without", i, x, b, a)
			}
		}
	}
	// The steel curve: the geometry demo with a curve file that starts with the mark.
	dir := t.TempDir()
	curve, err := os.ReadFile(filepath.Join("testdata", "magnet", "steel_bh.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "steel.csv"), append([]byte("\ufeff"), curve...), 0o644); err != nil {
		t.Fatal(err)
	}
	good, err := os.ReadFile(filepath.Join("scenarios", "dosing-valve-geometry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(good), "    steel saturation: 2.0 T        # typical of low-carbon steel, from memory\n    steel permeability: 1500       # initial relative permeability, from memory\n",
		"    steel curve:\n      file: steel.csv\n      field unit: kA/m\n      flux density unit: T\n", 1)
	s, err := Parse([]byte(text), filepath.Join(dir, "curve.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Build(s); err != nil {
		t.Errorf("B–H curve with a byte-order mark: %v", err)
	}
}

// Input files that are not regular files, or too large, are refused at
// once with the file and the reason: a FIFO must not block, /dev/zero must
// not be read until memory runs out.
func TestLoadRefusesNonRegularAndOversize(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	fifo := filepath.Join(dir, "scenario.fifo")
	if err := mkfifo(fifo); err != nil {
		t.Skipf("no FIFO here: %v", err)
	}
	big := filepath.Join(dir, "big.yaml")
	bigTable := filepath.Join(dir, "big.csv")
	for _, f := range []struct {
		name string
		size int64
	}{{big, MaxScenarioBytes + 1}, {bigTable, MaxTableBytes + 1}} {
		fh, err := os.Create(f.name)
		if err != nil {
			t.Fatal(err)
		}
		if err := fh.Truncate(f.size); err != nil { // sparse: no disk used
			t.Fatal(err)
		}
		fh.Close()
	}
	minimal, err := os.ReadFile(filepath.Join("testdata", "good", "table.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	withTable := func(file string) string {
		p := filepath.Join(dir, filepath.Base(file)+".yaml")
		text := strings.Replace(string(minimal), "file: table_flux.csv", "file: "+file, 1)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		path string
		want []string
	}{
		{fifo, []string{fifo + ": scenario file is not a regular file (a FIFO (named pipe)): refused"}},
		{"/dev/zero", []string{"/dev/zero: scenario file is not a regular file (a device): refused"}},
		{dir, []string{dir + ": scenario file is not a regular file (a directory): refused"}},
		{big, []string{big + ": scenario file of 1048577 bytes is larger than 1048576 bytes: refused"}},
		{withTable(fifo), []string{":8:11: magnet.table.file: ", "is not a regular file (a FIFO (named pipe)): refused; expected a CSV file"}},
		{withTable(bigTable), []string{":8:11: magnet.table.file: ", "has 67108865 bytes, more than the limit of 67108864 bytes (64 MiB): refused"}},
	}
	for _, c := range cases {
		done := make(chan error, 1)
		go func() { _, err := LoadModel(c.path); done <- err }()
		select {
		case err := <-done:
			if err == nil {
				t.Errorf("LoadModel(%s) succeeded", c.path)
				continue
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("LoadModel(%s): error %q lacks %q", c.path, err, w)
				}
			}
			checkMessage(t, strings.ReplaceAll(err.Error(), dir, "DIR")) // the temporary folder is named after the test
		case <-time.After(10 * time.Second):
			t.Fatalf("LoadModel(%s) blocked", c.path)
		}
	}
	// The same checks guard a table that became a FIFO after loading.
	s, err := Load(filepath.Join("testdata", "good", "table.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	s.Magnet.TableFile = fifo
	done := make(chan error, 1)
	go func() { _, err := Build(s); done <- err }()
	select {
	case err := <-done:
		if err == nil || !strings.Contains(err.Error(), "magnet.table.file: "+fifo+": flux-linkage table is not a regular file") {
			t.Errorf("Build with a FIFO table: %v", err)
		}
	case <-time.After(10 * time.Second):
		t.Fatalf("Build with a FIFO table blocked")
	}
}

// Scenario.Errorf points at the field and drops the package prefix of a
// wrapped error ("magnet: ", "coilkick: "), so the CLI's own "coilkick: "
// is never doubled; control characters are escaped.
func TestScenarioErrorfComposition(t *testing.T) {
	t.Parallel()
	s, err := Load(filepath.Join("testdata", "good", "minimal.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	wrapped := fmt.Errorf("coilkick: magnet: gap law: closed inductance must exceed open inductance")
	got := s.Errorf("magnet.gap law", "%v", wrapped).Error()
	want := "testdata/good/minimal.yaml:8:3: magnet.gap law: gap law: closed inductance must exceed open inductance"
	if got != want {
		t.Errorf("Errorf = %q, want %q", got, want)
	}
	got = s.Errorf("name", "bad \x1b[2J here").Error()
	if strings.Contains(got, "\x1b") || !strings.Contains(got, `bad \x1b[2J here`) {
		t.Errorf("Errorf did not escape a control character: %q", got)
	}
}

// The name is printed in every output: control characters and bidirectional
// controls are refused, printable text of any script is kept.
func TestBadName(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name string
		ok   bool
	}{
		{"door latch (demo data)", true},
		{"Magnetventil Größe 2 — 24 V, 電磁弁", true},
		{"tab\there", false},
		{"new\nline", false},
		{"bell\a", false},
		{"csi \u009b31m", false}, // C1 control: some terminals act on it
		{"del \x7f", false},
		{"rtl \u202e", false},
		{"isolate \u2066", false},
		{"bad \xff byte", false},
		{strings.Repeat("x", maxNameRunes), true},
		{strings.Repeat("x", maxNameRunes+1), false},
	} {
		if got := badName(c.name) == ""; got != c.ok {
			t.Errorf("badName(%q) = %q, want ok %v", c.name, badName(c.name), c.ok)
		}
	}
	if got := escapeControl("a\x1bb\u202ec\xffd\u009b"); got != `a\x1bb\u202ec\xffd\x9b` {
		t.Errorf("escapeControl = %q", got)
	}
}
