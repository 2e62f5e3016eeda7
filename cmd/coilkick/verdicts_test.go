package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"unicode/utf8"
)

// variant writes a copy of a demo scenario with text replaced, into dir.
func variant(t *testing.T, dir, demo string, repl ...string) string {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("../../scenarios", demo))
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	for k := 0; k+1 < len(repl); k += 2 {
		if !strings.Contains(s, repl[k]) {
			t.Fatalf("%s has no %q", demo, repl[k])
		}
		s = strings.Replace(s, repl[k], repl[k+1], 1)
	}
	path := filepath.Join(dir, strings.TrimSuffix(demo, ".yaml")+"-variant.yaml")
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// runArgs runs the command line and returns its output and exit status.
func runArgs(args ...string) (stdout, stderr string, code int) {
	var out, errb bytes.Buffer
	code = run(&out, &errb, append([]string{"coilkick"}, args...))
	return out.String(), errb.String(), code
}

// TestEveryNotePrintedOnce: each note of the assessment (the notes of the
// same run's --json) appears exactly once in the run summary (the
// audible-range warning was printed twice).
func TestEveryNotePrintedOnce(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	paths := []string{
		"../../scenarios/door-latch.yaml",
		"../../scenarios/process-air-valve.yaml",
		"../../scenarios/door-latch-bridge.yaml",
		variant(t, dir, "peak-hold-valve.yaml", "frequency: 20 kHz", "frequency: 15 kHz", "hold current: 0.4 A", "hold current: 0.25 A",
			"de-energize at: 1000 ms", "de-energize at: 100 ms", "end: 1050 ms", "end: 150 ms"),
	}
	for k, path := range paths {
		js := filepath.Join(dir, fmt.Sprintf("%d.json", k))
		out, errs, code := runArgs("run", path, "--json", js)
		if code != exitOK && code != exitFailing {
			t.Fatalf("%s: exit %d: %s", path, code, errs)
		}
		data, err := os.ReadFile(js)
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Notes []coilkickNote `json:"notes"`
		}
		if err := json.Unmarshal(data, &doc); err != nil {
			t.Fatal(err)
		}
		if len(doc.Notes) < 2 {
			t.Errorf("%s: only %d notes", path, len(doc.Notes))
		}
		for _, n := range doc.Notes {
			if c := strings.Count(out, n.Text); c != 1 {
				t.Errorf("%s: note printed %d times: %q", path, c, n.Text)
			}
		}
	}
}

// TestDropOutReported: the case (peak-and-hold demo, 0.25 A hold).
func TestDropOutReported(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "peak-hold-valve.yaml", "hold current: 0.4 A", "hold current: 0.25 A",
		"de-energize at: 1000 ms", "de-energize at: 100 ms", "end: 1050 ms", "end: 150 ms")
	out, _, code := runArgs("run", path)
	if code != exitFailing {
		t.Errorf("exit %d, want %d", code, exitFailing)
	}
	for _, want := range []string{"stays seated while energized  NO", "drop-out", "after energize, at 335 mA",
		"pull 4.95 N against spring + load 4.95 N", "release time                  -              not applicable: dropped out during the hold",
		"drop time                     -              not applicable: dropped out during the hold", "1 not applicable"} {
		if !strings.Contains(out, want) {
			t.Errorf("run output lacks %q:\n%s", want, out)
		}
	}
	for _, bad := range []string{"did not release", "did not return", "residual flux"} {
		if strings.Contains(out, bad) {
			t.Errorf("run output has %q", bad)
		}
	}
	html := filepath.Join(dir, "report.html")
	if _, errs, code := runArgs("report", path, "-o", html); code != exitFailing {
		t.Errorf("report: exit %d, %s", code, errs)
	}
	if b, err := os.ReadFile(html); err != nil || !strings.Contains(string(b), "not applicable: dropped out during the hold") ||
		strings.Contains(string(b), "did not release") {
		t.Errorf("report does not show release as not applicable (%v)", err)
	}
	out, _, code = runArgs("solve", path)
	if code != exitFailing || !strings.Contains(out, "not applicable: the plunger dropped out during the hold") ||
		strings.Contains(out, "even the highest clamp") {
		t.Errorf("solve: exit %d\n%s", code, out)
	}
	out, _, code = runArgs("clamps", path)
	if code != exitFailing || !strings.Contains(out, "No recommendation: the plunger drops out") {
		t.Errorf("clamps: exit %d\n%s", code, out)
	}
}

// TestConstantHoldNoRipple: a constant-voltage hold prints whether it
// settled, not a ripple or a chopping frequency.
func TestConstantHoldNoRipple(t *testing.T) {
	t.Parallel()
	out := demoOutputs(t, "../../scenarios/irrigation-valve.yaml").run.stdout
	if strings.Contains(out, "ripple") || strings.Contains(out, "chopping frequency") ||
		!strings.Contains(out, "hold current at end           333 mA, settled (within 1 % of V/R = 333 mA)") {
		t.Errorf("constant hold:\n%s", out)
	}
	out = demoOutputs(t, "../../scenarios/peak-hold-valve.yaml").run.stdout
	if !strings.Contains(out, "hold current ripple") || !strings.Contains(out, "chopping frequency            20 kHz\n") ||
		strings.Contains(out, "audible") {
		t.Errorf("chopped hold:\n%s", out)
	}
}

// TestClampsTable: the text fits in 120 columns (it was about 150 wide);
// two tables (release and switch stress; what each part must take), each
// without duplicate headings and with every row aligned with its header,
// also after the row of an option without figures; the impractical
// snubber and the TVS that does not fit have their reasons as notes; that
// TVS is a finding, not an error (text and JSON).
func TestClampsTable(t *testing.T) {
	t.Parallel()
	out, _, code := runArgs("clamps", "../../scenarios/door-strike-duty.yaml")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, out)
	}
	lines := strings.Split(out, "\n")
	for _, l := range lines {
		if n := utf8.RuneCountInString(l); n > 120 {
			t.Errorf("line of %d columns:\n%s", n, l)
		}
	}
	tables := 0
	for h, l := range lines {
		if !strings.HasPrefix(l, "option") {
			continue
		}
		tables++
		rows, noFit := checkTable(t, lines[h:])
		if rows != 21 || noFit != 1 {
			t.Errorf("table %d: %d rows, %d without figures; want 21 and 1 (the TVS that does not fit)", tables, rows, noFit)
		}
	}
	if tables != 2 {
		t.Errorf("%d tables, want 2:\n%s", tables, out)
	}
	for _, want := range []string{"TVS across the coil           -", "no part fits, note 1", "impractical, note 2",
		"note 1: TVS across the coil: no TVS fits: it must clamp above the 24 V supply (at least 25.2 V)", "above the derated 48 V",
		"note 2: RC snubber 25.9 ohm + 178 µF: impractical: capacitor 178 µF", "Recommended: freewheel diode", "energy/operation"} {
		if !strings.Contains(out, want) {
			t.Errorf("clamps output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "error") {
		t.Errorf("clamps output calls a finding an error:\n%s", out)
	}
	js, _, _ := runArgs("clamps", "../../scenarios/door-strike-duty.yaml", "--json", "-")
	var doc struct {
		Options []struct {
			Name  string   `json:"name"`
			NoFit *string  `json:"no_fit"`
			Error *string  `json:"error"`
			Peak  *float64 `json:"peak_switch_voltage_V"`
		} `json:"options"`
	}
	if err := json.Unmarshal([]byte(js), &doc); err != nil {
		t.Fatal(err)
	}
	found := 0
	for _, o := range doc.Options {
		switch {
		case o.Error != nil:
			t.Errorf("%s: error %q", o.Name, *o.Error)
		case o.NoFit != nil:
			found++
			if o.Name != "TVS across the coil" || !strings.HasPrefix(*o.NoFit, "no TVS fits: ") || o.Peak != nil {
				t.Errorf("%s: no_fit %q, peak switch voltage %v", o.Name, *o.NoFit, o.Peak)
			}
		}
	}
	if found != 1 {
		t.Errorf("%d options with no_fit, want 1", found)
	}
	// On the plot the option without a point is named in a short note
	// (its full reason ran off the figure).
	svg := filepath.Join(t.TempDir(), "clamps.svg")
	if _, errs, code := runArgs("clamps", "../../scenarios/door-strike-duty.yaml", "--plot", svg); code != exitOK {
		t.Fatalf("clamps --plot: exit %d: %s", code, errs)
	}
	texts := svgTexts(t, svg)
	if !strings.Contains(texts, "not shown: TVS across the coil, no part of its kind fits") {
		t.Errorf("clamps plot lacks the note:\n%s", texts)
	}
	for _, l := range strings.Split(texts, "\n") {
		if utf8.RuneCountInString(l) > 100 {
			t.Errorf("clamps plot text of %d characters runs off the figure: %q", utf8.RuneCountInString(l), l)
		}
	}
}

// checkTable checks the aligned table whose header is lines[0] (up to the
// first empty line or note): no heading twice, every row's cells starting
// under their headings. It returns the number of rows and of rows without
// figures (a "-" in the second column).
func checkTable(t *testing.T, lines []string) (rows, dashes int) {
	t.Helper()
	header := []rune(lines[0]) // tabwriter aligns code points
	// Column starts: a non-blank after two blanks.
	starts := []int{0}
	for i := 2; i < len(header); i++ {
		if header[i] != ' ' && header[i-1] == ' ' && header[i-2] == ' ' {
			starts = append(starts, i)
		}
	}
	heads := map[string]bool{}
	for k, s := range starts {
		end := len(header)
		if k+1 < len(starts) {
			end = starts[k+1]
		}
		name := strings.TrimSpace(string(header[s:end]))
		if heads[name] {
			t.Errorf("heading %q twice", name)
		}
		heads[name] = true
	}
	for _, line := range lines[1:] {
		if line == "" || strings.HasPrefix(line, "note ") || strings.HasPrefix(line, "Slow decay") {
			break
		}
		rows++
		l := []rune(line)
		for k, s := range starts[1:] {
			if k == len(starts)-2 && s >= len(l) {
				break // an empty last column (remark)
			}
			if s >= len(l) || l[s-1] != ' ' || l[s] == ' ' {
				t.Errorf("row not aligned at column %d:\n%s\n%s", s, string(header), line)
				break
			}
		}
		if strings.TrimSpace(string(l[starts[1]:min(len(l), starts[2])])) == "-" {
			dashes++
		}
	}
	return rows, dashes
}

// TestClampsPeakHoldPartRating: the part rating of the peak-and-hold demo
// is the turn-off pulse of the run (was 219 mJ of hold recirculation).
func TestClampsPeakHoldPartRating(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "peak-hold-valve.yaml", "de-energize at: 1000 ms", "de-energize at: 100 ms", "end: 1050 ms", "end: 150 ms")
	out, _, code := runArgs("clamps", path)
	if code != exitOK || !strings.Contains(out, "energy per turn-off pulse 1.2 mJ") ||
		!strings.Contains(out, "diode + 36 V Zener") {
		t.Errorf("clamps: exit %d\n%s", code, out)
	}
	run, _, _ := runArgs("run", path)
	// The 36 V Zener row shows the run's clamp energy.
	var runE, rowE string
	for _, l := range strings.Split(run, "\n") {
		if f := strings.Fields(l); len(f) >= 4 && f[0] == "clamp" && f[1] == "energy" {
			runE = f[2] + " " + f[3]
		}
	}
	// The row of the second table (what each part must take): name, peak
	// current, turn-off energy.
	for _, l := range strings.Split(out, "\n") {
		if strings.HasPrefix(l, "diode + 36 V Zener") {
			f := strings.Fields(l)
			rowE = f[7] + " " + f[8]
		}
	}
	if runE == "" || runE != rowE {
		t.Errorf("run clamp energy %q, clamps row %q", runE, rowE)
	}
}

// TestSolveMarginAndExit: the scenario's margin is used unless the flag
// is given; a freewheel diode that already meets the release says so; a
// range that holds no answer is named; an error in one answer exits 1.
func TestSolveMarginAndExit(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := variant(t, dir, "peak-hold-valve.yaml", "hold force margin: 1.2", "hold force margin: 1.5",
		"de-energize at: 1000 ms", "de-energize at: 100 ms", "end: 1050 ms", "end: 150 ms")
	out, _, code := runArgs("solve", path)
	if code != exitOK || !strings.Contains(out, "hold force margin 1.5 (the scenario's ratings.hold force margin)") ||
		!strings.Contains(out, "lowest hold current with force margin 1.50") ||
		!strings.Contains(out, "no Zener needed: a plain freewheel diode already meets it") {
		t.Errorf("solve: exit %d\n%s", code, out)
	}
	out, _, _ = runArgs("solve", path, "--margin", "1.3")
	if !strings.Contains(out, "hold force margin 1.3 (--margin)") || !strings.Contains(out, "force margin 1.30") {
		t.Errorf("solve --margin:\n%s", out)
	}
	// Release requirement no clamp below breakdown meets: the range is named.
	tight := variant(t, dir, "process-air-valve.yaml", "release time: 10 ms", "release time: 0.1 ms")
	out, _, code = runArgs("solve", tight)
	if code != exitFailing || !strings.Contains(out, "none in the searched range 0 V to 75.9 V") {
		t.Errorf("solve, tight release: exit %d\n%s", code, out)
	}
	// A step budget too small for any run: the answers fail with an error.
	starved := variant(t, dir, "peak-hold-valve.yaml", "ratings:", "solver:\n  max steps: 50\nratings:")
	out, errs, code := runArgs("solve", starved)
	if code != exitError || !strings.Contains(out, "error:") || !strings.Contains(errs, "failed with an error") {
		t.Errorf("solve, starved: exit %d\n%s\n%s", code, out, errs)
	}
}

// TestSolveNextE24: the next E24 value above the lowest Zener voltage is a
// field of its own in the JSON and a CSV column (it was only in the note's
// text), null for the other answers.
func TestSolveNextE24(t *testing.T) {
	t.Parallel()
	path := variant(t, t.TempDir(), "process-air-valve.yaml", "release time: 10 ms", "release time: 3 ms")
	out, errs, code := runArgs("solve", path, "--json", "-")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Answers []struct {
			ID    string   `json:"id"`
			Value *float64 `json:"value"`
			Next  *float64 `json:"next_e24_voltage_V"`
		} `json:"answers"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, a := range doc.Answers {
		switch {
		case a.ID != "lowest_clamp_voltage":
			if a.Next != nil {
				t.Errorf("%s: next_e24_voltage_V %v, want null", a.ID, *a.Next)
			}
		// 19.5 V found (bisection to 1e-3), the next E24 value 20 V
		case a.Value == nil || !(*a.Value > 18 && *a.Value <= 20) || a.Next == nil || *a.Next != 20:
			t.Errorf("clamp answer: value %v, next E24 %v; want about 19.5 V and 20 V", a.Value, a.Next)
		}
	}
	out, _, _ = runArgs("solve", path, "--csv", "-")
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(recs) < 2 {
		t.Fatalf("CSV (%v): %s", err, out)
	}
	col := slices.Index(recs[0], "next_e24_voltage_V")
	if last := recs[len(recs)-1]; col < 0 || last[0] != "lowest_clamp_voltage" || last[col] != "20" || recs[1][col] != "" {
		t.Errorf("CSV:\n%s", out)
	}
}

// TestCornersReport: the yield has its interval, and failing corners with
// a 100 % sampled yield are explained.
func TestCornersReport(t *testing.T) {
	t.Parallel()
	out, _, code := runArgs("corners", "../../scenarios/door-strike-duty.yaml", "--samples", "40")
	if code != exitFailing {
		t.Errorf("exit %d", code)
	}
	for _, want := range []string{"winding 30 degC (cold) and 100 degC (hot)", "yield 100.0 % (95 % Wilson score interval 91.2 % to 100.0 %)",
		"1 of 16 corners fail although every sample passed", "not applicable at 1 of 16 corners"} {
		if !strings.Contains(out, want) {
			t.Errorf("corners output lacks %q:\n%s", want, out)
		}
	}
}

// TestOutputNeverOverwritesInput: every command refuses an output path
// that names its scenario or trace, before doing anything (exit 1, the
// input intact).
func TestOutputNeverOverwritesInput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	scen := variant(t, dir, "irrigation-valve.yaml")
	trace := filepath.Join(dir, "trace.csv")
	data, _ := os.ReadFile("../../testdata/fit/irrigation-scope.csv")
	os.WriteFile(trace, data, 0o644)
	before, _ := os.ReadFile(scen)
	for _, args := range [][]string{
		{"run", scen, "--csv", scen},
		{"run", scen, "--json=" + scen},
		{"run", "--plot", scen, scen},
		{"magnet", scen, "--curves", scen},
		{"clamps", scen, "--plot", scen},
		{"report", scen, "-o", scen},
		{"fit", scen, "--trace", trace, "--csv", trace},
		{"fit", scen, "--trace", trace, "-o", scen},
	} {
		_, errs, code := runArgs(args...)
		if code != exitError || !strings.Contains(errs, "never overwrites an input") {
			t.Errorf("%v: exit %d, %s", args, code, errs)
		}
	}
	after, _ := os.ReadFile(scen)
	tr, _ := os.ReadFile(trace)
	if string(after) != string(before) || string(tr) != string(data) {
		t.Error("an input was changed")
	}
}
