package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestRunExitCodes: each command's exit status, what it prints, and that
// the files it wrote open (checkWrittenFiles).
func TestRunExitCodes(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	csvPath := filepath.Join(dir, "trace.csv")
	cases := []struct {
		name   string
		args   []string
		code   int
		stdout []string // substrings
		stderr []string
	}{
		{"demo passes", []string{"run", "../../scenarios/irrigation-valve.yaml"}, exitOK,
			[]string{"pull-in time", "release time", "peak switch voltage", "Checks: 4 of 4 pass", "licensed practice"}, nil},
		{"flags after the file", []string{"run", "../../scenarios/irrigation-valve.yaml", "--csv", csvPath}, exitOK,
			[]string{"pull-in time"}, nil},
		{"rating fails", []string{"run", "../../scenarios/door-latch.yaml"}, exitFailing,
			[]string{"FAIL", "avalanche", "CAUTION"}, nil},
		{"check ok", []string{"check", "../../scenarios/process-air-valve.yaml"}, exitOK, []string{": ok"}, nil},
		{"check bad unit", []string{"check", "../../testdata/bad/wrong_unit.yaml"}, exitError, nil,
			[]string{"wrong_unit.yaml:12:9", "plunger.mass", "expected a mass"}},
		{"missing file", []string{"run", "nope.yaml"}, exitError, nil, []string{"nope.yaml"}},
		{"no file", []string{"run"}, exitError, nil, []string{"exactly one scenario file"}},
		{"unknown command", []string{"fly"}, exitError, nil, nil},
		{"magnet from geometry", []string{"magnet", "../../scenarios/dosing-valve-geometry.yaml", "--curves", filepath.Join(dir, "f.csv")}, exitOK,
			[]string{"turns", "copper mass", "saturation onset, seated gap", "steel flux density"}, nil},
		{"heat study", []string{"heat", "../../scenarios/door-strike-duty.yaml", "--csv", filepath.Join(dir, "h.csv")}, exitOK,
			[]string{"periodic steady state", "insulation class F", "largest relative on-time", "pull-in, hot, low supply"}, nil},
		{"heat without duty", []string{"heat", "../../scenarios/irrigation-valve.yaml"}, exitError, nil, []string{"thermal"}},
		{"sweep", []string{"sweep", "../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V:26 V:3", "--csv", filepath.Join(dir, "s.csv")}, exitOK,
			[]string{"supply.voltage", "22 V", "26 V", "pull-in"}, nil},
		{"sweep bad key", []string{"sweep", "../../scenarios/irrigation-valve.yaml", "--vary", "supply.volts=22 V:26 V:3"}, exitError, nil, []string{"supply.volts"}},
		{"clamps", []string{"clamps", "../../scenarios/process-air-valve.yaml"}, exitOK, []string{"recommended", "diode + 33 V Zener", "reverse drive"}, nil},
		{"corners", []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "10"}, exitFailing,
			[]string{"16 corners", "winding 100 degC", "Monte Carlo: 10 samples"}, nil},
		{"corners without tolerances", []string{"corners", "../../scenarios/irrigation-valve.yaml"}, exitError, nil, []string{"tolerances"}},
		{"solve", []string{"solve", "../../scenarios/process-air-valve.yaml"}, exitOK, []string{"lowest supply that pulls in", "lowest holding current"}, nil},
		{"plot window", []string{"run", "../../scenarios/peak-hold-valve.yaml", "--plot", filepath.Join(dir, "w.svg"), "--plot-window", "0:40"}, exitOK, []string{"pull-in time"}, nil},
		{"plot window bad", []string{"run", "../../scenarios/irrigation-valve.yaml", "--plot", filepath.Join(dir, "w2.png"), "--plot-window", "5:1"}, exitError, nil, []string{"--plot-window"}},
		{"fit bad param", []string{"fit", "../../scenarios/irrigation-valve.yaml", "--trace", "../../testdata/fit/irrigation-scope.csv", "--params", "colour"}, exitError, nil, []string{"unknown parameter"}},
		{"sweep plot", []string{"sweep", "../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V:26 V:3", "--vary", "plunger.mass=6 g,8 g", "--plot", filepath.Join(dir, "sw.svg"), "--figure", "release"}, exitOK, []string{"6 g"}, nil},
		{"clamps plot", []string{"clamps", "../../scenarios/irrigation-valve.yaml", "--plot", filepath.Join(dir, "cl.svg")}, exitOK, []string{"recommended"}, nil},
		{"heat plot", []string{"heat", "../../scenarios/door-strike-duty.yaml", "--plot", filepath.Join(dir, "ht.svg")}, exitOK, []string{"peak"}, nil},
		{"magnet plot", []string{"magnet", "../../scenarios/irrigation-valve.yaml", "--plot", filepath.Join(dir, "mg.svg")}, exitOK, []string{"saturation onset"}, nil},
		{"magnet bad currents", []string{"magnet", "../../scenarios/irrigation-valve.yaml", "--currents", "0.1,x"}, exitError, nil, []string{"--currents"}},
	}
	t.Run("cases", func(t *testing.T) {
		for _, c := range cases {
			t.Run(c.name, func(t *testing.T) {
				t.Parallel()
				r := runShared(c.args...) // the demos' plain runs are also the golden files'
				if r.code != c.code {
					t.Fatalf("exit %d, want %d\nstdout:\n%s\nstderr:\n%s", r.code, c.code, r.stdout, r.stderr)
				}
				for _, s := range c.stdout {
					if !strings.Contains(r.stdout, s) {
						t.Errorf("stdout lacks %q:\n%s", s, r.stdout)
					}
				}
				for _, s := range c.stderr {
					if !strings.Contains(r.stderr, s) {
						t.Errorf("stderr lacks %q:\n%s", s, r.stderr)
					}
				}
				if r.code != exitError {
					checkWrittenFiles(t, c.args)
				}
			})
		}
	})
	// The CSV has the promised columns and finite numbers.
	f, err := os.Open(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := "time_s,current_A,coil_voltage_V,switch_voltage_V,gap_m,velocity_m_per_s,magnetic_force_N,passive_force_N,winding_temperature_degC"
	if got := strings.Join(rows[0], ","); got != want || len(rows) < 50 {
		t.Fatalf("CSV header %q (%d rows), want %q", got, len(rows), want)
	}
	for _, r := range rows[1:] {
		for _, cell := range r {
			if _, err := strconv.ParseFloat(cell, 64); err != nil || strings.Contains(cell, "NaN") {
				t.Fatalf("CSV cell %q is not a finite number", cell)
			}
		}
	}
}

// checkWrittenFiles opens the files a command line wrote: each --plot an
// SVG that parses as XML with a title (its first text) or a PNG that
// decodes; each --csv and --curves a CSV with a header and rows.
func checkWrittenFiles(t *testing.T, args []string) {
	t.Helper()
	for k := 0; k+1 < len(args); k++ {
		file := args[k+1]
		switch args[k] {
		case "--plot":
			data, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			if strings.HasSuffix(file, ".png") {
				if _, err := png.DecodeConfig(bytes.NewReader(data)); err != nil {
					t.Errorf("%s does not decode as PNG: %v", file, err)
				}
			} else if f := parseSVG(t, data); len(f.texts) == 0 || f.texts[0] == "" {
				t.Errorf("%s has no title", file)
			}
		case "--csv", "--curves":
			data, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			if rows, err := csv.NewReader(bytes.NewReader(data)).ReadAll(); err != nil || len(rows) < 2 {
				t.Errorf("%s: not a CSV with a header and rows (%d rows, %v)", file, len(rows), err)
			}
		}
	}
}

func TestRunJSON(t *testing.T) {
	t.Parallel()
	var out, errb bytes.Buffer
	code := run(&out, &errb, []string{"coilkick", "run", "--json", "-", "../../scenarios/door-latch.yaml"})
	if code != exitFailing {
		t.Fatalf("exit %d, want %d; stderr %s", code, exitFailing, errb.String())
	}
	var doc map[string]any
	if err := json.Unmarshal(out.Bytes(), &doc); err != nil {
		t.Fatalf("--json - is not JSON: %v\n%s", err, out.String())
	}
	m := doc["metrics"].(map[string]any)
	for _, k := range []string{"pull_in_time_s", "release_time_s", "peak_switch_voltage_V", "avalanche_energy_J", "energy_residual_J"} {
		if _, ok := m[k]; !ok {
			t.Errorf("metrics lack %q", k)
		}
	}
	if doc["failed"] != true {
		t.Errorf("failed = %v, want true", doc["failed"])
	}
}

func TestSI(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		v    float64
		unit string
		want string
	}{
		{0.00763, "s", "7.63 ms"}, {24.8, "V", "24.8 V"}, {0, "J", "0 J"}, {1.5e-6, "J", "1.5 µJ"}, {-0.7, "V", "-700 mV"},
	} {
		if got := si(c.v, c.unit); got != c.want {
			t.Errorf("si(%g, %q) = %q, want %q", c.v, c.unit, got, c.want)
		}
	}
}
