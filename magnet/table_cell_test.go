package magnet

import (
	"math"
	"testing"
)

// TestTableCellIsTableInsideItsCell: a cell gives the table's values bit
// for bit at gaps inside it (the integrator's steps then follow the same
// model), for a plain and a permanent magnet's (signed) table, and
// CurrentForce is Current then Force, with any search hint (right, wrong,
// out of range).
func TestTableCellIsTableInsideItsCell(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		tb   *Table
	}{{"saturating", saturatingTable(t)}, {"latching", latchTable(t, refLatchLaw(t), 21, 15)}} {
		tb := tc.tb
		for j := range len(tb.gap) - 1 {
			for _, u := range []float64{0, 0.3, 0.999} {
				x := tb.gap[j] + u*(tb.gap[j+1]-tb.gap[j])
				c := tb.GapPieceAt(x, 1)
				if lo, hi := c.Span(); !(x >= lo && x <= hi) {
					t.Fatalf("%s: GapPieceAt(%g) spans %g..%g", tc.name, x, lo, hi)
				}
				for _, i := range []float64{-0.7 * refMaxAmps, 0.05, 0.6 * refMaxAmps, 1.3 * refMaxAmps} {
					lam := tb.FluxLinkage(i, x)
					ci, cf := c.CurrentForce(lam, x)
					ti := tb.Current(lam, x)
					tf := tb.Force(ti, x)
					if c.FluxLinkage(i, x) != lam || c.CoEnergy(i, x) != tb.CoEnergy(i, x) || c.Force(i, x) != tb.Force(i, x) ||
						c.Current(lam, x) != ti || ci != ti || cf != tf {
						t.Fatalf("%s: cell %d differs from the table at i = %g A, x = %g m", tc.name, j, i, x)
					}
					for _, h := range []int{-3, 0, 4, len(tb.cur) - 2, 1000} {
						k := h
						if ni, nf := c.CurrentForceNear(lam, x, &k); ni != ti || nf != tf {
							t.Fatalf("%s: cell %d with hint %d: (%g, %g), want (%g, %g)", tc.name, j, h, ni, nf, ti, tf)
						}
					}
					a, b := c.Partials(lam, x)
					ta, tbb := tb.Partials(lam, x)
					if a != ta || b != tbb {
						t.Fatalf("%s: cell %d partials (%g, %g), table (%g, %g)", tc.name, j, a, b, ta, tbb)
					}
				}
			}
		}
	}
}

// TestTableCellContinuesItsCubics: beyond its cell a cell continues its
// own cubics (no kink at the node, unlike the table, whose force slope
// jumps there), meets the next cell at the node (the table is C1 in the
// gap: λ and the force agree there), and at a node GapPieceAt picks the
// cell the gap moves into.
func TestTableCellContinuesItsCubics(t *testing.T) {
	t.Parallel()
	tb := saturatingTable(t)
	j := len(tb.gap) / 2
	node := tb.gap[j]
	below, above := tb.GapPieceAt(node, -1), tb.GapPieceAt(node, 1)
	if _, hi := below.Span(); hi != node {
		t.Fatalf("moving down at node %d: span ends at %g, want %g", j, hi, node)
	}
	if lo, _ := above.Span(); lo != node {
		t.Fatalf("moving up at node %d: span starts at %g, want %g", j, lo, node)
	}
	const i = 0.5 * refMaxAmps
	// Continuity at the node (C1 table: λ and F = −∂W'/∂x continuous).
	if e := relErr(below.FluxLinkage(i, node), above.FluxLinkage(i, node)); e > 1e-12 {
		t.Errorf("λ at the node: cells differ by %.3g", e)
	}
	if e := relErr(below.Force(i, node), above.Force(i, node)); e > 1e-10 {
		t.Errorf("force at the node: cells differ by %.3g", e)
	}
	// Force slope across the node: the lower cell's continuation is
	// smooth (second difference of its cubic ~ 0 against the slope), the
	// table's has a jump.
	h := 1e-3 * (tb.gap[j+1] - node)
	second := func(m Model) float64 {
		return (m.Force(i, node+h) - 2*m.Force(i, node) + m.Force(i, node-h)) / (m.Force(i, node+h) - m.Force(i, node-h))
	}
	if c, tab := math.Abs(second(below)), math.Abs(second(tb)); !(c < 1e-2*tab) {
		t.Errorf("relative force kink at the node: cell %.3g, table %.3g; want the cell's far smaller", c, tab)
	}
	// Beyond GapRange a cell continues too, where the table is clamped.
	last := tb.GapPieceAt(tb.gap[len(tb.gap)-1], 1)
	x := tb.gap[len(tb.gap)-1] * 1.001
	if last.Force(i, x) == tb.Force(i, x) {
		t.Errorf("last cell beyond GapRange: force %g equals the table's clamped value", last.Force(i, x))
	}
}

func BenchmarkTableCellCurrentForce(b *testing.B) {
	tb := benchTable(b)
	lams := make([]float64, 64)
	xs := make([]float64, 64)
	cells := make([]GapPiece, 64)
	for k := range lams {
		xs[k] = refXMin + (refXMax-refXMin)*float64(k)/63
		lams[k] = tb.FluxLinkage(refMaxAmps*float64(k%17)/16, xs[k])
		cells[k] = tb.GapPieceAt(xs[k], 1)
	}
	b.ReportAllocs()
	var sink float64
	k := 0
	for b.Loop() {
		_, f := cells[k].CurrentForce(lams[k], xs[k])
		sink += f
		k = (k + 1) & 63
	}
	_ = sink
}
