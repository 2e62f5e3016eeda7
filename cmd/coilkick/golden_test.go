package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/golden")

// solverLine varies with the platform's floating point (step counts), so
// it is masked before comparing.
var solverLine = regexp.MustCompile(`(?m)^Solver: .*$`)

// TestGoldenSummaries compares the text output of a few commands with
// committed golden files (the command lines run once per test binary,
// runShared); on a mismatch it writes NAME.got beside the golden file. Regenerate with: go test ./cmd/coilkick -run Golden -update
func TestGoldenSummaries(t *testing.T) {
	cases := []struct {
		name string
		args []string
		code int
	}{
		{"irrigation-run", []string{"run", "../../scenarios/irrigation-valve.yaml"}, exitOK},
		{"door-latch-run", []string{"run", "../../scenarios/door-latch.yaml"}, exitFailing},
		{"dosing-magnet", []string{"magnet", "../../scenarios/dosing-valve-geometry.yaml"}, exitOK},
		{"irrigation-clamps", []string{"clamps", "../../scenarios/irrigation-valve.yaml"}, exitOK},
		{"bad-unit-check", []string{"check", "../../testdata/bad/wrong_unit.yaml"}, exitError},
	}
	for _, c := range cases {
		r := runShared(c.args...)
		if r.code != c.code {
			t.Errorf("%s: exit %d, want %d; stderr %s", c.name, r.code, c.code, r.stderr)
		}
		got := solverLine.ReplaceAll([]byte(r.stdout+r.stderr), []byte("Solver: (masked)"))
		path := filepath.Join("testdata", "golden", c.name+".txt")
		if *update {
			if err := os.WriteFile(path, got, 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		want, err := os.ReadFile(path)
		if err != nil {
			t.Fatalf("%v (run with -update to create it)", err)
		}
		if !bytes.Equal(got, want) {
			os.WriteFile(path+".got", got, 0o644)
			t.Errorf("%s: output differs from %s; see %s.got (diff them; -update accepts the new output)", c.name, path, path)
		}
	}
}
