package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"coilkick"
)

// Machine-readable output of magnet, heat, fit and check (README,
// "Machine-readable output"): the documents' keys and values, the CSVs'
// columns and cells.

const (
	geometryDemo = "../../scenarios/dosing-valve-geometry.yaml"
	gapLawDemo   = "../../scenarios/irrigation-valve.yaml"
	heatDemo     = "../../scenarios/door-strike-duty.yaml"
	scopeTrace   = "../../testdata/fit/irrigation-scope.csv"
)

// lookup follows a dotted path of object keys ("coil.turns").
func lookup(t *testing.T, doc map[string]any, path string) any {
	t.Helper()
	var v any = doc
	for _, k := range strings.Split(path, ".") {
		m, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%s: %q is not inside an object", path, k)
		}
		if v, ok = m[k]; !ok {
			t.Fatalf("the document has no %s", path)
		}
	}
	return v
}

// number reads a JSON number at path; null fails the test.
func number(t *testing.T, doc map[string]any, path string) float64 {
	t.Helper()
	n, ok := lookup(t, doc, path).(json.Number)
	if !ok {
		t.Fatalf("%s = %v, want a number", path, lookup(t, doc, path))
	}
	f, _ := strconv.ParseFloat(string(n), 64)
	return f
}

// TestStudiesJSON: magnet, heat, fit and check × --json -: one JSON
// document on standard output (the text not printed), the common header,
// every key of the key pattern at every depth, finite numbers, null where
// a figure does not apply, and the figures the text prints.
func TestStudiesJSON(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		args  []string
		code  int
		check func(t *testing.T, doc map[string]any)
	}{
		{"magnet geometry", []string{"magnet", geometryDemo}, exitOK, func(t *testing.T, d map[string]any) {
			if got := number(t, d, "coil.turns"); got != 2857 {
				t.Errorf("coil.turns = %g, want 2857", got)
			}
			if got := number(t, d, "coil.copper_mass_kg"); !(got > 0.01 && got < 0.1) {
				t.Errorf("copper mass %g kg, want the build's 46 g in kg", got)
			}
			if r, i := number(t, d, "coil.resistance_ohm"), number(t, d, "coil.rated_current_A"); math.Abs(r*i-24) > 1e-9 {
				t.Errorf("resistance %g ohm × rated current %g A = %g, want the 24 V supply", r, i, r*i)
			}
			number(t, d, "magnet.saturation_onset_seated_A")
			if got := number(t, d, "magnet.steel_flux_density_seated_T"); !(got > 1 && got < 3) {
				t.Errorf("steel flux density %g T", got)
			}
			if lookup(t, d, "magnet.steel_flux_density_seated_part") != "plunger" {
				t.Errorf("steel part %v, want plunger", lookup(t, d, "magnet.steel_flux_density_seated_part"))
			}
			if lookup(t, d, "magnet.pulls_in_at_rated_current") != true {
				t.Errorf("pulls_in_at_rated_current is not true")
			}
			checkCoilFieldJSON(t, d)
			gaps := lookup(t, d, "force_curves.gap_m").([]any)
			passive := lookup(t, d, "force_curves.spring_and_load_N").([]any)
			curves := lookup(t, d, "force_curves.curves").([]any)
			if len(gaps) != curveGaps || len(passive) != curveGaps || len(curves) != 6 {
				t.Fatalf("force curves: %d gaps, %d passive forces, %d curves; want %d, %d, 6 (0.25 to 1.5 × rated)", len(gaps), len(passive), len(curves), curveGaps, curveGaps)
			}
			for k, c := range curves {
				if f := c.(map[string]any)["force_N"].([]any); len(f) != curveGaps {
					t.Errorf("curve %d: %d forces, want %d", k, len(f), curveGaps)
				}
			}
		}},
		{"magnet gap law", []string{"magnet", gapLawDemo, "--currents", "0.1, 200 mA"}, exitOK, func(t *testing.T, d map[string]any) {
			// No winding build, no geometry: null, not 0 and not absent.
			for _, k := range []string{"coil.mean_turn_length_m", "coil.copper_mass_kg", "coil.layers",
				"magnet.steel_flux_density_seated_T", "magnet.steel_flux_density_rest_part",
				"coil_field.air_core_centre_flux_density_T", "coil_field.air_core_inductance_wheeler_H",
				"coil_field.gap_flux_density_source", "coil_field.gap_flux_density_seated_T",
				"coil_field.pole_area_m2", "coil_field.gap_to_air_core_field_rest"} {
				if v := lookup(t, d, k); v != nil {
					t.Errorf("%s = %v, want null (does not apply to a gap-law magnet)", k, v)
				}
			}
			curves := lookup(t, d, "force_curves.curves").([]any)
			if len(curves) != 2 || curves[1].(map[string]any)["current_A"] != json.Number("0.2") {
				t.Errorf("curves %v, want the two --currents 0.1 and 0.2 A", curves)
			}
		}},
		{"heat", []string{"heat", heatDemo}, exitOK, func(t *testing.T, d map[string]any) {
			// The README's demo: 78.8 °C in the periodic steady state,
			// class F (155 °C) reached after 25 min held on, 92 %.
			if got := number(t, d, "winding_peak_degC"); math.Abs(got-78.8) > 0.05 {
				t.Errorf("winding_peak_degC = %g, want 78.8 (°C, not K)", got)
			}
			if got := number(t, d, "ambient_degC"); got != 40 {
				t.Errorf("ambient_degC = %g, want 40", got)
			}
			if got := number(t, d, "insulation.limit_degC"); math.Abs(got-155) > 1e-9 {
				t.Errorf("insulation.limit_degC = %g, want 155", got)
			}
			if m, p := number(t, d, "insulation.margin_K"), number(t, d, "winding_peak_degC"); math.Abs(m-(155-p)) > 1e-9 {
				t.Errorf("margin %g K, want 155 − %g", m, p)
			}
			if got := number(t, d, "insulation.held_on_time_to_limit_s"); math.Abs(got/60-25) > 0.5 {
				t.Errorf("held on to the limit after %g s, want 25 min", got)
			}
			if got := number(t, d, "insulation.largest_relative_on_time"); math.Abs(got-0.92) > 0.005 {
				t.Errorf("largest relative on-time %g, want 0.92", got)
			}
			number(t, d, "hot_coil.pull_in_time_low_supply_s")
			number(t, d, "steady_after_s")
			if lookup(t, d, "failed") != false {
				t.Errorf("failed = %v, want false", lookup(t, d, "failed"))
			}
			cycles := lookup(t, d, "history.cycle").([]any)
			peaks := lookup(t, d, "history.peak_winding_degC").([]any)
			if len(cycles) != 5760 || len(peaks) != 5760 {
				t.Fatalf("history: %d cycles, %d peaks; want 5760 (8 h of 5 s cycles)", len(cycles), len(peaks))
			}
			if last, _ := strconv.ParseFloat(string(peaks[5759].(json.Number)), 64); math.Abs(last-number(t, d, "winding_peak_degC")) > 1e-9 {
				t.Errorf("last history peak %g, want the study's peak %g", last, number(t, d, "winding_peak_degC"))
			}
		}},
		{"fit", []string{"fit", gapLawDemo, "--trace", scopeTrace}, exitOK, func(t *testing.T, d map[string]any) {
			ps := lookup(t, d, "parameters").([]any)
			if len(ps) != 3 {
				t.Fatalf("%d parameters, want 3", len(ps))
			}
			// README demo: 75.035 ± 0.039 Ω, 279.93 ± 0.51 mH (values in SI: H).
			r, l := ps[0].(map[string]any), ps[1].(map[string]any)
			if r["name"] != "resistance" || r["unit"] != "ohm" || l["name"] != "closed inductance" || l["unit"] != "H" {
				t.Errorf("parameters %v", ps)
			}
			rv, _ := strconv.ParseFloat(string(r["value"].(json.Number)), 64)
			lv, _ := strconv.ParseFloat(string(l["value"].(json.Number)), 64)
			le, _ := strconv.ParseFloat(string(l["std_error"].(json.Number)), 64)
			if math.Abs(rv-75.035) > 0.01 || math.Abs(lv-0.27993) > 1e-4 || math.Abs(le-0.00051) > 1e-5 {
				t.Errorf("fitted R %g ohm, L %g ± %g H; want 75.035, 0.27993 ± 0.00051", rv, lv, le)
			}
			if got := number(t, d, "residual.rms_to_noise_limit"); got != 5 {
				t.Errorf("rms_to_noise_limit %g, want 5", got)
			}
			if got := number(t, d, "events.pull_in_time_s"); !(got > 0.005 && got < 0.012) {
				t.Errorf("events.pull_in_time_s = %g", got)
			}
			number(t, d, "baseline_offset_std_error_A")
			if lookup(t, d, "failed") != false || len(lookup(t, d, "failure").([]any)) != 0 {
				t.Errorf("failed %v, failure %v; want false and []", lookup(t, d, "failed"), lookup(t, d, "failure"))
			}
			if got := number(t, d, "trace.samples"); got != 6001 {
				t.Errorf("trace.samples = %g, want 6001", got)
			}
		}},
		{"check", []string{"check", "../../scenarios/process-air-valve.yaml"}, exitOK, func(t *testing.T, d map[string]any) {
			if d["ok"] != true {
				t.Errorf("ok = %v, want true", d["ok"])
			}
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			r := runShared(append(c.args, "--json", "-")...)
			if r.code != c.code {
				t.Fatalf("exit %d, want %d\n%s", r.code, c.code, r.stderr)
			}
			doc, keys := machineDoc(t, []byte(r.stdout), strings.Fields(c.name)[0])
			if len(keys) < 5 {
				t.Errorf("%d keys", len(keys))
			}
			c.check(t, doc)
		})
	}
}

// readCSV runs a command with --csv - (or another flag to -), once per
// test binary (runShared), and parses
// standard output: a header of keys matching keyPattern, then rows whose
// cells are numbers, empty, or true/false.
func readCSV(t *testing.T, code int, args ...string) (header []string, rows [][]string) {
	t.Helper()
	r := runShared(args...)
	if r.code != code {
		t.Fatalf("%s: exit %d, want %d\n%s", strings.Join(args, " "), r.code, code, r.stderr)
	}
	all, err := csv.NewReader(strings.NewReader(r.stdout)).ReadAll()
	if err != nil || len(all) < 2 {
		t.Fatalf("%s: standard output is not a CSV with a header and rows (%v):\n%.2000s", strings.Join(args, " "), err, r.stdout)
	}
	for _, k := range all[0] {
		if !keyPattern.MatchString(k) {
			t.Errorf("column %q does not match the key pattern", k)
		}
	}
	for r, row := range all[1:] {
		for k, cell := range row {
			if cell == "" || cell == "true" || cell == "false" {
				continue
			}
			if f, err := strconv.ParseFloat(cell, 64); err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
				t.Errorf("row %d column %s: %q is not a finite number", r+1, all[0][k], cell)
			}
		}
	}
	return all[0], all[1:]
}

// checkCoilFieldJSON checks magnet --json's coil_field of the dosing demo
// (2857 turns, 10/26 × 22 mm window, 8 mm plunger) at full precision.
func checkCoilFieldJSON(t *testing.T, d map[string]any) {
	t.Helper()
	const mu0 = 4 * math.Pi * 1e-7 // H/m, the SI value before 2019
	n, i := number(t, d, "coil.turns"), number(t, d, "coil.rated_current_A")
	r1, r2, l := 5e-3, 13e-3, 22e-3
	// source: thick winding of uniform current density (Montgomery,
	// Solenoid Magnet Design, 1969, µ0·J·r1·F(α, β)); the finite thin
	// solenoid µ0·N·I/√(l² + d²) at the mean diameter (Griffiths ch. 5).
	thick := mu0 * n * i / (2 * (r2 - r1)) * math.Log((r2+math.Hypot(r2, l/2))/(r1+math.Hypot(r1, l/2)))
	thin := mu0 * n * i / math.Hypot(l, r1+r2)
	for _, c := range []struct {
		key  string
		want float64
	}{
		{"coil_field.air_core_centre_flux_density_T", thick},
		{"coil_field.air_core_centre_flux_density_thin_T", thin},
		{"coil_field.pole_area_m2", math.Pi * 4e-3 * 4e-3}, // π·(d/2)², the 8 mm plunger's face
		{"coil_field.gap_to_air_core_field_seated", number(t, d, "coil_field.gap_flux_density_seated_T") / thick},
		{"coil_field.gap_to_air_core_field_rest", number(t, d, "coil_field.gap_flux_density_rest_T") / thick},
	} {
		if got := number(t, d, c.key); math.Abs(got-c.want) > 1e-9*c.want {
			t.Errorf("%s = %g, want %g", c.key, got, c.want)
		}
	}
	if got := lookup(t, d, "coil_field.gap_flux_density_source"); got != coilkick.GapFromNetwork {
		t.Errorf("gap_flux_density_source %v, want %q", got, coilkick.GapFromNetwork)
	}
	number(t, d, "coil_field.air_core_inductance_wheeler_H")
	number(t, d, "coil_field.air_core_inductance_numerical_H")
}

// TestMagnetKeysInReadme: every key of magnet --json (the geometry demo,
// where every figure is given) is named in the README's section "magnet"
// of "Machine-readable output".
func TestMagnetKeysInReadme(t *testing.T) {
	t.Parallel()
	code, out, errs := sharedStudy("magnet", geometryDemo, "--json", "-")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc map[string]any
	if err := json.Unmarshal(out, &doc); err != nil {
		t.Fatal(err)
	}
	documented := readmeSection(t, "magnet")
	var walk func(prefix string, v any)
	walk = func(prefix string, v any) {
		m, ok := v.(map[string]any)
		if !ok {
			return
		}
		for k, sub := range m {
			if !documented[k] {
				t.Errorf("key %s%s is not in the README's section \"magnet\"", prefix, k)
			}
			if k != "curves" {
				walk(prefix+k+".", sub)
			}
		}
	}
	walk("", doc)
}

// TestStudiesCSV: magnet --csv (the figures, one row) and --curves (long
// form), heat --csv (one row per cycle, °C), fit --csv (the overlay),
// check --csv; numbers only in the cells.
func TestStudiesCSV(t *testing.T) {
	t.Parallel()
	t.Run("magnet", func(t *testing.T) {
		t.Parallel()
		h, rows := readCSV(t, exitOK, "magnet", gapLawDemo, "--csv", "-")
		if len(rows) != 1 {
			t.Fatalf("%d rows, want one", len(rows))
		}
		col := map[string]string{}
		for k, key := range h {
			col[key] = rows[0][k]
		}
		for _, k := range []string{"rated_current_A", "inductance_seated_H", "pull_at_rest_gap_N", "spring_and_load_at_rest_gap_N", "time_constant_rest_s"} {
			if v, err := strconv.ParseFloat(col[k], 64); err != nil || !(v > 0) {
				t.Errorf("%s = %q, want a figure above 0", k, col[k])
			}
		}
		if c, ok := col["mean_turn_length_m"]; !ok || c != "" {
			t.Errorf("mean_turn_length_m = %q (present %v), want an empty cell: no winding build", c, ok)
		}
		if col["pulls_in_at_rated_current"] != "true" {
			t.Errorf("pulls_in_at_rated_current = %q", col["pulls_in_at_rated_current"])
		}
	})
	t.Run("magnet curves", func(t *testing.T) {
		t.Parallel()
		h, rows := readCSV(t, exitOK, "magnet", geometryDemo, "--currents", "0.1,0.3", "--curves", "-")
		if strings.Join(h, ",") != "current_A,gap_m,force_N,spring_and_load_N" || len(rows) != 2*curveGaps {
			t.Fatalf("header %q, %d rows; want current_A,gap_m,force_N,spring_and_load_N and %d rows", h, len(rows), 2*curveGaps)
		}
		if rows[0][0] != "0.1" || rows[curveGaps][0] != "0.3" || rows[0][1] != rows[curveGaps][1] {
			t.Errorf("rows %q and %q: want each current's curve over the same gaps", rows[0], rows[curveGaps])
		}
	})
	t.Run("heat", func(t *testing.T) {
		t.Parallel()
		h, rows := readCSV(t, exitOK, "heat", heatDemo, "--csv", "-")
		if strings.Join(h, ",") != "cycle,time_s,peak_winding_degC,valley_winding_degC" {
			t.Fatalf("header %q", h)
		}
		if len(rows) != 5760 {
			t.Fatalf("%d rows, want one per cycle: 5760 (8 h of 5 s cycles)", len(rows))
		}
		for k, r := range rows {
			c, _ := strconv.Atoi(r[0])
			ts, _ := strconv.ParseFloat(r[1], 64)
			peak, _ := strconv.ParseFloat(r[2], 64)
			valley, _ := strconv.ParseFloat(r[3], 64)
			// °C: between the 40 °C ambient and the 78.8 °C steady peak.
			if c != k+1 || ts != 5*float64(k+1) || !(peak > 40 && peak < 78.9) || !(valley > 40 && valley <= peak) {
				t.Fatalf("row %d: %q; want cycle %d at %d s, peak and valley in °C between 40 and 78.9", k+1, r, k+1, 5*(k+1))
			}
		}
	})
	t.Run("fit", func(t *testing.T) {
		t.Parallel()
		h, rows := readCSV(t, exitOK, "fit", gapLawDemo, "--trace", scopeTrace, "--csv", "-")
		if strings.Join(h, ",") != "time_s,measured_current_A,model_current_A,residual_A" || len(rows) < 1000 {
			t.Fatalf("header %q, %d rows", h, len(rows))
		}
		var ss float64
		for _, r := range rows {
			m, _ := strconv.ParseFloat(r[1], 64)
			s, _ := strconv.ParseFloat(r[2], 64)
			res, _ := strconv.ParseFloat(r[3], 64)
			if math.Abs(res-(m-s)) > 1e-9 {
				t.Fatalf("row %q: residual is not measured − model", r)
			}
			ss += res * res
		}
		// README demo: RMS error 3.2 mA.
		if rms := math.Sqrt(ss / float64(len(rows))); math.Abs(rms-0.0032) > 0.0002 {
			t.Errorf("RMS of the residual column %g A, want 3.2 mA", rms)
		}
	})
	t.Run("check", func(t *testing.T) {
		t.Parallel()
		h, rows := readCSV(t, exitOK, "check", "../../scenarios/process-air-valve.yaml", "--csv", "-")
		if strings.Join(h, ",") != "ok" || len(rows) != 1 || rows[0][0] != "true" {
			t.Errorf("check CSV %q %q, want ok / true", h, rows)
		}
	})
}

// TestStudiesMachineFailures: a scenario that does not check writes
// nothing; a failing heat study still writes its JSON and exits 2. (A
// failed fit's --json: TestFitHostileTraces, none; TestFitKeepFailed,
// with --keep-failed.)
func TestStudiesMachineFailures(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	badJSON, badCSV := filepath.Join(dir, "check.json"), filepath.Join(dir, "check.csv")
	code, outText, errText := runCLI("check", "../../testdata/bad/wrong_unit.yaml", "--json", badJSON, "--csv", badCSV)
	if code != exitError || outText != "" || !strings.Contains(errText, "plunger.mass") {
		t.Errorf("check of a bad scenario: exit %d, stdout %q, stderr %q; want 1, nothing, the error", code, outText, errText)
	}
	for _, f := range []string{badJSON, badCSV} {
		if _, err := os.Stat(f); !os.IsNotExist(err) {
			t.Errorf("check of a bad scenario wrote %s", f)
		}
	}

	// Class A (105 °C) at 50 % relative on-time: the peak exceeds it.
	hot := heatVariant(t, "insulation class: F", "insulation class: A", "on time: 1.25 s", "on time: 2.5 s")
	var stdout, stderr bytes.Buffer
	if code := run(&stdout, &stderr, []string{"coilkick", "heat", hot, "--json", "-"}); code != exitFailing {
		t.Fatalf("hot heat study: exit %d, want 2\n%s", code, stderr.String())
	}
	doc, _ := machineDoc(t, stdout.Bytes(), "heat")
	if doc["failed"] != true || lookup(t, doc, "insulation.pass") != false {
		t.Errorf("failed %v, insulation.pass %v; want true, false", doc["failed"], lookup(t, doc, "insulation.pass"))
	}
}

// TestFitSIUnits: every fit parameter has the SI unit its --json values
// are given in (a new parameter without one would print "unit": "").
func TestFitSIUnits(t *testing.T) {
	t.Parallel()
	for _, p := range coilkick.FitParams() {
		if fitSIUnits[p] == "" {
			t.Errorf("fit parameter %q has no SI unit in fitSIUnits", p)
		}
	}
}
