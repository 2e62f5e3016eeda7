package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestRunStorageCapacitor: run on the capacitor-discharge demo prints the
// storage capacitor's block and writes metrics.storage_capacitor, whose
// figures agree with their definitions (README, "Capacitor-discharge
// drive"); without a charging resistor the recharge is "not possible".
func TestRunStorageCapacitor(t *testing.T) {
	t.Parallel()
	const demo = "../../scenarios/latch-valve-9v-cap.yaml"
	text := runShared("run", demo)
	if text.code != exitOK {
		t.Fatalf("exit %d: %s", text.code, text.stderr)
	}
	for _, want := range []string{"Storage capacitor\n", "  voltage at turn-off           2.23 V\n",
		"  recharge after the run        881 ms to 8.91 V (within 1 % of the charge voltage)\n",
		"  source, charging, ESR ", "  hold current at end           582 mA (from the storage capacitor)\n"} {
		if !strings.Contains(text.stdout, want) {
			t.Errorf("run's text lacks %q:\n%s", want, text.stdout)
		}
	}
	r := runShared("run", demo, "--json", "-")
	machineDoc(t, []byte(r.stdout), "run")
	var doc struct {
		Metrics struct {
			Storage map[string]any `json:"storage_capacitor"`
		} `json:"metrics"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	st := doc.Metrics.Storage
	num := func(k string) float64 { v, _ := st[k].(float64); return v }
	// Definitions: ½·C·(V0² − V²) with C = 2200 µF; the recharge through
	// 100 ohm + the 1 ohm source from 9 V, t = R·C·ln((Vs − V)/(Vs − V_target))
	// (first-order RC charging, Hayt & Kemmerly, Engineering Circuit
	// Analysis, ch. 8).
	const c, vs, rch = 2200e-6, 9.0, 101.0
	v0, vOff, vEnd := num("charge_voltage_V"), num("voltage_at_turn_off_V"), num("final_voltage_V")
	checks := []struct {
		key       string
		got, want float64
	}{
		{"pulse_energy_J", num("pulse_energy_J"), 0.5 * c * (v0*v0 - vOff*vOff)},
		{"run_energy_J", num("run_energy_J"), 0.5 * c * (v0*v0 - vEnd*vEnd)},
		{"recharge_time_s", num("recharge_time_s"), rch * c * math.Log((vs-vEnd)/(vs-0.99*v0))},
		{"charge_voltage_V", v0, vs},
	}
	for _, k := range checks {
		if math.Abs(k.got-k.want) > 1e-9*math.Abs(k.want) {
			t.Errorf("%s = %.10g, want %.10g", k.key, k.got, k.want)
		}
	}
	if st["recharge_not_possible"] != nil || num("lowest_voltage_V") > vOff {
		t.Errorf("storage_capacitor: %v", st)
	}

	// No charging path: the battery disconnected.
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(t.TempDir(), "no-charge.yaml")
	noCharge := strings.Replace(string(data), "    charging resistance: 100 ohm\n", "", 1)
	if err := os.WriteFile(file, []byte(noCharge), 0o600); err != nil {
		t.Fatal(err)
	}
	code, out, stderr := runCLI("run", file)
	if code != exitOK || !strings.Contains(out, "  recharge after the run        not recharged (no charging path)\n") {
		t.Errorf("without a charging resistor: exit %d, %s\n%s", code, stderr, out)
	}
	// The report: the capacitor in the scenario's summary and its figures
	// under their own heading.
	html := filepath.Join(t.TempDir(), "cap.html")
	if code, _, stderr := runCLI("report", file, "-o", html); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	page, err := os.ReadFile(html)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"2.2 mF, ESR 100 mΩ", ">Storage capacitor<", "not recharged (no charging path)", ">voltage at turn-off<"} {
		if !strings.Contains(string(page), want) {
			t.Errorf("report lacks %q", want)
		}
	}
}
