package magnet

import (
	"math"
	"testing"
)

// noLeakLatchLaw is the reference magnetic circuit without leakage and
// with the reference magnet: all the coil's flux crosses the gap, so at
// the current that cancels the flux linkage the gap carries no flux.
func noLeakLatchLaw(t testing.TB) *GapLaw {
	t.Helper()
	lc := circuitInductance(0, refTurns, refIronRel, refArea, refXMin)
	lo := circuitInductance(0, refTurns, refIronRel, refArea, refXMax)
	g, err := NewGapLawTurns(lc, lo, refXMin, refXMax, refTurns, refArea)
	if err != nil {
		t.Fatalf("NewGapLawTurns: %v", err)
	}
	if g, err = g.WithMagnet(refMagnetMMF); err != nil {
		t.Fatalf("WithMagnet: %v", err)
	}
	return g
}

// TestTableMagnetHoldingForce: a flux-linkage table with a magnet offset,
// sampled from the gap law with a magnet and no leakage, gives the
// magnet's zero-current pull. The table's co-energy is counted from the
// current at which each column's flux linkage vanishes (the equivalent
// winding's view, Fitzgerald & Kingsley, Electric Machinery, ch. 3: with no
// flux in the gap there is no field energy and no pull); the reference is
// Maxwell's pull on the magnet's gap flux Φ_pm = F_m/ℜ_total(x), F = Φ²/(2µ0·A)
// (Hayt & Buck, Engineering Electromagnetics, force on magnetic materials).
// The tolerance is the table's gap interpolation (second order in the gap
// spacing, the same as without a magnet: measured 3e-3 on 60 gaps). Both a
// table spanning negative currents and one from 0 A (the cancelling
// current then on the linear continuation below the table) are checked.
func TestTableMagnetHoldingForce(t *testing.T) {
	t.Parallel()
	const interpTol = 5e-3 // relative, gap interpolation on 60 geometric gaps
	g := noLeakLatchLaw(t)
	gaps := geomspace(refXMin, refXMax, 60)
	tables := map[string]*Table{
		"−3 A to 3 A": sampleTable(t, linspace(-refMaxAmps, refMaxAmps, 13), gaps, g.FluxLinkage),
		"0 A to 3 A":  sampleTable(t, linspace(0, refMaxAmps, 7), gaps, g.FluxLinkage),
	}
	for name, tb := range tables {
		worst := 0.0
		for _, x := range linspace(refXMin, refXMax, 23)[1:22] {
			phi := refMagnetMMF / (refIronRel + x/(Mu0*refArea))
			want := phi * phi / (2 * Mu0 * refArea)
			got := tb.Force(0, x)
			worst = math.Max(worst, relErr(got, want))
			if relErr(got, want) > interpTol {
				t.Errorf("%s: Force(0, %g) = %.6g N, want Φ²/(2µ0A) = %.6g N", name, x, got, want)
			}
		}
		t.Logf("%s: largest error of the zero-current pull %.2g", name, worst)
	}
}

// TestTableMagnetStoredEnergyForce: at zero current no electrical energy
// enters (∫ i dλ = 0), so the work of the pull over a stroke equals the
// change of the stored energy, ∫_a^b F dx = W(0, b) − W(0, a) with
// W = λ·i − W' (energy balance of a lossless coupling field, Fitzgerald &
// Kingsley, Electric Machinery, ch. 3): the table's zero-current force
// against the stored-energy change of its own co-energy, by the trapezoid
// rule (its error about 1e-8 here; tolerance 1e-6 of the work).
func TestTableMagnetStoredEnergyForce(t *testing.T) {
	t.Parallel()
	const tol = 1e-6
	tb := latchTable(t, refLatchLaw(t), 41, 25)
	for _, span := range [][2]float64{{refXMin, refXMax}, {0.3e-3, 0.9e-3}} {
		a, b := span[0], span[1]
		const n = 20000
		work := 0.0
		for k := range n {
			x0 := a + (b-a)*float64(k)/n
			x1 := a + (b-a)*float64(k+1)/n
			work += 0.5 * (tb.Force(0, x0) + tb.Force(0, x1)) * (x1 - x0)
		}
		dW := FieldEnergy(tb, 0, b) - FieldEnergy(tb, 0, a)
		if relErr(work, dW) > tol {
			t.Errorf("gaps %g–%g m: ∫F dx = %.10g J, W(0, b) − W(0, a) = %.10g J", a, b, work, dW)
		}
		if !(work > 0) {
			t.Errorf("gaps %g–%g m: the magnet does no work (%g J)", a, b, work)
		}
	}
}

// TestTableWithoutOffsetUnchanged: a table without a magnet offset stays
// the odd model it was (the signed path is not taken).
func TestTableWithoutOffsetUnchanged(t *testing.T) {
	t.Parallel()
	tb := gapLawTable(t, refGapLaw(t), 30, 25)
	if tb.signed {
		t.Fatal("a table from 0 A with zero flux at 0 A is taken as a magnet's")
	}
	if a, b := tb.FluxLinkage(-1.3, 1e-3), tb.FluxLinkage(1.3, 1e-3); a != -b {
		t.Errorf("FluxLinkage(−1.3) = %g, want −%g", a, b)
	}
}
