package magnet

import (
	"fmt"
	"math"
)

// GapPiece is one piece of a model that is smooth in the gap only
// piecewise (GapPiecewise): the model's own formulas on one gap interval,
// continued smoothly (as the same polynomials) beyond it, also beyond
// GapRange where the model itself is clamped. Inside Span and GapRange it
// equals the model bit for bit; outside, it is an extrapolation meant only
// for an integrator's stages that overshoot the interval's end (or a stop)
// within one step, before the step is cut back to the crossing.
type GapPiece interface {
	Model
	// Span returns the gaps (m) between which the piece is the model: −Inf
	// below the first piece, +Inf above the last (the model's own clamping
	// to GapRange applies there).
	Span() (lo, hi float64)
	// CurrentForce returns Current(lam, x) and Force at that current and
	// x (A, N), as the two calls would, with one gap look-up.
	CurrentForce(lam, x float64) (i, f float64)
	// CurrentForceNear is CurrentForce with a search hint held by the
	// caller: *k, the last answer's current interval, updated.
	CurrentForceNear(lam, x float64, k *int) (i, f float64)
}

// GapPiecewise is implemented by models whose gap dependence is a
// polynomial between break gaps and less smooth at them (Table: its force
// is continuous at a gap node but its gap derivative jumps there).
type GapPiecewise interface {
	// GapPieceAt returns the piece at gap x (m); at a break, the piece on
	// the side the gap is moving to (v, m/s: negative to the smaller gap).
	GapPieceAt(x, v float64) GapPiece
}

// TableCell is a Table on the cubics of one gap cell [x_j, x_j+1]: the
// Table's GapPiece. Its methods are those of the Table with the cell fixed
// instead of looked up, so inside the cell they give the Table's values
// bit for bit, and outside it the cell's Hermite cubics continued, not
// clamped to GapRange (Partials keeps ∂i/∂x there).
type TableCell struct {
	t *Table
	j int
}

// GapPieceAt returns the cell of the table at gap x (m), clamped to
// GapRange; at a node, the cell below it when v < 0 (pulling in), else the
// cell above.
func (t *Table) GapPieceAt(x, v float64) GapPiece {
	j := t.cellOf(x)
	if v < 0 && j > 0 && x == t.gap[j] {
		j--
	}
	return &t.cells[j]
}

// Span returns the cell's gaps (m): −Inf for the first cell's lower end,
// +Inf for the last cell's upper end (no piece beyond them).
func (c *TableCell) Span() (lo, hi float64) {
	lo, hi = c.t.gap[c.j], c.t.gap[c.j+1]
	if c.j == 0 {
		lo = math.Inf(-1)
	}
	if c.j == len(c.t.cells)-1 {
		hi = math.Inf(1)
	}
	return lo, hi
}

// String describes the cell for messages.
func (c *TableCell) String() string {
	return fmt.Sprintf("%v cell %d (%g..%g m)", c.t, c.j, c.t.gap[c.j], c.t.gap[c.j+1])
}

// FluxLinkage is Table.FluxLinkage on the cell's cubics (Wb).
func (c *TableCell) FluxLinkage(i, x float64) float64 {
	g := c.t.cellPoint(x, c.j)
	return c.t.fluxLinkage(&g, i)
}

// Current is Table.Current on the cell's cubics (A).
func (c *TableCell) Current(lam, x float64) float64 {
	g := c.t.cellPoint(x, c.j)
	return c.t.currentAt(&g, lam, nil)
}

// CurrentForce returns Current(lam, x) and Force at that current (A, N),
// with one gap evaluation.
func (c *TableCell) CurrentForce(lam, x float64) (i, f float64) {
	return c.CurrentForceNear(lam, x, nil)
}

// CurrentForceNear is CurrentForce with the search over the tabulated
// currents started at interval *k (a previous answer, the caller's own
// state: the cell itself holds none and is safe to share), which it sets
// to the interval found; the result is CurrentForce's bit for bit. nil: no
// hint.
func (c *TableCell) CurrentForceNear(lam, x float64, k *int) (i, f float64) {
	g := c.t.cellPoint(x, c.j)
	i = c.t.currentAt(&g, lam, k)
	return i, c.t.force(&g, i)
}

// Partials is Table.Partials on the cell's cubics (1/H, A/m).
func (c *TableCell) Partials(lam, x float64) (diDlam, diDx float64) {
	g := c.t.cellPoint(x, c.j)
	return c.t.partials(&g, lam)
}

// CoEnergy is Table.CoEnergy on the cell's cubics (J).
func (c *TableCell) CoEnergy(i, x float64) float64 {
	g := c.t.cellPoint(x, c.j)
	return c.t.coEnergy(&g, i)
}

// Force is Table.Force on the cell's cubics (N).
func (c *TableCell) Force(i, x float64) float64 {
	g := c.t.cellPoint(x, c.j)
	return c.t.force(&g, i)
}

// GapRange returns the table's GapRange (m).
func (c *TableCell) GapRange() (min, max float64) { return c.t.GapRange() }

// HasPermanentMagnet reports the table's (Magnetized).
func (c *TableCell) HasPermanentMagnet() bool { return c.t.signed }
