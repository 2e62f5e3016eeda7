package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"coilkick"
)

// TestLandCommand: exit status and messages of land's wrong calls, the
// plot written, and the brake it prints pasted into the scenario: a run
// of the pasted file gives the impact speed the table reports.
func TestLandCommand(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	demo := "../../scenarios/irrigation-valve.yaml"
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	noCap := filepath.Join(dir, "no-cap.yaml")
	if err := os.WriteFile(noCap, bytes.Replace(data, []byte("  pull-in time: 40 ms\n"), nil, 1), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		code int
		want []string // in stderr
	}{
		{"cap without a unit", []string{"land", demo, "--pull-in-cap", "25"}, exitError, []string{"--pull-in-cap", "25 ms"}},
		{"cap negative", []string{"land", demo, "--pull-in-cap", "-5 ms"}, exitError, []string{"--pull-in-cap"}},
		{"evaluations 0", []string{"land", demo, "--evaluations", "0"}, exitError, []string{"--evaluations 0", "5000"}},
		{"timing margin in volts", []string{"land", demo, "--timing-margin", "20 V"}, exitError, []string{"--timing-margin", "20 us"}},
		{"no cap", []string{"land", noCap, "--evaluations", "3"}, exitError, []string{"no-cap.yaml", "--pull-in-cap", "ratings.pull-in time"}},
		{"chopped drive", []string{"land", "../../scenarios/peak-hold-valve.yaml"}, exitError, []string{"constant and the pwm drive", "peak and hold"}},
	}
	for _, tc := range cases {
		code, _, stderr := runStudy(t, tc.args...)
		if code != tc.code {
			t.Errorf("%s: exit %d, want %d (%s)", tc.name, code, tc.code, stderr)
		}
		for _, w := range tc.want {
			if !strings.Contains(stderr, w) {
				t.Errorf("%s: stderr %q lacks %q", tc.name, stderr, w)
			}
		}
	}
	png := filepath.Join(dir, "land.png")
	code, out, stderr := runStudy(t, "land", demo, "--pull-in-cap", "20 ms", "--evaluations", "40", "--plot", png)
	if code != exitOK {
		t.Fatalf("land: exit %d: %s", code, stderr)
	}
	if st, err := os.Stat(png); err != nil || st.Size() < 1000 {
		t.Errorf("land --plot: %v, size %v", err, st)
	}
	text := string(out)
	for _, w := range []string{"pull-in cap 20 ms (--pull-in-cap) at the nominal point only", "seat impact speed", "impact energy"} {
		if !strings.Contains(text, w) {
			t.Errorf("land: the table lacks %q:\n%s", w, text)
		}
	}
	// The pasted brake: the drive section printed, put into the file.
	_, paste, ok := strings.Cut(text, "(paste into the file):\n\n")
	paste, _, _ = strings.Cut(paste, "\n\n")
	if !ok || !strings.Contains(paste, "brake at:") {
		t.Fatalf("land: no drive section to paste:\n%s", text)
	}
	var lines []string
	for _, l := range strings.Split(paste, "\n") {
		lines = append(lines, strings.TrimPrefix(l, "  "))
	}
	pasted := filepath.Join(dir, "pasted.yaml")
	edited := strings.Replace(string(data), "timing:", strings.Join(lines, "\n")+"\ntiming:", 1)
	if err := os.WriteFile(pasted, []byte(edited), 0o644); err != nil {
		t.Fatal(err)
	}
	md, err := coilkick.LoadModel(pasted)
	if err != nil {
		t.Fatalf("the pasted brake does not load: %v\n%s", err, paste)
	}
	res, err := coilkick.Simulate(md, &coilkick.Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	_, after, _ := strings.Cut(text, "seat impact speed")
	after, _, _ = strings.Cut(after, "\n")
	fields := strings.Fields(after)
	if got := formatSpeed(res.Metrics.SeatImpactSpeed); len(fields) < 4 || fields[2]+" "+fields[3] != got {
		t.Errorf("the pasted brake runs at %s, the table says %q", got, after)
	}
	if !res.Metrics.Brake.Happened {
		t.Errorf("the pasted brake did not brake: %+v", res.Metrics.Brake)
	}
}

// formatSpeed is a speed as the land table prints it.
func formatSpeed(v float64) string {
	return landSpeed(coilkick.LandRun{PullIn: coilkick.Interval{Happened: true}, ImpactSpeed: v})
}

// TestLandReport: a scenario whose drive has a brake gets the soft-landing
// figure in its report, and the brake's figures named under Pull-in; one
// without a brake gets neither (the demos' reports).
func TestLandReport(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	data, err := os.ReadFile("../../scenarios/irrigation-valve-landing.yaml")
	if err != nil {
		t.Fatal(err)
	}
	braked := filepath.Join(dir, "braked.yaml")
	text := strings.NewReplacer("  # brake at:", "  brake at:", "  # brake for:", "  brake for:").Replace(string(data))
	if err := os.WriteFile(braked, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "report.html")
	if code, _, stderr := runStudy(t, "report", braked, "-o", out); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	html, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"Soft landing", "with the brake at 6.137 ms for 1.494 ms", `data-key="brake.start_after_energize_s"><td>brake: switch off after energize`,
		"gap at the brake&#39;s start</td><td class=\"v\">800 µm"} {
		if !bytes.Contains(html, []byte(w)) {
			t.Errorf("the report of a braked drive lacks %q", w)
		}
	}
	plain := filepath.Join(dir, "plain.html")
	if code, _, stderr := runStudy(t, "report", "../../scenarios/irrigation-valve-landing.yaml", "-o", plain); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	if html, err := os.ReadFile(plain); err != nil || bytes.Contains(html, []byte("Soft landing")) || bytes.Contains(html, []byte("brake.")) {
		t.Errorf("the report of a drive without a brake shows one (%v)", err)
	}
}
