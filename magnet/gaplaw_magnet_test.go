package magnet

import (
	"math"
	"testing"
)

// TestMagnetHoldingForceClosedForm: the zero-current pull of the gap law
// with a magnet against the magnetic circuit computed directly. Source:
// the magnet as an MMF F_m in series with the circuit's reluctances
// (Fitzgerald & Kingsley, Electric Machinery, 6th ed., ch. 1 magnetic
// circuits and ch. 3 §3.7 systems with permanent magnets; from memory), so
// its gap flux is Φ_pm = F_m/(ℜ_iron + x/(µ0·A)) (the magnet's recoil
// reluctance is inside ℜ_iron as measured), and Maxwell's pull on a pole
// face, F = Φ²/(2·µ0·A) (Hayt & Buck, Engineering Electromagnetics, force
// on magnetic materials).
func TestMagnetHoldingForceClosedForm(t *testing.T) {
	t.Parallel()
	const tol = 1e-9 // relative
	g := refLatchLaw(t)
	for _, x := range []float64{refXMin, 0.4e-3, 1e-3, refXMax} {
		phi := refMagnetMMF / (refIronRel + x/(Mu0*refArea))
		want := phi * phi / (2 * Mu0 * refArea)
		if got := g.Force(0, x); relErr(got, want) > tol {
			t.Errorf("%v.Force(0, %g) = %.12g N, want Φ²/(2µ0A) = %.12g N", g, x, got, want)
		}
		// λ(0, x) = N·Φ_pm: the magnet's flux through the coil.
		if got := g.FluxLinkage(0, x); relErr(got, refTurns*phi) > tol {
			t.Errorf("%v.FluxLinkage(0, %g) = %.12g Wb, want N·Φ = %.12g Wb", g, x, got, refTurns*phi)
		}
		// The cancelling current −F_m/N: no gap flux, no pull.
		if got := g.Force(-refMagnetMMF/refTurns, x); got != 0 {
			t.Errorf("%v.Force(%g, %g) = %g N, want 0 (magnet cancelled)", g, -refMagnetMMF/refTurns, x, got)
		}
	}
	// The MMF from a holding force at the seat gives that force back.
	hold := g.Force(0, refXMin)
	mmf, err := refGapLaw(t).MMFForHoldingForce(hold, refXMin)
	if err != nil || relErr(mmf, refMagnetMMF) > tol {
		t.Errorf("MMFForHoldingForce(%g N) = %g A, %v; want %g A", hold, mmf, err, refMagnetMMF)
	}
	if got := g.MagnetMMF(); relErr(got, refMagnetMMF) > 1e-15 {
		t.Errorf("MagnetMMF() = %g A, want %g A", got, refMagnetMMF)
	}
}

// TestMagnetFieldEnergyChange: the stored energy W = λ·i − W' changes by
// the electrical input minus the mechanical work, dW = i·dλ − F·(−dx)
// (energy balance of a lossless coupling field, Fitzgerald & Kingsley,
// Electric Machinery, ch. 3), on an open path from the rest gap at zero
// current to the seat at a negative (release) current: the magnet's part
// of W is counted consistently with the co-energy.
func TestMagnetFieldEnergyChange(t *testing.T) {
	t.Parallel()
	const tol = 1e-7 // of the largest co-energy; trapezoid error ~1e-8
	g := refLatchLaw(t)
	corners := [][2]float64{{0, refXMax}, {0, refXMin}, {-1.2, refXMin}, {-1.2, 1e-3}}
	elec, mech := pathWork(g, corners, 20000)
	scale := 0.0
	for _, c := range corners {
		scale = math.Max(scale, math.Abs(g.CoEnergy(c[0], c[1])))
	}
	a, b := corners[0], corners[len(corners)-1]
	dW := FieldEnergy(g, b[0], b[1]) - FieldEnergy(g, a[0], a[1])
	if d := elec - mech - dW; math.Abs(d) > tol*scale {
		t.Errorf("∫i dλ − ∫F(−dx) = %g J − %g J, ΔW = %g J: differ by %g J, want < %g J", elec, mech, dW, d, tol*scale)
	}
	if math.Abs(mech) < 0.1*scale {
		t.Errorf("mechanical work %g J, want a sizeable part of %g J", mech, scale)
	}
}

// pathWork is cycleWork on an open path through the corners.
func pathWork(m Model, corners [][2]float64, n int) (elec, mech float64) {
	for c := 0; c+1 < len(corners); c++ {
		a, b := corners[c], corners[c+1]
		iPrev, xPrev := a[0], a[1]
		lPrev, fPrev := m.FluxLinkage(iPrev, xPrev), m.Force(iPrev, xPrev)
		for s := 1; s <= n; s++ {
			u := float64(s) / float64(n)
			i, x := a[0]+(b[0]-a[0])*u, a[1]+(b[1]-a[1])*u
			l, f := m.FluxLinkage(i, x), m.Force(i, x)
			elec += 0.5 * (i + iPrev) * (l - lPrev)
			mech -= 0.5 * (f + fPrev) * (x - xPrev)
			iPrev, xPrev, lPrev, fPrev = i, x, l, f
		}
	}
	return elec, mech
}

// TestMagnetPartials: Partials against central differences of Current
// (definition of the partial derivatives), at both current signs.
func TestMagnetPartials(t *testing.T) {
	t.Parallel()
	const tol = 1e-6
	g := refLatchLaw(t)
	for _, x := range []float64{0.3e-3, 1e-3, 2.5e-3} {
		for _, i := range []float64{-2, -0.5, 0, 1.1} {
			lam := g.FluxLinkage(i, x)
			dl, dx := g.Partials(lam, x)
			hl, hx := 1e-6*math.Abs(lam)+1e-9, 1e-7*x
			wl := (g.Current(lam+hl, x) - g.Current(lam-hl, x)) / (2 * hl)
			wx := (g.Current(lam, x+hx) - g.Current(lam, x-hx)) / (2 * hx)
			if relErr(dl, wl) > tol || relErr(dx, wx) > tol {
				t.Errorf("%v.Partials(%g, %g) = %g, %g; want %g, %g", g, lam, x, dl, dx, wl, wx)
			}
		}
	}
}

// TestMagnetErrors: a magnet needs the turns; MMF and holding force must be
// finite and not zero.
func TestMagnetErrors(t *testing.T) {
	t.Parallel()
	if _, err := mustGapLaw(t).WithMagnet(100); err == nil {
		t.Error("WithMagnet on a gap law without turns: no error")
	}
	for _, v := range []float64{0, math.NaN(), math.Inf(1)} {
		if _, err := refGapLaw(t).WithMagnet(v); err == nil {
			t.Errorf("WithMagnet(%g): no error", v)
		}
		if _, err := refGapLaw(t).MMFForHoldingForce(v, refXMin); err == nil {
			t.Errorf("MMFForHoldingForce(%g): no error", v)
		}
	}
}
