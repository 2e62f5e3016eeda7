package coilkick

import (
	"bytes"
	"fmt"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
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
		{"key_not_for_type.yaml", 23, 18, []string{"suppression.zener voltage", `does not apply to suppression type "freewheel diode"`, "type, forward drop, resistance"}},
		{"unknown_suppression.yaml", 21, 9, []string{"suppression.type", `unknown suppression type "flyback diode"`, "none, freewheel diode, diode zener, tvs, rc snubber, switch clamp"}},
		{"open_not_below_closed.yaml", 10, 22, []string{"magnet.gap law.open inductance", `"300 mH" must be less than magnet.gap law.closed inductance "250 mH" (line 9)`}},
		{"breakdown_below_supply.yaml", 19, 22, []string{"switch.breakdown voltage", `"20 V" must be greater than supply.voltage "24 V" (line 4)`}},
		{"timing_order.yaml", 25, 8, []string{"timing.end", `"50 ms" must be greater than timing.de-energize at "100 ms" (line 24)`}},
		{"pole_area_without_turns.yaml", 11, 16, []string{"magnet.gap law.pole area", "needs coil.turns"}},
		{"missing_table_file.yaml", 9, 11, []string{"magnet.table.file", `"no_such_table.csv" not found`, filepath.Join("testdata", "bad", "no_such_table.csv")}},
		{"table_unit_wrong.yaml", 10, 19, []string{"magnet.table.current unit", `"mm" is a unit of length; expected a unit of current, e.g. "A"`}},
		{"two_documents.yaml", 26, 0, []string{"second YAML document"}},
		{"tab_indent.yaml", 4, 0, []string{"not valid YAML"}},
		{"missing_section.yaml", 2, 1, []string{"timing: missing section (required)", "de-energize at"}},
		{"snubber_without_resistance.yaml", 20, 1, []string{"suppression.resistance", "missing (required)", "expected a resistance"}},
		{"clamp_above_breakdown.yaml", 22, 18, []string{"suppression.clamp voltage", `"70 V" must be less than switch.breakdown voltage "60 V" (line 19)`}},
		{"seal_travel_too_long.yaml", 20, 18, []string{"plunger.load.seal travel", `"2 mm" must not exceed`, "plunger.rest gap"}},
		{"nan_value.yaml", 4, 12, []string{"supply.voltage", "not a finite number", "expected a voltage"}},
		{"scalar_top.yaml", 2, 1, []string{"(top level)", "expected a section of keys"}},
	}
	seen := map[string]bool{}
	for _, c := range cases {
		seen[c.file] = true
		path := filepath.Join("testdata", "bad", c.file)
		t.Run(c.file, func(t *testing.T) {
			s, err := Load(path)
			if err == nil {
				t.Fatalf("Load(%s) succeeded: %+v", path, s)
			}
			msg := err.Error()
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

func FuzzParse(f *testing.F) {
	for _, name := range []string{"minimal.yaml", "full.yaml"} {
		data, err := os.ReadFile(filepath.Join("testdata", "good", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		_, err := Parse(data, "fuzz.yaml")
		if err != nil && (!strings.Contains(err.Error(), "fuzz.yaml") || strings.Contains(err.Error(), "internal error")) {
			t.Errorf("bad error: %v", err)
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
		{"    open inductance: 120 mH\n", "    open inductance: 120 mH\n  table:\n    file: x.csv\n", []string{"e.yaml:11:3: magnet.table", `give only one of "gap law", "table" and "geometry"`}},
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
