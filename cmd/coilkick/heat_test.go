package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestDurationText: the rule of durationText (engineers read long
// durations in minutes and hours, not kiloseconds; common practice, no
// source): seconds below 100 s, minutes below 3 h, hours from there.
func TestDurationText(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		s    float64
		want string
	}{
		{0.0122, "12.2 ms"}, {1.25, "1.25 s"}, {5, "5 s"}, {99, "99 s"},
		{100, "1.7 min"}, {318, "5.3 min"}, {1480, "25 min"}, {5290, "88 min"}, {7800, "130 min"},
		{179 * 60, "179 min"}, {3 * 3600, "3 h"}, {3.5 * 3600, "3.5 h"}, {8 * 3600, "8 h"}, {72 * 3600, "72 h"},
	} {
		if got := durationText(c.s); got != c.want {
			t.Errorf("durationText(%g s) = %q, want %q", c.s, got, c.want)
		}
	}
}

// heatVariant writes the door-strike demo with some lines replaced.
func heatVariant(t *testing.T, repl ...string) string {
	t.Helper()
	b, err := os.ReadFile("../../scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	for k := 0; k < len(repl); k += 2 {
		if !strings.Contains(s, repl[k]) {
			t.Fatalf("door-strike demo has no %q", repl[k])
		}
		s = strings.Replace(s, repl[k], repl[k+1], 1)
	}
	f := filepath.Join(t.TempDir(), "variant.yaml")
	if err := os.WriteFile(f, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	return f
}

var kiloseconds = regexp.MustCompile(`\d ks\b`)

// TestHeatOutput: durations in minutes and hours, never kiloseconds; the
// steady-state heading and the row that says when it is reached agree;
// the CSV has one row per cycle (8 h of 5 s cycles: 5760 rows).
func TestHeatOutput(t *testing.T) {
	t.Parallel()
	csvFile := filepath.Join(t.TempDir(), "h.csv")
	code, out, stderr := runCLI("heat", "../../scenarios/door-strike-duty.yaml", "--csv", csvFile)
	if code != exitOK {
		t.Fatalf("heat: exit %d: %s", code, stderr)
	}
	if m := kiloseconds.FindAllString(out, -1); m != nil {
		t.Errorf("heat prints kiloseconds %q:\n%s", m, out)
	}
	for _, s := range []string{"(after 8 h, in the periodic steady state)", "steady (peak within 0.01 K) after      88 min",
		"reaches the limit after 25 min", "5760 rows, one per cycle"} {
		if !strings.Contains(out, s) {
			t.Errorf("heat output lacks %q:\n%s", s, out)
		}
	}
	f, err := os.Open(csvFile)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 5761 || strings.Join(rows[0], ",") != "cycle,time_s,peak_winding_degC,valley_winding_degC" {
		t.Fatalf("CSV: %d rows (want a header and 5760), header %q", len(rows), rows[0])
	}
	for k, r := range rows[1:] {
		c, err1 := strconv.Atoi(r[0])
		ts, err2 := strconv.ParseFloat(r[1], 64)
		if err1 != nil || err2 != nil || c != k+1 || ts != 5*float64(k+1) {
			t.Fatalf("CSV row %d: %q, want cycle %d at %d s", k+1, r, k+1, 5*(k+1))
		}
	}

	// A slower coil (τ = 20 min) studied for 130 min: not yet steady, and
	// the steady state is reached after the end of the study (it once said
	// "not yet steady" and "settled" at a time inside the study).
	slow := heatVariant(t, "time constant: 12 min", "time constant: 20 min", "duration: 480 min", "duration: 130 min")
	code, out, stderr = runCLI("heat", slow)
	if code != exitOK {
		t.Fatalf("heat (slow coil): exit %d: %s", code, stderr)
	}
	after := regexp.MustCompile(`steady \(peak within 0.01 K\) after +(\d+) min(.*)`).FindStringSubmatch(out)
	if !strings.Contains(out, "(after 130 min, not yet steady)") || after == nil {
		t.Fatalf("slow coil, 130 min: heading or steady row missing:\n%s", out)
	}
	if m, _ := strconv.Atoi(after[1]); m <= 130 || !strings.Contains(after[2], "after the end of the study") {
		t.Errorf("not yet steady at 130 min, yet steady after %s min%s", after[1], after[2])
	}
	if m := kiloseconds.FindAllString(out, -1); m != nil {
		t.Errorf("heat prints kiloseconds %q", m)
	}

	// An output never overwrites the scenario.
	if code, _, stderr := runCLI("heat", slow, "--csv", slow); code != exitError || !strings.Contains(stderr, "scenario file") {
		t.Errorf("--csv onto the scenario: exit %d, %q", code, stderr)
	}
}
