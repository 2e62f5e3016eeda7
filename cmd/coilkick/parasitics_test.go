package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestEventListCompacted: a ring that turns the body diode on and off
// several times (the process-air valve with a 40 V TVS and no core loss:
// the undamped ring grows while the plunger opens) is one line in the text table and the report;
// --json keeps every event.
func TestEventListCompacted(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "process-air-valve.yaml", "  type: diode zener\n  forward drop: 0.8 V\n  zener voltage: 33 V",
		"  type: tvs\n  clamp voltage: 40 V", "  winding capacitance: 120 pF\n  core loss resistance: 75 kohm\n", "")
	js := filepath.Join(dir, "s.json")
	out, errs, code := runArgs("run", path, "--json", js)
	if (code != exitOK && code != exitFailing) || errs != "" {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "switch body diode conducts 8 times between 102.7497 ms and 103.4240 ms") ||
		strings.Count(out, "conduction through the switch body diode") != 0 {
		t.Errorf("text events not compacted:\n%s", out)
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

// TestDemoRingVisible: the process-air demo, with its switch and winding
// capacitance and core loss, rings for a few cycles after the Zener stops
// conducting, and the trace shows them (a damped ring is followed until it
// is below 1 % of the rail).
func TestDemoRingVisible(t *testing.T) {
	t.Parallel()
	d := demoOutputs(t, "../../scenarios/process-air-valve.yaml")
	if d.run.code != exitOK {
		t.Fatalf("exit %d: %s", d.run.code, d.run.stderr)
	}
	if strings.Contains(d.run.stdout, "nothing but the coil resistance damps the ring") {
		t.Error("the undamped-ring note on a demo with core loss")
	}
	data := d.read(t, d.csv)
	var ts, vs []float64
	for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n")[1:] {
		f := strings.Split(line, ",")
		var tt, v float64
		if _, err := fmt.Sscan(f[0], &tt); err != nil {
			t.Fatal(err)
		}
		fmt.Sscan(f[3], &v)
		ts, vs = append(ts, tt), append(vs, v)
	}
	// Crossings of the rail (24 V) by the switch node after the Zener ends.
	cross, peak := 0, 0.0
	for k := 1; k < len(ts); k++ {
		if ts[k] < 0.1031 || ts[k] > 0.104 {
			continue
		}
		if (vs[k-1]-24)*(vs[k]-24) < 0 {
			cross++
		}
		if ts[k] > 0.1032 {
			peak = math.Max(peak, math.Abs(vs[k]-24))
		}
	}
	if cross < 4 || cross > 20 || !(peak > 1) {
		t.Errorf("%d crossings of the rail, excursion %.3g V after the first half cycle: want a ring of a few cycles", cross, peak)
	}
}
