package magnet

import (
	"math"
	"testing"
)

// Reference magnetic circuit used across the tests (chosen, not measured):
// N = 1000 turns on a 50 mm² pole, leakage 5 mH, iron reluctance 2e6 1/H
// (the reluctance of about 0.13 mm of air on that pole), stroke 0.1–3 mm.
const (
	refTurns    = 1000.0
	refArea     = 50e-6  // m²
	refLeak     = 5e-3   // H
	refIronRel  = 2e6    // 1/H
	refXMin     = 0.1e-3 // m
	refXMax     = 3e-3   // m
	refMaxAmps  = 3.0    // A, top of the sampled tables
	refTestAmps = 2.3    // A, a current inside the tables
)

// circuitInductance is the magnetic-circuit inductance
// L = L_leak + N²/(ℜ_iron + x/(µ0·A)) (reluctance model, any
// electromagnetics text, e.g. Hayt, Engineering Electromagnetics, magnetic
// circuits), computed directly for construction and cross-checks.
func circuitInductance(leak, turns, ironRel, area, x float64) float64 {
	return leak + turns*turns/(ironRel+x/(Mu0*area))
}

func refGapLaw(t testing.TB) *GapLaw {
	t.Helper()
	lc := circuitInductance(refLeak, refTurns, refIronRel, refArea, refXMin)
	lo := circuitInductance(refLeak, refTurns, refIronRel, refArea, refXMax)
	g, err := NewGapLawTurns(lc, lo, refXMin, refXMax, refTurns, refArea)
	if err != nil {
		t.Fatalf("NewGapLawTurns: %v", err)
	}
	return g
}

// linspace returns n points from a to b.
func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for k := range v {
		v[k] = a + (b-a)*float64(k)/float64(n-1)
	}
	v[n-1] = b
	return v
}

// geomspace returns n points from a to b in geometric progression.
func geomspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for k := range v {
		v[k] = a * math.Pow(b/a, float64(k)/float64(n-1))
	}
	v[0], v[n-1] = a, b
	return v
}

// sampleTable samples lam(i, x) on the grid and builds a Table.
func sampleTable(t testing.TB, currents, gaps []float64, lam func(i, x float64) float64) *Table {
	t.Helper()
	flux := make([][]float64, len(currents))
	for k, i := range currents {
		flux[k] = make([]float64, len(gaps))
		for j, x := range gaps {
			flux[k][j] = lam(i, x)
		}
	}
	tb, err := NewTable(currents, gaps, flux)
	if err != nil {
		t.Fatalf("NewTable: %v", err)
	}
	return tb
}

// gapLawTable samples the reference gap law on nI currents × nX
// geometrically spaced gaps.
func gapLawTable(t testing.TB, g *GapLaw, nI, nX int) *Table {
	t.Helper()
	return sampleTable(t, linspace(0, refMaxAmps, nI), geomspace(refXMin, refXMax, nX), g.FluxLinkage)
}

// saturatingFlux is invented input data with iron saturation,
// λ = L_leak·i + λs·tanh(L_g(x)·i/λs), used only where a test compares the
// model with itself (co-energy principle, energy conservation).
func saturatingFlux(i, x float64) float64 {
	const lamSat = 0.12 // Wb
	lg := circuitInductance(0, refTurns, refIronRel, refArea, x)
	return refLeak*i + lamSat*math.Tanh(lg*i/lamSat)
}

func saturatingTable(t testing.TB) *Table {
	t.Helper()
	return sampleTable(t, linspace(0, refMaxAmps, 30), geomspace(refXMin, refXMax, 25), saturatingFlux)
}

// relErr returns |got − want| / |want| (|got − want| when want is 0).
func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// namedModel pairs a model with a test name; pm marks a model with a
// permanent magnet (λ(0, x) ≠ 0, not odd in i), which the generic tests
// check about its own zero-flux current and at negative currents.
type namedModel struct {
	name string
	m    Model
	pm   bool
}

func testModels(t testing.TB) []namedModel {
	g := refGapLaw(t)
	return []namedModel{
		{"gap law", g, false},
		{"gap law no leakage", mustGapLaw(t), false},
		{"table of gap law", gapLawTable(t, g, 30, 25), false},
		{"saturating table", saturatingTable(t), false},
		{"curves of gap law", gapLawCurves(t, g, []float64{0.6, 1.5, 3}), false},
		{"one curve of gap law", gapLawCurves(t, g, []float64{1.2}), false},
		{"curves of saturating table", saturatingCurves(t), false},
		{"piecewise-linear curves of saturating table", saturatingCurvesLinear(t), false},
		{"gap law with magnet", refLatchLaw(t), true},
		{"table of gap law with magnet", latchTable(t, refLatchLaw(t), 41, 25), true},
	}
}

// latchTable samples gap law g (with a magnet) on nI currents from
// −refMaxAmps to refMaxAmps × nX geometrically spaced gaps: a signed table
// with the magnet's offset.
func latchTable(t testing.TB, g *GapLaw, nI, nX int) *Table {
	t.Helper()
	return sampleTable(t, linspace(-refMaxAmps, refMaxAmps, nI), geomspace(refXMin, refXMax, nX), g.FluxLinkage)
}

// refMagnetMMF is the reference magnet's MMF (A, ampere-turns; chosen):
// 0.8 A over the reference turns.
const refMagnetMMF = 800.0

// refLatchLaw is the reference gap law with the reference magnet.
func refLatchLaw(t testing.TB) *GapLaw {
	t.Helper()
	g, err := refGapLaw(t).WithMagnet(refMagnetMMF)
	if err != nil {
		t.Fatalf("WithMagnet: %v", err)
	}
	return g
}

func mustGapLaw(t testing.TB) *GapLaw {
	t.Helper()
	g, err := NewGapLaw(0.35, 0.06, refXMin, refXMax)
	if err != nil {
		t.Fatalf("NewGapLaw: %v", err)
	}
	return g
}

// cycleWork integrates around the closed path through the corners in
// (i, x), each side split into n straight steps, by the trapezoid rule on
// the Stieltjes sums: elec = ∮ i dλ (J, electrical input) and mech =
// ∮ F·(−dx) (J, work done by the pull, Force being toward smaller x, i.e.
// ∮ F_x dx with F_x = −Force the force along +x); scale is the largest
// co-energy met (J).
func cycleWork(m Model, corners [][2]float64, n int) (elec, mech, scale float64) {
	for c := range corners {
		a, b := corners[c], corners[(c+1)%len(corners)]
		iPrev, xPrev := a[0], a[1]
		lPrev, fPrev := m.FluxLinkage(iPrev, xPrev), m.Force(iPrev, xPrev)
		for s := 1; s <= n; s++ {
			u := float64(s) / float64(n)
			i, x := a[0]+(b[0]-a[0])*u, a[1]+(b[1]-a[1])*u
			l, f := m.FluxLinkage(i, x), m.Force(i, x)
			elec += 0.5 * (i + iPrev) * (l - lPrev)
			mech -= 0.5 * (f + fPrev) * (x - xPrev)
			scale = math.Max(scale, math.Abs(m.CoEnergy(i, x)))
			iPrev, xPrev, lPrev, fPrev = i, x, l, f
		}
	}
	return elec, mech, scale
}
