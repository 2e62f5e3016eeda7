package magnet

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// BHCurve is a steel's normal (anhysteretic, lossless) magnetization law:
// flux density B (T) against field strength H (A/m). Both directions are
// odd and strictly increasing and each is the inverse of the other.
// Implementations must return finite values for finite arguments.
type BHCurve interface {
	// H returns the field strength (A/m) at flux density b (T).
	H(b float64) float64
	// B returns the flux density (T) at field strength h (A/m).
	B(h float64) float64
}

// FrohlichKennelly is the Frohlich–Kennelly saturation law written for the
// polarization J = B − µ0·H:
//
//	J(H) = Js·H/(Hk + |H|),  B(H) = µ0·H + J(H),
//
// the hyperbolic ("reluctivity linear in H") form proposed by O. Frohlich
// (Elektrotechnische Zeitschrift, 1881) and A. E. Kennelly ("Magnetic
// reluctance", Trans. AIEE 8, 1891) — journal details from memory. J rises
// from 0 with slope Js/Hk and tends to Js; dB/dH tends to µ0 (full
// saturation). Hk (A/m) is chosen so that the initial relative permeability
// is MuRInitial: µr0 = 1 + Js/(µ0·Hk), Hk = Js/(µ0·(µr0 − 1)).
//
// The law has no knee beyond its single curvature and no initial
// low-permeability "toe"; its MuRInitial is best fitted to the steel's
// permeability in the working range (near the maximum permeability), not to
// the textbook initial permeability. Use a BHTable for a measured curve.
type FrohlichKennelly struct {
	Js         float64 // T, saturation polarization (> 0)
	MuRInitial float64 // initial relative permeability dB/dH/µ0 at H = 0 (> 1)
}

// LowCarbonSteel returns an example Frohlich–Kennelly steel with Js = 2.0 T
// and µr0 = 1500. From memory, typical of low-carbon free-machining steel
// (saturation polarization about 2.0–2.1 T, maximum relative permeability
// of order 1000–2000); not measured data — use your material's data.
func LowCarbonSteel() FrohlichKennelly {
	return FrohlichKennelly{Js: 2.0, MuRInitial: 1500}
}

// NewFrohlichKennelly returns the law after Validate.
func NewFrohlichKennelly(js, muRInitial float64) (FrohlichKennelly, error) {
	s := FrohlichKennelly{Js: js, MuRInitial: muRInitial}
	return s, s.Validate()
}

// Validate reports a saturation polarization that is not positive and
// finite or an initial relative permeability that is not finite and above 1.
func (s FrohlichKennelly) Validate() error {
	switch {
	case !(s.Js > 0) || math.IsInf(s.Js, 0):
		return fmt.Errorf("magnet: Frohlich–Kennelly steel: saturation polarization Js must be positive and finite, got %g T", s.Js)
	case !(s.MuRInitial > 1) || math.IsInf(s.MuRInitial, 0):
		return fmt.Errorf("magnet: Frohlich–Kennelly steel: initial relative permeability must be finite and above 1, got %g", s.MuRInitial)
	}
	return nil
}

// Hk returns the knee field Hk = Js/(µ0·(µr0 − 1)) (A/m), at which J = Js/2.
func (s FrohlichKennelly) Hk() float64 { return s.Js / (Mu0 * (s.MuRInitial - 1)) }

// Polarization returns J(H) = Js·H/(Hk + |H|) (T); |J| < Js.
func (s FrohlichKennelly) Polarization(h float64) float64 {
	return s.Js * h / (s.Hk() + math.Abs(h))
}

// B returns µ0·H + J(H) (T).
func (s FrohlichKennelly) B(h float64) float64 { return Mu0*h + s.Polarization(h) }

// H returns the field strength (A/m) at flux density b (T) in closed form.
// For b ≥ 0 (then H ≥ 0), multiplying B = µ0·H + Js·H/(Hk + H) by Hk + H
// gives the quadratic
//
//	µ0·H² + (µ0·Hk + Js − B)·H − B·Hk = 0,
//
// whose product of roots −B·Hk/µ0 is ≤ 0, so exactly one root is ≥ 0:
// H = (−β + √(β² + 4·µ0·B·Hk))/(2µ0) with β = µ0·Hk + Js − B. For β > 0 it
// is evaluated as 2·B·Hk/(β + √(β² + 4·µ0·B·Hk)) to avoid cancellation.
// Negative b uses oddness, H(−B) = −H(B).
func (s FrohlichKennelly) H(b float64) float64 {
	ab := math.Abs(b)
	hk := s.Hk()
	beta := Mu0*hk + s.Js - ab
	disc := math.Sqrt(beta*beta + 4*Mu0*ab*hk)
	var h float64
	if beta > 0 {
		h = 2 * ab * hk / (beta + disc)
	} else {
		h = (disc - beta) / (2 * Mu0)
	}
	return math.Copysign(h, b)
}

// BHTable is a steel's B–H law from measured points (H_k, B_k), starting at
// (0, 0), both strictly increasing. Between the points H(B) is the monotone
// piecewise cubic Hermite interpolant of F. N. Fritsch and R. E. Carlson
// ("Monotone Piecewise Cubic Interpolation", SIAM J. Numer. Anal. 17(2),
// 1980), the same scheme Table uses in current; B(H) is its exact inverse
// (a safeguarded Newton solve of the cubic). Above the last point the steel
// is taken as fully saturated, dB/dH = µ0: B = B_n + µ0·(H − H_n). The law
// is odd: H(−B) = −H(B).
type BHTable struct {
	b, h []float64 // nodes, ascending, b[0] = h[0] = 0
	c    []float64 // per interval k: c0..c3 of H in (B − b[k])
}

// Bounds of a B–H table's points: the field strength of any measured
// steel curve stays far below 1e8 A/m (µ0·H is then 126 T) and its flux
// density below 100 T; a curve that ends below 1 mA/m or 1 mT is in the
// wrong units; neighbouring points closer than 1e-9 of the curve's span
// are a mistake (common practice, no source).
const (
	maxBHField          = 1e8   // A/m
	maxBHFluxDensity    = 100.0 // T
	minBHFieldTop       = 1e-3  // A/m
	minBHFluxDensityTop = 1e-3  // T
	minBHSpacing        = 1e-9
)

// NewBHTable builds the law from field strengths h (A/m) and flux
// densities b (T). It returns an error unless there are at least two
// points, of equal count, all finite, starting at exactly (0, 0), with h
// and b both strictly increasing.
func NewBHTable(h, b []float64) (*BHTable, error) {
	t, idx, msg := newBHTable(h, b, siBHUnits)
	if msg != "" {
		if idx >= 0 {
			return nil, fmt.Errorf("magnet: B–H table: point %d: %s", idx+1, msg)
		}
		return nil, errors.New("magnet: B–H table: " + msg)
	}
	return t, nil
}

// bhUnits are the units a B–H curve's messages give its values in: the
// file's for ReadBHCSV, SI for NewBHTable.
type bhUnits struct{ h, b Unit }

// siBHUnits are the SI units of NewBHTable.
var siBHUnits = bhUnits{h: Unit{"A/m", 1}, b: Unit{"T", 1}}

// newBHTable returns the table, or the 0-based point index (−1 for none)
// and a message with values in units u.
func newBHTable(h, b []float64, u bhUnits) (*BHTable, int, string) {
	if idx, msg := checkBH(h, b, u); msg != "" {
		return nil, idx, msg
	}
	n := len(h)
	t := &BHTable{
		b: append([]float64(nil), b...),
		h: append([]float64(nil), h...),
		c: make([]float64, 4*(n-1)),
	}
	d := make([]float64, n)
	pchipSlopes(t.b, t.h, d) // dH/dB at the nodes
	for k := 0; k < n-1; k++ {
		c0, c1, c2, c3 := hermiteCoeffs(t.b[k+1]-t.b[k], t.h[k], t.h[k+1], d[k], d[k+1])
		p := t.c[4*k:][:4]
		p[0], p[1], p[2], p[3] = c0, c1, c2, c3
	}
	return t, -1, ""
}

// checkBH validates a curve's points (see NewBHTable); it returns the
// 0-based index of the offending point (−1 for none) and a message with
// values in units u, or "" for a good curve.
func checkBH(h, b []float64, u bhUnits) (int, string) {
	if len(h) != len(b) {
		return -1, fmt.Sprintf("need one flux density per field strength, got %d H and %d B values", len(h), len(b))
	}
	if len(h) < 2 {
		return -1, fmt.Sprintf("need at least 2 points, (0, 0) and one more, got %d", len(h))
	}
	n := len(h)
	if n > MaxBHPoints {
		return -1, fmt.Sprintf("%d points, more than the %d a B–H curve may have", n, MaxBHPoints)
	}
	for k := range h {
		switch {
		case !isFinite(h[k]):
			return k, "field strength is not finite: " + u.h.Format(h[k])
		case !isFinite(b[k]):
			return k, "flux density is not finite: " + u.b.Format(b[k])
		case h[k] > maxBHField:
			return k, fmt.Sprintf("field strength %s is above %g A/m, beyond any measured steel curve: check the field unit (%s)", u.h.WithSI(h[k], "A/m"), maxBHField, u.h.Name)
		case b[k] > maxBHFluxDensity:
			return k, fmt.Sprintf("flux density %s is above %g T, beyond any steel: check the flux density unit (%s)", u.b.WithSI(b[k], "T"), maxBHFluxDensity, u.b.Name)
		case k == 0 && (h[0] != 0 || b[0] != 0):
			return k, fmt.Sprintf("the curve must start at H = 0, B = 0 (no remanence), got (%s, %s)", u.h.Format(h[0]), u.b.Format(b[0]))
		case k > 0 && !(h[k] > h[k-1]):
			return k, fmt.Sprintf("field strength must be strictly increasing: %s is not above the previous point's %s", u.h.Format(h[k]), u.h.Format(h[k-1]))
		case k > 0 && !(b[k] > b[k-1]):
			return k, fmt.Sprintf("flux density must be strictly increasing: %s is not above the previous point's %s", u.b.Format(b[k]), u.b.Format(b[k-1]))
		}
	}
	if h[n-1] < minBHFieldTop || b[n-1] < minBHFluxDensityTop {
		return n - 1, fmt.Sprintf("the curve ends at %s, %s: a steel curve reaches at least %g A/m and %g T; check the units (%s, %s)",
			u.h.WithSI(h[n-1], "A/m"), u.b.WithSI(b[n-1], "T"), minBHFieldTop, minBHFluxDensityTop, u.h.Name, u.b.Name)
	}
	return checkBHSpacing(h, b, u)
}

// Points returns copies of the table's field strengths (A/m) and flux
// densities (T).
func (t *BHTable) Points() (h, b []float64) {
	return append([]float64(nil), t.h...), append([]float64(nil), t.b...)
}

// H returns the field strength (A/m) at flux density b (T).
func (t *BHTable) H(b float64) float64 {
	ab := math.Abs(b)
	n := len(t.b)
	if ab >= t.b[n-1] {
		return math.Copysign(t.h[n-1]+(ab-t.b[n-1])/Mu0, b)
	}
	k := searchNodes(t.b, ab)
	s := ab - t.b[k]
	p := t.c[4*k:][:4]
	return math.Copysign(p[0]+s*(p[1]+s*(p[2]+s*p[3])), b)
}

// B returns the flux density (T) at field strength h (A/m): the inverse of
// H, solved on the interval's cubic.
func (t *BHTable) B(h float64) float64 {
	ah := math.Abs(h)
	n := len(t.h)
	if ah >= t.h[n-1] {
		return math.Copysign(t.b[n-1]+Mu0*(ah-t.h[n-1]), h)
	}
	k := searchNodes(t.h, ah)
	p := t.c[4*k:][:4]
	s := solveCubic(p[0], p[1], p[2], p[3], ah, t.b[k+1]-t.b[k], t.b[k])
	return math.Copysign(t.b[k]+s, h)
}

// searchNodes returns the largest k <= len(v)−2 with v[k] <= x, for
// ascending v and v[0] <= x.
func searchNodes(v []float64, x float64) int {
	lo, hi := 0, len(v)-2
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if v[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// checkBHSpacing returns the first point closer than minBHSpacing of the
// curve's span in H or B to the previous one (such points give slopes that
// overflow between them), as checkBH does.
func checkBHSpacing(h, b []float64, u bhUnits) (int, string) {
	n := len(h)
	for k := 1; k < n; k++ {
		switch {
		case h[k]-h[k-1] < minBHSpacing*h[n-1]:
			return k, fmt.Sprintf("field strength %s is too close to the previous point's %s (less than %g of the curve's span)", u.h.Format(h[k]), u.h.Format(h[k-1]), minBHSpacing)
		case b[k]-b[k-1] < minBHSpacing*b[n-1]:
			return k, fmt.Sprintf("flux density %s is too close to the previous point's %s (less than %g of the curve's span)", u.b.Format(b[k]), u.b.Format(b[k-1]), minBHSpacing)
		}
	}
	return -1, ""
}

// ReadBHCSV reads a B–H curve from CSV and builds a BHTable. Lines starting
// with '#' are comments and a UTF-8 byte-order mark is skipped. Each row
// holds H then B; a first row whose first cell is not a number is taken as
// a header and skipped. Values are in the file's units h (of A/m, e.g.
// {"kA/m", 1000}) and b (of T, e.g. {"G", 1e-4}), each cell multiplied by
// its unit's Scale. The first point must be (0, 0); at most MaxBHPoints
// are read. Errors are *InputError naming the file, line and column (in
// characters) and the cell, with values in the file's units as written:
// "magnet: name:LINE:COLUMN: ...".
func ReadBHCSV(r io.Reader, name string, h, b Unit) (*BHTable, error) {
	if err := checkScales(name, []string{"H", "B"}, h, b); err != nil {
		return nil, err
	}
	in := newCSVInput(r, name)
	var (
		hs, bs []float64
		points []recordPos
		first  = true
	)
	for {
		rec, line, err := in.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if first {
			first = false
			if _, err := strconv.ParseFloat(strings.TrimSpace(rec[0]), 64); err != nil && strings.TrimSpace(rec[0]) != "" {
				continue // header
			}
		}
		if len(rec) != 2 {
			return nil, inputErr(name, line, 1, "row has %d cells, want 2 (H, B)", len(rec))
		}
		if len(hs) == MaxBHPoints {
			return nil, inputErr(name, line, 1, "more than %d points: a B–H curve may have at most %d", MaxBHPoints, MaxBHPoints)
		}
		p := in.pos(line, 2)
		hv, err := in.value(rec, p, 0, h, "H (cell 1), in "+h.Name)
		if err != nil {
			return nil, err
		}
		bv, err := in.value(rec, p, 1, b, "B (cell 2), in "+b.Name)
		if err != nil {
			return nil, err
		}
		hs, bs, points = append(hs, hv), append(bs, bv), append(points, p)
	}
	t, idx, msg := newBHTable(hs, bs, bhUnits{h: h, b: b})
	if msg != "" {
		if idx >= 0 && idx < len(points) {
			cell := 0 // the H cell, or B for a flux density's error
			if strings.HasPrefix(msg, "flux density") {
				cell = 1
			}
			return nil, points[idx].errAt(name, cell, msg)
		}
		return nil, inputErr(name, 0, 0, "%s", msg)
	}
	return t, nil
}
