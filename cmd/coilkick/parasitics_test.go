package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestEventListCompacted: a ring that turns the body diode on and off
// several times (the process-air valve with a 40 V TVS: the ring grows
// while the plunger opens) is one line in the text table and the report;
// --json keeps every event.
func TestEventListCompacted(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "process-air-valve.yaml", "  type: diode zener\n  forward drop: 0.8 V\n  zener voltage: 33 V",
		"  type: tvs\n  clamp voltage: 40 V")
	out, _, code := runArgs("run", path)
	if code != exitOK && code != exitFailing {
		t.Fatalf("exit %d", code)
	}
	if !strings.Contains(out, "switch body diode conducts 8 times between 102.7497 ms and 103.4240 ms") ||
		strings.Count(out, "conduction through the switch body diode") != 0 {
		t.Errorf("text events not compacted:\n%s", out)
	}
	js := filepath.Join(dir, "s.json")
	if _, errs, _ := runArgs("run", path, "--json", js); errs != "" {
		t.Fatal(errs)
	}
	var doc struct {
		Events []struct {
			What string `json:"what"`
			Part string `json:"part"`
		} `json:"events"`
	}
	data, _ := os.ReadFile(js)
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, e := range doc.Events {
		if e.Part == "switch body diode" {
			n++
		}
	}
	if n != 16 {
		t.Errorf("--json has %d body-diode events, want all 16", n)
	}
	html := filepath.Join(dir, "r.html")
	runArgs("report", path, "-o", html)
	b, _ := os.ReadFile(html)
	if !strings.Contains(string(b), "switch body diode conducts 8 times") {
		t.Error("report events not compacted")
	}
}
