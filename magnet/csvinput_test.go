package magnet

import (
	"errors"
	"math"
	"os"
	"strings"
	"testing"
	"time"
	"unicode/utf8"
)

// checkInputError fails unless err is a well-formed *InputError of the
// named file: one line, a message, positions not negative, no raw control
// character (the message quotes cells with %q).
func checkInputError(t *testing.T, err error, name string) {
	t.Helper()
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Fatalf("error %v (%T) is not an *InputError", err, err)
	}
	msg := err.Error()
	if ie.File != name || ie.Line < 0 || ie.Column < 0 || ie.Msg == "" || (ie.Column > 0 && ie.Line == 0) {
		t.Fatalf("malformed error %+v", ie)
	}
	if !strings.HasPrefix(msg, "magnet: "+name) || strings.Contains(msg, "\n") || !utf8.ValidString(msg) {
		t.Fatalf("malformed message %q", msg)
	}
	for _, r := range msg {
		if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) {
			t.Fatalf("message holds the raw control character %U: %q", r, msg)
		}
	}
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// within runs f and fails the test when it takes longer than a few
// seconds: a reader must not hang on any input (20 s: far above the 0.7 s of
// the largest table allowed, so a loaded machine does not fail it).
func within(t *testing.T, f func()) {
	t.Helper()
	done := make(chan struct{})
	go func() {
		defer close(done)
		f()
	}()
	select {
	case <-done:
	case <-time.After(20 * time.Second):
		t.Fatalf("still running after 20 s")
	}
}

// checkTable fails unless the model gives finite figures across and beyond
// its grid.
func checkTable(t *testing.T, tb *Table) {
	t.Helper()
	lo, hi := tb.GapRange()
	if !finite(lo) || !finite(hi) || !(lo < hi) {
		t.Fatalf("gap range %g..%g", lo, hi)
	}
	top := tb.cur[len(tb.cur)-1]
	for _, x := range []float64{lo, (lo + hi) / 2, hi, 2 * hi} {
		for _, i := range []float64{0, top / 3, top, 2 * top, -top} {
			lam := tb.FluxLinkage(i, x)
			w, f, back := tb.CoEnergy(i, x), tb.Force(i, x), tb.Current(lam, x)
			dl, dx := tb.Partials(lam, x)
			if !finite(lam) || !finite(w) || !finite(f) || !finite(back) || !finite(dl) || !finite(dx) {
				t.Fatalf("at %g A, %g m: λ %g, W' %g, F %g, i(λ) %g, ∂i/∂λ %g, ∂i/∂x %g", i, x, lam, w, f, back, dl, dx)
			}
		}
	}
}

// FuzzReadTableCSV: the flux-table reader never panics; it returns a table
// or an *InputError naming the file; a table read gives finite figures.
// Units as a scenario would give them: A, mm, mWb.
func FuzzReadTableCSV(f *testing.F) {
	small, err := os.ReadFile("../testdata/magnet/small.csv")
	if err != nil {
		f.Fatal(err)
	}
	f.Add(small)
	f.Add(append([]byte("\ufeff"), small...))
	for _, s := range []string{
		"i,1,2\n0,0,0\n1,0.5,0.4\n",
		"i,1,2\n0,0,0\n1,0.5,abc\n",
		"i,1,2\n0,0,0\n1,\"0.5,0.4\n",
		"i,2,1\n0,0,0\n1,0.5,0.6\n",
		"# c\ni,0.1,0.2,0.3\n0,0,0,0\n0.5,10,8,6\n1,18,15,12\n",
		"i,1e-300,1e300\n0,0,0\n1e-300,1e300,1e-300\n1e300,1.5e300,1e-299\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		var tb *Table
		var err error
		within(t, func() {
			tb, err = ReadTableCSV(strings.NewReader(string(data)), "fuzz.csv", 1, 1e-3, 1e-3)
			if tb != nil {
				checkTable(t, tb)
			}
		})
		if (tb == nil) == (err == nil) {
			t.Fatalf("table %v and error %v", tb, err)
		}
		if err != nil {
			checkInputError(t, err, "fuzz.csv")
		}
	})
}

// FuzzReadBHCSV: the B–H reader never panics; it returns a curve or an
// *InputError naming the file; a curve read gives finite, increasing B(H)
// and H(B). Units: kA/m and T.
func FuzzReadBHCSV(f *testing.F) {
	steel, err := os.ReadFile("../testdata/magnet/steel_bh.csv")
	if err != nil {
		f.Fatal(err)
	}
	f.Add(steel)
	f.Add(append([]byte("\ufeff"), steel...))
	for _, s := range []string{
		"H,B\n0,0\n1,x\n", "0,0\n0.1,1\n0.05,1.2\n", "0.1,0\n0.2,1\n", "H,B\n", "0,0\n\"1,2\n",
		"0,0\n1e-300,1e-300\n1e300,3\n", "0,0\n0.1,1e-320\n0.2,2\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		var bh *BHTable
		var err error
		within(t, func() { bh, err = ReadBHCSV(strings.NewReader(string(data)), "fuzz.csv", 1000, 1) })
		if (bh == nil) == (err == nil) {
			t.Fatalf("curve %v and error %v", bh, err)
		}
		if err != nil {
			checkInputError(t, err, "fuzz.csv")
			return
		}
		hs, bs := bh.Points()
		hTop, bTop := hs[len(hs)-1], bs[len(bs)-1]
		prevB := math.Inf(-1)
		for _, h := range []float64{0, hTop / 3, hTop, 2 * hTop} {
			b := bh.B(h)
			if !finite(b) || b < prevB {
				t.Fatalf("B(%g A/m) = %g after %g", h, b, prevB)
			}
			prevB = b
		}
		prevH := math.Inf(-1)
		for _, b := range []float64{0, bTop / 3, bTop, 2 * bTop} {
			h := bh.H(b)
			if !finite(h) || h < prevH {
				t.Fatalf("H(%g T) = %g after %g", b, h, prevH)
			}
			prevH = h
		}
	})
}
