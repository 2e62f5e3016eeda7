package magnet

import (
	"math"
	"testing"
)

func TestModelSymmetry(t *testing.T) {
	t.Parallel()
	// source: no permanent magnet, so λ is odd in i; W' = ∫0^i λ di' is then
	// even and so is F = −∂W'/∂x (from memory: the models are built that way).
	const symTol = 1e-15 // relative: exact by construction, allow one rounding
	for _, nm := range testModels(t) {
		t.Run(nm.name, func(t *testing.T) {
			t.Parallel()
			m := nm.m
			lo, hi := m.GapRange()
			if nm.pm {
				checkMagnetNotOdd(t, m)
				return
			}
			for _, i := range []float64{1e-4, 0.3, refTestAmps, 4.5} {
				for _, x := range linspace(lo, hi, 7) {
					if a, b := m.FluxLinkage(-i, x), m.FluxLinkage(i, x); relErr(a, -b) > symTol {
						t.Errorf("%v.FluxLinkage(%g, %g) = %g, want %g", m, -i, x, a, -b)
					}
					if a, b := m.CoEnergy(-i, x), m.CoEnergy(i, x); relErr(a, b) > symTol {
						t.Errorf("%v.CoEnergy(%g, %g) = %g, want %g", m, -i, x, a, b)
					}
					if a, b := m.Force(-i, x), m.Force(i, x); relErr(a, b) > symTol {
						t.Errorf("%v.Force(%g, %g) = %g, want %g", m, -i, x, a, b)
					}
					lam := m.FluxLinkage(i, x)
					if a := m.Current(-lam, x); relErr(a, -i) > 1e-13 {
						t.Errorf("%v.Current(%g, %g) = %g, want %g", m, -lam, x, a, -i)
					}
					dl1, dx1 := m.Partials(lam, x)
					dl2, dx2 := m.Partials(-lam, x)
					if relErr(dl2, dl1) > 1e-12 || relErr(dx2, -dx1) > 1e-12 {
						t.Errorf("%v.Partials(%g, %g) = %g, %g, want %g, %g", m, -lam, x, dl2, dx2, dl1, -dx1)
					}
				}
			}
		})
	}
}

// checkMagnetNotOdd is TestModelSymmetry's check of a model with a
// permanent magnet, which is not odd in i: λ(0, x) is not zero at any gap
// (the flag is true), Current inverts FluxLinkage at currents of both
// signs, including the release direction, and Partials are the central
// differences of Current (the odd models' Partials symmetry has no
// counterpart here).
func checkMagnetNotOdd(t *testing.T, m Model) {
	t.Helper()
	const partialsTol = 1e-5 // relative; difference step 1e-7, kinks of a table aside
	lo, hi := m.GapRange()
	for _, x := range linspace(lo, hi, 7) {
		if lam0 := m.FluxLinkage(0, x); lam0 == 0 {
			t.Errorf("%v.FluxLinkage(0, %g) = 0, want the magnet's flux", m, x)
		}
		for _, i := range []float64{-4.5, -refTestAmps, -0.3, -1e-4, 0, 1e-4, 0.3, refTestAmps, 4.5} {
			lam := m.FluxLinkage(i, x)
			if a := m.Current(lam, x); math.Abs(a-i) > 1e-13*math.Max(1, math.Abs(i)) {
				t.Errorf("%v.Current(%g, %g) = %g, want %g", m, lam, x, a, i)
			}
			if x == lo || x == hi {
				continue
			}
			dl, dx := m.Partials(lam, x)
			hl, hx := 1e-7*math.Max(math.Abs(lam), 1e-3), 1e-7*x
			wl := (m.Current(lam+hl, x) - m.Current(lam-hl, x)) / (2 * hl)
			wx := (m.Current(lam, x+hx) - m.Current(lam, x-hx)) / (2 * hx)
			if relErr(dl, wl) > partialsTol || math.Abs(dx-wx) > partialsTol*math.Max(math.Abs(wx), 1) {
				t.Errorf("%v.Partials(%g, %g) = %g, %g; central differences %g, %g", m, lam, x, dl, dx, wl, wx)
			}
		}
	}
}

func TestModelOutsideGapRangeFinite(t *testing.T) {
	t.Parallel()
	for _, nm := range testModels(t) {
		t.Run(nm.name, func(t *testing.T) {
			t.Parallel()
			m := nm.m
			lo, hi := m.GapRange()
			span := hi - lo
			xs := []float64{lo - 1e-12, lo - 1e-3*span, lo - span, 0, -1e-6, hi + 1e-12, hi + 1e-3*span, hi + span}
			for _, x := range xs {
				for _, i := range []float64{0, 1e-9, -0.8, refTestAmps, 10 * refMaxAmps} {
					lam := m.FluxLinkage(i, x)
					dl, dx := m.Partials(lam, x)
					vals := []float64{lam, m.Current(lam, x), m.CoEnergy(i, x), m.Force(i, x), dl, dx, FieldEnergy(m, i, x)}
					for q, v := range vals {
						if math.IsNaN(v) || math.IsInf(v, 0) {
							t.Errorf("%v at (i=%g, x=%g): output %d = %g, want finite", m, i, x, q, v)
						}
					}
				}
				// Clamped: the value at the nearest end (documented behaviour).
				xe := clamp(x, lo, hi)
				if a, b := m.Force(refTestAmps, x), m.Force(refTestAmps, xe); a != b {
					t.Errorf("%v.Force(%g, %g) = %g, want %g (end value)", m, refTestAmps, x, a, b)
				}
			}
		})
	}
}

func TestModelForceIsCoEnergyDerivative(t *testing.T) {
	t.Parallel()
	// source: co-energy force F = −∂W'/∂x at constant current, any
	// electromechanics textbook (e.g. Fitzgerald & Kingsley, Electric
	// Machinery, ch. 3); central difference of each model's own CoEnergy.
	const consistTol = 1e-6 // relative; step error ~1e-8 at knots, rounding ~1e-10
	for _, nm := range testModels(t) {
		t.Run(nm.name, func(t *testing.T) {
			t.Parallel()
			m := nm.m
			lo, hi := m.GapRange()
			currents := []float64{0.02, 0.9, refTestAmps, 5}
			if nm.pm {
				currents = append(currents, 0, -0.3, -1.7, -5)
			}
			for _, i := range currents {
				for _, x := range linspace(lo, hi, 41)[1:40] {
					h := 1e-6 * (x - lo)
					got := m.Force(i, x)
					want := -(m.CoEnergy(i, x+h) - m.CoEnergy(i, x-h)) / (2 * h)
					if relErr(got, want) > consistTol {
						t.Errorf("%v.Force(%g, %g) = %g, want %g", m, i, x, got, want)
					}
					if got < 0 {
						t.Errorf("%v.Force(%g, %g) = %g, want ≥ 0", m, i, x, got)
					}
				}
			}
		})
	}
}

func TestModelClosedCycleNoNetWork(t *testing.T) {
	t.Parallel()
	// source: energy conservation — a lossless magnetic system returns no net
	// work over a closed cycle, ∮ (i dλ − F_x dx) = 0 with F_x the force along
	// +x, here −Force (e.g. Fitzgerald & Kingsley, Electric Machinery, ch. 3,
	// energy conversion loops).
	// Cycle: raise i at open gap, close gap at high i, lower i, open at i = 0.
	const (
		steps    = 20000 // per side; trapezoid error ~(step/scale)² ≈ 1e-8
		cycleTol = 1e-6  // of the largest co-energy on the path
	)
	for _, nm := range testModels(t) {
		t.Run(nm.name, func(t *testing.T) {
			t.Parallel()
			m := nm.m
			lo, hi := m.GapRange()
			corners := [][2]float64{{0, hi}, {refTestAmps, hi}, {refTestAmps, lo}, {0, lo}}
			if nm.pm {
				// through negative currents: a release pulse at the seat
				corners = [][2]float64{{-1.5, hi}, {refTestAmps, hi}, {refTestAmps, lo}, {-1.5, lo}}
			}
			elec, mech, scale := cycleWork(m, corners, steps)
			if d := elec - mech; math.Abs(d) > cycleTol*scale {
				t.Errorf("%v: ∮(i dλ − F_x dx) = %g J − %g J = %g J, want 0 within %g J", m, elec, mech, d, cycleTol*scale)
			}
			// The cycle must really convert energy, or the check is empty.
			if mech < 0.1*scale {
				t.Errorf("%v: mechanical work per cycle %g J, want a sizeable part of %g J", m, mech, scale)
			}
		})
	}
}

func TestFieldEnergy(t *testing.T) {
	t.Parallel()
	// source: for a linear magnetic circuit W = W' = ½ L i² (any
	// electromechanics textbook, e.g. Fitzgerald & Kingsley, ch. 3).
	g := refGapLaw(t)
	for _, x := range []float64{refXMin, 1e-3, refXMax} {
		i := 1.3
		want := 0.5 * g.Inductance(x) * i * i
		if got := FieldEnergy(g, i, x); relErr(got, want) > closedFormTol {
			t.Errorf("FieldEnergy(%v, %g, %g) = %g, want %g", g, i, x, got, want)
		}
	}
}

func TestHotPathsDoNotAllocate(t *testing.T) {
	for _, nm := range testModels(t) {
		m := nm.m
		var sink float64
		n := testing.AllocsPerRun(100, func() {
			lam := m.FluxLinkage(1.1, 1.2e-3)
			sink += m.Current(lam, 1.2e-3) + m.Force(1.1, 1.2e-3) + m.CoEnergy(1.1, 1.2e-3)
			a, b := m.Partials(lam, 1.2e-3)
			sink += a + b
		})
		if n != 0 {
			t.Errorf("%v: hot paths allocate %g times per run, want 0", m, n)
		}
		_ = sink
	}
}

// TestModelFluxIsCoEnergyCurrentDerivative: λ = ∂W'/∂i at constant gap,
// the definition of the co-energy W' = ∫0^i λ di' (Fitzgerald & Kingsley,
// Electric Machinery, ch. 3); central difference of each model's own
// CoEnergy.
func TestModelFluxIsCoEnergyCurrentDerivative(t *testing.T) {
	t.Parallel()
	const tol = 1e-6 // relative; the difference step's error ~1e-9, kinks of λ aside
	for _, nm := range testModels(t) {
		t.Run(nm.name, func(t *testing.T) {
			t.Parallel()
			m := nm.m
			lo, hi := m.GapRange()
			for _, x := range linspace(lo, hi, 9) {
				currents := []float64{0.07, 0.33, 0.77, 1.23, refTestAmps, 3.7}
				if nm.pm {
					currents = append(currents, -0.07, -0.77, -1.23, -3.7)
				}
				for _, i := range currents {
					h := 1e-7 * i
					want := (m.CoEnergy(i+h, x) - m.CoEnergy(i-h, x)) / (2 * h)
					if got := m.FluxLinkage(i, x); relErr(got, want) > tol {
						t.Errorf("%v.FluxLinkage(%g, %g) = %.10g, ∂W'/∂i = %.10g", m, i, x, got, want)
					}
				}
			}
		})
	}
}
