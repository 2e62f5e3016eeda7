package magnet

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// zeroFluxTol is how close λ(0, x) must be to 0, relative to the largest
// |λ| of its gap column, for a table without a permanent magnet (beyond
// it the table is a magnet's: signed, see NewTable).
const zeroFluxTol = 1e-6

// checkSub is the number of check points per grid cell, in each direction,
// at which NewTable verifies that the blended λ increases with current.
const checkSub = 8

// segStride is the number of stored values per (current interval, gap
// column): c0, c1, c2, c3 of λ, W' at the interval start, c1/2, c2/3, c3/4.
const segStride = 8

// tailStride is the number of stored values per gap column for currents
// above the table: λ, dλ/di and W' at the last current.
const tailStride = 3

// Table is a magnetic model interpolated from a flux-linkage grid
// λ(i_k, x_j), for data from a field solver or bench measurements.
//
// In current, each gap column j is a monotone piecewise cubic Hermite
// interpolant λ_j(i) (Fritsch & Carlson 1980 slopes) through the data,
// continued above the last tabulated current by a straight line with the
// last slope (the last differential inductance), and odd in i. Its
// co-energy W'_j(i) = ∫0^i λ_j di is the exact integral of those
// polynomials. A table with a permanent magnet's offset is not odd and
// counts its co-energy from the zero-flux current (see NewTable).
//
// In gap, the columns are blended by cubic Hermite interpolation whose node
// slopes are the three-point (parabola) derivatives of the column data —
// centred differences (Catmull–Rom) on an even grid, one-sided three-point
// at the ends. The weights φ_j(x) are linear in the data, so
//
//	λ(i, x) = Σ φ_j(x)·λ_j(i),  W'(i, x) = Σ φ_j(x)·W'_j(i),  F(i, x) = −Σ φ_j'(x)·W'_j(i),
//
// and the force is exactly −∂W'/∂x of the model's own co-energy: energy is
// conserved by construction. Gaps outside GapRange are clamped to the
// range: λ, W' and the force hold their end values. The blend is C1 in the
// gap: the force is continuous at a gap node but its gap slope jumps there;
// GapPieceAt gives the table on one cell's cubics, so that an integrator
// can land on the nodes instead of stepping over the kinks.
type Table struct {
	cur  []float64 // A, ascending, cur[0] == 0
	gap  []float64 // m, ascending
	seg  []float64 // per (interval k, column j): segStride values
	tail []float64 // per column j: tailStride values
	ws   []int     // per gap cell: first column of the blend window
	wp   []float64 // per gap cell: 4 window columns × 4 cubic coefficients in t
	nw   int       // blend window width, min(4, len(gap))
	// signed: a table with a permanent magnet's offset (λ(0, x) ≠ 0) or
	// negative currents; not odd in i (see NewTable). head holds per column
	// λ, dλ/di and W' at the first current, continued linearly below it.
	signed bool
	head   []float64
	cells  []TableCell // per gap cell: the table on that cell's cubics (GapPieceAt)
}

// gapPoint holds the blend weights at one gap.
type gapPoint struct {
	ws     int        // first window column
	h      float64    // m, cell width
	phi    [4]float64 // φ_c
	dphi   [4]float64 // dφ_c/dx, 1/m
	inside bool       // x was inside GapRange
}

// gridErr is a data error tied to a row of the grid: row −1 is the gap
// (header) row, 0.. a current row, noRow none; cell is the cell of the
// row (0: the label or current, 1 + j: gap j), −1 none.
type gridErr struct {
	row, cell int
	msg       string
}

const noRow = -2

// tableUnits are the units a table's messages give its values in: the
// file's for ReadTableCSV, SI for NewTable.
type tableUnits struct{ cur, gap, flux Unit }

// siTableUnits are the SI units of NewTable.
var siTableUnits = tableUnits{cur: Unit{"A", 1}, gap: Unit{"m", 1}, flux: Unit{"Wb", 1}}

func newGridErr(row int, format string, args ...any) *gridErr {
	return &gridErr{row: row, cell: -1, msg: fmt.Sprintf(format, args...)}
}

// at sets the cell of the error.
func (g *gridErr) at(cell int) *gridErr {
	g.cell = cell
	return g
}

// NewTable builds the model. currents (A) ascend from currents[0] == 0,
// gaps (m) ascend from a non-negative first gap, and flux[k][j] =
// λ(currents[k], gaps[j]) (Wb) is strictly increasing in current at each
// gap, with λ(0, x) = 0 within 1e-6 of the column's largest value (no
// permanent magnet; it is then taken as exactly 0).
//
// A permanent magnet's table (signed) has a flux linkage at 0 A beyond
// that (the magnet's, of either sign) or currents from a negative first
// one (a release current); it is not odd in i: each column is
// interpolated over its own currents and continued linearly below the
// first with its first slope. Its co-energy counts from the current
// i0_j at which the column's flux linkage vanishes,
// W'_j(i) = ∫ from i0_j to i of λ_j di': the magnet as an equivalent
// winding of constant current (Fitzgerald & Kingsley, Electric
// Machinery, ch. 3, systems with permanent magnets; from memory), where
// with no flux linked there is no flux in the gap, no stored energy and
// no pull. That is exact when all the coil's flux crosses the gap; with
// leakage the table cannot tell its share and the magnet's pull differs
// by about L_leak/L (1 % at the seat of the latching test valve). The
// force stays the exact −∂W'/∂x of that co-energy. At least two currents
// and two gaps are needed. NewTable also returns an error when the gap
// blend would make λ non-increasing in current somewhere (checked at 8
// points per cell in each direction): the gap grid must then be refined.
func NewTable(currents, gaps []float64, flux [][]float64) (*Table, error) {
	t, ge := newTable(currents, gaps, flux, siTableUnits)
	if ge != nil {
		return nil, errors.New("magnet: table: " + ge.msg)
	}
	return t, nil
}

// newTable is NewTable with its messages in units u.
func newTable(currents, gaps []float64, flux [][]float64, u tableUnits) (*Table, *gridErr) {
	if ge := checkGrid(currents, gaps, flux, u); ge != nil {
		return nil, ge
	}
	nI, nX := len(currents), len(gaps)
	signed := tableSigned(currents, flux)
	t := &Table{
		cur:  append([]float64(nil), currents...),
		gap:  append([]float64(nil), gaps...),
		seg:  make([]float64, (nI-1)*nX*segStride),
		tail: make([]float64, nX*tailStride),
		ws:   make([]int, nX-1),
		wp:   make([]float64, (nX-1)*16),
		nw:   min(4, nX),
	}
	if signed {
		t.signed, t.head = true, make([]float64, nX*tailStride)
	}
	col := make([]float64, nI)
	d := make([]float64, nI)
	for j := range nX {
		for k := range nI {
			col[k] = flux[k][j]
		}
		if !signed {
			col[0] = 0
		}
		pchipSlopes(t.cur, col, d)
		w := 0.0
		for k := 0; k < nI-1; k++ {
			h := t.cur[k+1] - t.cur[k]
			c0, c1, c2, c3 := hermiteCoeffs(h, col[k], col[k+1], d[k], d[k+1])
			p := t.seg[(k*nX+j)*segStride:][:segStride]
			p[0], p[1], p[2], p[3], p[4] = c0, c1, c2, c3, w
			p[5], p[6], p[7] = c1/2, c2/3, c3/4
			w += h * (c0 + h*(p[5]+h*(p[6]+h*p[7])))
		}
		q := t.tail[j*tailStride:][:tailStride]
		q[0], q[1], q[2] = col[nI-1], d[nI-1], w
		if signed {
			q = t.head[j*tailStride:][:tailStride]
			q[0], q[1], q[2] = col[0], d[0], 0
			if ge := t.zeroFluxDatum(j, u.gap.Format(gaps[j])); ge != nil {
				return nil, ge
			}
		}
	}
	t.buildGapWeights()
	if ge := t.checkMonotone(u); ge != nil {
		return nil, ge
	}
	return t, nil
}

// Bounds of a table's values, far outside any solenoid yet inside what
// the interpolation's arithmetic handles without overflow: the last current
// from 1 nA to 1 MA, the last gap from 1 nm to 10 m, each gap column's
// largest flux linkage from 1e-15 Wb to 1 MWb; neighbouring currents and
// gaps at least 1e-9 of their span apart, flux linkages at least 1e-12 of
// their column's largest (common practice, no source).
const (
	minTableCurrent, maxTableCurrent = 1e-9, 1e6  // A
	minTableGap, maxTableGap         = 1e-9, 10.0 // m
	minTableFlux, maxTableFlux       = 1e-15, 1e6 // Wb
	minTableSpacing                  = 1e-9       // of the span, currents and gaps
	minFluxStep                      = 1e-12      // of the column's largest flux linkage
)

// checkGrid validates the shape and values of the grid; its messages give
// values in units u.
func checkGrid(currents, gaps []float64, flux [][]float64, u tableUnits) *gridErr {
	nI, nX := len(currents), len(gaps)
	if nX < 2 {
		return newGridErr(-1, "need at least 2 gaps, got %d", nX)
	}
	if nI < 2 {
		return newGridErr(noRow, "need at least 2 currents, got %d", nI)
	}
	if nX > MaxTableGaps || nI > MaxTableCurrents {
		return newGridErr(noRow, "%d currents × %d gaps is larger than a table may be (at most %d currents and %d gaps)", nI, nX, MaxTableCurrents, MaxTableGaps)
	}
	if ge := checkGaps(gaps, u.gap); ge != nil {
		return ge
	}
	if len(flux) != nI {
		return newGridErr(noRow, "flux has %d rows, want one per current (%d)", len(flux), nI)
	}
	if ge := checkCurrents(currents, gaps, flux, u); ge != nil {
		return ge
	}
	signed := tableSigned(currents, flux)
	for j := range nX {
		if ge := checkFluxColumn(currents, gaps, flux, j, signed, u); ge != nil {
			return ge
		}
	}
	return nil
}

// checkGaps validates the gaps (m): finite, non-negative, strictly
// ascending, the last within the table's bounds, neighbours apart. The
// messages give the gaps in unit u.
func checkGaps(gaps []float64, u Unit) *gridErr {
	nX := len(gaps)
	for j, x := range gaps {
		if !isFinite(x) {
			return newGridErr(-1, "gap %d is not finite: %s", j+1, u.Format(x)).at(j + 1)
		}
		if j == 0 && x < 0 {
			return newGridErr(-1, "gaps must not be negative, first gap is %s", u.Format(x)).at(j + 1)
		}
		if j > 0 && !(x > gaps[j-1]) {
			return newGridErr(-1, "gaps must be strictly ascending: gap %d, %s, is not above gap %d, %s", j+1, u.Format(x), j, u.Format(gaps[j-1])).at(j + 1)
		}
	}
	if last := gaps[nX-1]; last < minTableGap || last > maxTableGap {
		return newGridErr(-1, "the last gap, %s, is outside %g m to %g m: check the gap unit (%s)", u.WithSI(last, "m"), minTableGap, maxTableGap, u.Name).at(nX)
	}
	for j := 1; j < nX; j++ {
		if gaps[j]-gaps[j-1] < minTableSpacing*gaps[nX-1] {
			return newGridErr(-1, "gap %d (%s) is too close to gap %d (%s): less than %g of the last gap", j+1, u.Format(gaps[j]), j, u.Format(gaps[j-1]), minTableSpacing).at(j + 1)
		}
	}
	return nil
}

// checkCurrents validates the currents (A: finite, from 0, strictly
// ascending, the last within the table's bounds, neighbours apart) and
// that each flux row has a finite value per gap; its messages give values
// in units u.
func checkCurrents(currents, gaps []float64, flux [][]float64, u tableUnits) *gridErr {
	nI, nX := len(currents), len(gaps)
	for k, c := range currents {
		if !isFinite(c) {
			return newGridErr(k, "current is not finite: %s", u.cur.Format(c)).at(0)
		}
		if k == 0 && c > 0 {
			return newGridErr(k, "first current must be 0 or negative (a release current, with a permanent magnet), got %s", u.cur.Format(c)).at(0)
		}
		if k > 0 && !(c > currents[k-1]) {
			return newGridErr(k, "currents must be strictly ascending: %s is not above the previous row's %s", u.cur.Format(c), u.cur.Format(currents[k-1])).at(0)
		}
		if len(flux[k]) != nX {
			return newGridErr(k, "flux row has %d values, want one per gap (%d)", len(flux[k]), nX)
		}
		for j, v := range flux[k] {
			if !isFinite(v) {
				return newGridErr(k, "flux linkage at gap %s is not finite: %s", u.gap.Format(gaps[j]), u.flux.Format(v)).at(j + 1)
			}
		}
	}
	if last := currents[nI-1]; last < minTableCurrent || last > maxTableCurrent {
		return newGridErr(nI-1, "the last current, %s, is outside %g A to %g A: check the current unit (%s)", u.cur.WithSI(last, "A"), minTableCurrent, maxTableCurrent, u.cur.Name).at(0)
	}
	for k := 1; k < nI; k++ {
		if currents[k]-currents[k-1] < minTableSpacing*currents[nI-1] {
			return newGridErr(k, "current %s is too close to the previous one, %s: less than %g of the last current", u.cur.Format(currents[k]), u.cur.Format(currents[k-1]), minTableSpacing).at(0)
		}
	}
	return nil
}

// tableSigned reports whether a valid grid is a permanent magnet's: its
// currents start below 0, or a column's flux linkage at 0 A is not 0
// (beyond zeroFluxTol of the column's largest).
func tableSigned(currents []float64, flux [][]float64) bool {
	if currents[0] < 0 {
		return true
	}
	for j := range flux[0] {
		big := 0.0
		for k := range currents {
			big = math.Max(big, math.Abs(flux[k][j]))
		}
		if math.Abs(flux[0][j]) > zeroFluxTol*big {
			return true
		}
	}
	return false
}

// checkFluxColumn validates the flux linkages (Wb) at gap j: the largest
// within the table's bounds, zero at zero current unless signed,
// strictly increasing in current by steps of at least minFluxStep of the
// largest. Its messages give values in units u.
func checkFluxColumn(currents, gaps []float64, flux [][]float64, j int, signed bool, u tableUnits) *gridErr {
	big, kBig := 0.0, 0
	for k := range currents {
		if a := math.Abs(flux[k][j]); a > big {
			big, kBig = a, k
		}
	}
	gap := u.gap.Format(gaps[j])
	if big < minTableFlux || big > maxTableFlux {
		return newGridErr(kBig, "the largest flux linkage at gap %s, %s, is outside %g Wb to %g Wb: check the flux linkage unit (%s)", gap, u.flux.WithSI(big, "Wb"), minTableFlux, maxTableFlux, u.flux.Name).at(j + 1)
	}
	if !signed && math.Abs(flux[0][j]) > zeroFluxTol*big {
		return newGridErr(0, "flux linkage at zero current must be 0 (no permanent magnet), got %s at gap %s", u.flux.Format(flux[0][j]), gap).at(j + 1)
	}
	for k := 1; k < len(currents); k++ {
		prev := flux[k-1][j]
		if k == 1 && !signed {
			prev = 0
		}
		if !(flux[k][j] > prev) {
			return newGridErr(k, "flux linkage must be strictly increasing in current: at gap %s, %s at %s after %s at %s",
				gap, u.flux.Format(flux[k][j]), u.cur.Format(currents[k]), u.flux.Format(prev), u.cur.Format(currents[k-1])).at(j + 1)
		}
		if flux[k][j]-prev < minFluxStep*big {
			return newGridErr(k, "flux linkage barely increases in current: at gap %s, %s at %s after %s at %s (less than %g of the column's largest)",
				gap, u.flux.Format(flux[k][j]), u.cur.Format(currents[k]), u.flux.Format(prev), u.cur.Format(currents[k-1]), minFluxStep).at(j + 1)
		}
	}
	return nil
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// slopeRow returns the three-point derivative at gap node j as weights on
// columns: the derivative of the parabola through three neighbouring
// nodes (centred where possible, one-sided at the ends), which is the
// centred difference on an even grid; two-point with only two gaps.
func slopeRow(x []float64, j int) (cols [3]int, w [3]float64, n int) {
	nX := len(x)
	if nX == 2 {
		s := 1 / (x[1] - x[0])
		return [3]int{0, 1}, [3]float64{-s, s}, 2
	}
	switch j {
	case 0:
		h0, h1 := x[1]-x[0], x[2]-x[1]
		return [3]int{0, 1, 2}, [3]float64{
			-(2*h0 + h1) / (h0 * (h0 + h1)),
			(h0 + h1) / (h0 * h1),
			-h0 / (h1 * (h0 + h1)),
		}, 3
	case nX - 1:
		h0, h1 := x[nX-2]-x[nX-3], x[nX-1]-x[nX-2]
		return [3]int{nX - 3, nX - 2, nX - 1}, [3]float64{
			h1 / (h0 * (h0 + h1)),
			-(h0 + h1) / (h0 * h1),
			(h0 + 2*h1) / (h1 * (h0 + h1)),
		}, 3
	default:
		hl, hr := x[j]-x[j-1], x[j+1]-x[j]
		return [3]int{j - 1, j, j + 1}, [3]float64{
			-hr / (hl * (hl + hr)),
			(hr - hl) / (hl * hr),
			hl / (hr * (hl + hr)),
		}, 3
	}
}

// buildGapWeights sets, per gap cell j, the blend window start and the
// cubic coefficients in t = (x − x_j)/h_j of each window column's weight:
// φ_c = [c=j]·h00 + [c=j+1]·h01 + h_j·(m_j[c]·h10 + m_j+1[c]·h11) with the
// cubic Hermite basis h00 = 1−3t²+2t³, h01 = 3t²−2t³, h10 = t−2t²+t³,
// h11 = −t²+t³ and m the slope rows.
func (t *Table) buildGapWeights() {
	nX := len(t.gap)
	h00 := [4]float64{1, 0, -3, 2}
	h01 := [4]float64{0, 0, 3, -2}
	h10 := [4]float64{0, 1, -2, 1}
	h11 := [4]float64{0, 0, -1, 1}
	for j := 0; j < nX-1; j++ {
		ws := max(0, min(j-1, nX-4))
		t.ws[j] = ws
		h := t.gap[j+1] - t.gap[j]
		p := t.wp[j*16:][:16]
		add := func(col int, scale float64, basis [4]float64) {
			c := col - ws
			for m := range 4 {
				p[c*4+m] += scale * basis[m]
			}
		}
		add(j, 1, h00)
		add(j+1, 1, h01)
		cols, w, n := slopeRow(t.gap, j)
		for q := range n {
			add(cols[q], h*w[q], h10)
		}
		cols, w, n = slopeRow(t.gap, j+1)
		for q := range n {
			add(cols[q], h*w[q], h11)
		}
	}
	t.cells = make([]TableCell, nX-1)
	for j := range t.cells {
		t.cells[j] = TableCell{t: t, j: j}
	}
}

// gapAt returns the blend weights at gap x (m), clamped to GapRange.
func (t *Table) gapAt(x float64) gapPoint {
	return t.gapIn(x, t.cellOf(x))
}

// cellOf returns the gap cell of x (m) clamped to GapRange: the largest
// j <= len(gap)−2 with gap[j] <= x.
func (t *Table) cellOf(x float64) int {
	nX := len(t.gap)
	x = clamp(x, t.gap[0], t.gap[nX-1])
	lo, hi := 0, nX-2
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if t.gap[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// gapIn returns the blend weights at gap x (m), clamped to GapRange, from
// the cubics of gap cell j: gapAt's inside cell j, their polynomial
// continuation outside it.
func (t *Table) gapIn(x float64, j int) gapPoint {
	nX := len(t.gap)
	g := t.cellPoint(clamp(x, t.gap[0], t.gap[nX-1]), j)
	g.inside = x >= t.gap[0] && x <= t.gap[nX-1]
	return g
}

// cellPoint returns the blend weights of gap cell j's cubics at any gap x
// (m), not clamped (inside reports true).
func (t *Table) cellPoint(x float64, j int) gapPoint {
	g := gapPoint{inside: true, ws: t.ws[j], h: t.gap[j+1] - t.gap[j]}
	u := (x - t.gap[j]) / g.h
	p := t.wp[j*16:][:16]
	for c := range t.nw {
		q := p[c*4:][:4]
		g.phi[c] = q[0] + u*(q[1]+u*(q[2]+u*q[3]))
		g.dphi[c] = (q[1] + u*(2*q[2]+3*u*q[3])) / g.h
	}
	return g
}

// curAt returns the current interval k of ai ≥ 0 (len(cur)−1 above the
// table) and the offset s = ai − cur[k] (A).
func (t *Table) curAt(ai float64) (k int, s float64) {
	n := len(t.cur)
	if ai >= t.cur[n-1] {
		return n - 1, ai - t.cur[n-1]
	}
	lo, hi := 0, n-2
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if t.cur[mid] <= ai {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo, ai - t.cur[lo]
}

// curAtSigned is curAt for a signed table and a current i of either sign:
// k = −1 below the first current (the head), s = i − cur[0] < 0 there.
func (t *Table) curAtSigned(i float64) (k int, s float64) {
	if i < t.cur[0] {
		return -1, i - t.cur[0]
	}
	return t.curAt(i)
}

// zeroFluxDatum makes column j's co-energy W'_j(i) = ∫ from i0_j to i of
// λ_j di', i0_j the current at which the column's flux linkage vanishes
// (the magnet cancelled): it finds i0_j in the head, an interval or the
// tail, and subtracts the co-energy accumulated from the first current up
// to it from the column's stored co-energies. gap is the gap as the
// message gives it.
func (t *Table) zeroFluxDatum(j int, gap string) *gridErr {
	nI, nX := len(t.cur), len(t.gap)
	head, tail := t.head[j*tailStride:][:tailStride], t.tail[j*tailStride:][:tailStride]
	k, s := -1, 0.0
	switch {
	case head[0] >= 0:
		if !(head[1] > 0) && head[0] > 0 {
			return newGridErr(0, "flux linkage at gap %s does not vanish at any current: extend the table to the current that cancels the magnet", gap)
		}
		if head[0] > 0 {
			s = -head[0] / head[1]
		}
	case tail[0] <= 0:
		if !(tail[1] > 0) {
			return newGridErr(nI-1, "flux linkage at gap %s does not vanish at any current: extend the table to the current that cancels the magnet", gap)
		}
		k, s = nI-1, -tail[0]/tail[1]
	default:
		for k = 0; k < nI-2 && t.seg[((k+1)*nX+j)*segStride] <= 0; k++ {
		}
		p := t.seg[(k*nX+j)*segStride:][:4]
		s = solveCubic(p[0], p[1], p[2], p[3], 0, t.cur[k+1]-t.cur[k], t.cur[k])
	}
	w0 := t.colCoEnergy(j, k, s)
	head[2] -= w0
	tail[2] -= w0
	for k := 0; k < nI-1; k++ {
		t.seg[(k*nX+j)*segStride+4] -= w0
	}
	return nil
}

// colFlux returns λ_j and dλ_j/di of column j at interval k, offset s.
func (t *Table) colFlux(j, k int, s float64) (lam, dlam float64) {
	if k < 0 {
		q := t.head[j*tailStride:][:tailStride]
		return q[0] + q[1]*s, q[1]
	}
	if k == len(t.cur)-1 {
		q := t.tail[j*tailStride:][:tailStride]
		return q[0] + q[1]*s, q[1]
	}
	p := t.seg[(k*len(t.gap)+j)*segStride:][:segStride]
	return p[0] + s*(p[1]+s*(p[2]+s*p[3])), p[1] + s*(2*p[2]+3*s*p[3])
}

// colCoEnergy returns W'_j of column j at interval k, offset s.
func (t *Table) colCoEnergy(j, k int, s float64) float64 {
	if k < 0 {
		q := t.head[j*tailStride:][:tailStride]
		return q[2] + s*(q[0]+0.5*s*q[1])
	}
	if k == len(t.cur)-1 {
		q := t.tail[j*tailStride:][:tailStride]
		return q[2] + s*(q[0]+0.5*s*q[1])
	}
	p := t.seg[(k*len(t.gap)+j)*segStride:][:segStride]
	return p[4] + s*(p[0]+s*(p[5]+s*(p[6]+s*p[7])))
}

// checkMonotone verifies ∂λ/∂i > 0 at checkSub points per cell in both
// directions, the blend weights being possibly negative; its message
// gives the place in units u.
func (t *Table) checkMonotone(u tableUnits) *gridErr {
	nX, nI := len(t.gap), len(t.cur)
	for j := 0; j < nX-1; j++ {
		for a := 0; a <= checkSub; a++ {
			x := t.gap[j] + (t.gap[j+1]-t.gap[j])*float64(a)/checkSub
			g := t.gapAt(x)
			for k := 0; k < nI-1; k++ {
				h := t.cur[k+1] - t.cur[k]
				for b := 0; b <= checkSub; b++ {
					s := h * float64(b) / checkSub
					dl := 0.0
					for c := range t.nw {
						_, d := t.colFlux(g.ws+c, k, s)
						dl += g.phi[c] * d
					}
					if !(dl > 0) {
						return newGridErr(noRow, "interpolated flux linkage is not increasing in current at gap %s, current %s "+
							"(∂λ/∂i = %.3g H): the gap interpolation overshoots between columns; refine the gap grid near %s",
							u.gap.Approx(x), u.cur.Approx(t.cur[k]+s), dl, u.gap.Approx(x))
					}
				}
			}
		}
	}
	return nil
}

// HasPermanentMagnet reports whether the table has a magnet offset or
// negative currents (Magnetized; see NewTable).
func (t *Table) HasPermanentMagnet() bool { return t.signed }

// String describes the model for messages.
func (t *Table) String() string {
	return fmt.Sprintf("Table{%d currents 0..%g A × %d gaps %g..%g m}",
		len(t.cur), t.cur[len(t.cur)-1], len(t.gap), t.gap[0], t.gap[len(t.gap)-1])
}

// GapRange returns the first and last tabulated gaps (m).
func (t *Table) GapRange() (min, max float64) { return t.gap[0], t.gap[len(t.gap)-1] }

// FluxLinkage returns λ(i, x) (Wb); odd in i.
func (t *Table) FluxLinkage(i, x float64) float64 {
	g := t.gapAt(x)
	return t.fluxLinkage(&g, i)
}

// fluxLinkage is FluxLinkage with the blend weights g at the gap.
func (t *Table) fluxLinkage(g *gapPoint, i float64) float64 {
	if t.signed {
		k, s := t.curAtSigned(i)
		lam := 0.0
		for c := range t.nw {
			l, _ := t.colFlux(g.ws+c, k, s)
			lam += g.phi[c] * l
		}
		return lam
	}
	k, s := t.curAt(math.Abs(i))
	lam := 0.0
	for c := range t.nw {
		l, _ := t.colFlux(g.ws+c, k, s)
		lam += g.phi[c] * l
	}
	return math.Copysign(lam, i)
}

// CoEnergy returns W'(i, x) = Σ φ_j(x)·W'_j(|i|) (J); even in i.
func (t *Table) CoEnergy(i, x float64) float64 {
	g := t.gapAt(x)
	return t.coEnergy(&g, i)
}

// coEnergy is CoEnergy with the blend weights g at the gap.
func (t *Table) coEnergy(g *gapPoint, i float64) float64 {
	k, s := t.curAt(math.Abs(i))
	if t.signed {
		k, s = t.curAtSigned(i)
	}
	w := 0.0
	for c := range t.nw {
		w += g.phi[c] * t.colCoEnergy(g.ws+c, k, s)
	}
	return w
}

// Force returns F = −∂W'/∂x = −Σ φ_j'(x)·W'_j(|i|) (N), the exact gap
// derivative of CoEnergy; even in i. Outside GapRange it holds the value at
// the nearest end.
func (t *Table) Force(i, x float64) float64 {
	g := t.gapAt(x)
	return t.force(&g, i)
}

// force is Force with the blend weights g at the gap.
func (t *Table) force(g *gapPoint, i float64) float64 {
	k, s := t.curAt(math.Abs(i))
	if t.signed {
		k, s = t.curAtSigned(i)
	}
	f := 0.0
	for c := range t.nw {
		f -= g.dphi[c] * t.colCoEnergy(g.ws+c, k, s)
	}
	return f
}

// Current returns the current i (A) with FluxLinkage(i, x) = lam (Wb), by
// a search over the tabulated currents and a safeguarded Newton/bisection
// solve inside the interval (relative accuracy about 1e-14); above the table
// it inverts the linear continuation; odd in lam.
func (t *Table) Current(lam, x float64) float64 {
	g := t.gapAt(x)
	return t.currentAt(&g, lam, nil)
}

// currentAt is Current with the blend weights g at the gap.
func (t *Table) currentAt(g *gapPoint, lam float64, hint *int) float64 {
	if t.signed {
		return t.currentSigned(g, lam, hint)
	}
	return math.Copysign(t.current(g, math.Abs(lam), hint), lam)
}

func (t *Table) current(g *gapPoint, al float64, hint *int) float64 {
	if !(al > 0) {
		return 0
	}
	return t.invert(g, al, hint)
}

// currentSigned inverts a signed table's λ at any sign, below the first
// current by the head's linear continuation.
func (t *Table) currentSigned(g *gapPoint, lam float64, hint *int) float64 {
	lamStart, slopeStart := 0.0, 0.0
	for c := range t.nw {
		q := t.head[(g.ws+c)*tailStride:][:tailStride]
		lamStart += g.phi[c] * q[0]
		slopeStart += g.phi[c] * q[1]
	}
	if lam < lamStart {
		if !(slopeStart > 0) {
			return t.cur[0]
		}
		return t.cur[0] + (lam-lamStart)/slopeStart
	}
	return t.invert(g, lam, hint)
}

// invert returns the current at flux linkage al (Wb) at or above the
// first current's: in the tail, or by a search over the intervals and a
// cubic solve. hint, when not nil, is an interval to try first (a previous
// answer), and is set to the interval found.
func (t *Table) invert(g *gapPoint, al float64, hint *int) float64 {
	nI := len(t.cur)
	// Tail: λ above the last tabulated current.
	lamEnd, slopeEnd := 0.0, 0.0
	for c := range t.nw {
		q := t.tail[(g.ws+c)*tailStride:][:tailStride]
		lamEnd += g.phi[c] * q[0]
		slopeEnd += g.phi[c] * q[1]
	}
	if al >= lamEnd {
		if !(slopeEnd > 0) {
			return t.cur[nI-1]
		}
		return t.cur[nI-1] + (al-lamEnd)/slopeEnd
	}
	k := t.searchInterval(g, al, hint)
	var c0, c1, c2, c3 float64
	for c := range t.nw {
		p := t.seg[(k*len(t.gap)+g.ws+c)*segStride:][:4]
		w := g.phi[c]
		c0 += w * p[0]
		c1 += w * p[1]
		c2 += w * p[2]
		c3 += w * p[3]
	}
	return t.cur[k] + solveCubic(c0, c1, c2, c3, al, t.cur[k+1]-t.cur[k], t.cur[k])
}

// searchInterval returns the largest current interval k with blended
// λ(cur[k]) <= al (below the tail): the interval *hint when it is that one
// (checked with the very comparisons of the bisection, so the answer is
// the same), else by bisection; *hint is set to k.
func (t *Table) searchInterval(g *gapPoint, al float64, hint *int) int {
	nI := len(t.cur)
	knot := func(k int) float64 {
		v := 0.0
		for c := range t.nw {
			v += g.phi[c] * t.seg[(k*len(t.gap)+g.ws+c)*segStride]
		}
		return v
	}
	if hint != nil {
		if k := *hint; k >= 0 && k <= nI-2 && knot(k) <= al && (k == nI-2 || knot(k+1) > al) {
			return k
		}
	}
	lo, hi := 0, nI-2
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if knot(mid) <= al {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	if hint != nil {
		*hint = lo
	}
	return lo
}

// Partials returns ∂i/∂λ = 1/(∂λ/∂i) (1/H) and ∂i/∂x = −(∂λ/∂x)/(∂λ/∂i)
// (A/m) at (λ, x) (implicit-function theorem); ∂i/∂x is 0 outside
// GapRange, where λ is held constant in x.
func (t *Table) Partials(lam, x float64) (diDlam, diDx float64) {
	g := t.gapAt(x)
	return t.partials(&g, lam)
}

// partials is Partials with the blend weights g at the gap.
func (t *Table) partials(g *gapPoint, lam float64) (diDlam, diDx float64) {
	var k int
	var s float64
	if t.signed {
		k, s = t.curAtSigned(t.currentSigned(g, lam, nil))
	} else {
		k, s = t.curAt(t.current(g, math.Abs(lam), nil))
	}
	dldi, dldx := 0.0, 0.0
	for c := range t.nw {
		l, d := t.colFlux(g.ws+c, k, s)
		dldi += g.phi[c] * d
		dldx += g.dphi[c] * l
	}
	if !g.inside {
		dldx = 0
	}
	if lam < 0 && !t.signed { // ∂λ/∂x is odd in i, ∂λ/∂i even
		dldx = -dldx
	}
	return 1 / dldi, -dldx / dldi
}

// ReadTableCSV reads the grid from CSV and builds the model with NewTable.
// Lines starting with '#' are comments and a UTF-8 byte-order mark is
// skipped; the first data row is a header: an empty or any label cell, then
// the gaps; each further row: current, then λ at each gap. Values are in
// the file's units: current (of A), gap (of m) and flux (of Wb), each cell
// multiplied by its unit's Scale. At most MaxTableCurrents rows and
// MaxTableGaps gaps are read. Errors are *InputError naming the file, line
// and column (in characters) and the cell, with values in the file's
// units as written: "magnet: name:LINE:COLUMN: ...".
func ReadTableCSV(r io.Reader, name string, current, gap, flux Unit) (*Table, error) {
	if err := checkScales(name, []string{"current", "gap", "flux"}, current, gap, flux); err != nil {
		return nil, err
	}
	in := newCSVInput(r, name)
	g := &tableGrid{units: tableUnits{cur: current, gap: gap, flux: flux}}
	for {
		rec, line, err := in.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if g.gaps == nil {
			err = g.readHeader(in, rec, line)
		} else {
			err = g.readRow(in, rec, line)
		}
		if err != nil {
			return nil, err
		}
	}
	if g.gaps == nil {
		return nil, inputErr(name, 0, 0, "no data: want a header row of gaps and at least 2 current rows")
	}
	t, ge := newTable(g.currents, g.gaps, g.flux, g.units)
	if ge != nil {
		return nil, g.locate(name, ge)
	}
	return t, nil
}

// tableGrid is a flux-linkage table as read (SI), with where each record
// was read.
type tableGrid struct {
	units          tableUnits // the file's
	gaps, currents []float64
	flux           [][]float64
	header         recordPos
	rows           []recordPos // of each current row
	fluxCells      []string    // per gap, its flux linkage cells' name for messages
}

// readHeader reads the header record (at line): a label cell, then the
// gaps.
func (g *tableGrid) readHeader(in *csvInput, rec []string, line int) error {
	if len(rec) < 3 {
		return inputErr(in.name, line, 1, "header needs a label cell and at least 2 gaps, got %d cells", len(rec))
	}
	if len(rec)-1 > MaxTableGaps {
		return inputErr(in.name, line, in.column(MaxTableGaps+1), "header has %d gaps, more than the %d a table may have", len(rec)-1, MaxTableGaps)
	}
	g.header = in.pos(line, len(rec))
	gaps := make([]float64, len(rec)-1)
	for j := range gaps {
		v, err := in.value(rec, g.header, j+1, g.units.gap, fmt.Sprintf("gap %d (cell %d of the header), in %s", j+1, j+2, g.units.gap.Name))
		if err != nil {
			return err
		}
		gaps[j] = v
	}
	g.gaps = gaps
	g.fluxCells = make([]string, len(gaps))
	for j, x := range gaps {
		g.fluxCells[j] = fmt.Sprintf("flux linkage at gap %s (cell %d), in %s", g.units.gap.Format(x), j+2, g.units.flux.Name)
	}
	return nil
}

// readRow reads a current row (at line): the current, then λ at each gap.
func (g *tableGrid) readRow(in *csvInput, rec []string, line int) error {
	if len(rec) != len(g.gaps)+1 {
		return inputErr(in.name, line, 1, "row has %d cells, want %d (a current and one flux linkage per gap)", len(rec), len(g.gaps)+1)
	}
	if len(g.currents) == MaxTableCurrents {
		return inputErr(in.name, line, 1, "more than %d current rows: a table may have at most %d", MaxTableCurrents, MaxTableCurrents)
	}
	p := in.pos(line, len(rec))
	u := g.units
	current, err := in.value(rec, p, 0, u.cur, "current (cell 1), in "+u.cur.Name)
	if err != nil {
		return err
	}
	row := make([]float64, len(g.gaps))
	for j := range row {
		if row[j], err = in.value(rec, p, j+1, u.flux, g.fluxCells[j]); err != nil {
			return err
		}
	}
	g.currents = append(g.currents, current)
	g.flux = append(g.flux, row)
	g.rows = append(g.rows, p)
	return nil
}

// locate returns a grid error as an *InputError at the line and column of
// its row and cell.
func (g *tableGrid) locate(name string, ge *gridErr) *InputError {
	switch {
	case ge.row == -1:
		return g.header.errAt(name, ge.cell, ge.msg)
	case ge.row >= 0 && ge.row < len(g.rows):
		return g.rows[ge.row].errAt(name, ge.cell, ge.msg)
	}
	return inputErr(name, 0, 0, "%s", ge.msg)
}

// parseCell parses one numeric cell.
func parseCell(cell string) (float64, error) {
	s := strings.TrimSpace(cell)
	if s == "" {
		return 0, errors.New("empty cell; expected a number")
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || !isFinite(v) {
		return 0, fmt.Errorf("not a finite number: %q", s)
	}
	return v, nil
}
