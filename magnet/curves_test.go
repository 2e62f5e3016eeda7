package magnet

import (
	"errors"
	"math"
	"os"
	"strings"
	"testing"
)

// curvesOf samples model m's force at the currents over the gaps into
// force curves.
func curvesOf(m Model, currents, gaps []float64) []ForceCurve {
	var cs []ForceCurve
	for _, i := range currents {
		c := ForceCurve{Current: i, Gaps: gaps, Forces: make([]float64, len(gaps))}
		for j, x := range gaps {
			c.Forces[j] = m.Force(i, x)
		}
		cs = append(cs, c)
	}
	return cs
}

// gapLawCurves is the reference gap law's force at 0.6, 1.5 and 3 A on 120
// geometrically spaced gaps, with the open-gap inductance, as a
// CurveModel.
func gapLawCurves(t testing.TB, g *GapLaw, currents []float64) *CurveModel {
	t.Helper()
	m, err := NewCurveModel(curvesOf(g, currents, geomspace(refXMin, refXMax, 120)), g.Inductance(refXMax), refXMin, refXMax)
	if err != nil {
		t.Fatalf("NewCurveModel: %v", err)
	}
	return m
}

// saturatingCurves is the saturating table's force at three currents, with
// its small-signal inductance at the open gap.
func saturatingCurves(t testing.TB) *CurveModel {
	t.Helper()
	tb := saturatingTable(t)
	lo := tb.FluxLinkage(1e-6, refXMax) / 1e-6
	m, err := NewCurveModel(curvesOf(tb, []float64{0.5, 1.5, 3}, geomspace(refXMin, refXMax, 30)), lo, refXMin, refXMax)
	if err != nil {
		t.Fatalf("NewCurveModel: %v", err)
	}
	return m
}

// saturatingCurvesLinear is the saturating table's force at 0.1, 0.2, 2
// and 3 A: the wide step from 0.2 to 2 A across the knee leaves the
// quadratic spline without a rising λ at the seat, so the model takes the
// piecewise-linear λ.
func saturatingCurvesLinear(t testing.TB) *CurveModel {
	t.Helper()
	tb := saturatingTable(t)
	lo := tb.FluxLinkage(1e-6, refXMax) / 1e-6
	m, err := NewCurveModel(curvesOf(tb, []float64{0.1, 0.2, 2, 3}, geomspace(refXMin, refXMax, 30)), lo, refXMin, refXMax)
	if err != nil {
		t.Fatalf("NewCurveModel: %v", err)
	}
	return m
}

// TestCurveModelScheme: the smooth spline where it keeps λ rising, the
// piecewise-linear λ where it would not (a passive magnet's flux linkage
// rises with the current, any electromechanics text), and λ rises with i
// at every gap either way.
func TestCurveModelScheme(t *testing.T) {
	t.Parallel()
	if m := saturatingCurves(t); !m.Smooth() {
		t.Errorf("%v: want the smooth spline", m)
	}
	m := saturatingCurvesLinear(t)
	if m.Smooth() {
		t.Errorf("%v: want the piecewise-linear λ (the spline's λ falls at the seat)", m)
	}
	for _, mm := range []*CurveModel{saturatingCurves(t), m} {
		for _, x := range linspace(refXMin, refXMax, 23) {
			prev := -1.0
			for _, i := range linspace(0, 4, 400) {
				l := mm.FluxLinkage(i, x)
				if !(l > prev) && i > 0 {
					t.Errorf("%v: λ(%g, %g) = %g does not rise from %g", mm, i, x, l, prev)
					break
				}
				prev = l
			}
		}
	}
}

// TestCurveModelGapLaw: curves generated from the gap law at three currents
// rebuild the gap law: inductance λ/i and force within 1e-4 at currents up
// to the highest curve's, between the curves' points too. Source: the gap
// law L(x) = L_leak + 1/(a + b·x) with F = ½·i²·|dL/dx| (co-energy
// principle, Fitzgerald & Kingsley, Electric Machinery, ch. 3); the
// model's L(x) = L_o + 2·∫_x^x_o F/i² ds is its integral form.
func TestCurveModelGapLaw(t *testing.T) {
	t.Parallel()
	const tol = 1e-4
	g := refGapLaw(t)
	for _, currents := range [][]float64{{0.6, 1.5, 3}, {1.2}} {
		m := gapLawCurves(t, g, currents)
		top := currents[len(currents)-1]
		worstL, worstF := 0.0, 0.0
		for _, i := range []float64{1e-3, 0.3, 0.6, 1.0, 1.5, 2.2, top} {
			if i > top {
				continue
			}
			for _, x := range linspace(refXMin, refXMax, 97) {
				worstL = math.Max(worstL, relErr(m.FluxLinkage(i, x)/i, g.Inductance(x)))
				worstF = math.Max(worstF, relErr(m.Force(i, x), g.Force(i, x)))
			}
		}
		if worstL > tol || worstF > tol {
			t.Errorf("%v: inductance off by %.2g, force by %.2g (relative); want ≤ %g", m, worstL, worstF, tol)
		}
		t.Logf("%v: largest error of L %.2g, of F %.2g", m, worstL, worstF)
	}
}

// TestCurveModelSingleCurveLinear: with one curve the model is linear in
// the current at every gap (λ(2i) = 2·λ(i), F(2i) = 4·F(i)), as the
// issue's definition of the single-curve model L(x) = L_o + 2·∫F/i² asks;
// with two curves that scale with i² (a linear magnet) it stays linear up
// to the highest curve.
func TestCurveModelSingleCurveLinear(t *testing.T) {
	t.Parallel()
	g := refGapLaw(t)
	for _, currents := range [][]float64{{1.0}, {1.0, 2.0}} {
		m := gapLawCurves(t, g, currents)
		for _, x := range linspace(refXMin, refXMax, 11) {
			for _, i := range []float64{0.01, 0.3, 1.0} {
				if r := m.FluxLinkage(2*i, x) / m.FluxLinkage(i, x); math.Abs(r-2) > 1e-12 {
					t.Errorf("%v: λ(%g)/λ(%g) at %g m = %.15g, want 2", m, 2*i, i, x, r)
				}
				if r := m.Force(2*i, x) / m.Force(i, x); math.Abs(r-4) > 1e-11 {
					t.Errorf("%v: F(%g)/F(%g) at %g m = %.15g, want 4", m, 2*i, i, x, r)
				}
			}
		}
	}
}

// TestCurveModelForceAtData: at a curve's current the model's force is the
// curve's data at its points, to rounding, for data that saturate.
func TestCurveModelForceAtData(t *testing.T) {
	t.Parallel()
	tb := saturatingTable(t)
	for _, tc := range []struct {
		currents []float64
		m        *CurveModel
	}{{[]float64{0.5, 1.5, 3}, saturatingCurves(t)}, {[]float64{0.1, 0.2, 2, 3}, saturatingCurvesLinear(t)}} {
		for _, c := range curvesOf(tb, tc.currents, geomspace(refXMin, refXMax, 30)) {
			for j, x := range c.Gaps {
				if got := tc.m.Force(c.Current, x); relErr(got, c.Forces[j]) > 1e-12 {
					t.Errorf("%v: Force(%g, %g) = %.15g, the curve's point is %.15g", tc.m, c.Current, x, got, c.Forces[j])
				}
			}
		}
	}
}

// TestCurveModelDoorLatchTable: curves taken from the door-latch demo's
// saturating flux-linkage table (its force at 1, 2 and 4 A on 40 gaps)
// rebuild that table's force within 1 % over the stroke at those
// currents. Source: the table model's own force, −∂W'/∂x of its co-energy
// (the co-energy principle, Fitzgerald & Kingsley ch. 3); the comparison
// checks the curve model's gap interpolation and integration, the two
// models being built differently (λ(i, x) grid against F(x) curves).
func TestCurveModelDoorLatchTable(t *testing.T) {
	t.Parallel()
	f, err := os.Open("../scenarios/door-latch-flux.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	tb, err := ReadTableCSV(f, "door-latch-flux.csv", Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"mWb", 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	xMin, xMax := 0.1e-3, 4e-3 // the door latch's stroke (scenarios/door-latch-tvs-table.yaml)
	lo := tb.FluxLinkage(1e-6, xMax) / 1e-6
	currents := []float64{1, 2, 4}
	m, err := NewCurveModel(curvesOf(tb, currents, geomspace(xMin, xMax, 40)), lo, xMin, xMax)
	if err != nil {
		t.Fatal(err)
	}
	for _, i := range currents {
		worst := 0.0
		for _, x := range linspace(xMin, xMax, 200) {
			worst = math.Max(worst, relErr(m.Force(i, x), tb.Force(i, x)))
		}
		if worst > 0.01 {
			t.Errorf("at %g A the force is off the table's by up to %.3g (relative), want ≤ 1 %%", i, worst)
		}
		t.Logf("at %g A: largest force error %.2g", i, worst)
	}
}

// simpson integrates f over [a, b] with n (even) intervals (composite
// Simpson rule, any numerical analysis text).
func simpson(f func(float64) float64, a, b float64, n int) float64 {
	h := (b - a) / float64(n)
	s := f(a) + f(b)
	for k := 1; k < n; k++ {
		w := 2.0
		if k%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(k)*h)
	}
	return s * h / 3
}

// TestCurveModelClosedCycle: a plunger driven around a closed cycle in
// (i, x) — current up at the open gap, pulled in at that current, current
// down at the seated gap, back to the open gap with no current — gives out
// as work exactly the electrical energy it took: ∮ (λ di − F dx) = 0
// (the co-energy W' is a state function, dW' = λ di − F dx; Fitzgerald &
// Kingsley ch. 3), within 1e-9 of the cycle's work, for saturating curves.
func TestCurveModelClosedCycle(t *testing.T) {
	t.Parallel()
	for _, m := range []*CurveModel{saturatingCurves(t), saturatingCurvesLinear(t), gapLawCurves(t, refGapLaw(t), []float64{0.6, 1.5, 3})} {
		const steps = 20000
		i1 := refTestAmps
		up := simpson(func(i float64) float64 { return m.FluxLinkage(i, refXMax) }, 0, i1, steps)
		down := simpson(func(i float64) float64 { return m.FluxLinkage(i, refXMin) }, 0, i1, steps)
		work := simpson(func(x float64) float64 { return m.Force(i1, x) }, refXMin, refXMax, steps)
		// λ di along up and down, −F dx along the stroke (x falls: +∫F dx)
		residual := up + work - down
		t.Logf("residual %g work %g", residual, work)
		if math.Abs(residual) > 1e-9*work {
			t.Errorf("%v: ∮(λ di − F dx) = %g J on a cycle of %g J of work, want 0 within 1e-9", m, residual, work)
		}
		if work <= 0 {
			t.Errorf("%v: no work on the cycle", m)
		}
	}
}

// TestCurveModelBadCurves: curves that cannot come from a passive magnet,
// or cannot be interpolated, are refused with the curve and point named.
func TestCurveModelBadCurves(t *testing.T) {
	t.Parallel()
	gaps := []float64{0.2e-3, 0.5e-3, 1e-3}
	ok := func() []ForceCurve {
		return []ForceCurve{
			{Current: 0.5, Gaps: append([]float64(nil), gaps...), Forces: []float64{8, 4, 2}},
			{Current: 1.0, Gaps: append([]float64(nil), gaps...), Forces: []float64{20, 10, 6}},
		}
	}
	if _, err := NewCurveModel(ok(), 0.1, 0.1e-3, 1e-3); err != nil {
		t.Fatalf("good curves: %v", err)
	}
	for _, tc := range []struct {
		name        string
		edit        func([]ForceCurve) []ForceCurve
		curve, pt   int
		msgContains string
	}{
		{"gap not rising", func(c []ForceCurve) []ForceCurve { c[1].Gaps[2] = 0.4e-3; return c }, 1, 2, "must rise"},
		{"negative force", func(c []ForceCurve) []ForceCurve { c[0].Forces[1] = -1; return c }, 0, 1, "≥ 0"},
		{"current falls", func(c []ForceCurve) []ForceCurve { c[1].Current = 0.4; return c }, 1, 0, "not above the previous"},
		{"one point", func(c []ForceCurve) []ForceCurve {
			c[0].Gaps, c[0].Forces = c[0].Gaps[:1], c[0].Forces[:1]
			return c
		}, 0, 0, "at least two"},
		{"pull falls as current rises", func(c []ForceCurve) []ForceCurve { c[1].Forces[1] = 3; return c }, 1, 1, "cannot fall when the current rises"},
		{"outside the stroke", func(c []ForceCurve) []ForceCurve {
			c[0].Gaps = []float64{2e-3, 3e-3, 4e-3}
			return c
		}, 0, -1, "outside the stroke"},
	} {
		_, err := NewCurveModel(tc.edit(ok()), 0.1, 0.1e-3, 1e-3)
		var ce *CurveError
		if !errors.As(err, &ce) || ce.Curve != tc.curve || ce.Point != tc.pt || !strings.Contains(ce.Msg, tc.msgContains) {
			t.Errorf("%s: err = %#v, want curve %d point %d with %q", tc.name, err, tc.curve, tc.pt, tc.msgContains)
		}
	}
}

// BenchmarkCurveModelBuild3x20: building the model from three curves of
// 20 points.
func BenchmarkCurveModelBuild3x20(b *testing.B) {
	g := refGapLaw(b)
	cs := curvesOf(g, []float64{0.6, 1.5, 3}, geomspace(refXMin, refXMax, 20))
	lo := g.Inductance(refXMax)
	for b.Loop() {
		if _, err := NewCurveModel(cs, lo, refXMin, refXMax); err != nil {
			b.Fatal(err)
		}
	}
}

// TestCurveModelRoundTripAndPartials: Current inverts FluxLinkage, and
// Partials are the derivatives of Current (central differences; the
// implicit-function theorem for the inverse), for the smooth, the
// piecewise-linear and the one-curve models.
func TestCurveModelRoundTripAndPartials(t *testing.T) {
	t.Parallel()
	g := refGapLaw(t)
	for _, m := range []*CurveModel{saturatingCurves(t), saturatingCurvesLinear(t), gapLawCurves(t, g, []float64{1.2}), gapLawCurves(t, g, []float64{0.6, 1.5, 3})} {
		for _, x := range linspace(refXMin, refXMax, 9)[1:8] {
			for _, i := range []float64{0.037, 0.41, 1.13, 2.71, 4.4} {
				lam := m.FluxLinkage(i, x)
				if got := m.Current(lam, x); relErr(got, i) > 1e-12 {
					t.Errorf("%v: Current(FluxLinkage(%g, %g)) = %.15g", m, i, x, got)
				}
				checkPartials(t, m, lam, x)
			}
		}
	}
}

// TestCurveModelCurrentForce: CurrentForce is Current then Force, bit for
// bit (one profile instead of two), for the smooth and the piecewise-linear
// scheme, at gaps inside and outside the range and currents of both signs.
func TestCurveModelCurrentForce(t *testing.T) {
	t.Parallel()
	for _, m := range []*CurveModel{saturatingCurves(t), saturatingCurvesLinear(t), gapLawCurves(t, refGapLaw(t), []float64{1.2})} {
		for _, x := range []float64{0.5 * refXMin, refXMin, 0.37 * (refXMin + refXMax), refXMax, 1.2 * refXMax} {
			for _, i := range []float64{-2.5, -0.3, 0, 0.05, 0.9, 2.2, 4.5} {
				lam := m.FluxLinkage(i, x)
				ci, cf := m.CurrentForce(lam, x)
				wi := m.Current(lam, x)
				if wf := m.Force(wi, x); ci != wi || cf != wf {
					t.Errorf("%v: CurrentForce(%g, %g) = (%g, %g), Current and Force (%g, %g)", m, lam, x, ci, cf, wi, wf)
				}
			}
		}
	}
}
