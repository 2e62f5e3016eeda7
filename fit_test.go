package coilkick

import (
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"
)

var updateTrace = flag.Bool("update-trace", false, "regenerate testdata/fit/irrigation-scope.csv")

// The synthetic "measured" trace: the irrigation-valve demo with these
// (invented) true parameters, sampled at 20 kHz, with Gaussian noise of
// 1 % of the peak current and a 5 mA offset. It is made by
//
//	go test -run TestSyntheticScopeTrace -update-trace .
const (
	trueR, trueLc, trueLo = 75.0, 0.28, 0.11 // ohm, H, H
	scopePath             = "testdata/fit/irrigation-scope.csv"
	scopeRate             = 20e3 // Hz
	scopeOffset           = 5e-3 // A
)

// trueModel returns the demo with the true parameters.
func trueModel(t testing.TB) *Model {
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for p, v := range map[FitParam]float64{FitResistance: trueR, FitClosedInductance: trueLc, FitOpenInductance: trueLo} {
		if err := setFit(md, p, v); err != nil {
			t.Fatal(err)
		}
	}
	return md
}

// synthTrace samples a model's current with noise (fraction of the peak)
// and an offset, deterministic for a seed.
func synthTrace(t testing.TB, md *Model, noise, offset float64, seed uint64) (*MeasuredTrace, *Result) {
	n := int(md.Timing.End*scopeRate) + 1
	times := make([]float64, n)
	for k := range times {
		times[k] = float64(k) / scopeRate
	}
	res, err := Simulate(md, &Options{NoTrace: true, SampleTimes: times})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 1))
	tr := &MeasuredTrace{Source: "synthetic", Time: times[:len(res.Samples)]}
	for _, i := range res.Samples {
		tr.Current = append(tr.Current, i+offset+noise*res.Metrics.PeakCurrent*rng.NormFloat64())
	}
	return tr, res
}

func TestSyntheticScopeTrace(t *testing.T) {
	md := trueModel(t)
	tr, res := synthTrace(t, md, 0.01, scopeOffset, 2026)
	if *updateTrace {
		var b strings.Builder
		fmt.Fprintf(&b, "# SYNTHETIC bench trace for coilkick's fit demo (invented, not measured).\n")
		fmt.Fprintf(&b, "# Made by: go test -run TestSyntheticScopeTrace -update-trace . (fit_test.go)\n")
		fmt.Fprintf(&b, "# Source: scenarios/irrigation-valve.yaml with R = %g ohm, L closed = %g mH, L open = %g mH;\n", trueR, trueLc*1e3, trueLo*1e3)
		fmt.Fprintf(&b, "# 20 kHz sampling, Gaussian noise 1 %% of peak (seed 2026), offset %g mA.\n", scopeOffset*1e3)
		fmt.Fprintf(&b, "# True pull-in %.6f ms after energize at %g ms.\n", res.Metrics.PullIn.Seconds*1e3, md.Timing.EnergizeAt*1e3)
		fmt.Fprintln(&b, "time (ms), current (mA)")
		for k := range tr.Time {
			fmt.Fprintf(&b, "%.4f, %.4f\n", tr.Time[k]*1e3, tr.Current[k]*1e3)
		}
		if err := os.WriteFile(scopePath, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// The committed file reads back to the same samples (to its 0.1 µA print).
	f, err := os.Open(scopePath)
	if err != nil {
		t.Fatalf("%v (regenerate with -update-trace)", err)
	}
	defer f.Close()
	got, err := ReadTraceCSV(f, scopePath)
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Time) != len(tr.Time) {
		t.Fatalf("committed trace has %d samples, generator %d", len(got.Time), len(tr.Time))
	}
	for k := range got.Time {
		if math.Abs(got.Current[k]-tr.Current[k]) > 1e-6 || math.Abs(got.Time[k]-tr.Time[k]) > 1e-9 {
			t.Fatalf("sample %d: committed %g A at %g s, generator %g A at %g s", k, got.Current[k], got.Time[k], tr.Current[k], tr.Time[k])
		}
	}
}

func TestFitRecoversParameters(t *testing.T) {
	t.Parallel()
	f, err := os.Open(scopePath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	tr, err := ReadTraceCSV(f, scopePath)
	if err != nil {
		t.Fatal(err)
	}
	md, err := LoadModel("scenarios/irrigation-valve.yaml") // starts from 72 ohm, 300 mH, 120 mH
	if err != nil {
		t.Fatal(err)
	}
	fr, err := Fit(md, tr, []FitParam{FitResistance, FitClosedInductance, FitOpenInductance})
	if err != nil {
		t.Fatal(err)
	}
	// The acceptance bar of the issue: within 3 % of the values that made
	// the trace, and the seat instant within 2 %.
	want := map[FitParam]float64{FitResistance: trueR, FitClosedInductance: trueLc, FitOpenInductance: trueLo}
	for _, v := range fr.Values {
		if e := math.Abs(v.Value-want[v.Param]) / want[v.Param]; e > 0.03 {
			t.Errorf("%s: fitted %.5g, true %.5g (%.2g)", v.Param, v.Value, want[v.Param], e)
		}
		t.Logf("%s: start %.5g, fitted %.5g ± %.2g, true %.5g, sensitivity %.3g", v.Param, v.Start, v.Value, v.StdErr, want[v.Param], v.Sensitivity)
	}
	truth, err := Simulate(trueModel(t), &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	tp := truth.Metrics.PullIn.Seconds
	if e := math.Abs(fr.SeatModel.Seconds-tp) / tp; !fr.SeatModel.Happened || e > 0.02 {
		t.Errorf("fitted seat instant %.5g s, true %.5g s", fr.SeatModel.Seconds, tp)
	}
	if !(fr.RMS < fr.RMSStart) || fr.RMS > 1.5*fr.Noise {
		t.Errorf("RMS error %.3g A (start %.3g A), noise %.3g A", fr.RMS, fr.RMSStart, fr.Noise)
	}
	// The written scenario loads and carries the fitted values.
	out, err := WriteFitted("scenarios/irrigation-valve.yaml", fr)
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse(out, "scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Coil.Resistance-fr.Values[0].Value)/fr.Values[0].Value > 1e-4 {
		t.Errorf("written resistance %g, fitted %g", s.Coil.Resistance, fr.Values[0].Value)
	}
}

func TestDipDetector(t *testing.T) {
	t.Parallel()
	md := trueModel(t)
	tr, res := synthTrace(t, md, 0.01, scopeOffset, 7)
	ev, err := DetectEvents(tr)
	if err != nil {
		t.Fatal(err)
	}
	seat := md.Timing.EnergizeAt + res.Metrics.PullIn.Seconds
	// The dip's minimum is the seat instant (the back-EMF of motion ends
	// there); within 2 % of the pull-in time.
	if !ev.HasDip || math.Abs(ev.Seat-seat) > 0.02*res.Metrics.PullIn.Seconds {
		t.Errorf("dip at %.5g s (found %v), seat at %.5g s", ev.Seat, ev.HasDip, seat)
	}
	if math.Abs(ev.Energize-md.Timing.EnergizeAt) > 2/scopeRate+ev.EnergizeErr {
		t.Errorf("energize found at %.6g s ± %.2g, commanded at %g s", ev.Energize, ev.EnergizeErr, md.Timing.EnergizeAt)
	}
	if math.Abs(ev.Offset-scopeOffset) > 1e-3 {
		t.Errorf("offset %g A, want %g A", ev.Offset, scopeOffset)
	}
	// Blocked plunger: no motion, no dip (and no false one from the noise).
	blocked := trueModel(t)
	blocked.Plunger.Spring.Preload = 100
	trb, _ := synthTrace(t, blocked, 0.01, scopeOffset, 8)
	evb, err := DetectEvents(trb)
	if err != nil {
		t.Fatal(err)
	}
	if evb.HasDip {
		t.Errorf("blocked plunger: false dip at %.5g s", evb.Seat)
	}
}

func TestReadTraceErrors(t *testing.T) {
	t.Parallel()
	good := "time (ms), current (mA)\n"
	for k := 0; k < 20; k++ {
		good += fmt.Sprintf("%d, %d\n", k, k*10)
	}
	cases := []struct{ text, want string }{
		{"time (ms)\n1\n2\n", "no current column"},
		{"time (ms), current (mA)\n0, 1\n1, x\n", "not a number"},
		{"# a comment line\ntime (ms), current (mA)\n0, 1\n1, x\n", "scope.csv:4: current"}, // the file's own line
		{strings.Replace(good, "5, 50", "3.5, 50", 1), "does not increase"},
		{strings.Replace(good, "5, 50", "500, 50", 1), "does not increase"},
		{strings.Replace(good, "19, 190", "190, 190", 1), "gap"},
		{"time (ms), current (mV)\n0,1\n", "expected a current"},
		{"time, current (A)\n0,1\n", "has no unit"},
		{"", "empty"},
		{"time (s), current (A)\n0, 1\n1, 2\n", "at least 10"},
	}
	for _, c := range cases {
		_, err := ReadTraceCSV(strings.NewReader(c.text), "scope.csv")
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "scope.csv") {
			t.Errorf("trace %q: error %v, want one naming scope.csv and containing %q", c.text[:min(len(c.text), 40)], err, c.want)
		}
	}
	tr, err := ReadTraceCSV(strings.NewReader(good), "scope.csv")
	if err != nil || len(tr.Time) != 20 || tr.Current[3] != 0.03 || tr.Time[3] != 0.003 {
		t.Errorf("good trace: %v %+v", err, tr)
	}
}
