package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"
)

// machineCommands is one invocation of every command that writes
// machine-readable output, with the exit status it must give (the
// door-strike corners fail a rating on purpose: exit 2 still writes). The
// study commands are those of studyCases, so that their --json - and
// --csv - run once (runShared).
func machineCommands() []struct {
	name string
	args []string
	code int
} {
	return []struct {
		name string
		args []string
		code int
	}{
		{"run", []string{"run", "../../scenarios/irrigation-valve.yaml"}, exitOK},
		{"land", []string{"land", "../../scenarios/irrigation-valve.yaml", "--evaluations", "30"}, exitOK},
		{"magnet", []string{"magnet", "../../scenarios/dosing-valve-geometry.yaml"}, exitOK},
		{"heat", []string{"heat", "../../scenarios/door-strike-duty.yaml"}, exitOK},
		{"check", []string{"check", "../../scenarios/process-air-valve.yaml"}, exitOK},
		{"fit", []string{"fit", "../../scenarios/irrigation-valve.yaml", "--trace", "../../testdata/fit/irrigation-scope.csv"}, exitOK},
		{"sweep", []string{"sweep", sweepLowVoltageDemo, "--vary", "supply.voltage=21 V:25 V:3", "--vary", "plunger.mass=5 g,9 g"}, exitOK},
		{"corners", []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "4"}, exitFailing},
		{"clamps", []string{"clamps", "../../scenarios/process-air-valve.yaml"}, exitOK},
		{"solve", []string{"solve", "../../scenarios/process-air-valve.yaml"}, exitOK},
		{"signature", []string{"signature", "../../scenarios/door-strike-duty.yaml"}, exitOK},
		{"storage", []string{"storage", "../../scenarios/latching-valve-9v-release.yaml"}, exitOK},
	}
}

// TestMachineJSON: every command's --json - is one JSON document on
// standard output (nothing else there), with the common header and every
// key, at every depth, of the form keyPattern names (README, "Machine-
// readable output"; JSON per RFC 8259, which has no NaN or Inf).
func TestMachineJSON(t *testing.T) {
	t.Parallel()
	for _, tc := range machineCommands() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := runShared(append(tc.args, "--json", "-")...)
			if r.code != tc.code {
				t.Fatalf("exit %d, want %d: %s", r.code, tc.code, r.stderr)
			}
			machineDoc(t, []byte(r.stdout), tc.name)
		})
	}
}

// machineDoc checks that out is exactly one JSON document with the common
// header of command, every key of keyPattern's form and every number
// finite, at every depth; it returns the document and the set of its keys.
func machineDoc(t *testing.T, out []byte, command string) (map[string]any, map[string]bool) {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(out))
	dec.UseNumber()
	var doc map[string]any
	if err := dec.Decode(&doc); err != nil {
		t.Fatalf("standard output is not one JSON document: %v\n%.2000s", err, out)
	}
	if dec.More() {
		t.Fatalf("standard output carries more than the JSON document (the text?)")
	}
	if v, _ := doc["coilkick_version"].(string); v == "" {
		t.Errorf("no coilkick_version in the header")
	}
	if doc["command"] != command {
		t.Errorf("command %v, want %q", doc["command"], command)
	}
	if s, _ := doc["source"].(string); !strings.HasSuffix(s, ".yaml") {
		t.Errorf("source %v, want the scenario file", doc["source"])
	}
	if s, _ := doc["scenario"].(string); s == "" {
		t.Errorf("no scenario name in the header")
	}
	keys := map[string]bool{}
	walkKeys(t, "", doc, keys)
	return doc, keys
}

// walkKeys adds every object key below v to keys, failing the test on a
// key not of keyPattern's form and on a number that is not finite.
func walkKeys(t *testing.T, at string, v any, keys map[string]bool) {
	t.Helper()
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			if !keyPattern.MatchString(k) {
				t.Errorf("key %q at %s does not match %s", k, at, keyPattern)
			}
			keys[k] = true
			walkKeys(t, at+"."+k, e, keys)
		}
	case []any:
		for i, e := range x {
			walkKeys(t, at+"["+strconv.Itoa(i)+"]", e, keys)
		}
	case json.Number:
		if f, err := strconv.ParseFloat(string(x), 64); err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			t.Errorf("%s: %q is not a finite number", at, x)
		}
	}
}

// TestMachineCSV: every command's --csv - is a rectangular CSV on
// standard output: a header of keyPattern keys, then cells that are a
// number, empty, true/false, or (a name column) text without "NaN"/"Inf".
func TestMachineCSV(t *testing.T) {
	t.Parallel()
	for _, tc := range machineCommands() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r := runShared(append(tc.args, "--csv", "-")...)
			if r.code != tc.code {
				t.Fatalf("exit %d, want %d: %s", r.code, tc.code, r.stderr)
			}
			rows, err := csv.NewReader(strings.NewReader(r.stdout)).ReadAll()
			if err != nil {
				t.Fatalf("stdout is not CSV (or not rectangular): %v\n%s", err, r.stdout)
			}
			if len(rows) < 2 {
				t.Fatalf("%d rows: want a header and at least one row", len(rows))
			}
			for _, k := range rows[0] {
				if !keyPattern.MatchString(k) {
					t.Errorf("column %q does not match %s", k, keyPattern)
				}
			}
			for r, row := range rows[1:] {
				for c, cell := range row {
					low := strings.ToLower(cell)
					if strings.Contains(low, "nan") || strings.Contains(low, "inf") {
						if _, err := strconv.ParseFloat(cell, 64); err == nil {
							t.Errorf("row %d column %s: %q is not finite", r+1, rows[0][c], cell)
						}
					}
				}
			}
		})
	}
}
