package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSignatureCommandLine: exit status and messages of signature's
// command lines: no sense chain, flags without or with the wrong unit or
// out of range (each names the flag and the expected quantity), a failing
// required margin (exit 2, FAIL in the table), and the plot written.
func TestSignatureCommandLine(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	src, err := os.ReadFile("../../scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	strict := filepath.Join(dir, "strict.yaml")
	text := string(src) + "sense:\n  sample rate: 10 kHz\n  noise: 3 mA\n  required margin: 1000\n"
	if err := os.WriteFile(strict, []byte(text), 0o600); err != nil {
		t.Fatal(err)
	}
	pwm := filepath.Join(dir, "pwm.yaml")
	text = strings.Replace(string(src), "\ntiming:", "\ndrive:\n  mode: pwm\n  frequency: 5 kHz\n  duty: 95 %\n  recirculation drop: 0.7 V\ntiming:", 1)
	if err := os.WriteFile(pwm, []byte(text), 0o600); err != nil {
		t.Fatal(err)
	}
	png := filepath.Join(dir, "sig.png")
	irrigation := "../../scenarios/irrigation-valve.yaml"
	for _, tc := range []struct {
		name   string
		args   []string
		code   int
		stdout []string
		stderr []string
	}{
		{"no sense chain", []string{"signature", irrigation}, exitError, nil, []string{"sense section", "--sample-rate"}},
		{"no unit", []string{"signature", irrigation, "--sample-rate", "10000"}, exitError, nil, []string{"--sample-rate", "frequency"}},
		{"wrong unit", []string{"signature", irrigation, "--sample-rate", "10 kHz", "--noise", "3 mV"}, exitError, nil, []string{"--noise", "current"}},
		{"out of range", []string{"signature", irrigation, "--sample-rate", "10 kHz", "--bandwidth", "1 GHz"}, exitError, nil, []string{"--bandwidth", "100 MHz"}},
		{"too few readings", []string{"signature", irrigation, "--sample-rate", "10 Hz"}, exitError, nil, []string{"readings", "sample rate"}},
		{"required margin fails", []string{"signature", strict}, exitFailing, []string{"margin", "FAIL", "below the required 1e+03"}, nil},
		// A voltage PWM does not mask the dip; its pulses' rise slope falls at the seat.
		{"pwm", []string{"signature", pwm, "--sample-rate", "10 kHz", "--noise", "3 mA"}, exitOK,
			[]string{"voltage PWM", "not masked", "The rise slope falls to 0."}, nil},
		{"plot", []string{"signature", irrigation, "--sample-rate", "10 kHz", "--noise", "3 mA", "--plot", png}, exitOK,
			[]string{"nominal point only", "Detection: a fall of at least"}, nil},
	} {
		code, out, errs := runCLI(tc.args...)
		if code != tc.code {
			t.Errorf("%s: exit %d, want %d: %s", tc.name, code, tc.code, errs)
		}
		for _, w := range tc.stdout {
			if !strings.Contains(out, w) {
				t.Errorf("%s: standard output lacks %q:\n%s", tc.name, w, out)
			}
		}
		for _, w := range tc.stderr {
			if !strings.Contains(errs, w) {
				t.Errorf("%s: standard error lacks %q: %s", tc.name, w, errs)
			}
		}
	}
	if fi, err := os.Stat(png); err != nil || fi.Size() < 10000 {
		t.Errorf("plot: %v", err)
	}
}
