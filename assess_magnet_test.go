package coilkick

import (
	"math"
	"testing"
)

func TestMagnetSummaryGapLaw(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := md.MagnetSummary()
	// source: the gap law's own definition (linear iron): λ = L(x)·i, so λ/i
	// is the stated inductance at any current, and it never saturates.
	if math.Abs(s.ClosedInductance-0.3) > 1e-12 || math.Abs(s.OpenInductanceRated-0.12) > 1e-12 {
		t.Errorf("inductances %g, %g H; want 0.3, 0.12", s.ClosedInductance, s.OpenInductanceRated)
	}
	if s.SaturationSeated != 0 || s.SaturationRest != 0 {
		t.Errorf("gap law saturation onset %g, %g; want none", s.SaturationSeated, s.SaturationRest)
	}
	// source: co-energy force F = ½·i²·|dL/dx| with L = 1/(a + b·x):
	// |dL/dx| = b·L², b = (1/L_open − 1/L_closed)/(x_max − x_min).
	b := (1/0.12 - 1/0.3) / (1.2e-3 - 0.05e-3)
	want := 0.5 * s.RatedCurrent * s.RatedCurrent * b * 0.12 * 0.12
	if math.Abs(s.ForceAtRest-want)/want > 1e-9 {
		t.Errorf("pull at rest %g N, want %g N", s.ForceAtRest, want)
	}
}

func TestMagnetSummarySaturationOnset(t *testing.T) {
	t.Parallel()
	// The demo table samples λ = λs·tanh(L(x)·i/λs) (door-latch-flux.csv
	// header). source: d/du tanh u = sech² u, so ∂λ/∂i falls to a fraction
	// f of L(x) where cosh u = 1/√f: i = λs·acosh(1/√f)/L(x).
	md, err := LoadModel("scenarios/door-latch-tvs-table.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := md.MagnetSummary()
	const lamSat, a, b = 45e-3, 25.0, 14957.0
	for _, c := range []struct {
		name string
		got  float64
		x    float64
	}{{"seated", s.SaturationSeated, md.Plunger.GapMin}, {"rest", s.SaturationRest, md.Plunger.GapMax}} {
		l := 1 / (a + b*c.x)
		want := lamSat * math.Acosh(1/math.Sqrt(SaturationFraction)) / l
		// tolerance: the table's monotone cubic interpolation in current
		if math.Abs(c.got-want)/want > 0.02 {
			t.Errorf("%s gap: saturation onset %.4g A, want %.4g A", c.name, c.got, want)
		}
	}
}

func TestForceCurves(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	curves, err := md.ForceCurves([]float64{0.1, 0.2}, 11)
	if err != nil {
		t.Fatal(err)
	}
	// source: F ∝ i² at fixed gap for linear iron (co-energy ½ L' i²).
	for k := range curves[0].Gap {
		if r := curves[1].Force[k] / curves[0].Force[k]; math.Abs(r-4) > 1e-9 {
			t.Errorf("gap %g: force ratio %g for doubled current, want 4", curves[0].Gap[k], r)
		}
	}
	if _, err := md.ForceCurves([]float64{math.NaN()}, 11); err == nil {
		t.Error("NaN current accepted")
	}
}
