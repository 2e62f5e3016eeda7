package magnet

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestAWGDiameterASTMB258(t *testing.T) {
	t.Parallel()
	// The diameters are the ASTM B258 defining formula,
	// d = 0.005 in · 92^((36 − n)/39), evaluated independently (Python,
	// 0.8118, 0.5106, 0.2546 mm), not the standard's printed table, which
	// rounds to 0.0001 in (from memory: 0.0320 in = 0.8128 mm for AWG 20,
	// outside this tolerance).
	tests := []struct {
		gauge int
		want  float64 // mm
	}{
		{20, 0.8118}, // source: ASTM B258 defining formula, AWG 20
		{24, 0.5106}, // source: ASTM B258 defining formula, AWG 24
		{30, 0.2546}, // source: ASTM B258 defining formula, AWG 30
		{36, 0.1270}, // source: ASTM B258, AWG 36 is 0.005 in by definition
	}
	const tolMM = 0.0005 // the values are rounded to 0.0001 mm; common practice, no source
	for _, tc := range tests {
		d, err := AWGDiameter(tc.gauge)
		if err != nil {
			t.Fatalf("AWGDiameter(%d): %v", tc.gauge, err)
		}
		if got := d * 1e3; math.Abs(got-tc.want) > tolMM {
			t.Errorf("AWGDiameter(%d) = %.5f mm, want %.4f mm within %g mm", tc.gauge, got, tc.want, tolMM)
		}
	}
	// source: ASTM B258 defining formula, 39 gauges are a diameter ratio of 92
	// (0000 = 0.46 in to 36 = 0.005 in); checked between 0 and 39.
	d0, _ := AWGDiameter(0)
	d39, _ := AWGDiameter(39)
	if r := d0 / d39; relErr(r, 92) > 1e-12 {
		t.Errorf("AWGDiameter(0)/AWGDiameter(39) = %g, want 92", r)
	}
	// source: common practice, no source — six gauges halve the diameter
	// (92^(6/39) = 2.005).
	d14, _ := AWGDiameter(14)
	d20, _ := AWGDiameter(20)
	if r := d14 / d20; math.Abs(r-2) > 0.01 {
		t.Errorf("AWG 14/20 diameter ratio %g, want about 2", r)
	}
}

func TestAWGDiameterRange(t *testing.T) {
	t.Parallel()
	for g := -5; g <= 50; g++ {
		d, err := AWGDiameter(g)
		ok := g >= 0 && g <= 46
		switch {
		case ok && (err != nil || !(d > 0) || !isFinite(d)):
			t.Errorf("AWGDiameter(%d) = %g, %v; want a positive diameter", g, d, err)
		case !ok && (err == nil || d != 0):
			t.Errorf("AWGDiameter(%d) = %g, %v; want 0 and an error", g, d, err)
		case !ok && !strings.HasPrefix(err.Error(), "magnet: "):
			t.Errorf("AWGDiameter(%d) error %q lacks the package prefix", g, err)
		}
	}
}

func TestCopperConstantsIEC60028(t *testing.T) {
	t.Parallel()
	// source: IEC 60028, 1/58 Ω·mm²/m = 0.017241 Ω·mm²/m at 20 °C.
	if relErr(CopperResistivity20, 1.7241e-8) > 1e-4 {
		t.Errorf("CopperResistivity20 = %g, want 1.7241e-8 ohm·m", CopperResistivity20)
	}
	// source: IEC 60028, 8.89 g/cm³.
	if CopperDensity != 8890 {
		t.Errorf("CopperDensity = %g, want 8890 kg/m³", float64(CopperDensity))
	}
}

func TestAWGResistancePerKm(t *testing.T) {
	t.Parallel()
	// Resistance per km at 20 °C from the IEC 60028 resistivity and the
	// ASTM B258 diameter, against published AWG wire tables. The published
	// values are from memory (33.31, 84.22, 338.6 Ω/km); the tolerance is
	// 1 %, well above the spread between tables.
	tests := []struct {
		gauge int
		want  float64 // ohm/km
	}{
		{20, 33.31}, // from memory: AWG table, 20 °C
		{24, 84.22}, // from memory: AWG table, 20 °C
		{30, 338.6}, // from memory: AWG table, 20 °C
	}
	for _, tc := range tests {
		d, err := AWGDiameter(tc.gauge)
		if err != nil {
			t.Fatal(err)
		}
		got := CopperResistivity20 / (math.Pi * d * d / 4) * 1e3
		if relErr(got, tc.want) > 0.01 {
			t.Errorf("AWG %d: %g ohm/km, want %g within 1 %%", tc.gauge, got, tc.want)
		}
	}
}

func TestEnamelledDiameter(t *testing.T) {
	t.Parallel()
	// from memory, approximate: maximum overall diameters recalled from the
	// IEC 60317-0-1 table, grades 1 and 2. The function is a fit to these,
	// so the check is only that the fit stays within the ±0.01 mm it
	// claims; it is not a check against the standard.
	tests := []struct {
		bare  float64 // mm
		grade int
		want  float64 // mm
	}{
		{0.2, 1, 0.226}, {0.2, 2, 0.239},
		{0.5, 1, 0.544}, {0.5, 2, 0.566},
		{1.0, 1, 1.062}, {1.0, 2, 1.093},
	}
	for _, tc := range tests {
		got, err := EnamelledDiameter(tc.bare*1e-3, tc.grade)
		if err != nil {
			t.Fatalf("EnamelledDiameter(%g mm, %d): %v", tc.bare, tc.grade, err)
		}
		if d := math.Abs(got*1e3 - tc.want); d > 0.01 {
			t.Errorf("EnamelledDiameter(%g mm, %d) = %.4f mm, want %.3f mm within 0.01 mm", tc.bare, tc.grade, got*1e3, tc.want)
		}
	}
	// Grades are ordered and every overall diameter exceeds the bare one.
	for _, bare := range geomspace(enamelMinBare, enamelMaxBare, 40) {
		prev := bare
		for g := 1; g <= 3; g++ {
			d, err := EnamelledDiameter(bare, g)
			if err != nil || !(d > prev) || !isFinite(d) {
				t.Errorf("EnamelledDiameter(%g, %d) = %g, %v; want finite and above %g", bare, g, d, err, prev)
			}
			prev = d
		}
	}
}

func TestEnamelledDiameterErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		bare  float64
		grade int
		want  string
	}{
		{0.5e-3, 0, "grade"},
		{0.5e-3, 4, "grade"},
		{0, 1, "bare diameter"},
		{-0.5e-3, 1, "bare diameter"},
		{math.NaN(), 2, "bare diameter"},
		{math.Inf(1), 2, "bare diameter"},
		{6e-3, 2, "bare diameter"},
		{0.005e-3, 2, "bare diameter"},
	}
	for _, tc := range tests {
		d, err := EnamelledDiameter(tc.bare, tc.grade)
		if err == nil || d != 0 {
			t.Errorf("EnamelledDiameter(%g, %d) = %g, %v; want 0 and an error", tc.bare, tc.grade, d, err)
			continue
		}
		if !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("EnamelledDiameter(%g, %d) error %q, want prefix \"magnet: \" and %q", tc.bare, tc.grade, err, tc.want)
		}
	}
}

// handBuild is an invented bobbin worked by hand in TestCoilBuildFiguresByHand.
var handBuild = CoilBuild{
	InnerDiameter:   10e-3,
	OuterDiameter:   30e-3,
	Length:          20e-3,
	WireDiameter:    0.5e-3,
	OverallDiameter: 0.55e-3,
	Turns:           500,
}

func TestCoilBuildFiguresByHand(t *testing.T) {
	t.Parallel()
	// Worked by hand (invented numbers):
	//   radial depth h = (30 − 10)/2 = 10 mm, window = 10 × 20 = 200 mm²
	//   MLT = π·(10 + 30)/2 mm = 20π mm = 62.832 mm
	//   wire length = 500 × 20π mm = 10π m = 31.416 m
	//   copper area = π·0.25² mm² = 0.0625π mm² = 0.19635 mm²
	//   R20 = ρ·ℓ/A = (1/58e6)·10π/(0.0625π·1e-6) = 1.6e8/58e6 = 2.758621 ohm
	//   mass = 8890 · 0.0625π·1e-6 · 10π = 8890 · 6.25e-7·π² = 0.0548380 kg
	//   turns per layer = floor(20/0.55) = floor(36.36) = 36
	//   layers = ceil(500/36) = ceil(13.89) = 14, build 14 × 0.55 = 7.7 mm ≤ 10 mm
	//   layer fill 7.7/10 = 0.77, copper fill 500 × 0.19635/200 = 0.490874
	//   power at 12 V: 144/2.758621 = 52.2 W
	f, err := handBuild.Figures()
	if err != nil {
		t.Fatalf("Figures: %v", err)
	}
	checks := []struct {
		name      string
		got, want float64
		tol       float64 // relative, the hand values' digits
	}{
		{"Turns", f.Turns, 500, 0},
		{"MeanTurnLength", f.MeanTurnLength, 0.062832, 1e-5},
		{"WireLength", f.WireLength, 31.416, 1e-5},
		{"Resistance20", f.Resistance20, 2.758621, 1e-6},
		{"CopperMass", f.CopperMass, 0.0548380, 1e-5},
		{"FillFactor", f.FillFactor, 0.490874, 1e-5},
		{"LayerFill", f.LayerFill, 0.77, 1e-12},
		{"RatedPower(12)", f.RatedPower(12), 52.2, 1e-3},
	}
	for _, c := range checks {
		if relErr(c.got, c.want) > c.tol {
			t.Errorf("%s = %.8g, want %.8g within %g (relative)", c.name, c.got, c.want, c.tol)
		}
	}
	if f.TurnsPerLayer != 36 || f.Layers != 14 || !f.WindowFits {
		t.Errorf("layers: %d per layer, %d layers, fits %v; want 36, 14, true", f.TurnsPerLayer, f.Layers, f.WindowFits)
	}
	c := f.Coil()
	if err := c.Validate(); err != nil {
		t.Errorf("Coil(): %v", err)
	}
	if c.Resistance != f.Resistance20 || c.RefTemperature != 293.15 || c.TempCoeff != CopperTempCoeff || c.Turns != 500 {
		t.Errorf("Coil() = %+v", c)
	}
}

func TestCoilBuildFillFactorRoundTrip(t *testing.T) {
	t.Parallel()
	// 0.5 × 200 mm² / 0.19635 mm² = 509.30 → 509 whole turns.
	b := handBuild
	b.Turns, b.FillFactor = 0, 0.5
	f, err := b.Figures()
	if err != nil {
		t.Fatalf("Figures: %v", err)
	}
	if f.Turns != 509 {
		t.Errorf("turns from fill factor 0.5 = %g, want 509", f.Turns)
	}
	area := math.Pi * b.WireDiameter * b.WireDiameter / 4
	window := (b.OuterDiameter - b.InnerDiameter) / 2 * b.Length
	if !(f.FillFactor <= 0.5 && f.FillFactor > 0.5-area/window) {
		t.Errorf("achieved fill %g, want within one turn below 0.5", f.FillFactor)
	}
	// Back: the same turns given directly give the same figures.
	b2 := handBuild
	b2.Turns = f.Turns
	f2, err := b2.Figures()
	if err != nil {
		t.Fatalf("Figures: %v", err)
	}
	if f2 != f {
		t.Errorf("turns %g given directly: %+v, want %+v", f.Turns, f2, f)
	}
	// Resistance and mass are proportional to the turns.
	f0, _ := handBuild.Figures()
	if relErr(f.Resistance20/f0.Resistance20, 509.0/500) > 1e-12 || relErr(f.CopperMass/f0.CopperMass, 509.0/500) > 1e-12 {
		t.Errorf("resistance or mass not proportional to turns: %g, %g", f.Resistance20/f0.Resistance20, f.CopperMass/f0.CopperMass)
	}
}

func TestCoilBuildFit(t *testing.T) {
	t.Parallel()
	// Perfect layers: floor(10/0.55) = 18 layers of 36 turns = 648 turns.
	b := handBuild
	b.Turns = 648
	if f, err := b.Figures(); err != nil || !f.WindowFits || f.Layers != 18 {
		t.Errorf("648 turns: %+v, %v; want 18 layers that fit", f, err)
	}
	b.Turns = 649
	f, err := b.Figures()
	if !errors.Is(err, ErrCoilOverfull) {
		t.Fatalf("649 turns: error %v, want ErrCoilOverfull", err)
	}
	if f.WindowFits || f.Layers != 19 || !(f.LayerFill > 1) || f.Turns != 649 || !(f.Resistance20 > 0) {
		t.Errorf("649 turns: figures %+v; want 19 layers, WindowFits false, LayerFill > 1", f)
	}
	if !strings.Contains(err.Error(), "648") {
		t.Errorf("overfull error %q does not say how many turns fit (648)", err)
	}
	// A length and depth that are exact multiples of the wire are not lost
	// to rounding: 20 mm / 0.5 mm = 40 turns a layer, 10 mm / 0.5 mm = 20
	// layers.
	b = CoilBuild{InnerDiameter: 10e-3, OuterDiameter: 30e-3, Length: 20e-3, WireDiameter: 0.45e-3, OverallDiameter: 0.5e-3, Turns: 800}
	if f, err := b.Figures(); err != nil || f.TurnsPerLayer != 40 || f.Layers != 20 {
		t.Errorf("exact multiples: %+v, %v; want 40 a layer, 20 layers, no error", f, err)
	}
}

func TestCoilBuildGrade(t *testing.T) {
	t.Parallel()
	b := handBuild
	b.OverallDiameter, b.Grade = 0, 2
	f, err := b.Figures()
	if err != nil {
		t.Fatalf("Figures: %v", err)
	}
	od, _ := EnamelledDiameter(b.WireDiameter, 2)
	if want := int(math.Floor(b.Length / od)); f.TurnsPerLayer != want {
		t.Errorf("grade 2: %d turns a layer, want %d from EnamelledDiameter %g", f.TurnsPerLayer, want, od)
	}
	// An explicit overall diameter wins over the grade.
	b.OverallDiameter, b.Grade = 0.55e-3, 7
	if _, err := b.Figures(); err != nil {
		t.Errorf("explicit overall diameter with grade 7: %v", err)
	}
}

func TestCoilBuildErrors(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	mod := func(f func(*CoilBuild)) CoilBuild {
		b := handBuild
		f(&b)
		return b
	}
	tests := []struct {
		name string
		b    CoilBuild
		want string
	}{
		{"OD = ID", mod(func(b *CoilBuild) { b.OuterDiameter = b.InnerDiameter }), "outer diameter"},
		{"OD < ID", mod(func(b *CoilBuild) { b.OuterDiameter = 5e-3 }), "outer diameter"},
		{"OD inf", mod(func(b *CoilBuild) { b.OuterDiameter = inf }), "outer diameter"},
		{"ID negative", mod(func(b *CoilBuild) { b.InnerDiameter = -1e-3 }), "inner diameter"},
		{"ID NaN", mod(func(b *CoilBuild) { b.InnerDiameter = nan }), "inner diameter"},
		{"zero length", mod(func(b *CoilBuild) { b.Length = 0 }), "length"},
		{"NaN length", mod(func(b *CoilBuild) { b.Length = nan }), "length"},
		{"zero wire", mod(func(b *CoilBuild) { b.WireDiameter = 0 }), "bare wire"},
		{"overall below bare", mod(func(b *CoilBuild) { b.OverallDiameter = 0.4e-3 }), "overall"},
		{"overall NaN", mod(func(b *CoilBuild) { b.OverallDiameter = nan }), "overall"},
		{"grade 0", mod(func(b *CoilBuild) { b.OverallDiameter = 0 }), "grade"},
		{"grade 4", mod(func(b *CoilBuild) { b.OverallDiameter, b.Grade = 0, 4 }), "grade"},
		{"negative turns", mod(func(b *CoilBuild) { b.Turns = -1 }), "turns"},
		{"NaN turns", mod(func(b *CoilBuild) { b.Turns = nan }), "turns"},
		{"inf turns", mod(func(b *CoilBuild) { b.Turns = inf }), "turns"},
		{"no turns no fill", mod(func(b *CoilBuild) { b.Turns = 0 }), "fill factor"},
		{"fill 1", mod(func(b *CoilBuild) { b.Turns, b.FillFactor = 0, 1 }), "fill factor"},
		{"fill NaN", mod(func(b *CoilBuild) { b.Turns, b.FillFactor = 0, nan }), "fill factor"},
		{"fill below a turn", mod(func(b *CoilBuild) { b.Turns, b.FillFactor = 0, 1e-6 }), "less than one turn"},
		{"wire longer than bobbin", mod(func(b *CoilBuild) { b.Length = 0.5e-3 }), "bobbin length"},
		{"overfull", mod(func(b *CoilBuild) { b.Turns = 5000 }), "do not fit"},
	}
	for _, tc := range tests {
		f, err := tc.b.Figures()
		if err == nil {
			t.Errorf("%s: no error, figures %+v", tc.name, f)
			continue
		}
		if !strings.HasPrefix(err.Error(), "magnet: ") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %q, want prefix \"magnet: \" and %q", tc.name, err, tc.want)
		}
		if !errors.Is(err, ErrCoilOverfull) && f != (CoilFigures{}) {
			t.Errorf("%s: input error with non-zero figures %+v", tc.name, f)
		}
		checkFiguresFinite(t, tc.name, f)
	}
}

func TestRatedPowerBadInput(t *testing.T) {
	t.Parallel()
	f, _ := handBuild.Figures()
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		if p := f.RatedPower(v); p != 0 {
			t.Errorf("RatedPower(%g) = %g, want 0", v, p)
		}
	}
	if p := (CoilFigures{}).RatedPower(12); p != 0 {
		t.Errorf("zero figures RatedPower(12) = %g, want 0", p)
	}
	if p := f.RatedPower(-12); relErr(p, f.RatedPower(12)) > 1e-15 {
		t.Errorf("RatedPower(-12) = %g, want %g", p, f.RatedPower(12))
	}
}

func TestCoilBuildFiguresFinite(t *testing.T) {
	t.Parallel()
	vals := []float64{0, -1, 1e-300, 1e-6, 0.3e-3, 1e-3, 0.02, 1, 1e300, math.NaN(), math.Inf(1)}
	for _, id := range vals {
		for _, od := range vals {
			for _, w := range vals {
				for _, n := range []float64{0, 1, 100, 1e12, math.NaN()} {
					b := CoilBuild{InnerDiameter: id, OuterDiameter: od, Length: 0.02, WireDiameter: w, Grade: 2, Turns: n, FillFactor: 0.5}
					f, _ := b.Figures()
					checkFiguresFinite(t, "sweep", f)
					if p := f.RatedPower(24); !isFinite(p) {
						t.Errorf("%+v: RatedPower %g", b, p)
					}
				}
			}
		}
	}
}

func checkFiguresFinite(t *testing.T, name string, f CoilFigures) {
	t.Helper()
	for _, v := range []float64{f.Turns, f.MeanTurnLength, f.WireLength, f.Resistance20, f.CopperMass, f.FillFactor, f.LayerFill} {
		if !isFinite(v) || v < 0 {
			t.Errorf("%s: figures %+v not finite and non-negative", name, f)
			return
		}
	}
	if f.Layers < 0 || f.TurnsPerLayer < 0 {
		t.Errorf("%s: negative layer counts %+v", name, f)
	}
}
