package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"coilkick"
)

// Machine-readable output of the study commands sweep, corners, clamps and
// solve (README, "Machine-readable output").

// studyCase is one invocation of a study command; list names the array of
// records whose keys are the CSV's columns; text the CSV columns that hold
// text (names, labels, reasons).
type studyCase struct {
	name    string
	command string
	args    []string
	code    int
	list    string
	text    []string
}

func studyCases() []studyCase {
	sweepText := []string{"invalid", "error"}
	return []studyCase{
		// One invalid point (21 V is below the scenario's low voltage): its
		// figures are null.
		{"sweep invalid point", "sweep", []string{"sweep", sweepLowVoltageDemo, "--vary", "supply.voltage=21 V:25 V:3", "--vary", "plunger.mass=5 g,9 g"},
			exitOK, "points", sweepText},
		// 8 V does not pull in: null times, failed, exit 2.
		{"sweep failing", "sweep", []string{"sweep", "../../scenarios/peak-hold-valve.yaml", "--vary", "supply.voltage=8 V,24 V"},
			exitFailing, "points", sweepText},
		// The hot corner does not pull in: a worst value that is null.
		{"corners", "corners", []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "4"},
			exitFailing, "checks", []string{"name", "unit", "limit_kind", "worst_corner_label"}},
		// Soft landing: a profile found (the nominal point only: cheap); none
		// (a corner of the door strike does not seat even without a brake,
		// exit 2), its after figures null.
		{"land", "land", []string{"land", "../../scenarios/irrigation-valve.yaml", "--evaluations", "30"},
			exitOK, "runs", []string{"label"}},
		{"land none", "land", []string{"land", "../../scenarios/door-strike-duty.yaml", "--evaluations", "3"},
			exitFailing, "runs", []string{"label"}},
		{"clamps", "clamps", []string{"clamps", "../../scenarios/process-air-valve.yaml"},
			exitOK, "options", []string{"name", "kind", "impractical", "drop_out", "no_fit", "error"}},
		{"clamps with a duty pattern", "clamps", []string{"clamps", "../../scenarios/door-strike-duty.yaml"},
			exitOK, "options", []string{"name", "kind", "impractical", "drop_out", "no_fit", "error"}},
		// A hot answer and a clamp question not asked.
		{"solve not asked", "solve", []string{"solve", "../../scenarios/door-strike-duty.yaml"},
			exitOK, "answers", []string{"id", "what", "unit", "already_met", "blocked", "not_asked", "note", "error"}},
		{"solve clamp", "solve", []string{"solve", "../../scenarios/process-air-valve.yaml"},
			exitOK, "answers", []string{"id", "what", "unit", "already_met", "blocked", "not_asked", "note", "error"}},
		// A corner that does not seat; a chopped drive from the flags.
		{"signature", "signature", []string{"signature", "../../scenarios/door-strike-duty.yaml"},
			exitOK, "points", []string{"label"}},
		{"signature chopped", "signature", []string{"signature", "../../scenarios/peak-hold-valve.yaml", "--sample-rate", "10 kHz", "--noise", "3 mA"},
			exitOK, "points", []string{"label"}},
	}
}

// runStudy runs a command line and returns its exit status and outputs.
func runStudy(t *testing.T, args ...string) (int, []byte, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(&out, &errb, append([]string{"coilkick"}, args...))
	return code, out.Bytes(), errb.String()
}

// sharedStudy is runStudy for a command line that writes only to
// standard output, run once per test binary (runShared).
func sharedStudy(args ...string) (int, []byte, string) {
	r := runShared(args...)
	return r.code, []byte(r.stdout), r.stderr
}

// readmeSection returns the backquoted names of the README's section
// "### command" under "## Machine-readable output" and of that part's
// introduction.
func readmeSection(t *testing.T, command string) map[string]bool {
	t.Helper()
	data, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	_, rest, ok := strings.Cut(string(data), "\n## Machine-readable output\n")
	if !ok {
		t.Fatal(`README has no "## Machine-readable output"`)
	}
	rest, _, _ = strings.Cut(rest, "\n## ")
	intro, _, _ := strings.Cut(rest, "\n### ")
	_, sec, ok := strings.Cut(rest, "\n### "+command+"\n")
	if !ok {
		t.Fatalf(`README's "Machine-readable output" has no "### %s"`, command)
	}
	sec, _, _ = strings.Cut(sec, "\n### ")
	names := map[string]bool{}
	// The header's keys are in the section's introduction.
	for _, m := range regexp.MustCompile("`([^`]+)`").FindAllStringSubmatch(intro+sec, -1) {
		names[m[1]] = true
	}
	return names
}

// recordKeys returns the keys, in order, of the first record of the
// document's array list.
func recordKeys(t *testing.T, doc []byte, list string) []string {
	t.Helper()
	var top map[string]json.RawMessage
	if err := json.Unmarshal(doc, &top); err != nil {
		t.Fatal(err)
	}
	var recs []json.RawMessage
	if err := json.Unmarshal(top[list], &recs); err != nil || len(recs) == 0 {
		t.Fatalf("%s: no records (%v)", list, err)
	}
	dec := json.NewDecoder(bytes.NewReader(recs[0]))
	var keys []string
	depth := 0
	for {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		switch v := tok.(type) {
		case json.Delim:
			if v == '{' || v == '[' {
				depth++
			} else {
				depth--
			}
		case string:
			if depth == 1 && dec.More() {
				keys = append(keys, v)
				// skip the value
				var skip json.RawMessage
				if err := dec.Decode(&skip); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
	return keys
}

// TestStudyOutputJSON: --json - of each study command is one JSON document
// on standard output (no table), with the common header, every key of
// keyPattern's form and documented in the README's section of the
// command, and only finite numbers.
func TestStudyOutputJSON(t *testing.T) {
	t.Parallel()
	for _, tc := range studyCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errs := sharedStudy(append(tc.args, "--json", "-")...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d: %s", code, tc.code, errs)
			}
			doc, keys := machineDoc(t, out, tc.command)
			if doc["source"] != tc.args[1] {
				t.Errorf("source %v, want %q", doc["source"], tc.args[1])
			}
			documented := readmeSection(t, tc.command)
			for k := range keys {
				if !documented[k] {
					t.Errorf("key %q is not in the README's section %q", k, tc.command)
				}
			}
			if _, ok := doc[tc.list].([]any); !ok {
				t.Errorf("no array %q", tc.list)
			}
		})
	}
}

// TestStudyOutputCSV: --csv - of each study command is a CSV on standard
// output whose header is the JSON records' keys in the same order, and
// whose cells are numbers, empty, true or false, except in the text
// columns.
func TestStudyOutputCSV(t *testing.T) {
	t.Parallel()
	for _, tc := range studyCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errs := sharedStudy(append(tc.args, "--csv", "-")...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d: %s", code, tc.code, errs)
			}
			rows, err := csv.NewReader(bytes.NewReader(out)).ReadAll()
			if err != nil || len(rows) < 2 {
				t.Fatalf("standard output is not a CSV with rows (%v):\n%.2000s", err, out)
			}
			_, doc, _ := sharedStudy(append(tc.args, "--json", "-")...)
			if want := recordKeys(t, doc, tc.list); !slices.Equal(rows[0], want) {
				t.Errorf("CSV header\n%v\nJSON %s keys\n%v", rows[0], tc.list, want)
			}
			documented := readmeSection(t, tc.command)
			for _, k := range rows[0] {
				if !keyPattern.MatchString(k) {
					t.Errorf("column %q is not of the form %s", k, keyPattern)
				}
				if !documented[k] {
					t.Errorf("column %q is not in the README's section %q", k, tc.command)
				}
			}
			for r, row := range rows[1:] {
				for c, cell := range row {
					if slices.Contains(tc.text, rows[0][c]) || cell == "" || cell == "true" || cell == "false" {
						continue
					}
					if f, err := strconv.ParseFloat(cell, 64); err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
						t.Errorf("row %d, column %s: %q is not a finite number, empty, true or false", r+1, rows[0][c], cell)
					}
				}
			}
		})
	}
}

// TestStudyOutputFiles: --json FILE and --csv FILE write what "-" writes,
// and the table is still printed; both on standard output is refused, as
// is an output onto the scenario.
func TestStudyOutputFiles(t *testing.T) {
	t.Parallel()
	for _, tc := range studyCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			js, cs := filepath.Join(dir, "out.json"), filepath.Join(dir, "out.csv")
			code, out, errs := runStudy(t, append(tc.args, "--json", js, "--csv", cs)...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d: %s", code, tc.code, errs)
			}
			if len(out) == 0 || out[0] == '{' {
				t.Errorf("no table on standard output with outputs to files:\n%.300s", out)
			}
			for _, f := range []struct{ flag, file string }{{"--json", js}, {"--csv", cs}} {
				got, err := os.ReadFile(f.file)
				if err != nil {
					t.Fatal(err)
				}
				_, want, _ := sharedStudy(append(tc.args, f.flag, "-")...)
				if !bytes.Equal(got, want) {
					t.Errorf("%s FILE differs from %s -", f.flag, f.flag)
				}
			}
			code, out, errs = runStudy(t, append(tc.args, "--json", "-", "--csv", "-")...)
			if code != exitError || len(out) != 0 || !strings.Contains(errs, "both write to standard output") {
				t.Errorf("--json - --csv -: exit %d, stdout %d bytes, stderr %q; want 1, nothing, the reason", code, len(out), errs)
			}
			in := filepath.Join(dir, "s.yaml")
			data, err := os.ReadFile(tc.args[1])
			if err != nil {
				t.Fatal(err)
			}
			os.WriteFile(in, data, 0o644)
			for _, flag := range []string{"--json", "--csv"} {
				args := append(append([]string{tc.args[0], in}, tc.args[2:]...), flag, in)
				code, _, errs := runStudy(t, args...)
				if got, _ := os.ReadFile(in); code != exitError || !strings.Contains(errs, "is the scenario file") || !bytes.Equal(got, data) {
					t.Errorf("%s onto the scenario: exit %d, %q", flag, code, errs)
				}
			}
		})
	}
}

// TestStudyOutputValues: the figures in the documents are the study's, in
// SI, null where they did not happen.
func TestStudyOutputValues(t *testing.T) {
	t.Parallel()
	type sweepPoint struct {
		Supply  *float64 `json:"supply_voltage_V"`
		Mass    *float64 `json:"plunger_mass_kg"`
		PullIn  *float64 `json:"pull_in_time_s"`
		Peak    *float64 `json:"peak_current_A"`
		Failed  bool     `json:"failed"`
		Invalid *string  `json:"invalid"`
	}
	_, out, _ := sharedStudy("sweep", sweepLowVoltageDemo, "--vary", "supply.voltage=21 V:25 V:3", "--vary", "plunger.mass=5 g,9 g", "--json", "-")
	var sw struct {
		Keys []struct {
			Key, Column, Unit string
		} `json:"keys"`
		Points  []sweepPoint `json:"points"`
		Invalid int          `json:"points_invalid"`
		Run     int          `json:"points_run"`
	}
	if err := json.Unmarshal(out, &sw); err != nil {
		t.Fatal(err)
	}
	if len(sw.Keys) != 2 || sw.Keys[0].Column != "supply_voltage_V" || sw.Keys[0].Unit != "V" || sw.Keys[1].Column != "plunger_mass_kg" {
		t.Errorf("keys %+v", sw.Keys)
	}
	if len(sw.Points) != 6 || sw.Invalid != 2 || sw.Run != 4 {
		t.Fatalf("%d points, %d invalid, %d run; want 6, 2, 4", len(sw.Points), sw.Invalid, sw.Run)
	}
	for k, p := range sw.Points {
		supply, mass := float64(21+2*(k/2)), []float64{0.005, 0.009}[k%2]
		if p.Supply == nil || *p.Supply != supply || p.Mass == nil || *p.Mass != mass {
			t.Errorf("point %d: supply %v, mass %v; want %g, %g", k, p.Supply, p.Mass, supply, mass)
		}
		if invalid := k < 2; invalid != (p.Invalid != nil) || invalid != (p.PullIn == nil) || invalid != (p.Peak == nil) || invalid != p.Failed {
			t.Errorf("point %d: invalid %v, pull-in %v, peak %v, failed %v", k, p.Invalid, p.PullIn, p.Peak, p.Failed)
		}
	}

	_, out, _ = sharedStudy("corners", "../../scenarios/door-strike-duty.yaml", "--samples", "4", "--json", "-")
	var co struct {
		Checks []struct {
			Name    string   `json:"name"`
			Worst   *float64 `json:"worst"`
			Label   *string  `json:"worst_corner_label"`
			Supply  *float64 `json:"worst_corner_supply_deviation"`
			Winding *float64 `json:"worst_corner_winding_degC"`
			Failing int      `json:"failing_corners"`
			Pass    bool     `json:"pass"`
		} `json:"checks"`
		Corners []json.RawMessage `json:"corners"`
		MC      *struct {
			Samples   int     `json:"samples"`
			Yield     float64 `json:"yield"`
			YieldLow  float64 `json:"yield_low"`
			YieldHigh float64 `json:"yield_high"`
		} `json:"monte_carlo"`
		Failed bool `json:"failed"`
	}
	if err := json.Unmarshal(out, &co); err != nil {
		t.Fatal(err)
	}
	if len(co.Corners) != 16 || len(co.Checks) == 0 || !co.Failed || co.MC == nil || co.MC.Samples != 4 ||
		!(co.MC.YieldLow <= co.MC.Yield && co.MC.Yield <= co.MC.YieldHigh) {
		t.Fatalf("corners document: %s", out)
	}
	// The door strike's hot corner at the low supply does not pull in:
	// pull-in's worst is null (did not happen) at a named corner.
	pi := co.Checks[0]
	if pi.Name != "pull-in time" || pi.Worst != nil || pi.Label == nil || pi.Supply == nil || *pi.Supply != -0.1 ||
		pi.Winding == nil || *pi.Winding != 100 || pi.Pass || pi.Failing != 1 {
		t.Errorf("pull-in check: %+v", pi)
	}

	_, out, _ = sharedStudy("clamps", "../../scenarios/process-air-valve.yaml", "--json", "-")
	var cl struct {
		Options []struct {
			Name        string   `json:"name"`
			Zener       *float64 `json:"zener_voltage_V"`
			Conduction  *float64 `json:"conduction_voltage_V"`
			Release     *float64 `json:"release_time_s"`
			Energy      *float64 `json:"turn_off_energy_J"`
			Recommended bool     `json:"recommended"`
		} `json:"options"`
		Index       *int    `json:"recommended_index"`
		Recommended *string `json:"recommended"`
		Parts       *struct {
			Energy float64 `json:"turn_off_energy_J"`
		} `json:"part_ratings"`
	}
	if err := json.Unmarshal(out, &cl); err != nil {
		t.Fatal(err)
	}
	if cl.Index == nil || cl.Recommended == nil || cl.Parts == nil || *cl.Index >= len(cl.Options) {
		t.Fatalf("clamps document: %s", out)
	}
	r := cl.Options[*cl.Index]
	if r.Name != *cl.Recommended || !r.Recommended || r.Energy == nil || *r.Energy != cl.Parts.Energy {
		t.Errorf("recommended %q: option %+v, part ratings %+v", *cl.Recommended, r, *cl.Parts)
	}
	for _, o := range cl.Options {
		if strings.HasPrefix(o.Name, "diode + ") {
			// The nominal E24 value exactly, not 0.8 V subtracted from the
			// conduction voltage (7.500000000000001); the conduction voltage
			// without binary noise either (0.8 + 5.1 = 5.8999999999999995).
			if o.Zener == nil || o.Name != "diode + "+strconv.FormatFloat(*o.Zener, 'g', -1, 64)+" V Zener" {
				t.Errorf("%s: zener_voltage_V %v", o.Name, o.Zener)
			}
			if c := o.Conduction; c == nil || strconv.FormatFloat(*c, 'g', -1, 64) != strconv.FormatFloat(*c, 'g', 9, 64) ||
				o.Zener != nil && math.Abs(*c-*o.Zener-coilkick.AssumedDiodeDrop) > 1e-12 {
				t.Errorf("%s: conduction_voltage_V %s", o.Name, ptrText(c))
			}
		} else if o.Zener != nil {
			t.Errorf("%s: zener_voltage_V %v, want null", o.Name, *o.Zener)
		}
	}

	_, out, _ = sharedStudy("solve", "../../scenarios/door-strike-duty.yaml", "--json", "-")
	var so struct {
		Answers []struct {
			ID       string   `json:"id"`
			Value    *float64 `json:"value"`
			Unit     string   `json:"unit"`
			Winding  *float64 `json:"winding_degC"`
			NotAsked *string  `json:"not_asked"`
			Met      *bool    `json:"met"`
		} `json:"answers"`
		Source string `json:"hold_force_margin_source"`
	}
	if err := json.Unmarshal(out, &so); err != nil {
		t.Fatal(err)
	}
	ids := []string{}
	for _, a := range so.Answers {
		ids = append(ids, a.ID)
	}
	if !slices.Equal(ids, []string{"lowest_supply", "lowest_supply_hot", "lowest_hold", "lowest_clamp_voltage"}) || so.Source != "default" {
		t.Fatalf("answers %v, margin from %q", ids, so.Source)
	}
	hot := so.Answers[1]
	if hot.Value == nil || !(*hot.Value > 0 && *hot.Value < 24) || hot.Unit != "V" || hot.Winding == nil || *hot.Winding != 100 || hot.Met == nil || !*hot.Met {
		t.Errorf("hot supply answer %+v", hot)
	}
	if c := so.Answers[3]; c.NotAsked == nil || c.Value != nil || c.Met != nil {
		t.Errorf("clamp answer: not asked %v, value %v, met %v; want a reason, null, null", c.NotAsked, c.Value, c.Met)
	}
}

// TestSweepColumnNames: a swept key's column is its words joined by
// underscores with the SI unit of its values, the values in SI (°C when
// written in degC), text when they are not quantities of one kind; every
// name is of keyPattern's form.
func TestSweepColumnNames(t *testing.T) {
	t.Parallel()
	cases := []struct {
		spec, column string
		nums         []float64 // nil: text
	}{
		{"supply.voltage=18 V:30 V:3", "supply_voltage_V", []float64{18, 24, 30}},
		{"plunger.spring preload=2 N,3.5 N", "plunger_spring_preload_N", []float64{2, 3.5}},
		{"plunger.mass=5 g,8 g", "plunger_mass_kg", []float64{0.005, 0.008}},
		{"plunger.spring rate=0.8 N/mm", "plunger_spring_rate_N_per_m", []float64{800}},
		{"plunger.damping=0.5 N*s/m", "plunger_damping_N_s_per_m", []float64{0.5}},
		{"plunger.load.pressure=3 bar", "plunger_load_pressure_Pa", []float64{3e5}},
		{"plunger.load.orifice area=1.5 mm2", "plunger_load_orifice_area_m2", []float64{1.5e-6}},
		{"ratings.pull-in time=20 ms,30 ms", "ratings_pull_in_time_s", []float64{0.02, 0.03}},
		{"timing.de-energize at=100 ms", "timing_de_energize_at_s", []float64{0.1}},
		{"coil.temperature=20 degC,80 °C", "coil_temperature_degC", []float64{20, 80}},
		{"coil.temperature=293.15 K,80 degC", "coil_temperature_K", []float64{293.15, 353.15}},
		{"tolerances.ambient=5 K", "tolerances_ambient_K", []float64{5}},
		{"coil.temperature coefficient=0.00393 /K", "coil_temperature_coefficient_per_K", []float64{0.00393}},
		{"thermal.winding to housing=2 K/W", "thermal_winding_to_housing_K_per_W", []float64{2}},
		{"thermal.heat capacity=150 J/K", "thermal_heat_capacity_J_per_K", []float64{150}},
		{"thermal.convection coefficient=12 W*m^-2*K^-1", "thermal_convection_coefficient_W_per_m2_K", []float64{12}},
		{"tolerances.supply=5 %,10 %", "tolerances_supply", []float64{0.05, 0.1}},
		{"solver.max steps=10,500000", "solver_max_steps", []float64{10, 500000}},
		{"drive.frequency=20 kHz", "drive_frequency_Hz", []float64{20e3}},
		{"magnet.table.file=a.csv,b.csv", "magnet_table_file", nil},
		{"supply.voltage=24 V,30 A", "supply_voltage", nil},
	}
	for _, c := range cases {
		v, err := parseOneVary(c.spec)
		if err != nil {
			t.Fatalf("%s: %v", c.spec, err)
		}
		col := sweepColumns(v)[0]
		if col.Column != c.column || col.Text != (c.nums == nil) || !keyPattern.MatchString(col.Column) {
			t.Errorf("%s: column %q (text %v), want %q (text %v), of the form %s", c.spec, col.Column, col.Text, c.column, c.nums == nil, keyPattern)
			continue
		}
		for k, want := range c.nums {
			got, _ := col.number(v[0].Values[k]).(float64)
			if math.Abs(got-want) > 1e-12*math.Abs(want) {
				t.Errorf("%s: value %d is %v, want %g", c.spec, k, col.number(v[0].Values[k]), want)
			}
		}
	}
	// Two keys that would share a name are told apart.
	v, _ := parseOneVary("supply.voltage=24 V")
	w, _ := parseOneVary("supply voltage=24 V")
	cols := sweepColumns(append(v, w...))
	if cols[0].Column == cols[1].Column || !keyPattern.MatchString(cols[1].Column) {
		t.Errorf("columns %q and %q", cols[0].Column, cols[1].Column)
	}
}

// parseOneVary reads one --vary value.
func parseOneVary(spec string) ([]coilkick.Vary, error) {
	v, err := coilkick.ParseVary(spec)
	return []coilkick.Vary{v}, err
}

// svgTexts returns the texts of an SVG file (parseSVG: well-formed XML),
// one a line.
func svgTexts(t *testing.T, file string) string {
	t.Helper()
	data, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	return strings.Join(parseSVG(t, data).texts, "\n") + "\n"
}

// TestStudyPlotMarks: the sweep plot draws the scenario's limit on the
// figure, marks failed points and points without a value, and names the
// second key; the clamps plot draws the release requirement and the
// derated rating and marks the options that miss them.
func TestStudyPlotMarks(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	sw := filepath.Join(dir, "sweep.svg")
	// The pull-in is the figure: the hold is cut to 100 ms.
	peakHold := variant(t, dir, "peak-hold-valve.yaml", "de-energize at: 1000 ms", "de-energize at: 100 ms", "end: 1050 ms", "end: 150 ms")
	code, _, errs := runStudy(t, "sweep", peakHold, "--vary", "supply.voltage=8 V:24 V:5",
		"--vary", "plunger.mass=6 g,12 g", "--plot", sw)
	if code != exitFailing {
		t.Fatalf("sweep: exit %d: %s", code, errs)
	}
	texts := svgTexts(t, sw)
	for _, want := range []string{"plunger.mass:", "6 g", "12 g", "limit: ratings.pull-in time 20 ms",
		"point fails a rating or requirement", "no value (did not happen, invalid or not simulated)"} {
		if !strings.Contains(texts, want) {
			t.Errorf("sweep plot lacks %q:\n%s", want, texts)
		}
	}
	// The limit is swept: not drawn, and the legend says why.
	code, _, errs = runStudy(t, "sweep", peakHold, "--vary", "ratings.pull-in time=1 ms,10 ms", "--plot", sw)
	if texts = svgTexts(t, sw); code != exitFailing || !strings.Contains(texts, "limit not drawn: ratings.pull-in time is swept") {
		t.Errorf("sweep of the limit: exit %d (%s), plot texts:\n%s", code, errs, texts)
	}

	// A release requirement of 3 ms: the freewheel diode and the low
	// Zeners miss it.
	data, err := os.ReadFile("../../scenarios/process-air-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(data, []byte("release time: 10 ms")) {
		t.Fatal("process-air-valve.yaml has no 'release time: 10 ms'")
	}
	scen := filepath.Join(dir, "valve.yaml")
	os.WriteFile(scen, bytes.Replace(data, []byte("release time: 10 ms"), []byte("release time: 3 ms"), 1), 0o644)
	cl := filepath.Join(dir, "clamps.svg")
	if code, _, errs := runStudy(t, "clamps", scen, "--plot", cl); code != exitOK {
		t.Fatalf("clamps: exit %d: %s", code, errs)
	}
	texts = svgTexts(t, cl)
	for _, want := range []string{"release requirement 3 ms (ratings.release time)", "derated switch rating 80 V (80 % of 100 V)",
		"misses the release requirement or the derated rating", "freewheel diode", "(recommended)"} {
		if !strings.Contains(texts, want) {
			t.Errorf("clamps plot lacks %q:\n%s", want, texts)
		}
	}
}

// ptrText prints a *float64 for messages: its value, or null.
func ptrText(p *float64) string {
	if p == nil {
		return "null"
	}
	return strconv.FormatFloat(*p, 'g', -1, 64)
}
