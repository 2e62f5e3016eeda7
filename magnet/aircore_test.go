package magnet

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

// loopAxisField is the on-axis flux density (T) of a circular loop of
// radius r (m) carrying current i (A) at axial distance z (m):
// B = µ0·I·R²/(2·(R² + z²)^{3/2}) (Biot–Savart law for a loop, e.g.
// Griffiths, Introduction to Electrodynamics, ch. 5).
func loopAxisField(i, r, z float64) float64 {
	return Mu0 * i * r * r / (2 * math.Pow(r*r+z*z, 1.5))
}

func TestCentreFieldMatchesLoopSum(t *testing.T) {
	t.Parallel()
	// source: Biot–Savart on-axis loop field, summed over the turns of a
	// thin solenoid: n loops at the midpoints of n equal slices (midpoint
	// rule, error ~ (l/n)² ≪ 1e-6 for n = 2e5).
	const n = 200000
	for _, g := range []struct{ l, d float64 }{
		{0.02, 0.01}, {0.01, 0.02}, {0.05, 0.005}, {0.002, 0.03},
	} {
		const current = 1.7
		var sum float64
		for k := 0; k < n; k++ {
			z := (float64(k)+0.5)/n*g.l - g.l/2
			sum += loopAxisField(current, g.d/2, z)
		}
		got := CentreField(n, current, g.l, g.d)
		if e := relErr(got, sum); e > 1e-6 {
			t.Errorf("CentreField(l=%g, d=%g) = %g T, loop sum %g T: relative error %g > 1e-6", g.l, g.d, got, sum, e)
		}
	}
}

func TestCentreFieldLimits(t *testing.T) {
	t.Parallel()
	const turns, current = 1000, 0.5
	// source: long-solenoid field µ0·n·I (Ampère's law, any
	// electromagnetics text); the end effect is of order (d/l)².
	for _, ratio := range []float64{10, 100, 1000} {
		d := 0.01
		l := ratio * d
		got := CentreField(turns, current, l, d)
		want := Mu0 * turns / l * current
		if e := relErr(got, want); e > 1/(ratio*ratio) {
			t.Errorf("CentreField(l/d = %g) = %g T, long limit %g T: relative %g > (d/l)²", ratio, got, want, e)
		}
	}
	// source: Biot–Savart, field at the centre of a loop µ0·I/(2R): a coil
	// of zero length is N loops.
	if got, want := CentreField(turns, current, 0, 0.02), turns*loopAxisField(current, 0.01, 0); relErr(got, want) > 1e-12 {
		t.Errorf("CentreField(l=0) = %g T, want N loops %g T", got, want)
	}
	// The current's sign carries through.
	if got := CentreField(turns, -current, 0.02, 0.01); relErr(got, -CentreField(turns, current, 0.02, 0.01)) > 0 {
		t.Errorf("CentreField is not odd in the current: %g", got)
	}
}

func TestCentreFieldBadInput(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	for _, a := range [][4]float64{
		{-1, 1, 0.01, 0.01}, {nan, 1, 0.01, 0.01}, {inf, 1, 0.01, 0.01},
		{100, nan, 0.01, 0.01}, {100, inf, 0.01, 0.01},
		{100, 1, -0.01, 0.01}, {100, 1, nan, 0.01}, {100, 1, inf, 0.01},
		{100, 1, 0.01, 0}, {100, 1, 0.01, -0.01}, {100, 1, 0.01, nan}, {100, 1, 0.01, inf},
		{1e300, 1e300, 0.01, 0.01},
	} {
		if got := CentreField(a[0], a[1], a[2], a[3]); got != 0 {
			t.Errorf("CentreField%v = %g, want 0", a, got)
		}
	}
}

func TestWheelerMultilayerUnits(t *testing.T) {
	t.Parallel()
	// source: Wheeler 1928, L[µH] = 0.8·a²·N²/(6a + 9b + 10c), inches. For
	// a = b = c = 1 in and N = 10: 0.8·1·100/25 = 3.2 µH exactly.
	const in = 0.0254
	if got := WheelerMultilayer(10, in, in, in); relErr(got, 3.2e-6) > 1e-14 {
		t.Errorf("WheelerMultilayer(10, 1 in, 1 in, 1 in) = %g H, want 3.2e-6 H", got)
	}
	// a = 2 in, b = 0.5 in, c = 0.3 in, N = 300: 0.8·4·90000/(12 + 4.5 + 3)
	// = 288000/19.5 = 14769.23 µH.
	if got := WheelerMultilayer(300, 2*in, 0.5*in, 0.3*in); relErr(got, 288000/19.5*1e-6) > 1e-14 {
		t.Errorf("WheelerMultilayer(300, 2 in, 0.5 in, 0.3 in) = %g H, want %g H", got, 288000/19.5*1e-6)
	}
	nan, inf := math.NaN(), math.Inf(1)
	for _, a := range [][4]float64{
		{-1, 0.01, 0.01, 0.01}, {nan, 0.01, 0.01, 0.01}, {inf, 0.01, 0.01, 0.01},
		{100, 0, 0.01, 0.01}, {100, -0.01, 0.01, 0.01}, {100, nan, 0.01, 0.01}, {100, inf, 0.01, 0.01},
		{100, 0.01, -0.01, 0.01}, {100, 0.01, nan, 0.01}, {100, 0.01, inf, 0.01},
		{100, 0.01, 0.01, -0.01}, {100, 0.01, 0.01, nan}, {100, 0.01, 0.01, inf},
		{1e200, 0.01, 0.01, 0.01},
	} {
		if got := WheelerMultilayer(a[0], a[1], a[2], a[3]); got != 0 {
			t.Errorf("WheelerMultilayer%v = %g, want 0", a, got)
		}
	}
}

// wheelerBuild returns the winding window of mean radius a, length b and
// depth c (m).
func wheelerBuild(a, b, c float64) CoilBuild {
	return CoilBuild{InnerDiameter: 2*a - c, OuterDiameter: 2*a + c, Length: b}
}

func TestWheelerVsAirCore(t *testing.T) {
	t.Parallel()
	// source: Wheeler 1928 states his multilayer formula is good to about
	// 1 % when 6a, 9b and 10c are of similar size (from memory). The
	// numerical sum at 32×32 cells is converged to about 1e-4 (see
	// TestAirCoreInductanceConverges), so 1 % is Wheeler's own error
	// budget. Coils (a, b, c in mm, invented) inside that range.
	const turns = 400
	for _, g := range [][3]float64{
		{15, 10, 9},  // 90 : 90 : 90
		{10, 10, 5},  // 60 : 90 : 50
		{20, 15, 10}, // 120 : 135 : 100
		{8, 5, 5},    // 48 : 45 : 50
		{30, 25, 15}, // 180 : 225 : 150
	} {
		a, b, c := g[0]*1e-3, g[1]*1e-3, g[2]*1e-3
		w := WheelerMultilayer(turns, a, b, c)
		n := AirCoreInductance(wheelerBuild(a, b, c), turns, 32, 32)
		if e := relErr(w, n); e > 0.01 {
			t.Errorf("a=%g b=%g c=%g mm: Wheeler %g H, numerical %g H: %.2f %% > 1 %%", g[0], g[1], g[2], w, n, 100*e)
		}
	}
}

func TestAirCoreInductanceConverges(t *testing.T) {
	t.Parallel()
	// Cells kept about square; the error of the cell sum falls as the
	// square of the cell size, so each doubling of nr and nz cuts the
	// change by about 4 once the grid is fine (allow 2.5: the first
	// doublings of an elongated window are measured at 2.9).
	for _, g := range []struct {
		b      CoilBuild
		nr, nz int // coarsest grid, cells about square
	}{
		{wheelerBuild(15e-3, 10e-3, 9e-3), 2, 2},
		{wheelerBuild(10e-3, 20e-3, 4e-3), 1, 5},
		{wheelerBuild(25e-3, 4e-3, 20e-3), 5, 1},
	} {
		var vals []float64
		for s := 1; s <= 32; s *= 2 {
			vals = append(vals, AirCoreInductance(g.b, 100, g.nr*s, g.nz*s))
		}
		for k := 2; k < len(vals); k++ {
			d1, d2 := math.Abs(vals[k-1]-vals[k-2]), math.Abs(vals[k]-vals[k-1])
			if !(d2 < d1/2.5) {
				t.Errorf("%+v: changes %g then %g on doubling the grid, want the second below 1/2.5 of the first", g.b, d1, d2)
			}
		}
		last := vals[len(vals)-1]
		if e := math.Abs(vals[len(vals)-1]-vals[len(vals)-2]) / last; e > 1e-4 {
			t.Errorf("%+v: last change %g relative, want below 1e-4", g.b, e)
		}
	}
}

func TestAirCoreNagaoka(t *testing.T) {
	t.Parallel()
	// A single-layer coil of negligible depth (a current sheet): L =
	// K·µ0·N²·π·r²/l with Nagaoka's coefficient K(d/l) (H. Nagaoka, J.
	// College of Science Tokyo 27, 1909). Table values from memory; cells
	// 2e-4 of the radius high leave a few 1e-5 in K.
	const turns = 100
	d := 20e-3
	for _, tc := range []struct{ dl, k float64 }{
		{0.5, 0.8181}, // from memory: Nagaoka's table
		{1, 0.6884},   // from memory: Nagaoka's table
		{2, 0.5255},   // from memory: Nagaoka's table
	} {
		l := d / tc.dl
		b := CoilBuild{InnerDiameter: d - 1e-7, OuterDiameter: d + 1e-7, Length: l}
		nz := int(l / (2e-4 * d / 2))
		got := AirCoreInductance(b, turns, 1, nz) / (Mu0 * turns * turns * math.Pi * d * d / 4 / l)
		if math.Abs(got-tc.k) > 2e-4 {
			t.Errorf("d/l = %g: K = %.5f, want %.4f within 2e-4", tc.dl, got, tc.k)
		}
	}
	// Long coils: source: long-solenoid inductance µ0·N²·A/l (Ampère's law,
	// any electromagnetics text) within the first-order end effect d/l;
	// and the long-coil series of Nagaoka's coefficient
	// K ≈ 1 − 4d/(3πl) + d²/(8l²) (from memory) within 1e-4.
	for _, dl := range []float64{0.1, 0.05, 0.02} {
		l := d / dl
		b := CoilBuild{InnerDiameter: d - 1e-7, OuterDiameter: d + 1e-7, Length: l}
		nz := int(l / (2e-4 * d / 2))
		got := AirCoreInductance(b, turns, 1, nz) / (Mu0 * turns * turns * math.Pi * d * d / 4 / l)
		if math.Abs(got-1) > dl {
			t.Errorf("d/l = %g: K = %.5f, want 1 within d/l", dl, got)
		}
		if series := 1 - 4*dl/(3*math.Pi) + dl*dl/8; math.Abs(got-series) > 1e-4 {
			t.Errorf("d/l = %g: K = %.6f, long-coil series %.6f, want within 1e-4", dl, got, series)
		}
	}
}

func TestAirCoreInductanceLogSelfTerm(t *testing.T) {
	t.Parallel()
	// The self term of a cell by the GMD method in the form
	// µ0·r·(ln(8r/g) − 2) (Grover 1946, close coaxial circles) instead of
	// Maxwell's formula at distance g: on a fine grid the two sums agree.
	b := wheelerBuild(15e-3, 10e-3, 9e-3)
	const nr, nz, turns = 24, 24, 300
	got := AirCoreInductance(b, turns, nr, nz)
	ri, ro := b.InnerDiameter/2, b.OuterDiameter/2
	w, h := (ro-ri)/nr, b.Length/nz
	g := rectGMDFactor * (w + h)
	var sum float64
	for i := 0; i < nr; i++ {
		for p := 0; p < nz; p++ {
			for j := 0; j < nr; j++ {
				for q := 0; q < nz; q++ {
					r1, r2 := ri+(float64(i)+0.5)*w, ri+(float64(j)+0.5)*w
					if i == j && p == q {
						sum += Mu0 * r1 * (math.Log(8*r1/g) - 2)
						continue
					}
					sum += loopMutual(r1, r2, float64(p-q)*h)
				}
			}
		}
	}
	n := float64(turns) / (nr * nz)
	if want := n * n * sum; relErr(got, want) > 1e-5 {
		t.Errorf("AirCoreInductance = %g H, direct sum with the log self term %g H", got, want)
	}
}

func TestLoopMutualLimits(t *testing.T) {
	t.Parallel()
	// source: far apart, the mutual inductance of two coaxial loops is that
	// of two magnetic dipoles, µ0·π·r1²·r2²/(2z³) (dipole on-axis field,
	// e.g. Griffiths ch. 5), with a relative error of order (r/z)².
	r1, r2 := 0.01, 0.007
	for _, z := range []float64{0.3, 1, 10} {
		want := Mu0 * math.Pi * r1 * r1 * r2 * r2 / (2 * z * z * z)
		if e := relErr(loopMutual(r1, r2, z), want); e > 10*(r1/z)*(r1/z) {
			t.Errorf("loopMutual(%g, %g, %g): relative %g from the dipole limit", r1, r2, z, e)
		}
	}
	// source: Grover 1946, close coaxial circles of equal radius r a
	// distance d apart: M ≈ µ0·r·(ln(8r/d) − 2), error of order (d/r)²·ln.
	r := 0.02
	for _, d := range []float64{1e-4, 1e-5} {
		want := Mu0 * r * (math.Log(8*r/d) - 2)
		if e := relErr(loopMutual(r, r, d), want); e > 10*(d/r)*(d/r)*math.Log(8*r/d) {
			t.Errorf("loopMutual(%g, %g, %g): relative %g from the close limit", r, r, d, e)
		}
	}
	// source: Maxwell 1873 art. 701 (Grover 1946), the first form with
	// CompleteK and CompleteE, m = k²: equal to the Landen form used, where
	// the first form is well conditioned (k not small; both lose digits of
	// 1 − k² for close filaments, hence 1e-10).
	for _, c := range [][3]float64{{0.01, 0.007, 0.01}, {0.01, 0.03, 0.02}, {0.02, 0.02, 1e-4}, {0.015, 0.012, 0.05}} {
		r1, r2, z := c[0], c[1], c[2]
		m := 4 * r1 * r2 / ((r1+r2)*(r1+r2) + z*z)
		k := math.Sqrt(m)
		want := Mu0 * math.Sqrt(r1*r2) * ((2/k-k)*mathext.CompleteK(m) - 2/k*mathext.CompleteE(m))
		if e := relErr(loopMutual(r1, r2, z), want); e > 1e-10 {
			t.Errorf("loopMutual%v = %g, Maxwell K/E form %g: relative %g", c, loopMutual(r1, r2, z), want, e)
		}
	}
	// Symmetric in the radii and in ±z; 0 for a zero radius; +Inf when
	// coincident.
	if a, b := loopMutual(0.01, 0.03, 0.02), loopMutual(0.03, 0.01, -0.02); relErr(a, b) > 1e-14 {
		t.Errorf("loopMutual not symmetric: %g vs %g", a, b)
	}
	if m := loopMutual(0, 0.01, 0.01); m != 0 {
		t.Errorf("loopMutual with zero radius = %g, want 0", m)
	}
	if m := loopMutual(0.01, 0.01, 0); !math.IsInf(m, 1) {
		t.Errorf("loopMutual coincident = %g, want +Inf", m)
	}
}

func TestRectGMDFactor(t *testing.T) {
	t.Parallel()
	// source: definition of the geometric mean distance of an area from
	// itself, ln g = mean of ln|p − q| over pairs of points (Maxwell,
	// Treatise, art. 691), computed by midpoint quadrature over the offset
	// distribution (1 − |u|/w)(1 − |v|/h); 0.2235·(w + h) is claimed within
	// 0.2 % for aspect ratios 1..100.
	const n = 600
	for _, hw := range []float64{1, 0.5, 0.2, 0.1, 0.01} {
		w, h := 1.0, hw
		var lnG float64
		for i := 0; i < n; i++ {
			u := (float64(i) + 0.5) / n * w
			for j := 0; j < n; j++ {
				v := (float64(j) + 0.5) / n * h
				wt := 4 * (w - u) / (w * w) * (h - v) / (h * h) * (w / n) * (h / n)
				lnG += wt * 0.5 * math.Log(u*u+v*v)
			}
		}
		if e := relErr(rectGMDFactor*(w+h), math.Exp(lnG)); e > 2e-3 {
			t.Errorf("h/w = %g: 0.2235(w+h) = %g, quadrature GMD %g, relative %g", hw, rectGMDFactor*(w+h), math.Exp(lnG), e)
		}
	}
}

func TestAirCoreInductanceScaling(t *testing.T) {
	t.Parallel()
	// Dimensional analysis: L ∝ N² and, scaling every length by s, L ∝ s.
	b := wheelerBuild(15e-3, 10e-3, 9e-3)
	l1 := AirCoreInductance(b, 100, 8, 8)
	if l2 := AirCoreInductance(b, 300, 8, 8); relErr(l2, 9*l1) > 1e-12 {
		t.Errorf("3× turns: %g H, want 9 × %g H", l2, l1)
	}
	s := CoilBuild{InnerDiameter: 3 * b.InnerDiameter, OuterDiameter: 3 * b.OuterDiameter, Length: 3 * b.Length}
	if l3 := AirCoreInductance(s, 100, 8, 8); relErr(l3, 3*l1) > 1e-12 {
		t.Errorf("3× size: %g H, want 3 × %g H", l3, l1)
	}
	// A solid coil (inner diameter 0) is finite and positive.
	solid := CoilBuild{OuterDiameter: 20e-3, Length: 10e-3}
	if l := AirCoreInductance(solid, 100, 16, 16); !(l > 0) || !isFinite(l) {
		t.Errorf("solid coil: %g H", l)
	}
	// Coarse grids of a long thin coil stay positive.
	long := CoilBuild{InnerDiameter: 10e-3, OuterDiameter: 10.5e-3, Length: 0.3}
	for _, nz := range []int{1, 2, 3, 10} {
		if l := AirCoreInductance(long, 100, 1, nz); !(l > 0) || !isFinite(l) {
			t.Errorf("long coil nz=%d: %g H", nz, l)
		}
	}
}

func TestAirCoreInductanceBadInput(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	good := wheelerBuild(15e-3, 10e-3, 9e-3)
	mod := func(f func(*CoilBuild)) CoilBuild {
		b := good
		f(&b)
		return b
	}
	for _, tc := range []struct {
		b      CoilBuild
		turns  float64
		nr, nz int
	}{
		{good, 0, 4, 4}, {good, -1, 4, 4}, {good, nan, 4, 4}, {good, inf, 4, 4},
		{good, 100, 0, 4}, {good, 100, 4, 0}, {good, 100, -1, 4},
		{mod(func(b *CoilBuild) { b.InnerDiameter = -1e-3 }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.InnerDiameter = nan }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.OuterDiameter = b.InnerDiameter }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.OuterDiameter = inf }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.Length = 0 }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.Length = nan }), 100, 4, 4},
		{mod(func(b *CoilBuild) { b.Length = inf }), 100, 4, 4},
		{good, 1e300, 4, 4},
	} {
		if l := AirCoreInductance(tc.b, tc.turns, tc.nr, tc.nz); l != 0 {
			t.Errorf("AirCoreInductance(%+v, %g, %d, %d) = %g, want 0", tc.b, tc.turns, tc.nr, tc.nz, l)
		}
	}
	// Extreme but valid geometry stays finite.
	for _, b := range []CoilBuild{
		{InnerDiameter: 1e-9, OuterDiameter: 1e3, Length: 1e-9},
		{InnerDiameter: 0, OuterDiameter: 1e-9, Length: 1e3},
		{InnerDiameter: 1, OuterDiameter: 1 + 1e-12, Length: 1e-12},
	} {
		if l := AirCoreInductance(b, 100, 3, 3); !isFinite(l) || l < 0 {
			t.Errorf("AirCoreInductance(%+v) = %g, want finite and not negative", b, l)
		}
	}
}

func TestThickCentreFieldMatchesLoopSum(t *testing.T) {
	t.Parallel()
	// source: Biot–Savart on-axis loop field (Griffiths, Introduction to
	// Electrodynamics, ch. 5) summed over the winding's cross-section: an
	// n × n grid of loops at the cell midpoints, each carrying N/n² turns
	// (midpoint rule in r and z, error ~ (cell/size)² ≈ 1e-6 for n = 500).
	// Independent of the closed form's integration by asinh.
	const n, turns, current = 500, 2857, 0.276
	for _, g := range []struct{ di, do, l float64 }{
		{10e-3, 26e-3, 22e-3}, // the dosing demo's bobbin
		{4e-3, 40e-3, 5e-3},   // short and deep
		{10e-3, 12e-3, 80e-3}, // long and thin
	} {
		r1, r2 := g.di/2, g.do/2
		var sum float64
		for i := 0; i < n; i++ {
			r := r1 + (float64(i)+0.5)/n*(r2-r1)
			for j := 0; j < n; j++ {
				z := (float64(j)+0.5)/n*g.l - g.l/2
				sum += loopAxisField(current, r, z)
			}
		}
		sum *= float64(turns) / (n * n)
		got := ThickCentreField(turns, current, g.di, g.do, g.l)
		if e := relErr(got, sum); e > 1e-5 {
			t.Errorf("ThickCentreField(%g, %g, %g) = %g T, loop sum %g T: relative %g > 1e-5", g.di, g.do, g.l, got, sum, e)
		}
	}
}

func TestThickCentreFieldLimits(t *testing.T) {
	t.Parallel()
	const turns, current = 1000, 0.5
	// A thin winding (depth 1e-6 of the radius) is the current sheet of
	// CentreField at its diameter (same source: the finite-solenoid
	// formula, Griffiths ch. 5); the depth's own effect is of order 1e-12.
	for _, l := range []float64{0, 1e-3, 0.02, 0.5} {
		d := 0.02
		got := ThickCentreField(turns, current, d*(1-1e-6), d*(1+1e-6), l)
		if want := CentreField(turns, current, l, d); relErr(got, want) > 1e-9 {
			t.Errorf("thin winding, l = %g m: %g T, CentreField %g T", l, got, want)
		}
	}
	// source: long-solenoid field µ0·(N/l)·I (Ampère's law, any
	// electromagnetics text), end effect of order (d_outer/l)².
	for _, ratio := range []float64{10, 100, 1000} {
		do := 0.02
		got := ThickCentreField(turns, current, 0.01, do, ratio*do)
		want := Mu0 * turns / (ratio * do) * current
		if e := relErr(got, want); e > 1/(ratio*ratio) {
			t.Errorf("l/d = %g: %g T, long limit %g T: relative %g", ratio, got, want, e)
		}
	}
	// source: a flat (l → 0) winding is a disc of loops with the centre
	// field µ0·I/(2r) each (Biot–Savart, Griffiths ch. 5), integrated over
	// r with N/(r2 − r1) turns per metre: µ0·N·I·ln(r2/r1)/(2·(r2 − r1)).
	r1, r2 := 0.005, 0.013
	flat := Mu0 * turns * current * math.Log(r2/r1) / (2 * (r2 - r1))
	if got := ThickCentreField(turns, current, 2*r1, 2*r2, 0); relErr(got, flat) > 1e-14 {
		t.Errorf("flat winding: %g T, want %g T", got, flat)
	}
	if got := ThickCentreField(turns, current, 2*r1, 2*r2, 1e-9); relErr(got, flat) > 1e-9 {
		t.Errorf("winding 1 nm long: %g T, want the flat %g T", got, flat)
	}
	// source: Montgomery, Solenoid Magnet Design (1969), B0 = µ0·J·r1·F(α, β)
	// with F = β·ln[(α + √(α² + β²))/(1 + √(1 + β²))] (the same law in the
	// dimensionless form a magnet designer tabulates).
	di, do, l := 10e-3, 26e-3, 22e-3
	alpha, beta := do/di, l/di
	j := turns * current / (l * (do - di) / 2)
	fab := beta * math.Log((alpha+math.Hypot(alpha, beta))/(1+math.Hypot(1, beta)))
	if got, want := ThickCentreField(turns, current, di, do, l), Mu0*j*di/2*fab; relErr(got, want) > 1e-12 {
		t.Errorf("ThickCentreField = %g T, Montgomery's µ0·J·r1·F(α, β) = %g T", got, want)
	}
	// Odd in the current; a solid winding (inner diameter 0) is finite.
	if a, b := ThickCentreField(turns, -current, di, do, l), ThickCentreField(turns, current, di, do, l); a != -b {
		t.Errorf("not odd in the current: %g, %g", a, b)
	}
	if b := ThickCentreField(turns, current, 0, do, l); !(b > 0) || !isFinite(b) {
		t.Errorf("solid winding: %g T", b)
	}
}

func TestThickCentreFieldBadInput(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	for _, a := range [][5]float64{
		{-1, 1, 0.01, 0.02, 0.01}, {nan, 1, 0.01, 0.02, 0.01}, {inf, 1, 0.01, 0.02, 0.01},
		{100, nan, 0.01, 0.02, 0.01}, {100, inf, 0.01, 0.02, 0.01},
		{100, 1, -0.01, 0.02, 0.01}, {100, 1, nan, 0.02, 0.01},
		{100, 1, 0.02, 0.02, 0.01}, {100, 1, 0.02, 0.01, 0.01}, {100, 1, 0.01, nan, 0.01}, {100, 1, 0.01, inf, 0.01},
		{100, 1, 0.01, 0.02, -0.01}, {100, 1, 0.01, 0.02, nan}, {100, 1, 0.01, 0.02, inf},
		{100, 1, 0, 0.02, 0}, // a solid flat disc: infinite at its centre
		{1e300, 1e300, 0.01, 0.02, 0.01},
	} {
		if got := ThickCentreField(a[0], a[1], a[2], a[3], a[4]); got != 0 {
			t.Errorf("ThickCentreField%v = %g, want 0", a, got)
		}
	}
}
