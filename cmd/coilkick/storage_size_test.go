package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const storageSizeDemo = "../../scenarios/latching-valve-9v-release.yaml"

// `coilkick storage`: the text names the answer, the step below and why it
// fails; the JSON carries the same figures; a scenario whose own
// capacitor fails at a corner exits 2; bad flags exit 1 naming the flag.
func TestStorageCommand(t *testing.T) {
	t.Parallel()
	code, out, stderr := runStudy(t, "storage", storageSizeDemo)
	if code != exitOK {
		t.Fatalf("storage: exit %d: %s", code, stderr)
	}
	text := string(out)
	for _, want := range []string{"smallest E6 value    1500 µF (±20 %: 1200 µF to 1800 µF)", "one step below       1000 µF fails at supply 7 V",
		"does not pull in", "release pulse", "re-latches", "CAUTION: a storage capacitor keeps its charge"} {
		if !strings.Contains(text, want) {
			t.Errorf("text lacks %q:\n%s", want, text)
		}
	}
	code, out, stderr = runStudy(t, "storage", storageSizeDemo, "--series", "e12", "--json", "-")
	if code != exitOK {
		t.Fatalf("storage --json: exit %d: %s", code, stderr)
	}
	var doc struct {
		Series    string           `json:"series"`
		Tolerance float64          `json:"capacitance_tolerance"`
		Answer    map[string]any   `json:"answer"`
		Below     map[string]any   `json:"one_step_below"`
		Latch     map[string]any   `json:"latch_pulse"`
		Corners   []map[string]any `json:"corners"`
		Release   *map[string]any  `json:"release_pulse"`
		Given     map[string]any   `json:"scenario_design"`
	}
	if err := json.Unmarshal(out, &doc); err != nil {
		t.Fatal(err)
	}
	c, _ := doc.Answer["capacitance_F"].(float64)
	b, _ := doc.Below["capacitance_F"].(float64)
	// E12 (IEC 60063): the value below the answer is the previous E12 number.
	if doc.Series != "E12" || doc.Tolerance != 0.10 || !(c > b) || b <= 0 || len(doc.Corners) != 32 || doc.Release == nil {
		t.Errorf("JSON: series %q, tolerance %v, answer %v F, below %v F, %d corners", doc.Series, doc.Tolerance, c, b, len(doc.Corners))
	}
	if pass, _ := doc.Below["passes_every_corner"].(bool); pass {
		t.Errorf("one step below passes: %v", doc.Below)
	}

	dir := t.TempDir()
	data, err := os.ReadFile(storageSizeDemo)
	if err != nil {
		t.Fatal(err)
	}
	small := filepath.Join(dir, "small.yaml")
	if err := os.WriteFile(small, []byte(strings.Replace(string(data), "capacitance: 2200 uF", "capacitance: 680 uF", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, _ = runStudy(t, "storage", small)
	if code != exitFailing || !strings.Contains(string(out), "680 µF with its pulses fails at") {
		t.Errorf("a 680 µF design: exit %d, want %d:\n%s", code, exitFailing, out)
	}
	for _, bad := range []struct {
		args []string
		want string
	}{
		{[]string{"--series", "E7"}, "--series"},
		{[]string{"--tolerance", "20 V"}, "--tolerance"},
		{[]string{"--tolerance", "150 %"}, "--tolerance"},
		{[]string{"--pulse-margin", "-5 %"}, "--pulse-margin"},
	} {
		code, _, stderr := runStudy(t, append([]string{"storage", storageSizeDemo}, bad.args...)...)
		if code != exitError || !strings.Contains(stderr, bad.want) {
			t.Errorf("%v: exit %d, stderr %q", bad.args, code, stderr)
		}
	}
	code, _, stderr = runStudy(t, "storage", "../../scenarios/irrigation-valve.yaml")
	if code != exitError || !strings.Contains(stderr, "irrigation-valve.yaml") || !strings.Contains(stderr, "storage capacitor") {
		t.Errorf("no storage capacitor: exit %d, %q", code, stderr)
	}
}
