package coilkick

import (
	"errors"
	"math"
	"os"
	"strings"
	"testing"

	"coilkick/circuit"
)

// landTestModel is the irrigation valve demo (invented data) with supply
// and ambient tolerances (4 corners) and a short energized time, so that a
// soft-landing study costs about 0.2 s.
func landTestModel(t testing.TB) *Model {
	t.Helper()
	data, err := os.ReadFile("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	src := strings.NewReplacer("de-energize at: 150 ms", "de-energize at: 40 ms", "end: 300 ms", "end: 60 ms",
		"ratings:", "tolerances:\n  supply: 5 %\n  ambient: 15 K\nratings:").Replace(string(data))
	return modelFromText(t, src, "land-test.yaml")
}

// Figures of the soft-landing tests, measured on landTestModel with a
// 25 ms cap: the default study lowers the nominal impact speed from
// 0.720 m/s to 0.1255 m/s (a factor 5.7) with the brake at 6.138 ms for
// 1.912 ms; Nelder–Mead from (6.5 ms, 0.5 ms) gives the same brake within
// 1.1 µs.
const (
	landTestCap = 25e-3 // s
	// landMinFactor: the unbraked nominal impact speed over the braked one
	// must be at least this (5.7 measured).
	landMinFactor = 5
	// landProfileTol (s): two starts in the same basin give the same brake
	// within this (1.1 µs measured), far below a driver's timer resolution
	// of interest; landSpeedTol: the same impact speed within this
	// fraction.
	landProfileTol = 5e-6
	landSpeedTol   = 0.01
)

// TestLandLowersImpact: the optimised brake lowers the nominal impact
// speed by landMinFactor, every corner (and the nominal point) still seats
// within the cap without dropping out; the energies are ½·m·v² (kinetic
// energy, any mechanics text); a second start gives the same brake.
func TestLandLowersImpact(t *testing.T) {
	t.Parallel()
	md := landTestModel(t)
	res, err := Land(md, LandOptions{PullInCap: landTestCap})
	if err != nil {
		t.Fatal(err)
	}
	before, after := res.NominalBefore, res.NominalAfter
	if !res.Feasible || !res.BeforeFeasible || len(res.CornersAfter) != 4 {
		t.Fatalf("feasible %v, before feasible %v, %d corners; want true, true, 4", res.Feasible, res.BeforeFeasible, len(res.CornersAfter))
	}
	if f := before.ImpactSpeed / after.ImpactSpeed; !(f >= landMinFactor) {
		t.Errorf("impact speed %.4g m/s → %.4g m/s: factor %.3g, want >= %g", before.ImpactSpeed, after.ImpactSpeed, f, float64(landMinFactor))
	}
	for k, c := range append(res.CornersAfter, after) {
		if !c.PullIn.Happened || c.DroppedOut || !WithinMax(c.PullIn.Seconds, landTestCap) {
			t.Errorf("run %d after: pull-in %+v, dropped out %v; want seated within %g s", k, c.PullIn, c.DroppedOut, landTestCap)
		}
	}
	// source: kinetic energy ½·m·v² (any mechanics text).
	for _, r := range []LandRun{before, after} {
		if want := 0.5 * md.Plunger.Mass * r.ImpactSpeed * r.ImpactSpeed; math.Abs(r.ImpactEnergy-want) > 1e-12*want {
			t.Errorf("impact energy %g J, want ½·m·v² = %g J", r.ImpactEnergy, want)
		}
	}
	again, err := Land(md, LandOptions{PullInCap: landTestCap, StartAt: 6.5e-3, StartFor: 0.5e-3})
	if err != nil {
		t.Fatal(err)
	}
	dAt, dFor := math.Abs(again.After.BrakeAt-res.After.BrakeAt), math.Abs(again.After.BrakeFor-res.After.BrakeFor)
	dv := math.Abs(again.NominalAfter.ImpactSpeed-after.ImpactSpeed) / after.ImpactSpeed
	if dAt > landProfileTol || dFor > landProfileTol || dv > landSpeedTol {
		t.Errorf("from another start: brake %+v against %+v (%.3g s, %.3g s apart), speed %.3g apart; want within %g s and %g",
			again.After, res.After, dAt, dFor, dv, landProfileTol, landSpeedTol)
	}
	t.Logf("land: %.4g → %.4g m/s, brake at %.6g ms for %.6g ms (again: %.6g, %.6g); %d evaluations, %d simulations, %v",
		before.ImpactSpeed, after.ImpactSpeed, 1e3*res.After.BrakeAt, 1e3*res.After.BrakeFor, 1e3*again.After.BrakeAt,
		1e3*again.After.BrakeFor, res.Evaluations, res.Simulations, res.Elapsed)
}

// TestLandCapBinds: with a 15 ms cap the slowest corner ends at the cap
// (the constraint binds: within 2 % below it, 14.992 ms measured) and the
// nominal impact speed falls by a factor of at least 1.7 (1.82 measured);
// with 10 ms no brake beats the drive as it is (the slowest corner takes
// 9.80 ms without a brake), and the study says so by keeping it.
func TestLandCapBinds(t *testing.T) {
	t.Parallel()
	md := landTestModel(t)
	res, err := Land(md, LandOptions{PullInCap: 15e-3})
	if err != nil {
		t.Fatal(err)
	}
	slowest := 0.0
	for _, c := range append(res.CornersAfter, res.NominalAfter) {
		if !c.Meets(15e-3) {
			t.Errorf("a run misses the 15 ms cap: %+v", c)
		}
		slowest = math.Max(slowest, c.PullIn.Seconds)
	}
	if f := res.NominalBefore.ImpactSpeed / res.NominalAfter.ImpactSpeed; !res.Feasible || !(f >= 1.7) || slowest < 0.98*15e-3 {
		t.Errorf("cap 15 ms: feasible %v, factor %.3g (want >= 1.7), slowest corner %.4g s (want within 2 %% below the cap)", res.Feasible, f, slowest)
	}
	res, err = Land(md, LandOptions{PullInCap: 10e-3})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Feasible || res.After != res.Before || res.NominalAfter != res.NominalBefore {
		t.Errorf("cap 10 ms: feasible %v, after %+v (want the drive as it is, %+v)", res.Feasible, res.After, res.Before)
	}
}

// TestLandTimingMargin: with a 20 µs timing margin every margin of the
// brake found is at least 15 µs (the margin search doubles from 1 µs, so
// it may stop at 16 µs and bisect from there; measured: 20 µs later,
// none of the others fails), where the brake found without one fails
// 1 µs later.
func TestLandTimingMargin(t *testing.T) {
	t.Parallel()
	md := landTestModel(t)
	res, err := Land(md, LandOptions{PullInCap: landTestCap, TimingMargin: 20e-6, MaxEvaluations: 60})
	if err != nil {
		t.Fatal(err)
	}
	m := res.Margins
	if !res.Feasible || m == nil {
		t.Fatalf("feasible %v, margins %v", res.Feasible, m)
	}
	for k, iv := range []Interval{m.AtEarlier, m.AtLater, m.ForShorter, m.ForLonger} {
		if iv.Happened && iv.Seconds < 15e-6 {
			t.Errorf("margin %d: %g s, want >= 15 µs (%+v)", k, iv.Seconds, *m)
		}
	}
	if _, err := Land(md, LandOptions{PullInCap: landTestCap, TimingMargin: -1e-6}); err == nil {
		t.Error("a negative timing margin: no error")
	}
}

// TestLandErrors: no cap, and a drive that takes no brake.
func TestLandErrors(t *testing.T) {
	t.Parallel()
	md := landTestModel(t)
	md.Limits.MaxPullIn = 0
	if _, err := Land(md, LandOptions{MaxEvaluations: 1}); err == nil || !strings.Contains(err.Error(), "pull-in-cap") {
		t.Errorf("no cap: error %v, want one naming --pull-in-cap", err)
	}
	md = landTestModel(t)
	md.Control.Mode = circuit.BoostHold
	if _, err := Land(md, LandOptions{MaxEvaluations: 1}); !errors.Is(err, ErrLandDriveMode) {
		t.Errorf("boost then hold drive: error %v, want ErrLandDriveMode", err)
	}
}

// BenchmarkLandDemo is the whole study on the landing demo (32 corners).
func BenchmarkLandDemo(b *testing.B) {
	md, err := LoadModel("scenarios/irrigation-valve-landing.yaml")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		res, err := Land(md, LandOptions{})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(res.Simulations), "simulations")
		b.ReportMetric(float64(res.Evaluations), "evaluations")
	}
}

// TestLandRunPanicBecomesError: a panic in one of land's parallel runs is
// the study's error, not the end of the process (a panicking worker
// goroutine would exit with the runtime's status 2, which is reserved for
// failing ratings).
func TestLandRunPanicBecomesError(t *testing.T) {
	// Not parallel: it sets a package hook.
	md := landTestModel(t)
	landRunHook = func() { panic("injected") }
	defer func() { landRunHook = nil }()
	_, err := Land(md, LandOptions{MaxEvaluations: 1})
	if err == nil || !strings.Contains(err.Error(), "internal error") || !strings.Contains(err.Error(), "injected") {
		t.Errorf("error %v, want the internal error of the injected panic", err)
	}
}
