package magnet

// Model is a magnetic model of a plunger electromagnet: flux linkage and
// force as functions of coil current i (A) and working air gap x (m).
// Pulling in reduces x.
//
// Every model here is odd in i (λ(−i, x) = −λ(i, x)), so the co-energy and
// the force are even in i, except a model with a permanent magnet
// (Magnetized: GapLaw.WithMagnet, a Table with a magnet offset), whose
// λ(0, x) is the magnet's flux linkage. Each
// model derives FluxLinkage, CoEnergy and
// Force from one co-energy function W'(i, x), so that Force is exactly
// −∂W'/∂x inside GapRange. Gaps outside GapRange (an integrator overshooting
// a stop by a hair) are clamped to the range: λ, W' and the force hold their
// values at the nearest end and ∂i/∂x is 0 there; all outputs stay finite.
type Model interface {
	// FluxLinkage returns λ (Wb, weber-turns) at current i (A) and gap x (m).
	FluxLinkage(i, x float64) float64
	// Current returns the current i (A) with FluxLinkage(i, x) = lam (Wb):
	// the inverse of FluxLinkage in i at fixed x.
	Current(lam, x float64) float64
	// Partials returns ∂i/∂λ (1/H) and ∂i/∂x (A/m) at (λ, x); used for
	// Jacobians.
	Partials(lam, x float64) (diDlam, diDx float64)
	// CoEnergy returns the co-energy W'(i, x) (J), with λ = ∂W'/∂i: for a
	// model without a permanent magnet W' = ∫0^i λ(i', x) di'; with one,
	// the co-energy of the coil and the magnet's equivalent winding at its
	// constant current (GapLaw.WithMagnet; a Table counts it from the
	// zero-flux current, NewTable), so W'(0, x) ≠ 0 and its gap
	// derivative is the magnet's own pull.
	CoEnergy(i, x float64) float64
	// Force returns the pull toward smaller gap (N): F = −∂W'/∂x at
	// constant i, ≥ 0 for a normal magnet.
	Force(i, x float64) float64
	// GapRange returns the gaps (m) where the model is valid.
	GapRange() (min, max float64)
}

// Magnetized is implemented by the models that can hold a permanent magnet
// (GapLaw.WithMagnet, a Table with a magnet offset): HasPermanentMagnet
// reports whether this one does, that is whether λ(0, x) may differ from
// 0 and the model is not odd in i.
type Magnetized interface {
	HasPermanentMagnet() bool
}

// FieldEnergy returns the stored magnetic energy W = λ·i − W' (J) of model m
// at current i (A) and gap x (m): the Legendre transform of the co-energy
// (any electromechanics text, e.g. Fitzgerald & Kingsley, Electric
// Machinery, ch. 3).
func FieldEnergy(m Model, i, x float64) float64 {
	return m.FluxLinkage(i, x)*i - m.CoEnergy(i, x)
}

// clamp returns x limited to [lo, hi].
func clamp(x, lo, hi float64) float64 {
	if x < lo {
		return lo
	}
	if x > hi {
		return hi
	}
	return x
}
