package magnet

import (
	"errors"
	"fmt"
	"math"
	"os"
	"runtime"
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
			tb, err = ReadTableCSV(strings.NewReader(string(data)), "fuzz.csv", Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"mWb", 1e-3})
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
		within(t, func() {
			bh, err = ReadBHCSV(strings.NewReader(string(data)), "fuzz.csv", Unit{"kA/m", 1000}, Unit{"T", 1})
		})
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

// TestCSVMessagesInFileUnits: the readers' messages quote values in the
// file's own units as written (an engineer who wrote mm, mA and mWb reads
// "0.5 mm", not "0.0005 m"), and give the SI value beside a value beyond
// an SI bound (a unit mistake).
func TestCSVMessagesInFileUnits(t *testing.T) {
	t.Parallel()
	mA, mm, mWb := Unit{"mA", 1e-3}, Unit{"mm", 1e-3}, Unit{"mWb", 1e-3}
	const good = "i,0.5,1\n0,0,0\n200,10,8\n400,18,15\n"
	if _, err := ReadTableCSV(strings.NewReader(good), "t.csv", mA, mm, mWb); err != nil {
		t.Fatalf("good table: %v", err)
	}
	tables := []struct{ name, in, want string }{
		{"equal gaps", "i,0.5,0.5\n0,0,0\n200,10,8\n", "t.csv:1:7: gaps must be strictly ascending: gap 2, 0.5 mm, is not above gap 1, 0.5 mm"},
		{"gaps too close", "i,0.5,0.5000000001,1\n0,0,0,0\n200,10,8,6\n", "t.csv:1:7: gap 2 (0.5000000001 mm) is too close to gap 1 (0.5 mm)"},
		{"gap in m by mistake", "i,0.5,20000\n0,0,0\n200,10,8\n", "t.csv:1:7: the last gap, 20000 mm (20 m), is outside 1e-09 m to 10 m: check the gap unit (mm)"},
		{"currents not ascending", "i,0.5,1\n0,0,0\n400,18,15\n200,10,8\n", "t.csv:4:1: currents must be strictly ascending: 200 mA is not above the previous row's 400 mA"},
		{"first current", "i,0.5,1\n100,0,0\n200,10,8\n", "t.csv:2:1: first current must be 0 or negative (a release current, with a permanent magnet), got 100 mA"},
		{"flux falls", "i,0.5,1\n0,0,0\n200,10,8\n400,9.5,15\n", "t.csv:4:5: flux linkage must be strictly increasing in current: at gap 0.5 mm, 9.5 mWb at 400 mA after 10 mWb at 200 mA"},
		{"flux in Wb by mistake", "i,0.5,1\n0,0,0\n200,1e-14,8\n", "t.csv:3:5: the largest flux linkage at gap 0.5 mm, 1e-14 mWb (1e-17 Wb), is outside 1e-15 Wb to 1e+06 Wb: check the flux linkage unit (mWb)"},
		{"cell named by its gap", "i,0.5,1\n0,0,0\n200,10,x\n", `t.csv:3:8: flux linkage at gap 1 mm (cell 3), in mWb: not a finite number: "x"`},
	}
	for _, tt := range tables {
		_, err := ReadTableCSV(strings.NewReader(tt.in), "t.csv", mA, mm, mWb)
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: "+tt.want) {
			t.Errorf("%s: error = %v, want it to start %q", tt.name, err, "magnet: "+tt.want)
		}
	}
	kAm, gauss := Unit{"kA/m", 1e3}, Unit{"G", 1e-4}
	curves := []struct{ name, in, want string }{
		{"B falls", "H,B\n0,0\n1,10000\n2,9000\n", "s.csv:4:3: flux density must be strictly increasing: 9000 G is not above the previous point's 10000 G"},
		{"H falls", "H,B\n0,0\n1,10000\n0.5,12000\n", "s.csv:4:1: field strength must be strictly increasing: 0.5 kA/m is not above the previous point's 1 kA/m"},
		{"not from 0", "H,B\n0.1,0\n1,10000\n", "s.csv:2:1: the curve must start at H = 0, B = 0 (no remanence), got (0.1 kA/m, 0 G)"},
		{"B in T by mistake", "H,B\n0,0\n1,2e6\n", "s.csv:3:3: flux density 2e+06 G (200 T) is above 100 T, beyond any steel: check the flux density unit (G)"},
	}
	for _, tt := range curves {
		_, err := ReadBHCSV(strings.NewReader(tt.in), "s.csv", kAm, gauss)
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: "+tt.want) {
			t.Errorf("%s: error = %v, want it to start %q", tt.name, err, "magnet: "+tt.want)
		}
	}
}

// TestCSVColumnsInCharacters: an error's column counts characters, not
// bytes (encoding/csv counts bytes), so that a cell after a "µ" or "Ω" is
// where an editor shows it; also on a line far into a long file, after
// the reader has dropped the lines it no longer needs.
func TestCSVColumnsInCharacters(t *testing.T) {
	t.Parallel()
	A, mm, Wb := Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"Wb", 1}
	var long strings.Builder
	long.WriteString("i/A \\ x/mm,1,2\n")
	for k := range 3000 {
		fmt.Fprintf(&long, "# row %d: Ω°µ\n", k)
	}
	long.WriteString("0,0,0\n1,Ω\"5,0.4\n")
	tables := []struct{ name, in, want string }{
		// "µ" and "Ω" are two bytes each: byte columns would be 10 and 12
		{"header after µ", "I/µA,1,x2\n0,0,0\n", "t.csv:1:8: gap 2 (cell 3 of the header), in mm"},
		{"bare quote after Ω", "i,1,2\n0,0,0\n1,Ω\"5,0.4\n", "t.csv:3:4: not valid CSV"},
		{"cell after a quoted Ω", "\"Ω, label\",1,x\n0,0,0\n", "t.csv:1:14: gap 2 (cell 3 of the header), in mm"},
		{"3000 lines on", long.String(), "t.csv:3003:4: not valid CSV"},
	}
	for _, tt := range tables {
		_, err := ReadTableCSV(strings.NewReader(tt.in), "t.csv", A, mm, Wb)
		if err == nil || !strings.HasPrefix(err.Error(), "magnet: "+tt.want) {
			t.Errorf("%s: error = %v, want it to start %q", tt.name, err, "magnet: "+tt.want)
		}
	}
	_, err := ReadBHCSV(strings.NewReader("H (kA/m) µ,B\n0,0\n1°,2\"\n"), "s.csv", Unit{"kA/m", 1e3}, Unit{"T", 1})
	if want := "magnet: s.csv:3:5: not valid CSV"; err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("bare quote after °: error = %v, want it to start %q", err, want)
	}
	// The reader's own columns, on a record that spans two lines.
	rd := NewCSVReader(strings.NewReader("\ufeffµ,\"a\nµb\",Ω,c\n"))
	if _, line, err := rd.Read(); err != nil || line != 1 {
		t.Fatalf("Read: line %d, %v", line, err)
	}
	for k, want := range []int{1, 3, 5, 7} { // fields 2 and 3 on line 2: "µb",Ω,c
		if got := rd.Column(k); got != want {
			t.Errorf("Column(%d) = %d, want %d (characters)", k, got, want)
		}
	}
}

// TestCSVLineTooLong: a line longer than MaxCSVLineBytes ends the reading
// with an error at its line, before encoding/csv splits it (a 60 MB line
// of one-character cells took 2.4 GB and 20 s); a line just below the
// limit is read. Not parallel: it measures the bytes allocated.
func TestCSVLineTooLong(t *testing.T) {
	A, mm, Wb := Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"Wb", 1}
	near := "# " + strings.Repeat("x", MaxCSVLineBytes-3) + "\n" // the limit, with its newline
	if _, err := ReadTableCSV(strings.NewReader("i,1,2\n"+near+"0,0,0\n1,0.5,0.4\n"), "t.csv", A, mm, Wb); err != nil {
		t.Errorf("a line of %d bytes: %v", MaxCSVLineBytes, err)
	}
	wide := "# a table\ni" + strings.Repeat(",1", 4<<20) + "\n" // 8 MiB, 4 Mi cells
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := ReadTableCSV(strings.NewReader(wide), "t.csv", A, mm, Wb)
	runtime.ReadMemStats(&after)
	if want := "magnet: t.csv:2: a line longer than"; err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("an 8 MiB header: error %v, want it to start %q", err, want)
	}
	// common practice, no source: some times the limit, not the cells'
	// 4 Mi strings and positions (about 200 MB)
	if got := after.TotalAlloc - before.TotalAlloc; got > 128*MaxCSVLineBytes {
		t.Errorf("reading an 8 MiB header allocated %d KiB, want at most %d KiB", got>>10, 128*MaxCSVLineBytes>>10)
	}
	_, err = ReadBHCSV(strings.NewReader("0,0\n1,1\n"+strings.Repeat("1", MaxCSVLineBytes+1)), "s.csv", Unit{"kA/m", 1e3}, Unit{"T", 1})
	if want := "magnet: s.csv:3: a line longer than"; err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Errorf("a long last line without newline: error %v, want it to start %q", err, want)
	}
}
