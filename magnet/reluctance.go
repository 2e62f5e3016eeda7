package magnet

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// PlungerGeometry is the drawing of a cylindrical plunger electromagnet
// (all lengths in m). The frame is a steel shell (tube) closed by two end
// plates. The pole (stop) is a steel cylinder standing on the back plate;
// the plunger slides in a bore of the front plate and is pulled toward the
// pole; plunger and pole have flat faces across the working gap x. The coil
// fills the space between the coil bore and the shell.
//
//	shell ─────────────────────────────────────────
//	back plate │ coil (winding space)             │ front plate
//	           │ pole ▐ x ▌ plunger ══════════════╪════ (slides in the bore,
//	           │                                  │      radial gap SlidingGap)
type PlungerGeometry struct {
	PlungerDiameter    float64 // m, steel plunger diameter
	PlungerLength      float64 // m, steel flux path in the plunger, working-gap face to the front-plate bushing
	PoleDiameter       float64 // m, fixed pole piece (stop) diameter
	PoleLength         float64 // m, pole length from the back plate's inner face to the pole face
	ShellOuterDiameter float64 // m, frame tube outer diameter
	ShellWall          float64 // m, frame tube wall thickness
	ShellLength        float64 // m, frame length over both end plates
	EndPlateThickness  float64 // m, thickness of each of the two end plates
	SlidingGap         float64 // m, radial clearance between the plunger and the front-plate bore
	SlidingLength      float64 // m, axial length over which flux crosses the sliding gap
	WindingInnerRadius float64 // m, coil bore radius (inner radius of the winding space)
	WindingOuterRadius float64 // m, outer radius of the winding space
	WindingLength      float64 // m, axial length of the winding
}

// Validate reports the first dimension out of range: every dimension must
// be positive and finite, the shell wall thinner than the shell radius, the
// plunger (with its sliding gap) and the pole must fit in the coil bore,
// the winding must fit inside the shell and between the end plates, and the
// pole must leave room for a working gap between the end plates. Its
// messages name the dimensions in plain words, as a drawing or a scenario
// file does ("shell wall", "the winding's inner diameter"), in mm.
func (g PlungerGeometry) Validate() error {
	for _, f := range []struct {
		name string
		v    float64
	}{
		{"plunger diameter", g.PlungerDiameter},
		{"plunger length", g.PlungerLength},
		{"pole diameter", g.PoleDiameter},
		{"pole length", g.PoleLength},
		{"shell outer diameter", g.ShellOuterDiameter},
		{"shell wall", g.ShellWall},
		{"shell length", g.ShellLength},
		{"end plate thickness", g.EndPlateThickness},
		{"sliding gap", g.SlidingGap},
		{"sliding length", g.SlidingLength},
		{"the winding's inner radius", g.WindingInnerRadius},
		{"the winding's outer radius", g.WindingOuterRadius},
		{"the winding's length", g.WindingLength},
	} {
		if !(f.v > 0) || math.IsInf(f.v, 0) {
			return fmt.Errorf("magnet: plunger geometry: %s must be positive and finite, got %g mm", f.name, f.v*1e3)
		}
	}
	const mm = 1e3
	rShellIn := g.ShellOuterDiameter/2 - g.ShellWall
	inner := g.ShellLength - 2*g.EndPlateThickness
	switch {
	case !(rShellIn > 0):
		return fmt.Errorf("magnet: plunger geometry: shell wall %.4g mm must be less than half the shell outer diameter, %.4g mm", g.ShellWall*mm, g.ShellOuterDiameter/2*mm)
	case g.PlungerDiameter/2+g.SlidingGap > g.WindingInnerRadius:
		return fmt.Errorf("magnet: plunger geometry: the plunger with its sliding gap (plunger diameter + 2 × sliding gap = %.4g mm) must fit in the coil bore, the winding's inner diameter %.4g mm",
			(g.PlungerDiameter+2*g.SlidingGap)*mm, 2*g.WindingInnerRadius*mm)
	case g.PoleDiameter/2 > g.WindingInnerRadius:
		return fmt.Errorf("magnet: plunger geometry: pole diameter %.4g mm must fit in the coil bore, the winding's inner diameter %.4g mm",
			g.PoleDiameter*mm, 2*g.WindingInnerRadius*mm)
	case !(g.WindingOuterRadius > g.WindingInnerRadius):
		return fmt.Errorf("magnet: plunger geometry: the winding's outer diameter %.4g mm must exceed its inner diameter %.4g mm", 2*g.WindingOuterRadius*mm, 2*g.WindingInnerRadius*mm)
	case g.WindingOuterRadius > rShellIn:
		return fmt.Errorf("magnet: plunger geometry: the winding's outer diameter %.4g mm must fit inside the shell, whose inner diameter is %.4g mm (shell outer diameter − 2 × shell wall)",
			2*g.WindingOuterRadius*mm, 2*rShellIn*mm)
	case !(inner > 0):
		return fmt.Errorf("magnet: plunger geometry: shell length %.4g mm must exceed the two end plates, 2 × end plate thickness = %.4g mm",
			g.ShellLength*mm, 2*g.EndPlateThickness*mm)
	case g.WindingLength > inner:
		return fmt.Errorf("magnet: plunger geometry: the winding's length %.4g mm must fit between the end plates, %.4g mm (shell length − 2 × end plate thickness)",
			g.WindingLength*mm, inner*mm)
	case !(g.PoleLength < inner):
		return fmt.Errorf("magnet: plunger geometry: pole length %.4g mm must be shorter than the space between the end plates, %.4g mm (shell length − 2 × end plate thickness), to leave room for the working gap",
			g.PoleLength*mm, inner*mm)
	}
	return nil
}

// PlungerOption changes how NewPlungerMagnet builds the circuit.
type PlungerOption func(*plungerOptions)

type plungerOptions struct {
	noFringing, noLeakage bool
}

// WithoutFringing drops the working gap's fringing permeance (face
// permeance µ0·A/x only), for checks against the plain series circuit.
func WithoutFringing() PlungerOption { return func(o *plungerOptions) { o.noFringing = true } }

// WithoutLeakage drops the coil-space leakage permeance.
func WithoutLeakage() PlungerOption { return func(o *plungerOptions) { o.noLeakage = true } }

// PlungerMagnet is a lumped (reluctance-network) magnetic model of a
// cylindrical plunger electromagnet built from its dimensions and a steel
// B–H law. The network, with MMF N·i of the coil:
//
//	N·i ── series part S (flux Φt) ──┬── gap branch G (flux Φg) ──┬──
//	                                 └── leakage P_l (flux Φl) ────┘
//
// S: the sliding gap, the plunger, the front plate and the shell, all
// carrying Φt = Φg + Φl (the plunger and shell carry less where leakage
// has left them; charging them with Φt overstates their saturation a
// little). G: the working gap with its fringing permeance, the pole and
// the back plate. P_l: the leakage across the coil space from the plunger
// to the shell, in parallel with G. Every reluctance and permeance is named
// with its source at the helper that computes it.
//
// The coil's flux linkage is λ = N·Φt = N·(Φg + Φl): with the energy-
// equivalent leakage permeance P_l (one third of the geometric one, see
// leakagePermeance) the leakage flux is counted fully linked (factor 1),
// which is exactly the linkage of the distributed leakage flux for a
// uniformly distributed winding, and keeps the network reciprocal so that
// the co-energy force is Maxwell's pull on the gap (see FaceFlux).
//
// Limitations: the leakage is lumped as if the working gap sat at the pole
// end of the winding (MMF across the coil space rising linearly along the
// winding); with the gap mid-winding the real leakage is smaller. Corner
// paths in the frame, eddy currents, hysteresis and the radial variation of
// flux density within the plunger and pole are neglected. It is a sizing
// model, not a field solution.
type PlungerMagnet struct {
	geom  PlungerGeometry
	steel BHCurve
	turns float64
	opts  plungerOptions

	aGap      float64 // m², working-gap face area π·min(rp, rpole)²
	dGap      float64 // m, diameter of that face
	tFringe   float64 // m, side length available to fringing flux
	rSlide    float64 // 1/H, sliding-gap reluctance
	pLeak     float64 // H, energy-equivalent leakage permeance (0 when off)
	aPlunger  float64 // m²
	aPole     float64 // m²
	aShell    float64 // m²
	lShell    float64 // m, shell path length between the plate mid-planes
	rFront    [2]float64
	rBack     [2]float64
	plateT    float64             // m
	gl        [plateNodes]float64 // Gauss–Legendre nodes in u ∈ [0, 1]
	glw       [plateNodes]float64 // and weights
	frontLogR float64             // ln(r2/r1) of the front plate
	backLogR  float64             // ln(r2/r1) of the back plate
}

// plateNodes is the Gauss–Legendre order for the radial MMF integral of an
// end plate; the integrand is smooth in ln r and exact for linear steel.
const plateNodes = 6

// NewPlungerMagnet validates the geometry, the steel law and the turn
// count and builds the model. The steel law is checked with its own
// Validate method when it has one, then probed: H must be finite, 0 at
// B = 0 and increasing, and B(H(B)) must return B, at a few flux densities
// from 0.01 T to 5 T.
func NewPlungerMagnet(g PlungerGeometry, steel BHCurve, turns float64, opts ...PlungerOption) (*PlungerMagnet, error) {
	if err := g.Validate(); err != nil {
		return nil, err
	}
	if !(turns > 0) || math.IsInf(turns, 0) {
		return nil, fmt.Errorf("magnet: plunger: turns must be positive and finite, got %g", turns)
	}
	if err := checkSteel(steel); err != nil {
		return nil, err
	}
	p := &PlungerMagnet{geom: g, steel: steel, turns: turns}
	for _, o := range opts {
		if o != nil {
			o(&p.opts)
		}
	}
	rp, rpole := g.PlungerDiameter/2, g.PoleDiameter/2
	rg := math.Min(rp, rpole)
	rShellIn := g.ShellOuterDiameter/2 - g.ShellWall
	rShellMean := g.ShellOuterDiameter/2 - g.ShellWall/2
	p.aGap = math.Pi * rg * rg
	p.dGap = 2 * rg
	if !p.opts.noFringing {
		p.tFringe = math.Min(g.WindingInnerRadius-rg, math.Min(g.PoleLength, g.PlungerLength))
	}
	p.rSlide = math.Log((rp+g.SlidingGap)/rp) / (2 * math.Pi * Mu0 * g.SlidingLength)
	if !p.opts.noLeakage {
		p.pLeak = leakagePermeance(g.WindingLength, rp, rShellIn)
	}
	p.aPlunger = math.Pi * rp * rp
	p.aPole = math.Pi * rpole * rpole
	p.aShell = math.Pi * (g.ShellOuterDiameter*g.ShellOuterDiameter/4 - rShellIn*rShellIn)
	p.lShell = g.ShellLength - g.EndPlateThickness
	p.rFront = [2]float64{rp + g.SlidingGap, rShellMean}
	p.rBack = [2]float64{rpole, rShellMean}
	p.frontLogR = math.Log(p.rFront[1] / p.rFront[0])
	p.backLogR = math.Log(p.rBack[1] / p.rBack[0])
	p.plateT = g.EndPlateThickness
	quad.Legendre{}.FixedLocations(p.gl[:], p.glw[:], 0, 1)
	return p, nil
}

// checkSteel validates and probes a B–H law.
func checkSteel(steel BHCurve) error {
	if steel == nil {
		return errors.New("magnet: plunger: steel B–H law is missing")
	}
	if v, ok := steel.(interface{ Validate() error }); ok {
		if err := v.Validate(); err != nil {
			return fmt.Errorf("magnet: plunger: steel: %w", err)
		}
	}
	if h := steel.H(0); h != 0 {
		return fmt.Errorf("magnet: plunger: steel B–H law: H(0 T) = %g A/m, want 0", h)
	}
	prev := 0.0
	for _, b := range []float64{0.01, 0.1, 0.5, 1, 1.5, 2, 2.5, 5} {
		h := steel.H(b)
		if !isFinite(h) || !(h > prev) {
			return fmt.Errorf("magnet: plunger: steel B–H law: H(%g T) = %g A/m, want finite and increasing (previous %g A/m)", b, h, prev)
		}
		if bb := steel.B(h); !(math.Abs(bb-b) <= 1e-6*b) {
			return fmt.Errorf("magnet: plunger: steel B–H law: B(H(%g T)) = %g T, want the inverse", b, bb)
		}
		prev = h
	}
	return nil
}

// leakagePermeance returns the energy-equivalent permeance (H) of the
// leakage across the winding space, P_l = (1/3)·2π·µ0·L/ln(r2/r1).
//
// 2π·µ0·L/ln(r2/r1) is the exact permeance of the coaxial cylindrical region
// between the plunger (radius r1) and the shell (r2) over the winding length
// L (radial field of a coaxial cylinder, any electromagnetics text). With
// the MMF across that region rising linearly along the winding from 0 to F
// (distributed leakage, Roters, Electromagnetic Devices, Wiley 1941 — the
// chapter on leakage in plunger magnets, chapter number from memory), the
// flux crossing at z·L links the fraction z of the turns, so the linkage is
// N·∫0^1 z·(P·F·z) dz = N·P·F/3 and the stored energy ½·P·F²/3: the circuit
// uses P/3 with full linkage. (The physical leakage flux P·F/2 is 1.5× the
// network's Φl.)
func leakagePermeance(length, r1, r2 float64) float64 {
	return 2 * math.Pi * Mu0 * length / math.Log(r2/r1) / 3
}

// gapPermeance returns the working-gap permeance (H) at gap x (m): the face
// permeance µ0·A/x (uniform field between flat faces) and the fringing
// permeance around the face edge
//
//	P_f = µ0·d·ln(1 + π·t/x),
//
// from Roters' method of probable flux paths (Roters, Electromagnetic
// Devices, Wiley 1941, the chapter on permeance of air paths): a flux tube
// leaving the pole's side at distance s behind its face runs a quarter
// circle of radius s round the pole's edge, straight across the gap and a
// quarter circle round the plunger's edge, length x + π·s, through the
// cross-section π·d·ds, integrated for s from 0 to t; d is the smaller face
// diameter and t the side length available to the fringing flux (the
// radial room to the coil bore, at most the pole and plunger lengths).
// Validity: x small against d (x ≲ d/4) and faces of about equal diameter;
// with a larger opposing face the paths are shorter and this underestimates
// the fringing; for x comparable with d the arc-and-line paths are a rough
// guess. The face permeance dominates as x → 0 (P_f/P_face → 0).
func (p *PlungerMagnet) gapPermeance(x float64) (face, fringe float64) {
	face = Mu0 * p.aGap / x
	if p.tFringe > 0 {
		fringe = Mu0 * p.dGap * math.Log1p(math.Pi*p.tFringe/x)
	}
	return face, fringe
}

// plateMMF returns the MMF (A) across a radial disc of thickness t from
// radius r1 to r1·e^logR carrying flux phi (Wb) radially: ∫ H(B(r)) dr with
// B(r) = phi/(2π·r·t). For linear steel it is phi·ln(r2/r1)/(2π·µ·t), the
// exact reluctance of a radial disc (same field as the coaxial cylinder);
// for nonlinear steel the integral is taken in u = ln r by Gauss–Legendre
// quadrature (exact when H·r is constant, i.e. linear steel).
func (p *PlungerMagnet) plateMMF(phi, r1, logR float64) float64 {
	c := phi / (2 * math.Pi * p.plateT) // B·r, T·m
	sum := 0.0
	for k := range plateNodes {
		r := r1 * math.Exp(p.gl[k]*logR)
		sum += p.glw[k] * p.steel.H(c/r) * r
	}
	return sum * logR
}

// branchMMF returns the MMF (A) across the gap branch G carrying phiG (Wb)
// at gap x and the MMF across the working gap alone (A): gap (magnetic
// Ohm's law, Φ·ℜ = Φ/P), pole H·l and back plate.
func (p *PlungerMagnet) branchMMF(phiG, x float64) (total, gap float64) {
	face, fringe := p.gapPermeance(x)
	gap = phiG / (face + fringe)
	total = gap + p.steel.H(phiG/p.aPole)*p.geom.PoleLength + p.plateMMF(phiG, p.rBack[0], p.backLogR)
	return total, gap
}

// seriesMMF returns the MMF (A) across the series part S carrying phiT
// (Wb): sliding gap ln(r2/r1)/(2π·µ0·L) (exact for the coaxial cylindrical
// gap), plunger and shell H·l, front plate.
func (p *PlungerMagnet) seriesMMF(phiT float64) float64 {
	return phiT*p.rSlide +
		p.steel.H(phiT/p.aPlunger)*p.geom.PlungerLength +
		p.steel.H(phiT/p.aShell)*p.lShell +
		p.plateMMF(phiT, p.rFront[0], p.frontLogR)
}

// PlungerState is the solved magnetic circuit at one current and gap.
type PlungerState struct {
	Current     float64 // A
	Gap         float64 // m
	FluxLinkage float64 // Wb, λ = N·TotalFlux
	TotalFlux   float64 // Wb, Φt through the coil and the series part
	GapFlux     float64 // Wb, Φg through the working gap (face and fringe), pole and back plate
	FaceFlux    float64 // Wb, part of Φg crossing between the faces (µ0·A/x share)
	LeakageFlux float64 // Wb, Φl = P_l·(gap-branch MMF), energy-equivalent
	GapMMF      float64 // A, across the working gap
	FaceArea    float64 // m², working-gap face area
	Parts       []SteelPartState
}

// SteelPartState is the flux density in one steel part; for an end plate
// it is the largest, at the plate's inner radius.
type SteelPartState struct {
	Part string  // "plunger", "pole", "shell", "front plate", "back plate"
	B    float64 // T
	H    float64 // A/m, from the B–H law
}

// Solve solves the circuit at current i (A) and gap x (m). Given N·i it
// finds Φg with
//
//	F_G(Φg) + F_S(Φg + P_l·F_G(Φg)) = N·|i|,
//
// F_G and F_S the MMFs of the gap branch and the series part; the left side
// is continuous and strictly increasing in Φg (each term is), negative
// minus N·|i| at 0 and ≥ 0 at Φg = N·|i|·(gap permeance) (the air gap alone
// would take all of N·i there), so the root is bracketed and found by
// Brent's method (R. P. Brent, Algorithms for Minimization without
// Derivatives, Prentice-Hall 1973, ch. 4) to about 1e-15 relative. Fluxes
// are odd in i. It returns an error for a non-finite current or a gap that
// is not positive and finite.
func (p *PlungerMagnet) Solve(i, x float64) (PlungerState, error) {
	st, err := p.solve(i, x)
	if err != nil {
		return PlungerState{}, err
	}
	parts := []struct {
		name string
		b    float64
	}{
		{"plunger", st.TotalFlux / p.aPlunger},
		{"pole", st.GapFlux / p.aPole},
		{"shell", st.TotalFlux / p.aShell},
		{"front plate", st.TotalFlux / (2 * math.Pi * p.rFront[0] * p.plateT)},
		{"back plate", st.GapFlux / (2 * math.Pi * p.rBack[0] * p.plateT)},
	}
	st.Parts = make([]SteelPartState, len(parts))
	for k, q := range parts {
		st.Parts[k] = SteelPartState{Part: q.name, B: q.b, H: p.steel.H(q.b)}
	}
	return st, nil
}

func (p *PlungerMagnet) solve(i, x float64) (PlungerState, error) {
	if !isFinite(i) {
		return PlungerState{}, fmt.Errorf("magnet: plunger: current must be finite, got %g A", i)
	}
	if !(x > 0) || math.IsInf(x, 0) {
		return PlungerState{}, fmt.Errorf("magnet: plunger: working gap must be positive and finite, got %g m", x)
	}
	st := PlungerState{Current: i, Gap: x, FaceArea: p.aGap}
	mmf := p.turns * math.Abs(i)
	if mmf == 0 {
		return st, nil
	}
	face, fringe := p.gapPermeance(x)
	f := func(phiG float64) float64 {
		fg, _ := p.branchMMF(phiG, x)
		return fg + p.seriesMMF(phiG+p.pLeak*fg) - mmf
	}
	hi := mmf * (face + fringe)
	phiG := hi // f(hi) ≤ 0 only by rounding: the root is hi
	if fhi := f(hi); fhi > 0 {
		phiG = brentRoot(f, 0, hi, -mmf, fhi)
	}
	fg, gap := p.branchMMF(phiG, x)
	phiL := p.pLeak * fg
	sgn := math.Copysign(1, i)
	st.GapFlux = sgn * phiG
	st.FaceFlux = sgn * gap * face
	st.LeakageFlux = sgn * phiL
	st.TotalFlux = sgn * (phiG + phiL)
	st.GapMMF = sgn * gap
	st.FluxLinkage = p.turns * st.TotalFlux
	return st, nil
}

// brentRoot returns a root of f in [a, b] given fa = f(a) < 0 <= fb = f(b),
// by Brent's method (R. P. Brent, Algorithms for Minimization without
// Derivatives, Prentice-Hall 1973, ch. 4: inverse quadratic interpolation
// or secant steps kept inside a shrinking bracket, else bisection), stopping
// when the bracket is below 2·ε·|b| (ε the float64 epsilon).
func brentRoot(f func(float64) float64, a, b, fa, fb float64) float64 {
	const eps = 0x1p-52
	if fb == 0 {
		return b
	}
	c, fc := a, fa
	d := b - a
	e := d
	for range 300 {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2 * eps * math.Abs(b)
		m := 0.5 * (c - b)
		if math.Abs(m) <= tol || fb == 0 {
			return b
		}
		if math.Abs(e) < tol || math.Abs(fa) <= math.Abs(fb) {
			d, e = m, m
		} else {
			s := fb / fa
			var pp, q float64
			if a == c {
				pp = 2 * m * s
				q = 1 - s
			} else {
				q = fa / fc
				r := fb / fc
				pp = s * (2*m*q*(q-r) - (b-a)*(r-1))
				q = (q - 1) * (r - 1) * (s - 1)
			}
			if pp > 0 {
				q = -q
			} else {
				pp = -pp
			}
			if 2*pp < 3*m*q-math.Abs(tol*q) && pp < math.Abs(0.5*e*q) {
				e = d
				d = pp / q
			} else {
				d, e = m, m
			}
		}
		a, fa = b, fb
		switch {
		case math.Abs(d) > tol:
			b += d
		case m > 0:
			b += tol
		default:
			b -= tol
		}
		fb = f(b)
	}
	return b
}

// FluxLinkage returns λ(i, x) = N·Φt (Wb) at current i (A) and gap x (m);
// odd in i. It returns Solve's errors.
func (p *PlungerMagnet) FluxLinkage(i, x float64) (float64, error) {
	st, err := p.solve(i, x)
	return st.FluxLinkage, err
}

// SteelFluxDensity returns the largest |B| (T) in any steel part at current
// i (A) and gap x (m), and the part's name, for reporting saturation (a
// part is deep in saturation when its B exceeds about Js of its steel). It
// returns Solve's errors.
func (p *PlungerMagnet) SteelFluxDensity(i, x float64) (b float64, part string, err error) {
	st, err := p.Solve(i, x)
	if err != nil {
		return 0, "", err
	}
	for _, q := range st.Parts {
		if math.Abs(q.B) > b || part == "" {
			b, part = math.Abs(q.B), q.Part
		}
	}
	return b, part, nil
}

// GapFluxDensity returns the flux density B (T) between the working gap's
// faces at current i (A) and gap x (m): the face flux over the face area,
// Φ_face/A = µ0·F_gap/x (the uniform field of the face permeance µ0·A/x;
// the fringing flux around the faces is not in it). Its Maxwell pull
// B²·A/(2µ0) is the face part of the model's force. Odd in i; it returns
// Solve's errors.
func (p *PlungerMagnet) GapFluxDensity(i, x float64) (float64, error) {
	st, err := p.solve(i, x)
	if err != nil {
		return 0, err
	}
	return st.FaceFlux / p.aGap, nil
}

// Turns returns the coil's turn count.
func (p *PlungerMagnet) Turns() float64 { return p.turns }

// FaceArea returns the working-gap face area (m²), π·min(r_plunger, r_pole)².
func (p *PlungerMagnet) FaceArea() float64 { return p.aGap }

// Geometry returns the model's geometry.
func (p *PlungerMagnet) Geometry() PlungerGeometry { return p.geom }

// BuildTable samples FluxLinkage on the grid (currents ascending from 0 A,
// gaps ascending and positive, m) and builds a Table with NewTable, whose
// force is the exact gap derivative of its own co-energy. It returns
// FluxLinkage's and NewTable's errors; NewTable asks for a finer gap grid
// when its blend would overshoot.
func (p *PlungerMagnet) BuildTable(currents, gaps []float64) (*Table, error) {
	if len(currents) < 2 || len(gaps) < 2 {
		return nil, fmt.Errorf("magnet: plunger: table needs at least 2 currents and 2 gaps, got %d and %d", len(currents), len(gaps))
	}
	flux := make([][]float64, len(currents))
	for k, i := range currents {
		flux[k] = make([]float64, len(gaps))
		for j, x := range gaps {
			l, err := p.FluxLinkage(i, x)
			if err != nil {
				return nil, err
			}
			flux[k][j] = l
		}
	}
	return NewTable(currents, gaps, flux)
}

// PlungerSaturationFraction is the fraction of the low-current incremental
// inductance that defines SaturationOnset.
const PlungerSaturationFraction = 0.8

// SaturationOnset returns the saturation-onset current (A) at gap x (m):
// the smallest current i ≥ 0 at which the incremental inductance ∂λ/∂i
// has fallen to PlungerSaturationFraction (80 %) of its low-current value
// L0 = λ(i0, x)/i0, i0 the current of 1 mA-turn (N·i0 = 1e-3 A). It scans
// up in steps of ×1.25 to N·i = 1e12 A and refines the crossing by
// bisection to 1e-10 relative; ∂λ/∂i is a central difference of ±1e-5
// relative. It returns +Inf when no crossing is found below that limit and
// 0 when x is not a positive finite gap (FluxLinkage then tells why).
func (p *PlungerMagnet) SaturationOnset(x float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 0
	}
	i0 := 1e-3 / p.turns
	l0, _ := p.FluxLinkage(i0, x)
	target := PlungerSaturationFraction * l0 / i0
	below := func(i float64) bool { return p.incremental(i, x) < target }
	lo := i0
	for i := i0 * 1.25; p.turns*i <= 1e12; i *= 1.25 {
		if below(i) {
			hi := i
			for hi-lo > 1e-10*hi {
				mid := 0.5 * (lo + hi)
				if below(mid) {
					hi = mid
				} else {
					lo = mid
				}
			}
			return 0.5 * (lo + hi)
		}
		lo = i
	}
	return math.Inf(1)
}

// incremental returns ∂λ/∂i (H) at (i, x) by a central difference.
func (p *PlungerMagnet) incremental(i, x float64) float64 {
	h := 1e-5 * i
	a, _ := p.FluxLinkage(i+h, x)
	b, _ := p.FluxLinkage(i-h, x)
	return (a - b) / (2 * h)
}
