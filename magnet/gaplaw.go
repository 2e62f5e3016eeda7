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
	x = clamp(x, g.xMin, g.xMax)
	return g.lLeak + 1/(g.a+g.b*x)
}

// InductanceSlope returns dL/dx = −b/(a + b·x)² (H/m) at gap x (m); it is
// taken at the clamped gap outside GapRange.
func (g *GapLaw) InductanceSlope(x float64) float64 {
	x = clamp(x, g.xMin, g.xMax)
	d := g.a + g.b*x
	return -g.b / (d * d)
}

// FluxLinkage returns λ = L(x)·i (Wb).
func (g *GapLaw) FluxLinkage(i, x float64) float64 { return g.Inductance(x) * i }

// Current returns i = λ/L(x) (A).
func (g *GapLaw) Current(lam, x float64) float64 { return lam / g.Inductance(x) }

// Partials returns ∂i/∂λ = 1/L (1/H) and ∂i/∂x = −λ·L'/L² (A/m); ∂i/∂x is 0
// outside GapRange, where L is held constant.
func (g *GapLaw) Partials(lam, x float64) (diDlam, diDx float64) {
	l := g.Inductance(x)
	diDlam = 1 / l
	if x < g.xMin || x > g.xMax {
		return diDlam, 0
	}
	return diDlam, -lam * g.InductanceSlope(x) / (l * l)
}

// CoEnergy returns W' = ½·L(x)·i² (J).
func (g *GapLaw) CoEnergy(i, x float64) float64 { return 0.5 * g.Inductance(x) * i * i }

// Force returns F = −½·i²·dL/dx = ½·i²·b/(a + b·x)² (N), the co-energy
// force at constant current.
func (g *GapLaw) Force(i, x float64) float64 { return -0.5 * i * i * g.InductanceSlope(x) }

// GapRange returns the seated and rest gaps (m).
func (g *GapLaw) GapRange() (min, max float64) { return g.xMin, g.xMax }
