package coilkick

import (
	"math"
	"testing"

	"coilkick/magnet"
)

// mu0 is the magnetic constant 4π×10⁻⁷ H/m (the SI value before 2019,
// within 1e-9 of CODATA 2018), written out here rather than taken from
// magnet.Mu0.
const mu0 = 4 * math.Pi * 1e-7

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

func TestCoilFieldGeometry(t *testing.T) {
	t.Parallel()
	sc, err := Load("scenarios/dosing-valve-geometry.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md, err := Build(sc)
	if err != nil {
		t.Fatal(err)
	}
	f := md.CoilFieldFigures(sc)
	b := sc.Coil.Build
	n, i := md.Coil.Turns, sc.Supply.Voltage/md.CoilResistance()
	r1, r2, l := b.InnerDiameter/2, b.OuterDiameter/2, b.Length
	if !f.HasBuild || f.Current != i {
		t.Fatalf("HasBuild %v, current %g A; want true, %g A", f.HasBuild, f.Current, i)
	}
	// source: centre field of a thick winding of uniform current density,
	// B = µ0·N·I/(2(r2 − r1))·ln[(r2 + √(r2² + l²/4))/(r1 + √(r1² + l²/4))]
	// (Montgomery, Solenoid Magnet Design, 1969: µ0·J·r1·F(α, β)).
	thick := mu0 * n * i / (2 * (r2 - r1)) * math.Log((r2+math.Hypot(r2, l/2))/(r1+math.Hypot(r1, l/2)))
	// source: finite thin solenoid µ0·N·I/√(l² + d²) (Griffiths,
	// Introduction to Electrodynamics, ch. 5) at the mean diameter.
	thin := mu0 * n * i / math.Hypot(l, r1+r2)
	// source: Wheeler 1928, L[µH] = 0.8·a²·N²/(6a + 9b + 10c), inches.
	const in = 0.0254
	a, c := (r1+r2)/2/in, (r2-r1)/in
	wheeler := 1e-6 * 0.8 * a * a * n * n / (6*a + 9*l/in + 10*c)
	for _, q := range []struct {
		name      string
		got, want float64
	}{{"centre field", f.CentreField, thick}, {"thin-coil centre field", f.CentreFieldMeanDiameter, thin}, {"Wheeler", f.WheelerInductance, wheeler}} {
		if e := math.Abs(q.got-q.want) / q.want; e > 1e-12 {
			t.Errorf("%s %g, want %g", q.name, q.got, q.want)
		}
	}
	// The numerical inductance against a grid twice as fine: converged to
	// 1e-3 (the grid's error falls as the square of the cell size,
	// TestAirCoreInductanceConverges in magnet).
	fine := magnet.AirCoreInductance(magnet.CoilBuild{InnerDiameter: 2 * r1, OuterDiameter: 2 * r2, Length: l}, n, 64, 176)
	if e := math.Abs(f.AirCoreInductance-fine) / fine; e > 1e-3 {
		t.Errorf("air-core inductance %g H, finer grid %g H", f.AirCoreInductance, fine)
	}
	if f.GapSource != GapFromNetwork {
		t.Fatalf("gap source %q, want %q", f.GapSource, GapFromNetwork)
	}
	// source: Maxwell's pull on a pole face F = B²·A/(2µ0) (Hayt & Buck,
	// Engineering Electromagnetics, the force on magnetic materials) is the
	// face part of the co-energy force; the network's fringing permeance
	// µ0·d·ln(1 + π·t/x) adds the share 4·t·x/(d·(x + π·t)) (its derivative
	// against the face's µ0·A/x², reluctance.go; t = 1 mm here, the radial
	// room to the coil bore). The model's pull is its flux-linkage table's,
	// second order in the gap step (DEVELOPERS "Known limits"): measured
	// 2e-6 apart at the seated gap, 0.5 % at the rest gap; tolerance 1 %.
	d := sc.Magnet.Geometry.PlungerDiameter
	tf := b.InnerDiameter/2 - d/2
	if area := math.Pi * d * d / 4; math.Abs(f.PoleArea-area) > 1e-15 {
		t.Errorf("pole area %g m², want π·d²/4 = %g m²", f.PoleArea, area)
	}
	for _, at := range []struct {
		name string
		x, b float64
	}{{"seated", md.Plunger.GapMin, f.GapFieldSeated}, {"rest", md.Plunger.GapMax, f.GapFieldRest}} {
		maxwell := at.b * at.b * f.PoleArea / (2 * mu0)
		want := maxwell * (1 + 4*tf*at.x/(d*(at.x+math.Pi*tf)))
		if got := md.Magnet.Force(i, at.x); math.Abs(got-want) > 0.01*want {
			t.Errorf("%s gap: pull %g N, Maxwell's pull of B = %g T with fringing %g N", at.name, got, at.b, want)
		}
	}
	// The gain is the ratio of the two printed fields (its definition).
	if f.GainSeated != f.GapFieldSeated/f.CentreField || f.GainRest != f.GapFieldRest/f.CentreField {
		t.Errorf("gains %g, %g; want %g, %g", f.GainSeated, f.GainRest, f.GapFieldSeated/f.CentreField, f.GapFieldRest/f.CentreField)
	}
}

func TestCoilFieldGapLaw(t *testing.T) {
	t.Parallel()
	sc, err := Load("testdata/good/full.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md, err := Build(sc)
	if err != nil {
		t.Fatal(err)
	}
	f := md.CoilFieldFigures(sc)
	if f.HasBuild || f.CentreField != 0 || f.WheelerInductance != 0 || f.GainSeated != 0 {
		t.Errorf("no build: %+v, want no air-core figures", f)
	}
	if f.GapSource != GapFromPull || f.PoleArea != sc.Magnet.PoleArea {
		t.Fatalf("gap source %q, area %g; want %q, %g", f.GapSource, f.PoleArea, GapFromPull, sc.Magnet.PoleArea)
	}
	// source: the gap law as a magnetic circuit, L = L_leak + N²/(ℜ_iron +
	// x/(µ0·A)) (Fitzgerald & Kingsley, Electric Machinery, ch. 3): the
	// gap's flux is (L − L_leak)·i/N and B = Φ/A. The printed B comes from
	// the pull by Maxwell's formula; this one from the inductance.
	gl := md.Magnet.(*magnet.GapLaw)
	for _, at := range []struct {
		x, b float64
	}{{md.Plunger.GapMin, f.GapFieldSeated}, {md.Plunger.GapMax, f.GapFieldRest}} {
		want := (gl.Inductance(at.x) - gl.Leakage()) * f.Current / md.Coil.Turns / f.PoleArea
		if math.Abs(at.b-want) > 1e-9*want {
			t.Errorf("gap %g m: B = %g T, flux over area %g T", at.x, at.b, want)
		}
	}
	// Without a pole area: nothing.
	md2, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if g := md2.CoilFieldFigures(nil); g.HasBuild || g.GapSource != "" || g.GapFieldSeated != 0 {
		t.Errorf("gap law without pole area or build: %+v", g)
	}
}
