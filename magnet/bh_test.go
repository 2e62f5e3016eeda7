package magnet

import (
	"errors"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

func TestFrohlichKennellyRoundTrip(t *testing.T) {
	t.Parallel()
	// source: H(B) is the exact root of the quadratic obtained from the
	// Frohlich–Kennelly law B = µ0·H + Js·H/(Hk + |H|) (bh.go), so B(H(B))
	// must return B to rounding.
	for _, s := range []FrohlichKennelly{LowCarbonSteel(), {Js: 1.6, MuRInitial: 300}, {Js: 1e9, MuRInitial: 1e7}} {
		for _, b := range []float64{0, 1e-9, 1e-3, 0.3, 1, 1.9, 2, 2.1, 3, 10, 1e3} {
			for _, sg := range []float64{1, -1} {
				h := s.H(sg * b)
				if got := s.B(h); math.Abs(got-sg*b) > 1e-13*math.Max(b, 1e-300) {
					t.Errorf("%+v: B(H(%g T)) = %g T (H = %g A/m)", s, sg*b, got, h)
				}
				if sg*h < 0 {
					t.Errorf("%+v: H(%g T) = %g A/m has the wrong sign", s, sg*b, h)
				}
			}
		}
	}
}

func TestFrohlichKennellyAgainstBisection(t *testing.T) {
	t.Parallel()
	// source: the Frohlich–Kennelly law B(H) itself, inverted here by plain
	// bisection (independent of the closed-form quadratic root in H).
	s := LowCarbonSteel()
	for _, b := range []float64{0.01, 0.5, 1.2, 1.8, 2.2, 4} {
		lo, hi := 0.0, 1e9
		for range 200 {
			mid := 0.5 * (lo + hi)
			if s.B(mid) < b {
				lo = mid
			} else {
				hi = mid
			}
		}
		if got, want := s.H(b), 0.5*(lo+hi); relErr(got, want) > 1e-12 {
			t.Errorf("H(%g T) = %g A/m, bisection %g A/m", b, got, want)
		}
	}
}

func TestFrohlichKennellyPolarizationBelowJs(t *testing.T) {
	t.Parallel()
	// source: Frohlich–Kennelly form J = Js·H/(Hk + |H|) (Frohlich 1881,
	// Kennelly 1891): |J| < Js for every finite H, J increasing.
	s := LowCarbonSteel()
	prev := -math.MaxFloat64
	for _, h := range geomspace(1e-3, 1e12, 200) {
		j := s.Polarization(h)
		if !(j < s.Js) || !(j > prev) {
			t.Errorf("J(%g A/m) = %.17g T, want increasing and below Js = %g T", h, j, s.Js)
		}
		if b := s.B(h); !(b-Mu0*h < s.Js) {
			t.Errorf("B(%g) − µ0·H = %g T, want < Js", h, b-Mu0*h)
		}
		prev = j
	}
}

func TestFrohlichKennellySlopes(t *testing.T) {
	t.Parallel()
	s := LowCarbonSteel()
	// source: definition of the initial relative permeability in the
	// Frohlich–Kennelly law: dB/dH at H = 0 is µ0 + Js/Hk = µ0·µr0.
	h := 1e-7 * s.Hk()
	if got, want := (s.B(h)-s.B(-h))/(2*h), Mu0*s.MuRInitial; relErr(got, want) > 1e-6 {
		t.Errorf("initial slope %g H/m, want µ0·µr0 = %g H/m", got, want)
	}
	// source: same law, dB/dH = µ0 + Js·Hk/(Hk + H)² → µ0 as H → ∞
	// (full saturation).
	h1, h2 := 1e9, 1.001e9
	if got := (s.B(h2) - s.B(h1)) / (h2 - h1); relErr(got, Mu0) > 1e-5 {
		t.Errorf("high-field slope %g H/m, want µ0 = %g H/m", got, Mu0)
	}
	// Knee: J(Hk) = Js/2 by the form of the law.
	if got := s.Polarization(s.Hk()); relErr(got, s.Js/2) > 1e-15 {
		t.Errorf("J(Hk) = %g T, want Js/2 = %g T", got, s.Js/2)
	}
}

func TestFrohlichKennellyValidate(t *testing.T) {
	t.Parallel()
	for _, s := range []FrohlichKennelly{{0, 1000}, {-1, 1000}, {math.NaN(), 1000}, {math.Inf(1), 1000}, {2, 1}, {2, 0.5}, {2, math.NaN()}, {2, math.Inf(1)}} {
		if _, err := NewFrohlichKennelly(s.Js, s.MuRInitial); err == nil || !strings.HasPrefix(err.Error(), "magnet: ") {
			t.Errorf("NewFrohlichKennelly(%g, %g): err = %v, want a magnet: error", s.Js, s.MuRInitial, err)
		}
	}
	if err := LowCarbonSteel().Validate(); err != nil {
		t.Errorf("LowCarbonSteel: %v", err)
	}
}

// Invented B–H points shaped like a low-carbon steel curve (from memory, not
// measured): H in A/m, B in T.
var (
	testBHH = []float64{0, 100, 200, 500, 1000, 5000, 20000, 100000}
	testBHB = []float64{0, 0.5, 0.9, 1.3, 1.5, 1.8, 2.0, 2.15}
)

func TestBHTableRoundTripAndNodes(t *testing.T) {
	t.Parallel()
	tb, err := NewBHTable(testBHH, testBHB)
	if err != nil {
		t.Fatal(err)
	}
	// source: the data themselves — an interpolant passes through its nodes.
	for k := range testBHH {
		if got := tb.H(testBHB[k]); relErr(got, testBHH[k]) > 1e-14 {
			t.Errorf("H(%g T) = %g A/m, want node %g A/m", testBHB[k], got, testBHH[k])
		}
		if got := tb.B(testBHH[k]); relErr(got, testBHB[k]) > 1e-14 {
			t.Errorf("B(%g A/m) = %g T, want node %g T", testBHH[k], got, testBHB[k])
		}
	}
	// source: B is defined as the inverse of H (bh.go), so B(H(b)) = b.
	for _, b := range append(linspace(-2.5, 2.5, 501), 3, 10, -10) {
		if got := tb.B(tb.H(b)); math.Abs(got-b) > 1e-13*math.Max(math.Abs(b), 1e-3) {
			t.Errorf("B(H(%g T)) = %g T", b, got)
		}
	}
}

func TestBHTableMonotoneAndOdd(t *testing.T) {
	t.Parallel()
	tb, err := NewBHTable(testBHH, testBHB)
	if err != nil {
		t.Fatal(err)
	}
	// source: Fritsch & Carlson (SIAM J. Numer. Anal. 17(2), 1980): their
	// slope limits make the cubic interpolant of monotone data monotone.
	prev := -1.0
	for _, b := range linspace(0, 2.3, 4001) {
		h := tb.H(b)
		if !(h > prev) && b > 0 {
			t.Fatalf("H not increasing at B = %g T: %g A/m after %g A/m", b, h, prev)
		}
		if got := tb.H(-b); got != -h {
			t.Errorf("H(%g T) = %g, want −H(%g T) = %g", -b, got, b, -h)
		}
		prev = h
	}
}

func TestBHTableExtrapolationSlope(t *testing.T) {
	t.Parallel()
	tb, err := NewBHTable(testBHH, testBHB)
	if err != nil {
		t.Fatal(err)
	}
	// source: full saturation above the data, dB/dH = µ0 (the polarization
	// cannot exceed its saturation value; documented extrapolation).
	n := len(testBHH)
	for _, h := range []float64{testBHH[n-1] * 1.0001, 1e6, 1e8} {
		dh := 1e-3 * h
		if got := (tb.B(h+dh) - tb.B(h)) / dh; relErr(got, Mu0) > 1e-6 {
			t.Errorf("dB/dH at %g A/m = %g H/m, want µ0 = %g", h, got, Mu0)
		}
	}
	if got, want := tb.H(3), testBHH[n-1]+(3-testBHB[n-1])/Mu0; relErr(got, want) > 1e-14 {
		t.Errorf("H(3 T) = %g A/m, want %g A/m", got, want)
	}
}

func TestBHTableBadInput(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		h, b []float64
		want string
	}{
		{"lengths", []float64{0, 1, 2}, []float64{0, 1}, "one flux density per field strength"},
		{"one point", []float64{0}, []float64{0}, "at least 2 points"},
		{"no origin", []float64{10, 100}, []float64{0.1, 1}, "point 1: the curve must start"},
		{"remanence", []float64{0, 100}, []float64{0.1, 1}, "point 1: the curve must start"},
		{"H not increasing", []float64{0, 100, 100}, []float64{0, 1, 1.2}, "point 3: field strength must be strictly increasing"},
		{"B not increasing", []float64{0, 100, 200}, []float64{0, 1, 0.9}, "point 3: flux density must be strictly increasing"},
		{"NaN", []float64{0, math.NaN()}, []float64{0, 1}, "point 2: field strength is not finite"},
		{"Inf B", []float64{0, 1}, []float64{0, math.Inf(1)}, "point 2: flux density is not finite"},
	}
	for _, c := range cases {
		_, err := NewBHTable(c.h, c.b)
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: B–H table: ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err = %v, want %q", c.name, err, c.want)
		}
	}
}

func TestReadBHCSV(t *testing.T) {
	t.Parallel()
	f, err := os.Open("../testdata/magnet/steel_bh.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	tb, err := ReadBHCSV(f, "steel_bh.csv", Unit{"kA/m", 1000}, Unit{"T", 1})
	if err != nil {
		t.Fatal(err)
	}
	// source: the fixture lists the testBHH/testBHB points in kA/m and T.
	h, b := tb.Points()
	for k := range testBHH {
		if relErr(h[k], testBHH[k]) > 1e-15 || b[k] != testBHB[k] {
			t.Errorf("point %d = (%g, %g), want (%g, %g)", k+1, h[k], b[k], testBHH[k], testBHB[k])
		}
	}
	bad := []struct {
		text, want string
	}{
		{"H,B\n0,0\n1,x\n", `bad.csv:3:3: B (cell 2), in T: not a finite number: "x"`},
		{"H,B\n0,0\nx,1\n", `bad.csv:3:1: H (cell 1), in kA/m: not a finite number: "x"`},
		{"# c\n0,0\n1\n", "bad.csv:3:1: row has 1 cells"},
		{"0,0\n0.1,1\n0.05,1.2\n", "bad.csv:3:1: field strength must be strictly increasing: 0.05 kA/m is not above the previous point's 0.1 kA/m"},
		{"0,0\n0.1,1\n0.2, 0.9\n", "bad.csv:3:6: flux density must be strictly increasing: 0.9 T is not above the previous point's 1 T"},
		{"0.1,0\n0.2,1\n", "bad.csv:1:1: the curve must start"},
		{"H,B\n", "bad.csv: need at least 2 points"},
		{"0,0\n\"1,2\n", "bad.csv:2:"},
		{"\ufeff# steel, kA/m and T\n0,0\n0.1,1\n0.05,1.2\n", "bad.csv:4:1: field strength must be strictly increasing"},
		{"0,0\n1e6,2\n", "bad.csv:2:1: field strength 1e+06 kA/m (1e+09 A/m) is above 1e+08 A/m"},
		{"0,0\n1,200\n", "bad.csv:2:3: flux density 200 T is above 100 T"},
		{"0,0\n1,1e-200\n", "bad.csv:2:1: the curve ends at 1 kA/m (1000 A/m), 1e-200 T"},
		{"0,0\n1,1\n1.0000000000001,2\n", "bad.csv:3:1: field strength 1.0000000000001 kA/m is too close to the previous point's 1 kA/m"},
		{"0,0\n" + strings.Repeat("1,1\n", MaxBHPoints), fmt.Sprintf("bad.csv:%d:1: more than %d points", MaxBHPoints+1, MaxBHPoints)},
	}
	for _, c := range bad {
		_, err := ReadBHCSV(strings.NewReader(c.text), "bad.csv", Unit{"kA/m", 1000}, Unit{"T", 1})
		var ie *InputError
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: "+c.want) || !errors.As(err, &ie) || ie.File != "bad.csv" {
			t.Errorf("ReadBHCSV(%q): err = %v, want %q", c.text, err, c.want)
		}
	}
	if _, err := ReadBHCSV(strings.NewReader("0,0\n1,1\n"), "s.csv", Unit{"kA/m", 0}, Unit{"T", 1}); err == nil {
		t.Error("zero H scale: want an error")
	}
}
