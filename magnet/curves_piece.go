package magnet

import (
	"fmt"
	"math"
	"slices"
)

// Gap pieces of a force-curve model.
//
// Each curve is a piecewise cubic in the gap with its knots at its data
// points, held at its end values outside them, and the model is clamped
// at its range: its force is continuous at every knot, but its gap slope
// jumps there, and an integrator stepping over a knot loses its order. The
// model's gap pieces are the intervals between the knots of all curves;
// on a piece every curve is one cubic, continued beyond the piece's ends
// (and beyond the range) for the stages of a step that overshoots them.

// curvePiece is one gap piece: the model with each curve on its segment
// at gap ref (m), inside [lo, hi] (m; ±Inf at the outer ends).
type curvePiece struct {
	m           *CurveModel
	lo, hi, ref float64
}

// buildPieces sets the breaks and the pieces between them.
func (m *CurveModel) buildPieces() {
	var b []float64
	for k := range m.curves {
		for _, s := range m.curves[k].segs {
			if s.x0 > m.xMin && s.x0 < m.xMax {
				b = append(b, s.x0)
			}
		}
	}
	slices.Sort(b)
	m.breaks = slices.Compact(b)
	m.pieces = make([]curvePiece, len(m.breaks)+1)
	for j := range m.pieces {
		lo, hi := math.Inf(-1), math.Inf(1)
		inLo, inHi := m.xMin, m.xMax
		if j > 0 {
			lo, inLo = m.breaks[j-1], m.breaks[j-1]
		}
		if j < len(m.breaks) {
			hi, inHi = m.breaks[j], m.breaks[j]
		}
		m.pieces[j] = curvePiece{m: m, lo: lo, hi: hi, ref: 0.5 * (inLo + inHi)}
	}
}

// GapPieceAt returns the piece at gap x (m); at a break, the piece on the
// side the gap is moving to (v, m/s: negative to the smaller gap)
// (GapPiecewise).
func (m *CurveModel) GapPieceAt(x, v float64) GapPiece {
	j, found := slices.BinarySearch(m.breaks, x) // breaks[j−1] < x <= breaks[j]
	if found && v >= 0 {
		j++
	}
	return &m.pieces[j]
}

// Span returns the piece's gaps (m).
func (p *curvePiece) Span() (lo, hi float64) { return p.lo, p.hi }

// String describes the piece for messages.
func (p *curvePiece) String() string {
	return fmt.Sprintf("%v, piece %g..%g m", p.m, p.lo, p.hi)
}

func (p *curvePiece) profile(x float64) profile { return p.m.profileOn(x, p.ref) }

// FluxLinkage is CurveModel.FluxLinkage on the piece (Wb).
func (p *curvePiece) FluxLinkage(i, x float64) float64 {
	pr := p.profile(x)
	return math.Copysign(p.m.at(&pr, math.Abs(i)).lam.v, i)
}

// CoEnergy is CurveModel.CoEnergy on the piece (J).
func (p *curvePiece) CoEnergy(i, x float64) float64 {
	pr := p.profile(x)
	return p.m.at(&pr, math.Abs(i)).w.v
}

// Force is CurveModel.Force on the piece (N).
func (p *curvePiece) Force(i, x float64) float64 {
	pr := p.profile(x)
	return -p.m.at(&pr, math.Abs(i)).w.d
}

// Current is CurveModel.Current on the piece (A).
func (p *curvePiece) Current(lam, x float64) float64 {
	pr := p.profile(x)
	return math.Copysign(p.m.current(&pr, math.Abs(lam)), lam)
}

// CurrentForce returns Current(lam, x) and Force at that current (A, N),
// with one profile.
func (p *curvePiece) CurrentForce(lam, x float64) (i, f float64) {
	pr := p.profile(x)
	i = math.Copysign(p.m.current(&pr, math.Abs(lam)), lam)
	return i, -p.m.at(&pr, math.Abs(i)).w.d
}

// CurrentForceNear is CurrentForce; the model needs no search hint.
func (p *curvePiece) CurrentForceNear(lam, x float64, _ *int) (i, f float64) {
	return p.CurrentForce(lam, x)
}

// Partials is CurveModel.Partials on the piece, ∂i/∂x kept outside the
// range (1/H, A/m).
func (p *curvePiece) Partials(lam, x float64) (diDlam, diDx float64) {
	pr := p.profile(x)
	st := p.m.at(&pr, p.m.current(&pr, math.Abs(lam)))
	diDx = -st.lam.d / st.dlam
	if lam < 0 {
		diDx = -diDx
	}
	return 1 / st.dlam, diDx
}

// GapRange returns the model's range (m).
func (p *curvePiece) GapRange() (min, max float64) { return p.m.GapRange() }
