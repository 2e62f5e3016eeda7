package coilkick

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"coilkick/magnet"
)

// irrigationWithCurves writes the irrigation-valve demo with its magnet
// replaced by a force-curve file of the given text into a temporary
// folder, and returns the scenario's path.
func irrigationWithCurves(t testing.TB, csv, extra string) string {
	t.Helper()
	src, err := os.ReadFile("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	old := "  gap law:\n    closed inductance: 300 mH\n    open inductance: 120 mH\n"
	if !bytes.Contains(src, []byte(old)) {
		t.Fatal("the irrigation demo's magnet section changed; update the test")
	}
	dir := t.TempDir()
	text := strings.Replace(string(src), old, "  force curves:\n    file: curves.csv\n    open inductance: 120 mH\n"+extra, 1)
	path := filepath.Join(dir, "valve.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "curves.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// gapLawCurveCSV samples the gap law's force at the currents on n gaps
// from the seated to the rest gap (geometric spacing), full precision.
func gapLawCurveCSV(g *magnet.GapLaw, currents []float64, n int) string {
	lo, hi := g.GapRange()
	var b strings.Builder
	b.WriteString("# sampled from the irrigation demo's gap law\ngap (m), current (A), force (N)\n")
	for _, i := range currents {
		for k := range n {
			x := lo * math.Pow(hi/lo, float64(k)/float64(n-1))
			if k == n-1 {
				x = hi
			}
			fmt.Fprintf(&b, "%.17g, %.17g, %.17g\n", x, i, g.Force(i, x))
		}
	}
	return b.String()
}

// TestForceCurvesGapLawActuation: curves generated from the irrigation
// valve's gap law (closed form: F = ½·i²·|dL/dx| of L(x) = 1/(a + b·x),
// co-energy principle, Fitzgerald & Kingsley ch. 3) at three currents up
// to its steady current, with the gap law's open inductance, give the
// same actuation: pull-in and release within 1e-4 of the gap law's.
func TestForceCurvesGapLawActuation(t *testing.T) {
	t.Parallel()
	ref, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	g := ref.Magnet.(*magnet.GapLaw)
	path := irrigationWithCurves(t, gapLawCurveCSV(g, []float64{0.12, 0.24, 0.34}, 120), "")
	md, err := LoadModel(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := md.Magnet.(*magnet.CurveModel); !ok || md.Curves == nil {
		t.Fatalf("magnet %T, curve data %v: want a force-curve model", md.Magnet, md.Curves)
	}
	a, err := Simulate(ref, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []struct {
		name      string
		got, want float64
	}{
		{"pull-in time", b.Metrics.PullIn.Seconds, a.Metrics.PullIn.Seconds},
		{"release time", b.Metrics.Release.Seconds, a.Metrics.Release.Seconds},
		{"clamp energy", b.Metrics.ClampEnergy, a.Metrics.ClampEnergy},
	} {
		if !(math.Abs(f.got-f.want) <= 1e-4*math.Abs(f.want)) {
			t.Errorf("%s %g from the curves, %g from the gap law; want within 1e-4", f.name, f.got, f.want)
		}
	}
	t.Logf("pull-in %.6g s (gap law %.6g s), release %.6g s (%.6g s)", b.Metrics.PullIn.Seconds, a.Metrics.PullIn.Seconds, b.Metrics.Release.Seconds, a.Metrics.Release.Seconds)
}

// TestForceCurvesBadFiles: bad force-curve files are refused with the
// file, line and what is wrong.
func TestForceCurvesBadFiles(t *testing.T) {
	t.Parallel()
	const head = "stroke (mm), current (A), force (N)\n"
	good := head + "0, 0.2, 8\n0.5, 0.2, 3\n1.15, 0.2, 1\n0, 0.3, 18\n0.5, 0.3, 7\n1.15, 0.3, 2.5\n"
	if _, err := LoadModel(irrigationWithCurves(t, good, "")); err != nil {
		t.Fatalf("good curves: %v", err)
	}
	for _, tc := range []struct {
		name, csv, extra string
		want             []string
	}{
		{"missing units", "stroke, current, force\n0, 0.2, 8\n", "", []string{"curves.csv:1: column 1", "has no unit; expected a length"}},
		{"unknown column", "gap (mm), speed (m/s), force (N)\n", "", []string{"curves.csv:1: column 2", "unknown quantity"}},
		{"gap not monotone", head + "0, 0.2, 8\n0.5, 0.2, 3\n0.3, 0.2, 1\n", "", []string{"curves.csv:4:", "must rise (or fall) strictly"}},
		{"negative force", head + "0, 0.2, 8\n0.5, 0.2, -3\n1.15, 0.2, 1\n", "", []string{"curves.csv:3:", "force must be ≥ 0"}},
		{"current falls", head + "0, 0.3, 8\n1.15, 0.3, 1\n0, 0.2, 6\n1.15, 0.2, 0.5\n", "", []string{"curves.csv:4:", "falls below the previous curve's 0.3"}},
		{"one point", head + "0, 0.2, 8\n", "", []string{"curves.csv:2:", "has 1 point; a curve needs at least two"}},
		{"pull falls as current rises", head + "0, 0.2, 8\n0.5, 0.2, 3\n1.15, 0.2, 1\n0, 0.3, 18\n0.5, 0.3, 2\n1.15, 0.3, 2.5\n", "",
			[]string{"curves.csv:6: at stroke 0.5 mm (gap 0.55 mm)", "cannot fall when the current rises", "(the lower curve's point is line 3)"}},
		{"not a number", head + "0, 0.2, eight\n", "", []string{"curves.csv:2: column 3", `"eight" is not a finite number`}},
		{"voltage without temperature", "stroke (mm), voltage (V), force (N)\n0, 24, 8\n1.15, 24, 1\n", "", []string{"magnet.force curves", "give coil temperature"}},
		{"closed below open", good, "    closed inductance: 100 mH\n", []string{"magnet.force curves.closed inductance", "must be greater than"}},
	} {
		_, err := LoadModel(irrigationWithCurves(t, tc.csv, tc.extra))
		for _, w := range tc.want {
			if err == nil || !strings.Contains(err.Error(), w) {
				t.Errorf("%s: err = %v; want %q", tc.name, err, w)
				break
			}
		}
	}
}

// TestForceCurvesVoltage: curves given at voltages take the current V/R(T)
// at the stated coil temperature (R(T) = R_ref·(1 + α·(T − T_ref)), IEC
// 60028, α = 0.00393 /K).
func TestForceCurvesVoltage(t *testing.T) {
	t.Parallel()
	csv := "gap (mm), voltage (V), force (N)\n0.05, 12, 2\n1.2, 12, 0.4\n0.05, 24, 7\n1.2, 24, 1.5\n"
	md, err := LoadModel(irrigationWithCurves(t, csv, "    coil temperature: 70 degC\n"))
	if err != nil {
		t.Fatal(err)
	}
	r := 72 * (1 + 0.00393*50)
	for k, v := range []float64{12, 24} {
		if got := md.Curves.Currents[k]; math.Abs(got-v/r) > 1e-12*v/r {
			t.Errorf("curve %d: current %g A, want %g V / %g ohm = %g A", k, got, v, r, v/r)
		}
	}
}

// BenchmarkForceCurvesBuild3x20: reading a force-curve file of three
// curves of 20 points and building the model.
func BenchmarkForceCurvesBuild3x20(b *testing.B) {
	ref, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		b.Fatal(err)
	}
	g := ref.Magnet.(*magnet.GapLaw)
	csv := []byte(gapLawCurveCSV(g, []float64{0.12, 0.24, 0.34}, 20))
	lo, hi := g.GapRange()
	for b.Loop() {
		f, err := readForceCurves(bytes.NewReader(csv), "curves.csv", lo)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := magnet.NewCurveModel(f.curves, 0.12, lo, hi); err != nil {
			b.Fatal(err)
		}
	}
}

// TestForceCurvesExtrapolationNote: a run whose current goes above the
// highest curve says that the model extrapolates there; one that stays
// within the curves does not.
func TestForceCurvesExtrapolationNote(t *testing.T) {
	t.Parallel()
	ref, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	g := ref.Magnet.(*magnet.GapLaw)
	for _, tc := range []struct {
		top  float64
		want bool
	}{{0.2, true}, {0.34, false}} { // the run's steady current is 24 V / 72 ohm = 0.333 A
		md, err := LoadModel(irrigationWithCurves(t, gapLawCurveCSV(g, []float64{0.1, tc.top}, 40), ""))
		if err != nil {
			t.Fatal(err)
		}
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		got := false
		for _, n := range md.Assess(res).Notes {
			got = got || strings.Contains(n.Text, "where the model extrapolates")
		}
		if got != tc.want {
			t.Errorf("curves up to %g A, peak %g A: extrapolation note %v, want %v", tc.top, res.Metrics.PeakCurrent, got, tc.want)
		}
	}
}

// TestForceCurvesRunNotes: a run far below the lowest curve's current
// warns of the current column's unit (curves at 2 and 3 A on a 0.333 A
// run: a factor 6), and curves that do not cover the stroke say so.
func TestForceCurvesRunNotes(t *testing.T) {
	t.Parallel()
	ref, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	g := ref.Magnet.(*magnet.GapLaw)
	short := "gap (mm), current (A), force (N)\n0.3, 0.2, 3\n1.0, 0.2, 0.5\n0.3, 0.35, 9\n1.0, 0.35, 1.6\n"
	for _, tc := range []struct {
		name, csv string
		want      string
	}{
		{"far below the curves", gapLawCurveCSV(g, []float64{2, 3}, 40), "check the unit of the curves' current"},
		{"short of the stroke", short, "the force curves cover gaps 0.3–1 mm of the stroke's 0.05–1.2 mm"},
	} {
		md, err := LoadModel(irrigationWithCurves(t, tc.csv, ""))
		if err != nil {
			t.Fatal(err)
		}
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		var text []string
		for _, n := range md.Assess(res).Notes {
			text = append(text, n.Text)
		}
		if !strings.Contains(strings.Join(text, "\n"), tc.want) {
			t.Errorf("%s: notes %q lack %q", tc.name, text, tc.want)
		}
	}
}

// TestCurveDataNotes: the notes say what the model assumed and where it
// extrapolates, and read the closed-gap LCR reading against the curves'
// value: more than 5 % below is the eddy-current effect, more than 5 %
// above points at the curves, within 5 % they agree (the 5 % is common
// practice, no source).
func TestCurveDataNotes(t *testing.T) {
	t.Parallel()
	base := CurveData{File: "c.csv", Currents: []float64{0.1, 0.2}, DataGapMin: 0.1e-3, DataGapMax: 1e-3,
		SeatedGap: 0.1e-3, RestGap: 1e-3, OpenInductance: 0.1, CurveClosedInductance: 1, Smooth: true}
	for _, tc := range []struct {
		name string
		edit func(d *CurveData)
		want []string
		not  []string
	}{
		{"plain", func(*CurveData) {}, []string{"anchored at the open gap by the measured 100 mH", "extrapolates above 0.2 A", "smooth spline"},
			[]string{"closed-gap reading", "extrapolates below", "voltages"}},
		{"one curve", func(d *CurveData) { d.Currents = []float64{0.2} }, []string{"linear at every current"}, nil},
		{"piecewise linear", func(d *CurveData) { d.Smooth = false }, []string{"piecewise linear in the current"}, nil},
		{"gaps short of the stroke", func(d *CurveData) { d.DataGapMin, d.DataGapMax = 0.2e-3, 0.8e-3 },
			[]string{"extrapolates below 0.2 mm", "extrapolates above 0.8 mm"}, nil},
		{"LCR well below", func(d *CurveData) { d.ClosedInductance, d.ClosedFrequency = 0.94, 1000 }, []string{"(LCR at 1 kHz)", "(-6 %)", "eddy currents"}, nil},
		{"LCR within 5 %", func(d *CurveData) { d.ClosedInductance = 0.96 }, []string{"(-4 %)", "they agree"}, []string{"eddy"}},
		{"LCR well above", func(d *CurveData) { d.ClosedInductance = 1.06 }, []string{"(+6 %)", "stroke origin"}, nil},
		{"voltages", func(d *CurveData) { d.Voltages, d.Temperature = []float64{12, 24}, 343.15 }, []string{"V/R at the coil's 70 degC"}, nil},
	} {
		d := base
		tc.edit(&d)
		text := strings.Join(d.Notes(), "\n")
		for _, w := range tc.want {
			if !strings.Contains(text, w) {
				t.Errorf("%s: notes lack %q:\n%s", tc.name, w, text)
			}
		}
		for _, w := range tc.not {
			if strings.Contains(text, w) {
				t.Errorf("%s: notes have %q:\n%s", tc.name, w, text)
			}
		}
	}
}
