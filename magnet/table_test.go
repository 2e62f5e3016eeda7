package magnet

import (
	"errors"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

// Accuracy of the table against the gap law it samples (30 currents × 25
// geometric gaps, 0.1–3 mm). The gap law is linear in i, so the current
// interpolation is exact and only the gap blend errs: cubic Hermite with
// three-point (second-order) node slopes has value error O((h/g)³) and
// derivative error O((h/g)²), with h/g up to about 0.13 here (h the gap
// step, g the effective gap x + ℜ_iron µ0 A). Measured: λ 8.7e-4, force
// 1.8e-2 away from the end cells; the bounds leave about 2× margin and the
// convergence test below confirms the orders.
const (
	tableFluxTol  = 2e-3 // relative, λ and Current against the gap law
	tableForceTol = 4e-2 // relative, Force against the gap law, end cells excluded
	inverseTol    = 1e-13
)

func TestTableMatchesSampledGapLaw(t *testing.T) {
	t.Parallel()
	g := refGapLaw(t)
	tb := gapLawTable(t, g, 30, 25)
	gaps := geomspace(refXMin, refXMax, 25)
	for _, i := range []float64{0.013, 0.77, refTestAmps, refMaxAmps, 4.4} {
		for q := 0; q <= 200; q++ {
			x := refXMin + (refXMax-refXMin)*float64(q)/200
			// source: the gap law sampled to build the table (same law, two
			// implementations); tolerances from the interpolation orders above.
			if got, want := tb.FluxLinkage(i, x), g.FluxLinkage(i, x); relErr(got, want) > tableFluxTol {
				t.Errorf("%v.FluxLinkage(%g, %g) = %g, want %g", tb, i, x, got, want)
			}
			lam := g.FluxLinkage(i, x)
			if got := tb.Current(lam, x); relErr(got, i) > tableFluxTol {
				t.Errorf("%v.Current(%g, %g) = %g, want %g", tb, lam, x, got, i)
			}
			if x > gaps[1] && x < gaps[len(gaps)-2] {
				if got, want := tb.Force(i, x), g.Force(i, x); relErr(got, want) > tableForceTol {
					t.Errorf("%v.Force(%g, %g) = %g, want %g", tb, i, x, got, want)
				}
			}
		}
	}
	// At the grid nodes λ is the sampled data.
	for _, x := range gaps {
		if got, want := tb.FluxLinkage(refTestAmps, x), g.FluxLinkage(refTestAmps, x); relErr(got, want) > 1e-14 {
			t.Errorf("%v.FluxLinkage(%g, %g) = %g, want %g (node)", tb, refTestAmps, x, got, want)
		}
	}
}

func TestTableConvergesWithGapGrid(t *testing.T) {
	t.Parallel()
	// source: interpolation theory (from memory: cubic Hermite with
	// second-order slopes converges as h³ in value, h² in derivative);
	// doubling the gap count must cut the errors by about 8 and 4.
	const (
		minFluxRatio  = 6
		minForceRatio = 3
	)
	g := refGapLaw(t)
	maxErr := func(nX int) (ef, eF float64) {
		tb := gapLawTable(t, g, 5, nX)
		gaps := geomspace(refXMin, refXMax, nX)
		for q := 0; q <= 2000; q++ {
			x := refXMin + (refXMax-refXMin)*float64(q)/2000
			ef = math.Max(ef, relErr(tb.FluxLinkage(1, x), g.FluxLinkage(1, x)))
			if x > gaps[1] && x < gaps[nX-2] {
				eF = math.Max(eF, relErr(tb.Force(1, x), g.Force(1, x)))
			}
		}
		return ef, eF
	}
	f1, F1 := maxErr(25)
	f2, F2 := maxErr(49)
	if f1/f2 < minFluxRatio || F1/F2 < minForceRatio {
		t.Errorf("errors 25→49 gaps: λ %g→%g (ratio %g, want ≥ %d), force %g→%g (ratio %g, want ≥ %d)",
			f1, f2, f1/f2, minFluxRatio, F1, F2, F1/F2, minForceRatio)
	}
}

func TestTableCurrentInvertsFluxLinkage(t *testing.T) {
	t.Parallel()
	// source: Current is defined as the inverse of FluxLinkage in i.
	for _, tb := range []*Table{saturatingTable(t), gapLawTable(t, refGapLaw(t), 30, 25)} {
		lo, hi := tb.GapRange()
		for _, x := range linspace(lo, hi, 13) {
			for _, i := range []float64{1e-9, 1e-3, 0.05, 0.1034, 1, refTestAmps, refMaxAmps, 3.5, 40} {
				lam := tb.FluxLinkage(i, x)
				if got := tb.Current(lam, x); relErr(got, i) > inverseTol {
					t.Errorf("%v.Current(%g, %g) = %g, want %g", tb, lam, x, got, i)
				}
				checkPartials(t, tb, lam, x)
			}
		}
		if got := tb.Current(0, lo); got != 0 {
			t.Errorf("%v.Current(0, %g) = %g, want 0", tb, lo, got)
		}
	}
}

func TestTableExtrapolatesLinearlyInCurrent(t *testing.T) {
	t.Parallel()
	// source: the documented continuation above the table, a straight line
	// with the last slope; W' is its exact integral (the co-energy definition
	// W' = ∫ λ di, trapezoid exact for a line).
	tb := saturatingTable(t)
	x := 1e-3
	l1, l2, l3 := tb.FluxLinkage(4, x), tb.FluxLinkage(5, x), tb.FluxLinkage(6, x)
	if relErr(l3-l2, l2-l1) > 1e-12 {
		t.Errorf("%v.FluxLinkage above the table: steps %g, %g, want equal", tb, l2-l1, l3-l2)
	}
	dW := tb.CoEnergy(5, x) - tb.CoEnergy(4, x)
	if want := 0.5 * (l1 + l2); relErr(dW, want) > 1e-12 {
		t.Errorf("%v.CoEnergy(5, %g) − CoEnergy(4, %g) = %g, want %g", tb, x, x, dW, want)
	}
}

func TestNewTableErrors(t *testing.T) {
	t.Parallel()
	cur := []float64{0, 1, 2}
	gaps := []float64{1e-4, 1e-3, 2e-3}
	ok := [][]float64{{0, 0, 0}, {0.2, 0.1, 0.05}, {0.3, 0.15, 0.08}}
	// Columns of one shape scaled 1, 1, 100, 1: the centred slopes make the
	// blend weight of the big column negative between the first two gaps.
	spiky := [][]float64{{0, 0, 0, 0}, {1, 1, 100, 1}, {2, 2, 200, 2}}
	tests := []struct {
		name        string
		currents, x []float64
		flux        [][]float64
		want        string
	}{
		{"one gap", cur, gaps[:1], [][]float64{{0}, {1}, {2}}, "at least 2 gaps"},
		{"one current", cur[:1], gaps, ok[:1], "at least 2 currents"},
		{"gaps descending", cur, []float64{1e-3, 1e-4, 2e-3}, ok, "gaps must be strictly ascending"},
		{"negative gap", cur, []float64{-1e-4, 1e-3, 2e-3}, ok, "must not be negative"},
		{"first current not 0", []float64{0.1, 1, 2}, gaps, ok, "first current must be 0"},
		{"currents not ascending", []float64{0, 2, 1}, gaps, ok, "currents must be strictly ascending"},
		{"flux rows", cur, gaps, ok[:2], "flux has 2 rows"},
		{"ragged flux", cur, gaps, [][]float64{{0, 0, 0}, {0.2, 0.1}, {0.3, 0.15, 0.08}}, "flux row has 2 values"},
		{"NaN flux", cur, gaps, [][]float64{{0, 0, 0}, {0.2, math.NaN(), 0.05}, {0.3, 0.15, 0.08}}, "not finite"},
		{"magnet offset not increasing", cur, gaps, [][]float64{{0.3, 0, 0}, {0.2, 0.1, 0.05}, {0.3, 0.15, 0.08}}, "strictly increasing in current"},
		{"flux not increasing", cur, gaps, [][]float64{{0, 0, 0}, {0.2, 0.1, 0.05}, {0.3, 0.1, 0.08}}, "strictly increasing in current"},
		{"blend overshoots", cur, []float64{1e-4, 2e-4, 3e-4, 4e-4}, spiky, "refine the gap grid"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			_, err := NewTable(tt.currents, tt.x, tt.flux)
			if err == nil || !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("NewTable(...) error = %v, want a \"magnet: \" error containing %q", err, tt.want)
			}
		})
	}
}

func TestReadTableCSVFile(t *testing.T) {
	t.Parallel()
	const path = "../testdata/magnet/small.csv"
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	// File units: A, mm, mWb.
	tb, err := ReadTableCSV(f, path, Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"mWb", 1e-3})
	if err != nil {
		t.Fatalf("ReadTableCSV(%s) = %v", path, err)
	}
	if lo, hi := tb.GapRange(); relErr(lo, 0.1e-3) > 1e-15 || relErr(hi, 2e-3) > 1e-15 {
		t.Errorf("%v.GapRange() = %g, %g, want 0.0001, 0.002", tb, lo, hi)
	}
	// source: the file's own cells times the scales (a parse check); line
	// "1.0, 180, 95, 52, 34" of small.csv.
	for j, want := range []float64{0.180, 0.095, 0.052, 0.034} {
		x := []float64{0.1e-3, 0.5e-3, 1e-3, 2e-3}[j]
		if got := tb.FluxLinkage(1, x); relErr(got, want) > 1e-14 {
			t.Errorf("%v.FluxLinkage(1, %g) = %g, want %g", tb, x, got, want)
		}
	}
}

func TestReadTableCSVErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, in string
		want     string
	}{
		{"empty", "", "mem.csv: no data"},
		{"comments only", "# nothing\n# here\n", "mem.csv: no data"},
		{"non-numeric cell", "i,1,2\n0,0,0\n1,0.5,abc\n", `mem.csv:3:7: flux linkage at gap 2 mm (cell 3), in Wb: not a finite number: "abc"`},
		{"empty cell", "i,1,2\n0,0,0\n1,,0.5\n", "mem.csv:3:3: flux linkage at gap 1 mm (cell 2), in Wb: empty cell"},
		{"non-numeric gap", "#c\ni,1,x2\n0,0,0\n", "mem.csv:2:5: gap 2 (cell 3 of the header), in mm: not a finite number: \"x2\""},
		{"non-numeric current", "i,1,2\n0,0,0\nx,0.5,0.4\n", "mem.csv:3:1: current (cell 1)"},
		{"ragged row", "i,1,2\n0,0,0\n1,0.5\n", "mem.csv:3:1: row has 2 cells, want 3"},
		{"gaps not ascending", "# units A, mm, Wb\ni,2,1\n0,0,0\n1,0.5,0.6\n", "mem.csv:2:5: gaps must be strictly ascending: gap 2, 1 mm, is not above gap 1, 2 mm"},
		{"current not from 0", "i,1,2\n0.5,0.1,0.1\n1,0.5,0.4\n", "mem.csv:2:1: first current must be 0"},
		{"flux not increasing", "i,1,2\n0,0,0\n1,0.5,0.4\n2,0.7,0.3\n", "mem.csv:4:7: flux linkage must be strictly increasing in current: at gap 2 mm, 0.3 Wb at 2 A after 0.4 Wb at 1 A"},
		{"flux at 0 A above the next", "i,1,2\n0,0,0.5\n1,0.5,0.4\n", "mem.csv:3:7: flux linkage must be strictly increasing"},
		{"one current row", "i,1,2\n0,0,0\n", "mem.csv: need at least 2 currents"},
		{"header too short", "i,1\n0,0\n", "mem.csv:1:1: header needs"},
		{"bad quote", "i,1,2\n0,0,0\n1,\"0.5,0.4\n", "mem.csv:3:"},
		{"bare quote", "i,1,2\n0,0,0\n1,0\"5,0.4\n", "mem.csv:3:4: not valid CSV"},
		{"infinite cell", "i,1,2\n0,0,0\n1,Inf,0.4\n", "mem.csv:3:3:"},
		{"BOM then comment", "\ufeff# units A, mm, Wb\ni,2,1\n0,0,0\n1,0.5,0.6\n", "mem.csv:2:5: gaps must be strictly ascending"},
		{"current unit wrong", "i,1,2\n0,0,0\n1e7,0.5,0.4\n", "mem.csv:3:1: the last current, 1e+07 A, is outside 1e-09 A to 1e+06 A: check the current unit (A)"},
		{"gap unit wrong", "i,1,2e5\n0,0,0\n1,0.5,0.4\n", "mem.csv:1:5: the last gap, 200000 mm (200 m), is outside 1e-09 m to 10 m: check the gap unit (mm)"},
		{"gaps too close", "i,1,1.0000000000001,2\n0,0,0,0\n1,0.5,0.4,0.3\n", "mem.csv:1:5: gap 2 (1.0000000000001 mm) is too close to gap 1 (1 mm)"},
		{"currents too close", "i,1,2\n0,0,0\n1,0.5,0.4\n1.0000000000001,0.6,0.5\n", "mem.csv:4:1: current 1.0000000000001 A is too close to the previous one"},
		{"flux barely increases", "i,1,2\n0,0,0\n1,0.5,0.4\n2,0.5000000000000001,0.6\n", "mem.csv:4:3: flux linkage barely increases in current"},
		{"flux unit wrong", "i,1,2\n0,0,0\n1,1e-20,0.4\n", "mem.csv:3:3: the largest flux linkage at gap 1 mm, 1e-20 Wb, is outside 1e-15 Wb to 1e+06 Wb"},
		{"too many gaps", "i" + strings.Repeat(",1", MaxTableGaps+1) + "\n", fmt.Sprintf("mem.csv:1:%d: header has %d gaps, more than the %d", 2*(MaxTableGaps+1)+1, MaxTableGaps+1, MaxTableGaps)},
		{"too many currents", "i,1,2\n" + strings.Repeat("0,0,0\n", MaxTableCurrents+1), fmt.Sprintf("mem.csv:%d:1: more than %d current rows", MaxTableCurrents+2, MaxTableCurrents)},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			_, err := ReadTableCSV(strings.NewReader(tt.in), "mem.csv", Unit{"A", 1}, Unit{"mm", 1e-3}, Unit{"Wb", 1})
			var ie *InputError
			if err == nil || !strings.HasPrefix(err.Error(), "magnet: "+tt.want) || !errors.As(err, &ie) || ie.File != "mem.csv" {
				t.Errorf("ReadTableCSV(%q) error = %v, want an *InputError starting %q", tt.in, err, "magnet: "+tt.want)
			}
		})
	}
	if _, err := ReadTableCSV(strings.NewReader("i,1,2\n0,0,0\n1,1,1\n"), "mem.csv", Unit{"A", 0}, Unit{"mm", 1}, Unit{"Wb", 1}); err == nil || !strings.Contains(err.Error(), "current scale") {
		t.Errorf("ReadTableCSV with zero current scale: error = %v, want one about the current scale", err)
	}
}

// benchTable is a 20 × 20 table of the reference gap law.
func benchTable(b *testing.B) *Table {
	return gapLawTable(b, refGapLaw(b), 20, 20)
}

func BenchmarkTableCurrentForce(b *testing.B) {
	tb := benchTable(b)
	lams := make([]float64, 64)
	xs := make([]float64, 64)
	for k := range lams {
		xs[k] = refXMin + (refXMax-refXMin)*float64(k)/63
		lams[k] = tb.FluxLinkage(refMaxAmps*float64(k%17)/16, xs[k])
	}
	b.ReportAllocs()
	var sink float64
	k := 0
	for b.Loop() {
		i := tb.Current(lams[k], xs[k])
		sink += tb.Force(i, xs[k])
		k = (k + 1) & 63
	}
	_ = sink
}

func BenchmarkGapLawCurrentForce(b *testing.B) {
	g := refGapLaw(b)
	b.ReportAllocs()
	var sink float64
	x := 1e-3
	for b.Loop() {
		i := g.Current(0.1, x)
		sink += g.Force(i, x)
	}
	_ = sink
}
