package coilkick

import (
	"math"
	"sort"
	"strings"
	"testing"
	"time"
)

func TestUnitsParseGood(t *testing.T) {
	// psi from its exact definition: 1 lbf/in² = 0.45359237 kg · 9.80665 m/s² / (0.0254 m)²
	// (NIST SP 811, B.8), rounded once to float64 before use.
	var psi float64 = 0.45359237 * 9.80665 / (0.0254 * 0.0254)
	cases := []struct {
		in   string
		dim  Dim
		want float64
		src  string // where the conversion factor comes from
	}{
		{"24 V", Voltage, 24, "SI base/derived unit"},
		{"24V", Voltage, 24, "space between number and unit is optional"},
		{"  24 V  ", Voltage, 24, "surrounding space ignored"},
		{"-1.5e1 V", Voltage, -15, "Go float syntax with exponent"},
		{"2.4E+1 V", Voltage, 24, "Go float syntax with exponent"},
		{".5 V", Voltage, 0.5, "Go float syntax, no leading digit"},
		{"48 ohm", Resistance, 48, "SI derived unit ohm"},
		{"48 \u03a9", Resistance, 48, "Ω, Greek capital omega"},
		{"48 \u2126", Resistance, 48, "Ω, ohm sign"},
		{"2.2 kohm", Resistance, 2200, "k = 1e3 (SI brochure table 7)"},
		{"25 mohm", Resistance, 0.025, "m = 1e-3 (SI brochure table 7): milliohm"},
		{"1 Mohm", Resistance, 1e6, "M = 1e6 (SI brochure table 7)"},
		{"250 mH", Inductance, 0.25, "m = 1e-3 (SI brochure table 7)"},
		{"1.2 mm", Length, 0.0012, "m = 1e-3 (SI brochure table 7)"},
		{"3 cm", Length, 0.03, "c = 1e-2 (SI brochure table 7)"},
		{"2 m", Length, 2, "m alone is the metre"},
		{"6 g", Mass, 0.006, "1 g = 1e-3 kg (SI brochure 2.3.1)"},
		{"1 kg", Mass, 1, "kg is the SI base unit of mass"},
		{"2 N", Force, 2, "SI derived unit newton"},
		{"0.8 N/mm", ForcePerLength, 800, "m = 1e-3 (SI brochure table 7)"},
		{"3 bar", Pressure, 3e5, "1 bar = 1e5 Pa exactly (ISO 80000-4)"},
		{"20 mbar", Pressure, 2000, "1 bar = 1e5 Pa exactly (ISO 80000-4)"},
		{"2 kPa", Pressure, 2000, "k = 1e3 (SI brochure table 7)"},
		{"1 MPa", Pressure, 1e6, "M = 1e6 (SI brochure table 7)"},
		{"3 psi", Pressure, 3 * psi, "1 psi = 6894.757 Pa (NIST SP 811 B.8), exact from lb, g_n, inch"},
		{"1.5 mm2", Area, 1.5e-6, "(1e-3 m)^2 = 1e-6 m² (SI brochure 5.4.7: prefix is raised with the unit)"},
		{"1.5 mm^2", Area, 1.5e-6, "as above"},
		{"1.5 mm\u00b2", Area, 1.5e-6, "as above"},
		{"50 mm2", Area, 50e-6, "as above"},
		{"40 degC", Temperature, 313.15, "0 °C = 273.15 K (SI brochure 2.3.1)"},
		{"20 degC", Temperature, 293.15, "0 °C = 273.15 K (SI brochure 2.3.1)"},
		{"-40 \u00b0C", Temperature, 233.15, "0 °C = 273.15 K (SI brochure 2.3.1)"},
		{"313.15 K", Temperature, 313.15, "kelvin is the SI base unit"},
		{"200 ms", Time, 0.2, "m = 1e-3 (SI brochure table 7)"},
		{"10 us", Time, 1e-5, "µ = 1e-6 (SI brochure table 7), u as ASCII stand-in"},
		{"10 \u00b5s", Time, 1e-5, "µ (micro sign) = 1e-6 (SI brochure table 7)"},
		{"10 \u03bcs", Time, 1e-5, "μ (Greek mu) = 1e-6 (SI brochure table 7)"},
		{"2 min", Time, 120, "1 min = 60 s (SI brochure table 8)"},
		{"0.5 N*s/m", Damping, 0.5, "N·s/m"},
		{"0.5 N.s/m", Damping, 0.5, "N·s/m, dot as product"},
		{"0.5 N\u00b7s/m", Damping, 0.5, "N·s/m, middle dot"},
		{"0.5 N s/m", Damping, 0.5, "N s/m, space as product (SI brochure 5.4.6)"},
		{"0.5 kg/s", Damping, 0.5, "kg/s has the dimension of N·s/m"},
		{"0.00393 /K", PerKelvin, 0.00393, "1/K"},
		{"0.00393 1/K", PerKelvin, 0.00393, "1/K"},
		{"0.00393 K^-1", PerKelvin, 0.00393, "1/K"},
		{"100 nF", Capacitance, 1e-7, "n = 1e-9 (SI brochure table 7)"},
		{"200 pF", Capacitance, 2e-10, "p = 1e-12 (SI brochure table 7)"},
		{"50 mJ", Energy, 0.05, "m = 1e-3 (SI brochure table 7)"},
		{"10 W", Power, 10, "SI derived unit watt"},
		{"1 GW", Power, 1e9, "G = 1e9 (SI brochure table 7)"},
		{"12 mWb", FluxLinkage, 0.012, "m = 1e-3 (SI brochure table 7)"},
		{"12 mV*s", FluxLinkage, 0.012, "1 Wb = 1 V·s (SI brochure table 4)"},
		{"0.05 m/s", Velocity, 0.05, "m/s"},
		{"2 A", Current, 2, "SI base unit ampere"},
		{"300 mA", Current, 0.3, "m = 1e-3 (SI brochure table 7)"},
		{"0.3", Dimensionless, 0.3, "plain number"},
		{"1e-8", Dimensionless, 1e-8, "plain number with exponent"},
		{"500000", Dimensionless, 500000, "plain number"},
	}
	for _, c := range cases {
		got, err := ParseQuantity(c.in, c.dim)
		if err != nil {
			t.Errorf("ParseQuantity(%q, %s): unexpected error %v", c.in, c.dim.Name(), err)
			continue
		}
		if got != c.want {
			t.Errorf("ParseQuantity(%q) = %.17g, want %.17g (%s)", c.in, got, c.want, c.src)
		}
	}
}

func TestUnitsPsiNIST(t *testing.T) {
	// NIST SP 811 (2008), appendix B.8: 1 psi = 6.894 757 E+03 Pa (7 digits).
	got, err := ParseQuantity("1 psi", Pressure)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got-6894.757) > 0.0005 {
		t.Errorf("1 psi = %v Pa, want 6894.757 Pa to 7 digits (NIST SP 811)", got)
	}
}

func TestUnitsParseBad(t *testing.T) {
	cases := []struct {
		in   string
		dim  Dim
		want []string // all must appear in the error text
	}{
		{"24", Voltage, []string{"has no unit", "expected a voltage", `"24 V"`}},
		{"6", Mass, []string{"has no unit", "expected a mass", `"6 g"`}},
		{"6 N", Mass, []string{`"6 N" is a force; expected a mass, e.g. "6 g"`}},
		{"3 bar", Force, []string{"is a pressure", "expected a force", `"2 N"`}},
		{"40 degC", PerKelvin, []string{"is a temperature", "expected a temperature coefficient"}},
		{"0.5 N/m", Damping, []string{"is a spring rate", "expected a damping coefficient", `"0.5 N*s/m"`}},
		{"250 mH", Capacitance, []string{"is an inductance", "expected a capacitance"}},
		{"3 V*A*s", Voltage, []string{"is an energy", "expected a voltage"}},
		{"3 V*A*s*s", Voltage, []string{"kg*m^2*s^-1", "expected a voltage"}},
		{"3 furlong", Length, []string{`unknown unit "furlong"`, "expected a length", `"1.2 mm"`}},
		{"3 MM", Length, []string{`unknown unit "MM"`, "expected a length"}},
		{"3 Ohm", Resistance, []string{`unknown unit "Ohm"`, `did you mean "ohm"`}},
		{"0.5 Ns/m", Damping, []string{`unknown unit "Ns"`, `"N*s"`, "expected a damping"}},
		{"2 h", Time, []string{`unknown unit "h"`, "hours"}},
		{"2 kmin", Time, []string{`unknown unit "kmin"`}},
		{"2 kdegC", Temperature, []string{`unknown unit "kdegC"`}},
		{"abc", Voltage, []string{"not a quantity", "expected a voltage"}},
		{"V", Voltage, []string{"must start with a number", "expected a voltage"}},
		{"", Voltage, []string{"is empty", "expected a voltage"}},
		{"   ", Mass, []string{"is empty", "expected a mass"}},
		{"NaN V", Voltage, []string{"not a finite number", "expected a voltage"}},
		{"nan", Dimensionless, []string{"not a finite number"}},
		{"Inf V", Voltage, []string{"not a finite number"}},
		{"-Inf", Dimensionless, []string{"not a finite number"}},
		{".inf", Dimensionless, []string{"not a finite number"}},
		{"1e999 V", Voltage, []string{"out of range"}},
		{"1e308 GV", Voltage, []string{"out of range"}},
		{"1e-400 V", Voltage, []string{"underflow"}},
		{"1,5 mm", Length, []string{`","`, "decimal point"}},
		{"1.5 mm^", Area, []string{`"^"`}},
		{"1.5 mm^0", Area, []string{"exponent"}},
		{"1 W/m/K", Dim{1, 1, -3, 0, -1}, []string{`more than one "/"`}},
		{"1 W/m*K", Dim{1, 1, -3, 0, -1}, []string{`only one unit may follow "/"`}},
		{"0.004 /degC", PerKelvin, []string{"degC can only stand alone"}},
		{"5 degC*s", Dim{0, 0, 1, 0, 1}, []string{"degC can only stand alone"}},
		{"-300 degC", Temperature, []string{"below absolute zero"}},
		{"-1 K", Temperature, []string{"below absolute zero"}},
		{"3 V)", Voltage, []string{"unexpected"}},
		{"3 V V", Voltage, []string{"kg^2*m^4*s^-6*A^-2"}},
		{"2 m2s", Dim{0, 2, 1, 0, 0}, []string{`write products with "*"`}},
		{"3 V", Dimensionless, []string{"is a voltage", "expected a plain number"}},
	}
	for _, c := range cases {
		got, err := ParseQuantity(c.in, c.dim)
		if err == nil {
			t.Errorf("ParseQuantity(%q, %s) = %v, want an error", c.in, c.dim.Name(), got)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("ParseQuantity(%q, %s): error %q does not contain %q", c.in, c.dim.Name(), err, w)
			}
		}
	}
}

func TestUnitsDimNames(t *testing.T) {
	named := []Dim{Voltage, Current, Resistance, Inductance, Capacitance, Length, Area, Mass,
		Force, ForcePerLength, Damping, Pressure, Time, Temperature, Energy, Power,
		FluxLinkage, PerKelvin, Dimensionless, Velocity}
	seen := map[Dim]bool{}
	for _, d := range named {
		if seen[d] {
			t.Errorf("two named dimensions share %s", d)
		}
		seen[d] = true
		// Each dimension's own example must parse as that dimension.
		if _, err := ParseQuantity(d.Example(), d); err != nil {
			t.Errorf("example %q for %s does not parse: %v", d.Example(), d.Name(), err)
		}
	}
	if got := Voltage.String(); got != "kg*m^2*s^-3*A^-1" {
		t.Errorf("Voltage.String() = %q", got)
	}
}

// fuzzDims are the named dimensions, in a fixed order, for the fuzz target.
func fuzzDims() []Dim {
	var ds []Dim
	for d := range dimInfos {
		ds = append(ds, d)
	}
	sort.Slice(ds, func(i, j int) bool { return ds[i].formula() < ds[j].formula() })
	return ds
}

// FuzzParseQuantity: ParseQuantity never panics; a parsed value is finite
// (and not below absolute zero for a temperature) and of the right
// dimension: the same text parses as no other named dimension; an error is
// one line, with no raw control character, and says what was expected.
func FuzzParseQuantity(f *testing.F) {
	for _, s := range []string{"24 V", "250 mH", "1.2 mm", "0.8 N/mm", "0.5 N*s/m", "3 bar", "45 psi", "40 degC", "-40 °C",
		"0.00393 /K", "1.5 mm2", "12 W*m^-2*K^-1", "20 kHz", "10 %", "1e-8", "2 min", "48 Ω", "10 µs", "1e999 V", "1e-400 V",
		"NaN V", "0.5 Ns/m", "1 W/m/K", "3 V V", "2 m2s", "1,5 mm", "-300 degC", "5e-324 V", "1.7976931348623157e308 V"} {
		for k := range 3 {
			f.Add(s, uint8(k*7))
		}
	}
	dims := fuzzDims()
	f.Fuzz(func(t *testing.T, s string, which uint8) {
		dim := dims[int(which)%len(dims)]
		v, err := ParseQuantity(s, dim)
		if err != nil {
			msg := err.Error()
			if msg == "" || strings.Contains(msg, "\n") {
				t.Fatalf("ParseQuantity(%q, %s): malformed error %q", s, dim.Name(), msg)
			}
			for _, r := range msg {
				if isControlRune(r) {
					t.Fatalf("ParseQuantity(%q, %s): error holds the raw control character %U: %q", s, dim.Name(), r, msg)
				}
			}
			if !strings.Contains(msg, "expected "+dim.Name()) {
				t.Fatalf("ParseQuantity(%q, %s): error does not say what was expected: %q", s, dim.Name(), msg)
			}
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("ParseQuantity(%q, %s) = %v, not finite", s, dim.Name(), v)
		}
		if dim == Temperature && v < 0 {
			t.Fatalf("ParseQuantity(%q, temperature) = %v K, below absolute zero", s, v)
		}
		for _, other := range dims {
			if other != dim {
				if w, err := ParseQuantity(s, other); err == nil {
					t.Fatalf("%q parses as %s (%v) and as %s (%v)", s, dim.Name(), v, other.Name(), w)
				}
			}
		}
		if w, _ := ParseQuantity(s, dim); w != v {
			t.Fatalf("ParseQuantity(%q) is not deterministic: %v, %v", s, v, w)
		}
	})
}

// TestParseQuantityLongText: a quantity longer than MaxQuantityText is
// refused at once (the unit parser's work grew with the square of a long
// unit's length: an 80 000-character unit took a tenth of a second).
func TestParseQuantityLongText(t *testing.T) {
	t.Parallel()
	s := "1 " + strings.Repeat("m", 80000)
	start := time.Now()
	_, err := ParseQuantity(s, Length)
	if err == nil || !strings.Contains(err.Error(), "more than the 80") || time.Since(start) > 10*time.Millisecond {
		t.Errorf("long unit: %v after %v", err, time.Since(start))
	}
	if v, err := ParseQuantity("1.5 mm", Length); err != nil || v != 1.5e-3 {
		t.Errorf("1.5 mm: %v, %v", v, err)
	}
}
