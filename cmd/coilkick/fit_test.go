package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"coilkick"
)

// TestFitRoundTripRunCSV: fit reads coilkick's own run CSV. A variant of
// the irrigation demo (R, closed and open inductance changed) is simulated
// through the real CLI path (run --csv), then fitted starting from the
// unchanged demo; the fit must recover the variant's values within its
// stated 2σ, and the stated σ must be small (the trace is noiseless, so
// the noise floor applies) but never printed as "± 0".
func TestFitRoundTripRunCSV(t *testing.T) {
	t.Parallel()
	const demo = "../../scenarios/irrigation-valve.yaml"
	src, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	truth := map[coilkick.FitParam]float64{coilkick.FitResistance: 78, coilkick.FitClosedInductance: 0.29, coilkick.FitOpenInductance: 0.125}
	variant := string(src)
	for _, r := range [][2]string{{"resistance: 72 ohm", "resistance: 78 ohm"}, {"closed inductance: 300 mH", "closed inductance: 290 mH"}, {"open inductance: 120 mH", "open inductance: 125 mH"}} {
		if !strings.Contains(variant, r[0]) {
			t.Fatalf("the demo no longer has %q", r[0])
		}
		variant = strings.Replace(variant, r[0], r[1], 1)
	}
	dir := t.TempDir()
	vPath, csvPath := filepath.Join(dir, "variant.yaml"), filepath.Join(dir, "variant.csv")
	if err := os.WriteFile(vPath, []byte(variant), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	if code := run(&out, &errb, []string{"coilkick", "run", vPath, "--csv", csvPath}); code != exitOK {
		t.Fatalf("run --csv: exit %d\n%s", code, errb.String())
	}
	f, err := os.Open(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	tr, err := coilkick.ReadTraceCSV(f, csvPath)
	f.Close()
	if err != nil {
		t.Fatalf("the run CSV does not read as a trace: %v", err)
	}
	if tr.Repeated == 0 || tr.Voltage == nil {
		t.Errorf("run CSV read with %d repeated rows and voltage %v; it has a row on each side of every event and a coil voltage", tr.Repeated, tr.Voltage != nil)
	}
	md, err := coilkick.LoadModel(demo)
	if err != nil {
		t.Fatal(err)
	}
	fr, err := coilkick.Fit(md, tr, []coilkick.FitParam{coilkick.FitResistance, coilkick.FitClosedInductance, coilkick.FitOpenInductance})
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range fr.Values {
		want := truth[v.Param]
		// Within the stated 2σ (the test's own acceptance rule), and the
		// σ itself small: below 1e-4 of the value, so that the check
		// cannot pass on an inflated error bar.
		if !(v.StdErr > 0) || v.StdErr > 1e-4*want || math.Abs(v.Value-want) > 2*v.StdErr {
			t.Errorf("%s: fitted %.9g ± %.2g, true %g (off by %.2g σ)", v.Param, v.Value, v.StdErr, want, (v.Value-want)/v.StdErr)
		}
		t.Logf("%s: fitted %.12g ± %.2g, true %g (relative error %.1e, %.3f σ)", v.Param, v.Value, v.StdErr, want, v.Value/want-1, (v.Value-want)/v.StdErr)
	}
	t.Logf("RMS %.3g A, residual σ %.3g A (floor %.3g A, used %v), ρ %.3f, shift %.3g ± %.2g s, offset %.3g ± %.2g A",
		fr.RMS, fr.ResidualSD, fr.NoiseFloor, fr.FloorUsed, fr.Autocorrelation, fr.Shift, fr.ShiftErr, fr.Offset, fr.OffsetErr)
	// The CLI on the same files: exit 0, the floor said, no "± 0", no NaN.
	out.Reset()
	errb.Reset()
	if code := run(&out, &errb, []string{"coilkick", "fit", demo, "--trace", csvPath}); code != exitOK {
		t.Fatalf("fit: exit %d\n%s", code, errb.String())
	}
	text := out.String()
	for _, bad := range []string{"± 0 ", "± 0\n", "NaN", "Inf"} {
		if strings.Contains(text, bad) {
			t.Errorf("fit output contains %q:\n%s", bad, text)
		}
	}
	for _, want := range []string{"rows at a repeated time", "σ floored", "resistance"} {
		if !strings.Contains(text, want) {
			t.Errorf("fit output lacks %q:\n%s", want, text)
		}
	}
}

// TestFitOutputs: the fitted scenario, CSV and plot are written whole
// (temporary file and rename, nothing left beside them), and an output
// that names an input (the scenario or the trace) is refused with exit
// status 1, the input intact.
func TestFitOutputs(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	scen := filepath.Join(dir, "valve.yaml")
	src, err := os.ReadFile("../../scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(scen, src, 0o644); err != nil {
		t.Fatal(err)
	}
	const trace = "../../testdata/fit/irrigation-scope.csv"
	for _, c := range []struct{ flag, path string }{{"-o", scen}, {"--csv", trace}, {"--plot", scen}} {
		var out, errb bytes.Buffer
		code := run(&out, &errb, []string{"coilkick", "fit", scen, "--trace", trace, c.flag, c.path})
		if code != exitError || !strings.Contains(errb.String(), "never overwrites an input") {
			t.Errorf("fit %s %s: exit %d, stderr %q; want exit %d and a refusal", c.flag, c.path, code, errb.String(), exitError)
		}
	}
	if got, _ := os.ReadFile(scen); !bytes.Equal(got, src) {
		t.Errorf("the scenario was changed by a refused fit")
	}
	var out, errb bytes.Buffer
	fitted, csvOut, plotOut := filepath.Join(dir, "fitted.yaml"), filepath.Join(dir, "fit.csv"), filepath.Join(dir, "fit.svg")
	if code := run(&out, &errb, []string{"coilkick", "fit", scen, "--trace", trace, "-o", fitted, "--csv", csvOut, "--plot", plotOut}); code != exitOK {
		t.Fatalf("fit: exit %d\n%s", code, errb.String())
	}
	for _, want := range []string{"baseline offset", "time alignment", "Uncertainty: Gauss–Newton covariance", "lag-1 autocorrelation"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("fit output lacks %q:\n%s", want, out.String())
		}
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if strings.Join(names, " ") != "fit.csv fit.svg fitted.yaml valve.yaml" {
		t.Errorf("files after the fit: %v; want the three outputs and the scenario, no temporary files", names)
	}
	if _, err := coilkick.LoadModel(fitted); err != nil {
		t.Errorf("the fitted scenario does not load: %v", err)
	}
}
