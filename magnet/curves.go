package magnet

import (
	"fmt"
	"math"
	"sort"
)

// MaxForceCurves is the largest number of force curves (currents) a
// CurveModel takes; data sheets and pull tests give one to a handful
// (common practice, no source).
const MaxForceCurves = 32

// MaxCurvePoints is the largest number of points of one force curve.
const MaxCurvePoints = 2000

// ForceCurve is a measured pull force versus working air gap at one coil
// current: a data-sheet curve or a pull test.
type ForceCurve struct {
	Current float64   // A, > 0
	Gaps    []float64 // m, strictly ascending
	Forces  []float64 // N, ≥ 0, the pull toward the smaller gap
}

// CurveError is a data error of NewCurveModel at a curve (its index in
// the slice given) and a point of it (−1: the curve as a whole).
type CurveError struct {
	Curve, Point int
	Msg          string
}

func (e *CurveError) Error() string { return "magnet: force curves: " + e.Msg }

func curveErr(curve, point int, format string, args ...any) *CurveError {
	return &CurveError{Curve: curve, Point: point, Msg: fmt.Sprintf(format, args...)}
}

// curveSeg is one piece of a force curve's interpolant: on [x0, x0 + h],
// F = c0 + c1·s + c2·s² + c3·s³ with s = x − x0; p is the curve's
// integral from its first knot to x0.
type curveSeg struct{ x0, h, c0, c1, c2, c3, p float64 }

// gapCurve is one force curve, interpolated in gap.
type gapCurve struct {
	i    float64 // A
	segs []curveSeg
	lo   float64 // m: the gap span of the data
	hi   float64
	top  float64 // ∫ F dx from the first knot to the model's open gap, J
}

// CurveModel is a magnetic model built from force–gap curves at one or
// more currents and the inductance measured at the open (rest) gap.
//
// The co-energy is anchored at the open gap x_o, where the magnet is taken
// as linear with the measured inductance L_o, and follows elsewhere from
// F = −∂W'/∂x at constant current (the co-energy principle, e.g.
// Fitzgerald & Kingsley, Electric Machinery, ch. 3):
//
//	W'(i, x) = ½·L_o·i² + ΔW(i, x),  ΔW(i, x) = ∫_x^x_o F(i, s) ds.
//
// Each curve k (current i_k) is interpolated in gap by a shape-preserving
// piecewise cubic Hermite interpolant (shapeSlopes), held at its end
// values outside its data, and integrated exactly: G_k(x) = ∫_x^x_o F_k ds,
// so the co-energy at the curves' currents is y_k(x) = ½·L_o·i_k² + G_k(x).
// In current, at each gap, λ = ∂W'/∂i is the C1 quadratic spline whose
// integral takes the co-energy y_k at the curves' currents (the derivative
// of the cubic spline through (i_k, y_k) with λ(0) = 0 and λ linear over
// the last interval): smooth, and λ = L(x)·i exactly for curves that
// scale with i². Where that spline's λ would not rise with the current at
// some checked gap (curves far apart across a sharp knee), the model takes
// instead a piecewise-linear λ through the nodes (0, 0), (i_k, a_k) and one
// knot per interval between, of value the interval's mean flux linkage
// m_k = (y_k+1 − y_k)/(i_k+1 − i_k), placed so that λ's integral over the
// interval is y_k+1 − y_k; its node values a_k interpolate the means
// linearly between the intervals' middles (and extrapolate at the last
// curve), so a_k lies between m_k−1 and m_k and λ rises wherever the
// means rise — which is the condition for W' to be convex in i, for the
// curves to come from a passive magnet (NewCurveModel
// refuses them otherwise). Curves that scale with i² (a linear magnet)
// give λ = L(x)·i exactly; with a single curve the model is linear at
// every current, L(x) = L_o + 2·G_1(x)/i_1². Above the highest curve λ
// rises at L_o (the iron taken as saturated: the extra ampere-turns add
// flux as the open gap's inductance does), so the force grows about
// linearly with the current there. Saturation shows wherever the curves
// stop scaling with i².
//
// The force is F = −∂W'/∂x of that co-energy exactly (the gap derivatives
// are carried through by forward-mode automatic differentiation): energy
// is conserved by construction, and at a curve's current the force is that
// curve (at its points, its data). λ is odd in i. Gaps outside GapRange are
// clamped: λ, W' and the force hold their end values.
type CurveModel struct {
	lo         float64 // H, at xMax
	xMin, xMax float64 // m
	curves     []gapCurve
	cur        []float64 // A, the curves' currents
	// smooth: λ is the C1 quadratic spline through the curves' co-energy
	// (splineSub, splineCp, splineDen: its tridiagonal system factored);
	// else piecewise linear through the mean flux linkages.
	smooth                         bool
	splineSub, splineCp, splineDen []float64
	// breaks are the curves' knots strictly inside the range, ascending:
	// the ends of the model's gap pieces (pieces, GapPieceAt).
	breaks []float64
	pieces []curvePiece
}

// NewCurveModel builds the model from the curves (ascending currents), the
// inductance lOpen (H) measured at the open gap xMax (m), over the gaps
// xMin..xMax (the plunger's stroke; xMin ≥ 0). It returns a *CurveError for
// a curve that cannot come from a passive magnet or cannot be
// interpolated: fewer than two points, gaps not strictly ascending, a
// negative or non-finite force, a curve entirely outside xMin..xMax, a
// current not above the previous curve's, a force that falls where the
// current rises at a gap, or a flux linkage that would not rise with the
// current.
func NewCurveModel(curves []ForceCurve, lOpen, xMin, xMax float64) (*CurveModel, error) {
	if !(lOpen > 0) || math.IsInf(lOpen, 0) {
		return nil, fmt.Errorf("magnet: force curves: open-gap inductance must be positive and finite, got %g H", lOpen)
	}
	if !(xMin >= 0) || !(xMax > xMin) || math.IsInf(xMax, 0) {
		return nil, fmt.Errorf("magnet: force curves: need 0 ≤ seated gap < rest gap, got %g m and %g m", xMin, xMax)
	}
	if len(curves) == 0 || len(curves) > MaxForceCurves {
		return nil, curveErr(-1, -1, "%d curves; give 1 to %d", len(curves), MaxForceCurves)
	}
	m := &CurveModel{lo: lOpen, xMin: xMin, xMax: xMax}
	for k, c := range curves {
		gc, err := newGapCurve(k, c, xMin, xMax)
		if err != nil {
			return nil, err
		}
		if k > 0 && !(c.Current > curves[k-1].Current) {
			return nil, curveErr(k, 0, "current %.4g A is not above the previous curve's %.4g A; give the curves in order of rising current, one current each", c.Current, curves[k-1].Current)
		}
		m.curves = append(m.curves, gc)
		m.cur = append(m.cur, c.Current)
	}
	for k := 1; k < len(curves); k++ {
		if err := m.checkRising(k, curves); err != nil {
			return nil, err
		}
	}
	if len(curves) > 1 {
		m.factorSpline()
		m.smooth = m.smoothMonotone()
	}
	if err := m.checkFlux(); err != nil {
		return nil, err
	}
	m.buildPieces()
	return m, nil
}

// newGapCurve checks curve k and builds its interpolant over its data,
// extended at its end values to cover xMin..xMax.
func newGapCurve(k int, c ForceCurve, xMin, xMax float64) (gapCurve, *CurveError) {
	n := len(c.Gaps)
	switch {
	case !(c.Current > 0) || math.IsInf(c.Current, 0):
		return gapCurve{}, curveErr(k, 0, "current must be positive and finite, got %g A", c.Current)
	case n != len(c.Forces):
		return gapCurve{}, curveErr(k, -1, "%d gaps but %d forces", n, len(c.Forces))
	case n < 2:
		return gapCurve{}, curveErr(k, 0, "the curve at %.4g A has %d point; a curve needs at least two", c.Current, n)
	case n > MaxCurvePoints:
		return gapCurve{}, curveErr(k, MaxCurvePoints, "the curve at %.4g A has %d points; at most %d", c.Current, n, MaxCurvePoints)
	}
	for j := range n {
		x, f := c.Gaps[j], c.Forces[j]
		switch {
		case !(x >= 0) || math.IsInf(x, 0):
			return gapCurve{}, curveErr(k, j, "gap must be ≥ 0 and finite, got %g m", x)
		case j > 0 && !(x > c.Gaps[j-1]):
			return gapCurve{}, curveErr(k, j, "gap %.4g mm does not follow %.4g mm of the previous point: a curve's gaps must rise (or fall) strictly", x*1e3, c.Gaps[j-1]*1e3)
		case !(f >= 0) || math.IsInf(f, 0):
			return gapCurve{}, curveErr(k, j, "force must be ≥ 0 and finite (a pull), got %g N", f)
		}
	}
	if c.Gaps[n-1] <= xMin || c.Gaps[0] >= xMax {
		return gapCurve{}, curveErr(k, -1, "the curve at %.4g A covers gaps %.4g–%.4g mm, outside the stroke %.4g–%.4g mm", c.Current, c.Gaps[0]*1e3, c.Gaps[n-1]*1e3, xMin*1e3, xMax*1e3)
	}
	g := gapCurve{i: c.Current, lo: c.Gaps[0], hi: c.Gaps[n-1]}
	d := make([]float64, n)
	shapeSlopes(c.Gaps, c.Forces, d)
	p := 0.0
	add := func(x0, h, c0, c1, c2, c3 float64) {
		g.segs = append(g.segs, curveSeg{x0: x0, h: h, c0: c0, c1: c1, c2: c2, c3: c3, p: p})
		p += h * (c0 + h*(c1/2+h*(c2/3+h*c3/4)))
	}
	if xMin < c.Gaps[0] {
		add(xMin, c.Gaps[0]-xMin, c.Forces[0], 0, 0, 0)
	}
	for j := 0; j < n-1; j++ {
		h := c.Gaps[j+1] - c.Gaps[j]
		c0, c1, c2, c3 := hermiteCoeffs(h, c.Forces[j], c.Forces[j+1], d[j], d[j+1])
		add(c.Gaps[j], h, c0, c1, c2, c3)
	}
	if xMax > c.Gaps[n-1] {
		add(c.Gaps[n-1], xMax-c.Gaps[n-1], c.Forces[n-1], 0, 0, 0)
	}
	_, g.top = g.eval(xMax)
	return g, nil
}

// shapeSlopes sets d to the node slopes of a shape-preserving cubic
// Hermite interpolant of y(x): the three-point (parabola) derivative,
// third-order accurate on smooth data, limited by the filter of Hyman
// (J. M. Hyman, "Accurate monotonicity preserving cubic interpolation",
// SIAM J. Sci. Stat. Comput. 4(4), 645–654, 1983): zero at a local
// extremum of the data, else at most three times the smaller adjacent
// secant in magnitude, with the secant's sign — which keeps each interval
// monotone where the data are (Fritsch & Carlson 1980) and a force curve
// from going negative between non-negative points.
func shapeSlopes(x, y, d []float64) {
	n := len(x)
	h := func(k int) float64 { return x[k+1] - x[k] }
	del := func(k int) float64 { return (y[k+1] - y[k]) / h(k) }
	if n == 2 {
		d[0], d[1] = del(0), del(0)
		return
	}
	for k := 1; k < n-1; k++ {
		a, b := del(k-1), del(k)
		d[k] = 0
		if a*b > 0 {
			p := (h(k)*a + h(k-1)*b) / (h(k-1) + h(k))
			d[k] = math.Copysign(math.Min(math.Abs(p), 3*math.Min(math.Abs(a), math.Abs(b))), a)
		}
	}
	d[0] = endSlope(h(0), h(1), del(0), del(1))
	d[n-1] = endSlope(h(n-2), h(n-3), del(n-2), del(n-3))
}

// endSlope is the one-sided three-point slope at an end with the interval
// h0 and secant d0 next to it and h1, d1 beyond, limited as inside: zero
// when its sign differs from d0's, at most 3·|d0|.
func endSlope(h0, h1, d0, d1 float64) float64 {
	d := ((2*h0+h1)*d0 - h0*d1) / (h0 + h1)
	if d*d0 <= 0 {
		return 0
	}
	return math.Copysign(math.Min(math.Abs(d), 3*math.Abs(d0)), d0)
}

// eval returns the curve's force F (N) at x and its integral P (J) from the
// first knot to x; x is within the knots.
func (g *gapCurve) eval(x float64) (f, p float64) {
	s := &g.segs[g.segAt(x)]
	return s.at(math.Min(math.Max(x-s.x0, 0), s.h))
}

// evalOn is eval on the segment at gap ref, its cubic continued to any x
// (a gap piece; CurveModel.GapPieceAt).
func (g *gapCurve) evalOn(x, ref float64) (f, p float64) {
	s := &g.segs[g.segAt(ref)]
	return s.at(x - s.x0)
}

// segAt returns the first segment whose end is at or above x, the last
// one above them all (sort.Search's bisection, without its closure: this
// runs per curve at every evaluation).
func (g *gapCurve) segAt(x float64) int {
	lo, hi := 0, len(g.segs)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if g.segs[mid].x0+g.segs[mid].h >= x {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	return min(lo, len(g.segs)-1)
}

// at returns the segment's force (N) and its integral from the first knot
// (J) at offset t (m) from its start.
func (s *curveSeg) at(t float64) (f, p float64) {
	f = s.c0 + t*(s.c1+t*(s.c2+t*s.c3))
	p = s.p + t*(s.c0+t*(s.c1/2+t*(s.c2/3+t*s.c3/4)))
	return f, p
}

// dual is a number with its derivative along the gap, for the co-energy
// and flux linkage as functions of x (forward-mode automatic
// differentiation): the force is then the exact −∂W'/∂x of the co-energy
// as computed.
type dual struct{ v, d float64 }

func (a dual) add(b dual) dual      { return dual{a.v + b.v, a.d + b.d} }
func (a dual) sub(b dual) dual      { return dual{a.v - b.v, a.d - b.d} }
func (a dual) mul(b dual) dual      { return dual{a.v * b.v, a.d*b.v + a.v*b.d} }
func (a dual) scale(k float64) dual { return dual{a.v * k, a.d * k} }
func (a dual) div(b dual) dual {
	return dual{a.v / b.v, (a.d*b.v - a.v*b.d) / (b.v * b.v)}
}

// profile is the model at one gap: the co-energy at the curves' currents
// y_k (node 0 at zero current), the mean flux linkage m_k over each current
// interval, and the flux linkage a_k at each node, all with their
// derivatives along the gap.
type profile struct {
	n int // curves
	y [MaxForceCurves + 1]dual
	m [MaxForceCurves]dual
	a [MaxForceCurves + 1]dual
}

// node returns the current of node k (0: zero current).
func (m *CurveModel) node(k int) float64 {
	if k == 0 {
		return 0
	}
	return m.cur[k-1]
}

// profileAt returns the profile at gap x (clamped to the range).
func (m *CurveModel) profileAt(x float64) profile {
	return m.profileOn(clamp(x, m.xMin, m.xMax), math.NaN())
}

// profileOn returns the profile at gap x: each curve on its own segment
// at x when ref is NaN (x within the range), else on its segment at gap
// ref, continued to x (a gap piece, curvePiece).
func (m *CurveModel) profileOn(x, ref float64) profile {
	n := len(m.curves)
	p := profile{n: n}
	for k := range m.curves {
		c := &m.curves[k]
		var f, q float64
		if math.IsNaN(ref) {
			f, q = c.eval(x)
		} else {
			f, q = c.evalOn(x, ref)
		}
		i := c.i
		// W'(i_k, x) = ½·L_o·i_k² + ∫_x^x_o F_k ds; ∂/∂x = −F_k(x)
		p.y[k+1] = dual{0.5*m.lo*i*i + c.top - q, -f}
	}
	for k := range n {
		p.m[k] = p.y[k+1].sub(p.y[k]).scale(1 / (m.node(k+1) - m.node(k)))
	}
	if n == 1 {
		p.a[1] = p.m[0].scale(2)
		return p
	}
	if m.smooth {
		m.splineNodes(&p)
		return p
	}
	mid := func(k int) float64 { return 0.5 * (m.node(k) + m.node(k+1)) }
	for k := 1; k < n; k++ {
		r := (m.node(k) - mid(k-1)) / (mid(k) - mid(k-1))
		p.a[k] = p.m[k-1].add(p.m[k].sub(p.m[k-1]).scale(r))
	}
	r := (m.node(n) - mid(n-1)) / (mid(n-1) - mid(n-2))
	p.a[n] = p.m[n-1].add(p.m[n-1].sub(p.m[n-2]).scale(r))
	return p
}

// factorSpline sets up the tridiagonal system of the quadratic spline's
// node values a_1 … a_n (a_0 = 0), rows k = 1 … n: at each inner node the
// slopes of the two intervals' quadratics agree,
//
//	2·a_k−1/h_k−1 + 4·(1/h_k−1 + 1/h_k)·a_k + 2·a_k+1/h_k = 6·(m_k−1/h_k−1 + m_k/h_k),
//
// and the last interval's λ is linear, a_n−1 + a_n = 2·m_n−1, so that
// curves scaling with i² give λ = L·i exactly. It stores the Thomas
// algorithm's factors (the matrix is diagonally dominant in its inner
// rows; any numerical analysis text).
func (m *CurveModel) factorSpline() {
	n := len(m.cur)
	m.splineSub, m.splineCp, m.splineDen = make([]float64, n+1), make([]float64, n+1), make([]float64, n+1)
	h := func(k int) float64 { return m.node(k+1) - m.node(k) }
	for k := 1; k <= n; k++ {
		var sub, diag, sup float64
		if k < n {
			sub, diag, sup = 2/h(k-1), 4/h(k-1)+4/h(k), 2/h(k)
		} else {
			sub, diag = 1, 1
		}
		if k == 1 {
			sub = 0 // a_0 = 0
		}
		den := diag - sub*m.splineCp[k-1]
		m.splineSub[k], m.splineDen[k], m.splineCp[k] = sub, den, sup/den
	}
}

// splineNodes sets the node values a_k of the quadratic spline from the
// means p.m (with their gap derivatives).
func (m *CurveModel) splineNodes(p *profile) {
	n := p.n
	h := func(k int) float64 { return m.node(k+1) - m.node(k) }
	var r [MaxForceCurves + 1]dual
	for k := 1; k <= n; k++ {
		rhs := p.m[n-1].scale(2)
		if k < n {
			rhs = p.m[k-1].scale(6 / h(k-1)).add(p.m[k].scale(6 / h(k)))
		}
		r[k] = rhs.sub(r[k-1].scale(m.splineSub[k])).scale(1 / m.splineDen[k])
	}
	p.a[n] = r[n]
	for k := n - 1; k >= 1; k-- {
		p.a[k] = r[k].sub(p.a[k+1].scale(m.splineCp[k]))
	}
}

// state is the model at one current and gap: co-energy W' (J) and flux
// linkage λ (Wb) with their gap derivatives, and ∂λ/∂i (H).
type state struct {
	w, lam dual
	dlam   float64
}

// at evaluates the profile at current i ≥ 0. Between two nodes λ is
// piecewise linear through a_k, a knot of value m_k and a_k+1, the knot
// placed so that λ's mean over the interval is m_k: W' then takes the
// curves' co-energy at their currents, λ rises wherever the m_k rise, and
// a curve that scales with i² gives the knot at the interval's middle on
// the straight line λ = L·i. With one curve λ is linear; above the last
// curve λ rises at L_o from a_n.
func (m *CurveModel) at(p *profile, i float64) state {
	n := p.n
	if n == 1 {
		k := 1 / (m.cur[0] * m.cur[0])
		return state{w: p.y[1].scale(k * i * i), lam: p.y[1].scale(2 * k * i), dlam: 2 * k * p.y[1].v}
	}
	if in := m.cur[n-1]; i >= in {
		s := i - in
		return state{w: p.y[n].add(p.a[n].scale(s)).add(dual{0.5 * m.lo * s * s, 0}),
			lam: p.a[n].add(dual{m.lo * s, 0}), dlam: m.lo}
	}
	k := sort.SearchFloat64s(m.cur, i) // node k ≤ i < node k+1
	if i == m.node(k+1) {
		k++ // i on a node: the interval that starts there
	}
	h := m.node(k+1) - m.node(k)
	a, b, c := p.a[k], p.m[k], p.a[k+1]
	if m.smooth {
		return quadState(p.y[k], a, b, c, h, (i-m.node(k))/h)
	}
	th := c.sub(b).div(c.sub(a)) // knot at θ·h
	pk := th.scale(h)
	s := dual{i - m.node(k), 0}
	if s.v <= pk.v {
		sl := b.sub(a).div(pk)
		return state{w: p.y[k].add(a.mul(s)).add(sl.mul(s).mul(s).scale(0.5)), lam: a.add(sl.mul(s)), dlam: sl.v}
	}
	q := s.sub(pk)
	sl := c.sub(b).div(dual{h, 0}.sub(pk))
	w := p.y[k].add(a.add(b).mul(pk).scale(0.5)).add(b.mul(q)).add(sl.mul(q).mul(q).scale(0.5))
	return state{w: w, lam: b.add(sl.mul(q)), dlam: sl.v}
}

// quadState evaluates an interval of the quadratic spline at t ∈ [0, 1]:
// λ(t) = a·(1−t) + c·t + q·t·(1−t) with q = 6·(m − (a+c)/2), whose mean
// over the interval is m, and W' = y0 + h·∫0^t λ.
func quadState(y0, a, m, c dual, h, t float64) state {
	q := m.sub(a.add(c).scale(0.5)).scale(6)
	lam := a.scale(1 - t).add(c.scale(t)).add(q.scale(t * (1 - t)))
	w := y0.add(a.scale(h * t)).add(c.sub(a).scale(h * t * t / 2)).add(q.scale(h * (t*t/2 - t*t*t/3)))
	return state{w: w, lam: lam, dlam: (c.v - a.v + q.v*(1-2*t)) / h}
}

// FluxLinkage returns λ = ∂W'/∂i (Wb).
func (m *CurveModel) FluxLinkage(i, x float64) float64 {
	p := m.profileAt(x)
	return math.Copysign(m.at(&p, math.Abs(i)).lam.v, i)
}

// CoEnergy returns W'(i, x) (J).
func (m *CurveModel) CoEnergy(i, x float64) float64 {
	p := m.profileAt(x)
	return m.at(&p, math.Abs(i)).w.v
}

// Force returns F = −∂W'/∂x (N); outside GapRange the end value.
func (m *CurveModel) Force(i, x float64) float64 {
	p := m.profileAt(x)
	return -m.at(&p, math.Abs(i)).w.d
}

// CurrentForce returns Current(lam, x) and Force at that current and x
// (A, N), as the two calls would, with the gap profile computed once.
func (m *CurveModel) CurrentForce(lam, x float64) (i, f float64) {
	p := m.profileAt(x)
	i = math.Copysign(m.current(&p, math.Abs(lam)), lam)
	return i, -m.at(&p, math.Abs(i)).w.d
}

// GapRange returns the stroke the model was built for.
func (m *CurveModel) GapRange() (min, max float64) { return m.xMin, m.xMax }

// Current returns i with FluxLinkage(i, x) = lam: λ is piecewise linear in
// i, so each piece inverts exactly.
func (m *CurveModel) Current(lam, x float64) float64 {
	p := m.profileAt(x)
	return math.Copysign(m.current(&p, math.Abs(lam)), lam)
}

func (m *CurveModel) current(p *profile, lam float64) float64 {
	n := p.n
	if n == 1 {
		return lam / p.a[1].v * m.cur[0]
	}
	if m.smooth {
		return m.smoothCurrent(p, lam)
	}
	// the pieces' corners (i, λ) in order: nodes and knots
	i0, l0 := 0.0, 0.0
	for k := range n {
		h := m.node(k+1) - m.node(k)
		a, b, c := p.a[k].v, p.m[k].v, p.a[k+1].v
		ik := m.node(k) + h*(c-b)/(c-a)
		for _, corner := range [2][2]float64{{ik, b}, {m.node(k + 1), c}} {
			i1, l1 := corner[0], corner[1]
			if lam <= l1 && l1 > l0 {
				return i0 + (i1-i0)*(lam-l0)/(l1-l0)
			}
			i0, l0 = i1, l1
		}
	}
	return m.cur[n-1] + (lam-p.a[n].v)/m.lo
}

// smoothCurrent inverts the quadratic spline: the interval whose node
// values bracket lam, then the root of its quadratic in [0, 1].
func (m *CurveModel) smoothCurrent(p *profile, lam float64) float64 {
	n := p.n
	if lam >= p.a[n].v {
		return m.cur[n-1] + (lam-p.a[n].v)/m.lo
	}
	k := 0
	for k < n-1 && lam > p.a[k+1].v {
		k++
	}
	a, c := p.a[k].v, p.a[k+1].v
	q := 6 * (p.m[k].v - (a+c)/2)
	// λ(t) = a + (c − a + q)·t − q·t²: solve q·t² − B·t + (lam − a) = 0
	bq, cq := c-a+q, lam-a
	var t float64
	if math.Abs(q) <= 1e-12*math.Abs(bq) {
		t = cq / bq
	} else {
		// the root in [0, 1] of the increasing branch, in the form that
		// does not cancel: t = 2·cq / (B + √(B² − 4·q·cq))
		disc := math.Max(bq*bq-4*q*cq, 0)
		t = 2 * cq / (bq + math.Sqrt(disc))
	}
	t = math.Min(math.Max(t, 0), 1)
	h := m.node(k+1) - m.node(k)
	return m.node(k) + t*h
}

// Partials returns ∂i/∂λ (1/H) and ∂i/∂x (A/m) at (λ, x) (0 outside
// GapRange, where the model is clamped).
func (m *CurveModel) Partials(lam, x float64) (diDlam, diDx float64) {
	p := m.profileAt(x)
	st := m.at(&p, m.current(&p, math.Abs(lam)))
	diDx = -st.lam.d / st.dlam
	if x < m.xMin || x > m.xMax {
		diDx = 0
	}
	if lam < 0 { // i is odd in λ and even in x's effect: ∂i/∂x is odd in λ
		diDx = -diDx
	}
	return 1 / st.dlam, diDx
}

// OpenInductance returns the measured inductance the model is anchored at
// (H, at the rest gap).
func (m *CurveModel) OpenInductance() float64 { return m.lo }

// SmallSignalInductance returns the model's inductance at zero current
// (H): L_o + ∂²ΔW/∂i² at i = 0; with one curve L_o + 2·G_1(x)/i_1².
func (m *CurveModel) SmallSignalInductance(x float64) float64 {
	p := m.profileAt(x)
	return m.at(&p, 0).dlam
}

// Currents returns the curves' currents (A), ascending.
func (m *CurveModel) Currents() []float64 { return append([]float64(nil), m.cur...) }

// DataGaps returns the gaps (m) the curves' data cover together: from the
// smallest first gap to the largest last gap. Outside it the force is
// extrapolated at the curves' end values.
func (m *CurveModel) DataGaps() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, g := range m.curves {
		lo, hi = math.Min(lo, g.lo), math.Max(hi, g.hi)
	}
	return lo, hi
}

// risingTol is the relative amount by which a curve's force may fall
// below the lower current's at a gap (rounding of the data).
const risingTol = 1e-6

// checkRising refuses a curve k whose force falls below curve k−1's at a
// gap both cover (at each data point of either).
func (m *CurveModel) checkRising(k int, curves []ForceCurve) *CurveError {
	a, b := &m.curves[k-1], &m.curves[k]
	lo, hi := math.Max(a.lo, b.lo), math.Min(a.hi, b.hi)
	check := func(x float64, point int) *CurveError {
		if x < lo || x > hi {
			return nil
		}
		fa, _ := a.eval(x)
		fb, _ := b.eval(x)
		if fb < fa*(1-risingTol) {
			return curveErr(k, point, "at gap %.4g mm the force %.4g N at %.4g A is below the %.4g N at the lower current %.4g A: a passive magnet's pull cannot fall when the current rises", x*1e3, fb, b.i, fa, a.i)
		}
		return nil
	}
	for j, x := range curves[k].Gaps {
		if err := check(x, j); err != nil {
			return err
		}
	}
	for _, x := range curves[k-1].Gaps {
		if err := check(x, -1); err != nil {
			return err
		}
	}
	return nil
}

// fluxCheckSub is the number of check points per gap interval of each
// curve at which NewCurveModel verifies that the curves' co-energy is
// convex in the current.
const fluxCheckSub = 8

// convexTol is the relative rise of the mean flux linkage from one current
// interval to the next below which the curves are refused: a passive
// magnet's flux linkage rises with the current (by at least its air-core
// inductance; common practice, no source).
const convexTol = 1e-9

// checkFlux refuses curves whose co-energy is not convex in the current at
// some gap: the mean flux linkage over each interval between the curves'
// currents must rise from one interval to the next (λ = ∂W'/∂i rises with
// i in a passive magnet). It checks at every knot of every curve and
// fluxCheckSub points between.
func (m *CurveModel) checkFlux() *CurveError {
	smooth := m.smooth
	m.smooth = false // the means are those of either scheme
	defer func() { m.smooth = smooth }()
	for _, x := range m.checkGaps() {
		p := m.profileAt(x)
		for k := 1; k < p.n; k++ {
			if lo, hi := p.m[k-1].v, p.m[k].v; !(hi > lo*(1+convexTol)) {
				return curveErr(k, -1, "at gap %.4g mm the curves at %.4g A and %.4g A give a mean flux linkage of %.4g mWb between them, not above the %.4g mWb below %.4g A: a passive magnet's flux linkage rises with the current; the force at %.4g A is too high for the curves below it (or the open-gap inductance too low)", x*1e3, m.node(k), m.node(k+1), hi*1e3, lo*1e3, m.node(k), m.node(k+1))
			}
		}
	}
	return nil
}

// checkGaps lists the gaps at which NewCurveModel checks the model: every
// knot of every curve and fluxCheckSub points between, within the stroke.
func (m *CurveModel) checkGaps() []float64 {
	var gaps []float64
	for _, g := range m.curves {
		for _, s := range g.segs {
			for q := 0; q < fluxCheckSub; q++ {
				if x := s.x0 + s.h*float64(q)/fluxCheckSub; x >= m.xMin && x <= m.xMax {
					gaps = append(gaps, x)
				}
			}
		}
	}
	return append(gaps, m.xMax)
}

// smoothMonotone reports whether the quadratic spline's λ rises with the
// current at every checked gap: each interval's slope at both ends (λ is
// quadratic in between, so its slope is linear) at least smoothMinSlope
// of L_o.
func (m *CurveModel) smoothMonotone() bool {
	m.smooth = true
	for _, x := range m.checkGaps() {
		p := m.profileAt(x)
		for k := range p.n {
			h := m.node(k+1) - m.node(k)
			a, c := p.a[k].v, p.a[k+1].v
			q := 6 * (p.m[k].v - (a+c)/2)
			if (c-a+q)/h < smoothMinSlope*m.lo || (c-a-q)/h < smoothMinSlope*m.lo {
				return false
			}
		}
	}
	return true
}

// smoothMinSlope is the least incremental inductance, as a fraction of
// L_o, the smooth λ must keep between the checked gaps and currents; below
// it the piecewise-linear λ is used (common practice, no source).
const smoothMinSlope = 0.01

// Smooth reports whether λ between the curves' currents is the smooth
// (C1) quadratic spline through their co-energy, or else piecewise linear
// through the mean flux linkages (curves that saturate too sharply for
// the spline to keep λ rising).
func (m *CurveModel) Smooth() bool { return m.smooth }

// String describes the model.
func (m *CurveModel) String() string {
	return fmt.Sprintf("force curves (%d at %.4g–%.4g A, L_o %.4g H)", len(m.cur), m.cur[0], m.cur[len(m.cur)-1], m.lo)
}
