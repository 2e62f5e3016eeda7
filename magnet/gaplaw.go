package magnet

import (
	"fmt"
	"math"
)

// Mu0 is the magnetic constant µ0 = 4π×10⁻⁷ H/m, the exact value before the
// 2019 SI revision; it is within 1e-9 (relative) of the CODATA 2018 value
// 1.25663706212e-6 H/m.
const Mu0 = 4 * math.Pi * 1e-7

// negTol is the relative tolerance under which a slightly negative solved
// leakage or iron reluctance (rounding in consistent data) is taken as 0.
const negTol = 1e-9

// GapLaw is the linear-iron (unsaturated) gap-law model
//
//	L(x) = L_leak + 1/(a + b·x),  λ = L(x)·i,  W' = ½·L(x)·i²,  F = −½·i²·dL/dx,
//
// which is L_leak + N²/(ℜ_iron + x/(µ0·A)) for N turns, pole area A (m²)
// and iron reluctance ℜ_iron (1/H): a = ℜ_iron/N² (1/H), b = 1/(µ0·A·N²)
// (1/(H·m)). This is the magnetic-circuit (reluctance) model of a plunger
// magnet with the force from the co-energy principle (e.g. Fitzgerald &
// Kingsley, Electric Machinery, ch. 3). Gaps outside GapRange are clamped.
type GapLaw struct {
	lLeak      float64 // H
	a          float64 // 1/H
	b          float64 // 1/(H·m)
	xMin, xMax float64 // m
	turns      float64 // 0 when unknown
	// iMag (A) is the permanent magnet's MMF over the turns, F_m/N: the
	// constant current of the equivalent winding; 0 without a magnet.
	iMag float64
}

// NewGapLaw builds the model from the inductances (H) at the seated gap xMin
// and the rest gap xMax (m), with no leakage: 1/L = a + b·x through the two
// points. It returns an error for non-positive or non-finite inductances,
// lClosed <= lOpen, xMin < 0, xMax <= xMin, and for data that would need a
// negative iron reluctance (lClosed/lOpen > xMax/xMin).
func NewGapLaw(lClosed, lOpen, xMin, xMax float64) (*GapLaw, error) {
	if err := checkGapLawData(lClosed, lOpen, xMin, xMax); err != nil {
		return nil, err
	}
	b := (1/lOpen - 1/lClosed) / (xMax - xMin)
	a := 1/lClosed - b*xMin
	if a < -negTol/lClosed {
		return nil, fmt.Errorf("magnet: gap law: data imply negative iron reluctance: "+
			"closed/open inductance ratio %g exceeds the rest/seated gap ratio %g, "+
			"the most a pure air gap allows; check the seated gap and the inductances",
			lClosed/lOpen, xMax/xMin)
	}
	a = math.Max(a, 0)
	return &GapLaw{a: a, b: b, xMin: xMin, xMax: xMax}, nil
}

// NewGapLawTurns also takes the turn count and the pole area (m²): then
// b = 1/(µ0·A·N²) is known and L_leak (H) and a (1/H) are solved from the
// two inductances. It returns the errors of NewGapLaw, errors for
// non-positive turns or area, and a named error when the data imply a
// negative leakage inductance or a negative iron reluctance.
func NewGapLawTurns(lClosed, lOpen, xMin, xMax, turns, poleArea float64) (*GapLaw, error) {
	if err := checkGapLawData(lClosed, lOpen, xMin, xMax); err != nil {
		return nil, err
	}
	if !(turns > 0) || math.IsInf(turns, 0) {
		return nil, fmt.Errorf("magnet: gap law: turns must be positive and finite, got %g", turns)
	}
	if !(poleArea > 0) || math.IsInf(poleArea, 0) {
		return nil, fmt.Errorf("magnet: gap law: pole area must be positive and finite, got %g m²", poleArea)
	}
	b := 1 / (Mu0 * poleArea * turns * turns)
	// With u = a + b·xMin and bd = b·(xMax − xMin):
	// lClosed − lOpen = 1/u − 1/(u + bd) = bd/(u·(u + bd)), so
	// u² + bd·u − c = 0 with c = bd/(lClosed − lOpen); take the positive root
	// in the cancellation-free form.
	bd := b * (xMax - xMin)
	c := bd / (lClosed - lOpen)
	u := 2 * c / (bd + math.Sqrt(bd*bd+4*c))
	lLeak := lClosed - 1/u
	a := u - b*xMin
	if lLeak < -negTol*lClosed {
		return nil, fmt.Errorf("magnet: gap law: data imply negative leakage inductance %g H: "+
			"the closed−open inductance change %g H is too large for %g turns on %g m² "+
			"(air-gap inductance at the seated gap would exceed the closed inductance); "+
			"check turns, pole area and the inductance values", lLeak, lClosed-lOpen, turns, poleArea)
	}
	if a < -negTol*u {
		return nil, fmt.Errorf("magnet: gap law: data imply negative iron reluctance %g 1/H: "+
			"the closed−open inductance change %g H needs an air-gap inductance of %g H at the seated gap, "+
			"more than a pure air gap of %g m gives with %g turns on %g m² (%g H); "+
			"check the seated gap, turns and pole area", a*turns*turns, lClosed-lOpen, 1/u,
			xMin, turns, poleArea, 1/(b*xMin))
	}
	return &GapLaw{lLeak: math.Max(lLeak, 0), a: math.Max(a, 0), b: b, xMin: xMin, xMax: xMax, turns: turns}, nil
}

func checkGapLawData(lClosed, lOpen, xMin, xMax float64) error {
	switch {
	case !(lClosed > 0) || math.IsInf(lClosed, 0):
		return fmt.Errorf("magnet: gap law: closed inductance must be positive and finite, got %g H", lClosed)
	case !(lOpen > 0) || math.IsInf(lOpen, 0):
		return fmt.Errorf("magnet: gap law: open inductance must be positive and finite, got %g H", lOpen)
	case lClosed <= lOpen:
		return fmt.Errorf("magnet: gap law: closed inductance must exceed open inductance, got %g H <= %g H", lClosed, lOpen)
	case !(xMin >= 0) || math.IsInf(xMin, 0):
		return fmt.Errorf("magnet: gap law: seated gap must be finite and not negative, got %g m", xMin)
	case !(xMax > xMin) || math.IsInf(xMax, 0):
		return fmt.Errorf("magnet: gap law: rest gap must be finite and exceed the seated gap %g m, got %g m", xMin, xMax)
	}
	return nil
}

// String describes the model for messages.
func (g *GapLaw) String() string {
	return fmt.Sprintf("GapLaw{L(%g m)=%g H, L(%g m)=%g H, Lleak=%g H}",
		g.xMin, g.Inductance(g.xMin), g.xMax, g.Inductance(g.xMax), g.lLeak)
}

// Leakage returns the leakage inductance L_leak (H); 0 from NewGapLaw.
func (g *GapLaw) Leakage() float64 { return g.lLeak }

// Coefficients returns a (1/H) and b (1/(H·m)) of L(x) = L_leak + 1/(a + b·x).
func (g *GapLaw) Coefficients() (a, b float64) { return g.a, g.b }

// IronReluctance returns ℜ_iron = a·N² (1/H, i.e. A-turn/Wb); ok is false
// when the turn count is unknown (model from NewGapLaw).
func (g *GapLaw) IronReluctance() (r float64, ok bool) {
	if g.turns == 0 {
		return 0, false
	}
	return g.a * g.turns * g.turns, true
}

// Inductance returns L(x) (H) at gap x (m), clamped to GapRange.
func (g *GapLaw) Inductance(x float64) float64 {
	return g.inductanceAt(clamp(x, g.xMin, g.xMax))
}

// InductanceSlope returns dL/dx = −b/(a + b·x)² (H/m) at gap x (m); it is
// taken at the clamped gap outside GapRange.
func (g *GapLaw) InductanceSlope(x float64) float64 {
	return g.slopeAt(clamp(x, g.xMin, g.xMax))
}

// FluxLinkage returns λ = L(x)·i (Wb); with a permanent magnet
// λ = L_leak·i + (i + i_m)/(a + b·x) (see WithMagnet).
func (g *GapLaw) FluxLinkage(i, x float64) float64 {
	return g.fluxAt(i, clamp(x, g.xMin, g.xMax))
}

// Current returns i = λ/L(x) (A); with a permanent magnet
// i = (λ − i_m·L_g(x))/L(x), L_g = 1/(a + b·x).
func (g *GapLaw) Current(lam, x float64) float64 {
	return g.currentAt(lam, clamp(x, g.xMin, g.xMax))
}

// Partials returns ∂i/∂λ = 1/L (1/H) and ∂i/∂x = −λ·L'/L² (A/m); ∂i/∂x is 0
// outside GapRange, where L is held constant. With a permanent magnet
// (λ_g = λ − i_m·L_g, and dL_g/dx = dL/dx) ∂i/∂x = −(i_m·L + λ_g)·L'/L².
func (g *GapLaw) Partials(lam, x float64) (diDlam, diDx float64) {
	if x < g.xMin || x > g.xMax {
		return 1 / g.Inductance(x), 0
	}
	return g.partialsAt(lam, x)
}

// CoEnergy returns W' = ½·L(x)·i² (J); with a permanent magnet
// W' = ½·L_leak·i² + ½·(i + i_m)²/(a + b·x) (see WithMagnet).
func (g *GapLaw) CoEnergy(i, x float64) float64 {
	return g.coEnergyAt(i, clamp(x, g.xMin, g.xMax))
}

// Force returns F = −½·i²·dL/dx = ½·i²·b/(a + b·x)² (N), the co-energy
// force at constant current; with a permanent magnet
// F = ½·(i + i_m)²·b/(a + b·x)², which at i = 0 is Maxwell's pull
// Φ_pm²/(2·µ0·A) on the magnet's own gap flux Φ_pm = F_m/ℜ_total(x).
func (g *GapLaw) Force(i, x float64) float64 {
	return g.forceAt(i, clamp(x, g.xMin, g.xMax))
}

// The law's formulas at any gap x (m), not clamped: the methods above
// clamp first; the gap piece (gapLawPiece) continues them.

func (g *GapLaw) inductanceAt(x float64) float64 { return g.lLeak + 1/(g.a+g.b*x) }

func (g *GapLaw) slopeAt(x float64) float64 {
	d := g.a + g.b*x
	return -g.b / (d * d)
}

// gapInductanceAt returns L_g(x) = 1/(a + b·x) (H), the inductance through
// the gap (L minus the leakage).
func (g *GapLaw) gapInductanceAt(x float64) float64 { return 1 / (g.a + g.b*x) }

func (g *GapLaw) fluxAt(i, x float64) float64 {
	if g.iMag == 0 {
		return g.inductanceAt(x) * i
	}
	return g.inductanceAt(x)*i + g.iMag*g.gapInductanceAt(x)
}

func (g *GapLaw) currentAt(lam, x float64) float64 {
	if g.iMag == 0 {
		return lam / g.inductanceAt(x)
	}
	return (lam - g.iMag*g.gapInductanceAt(x)) / g.inductanceAt(x)
}

func (g *GapLaw) partialsAt(lam, x float64) (diDlam, diDx float64) {
	l := g.inductanceAt(x)
	diDlam = 1 / l
	if g.iMag == 0 {
		return diDlam, -lam * g.slopeAt(x) / (l * l)
	}
	lg := lam - g.iMag*g.gapInductanceAt(x)
	return diDlam, -(g.iMag*l + lg) * g.slopeAt(x) / (l * l)
}

func (g *GapLaw) coEnergyAt(i, x float64) float64 {
	if g.iMag == 0 {
		return 0.5 * g.inductanceAt(x) * i * i
	}
	im := i + g.iMag
	return 0.5*g.lLeak*i*i + 0.5*g.gapInductanceAt(x)*im*im
}

func (g *GapLaw) forceAt(i, x float64) float64 {
	im := i + g.iMag
	return -0.5 * im * im * g.slopeAt(x)
}

// WithMagnet returns a copy of the gap law with a permanent magnet of MMF
// mmf (A, ampere-turns; > 0 aids a positive coil current) in its magnetic
// circuit. The magnet is the equivalent winding of Fitzgerald & Kingsley,
// Electric Machinery (6th ed., ch. 3, §3.7 "Forces and torques in systems
// with permanent magnets"; section title from memory): a
// winding of constant current whose MMF F_m drives flux through the
// magnet's own (recoil) reluctance ℜ_m in series with the iron and the gap.
// The inductances the gap law was made from are those measured with the
// magnet fitted, so ℜ_m is already part of the solved iron reluctance
// a·N²; the magnet adds only its MMF, as i_m = F_m/N:
//
//	Φ = (F_m + N·i)/ℜ_total(x),  ℜ_total = N²·(a + b·x),
//	W'(i, x) = ½·L_leak·i² + ½·(F_m + N·i)²/ℜ_total(x),
//	λ = ∂W'/∂i = L_leak·i + N·Φ,  F = −∂W'/∂x = ½·(i + i_m)²·b/(a + b·x)².
//
// The co-energy is that of both windings at the magnet's constant current
// (defined up to an x-independent constant, which changes neither λ nor
// F): W'(0, x) = ½·i_m²·L_g(x) is not zero, and FieldEnergy's W = λ·i − W'
// is the stored energy referred to the same datum, so its change over a
// run is exact. The model is no longer odd in i. It needs the turn count
// (NewGapLawTurns); mmf must be finite and not zero.
func (g *GapLaw) WithMagnet(mmf float64) (*GapLaw, error) {
	if g.turns == 0 {
		return nil, fmt.Errorf("magnet: gap law: a permanent magnet needs the turns and pole area")
	}
	if mmf == 0 || math.IsNaN(mmf) || math.IsInf(mmf, 0) {
		return nil, fmt.Errorf("magnet: gap law: magnet MMF must be finite and not zero, got %g A", mmf)
	}
	c := *g
	c.iMag = mmf / g.turns
	return &c, nil
}

// HasPermanentMagnet reports whether the gap law has a permanent magnet
// (Magnetized).
func (g *GapLaw) HasPermanentMagnet() bool { return g.iMag != 0 }

// MagnetMMF returns the permanent magnet's MMF F_m (A, ampere-turns); 0
// without a magnet.
func (g *GapLaw) MagnetMMF() float64 { return g.iMag * g.turns }

// MMFForHoldingForce returns the magnet MMF F_m (A) that makes the
// zero-current pull at gap x (m) equal force (N): from
// F = ½·i_m²·b/(a + b·x)², i_m = (a + b·x)·√(2F/b), F_m = N·i_m. It needs
// the turn count; force must be positive and finite.
func (g *GapLaw) MMFForHoldingForce(force, x float64) (float64, error) {
	if g.turns == 0 {
		return 0, fmt.Errorf("magnet: gap law: a holding force needs the turns and pole area")
	}
	if !(force > 0) || math.IsInf(force, 0) {
		return 0, fmt.Errorf("magnet: gap law: holding force must be positive and finite, got %g N", force)
	}
	x = clamp(x, g.xMin, g.xMax)
	return g.turns * (g.a + g.b*x) * math.Sqrt(2*force/g.b), nil
}

// GapRange returns the seated and rest gaps (m).
func (g *GapLaw) GapRange() (min, max float64) { return g.xMin, g.xMax }

// GapPieceAt returns the gap law's one piece (GapPiecewise): the law
// itself, its formulas continued beyond GapRange instead of clamped. The
// law is smooth in the gap, but clamped it has a kink at each end of its
// range, that is at the plunger's stops; an integrator's stages that
// overshoot a stop within a step that is then cut back to the impact
// evaluate the continuation instead, so that the step stays smooth.
func (g *GapLaw) GapPieceAt(x, v float64) GapPiece { return (*gapLawPiece)(g) }

// gapLawPiece is a GapLaw continued beyond its GapRange (GapPieceAt):
// inside the range, the law bit for bit.
type gapLawPiece GapLaw

func (p *gapLawPiece) law() *GapLaw { return (*GapLaw)(p) }

// Span returns the whole line: the piece is the only one.
func (p *gapLawPiece) Span() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }

// String describes the piece for messages.
func (p *gapLawPiece) String() string { return p.law().String() + " continued" }

// FluxLinkage is GapLaw.FluxLinkage, not clamped (Wb).
func (p *gapLawPiece) FluxLinkage(i, x float64) float64 { return p.law().fluxAt(i, x) }

// Current is GapLaw.Current, not clamped (A).
func (p *gapLawPiece) Current(lam, x float64) float64 { return p.law().currentAt(lam, x) }

// Partials is GapLaw.Partials, not clamped (1/H, A/m).
func (p *gapLawPiece) Partials(lam, x float64) (diDlam, diDx float64) {
	return p.law().partialsAt(lam, x)
}

// CoEnergy is GapLaw.CoEnergy, not clamped (J).
func (p *gapLawPiece) CoEnergy(i, x float64) float64 { return p.law().coEnergyAt(i, x) }

// Force is GapLaw.Force, not clamped (N).
func (p *gapLawPiece) Force(i, x float64) float64 { return p.law().forceAt(i, x) }

// CurrentForce returns Current(lam, x) and Force at that current (A, N).
func (p *gapLawPiece) CurrentForce(lam, x float64) (i, f float64) {
	g := p.law()
	i = g.currentAt(lam, x)
	return i, g.forceAt(i, x)
}

// CurrentForceNear is CurrentForce; the law needs no search hint.
func (p *gapLawPiece) CurrentForceNear(lam, x float64, _ *int) (i, f float64) {
	return p.CurrentForce(lam, x)
}

// GapRange returns the law's GapRange (m).
func (p *gapLawPiece) GapRange() (min, max float64) { return p.xMin, p.xMax }

// HasPermanentMagnet reports the law's (Magnetized).
func (p *gapLawPiece) HasPermanentMagnet() bool { return p.iMag != 0 }
