package magnet

import (
	"math"
	"testing"
)

// TestCurvePiecesAreTheModel: the force-curve model's gap pieces end at
// the curves' knots inside the range; inside a piece the piece is the
// model bit for bit (flux linkage, co-energy, force, current, partials),
// and a piece is chosen by the side the gap moves to at a knot. On the
// saturating curves (three currents, 30 knots each on the same gaps) and
// on the smooth and piecewise-linear schemes.
func TestCurvePiecesAreTheModel(t *testing.T) {
	t.Parallel()
	for _, m := range []*CurveModel{saturatingCurves(t), saturatingCurvesLinear(t)} {
		if len(m.breaks) != 28 {
			t.Errorf("%v: %d breaks, want the 28 inner knots", m, len(m.breaks))
		}
		for j := 0; j+1 < len(m.breaks); j += 5 {
			lo, hi := m.breaks[j], m.breaks[j+1]
			if p := m.GapPieceAt(lo, 1); !spanIs(p, lo, hi) {
				t.Errorf("%v: the piece at knot %g moving up is not %g..%g", m, lo, lo, hi)
			}
			if p := m.GapPieceAt(hi, -1); !spanIs(p, lo, hi) {
				t.Errorf("%v: the piece at knot %g moving down is not %g..%g", m, hi, lo, hi)
			}
			p := m.GapPieceAt(0.5*(lo+hi), 1)
			for _, x := range []float64{lo + 0.25*(hi-lo), 0.5 * (lo + hi), lo + 0.9*(hi-lo)} {
				for _, i := range []float64{0.2, 1, 2.5, 4} {
					lam := m.FluxLinkage(i, x)
					a1, a2 := m.Partials(lam, x)
					b1, b2 := p.Partials(lam, x)
					if p.FluxLinkage(i, x) != lam || p.CoEnergy(i, x) != m.CoEnergy(i, x) || p.Force(i, x) != m.Force(i, x) ||
						p.Current(lam, x) != m.Current(lam, x) || a1 != b1 || a2 != b2 {
						t.Errorf("%v: piece %g..%g differs from the model at %g m, %g A", m, lo, hi, x, i)
					}
				}
			}
		}
		if p := m.GapPieceAt(refXMin, -1); !spanIs(p, math.Inf(-1), m.breaks[0]) {
			t.Errorf("%v: the first piece does not reach below the range", m)
		}
	}
}

func spanIs(p GapPiece, lo, hi float64) bool {
	a, b := p.Span()
	return a == lo && b == hi
}

// TestCurvePiecesContinue: beyond its ends a piece continues its curves'
// cubics instead of clamping. Curves of a straight force F(x) = F0 − k·x
// are interpolated exactly (the three-point slopes are the line's, which
// the shape filter keeps: Hyman 1983), so every piece's force at the
// curve's current is that line, also beyond the stops where the model
// holds its end value; and the piece's force stays −∂W'/∂x and its flux
// ∂W'/∂i there (co-energy, Woodson & Melcher, Electromechanical Dynamics,
// 3.1).
func TestCurvePiecesContinue(t *testing.T) {
	t.Parallel()
	const f0, k, i1 = 10.0, 4000.0, 1.0 // N, N/m, A
	gaps := linspace(0.1e-3, 1.5e-3, 8)
	forces := make([]float64, len(gaps))
	for j, x := range gaps {
		forces[j] = f0 - k*x
	}
	m, err := NewCurveModel([]ForceCurve{{Current: i1, Gaps: gaps, Forces: forces}}, 0.05, 0.1e-3, 1.5e-3)
	if err != nil {
		t.Fatal(err)
	}
	for _, ref := range []float64{0.15e-3, 0.8e-3, 1.45e-3} {
		p := m.GapPieceAt(ref, 1)
		for _, x := range []float64{0.05e-3, 0.5e-3, 1.2e-3, 1.6e-3} {
			if got, want := p.Force(i1, x), f0-k*x; math.Abs(got-want) > 1e-9*f0 {
				t.Errorf("piece at %g m: force at %g m %.12g N, want the line's %.12g N", ref, x, got, want)
			}
			const h, di = 1e-9, 1e-6
			for _, i := range []float64{0.4, 1.3} {
				if got, want := p.Force(i, x), -(p.CoEnergy(i, x+h)-p.CoEnergy(i, x-h))/(2*h); math.Abs(got-want) > 1e-5*math.Abs(want) {
					t.Errorf("piece at %g m: force %g at %g m, %g A; −∂W'/∂x %g", ref, got, x, i, want)
				}
				if got, want := p.FluxLinkage(i, x), (p.CoEnergy(i+di, x)-p.CoEnergy(i-di, x))/(2*di); math.Abs(got-want) > 1e-6*math.Abs(want) {
					t.Errorf("piece at %g m: flux %g at %g m, %g A; ∂W'/∂i %g", ref, got, x, i, want)
				}
			}
		}
	}
	if got, want := m.Force(i1, 1.6e-3), f0-k*1.5e-3; math.Abs(got-want) > 1e-9*f0 {
		t.Errorf("the model itself beyond its range: %g N, want its end value %g N", got, want)
	}
}
