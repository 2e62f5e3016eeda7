package magnet

import (
	"math"
	"strings"
	"testing"
)

const (
	closedFormTol = 1e-12 // relative: same formula, rounding only
	recoverTol    = 1e-9  // relative: solved from two inductances
	numDerivTol   = 1e-7  // relative: central difference, step 1e-6 of the gap
	roundTripTol  = 1e-14 // relative: λ/L·L
)

func TestNewGapLawErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name                     string
		lc, lo, xMin, xMax, n, a float64 // n = 0: NewGapLaw
		want                     string
	}{
		{"zero closed", 0, 0.05, 1e-4, 3e-3, 0, 0, "closed inductance must be positive"},
		{"negative open", 0.3, -0.05, 1e-4, 3e-3, 0, 0, "open inductance must be positive"},
		{"NaN open", 0.3, math.NaN(), 1e-4, 3e-3, 0, 0, "open inductance must be positive"},
		{"closed equals open", 0.3, 0.3, 1e-4, 3e-3, 0, 0, "closed inductance must exceed open inductance"},
		{"closed below open", 0.1, 0.3, 1e-4, 3e-3, 0, 0, "closed inductance must exceed open inductance"},
		{"negative seated gap", 0.3, 0.05, -1e-4, 3e-3, 0, 0, "seated gap"},
		{"rest gap not above seated", 0.3, 0.05, 1e-3, 1e-3, 0, 0, "rest gap"},
		{"ratio beyond pure air gap", 1.0, 0.01, 1e-4, 3e-3, 0, 0, "negative iron reluctance"},
		{"zero turns", 0.3, 0.05, 1e-4, 3e-3, -1, 50e-6, "turns"},
		{"zero area", 0.3, 0.05, 1e-4, 3e-3, 1000, 0, "pole area"},
		{"negative leakage", circuitInductance(-1e-3, refTurns, refIronRel, refArea, refXMin),
			circuitInductance(-1e-3, refTurns, refIronRel, refArea, refXMax), refXMin, refXMax, refTurns, refArea, "negative leakage"},
		{"negative iron reluctance", circuitInductance(refLeak, refTurns, -0.5e6, refArea, refXMin),
			circuitInductance(refLeak, refTurns, -0.5e6, refArea, refXMax), refXMin, refXMax, refTurns, refArea, "negative iron reluctance"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			var err error
			if tt.n == 0 {
				_, err = NewGapLaw(tt.lc, tt.lo, tt.xMin, tt.xMax)
			} else {
				_, err = NewGapLawTurns(tt.lc, tt.lo, tt.xMin, tt.xMax, tt.n, tt.a)
			}
			if err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error = %v, want a \"magnet: \" error containing %q", err, tt.want)
			}
		})
	}
}

func TestNewGapLawTurnsRecoversCircuit(t *testing.T) {
	t.Parallel()
	// source: round trip of the reluctance model L = L_leak + N²/(ℜ_iron + x/(µ0 A))
	// (magnetic circuits, e.g. Hayt, Engineering Electromagnetics): build the two
	// inductances from chosen N, A, L_leak, ℜ_iron and solve back.
	tests := []struct {
		name          string
		leak, ironRel float64
	}{
		{"reference", refLeak, refIronRel},
		{"no leakage", 0, refIronRel},
		{"no iron", refLeak, 0},
		{"large leakage", 0.05, 5e5},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			lc := circuitInductance(tt.leak, refTurns, tt.ironRel, refArea, refXMin)
			lo := circuitInductance(tt.leak, refTurns, tt.ironRel, refArea, refXMax)
			g, err := NewGapLawTurns(lc, lo, refXMin, refXMax, refTurns, refArea)
			if err != nil {
				t.Fatalf("NewGapLawTurns: %v", err)
			}
			scale := lc // absolute tolerance scale for quantities that may be 0
			if got := g.Leakage(); math.Abs(got-tt.leak) > recoverTol*scale {
				t.Errorf("%v.Leakage() = %g, want %g", g, got, tt.leak)
			}
			r, ok := g.IronReluctance()
			if rScale := refTurns * refTurns / lo; !ok || math.Abs(r-tt.ironRel) > recoverTol*rScale {
				t.Errorf("%v.IronReluctance() = %g, %v, want %g, true", g, r, ok, tt.ironRel)
			}
			for _, x := range linspace(refXMin, refXMax, 7) {
				want := circuitInductance(tt.leak, refTurns, tt.ironRel, refArea, x)
				if got := g.Inductance(x); relErr(got, want) > recoverTol {
					t.Errorf("%v.Inductance(%g) = %g, want %g", g, x, got, want)
				}
			}
		})
	}
}

func TestGapLawForce(t *testing.T) {
	t.Parallel()
	models := []*GapLaw{refGapLaw(t), mustGapLaw(t)}
	for _, g := range models {
		a, b := g.Coefficients()
		for _, i := range []float64{0.01, 0.5, refTestAmps, -1.7} {
			for _, x := range linspace(refXMin, refXMax, 9)[1:8] {
				got := g.Force(i, x)
				// source: co-energy force F = −∂W'/∂x at constant current, any
				// electromechanics textbook (e.g. Fitzgerald & Kingsley, Electric
				// Machinery, ch. 3); central difference of the model's CoEnergy.
				h := 1e-6 * x
				num := -(g.CoEnergy(i, x+h) - g.CoEnergy(i, x-h)) / (2 * h)
				if relErr(got, num) > numDerivTol {
					t.Errorf("%v.Force(%g, %g) = %g, want %g (−dW'/dx numerically)", g, i, x, got, num)
				}
				// source: same principle with the closed form of the gap law,
				// F = ½ i² |dL/dx|, dL/dx = −b/(a + b x)² (derivative of
				// L_leak + 1/(a + b x)).
				d := a + b*x
				want := 0.5 * i * i * b / (d * d)
				if relErr(got, want) > closedFormTol {
					t.Errorf("%v.Force(%g, %g) = %g, want %g (½ i² |dL/dx|)", g, i, x, got, want)
				}
				if s := g.InductanceSlope(x); relErr(s, -b/(d*d)) > closedFormTol {
					t.Errorf("%v.InductanceSlope(%g) = %g, want %g", g, x, s, -b/(d*d))
				}
			}
		}
	}
}

func TestGapLawMaxwellPull(t *testing.T) {
	t.Parallel()
	// No leakage, no iron reluctance: L = µ0 A N²/x.
	lc := Mu0 * refArea * refTurns * refTurns / refXMin
	lo := Mu0 * refArea * refTurns * refTurns / refXMax
	g, err := NewGapLawTurns(lc, lo, refXMin, refXMax, refTurns, refArea)
	if err != nil {
		t.Fatalf("NewGapLawTurns: %v", err)
	}
	const maxwellTol = 1e-9 // relative: exact in this limit, rounding in the solve
	for _, i := range []float64{0.05, 0.4, 1.2} {
		for _, x := range []float64{refXMin, 0.5e-3, 1e-3, refXMax} {
			// source: Maxwell stress pull on a pole face, F = B² A/(2 µ0), with the
			// gap flux density B = µ0 N i / x of an unsaturated small gap (any
			// electromagnetics text, e.g. Hayt, Engineering Electromagnetics).
			bGap := Mu0 * refTurns * i / x
			want := bGap * bGap * refArea / (2 * Mu0)
			if got := g.Force(i, x); relErr(got, want) > maxwellTol {
				t.Errorf("%v.Force(%g, %g) = %g, want %g", g, i, x, got, want)
			}
		}
	}
}

func TestGapLawRoundTripAndPartials(t *testing.T) {
	t.Parallel()
	g := refGapLaw(t)
	for _, i := range []float64{-2, -1e-3, 0, 1e-6, 0.7, refTestAmps, 50} {
		for _, x := range linspace(refXMin, refXMax, 6) {
			lam := g.FluxLinkage(i, x)
			// source: Current is defined as the inverse of FluxLinkage (λ = L i).
			if got := g.Current(lam, x); math.Abs(got-i) > roundTripTol*math.Abs(i) {
				t.Errorf("%v.Current(%g, %g) = %g, want %g", g, lam, x, got, i)
			}
			checkPartials(t, g, lam, x)
		}
	}
}

// checkPartials compares Partials with central differences of Current
// (source: definition of the partial derivatives; implicit-function theorem
// for the inverse).
func checkPartials(t *testing.T, m Model, lam, x float64) {
	t.Helper()
	const partialTol = 1e-6 // relative to the scale of each partial
	dl, dx := m.Partials(lam, x)
	hl := 1e-8 * math.Max(math.Abs(lam), 1e-6) // small: λ(i) is only C¹ at the knots
	numL := (m.Current(lam+hl, x) - m.Current(lam-hl, x)) / (2 * hl)
	if relErr(dl, numL) > partialTol {
		t.Errorf("%v.Partials(%g, %g) ∂i/∂λ = %g, want %g", m, lam, x, dl, numL)
	}
	lo, hi := m.GapRange()
	hx := 1e-7 * (hi - lo)
	if x-hx < lo || x+hx > hi {
		return
	}
	numX := (m.Current(lam, x+hx) - m.Current(lam, x-hx)) / (2 * hx)
	scale := math.Abs(m.Current(lam, x)) / (hi - lo) // A/m
	if math.Abs(dx-numX) > partialTol*math.Max(scale, math.Abs(numX)) {
		t.Errorf("%v.Partials(%g, %g) ∂i/∂x = %g, want %g", m, lam, x, dx, numX)
	}
}

// TestGapLawPieceContinues: the gap law's piece (GapPieceAt) is the law
// bit for bit inside GapRange and, beyond it, the law's own formula
// L(x) = L_leak + 1/(a + b·x) continued instead of clamped, as smooth as
// the law: its force is still −∂W'/∂x and its flux ∂W'/∂i (co-energy,
// Woodson & Melcher, Electromechanical Dynamics, 3.1), and Current still
// inverts FluxLinkage. With and without a permanent magnet.
func TestGapLawPieceContinues(t *testing.T) {
	t.Parallel()
	plain := refGapLaw(t)
	pm, err := plain.WithMagnet(-60)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range []*GapLaw{plain, pm} {
		p := g.GapPieceAt(0.5e-3, 1)
		if lo, hi := p.Span(); !math.IsInf(lo, -1) || !math.IsInf(hi, 1) {
			t.Errorf("%v: span %g..%g, want the whole line", g, lo, hi)
		}
		for _, x := range []float64{refXMin, 0.5e-3, refXMax} {
			for _, i := range []float64{0.01, 0.3, -0.2} {
				lam := g.FluxLinkage(i, x)
				d1, d2 := g.Partials(lam, x)
				p1, p2 := p.Partials(lam, x)
				if p.FluxLinkage(i, x) != lam || p.Current(lam, x) != g.Current(lam, x) || p.CoEnergy(i, x) != g.CoEnergy(i, x) ||
					p.Force(i, x) != g.Force(i, x) || p1 != d1 || p2 != d2 {
					t.Errorf("%v: the piece differs from the law at %g m, %g A", g, x, i)
				}
			}
		}
		a, b := g.Coefficients()
		for _, x := range []float64{0.05e-3, 3.3e-3, 4e-3} {
			const i = 0.3
			if got, want := p.FluxLinkage(i, x)-p.FluxLinkage(0, x), (g.Leakage()+1/(a+b*x))*i; math.Abs(got-want) > 1e-12*want {
				t.Errorf("%v: flux of 0.3 A at %g m beyond the range %g, want L(x)·i = %g", g, x, got, want)
			}
			const h = 1e-9
			if got, want := p.Force(i, x), -(p.CoEnergy(i, x+h)-p.CoEnergy(i, x-h))/(2*h); math.Abs(got-want) > 1e-6*math.Abs(want) {
				t.Errorf("%v: force %g at %g m, −∂W'/∂x %g", g, got, x, want)
			}
			if got, want := p.FluxLinkage(i, x), (p.CoEnergy(i+1e-6, x)-p.CoEnergy(i-1e-6, x))/2e-6; math.Abs(got-want) > 1e-6*math.Abs(want) {
				t.Errorf("%v: flux %g at %g m, ∂W'/∂i %g", g, got, x, want)
			}
			if got := p.Current(p.FluxLinkage(i, x), x); math.Abs(got-i) > 1e-12 {
				t.Errorf("%v: Current(FluxLinkage(0.3 A)) = %g at %g m", g, got, x)
			}
			if ci, cf := p.CurrentForce(p.FluxLinkage(i, x), x); ci != p.Current(p.FluxLinkage(i, x), x) || cf != p.Force(ci, x) {
				t.Errorf("%v: CurrentForce differs from Current and Force at %g m", g, x)
			}
		}
		if got := g.FluxLinkage(0.3, 4e-3); got != g.FluxLinkage(0.3, refXMax) {
			t.Errorf("%v: the law itself is no longer clamped beyond its range", g)
		}
	}
}
