package magnet

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// CentreField returns the flux density B (T) at the centre of a thin
// (single-layer, current-sheet) solenoid of the given turns, current (A),
// length (m) and diameter (m):
//
//	B = µ0·N·I/√(l² + d²),
//
// the on-axis field of a finite solenoid, from integrating the on-axis field
// of a circular current loop along the winding (any electromagnetics text,
// e.g. Griffiths, Introduction to Electrodynamics, the finite solenoid
// problem of ch. 5). It tends to µ0·(N/l)·I for l ≫ d and to the loop field
// µ0·N·I/d for l → 0. For a thick coil, ThickCentreField integrates it
// over the winding's depth; at the mean diameter it is an estimate (0.2 %
// low for the dosing demo's 10/26 × 22 mm winding). The current's sign carries through. It returns 0 for turns < 0,
// length < 0, diameter ≤ 0, non-finite arguments or a non-finite result.
func CentreField(turns, current, length, diameter float64) float64 {
	if !(turns >= 0) || !(length >= 0) || !(diameter > 0) || !isFinite(current) {
		return 0
	}
	b := Mu0 * turns * current / math.Hypot(length, diameter)
	if !isFinite(b) {
		return 0
	}
	return b
}

// ThickCentreField returns the flux density B (T) at the centre of a thick
// air-core coil of the given turns and current (A), spread with uniform
// current density over a winding of inner and outer diameter and length
// (m):
//
//	B = µ0·N·I/(2·(r2 − r1)) · ln[(r2 + √(r2² + (l/2)²)) / (r1 + √(r1² + (l/2)²))],
//
// r1, r2 the inner and outer radii. It is CentreField integrated over the
// winding's depth (a layer of radius r carries N·dr/(r2 − r1) turns and
// ∫ dr/√(l² + 4r²) = ½·asinh(2r/l)); in D. B. Montgomery, Solenoid Magnet
// Design (Wiley 1969) it is B0 = µ0·J·r1·F(α, β) with the field factor
// F(α, β) = β·ln[(α + √(α² + β²))/(1 + √(1 + β²))], α = r2/r1, β = l/(2r1),
// J = N·I/(l·(r2 − r1)) (Fabry's form; chapter from memory: the opening
// chapter on uniform-current-density coils). It tends to CentreField as
// r2 → r1, to µ0·N·I/l for a long coil and to the flat-coil field
// µ0·N·I·ln(r2/r1)/(2·(r2 − r1)) for l → 0; an inner diameter of 0 (a
// solid winding) is allowed. The current's sign carries through. It returns
// 0 for turns < 0, inner diameter < 0, outer diameter ≤ inner diameter,
// length < 0, non-finite arguments or a non-finite result.
func ThickCentreField(turns, current, innerDiameter, outerDiameter, length float64) float64 {
	r1, r2, h := innerDiameter/2, outerDiameter/2, length/2
	if !(turns >= 0) || !(r1 >= 0) || !(r2 > r1) || !(h >= 0) || !isFinite(current) ||
		math.IsInf(r2, 0) || math.IsInf(h, 0) || math.IsInf(turns, 0) {
		return 0
	}
	// ln of the ratio as a difference of asinh, which stays accurate for a
	// short coil (h → 0, where both arguments of the ratio tend to 2r)
	// and for r1 = 0 with h = 0 (then the field is infinite: returns 0).
	var lnRatio float64
	if h > 0 {
		lnRatio = math.Asinh(r2/h) - math.Asinh(r1/h)
	} else {
		lnRatio = math.Log(r2 / r1)
	}
	b := Mu0 * turns * current / (2 * (r2 - r1)) * lnRatio
	if !isFinite(b) {
		return 0
	}
	return b
}

// metresPerInch is the international inch (exact by definition, 1959).
const metresPerInch = 0.0254

// WheelerMultilayer returns the inductance (H) of an air-core multilayer coil
// of the given turns, mean winding radius a (m), winding length b (m) and
// radial winding depth c (m) by Wheeler's multilayer formula (H. A. Wheeler,
// "Simple inductance formulas for radio coils", Proc. IRE 16, 1928):
//
//	L[µH] = 0.8·a²·N²/(6a + 9b + 10c),  a, b, c in inches,
//
// converted exactly with 1 in = 0.0254 m: L[H] = 1e-6·0.8·a²·N²/
// (0.0254·(6a + 9b + 10c)) with a, b, c in m. Wheeler's stated accuracy is
// about 1 % when the three terms of the denominator are of similar size
// (from memory); away from that the error grows (it is the wrong shape for
// very long thin or flat coils). It returns 0 for turns < 0, a ≤ 0, b < 0,
// c < 0 and non-finite arguments or result.
func WheelerMultilayer(turns, meanRadius, length, depth float64) float64 {
	a, b, c := meanRadius, length, depth
	if !(turns >= 0) || !(a > 0) || !(b >= 0) || !(c >= 0) {
		return 0
	}
	l := 1e-6 * 0.8 * a * a * turns * turns / (metresPerInch * (6*a + 9*b + 10*c))
	if !isFinite(l) {
		return 0
	}
	return l
}

// loopMutual returns the mutual inductance (H) of two coaxial circular
// filaments of radii r1, r2 (m) a distance z (m) apart along the axis, by
// Maxwell's formula (J. C. Maxwell, A Treatise on Electricity and
// Magnetism, 1873, art. 701; as in F. W. Grover, Inductance Calculations,
// 1946):
//
//	M = µ0·√(r1·r2)·[(2/k − k)·K(k) − (2/k)·E(k)],  k² = 4·r1·r2/((r1 + r2)² + z²),
//
// with K, E the complete elliptic integrals of modulus k (gonum's
// mathext.CompleteK and CompleteE take the parameter m = k²). That form
// loses accuracy for distant filaments (the bracket is of order k³ while
// its terms are of order 1/k: 1e-3 relative error at z = 1000·r). It is
// evaluated here in Maxwell's equivalent Landen-transformed form (same
// article; Grover 1946, the formula in terms of the greatest and least
// distances r₁ = √((r1+r2)² + z²), r₂ = √((r1−r2)² + z²)):
//
//	M = µ0·(r₁ + r₂)·[K(k₁) − E(k₁)],  k₁ = (r₁ − r₂)/(r₁ + r₂) = 4·r1·r2/(r₁ + r₂)²,
//
// with K(k₁) − E(k₁) = k₁²·D(k₁) computed as mathext.CompleteD(k₁²)·k₁², so
// nothing cancels; the two forms agree to rounding where both are accurate
// (checked in the tests). It returns 0 when a radius is 0 and +Inf for
// coincident filaments.
func loopMutual(r1, r2, z float64) float64 {
	s := math.Hypot(r1+r2, z) + math.Hypot(r1-r2, z)
	k1 := 4 * r1 * r2 / (s * s)
	if !(k1 > 0) {
		return 0
	}
	if k1 >= 1 {
		return math.Inf(1)
	}
	m1 := k1 * k1
	return Mu0 * s * m1 * mathext.CompleteD(m1)
}

// rectGMDFactor is the factor of the geometric mean distance of a rectangle
// w × h from itself, g ≈ 0.2235·(w + h) (Maxwell, Treatise, art. 692; E. B.
// Rosa & F. W. Grover, "Formulas and tables for the calculation of mutual
// and self-inductance", Bull. Bureau of Standards 8, 1912). The exact GMD
// is e^(−3/2)·w = 0.22313·w for a line (h → 0) and 0.44705·w for a square;
// the approximation is within 0.2 % for every aspect ratio (checked by
// quadrature in the tests).
const rectGMDFactor = 0.2235

// AirCoreInductance returns the self-inductance (H) of the air-core coil in
// b's winding window (InnerDiameter, OuterDiameter, Length; the other fields
// are not read) wound with the given turns, spread uniformly over the
// window's cross-section. It splits the cross-section into nr (radial) × nz
// (axial) equal rectangular cells, puts a circular filament of
// n = turns/(nr·nz) turns at each cell centre, and sums
//
//	L = Σ_i Σ_j n²·M_ij
//
// with M_ij the mutual inductance of filaments i ≠ j by Maxwell's formula
// (see loopMutual: Maxwell 1873, as in Grover 1946, evaluated with gonum's
// complete elliptic integrals), and the self term of a
// cell by the geometric-mean-distance method (Maxwell, Treatise, art. 691;
// Rosa & Grover 1912): the self-inductance of a cell of radius r is the
// mutual inductance of two filaments of radius r one GMD g = 0.2235·(w + h)
// apart, w × h the cell. That is µ0·r·(ln(8r/g) − 2) for g ≪ r (Grover's
// mutual inductance of close coaxial circles), which is the same GMD self
// term; the full Maxwell formula is used so the term stays positive on
// coarse grids.
//
// Accuracy: the result is the low-frequency inductance of a uniform current
// density over the window (the wire structure, insulation and lead-outs are
// ignored; so are nearby iron and eddy currents). With cells about square
// (nz/nr ≈ Length/depth) the discretisation error falls as the square of
// the cell size: measured in the tests, about 1e-3 relative with 4 cells
// across the smaller side of the window and 1e-4 with 16. Elongated cells
// converge more slowly: for a single-layer coil of negligible depth use
// nr = 1 and cells 2e-4 of the radius high for 1e-4. Against Wheeler's
// formula (inside its range) and Nagaoka's coefficient for current sheets
// the tests find agreement within 0.6 % and 2e-4.
//
// The work is about nr²·nz/2 evaluations of the elliptic integral:
// nr = nz = 100 takes 5·10⁵, a few tens of milliseconds.
//
// It returns 0 for turns ≤ 0 or non-finite, nr or nz < 1, and a window
// with InnerDiameter < 0, OuterDiameter ≤ InnerDiameter or Length ≤ 0 (or
// non-finite).
func AirCoreInductance(b CoilBuild, turns float64, nr, nz int) float64 {
	ri, ro, l := b.InnerDiameter/2, b.OuterDiameter/2, b.Length
	if !(turns > 0) || math.IsInf(turns, 0) || nr < 1 || nz < 1 ||
		!(ri >= 0) || !(ro > ri) || math.IsInf(ro, 0) || !(l > 0) || math.IsInf(l, 0) {
		return 0
	}
	w := (ro - ri) / float64(nr)
	h := l / float64(nz)
	g := rectGMDFactor * (w + h)
	radius := func(i int) float64 { return ri + (float64(i)+0.5)*w }

	// The filaments at (r_i, z_p) and (r_j, z_q) depend on |p − q| only:
	// each axial offset Δ > 0 occurs 2·(nz − Δ) times, Δ = 0 nz times.
	var sum float64
	for i := 0; i < nr; i++ {
		r1 := radius(i)
		for j := i; j < nr; j++ {
			r2 := radius(j)
			var pair float64
			for d := 0; d < nz; d++ {
				var m float64
				switch {
				case d == 0 && i == j:
					m = loopMutual(r1, r1, g)
				default:
					m = loopMutual(r1, r2, float64(d)*h)
				}
				mult := float64(nz - d)
				if d > 0 {
					mult *= 2
				}
				pair += mult * m
			}
			if j != i {
				pair *= 2
			}
			sum += pair
		}
	}
	n := turns / (float64(nr) * float64(nz))
	res := n * n * sum
	if !isFinite(res) || res < 0 {
		return 0
	}
	return res
}
