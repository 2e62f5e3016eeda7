package magnet

import (
	"math"
	"regexp"
	"strings"
	"testing"
)

// testPlungerGeometry is an invented small DC solenoid (demo dimensions,
// not a real product): 8 mm plunger and pole, 32 mm shell, 22 mm winding.
func testPlungerGeometry() PlungerGeometry {
	return PlungerGeometry{
		PlungerDiameter: 8e-3, PlungerLength: 14e-3, PoleDiameter: 8e-3, PoleLength: 12e-3,
		ShellOuterDiameter: 32e-3, ShellWall: 1.5e-3, ShellLength: 28e-3, EndPlateThickness: 2.5e-3,
		SlidingGap: 0.05e-3, SlidingLength: 4e-3,
		WindingInnerRadius: 5e-3, WindingOuterRadius: 13e-3, WindingLength: 22e-3,
	}
}

const testPlungerTurns = 2400.0

// linearSteel is a Frohlich–Kennelly law with a saturation polarization so
// large (1e12 T) that it is linear with µr to about 1e-11 at the flux
// densities used here (H/Hk below 1e-11).
func linearSteel(muR float64) FrohlichKennelly { return FrohlichKennelly{Js: 1e12, MuRInitial: muR} }

func mustPlunger(t testing.TB, steel BHCurve, opts ...PlungerOption) *PlungerMagnet {
	t.Helper()
	p, err := NewPlungerMagnet(testPlungerGeometry(), steel, testPlungerTurns, opts...)
	if err != nil {
		t.Fatalf("NewPlungerMagnet: %v", err)
	}
	return p
}

// seriesReluctance returns the reluctances (1/H) of the test geometry's
// sliding gap and of its steel parts at relative permeability muR, written
// out here from the path definitions in reluctance.go: axial parts l/(µA)
// and radial discs ln(r2/r1)/(2π·µ·t) (Hopkinson's law for uniform and
// radial flux tubes, any electromagnetics text).
func seriesReluctance(g PlungerGeometry, muR float64) (slide, iron float64) {
	mu := Mu0 * muR
	rp, rpole := g.PlungerDiameter/2, g.PoleDiameter/2
	ro := g.ShellOuterDiameter / 2
	ri := ro - g.ShellWall
	rm := ro - g.ShellWall/2
	slide = math.Log((rp+g.SlidingGap)/rp) / (2 * math.Pi * Mu0 * g.SlidingLength)
	iron = g.PlungerLength/(mu*math.Pi*rp*rp) +
		g.PoleLength/(mu*math.Pi*rpole*rpole) +
		(g.ShellLength-g.EndPlateThickness)/(mu*math.Pi*(ro*ro-ri*ri)) +
		math.Log(rm/(rp+g.SlidingGap))/(2*math.Pi*mu*g.EndPlateThickness) +
		math.Log(rm/rpole)/(2*math.Pi*mu*g.EndPlateThickness)
	return slide, iron
}

func TestPlungerSeriesCircuitHopkinson(t *testing.T) {
	t.Parallel()
	// source: magnetic Ohm's law (Hopkinson's law) Φ = N·I/Σℜ for a series
	// magnetic circuit, with ℜ = x/(µ0·A) for the gap (no fringing) and the
	// exact coaxial sliding-gap reluctance ln(r2/r1)/(2π·µ0·L).
	g := testPlungerGeometry()
	area := math.Pi * g.PlungerDiameter * g.PlungerDiameter / 4
	for _, muR := range []float64{1e7, 1500, 300} {
		p := mustPlunger(t, linearSteel(muR), WithoutFringing(), WithoutLeakage())
		slide, iron := seriesReluctance(g, muR)
		for _, x := range []float64{0.01e-3, 0.2e-3, 1.5e-3} {
			for _, i := range []float64{1e-3, 0.1, -0.3} {
				st, err := p.Solve(i, x)
				if err != nil {
					t.Fatal(err)
				}
				want := testPlungerTurns * i / (x/(Mu0*area) + slide + iron)
				if relErr(st.GapFlux, want) > 1e-10 || relErr(st.TotalFlux, want) > 1e-10 {
					t.Errorf("µr %g, i %g A, x %g m: Φg = %g Wb, Φt = %g Wb, want %g Wb", muR, i, x, st.GapFlux, st.TotalFlux, want)
				}
				if got := st.FluxLinkage; relErr(got, testPlungerTurns*want) > 1e-10 {
					t.Errorf("µr %g: λ = %g Wb, want N·Φ = %g Wb", muR, got, testPlungerTurns*want)
				}
				if muR == 1e7 {
					// Nearly ideal iron: Φ = µ0·N·I·A/x_total with the sliding
					// gap as its own equivalent air length; the iron's share
					// of the reluctance (1.3e-4 at 10 µm, less at larger gaps)
					// bounds the difference.
					xTotal := x + slide*Mu0*area
					ironShare := iron / (x/(Mu0*area) + slide)
					if got, want := st.GapFlux, Mu0*testPlungerTurns*i*area/xTotal; relErr(got, want) > 1.01*ironShare || ironShare > 2e-4 {
						t.Errorf("µr 1e7, i %g A, x %g m: Φg = %g Wb, want µ0·N·I·A/x_total = %g Wb", i, x, got, want)
					}
				}
			}
		}
	}
}

func TestPlungerIronReluctanceScalesInverselyWithMuR(t *testing.T) {
	t.Parallel()
	// source: ℜ = l/(µ0·µr·A) (Hopkinson's law): halving µr doubles the iron
	// reluctance; here taken from the solved circuit as N·I/Φ − ℜ_gap − ℜ_slide.
	g := testPlungerGeometry()
	area := math.Pi * g.PlungerDiameter * g.PlungerDiameter / 4
	const i, x = 0.05, 0.3e-3
	ironRel := func(muR float64) float64 {
		p := mustPlunger(t, linearSteel(muR), WithoutFringing(), WithoutLeakage())
		st, err := p.Solve(i, x)
		if err != nil {
			t.Fatal(err)
		}
		slide, _ := seriesReluctance(g, muR)
		return testPlungerTurns*i/st.GapFlux - x/(Mu0*area) - slide
	}
	r1, r2 := ironRel(1000), ironRel(2000)
	if got := r1 / r2; math.Abs(got-2) > 1e-6 {
		t.Errorf("ℜ_iron(µr 1000)/ℜ_iron(µr 2000) = %.9g, want 2", got)
	}
	if _, want := seriesReluctance(g, 1000); relErr(r1, want) > 1e-6 {
		t.Errorf("ℜ_iron(µr 1000) = %g 1/H, want %g 1/H", r1, want)
	}
}

// pullTable builds the full model's table on a current grid dense at low
// currents (λ bends early at small gaps) and 80 geometric gaps.
func pullTable(t testing.TB, p *PlungerMagnet) *Table {
	t.Helper()
	tb, err := p.BuildTable(append([]float64{0}, geomspace(1e-4, 0.4, 60)...), geomspace(0.02e-3, 2e-3, 80))
	if err != nil {
		t.Fatalf("BuildTable: %v", err)
	}
	return tb
}

// Table force accuracy on pullTable: the gap blend is second order in the
// gap step (table.go); measured worst error against the network's exact
// co-energy force 5.5e-3 with 40 gaps, 1.3e-3 with 80, 4.4e-4 with 160
// (about ×4 per halving). The bound leaves 2× margin at 80 gaps.
const pullTableTol = 3e-3

func TestPlungerForceIsMaxwellPull(t *testing.T) {
	t.Parallel()
	// source: for a lumped network whose only gap-dependent elements are
	// linear air permeances, the co-energy force is F = ½·F_gap²·(−dP/dx)
	// (virtual work; Fitzgerald & Kingsley, Electric Machinery, ch. 3), and
	// the face part ½·F_gap²·µ0·A/x² is Maxwell's pull B²·A/(2µ0) with
	// B = Φ_face/A (Maxwell stress on a flat pole face, any electromagnetics
	// text). The fringing part is µ0·d·π·t/(x·(x+π·t)) from
	// P_f = µ0·d·ln(1 + π·t/x); relative to the face part it is
	// 4·t·x/(d·(x + π·t)) → 0 as x → 0.
	p := mustPlunger(t, LowCarbonSteel())
	tb := pullTable(t, p)
	g := testPlungerGeometry()
	d := g.PlungerDiameter
	tf := g.WindingInnerRadius - d/2 // fringing side length of this geometry
	for _, x := range []float64{0.05e-3, 0.1e-3, 0.3e-3, 1e-3} {
		for _, i := range []float64{0.005, 0.02, 0.1, 0.3} {
			st, err := p.Solve(i, x)
			if err != nil {
				t.Fatal(err)
			}
			got := tb.Force(i, x)
			b := st.FaceFlux / st.FaceArea
			maxwell := b * b * st.FaceArea / (2 * Mu0)
			fringeRatio := 4 * tf * x / (d * (x + math.Pi*tf))
			network := maxwell * (1 + fringeRatio)
			if relErr(got, network) > pullTableTol {
				t.Errorf("x %g m, i %g A: table force %g N, want network co-energy force %g N", x, i, got, network)
			}
			// Small-gap limit: Maxwell's pull alone, within the fringing share
			// (≤ 1.6 % at x ≤ 0.1 mm here) plus the table tolerance.
			if x <= 0.1e-3 {
				if e := relErr(got, maxwell); e > fringeRatio+pullTableTol {
					t.Errorf("x %g m, i %g A: table force %g N, Maxwell pull %g N: rel %g > %g", x, i, got, maxwell, e, fringeRatio+pullTableTol)
				}
			}
		}
	}
}

func TestPlungerMatchesGapLaw(t *testing.T) {
	t.Parallel()
	// source: with linear steel and no fringing or leakage the circuit is
	// L(x) = N²/(ℜ_iron + ℜ_slide + x/(µ0·A)) (Hopkinson's law), exactly the
	// gap law of gaplaw.go; NewGapLawTurns built from the circuit's two end
	// inductances must reproduce it, and the table from the same circuit
	// must give the gap law's force within the table tolerance.
	const muR = 1500
	p := mustPlunger(t, linearSteel(muR), WithoutFringing(), WithoutLeakage())
	xMin, xMax := 0.05e-3, 2e-3
	ind := func(x float64) float64 {
		l, err := p.FluxLinkage(0.01, x)
		if err != nil {
			t.Fatal(err)
		}
		return l / 0.01
	}
	gl, err := NewGapLawTurns(ind(xMin), ind(xMax), xMin, xMax, testPlungerTurns, p.FaceArea())
	if err != nil {
		t.Fatalf("NewGapLawTurns: %v", err)
	}
	slide, iron := seriesReluctance(testPlungerGeometry(), muR)
	if r, _ := gl.IronReluctance(); relErr(r, slide+iron) > 1e-6 {
		t.Errorf("gap law iron reluctance %g 1/H, want sliding gap + iron %g 1/H", r, slide+iron)
	}
	if gl.Leakage() > 1e-9*ind(xMin) {
		t.Errorf("gap law leakage %g H, want 0", gl.Leakage())
	}
	gaps := geomspace(xMin, xMax, 120)
	tb, err := p.BuildTable(linspace(0, 0.5, 11), gaps)
	if err != nil {
		t.Fatal(err)
	}
	for _, x := range geomspace(gaps[1], gaps[118], 37) {
		if got, want := ind(x), gl.Inductance(x); relErr(got, want) > 1e-9 {
			t.Errorf("L(%g m) = %g H, gap law %g H", x, got, want)
		}
		for _, i := range []float64{0.05, 0.3} {
			if got, want := tb.Force(i, x), gl.Force(i, x); relErr(got, want) > pullTableTol {
				t.Errorf("table force at %g A, %g m = %g N, gap law %g N", i, x, got, want)
			}
		}
	}
}

func TestPlungerSaturation(t *testing.T) {
	t.Parallel()
	p := mustPlunger(t, LowCarbonSteel())
	tb := pullTable(t, p)
	const x = 0.5e-3
	// source: linear circuit F ∝ i² (co-energy ½·L·i²); with saturating steel
	// the flux, hence Maxwell's pull Φ²/(2µ0·A), grows slower than i.
	low := tb.Force(4e-3, x) / tb.Force(1e-3, x)
	high := tb.Force(0.4, x) / tb.Force(0.1, x)
	t.Logf("F(4i)/F(i) at %g m: %.3f at 1 mA, %.3f at 0.1 A", x, low, high)
	if math.Abs(low-16) > 0.16 {
		t.Errorf("F(4 mA)/F(1 mA) = %g, want ≈ 16 (unsaturated)", low)
	}
	if !(high < 10) {
		t.Errorf("F(0.4 A)/F(0.1 A) = %g, want clearly below 16 (saturated)", high)
	}
	// source: Frohlich–Kennelly law, |J| = |B − µ0·H| < Js in every part at
	// any current: B may exceed Js only by µ0·H.
	s := LowCarbonSteel()
	for _, i := range []float64{0.1, 1, 10, 1000} {
		for _, xx := range []float64{0.05e-3, x, 2e-3} {
			st, err := p.Solve(i, xx)
			if err != nil {
				t.Fatal(err)
			}
			bMax, part, err := p.SteelFluxDensity(i, xx)
			if err != nil {
				t.Fatal(err)
			}
			if i == 1 {
				t.Logf("i %g A, x %g m: largest steel flux density %.3f T in the %s", i, xx, bMax, part)
			}
			for _, q := range st.Parts {
				j := q.B - Mu0*q.H
				if !(j < s.Js) || !(q.B < s.Js+Mu0*q.H*(1+1e-12)) || math.Abs(q.B) > bMax {
					t.Errorf("i %g A, x %g m, %s: B %g T, H %g A/m, J %g T: want J < Js = %g T and B ≤ max %g T", i, xx, q.Part, q.B, q.H, j, s.Js, bMax)
				}
			}
		}
	}
}

func TestPlungerSaturationOnset(t *testing.T) {
	t.Parallel()
	// source: the definition in reluctance.go (∂λ/∂i falls to 80 % of its
	// low-current value), checked by central differences of FluxLinkage.
	p := mustPlunger(t, LowCarbonSteel())
	prev := 0.0
	for _, x := range []float64{0.05e-3, 0.5e-3, 1.5e-3} {
		on := p.SaturationOnset(x)
		if !(on > prev) || math.IsInf(on, 0) {
			t.Errorf("SaturationOnset(%g m) = %g A, want finite and above %g A (more gap, more MMF before the iron saturates)", x, on, prev)
		}
		i0 := 1e-3 / testPlungerTurns
		l0, _ := p.FluxLinkage(i0, x)
		l0 /= i0
		if got := p.incremental(on, x) / l0; math.Abs(got-PlungerSaturationFraction) > 1e-6 {
			t.Errorf("x %g m: ∂λ/∂i at onset %g A is %g of L0, want %g", x, on, got, PlungerSaturationFraction)
		}
		if got := p.incremental(0.9*on, x) / l0; !(got > PlungerSaturationFraction) {
			t.Errorf("x %g m: ∂λ/∂i at 0.9 × onset is %g of L0, want above %g", x, got, PlungerSaturationFraction)
		}
		prev = on
		t.Logf("saturation onset at %g m: %.4g A", x, on)
	}
	for _, x := range []float64{0, -1e-3, math.NaN(), math.Inf(1)} {
		if got := p.SaturationOnset(x); got != 0 {
			t.Errorf("SaturationOnset(%g) = %g, want 0 for an invalid gap", x, got)
		}
	}
}

func TestPlungerTableClosedCycle(t *testing.T) {
	t.Parallel()
	// source: energy conservation, ∮(i dλ − F_x dx) = 0 for a lossless
	// magnetic system (Fitzgerald & Kingsley, Electric Machinery, ch. 3),
	// as in TestModelClosedCycleNoNetWork; the cycle runs into saturation.
	const (
		steps    = 20000
		cycleTol = 1e-6
	)
	p := mustPlunger(t, LowCarbonSteel())
	tb, err := p.BuildTable(linspace(0, 0.5, 41), geomspace(0.05e-3, 1.5e-3, 40))
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := tb.GapRange()
	corners := [][2]float64{{0, hi}, {0.4, hi}, {0.4, lo}, {0, lo}}
	elec, mech, scale := cycleWork(tb, corners, steps)
	if d := elec - mech; math.Abs(d) > cycleTol*scale {
		t.Errorf("∮(i dλ − F_x dx) = %g J − %g J = %g J, want 0 within %g J", elec, mech, d, cycleTol*scale)
	}
	if mech < 0.1*scale {
		t.Errorf("mechanical work per cycle %g J, want a sizeable part of %g J", mech, scale)
	}
}

func TestPlungerOddAndFinite(t *testing.T) {
	t.Parallel()
	tb, err := NewBHTable(testBHH, testBHB)
	if err != nil {
		t.Fatal(err)
	}
	for _, steel := range []BHCurve{LowCarbonSteel(), tb, linearSteel(1e7)} {
		p := mustPlunger(t, steel)
		for _, i := range []float64{1e-12, 0.01, 1, 1e3, 1e6} {
			for _, x := range []float64{1e-9, 1e-4, 1e-2, 1} {
				a, err1 := p.FluxLinkage(i, x)
				b, err2 := p.FluxLinkage(-i, x)
				if err1 != nil || err2 != nil || !isFinite(a) || !(a > 0) || b != -a {
					t.Errorf("%T: λ(±%g A, %g m) = %g, %g (%v, %v), want finite, positive and odd", steel, i, x, a, b, err1, err2)
				}
				st, _ := p.Solve(i, x)
				for _, q := range st.Parts {
					// The solve must satisfy the network: B(H(B)) of every part.
					if !isFinite(q.B) || !isFinite(q.H) || relErr(steel.B(q.H), q.B) > 1e-9 {
						t.Errorf("%T at %g A, %g m: %s B %g T, H %g A/m", steel, i, x, q.Part, q.B, q.H)
					}
				}
			}
		}
		if l, err := p.FluxLinkage(0, 1e-3); err != nil || l != 0 {
			t.Errorf("λ(0) = %g, %v; want 0", l, err)
		}
	}
}

func TestPlungerSolveBalancesMMF(t *testing.T) {
	t.Parallel()
	// source: Ampère's circuital law around the network, Σ H·l + Σ Φ·ℜ = N·i
	// (the equation solved), re-evaluated from the returned fluxes.
	p := mustPlunger(t, LowCarbonSteel())
	for _, i := range []float64{0.01, 0.2, 3} {
		for _, x := range []float64{0.05e-3, 1e-3} {
			st, err := p.Solve(i, x)
			if err != nil {
				t.Fatal(err)
			}
			fg, gap := p.branchMMF(st.GapFlux, x)
			total := fg + p.seriesMMF(st.TotalFlux)
			if relErr(total, testPlungerTurns*i) > 1e-12 || relErr(gap, st.GapMMF) > 1e-15 {
				t.Errorf("i %g A, x %g m: MMF sum %g A, want N·i = %g A", i, x, total, testPlungerTurns*i)
			}
		}
	}
}

func TestPlungerErrors(t *testing.T) {
	t.Parallel()
	p := mustPlunger(t, LowCarbonSteel())
	for _, c := range []struct{ i, x float64 }{{math.NaN(), 1e-3}, {math.Inf(1), 1e-3}, {1, 0}, {1, -1e-3}, {1, math.NaN()}, {1, math.Inf(1)}} {
		if _, err := p.FluxLinkage(c.i, c.x); err == nil || !strings.HasPrefix(err.Error(), "magnet: plunger: ") {
			t.Errorf("FluxLinkage(%g, %g): err = %v, want a magnet: plunger: error", c.i, c.x, err)
		}
		if _, _, err := p.SteelFluxDensity(c.i, c.x); err == nil {
			t.Errorf("SteelFluxDensity(%g, %g): want an error", c.i, c.x)
		}
	}
	if _, err := p.BuildTable([]float64{0, 1}, []float64{0, 1e-3}); err == nil || !strings.Contains(err.Error(), "working gap must be positive") {
		t.Errorf("BuildTable with a zero gap: err = %v", err)
	}
	if _, err := p.BuildTable([]float64{0.1, 1}, []float64{1e-4, 1e-3}); err == nil || !strings.Contains(err.Error(), "first current must be 0") {
		t.Errorf("BuildTable without 0 A: err = %v", err)
	}
	if _, err := p.BuildTable([]float64{0}, []float64{1e-4, 1e-3}); err == nil {
		t.Error("BuildTable with one current: want an error")
	}
	g := testPlungerGeometry()
	for _, c := range []struct {
		steel BHCurve
		turns float64
		want  string
	}{
		{nil, 100, "steel B–H law is missing"},
		{FrohlichKennelly{Js: 0, MuRInitial: 1000}, 100, "saturation polarization"},
		{FrohlichKennelly{Js: 2, MuRInitial: 1}, 100, "initial relative permeability"},
		{LowCarbonSteel(), 0, "turns"},
		{LowCarbonSteel(), math.NaN(), "turns"},
		{LowCarbonSteel(), math.Inf(1), "turns"},
	} {
		if _, err := NewPlungerMagnet(g, c.steel, c.turns); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("NewPlungerMagnet(%v, %g): err = %v, want %q", c.steel, c.turns, err, c.want)
		}
	}
}

func TestPlungerGeometryValidate(t *testing.T) {
	t.Parallel()
	if err := testPlungerGeometry().Validate(); err != nil {
		t.Fatalf("valid geometry: %v", err)
	}
	cases := []struct {
		name string
		edit func(*PlungerGeometry)
		want string
	}{
		{"zero plunger", func(g *PlungerGeometry) { g.PlungerDiameter = 0 }, "plunger diameter must be positive"},
		{"NaN pole", func(g *PlungerGeometry) { g.PoleLength = math.NaN() }, "pole length must be positive"},
		{"inf shell", func(g *PlungerGeometry) { g.ShellLength = math.Inf(1) }, "shell length must be positive"},
		{"negative gap", func(g *PlungerGeometry) { g.SlidingGap = -1e-5 }, "sliding gap must be positive"},
		{"zero winding length", func(g *PlungerGeometry) { g.WindingLength = 0 }, "the winding's length must be positive"},
		{"wall too thick", func(g *PlungerGeometry) { g.ShellWall = 16e-3 }, "shell wall 16 mm must be less than half the shell outer diameter, 16 mm"},
		{"plunger too fat", func(g *PlungerGeometry) { g.PlungerDiameter = 9.95e-3 }, "must fit in the coil bore"},
		{"pole too fat", func(g *PlungerGeometry) { g.PoleDiameter = 11e-3 }, "pole diameter 11 mm must fit in the coil bore, the winding's inner diameter 10 mm"},
		{"winding inverted", func(g *PlungerGeometry) { g.WindingOuterRadius = 4.5e-3; g.WindingInnerRadius = 5e-3 }, "the winding's outer diameter 9 mm must exceed its inner diameter 10 mm"},
		{"winding outside shell", func(g *PlungerGeometry) { g.WindingOuterRadius = 15e-3 }, "fit inside the shell"},
		{"plates too thick", func(g *PlungerGeometry) { g.EndPlateThickness = 14e-3 }, "two end plates"},
		{"winding too long", func(g *PlungerGeometry) { g.WindingLength = 24e-3 }, "fit between the end plates"},
		{"pole too long", func(g *PlungerGeometry) { g.PoleLength = 23e-3 }, "room for the working gap"},
	}
	for _, c := range cases {
		g := testPlungerGeometry()
		c.edit(&g)
		err := g.Validate()
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: plunger geometry: ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err = %v, want %q", c.name, err, c.want)
		}
		// No Go field names (PlungerDiameter, WindingInnerRadius) in messages.
		if err != nil && camelCase.MatchString(err.Error()) {
			t.Errorf("%s: err = %v names an internal field", c.name, err)
		}
		if _, err2 := NewPlungerMagnet(g, LowCarbonSteel(), 100); err2 == nil || err2.Error() != err.Error() {
			t.Errorf("%s: NewPlungerMagnet err = %v, want %v", c.name, err2, err)
		}
	}
}

func BenchmarkBuildTable40x40(b *testing.B) {
	p := mustPlunger(b, LowCarbonSteel())
	cur := linspace(0, 1, 40)
	gaps := geomspace(0.05e-3, 1.5e-3, 40)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := p.BuildTable(cur, gaps); err != nil {
			b.Fatal(err)
		}
	}
}

// camelCase matches a Go-style identifier with an inner capital letter
// (ShellWall, WindingInnerRadius), which a user's message must not show.
var camelCase = regexp.MustCompile(`\b[A-Za-z][a-z]+[A-Z][a-z]+`)

func TestPlungerGapFluxDensity(t *testing.T) {
	t.Parallel()
	// source: magnetic Ohm's law (Hopkinson's law) for the series circuit
	// without fringing and leakage, Φ = N·I/Σℜ (as in
	// TestPlungerSeriesCircuitHopkinson), and B = Φ/A over the face area
	// π·(d/2)² of the 8 mm plunger.
	g := testPlungerGeometry()
	area := math.Pi * g.PlungerDiameter * g.PlungerDiameter / 4
	p := mustPlunger(t, linearSteel(1500), WithoutFringing(), WithoutLeakage())
	slide, iron := seriesReluctance(g, 1500)
	for _, x := range []float64{0.05e-3, 1.5e-3} {
		for _, i := range []float64{0.1, -0.3} {
			b, err := p.GapFluxDensity(i, x)
			if err != nil {
				t.Fatal(err)
			}
			if want := testPlungerTurns * i / (x/(Mu0*area) + slide + iron) / area; relErr(b, want) > 1e-10 {
				t.Errorf("x %g m, i %g A: B = %g T, want Φ/A = %g T", x, i, b, want)
			}
		}
	}
	// With fringing and saturating steel: B = µ0·F_gap/x, the uniform
	// field between flat faces (H = F/x across the gap, B = µ0·H), from the
	// solved gap MMF; not the gap flux, which includes the fringing.
	q := mustPlunger(t, LowCarbonSteel())
	for _, x := range []float64{0.05e-3, 1.5e-3} {
		st, err := q.Solve(0.3, x)
		if err != nil {
			t.Fatal(err)
		}
		b, err := q.GapFluxDensity(0.3, x)
		if err != nil {
			t.Fatal(err)
		}
		if want := Mu0 * st.GapMMF / x; relErr(b, want) > 1e-12 {
			t.Errorf("x %g m: B = %g T, want µ0·F_gap/x = %g T", x, b, want)
		}
		if !(b*area < st.GapFlux) {
			t.Errorf("x %g m: face flux %g Wb not below the gap flux %g Wb (fringing)", x, b*area, st.GapFlux)
		}
	}
	if _, err := q.GapFluxDensity(0.3, 0); err == nil {
		t.Error("gap 0 accepted")
	}
}
