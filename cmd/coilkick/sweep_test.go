package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"coilkick"
)

// The door-strike demo states supply.low voltage: 21.6 V, so a supply below
// it breaks a rule of the scenario.
const sweepLowVoltageDemo = "../../scenarios/door-strike-duty.yaml"

func runSweep(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(&out, &errb, append([]string{"coilkick", "sweep"}, args...))
	return code, out.String(), errb.String()
}

// Exit status of sweep (README): 1 for a bad flag, when no point ran, or
// when a valid point could not be simulated; else 2 when a rating fails at
// a point that ran; else 0, invalid points alone included.
func TestSweepExitStatus(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		args   []string
		code   int
		stdout []string
		stderr []string
	}{
		{"all pass", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V,26 V"}, exitOK, []string{"pass"}, nil},
		{"one invalid, rest pass", []string{sweepLowVoltageDemo, "--vary", "supply.voltage=21 V:25 V:5"}, exitOK,
			[]string{"invalid: line 10: supply.low voltage", "1 of 5 points invalid"}, nil},
		{"rating fails", []string{"../../scenarios/peak-hold-valve.yaml", "--vary", "supply.voltage=10 V,12 V"}, exitFailing, []string{"FAIL", "pass"}, nil},
		{"invalid and a rating fails", []string{sweepLowVoltageDemo, "--vary", "supply.voltage=21 V,24 V", "--vary", "ratings.pull-in time=1 ms"}, exitFailing,
			[]string{"invalid:", "FAIL"}, nil},
		{"every point invalid", []string{sweepLowVoltageDemo, "--vary", "supply.voltage=20 V,21 V"}, exitError,
			[]string{"invalid:"}, []string{"no point of the sweep ran: 2 invalid"}},
		{"a point cannot be simulated", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "solver.max steps=10,500000"}, exitError,
			[]string{"error: ", "step budget", "pass"}, []string{"1 of 2 points could not be simulated"}},
		{"simulation error outranks a failing rating", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "solver.max steps=10,500000", "--vary", "ratings.pull-in time=1 ms"}, exitError,
			[]string{"FAIL"}, []string{"could not be simulated"}},
		{"unknown key", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "supply.volts=18 V:30 V:3"}, exitError, nil,
			[]string{`--vary "supply.volts=18 V:30 V:3": unknown key "supply.volts"`, "keys in section supply: voltage, source resistance, bulk capacitance, low voltage"}},
		{"missing STEPS", []string{"../../scenarios/peak-hold-valve.yaml", "--vary", "supply.voltage=10 V:14 V"}, exitError, nil,
			[]string{`--vary "supply.voltage=10 V:14 V"`, "no STEPS", "KEY=FROM:TO:STEPS", `"supply.voltage=18 V:30 V:13"`, "KEY=V1,V2,..."}},
		{"no --vary", []string{"../../scenarios/irrigation-valve.yaml"}, exitError, nil, []string{"--vary KEY=FROM:TO:STEPS"}},
		// A wrong unit inside the values is the flag's error, not a row.
		{"wrong unit in a list", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=10 V,12 Ohm"}, exitError, nil,
			[]string{`--vary "supply.voltage=10 V,12 Ohm": supply.voltage: "12 Ohm": unknown unit "Ohm"`, `expected a voltage, e.g. "24 V"`}},
		{"unit of another kind in a range", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=10 V:14 m:5"}, exitError, nil,
			[]string{`--vary "supply.voltage=10 V:14 m:5"`, `supply.voltage takes a voltage, e.g. "24 V"`, "KEY=FROM:TO:STEPS"}},
		{"unknown figure", []string{"../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V,26 V", "--plot", filepath.Join(t.TempDir(), "p.svg"), "--figure", "colour"}, exitError, nil,
			[]string{`--figure "colour"`, "pull-in, release"}},
	}
	for _, c := range cases {
		code, out, errs := runSweep(t, c.args...)
		if code != c.code {
			t.Errorf("%s: exit %d, want %d\nstdout:\n%s\nstderr:\n%s", c.name, code, c.code, out, errs)
			continue
		}
		for _, s := range c.stdout {
			if !strings.Contains(out, s) {
				t.Errorf("%s: stdout lacks %q:\n%s", c.name, s, out)
			}
		}
		for _, s := range c.stderr {
			if !strings.Contains(errs, s) {
				t.Errorf("%s: stderr lacks %q:\n%s", c.name, s, errs)
			}
		}
		// A flag error is the flag's, not a position in the scenario file,
		// and comes before any point runs: no table.
		if code == exitError && strings.Contains(errs, ".yaml:") {
			t.Errorf("%s: error points into the file:\n%s", c.name, errs)
		}
		if c.stdout == nil && out != "" {
			t.Errorf("%s: a flag error printed a table:\n%s", c.name, out)
		}
	}
}

// A 5-point sweep with one invalid point: 4 rows with figures, 1 invalid row
// with the reason, in the table (aligned), the CSV and the JSON.
func TestSweepInvalidRow(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	csvPath, jsonPath, plotPath := filepath.Join(dir, "s.csv"), filepath.Join(dir, "s.json"), filepath.Join(dir, "s.svg")
	code, out, errs := runSweep(t, sweepLowVoltageDemo, "--vary", "supply.voltage=21 V:25 V:5",
		"--csv", csvPath, "--json", jsonPath, "--plot", plotPath)
	if code != exitOK {
		t.Fatalf("exit %d\n%s\n%s", code, out, errs)
	}
	lines := strings.Split(out, "\n")
	header := lines[0]
	rows := lines[1:6]
	checks := strings.Index(header, "checks")
	pullIn := strings.Index(header, "pull-in")
	if checks < 0 || pullIn < 0 {
		t.Fatalf("header %q", header)
	}
	invalid := 0
	for _, r := range rows {
		// Alignment: every row's pull-in cell and last cell start under their
		// headings.
		if len(r) < checks || r[pullIn-1] != ' ' || r[pullIn] == ' ' || r[checks-1] != ' ' || r[checks] == ' ' {
			t.Errorf("row not aligned with the header:\n%s\n%s", header, r)
			continue
		}
		last := r[checks:]
		switch {
		case strings.HasPrefix(last, "invalid: "):
			invalid++
			if !strings.HasPrefix(r, "21 V") || !strings.Contains(last, `supply.low voltage: "21.6 V" must be at most supply.voltage "21 V"`) {
				t.Errorf("invalid row: %q", r)
			}
		case last != "pass":
			t.Errorf("row %q: last cell %q, want pass", r, last)
		}
	}
	if invalid != 1 {
		t.Errorf("%d invalid rows, want 1:\n%s", invalid, out)
	}

	f, err := os.Open(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 6 {
		t.Fatalf("CSV has %d records, want header + 5", len(recs))
	}
	col := map[string]int{}
	for k, h := range recs[0] {
		col[h] = k
	}
	for _, h := range []string{"pull_in_time_s", "peak_current_A", "failed", "invalid", "error"} {
		if _, ok := col[h]; !ok {
			t.Fatalf("CSV lacks column %q: %v", h, recs[0])
		}
	}
	if r := recs[1]; r[col["invalid"]] == "" || r[col["peak_current_A"]] != "" || r[col["failed"]] != "true" {
		t.Errorf("invalid CSV row: reason %q, peak current %q (want empty), failed %q (want true)", r[col["invalid"]], r[col["peak_current_A"]], r[col["failed"]])
	}
	for _, r := range recs[2:] {
		if r[col["invalid"]] != "" || r[col["pull_in_time_s"]] == "" || r[col["failed"]] != "false" {
			t.Errorf("valid CSV row %v", r)
		}
	}

	data, err := os.ReadFile(jsonPath)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Points []struct {
			Supply      *float64 `json:"supply_voltage_V"`
			PeakCurrent *float64 `json:"peak_current_A"`
			Failed      bool     `json:"failed"`
			Invalid     *string  `json:"invalid"`
			Error       *string  `json:"error"`
		} `json:"points"`
		Invalid int `json:"points_invalid"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	pts := doc.Points
	if len(pts) != 5 || pts[0].PeakCurrent != nil || pts[0].Invalid == nil || !pts[0].Failed || doc.Invalid != 1 {
		t.Fatalf("JSON: %s", data)
	}
	for k, p := range pts {
		if p.Supply == nil || *p.Supply != float64(21+k) {
			t.Errorf("JSON point %d: supply_voltage_V %v, want %d", k, p.Supply, 21+k)
		}
		if k > 0 && (p.PeakCurrent == nil || !(*p.PeakCurrent > 0) || p.Invalid != nil || p.Error != nil || p.Failed) {
			t.Errorf("JSON valid point %d: %+v", k, p)
		}
	}
	if st, err := os.Stat(plotPath); err != nil || st.Size() == 0 {
		t.Errorf("plot not written: %v", err)
	}
}

// An output named like the scenario file is refused before anything runs.
func TestSweepOutputNotInput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	in := filepath.Join(dir, "s.yaml")
	data, err := os.ReadFile("../../scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(in, data, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, flag := range []string{"--csv", "--json", "--plot"} {
		code, _, errs := runSweep(t, in, "--vary", "supply.voltage=22 V", flag, in)
		if code != exitError || !strings.Contains(errs, "is the scenario file") {
			t.Errorf("%s onto the input: exit %d, %s", flag, code, errs)
		}
		if got, _ := os.ReadFile(in); !bytes.Equal(got, data) {
			t.Fatalf("%s overwrote the scenario", flag)
		}
	}
}

// Every figure the help lists can be plotted, and an unknown one cannot.
func TestSweepFigureNames(t *testing.T) {
	t.Parallel()
	for _, name := range sweepFigureNames {
		if _, label, ok := sweepFigure(name, coilkick.SweepFigures{}); !ok || label == "" {
			t.Errorf("--figure %q listed but not plotted", name)
		}
	}
	if _, _, ok := sweepFigure("colour", coilkick.SweepFigures{}); ok {
		t.Error("unknown figure accepted")
	}
}

// A point without a hold window (the peak phase outlasts the energized
// time) has no hold current: null in the JSON, an empty CSV cell, "n/a" in
// the table; it used to be 0 A, a number that was never measured.
func TestSweepHoldNotMeasured(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "peak-hold-valve.yaml", "de-energize at: 1000 ms", "de-energize at: 60 ms", "end: 1050 ms", "end: 100 ms")
	args := []string{path, "--vary", "drive.peak time=30 ms,80 ms"}
	code, out, errs := runSweep(t, append(args, "--json", "-")...)
	if code == exitError {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Points []struct {
			Hold *float64 `json:"hold_current_A"`
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Points) != 2 {
		t.Fatalf("JSON (%v): %s", err, out)
	}
	if h := doc.Points[0].Hold; h == nil || !(*h > 0.3 && *h < 0.5) {
		t.Errorf("30 ms peak: hold_current_A %v, want about 0.4 A", h)
	}
	if h := doc.Points[1].Hold; h != nil {
		t.Errorf("80 ms peak (energized 59 ms): hold_current_A %v, want null", *h)
	}
	_, out, _ = runSweep(t, append(args, "--csv", "-")...)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(recs) != 3 {
		t.Fatalf("CSV (%v): %s", err, out)
	}
	col := slices.Index(recs[0], "hold_current_A")
	if col < 0 || recs[1][col] == "" || recs[2][col] != "" {
		t.Errorf("CSV hold_current_A cells %q, %q; want a number, empty", recs[1][col], recs[2][col])
	}
	_, out, _ = runSweep(t, args...)
	lines := strings.Split(out, "\n")
	at := strings.Index(lines[0], "hold current")
	if at < 0 || len(lines) < 3 || !strings.HasPrefix(lines[2][at:], "n/a ") || strings.HasPrefix(lines[1][at:], "n/a") {
		t.Errorf("table:\n%s", out)
	}
}
