package coilkick

import (
	"bytes"
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"
	"unicode"

	"coilkick/magnet"
)

// curveErrRE is the shape of every force-curve reader error: the file, a
// line number (or the empty file), then the message.
var curveErrRE = regexp.MustCompile(`^fuzz\.csv(:[1-9][0-9]*)?: \S`)

// FuzzReadForceCurves feeds arbitrary bytes to the force-curve reader and
// what it accepts to NewCurveModel over a 0.05–1.05 mm stroke. Neither may
// panic or hang; a reader error names the file (and the line) with no raw
// control character; an accepted model gives finite flux linkage,
// co-energy, force and current at every gap and current tried, with λ
// rising with the current and Current inverting FluxLinkage.
func FuzzReadForceCurves(f *testing.F) {
	f.Add([]byte("stroke (mm), current (A), force (N)\n0, 0.2, 8\n0.5, 0.2, 3\n1, 0.2, 1\n0, 0.3, 18\n0.5, 0.3, 7\n1, 0.3, 2.5\n"))
	f.Add([]byte("gap (mm), voltage (V), force (N)\n1.05, 24, 1\n0.3, 24, 9\n0.05, 24, 60\n"))
	f.Add([]byte("\xef\xbb\xbfstroke (mm), current (mA), force (mN)\n# comment\n0, 100, 5000\n1, 100, 200\n"))
	f.Add([]byte("stroke, current, force\n0, 1, 1\n"))
	const xMin, xMax = 0.05e-3, 1.05e-3
	f.Fuzz(func(t *testing.T, data []byte) {
		cf, err := readForceCurves(bytes.NewReader(data), "fuzz.csv", xMin)
		if err != nil {
			msg := err.Error()
			if !curveErrRE.MatchString(msg) {
				t.Fatalf("error without file and line: %q", msg)
			}
			if strings.IndexFunc(msg, unicode.IsControl) >= 0 {
				t.Fatalf("raw control character in the error %q", msg)
			}
			return
		}
		if cf.voltage {
			for k := range cf.curves {
				cf.curves[k].Current = cf.volts[k] / 100 // a 100 ohm coil
			}
		}
		m, err := magnet.NewCurveModel(cf.curves, 0.1, xMin, xMax)
		if err != nil {
			var ce *magnet.CurveError
			if errors.As(err, &ce) && cf.curveError("fuzz.csv", err) == "" {
				t.Fatalf("no message for %v", err)
			}
			return
		}
		for _, x := range []float64{0, xMin, 0.3e-3, 0.77e-3, xMax, 2e-3} {
			prev := 0.0
			for _, i := range []float64{1e-6, 0.01, 0.1, 0.25, 1, 10} {
				l := m.FluxLinkage(i, x)
				vals := []float64{l, m.CoEnergy(i, x), m.Force(i, x), m.Current(l, x)}
				for _, v := range vals {
					if math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("%v at (%g A, %g m): %v not finite", m, i, x, vals)
					}
				}
				if !(l > prev) {
					t.Fatalf("%v: λ(%g A, %g m) = %g does not rise from %g", m, i, x, l, prev)
				}
				if got := m.Current(l, x); math.Abs(got-i) > 1e-6*i {
					t.Fatalf("%v: Current(λ(%g)) = %g at %g m", m, i, got, x)
				}
				prev = l
			}
			// The gap piece at x, also a little past its ends (an
			// integrator's overshooting stage), stays finite.
			p := m.GapPieceAt(x, 1)
			lo, hi := p.Span()
			for _, xp := range []float64{x, math.Max(lo, x-1e-4) - 1e-6, math.Min(hi, x+1e-4) + 1e-6} {
				i, f := p.CurrentForce(m.FluxLinkage(0.25, x), xp)
				if math.IsNaN(i) || math.IsInf(i, 0) || math.IsNaN(f) || math.IsInf(f, 0) {
					t.Fatalf("%v: the piece %g..%g at %g m gives %g A, %g N", m, lo, hi, xp, i, f)
				}
			}
		}
	})
}
