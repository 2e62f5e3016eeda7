package main

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"coilkick"
)

// The golden files' figures that have a closed form in the scenario's
// inputs, asserted against it, and magnet --curves against the gap law's
// force. A printed figure matches when it is within half a unit in its
// last printed digit (the rounding of the print) plus the stated
// relative tolerance of the closed form.

// Relative tolerances of the closed forms beyond the print's rounding.
const (
	// exactTol: the closed form is the model's own law at a steady state
	// or a stop; the integrator is accurate to 1e-6 against closed forms
	// (DEVELOPERS.md, LimitRelTol).
	exactTol = 1e-6
	// pulseTol: the constant-voltage clamp decay of a constant inductance;
	// the door latch's plunger leaves the seat 1.5 ms into the 2 ms pulse
	// and has hardly moved by its end, and the 800 pF node capacitance
	// holds ½·C·V² ≈ 1 µJ of the 85 mJ: 1e-4.
	pulseTol = 1e-4
	// movingTol: the freewheel decay of a constant inductance, while the
	// irrigation valve's plunger leaves the seat 4.2 ms into the 11 ms
	// decay and the inductance falls toward the open gap's: 5 % (the run
	// gives 2.6 % more than the seated-inductance closed form).
	movingTol = 0.05
	// ringTol: the LC ring frequency with the seated inductance; the ring
	// is retired 0.85 ms after the plunger left the seat, the gap barely
	// opened: 2 %.
	ringTol = 0.02
)

// printed is a figure as printed: its value in SI and half a unit in its
// last printed digit.
type printed struct{ v, half float64 }

// printedNumber is a number in the text output, with its SI prefix and
// unit when it has one.
var printedNumber = regexp.MustCompile(`(-?\d+)(?:\.(\d+))?(?: ?(µ|m|k)?(A|V|W|J|s|Hz|H|ohm|N|T|g|m)\b)?`)

// figuresAfter returns the numbers printed after label on the first line
// of lines that contains it.
func figuresAfter(t *testing.T, lines []string, label string) []printed {
	t.Helper()
	for _, l := range lines {
		k := strings.Index(l, label)
		if k < 0 {
			continue
		}
		var out []printed
		for _, m := range printedNumber.FindAllStringSubmatch(l[k+len(label):], -1) {
			v, _ := strconv.ParseFloat(m[1]+"."+m[2]+"0", 64)
			scale := map[string]float64{"µ": 1e-6, "m": 1e-3, "k": 1e3, "": 1}[m[3]]
			if m[4] == "g" {
				scale *= 1e-3 // kg
			}
			out = append(out, printed{v * scale, 0.5 * math.Pow(10, -float64(len(m[2]))) * scale})
		}
		return out
	}
	t.Fatalf("no line with %q", label)
	return nil
}

// closedForm is a printed figure and its closed form: the k-th number
// after label equals want within the print's rounding and rel.
type closedForm struct {
	label  string
	k      int
	want   float64
	rel    float64
	source string
}

// checkClosedForms checks each closed form against the golden file name.
func checkClosedForms(t *testing.T, name string, forms []closedForm) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("testdata", "golden", name+".txt"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	for _, f := range forms {
		figs := figuresAfter(t, lines, f.label)
		if f.k >= len(figs) {
			t.Errorf("%s: %q has %d numbers, want number %d", name, f.label, len(figs), f.k+1)
			continue
		}
		got := figs[f.k]
		if math.Abs(got.v-f.want) > got.half+f.rel*math.Abs(f.want) {
			t.Errorf("%s: %q prints %g, closed form %g (± %g rounding, %g relative; %s)", name, f.label, got.v, f.want, got.half, f.rel, f.source)
		}
	}
}

// loadDemo reads a demo scenario (SI).
func loadDemo(t *testing.T, file string) *coilkick.Scenario {
	t.Helper()
	sc, err := coilkick.Load(filepath.Join("../../scenarios", file))
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// coilResistance is the coil's resistance at its temperature: R(T) =
// R_ref·(1 + α·(T − T_ref)), IEC 60028 (α = 0.00393 /K for copper at
// 20 °C, the scenario's default).
func coilResistance(c coilkick.CoilSpec) float64 {
	return c.Resistance * (1 + c.TempCoeff*(c.Temperature-c.RefTemperature))
}

// gapLawForce is the pull of the linear gap law L(x) = 1/(a + b·x) through
// the closed and open inductances at the seated and rest gaps: F =
// ½·i²·dL/dx magnitude = ½·i²·b·L(x)² (co-energy principle, Fitzgerald &
// Kingsley, Electric Machinery, ch. 3).
func gapLawForce(sc *coilkick.Scenario, i, x float64) float64 {
	m, p := sc.Magnet, sc.Plunger
	b := (1/m.OpenInductance - 1/m.ClosedInductance) / (p.RestGap - p.SeatedGap)
	a := 1/m.ClosedInductance - b*p.SeatedGap
	l := 1 / (a + b*x)
	return 0.5 * i * i * b * l * l
}

// springAndLoad is the passive force at rest at gap x: the spring by
// Hooke's law from its preload at the rest gap, and the orifice load p·A
// (force of a uniform pressure on a flat area) fading linearly to zero
// over the seal travel from the rest gap (mech.OrificeLoad: common
// practice, no source).
func springAndLoad(p coilkick.PlungerSpec, x float64) float64 {
	f := p.SpringPreload + p.SpringRate*(p.RestGap-x) + p.ConstantLoad
	if lift := p.RestGap - x; p.Pressure > 0 && lift < p.SealTravel {
		f += p.Pressure * p.OrificeArea * (1 - math.Max(lift, 0)/p.SealTravel)
	}
	return f
}

// clampDecay is the decay of the coil current I0 through a constant
// inductance L and loop resistance R against a constant opposing voltage
// Vc (the clamp's voltage less the supply's, or a diode's drop): i(t) =
// (I0 + Ic)·e^(−t/τ) − Ic with τ = L/R and Ic = Vc/R (first-order RL
// circuit, any circuits textbook). It returns the conduction time t0 =
// τ·ln(1 + I0/Ic), the charge ∫i dt = τ·(I0 − Ic·ln(1 + I0/Ic)) and ∫i² dt.
func clampDecay(l, r, vc, i0 float64) (t0, charge, i2 float64) {
	tau, ic := l/r, vc/r
	t0 = tau * math.Log(1+i0/ic)
	charge = tau * (i0 - ic*math.Log(1+i0/ic))
	a := i0 + ic
	i2 = a*a*tau/2*(1-math.Exp(-2*t0/tau)) - 2*a*ic*tau*(1-math.Exp(-t0/tau)) + ic*ic*t0
	return t0, charge, i2
}

// TestGoldenClosedForms: each figure of the golden files with a closed
// form in the scenario's inputs is that closed form (see closedForm's
// tolerances and each row's source).
func TestGoldenClosedForms(t *testing.T) {
	t.Parallel()
	const (
		ohm      = "RL step's steady state V/(R(T) + R_on + R_source) (Ohm's law, any circuits textbook; R(T) by IEC 60028, α = 0.00393 /K)"
		joule    = "Joule's law P = I²·R"
		coEnergy = "pull ½·i²·b·L² of the gap law (co-energy, Fitzgerald & Kingsley ch. 3) ÷ spring + load at the seat (Hooke's law)"
	)
	t.Run("irrigation-run", func(t *testing.T) {
		t.Parallel()
		sc := loadDemo(t, "irrigation-valve.yaml")
		v, r, ron := sc.Supply.Voltage, coilResistance(sc.Coil), sc.Switch.OnResistance
		i := v / (r + ron + sc.Supply.SourceResistance)
		su := sc.Suppression
		// Freewheel diode: the coil current goes on through the diode
		// (drop Vf, resistance Rd), the switch node one diode drop above
		// the rail (KVL); the diode takes Vf·∫i dt + Rd·∫i² dt.
		_, q, i2 := clampDecay(sc.Magnet.ClosedInductance, r+su.Resistance, su.ForwardDrop, i)
		checkClosedForms(t, "irrigation-run", []closedForm{
			{"peak current", 0, i, exactTol, ohm},
			{"hold current mean", 0, i, exactTol, ohm},
			{"hold current at end", 0, i, exactTol, ohm},
			{"hold current at end", 2, i, exactTol, ohm + " (V/R)"},
			{"supply current mean", 0, i, exactTol, ohm},
			{"peak supply current", 0, i, exactTol, ohm},
			{"current at turn-off", 0, i, exactTol, ohm},
			{"de-energize at", 0, i, exactTol, ohm},
			{"peak clamp current", 0, i, exactTol, "the freewheel diode takes the turn-off current at once (inductor current is continuous)"},
			{"coil power in hold", 0, i * i * r, exactTol, joule},
			{"coil power in hold", 1, v * v / r, exactTol, joule + " at full voltage, V²/R"},
			{"switch conduction power", 0, i * i * ron, exactTol, joule + " in R_on"},
			{"lowest rail voltage", 0, v - i*sc.Supply.SourceResistance, exactTol, "supply less the source resistance's drop"},
			{"highest rail voltage", 0, v, exactTol, "supply at zero current"},
			{"peak switch voltage", 0, v + su.ForwardDrop + i*su.Resistance, exactTol, "rail + diode drop + I·R_d at turn-off (KVL)"},
			{"hold force margin", 0, gapLawForce(sc, i, sc.Plunger.SeatedGap) / springAndLoad(sc.Plunger, sc.Plunger.SeatedGap), exactTol, coEnergy},
			{"clamp energy", 0, su.ForwardDrop*q + su.Resistance*i2, movingTol, "freewheel decay of the seated inductance (clampDecay)"},
		})
	})
	t.Run("door-latch-run", func(t *testing.T) {
		t.Parallel()
		sc := loadDemo(t, "door-latch.yaml")
		v, r, ron, rs := sc.Supply.Voltage, coilResistance(sc.Coil), sc.Switch.OnResistance, sc.Supply.SourceResistance
		i := v / (r + ron + rs)
		sw := sc.Switch
		// No suppression part: the switch avalanches at its breakdown
		// voltage; the coil (and source) see V − V_br; the switch takes
		// V_br·∫i dt.
		t0, q, _ := clampDecay(sc.Magnet.ClosedInductance, r+rs, sw.BreakdownVoltage-v, i)
		// The node capacitance rings with the coil: f = 1/(2π·√(L·C))
		// (LC resonance, any circuits textbook), between the seated and
		// the open gap's inductances.
		ring := func(l float64) float64 { return 1 / (2 * math.Pi * math.Sqrt(l*sw.OutputCapacitance)) }
		checkClosedForms(t, "door-latch-run", []closedForm{
			{"peak current", 0, i, exactTol, ohm},
			{"hold current mean", 0, i, exactTol, ohm},
			{"hold current at end", 0, i, exactTol, ohm},
			{"hold current at end", 2, i, exactTol, ohm + " (V/R)"},
			{"supply current mean", 0, i, exactTol, ohm},
			{"peak supply current", 0, i, exactTol, ohm},
			{"current at turn-off", 0, i, exactTol, ohm},
			{"de-energize at", 0, i, exactTol, ohm},
			{"coil power in hold", 0, i * i * r, exactTol, joule},
			{"coil power in hold", 1, v * v / r, exactTol, joule + " at full voltage, V²/R"},
			{"switch conduction power", 0, i * i * ron, exactTol, joule + " in R_on"},
			{"lowest rail voltage", 0, v - i*rs, exactTol, "supply less the source resistance's drop I·R_source"},
			{"highest rail voltage", 0, v, exactTol, "supply at zero current"},
			{"peak switch voltage", 0, sw.BreakdownVoltage, exactTol, "the avalanching switch holds its breakdown voltage"},
			{"lowest switch voltage", 0, -sw.BodyDiodeDrop, exactTol, "the body diode clamps the node one drop below ground"},
			{"avalanche energy", 0, sw.BreakdownVoltage * q, pulseTol, "V_br·∫i dt of the clamp decay (clampDecay)"},
			{"clamp conduction", 0, t0, pulseTol, "τ·ln(1 + I0/Ic) of the clamp decay (clampDecay)"},
			{"hold force margin", 0, gapLawForce(sc, i, sc.Plunger.SeatedGap) / springAndLoad(sc.Plunger, sc.Plunger.SeatedGap), exactTol, coEnergy},
		})
		data, err := os.ReadFile("testdata/golden/door-latch-run.txt")
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(string(data), "\n")
		// The avalanche's end in the event list (ms, 4 decimals).
		var end printed
		for _, l := range lines {
			if strings.Contains(l, "conduction through the switch avalanche ends") {
				end = figuresAfter(t, []string{l}, "")[0]
			}
		}
		if want := sc.Timing.DeenergizeAt + t0; math.Abs(end.v-want) > end.half+pulseTol*t0 {
			t.Errorf("avalanche ends at %g s, closed form %g s (de-energize + τ·ln(1 + I0/Ic))", end.v, want)
		}
		// The retired ring's frequency: the second number of its event.
		for _, l := range lines {
			if strings.Contains(l, "the switch node's ring") {
				f := figuresAfter(t, []string{l}, "ring (")[1]
				seated, open := ring(sc.Magnet.ClosedInductance), ring(sc.Magnet.OpenInductance)
				if f.v < seated-f.half || f.v > open+f.half || math.Abs(f.v-seated) > f.half+ringTol*seated {
					t.Errorf("ring at %g Hz, want between the LC frequencies %g Hz (seated) and %g Hz (open), within %g of the seated one", f.v, seated, open, ringTol)
				}
			}
		}
	})
	t.Run("dosing-magnet", func(t *testing.T) {
		t.Parallel()
		sc := loadDemo(t, "dosing-valve-geometry.yaml")
		b := sc.Coil.Build
		// AWG by ASTM B258: d = 0.127 mm·92^((36 − n)/39); turns fill the
		// winding window at the fill factor; copper by IEC 60028 (ρ20 =
		// 1/58 Ω·mm²/m, 8.89 g/cm³).
		d := 0.127e-3 * math.Pow(92, float64(36-b.WireGauge)/39)
		area := math.Pi * d * d / 4
		turns := math.Floor(b.FillFactor * (b.OuterDiameter - b.InnerDiameter) / 2 * b.Length / area)
		mlt := math.Pi * (b.InnerDiameter + b.OuterDiameter) / 2
		wire := turns * mlt
		r20 := wire / 58e6 / area
		v := sc.Supply.Voltage
		data, err := os.ReadFile("testdata/golden/dosing-magnet.txt")
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(string(data), "\n")
		lSeated := figuresAfter(t, lines, "inductance, seated gap")[0]
		lRest := figuresAfter(t, lines, "inductance, rest gap")[0]
		checkClosedForms(t, "dosing-magnet", []closedForm{
			{"turns", 0, turns, 0, "⌊fill factor × winding window ÷ wire area⌋, AWG diameter by ASTM B258"},
			{"mean turn length", 0, mlt, 0, "π·(inner + outer diameter)/2"},
			{"wire length", 0, wire, 0, "turns × mean turn length"},
			{"resistance at 20 degC", 0, r20, 0, "ρ20·ℓ/A, IEC 60028"},
			{"copper mass", 0, 8890 * area * wire, 0, "density × A × ℓ, IEC 60028"},
			{"rated current", 0, v / r20, 0, "supply ÷ R20 (Ohm's law)"},
			{"rated power", 0, v * v / r20, 0, "supply² ÷ R20"},
			// τ = L/R from the printed inductances: their rounding too.
			{"time constant L/R", 0, lSeated.v / r20, lSeated.half / lSeated.v, "L/R (RL circuit, any circuits textbook)"},
			{"time constant L/R", 1, lRest.v / r20, lRest.half / lRest.v, "L/R (RL circuit, any circuits textbook)"},
		})
		checkCoilFieldClosedForms(t, sc, lines, turns, v/r20)
	})
}

// checkCoilFieldClosedForms checks the dosing demo's "Coil field" block:
// the air-core figures against their formulas at the winding's turns and
// the rated current i, the printed ratios against the printed fields, and
// the printed gap flux density against the printed pull by Maxwell's
// formula.
func checkCoilFieldClosedForms(t *testing.T, sc *coilkick.Scenario, lines []string, turns, i float64) {
	t.Helper()
	const mu0 = 4 * math.Pi * 1e-7 // H/m, the SI value before 2019 (1e-9 from CODATA 2018)
	b := sc.Coil.Build
	r1, r2, l := b.InnerDiameter/2, b.OuterDiameter/2, b.Length
	const in = 0.0254
	a, c := (r1+r2)/2/in, (r2-r1)/in
	centre := figuresAfter(t, lines, "air-core centre flux density")[0]
	rel := func(p printed) float64 { return p.half / p.v }
	forms := []closedForm{
		{"Coil field at rated current", 0, i, 0, "supply ÷ R20 (Ohm's law)"},
		{"air-core centre flux density", 0, mu0 * turns * i / (2 * (r2 - r1)) * math.Log((r2+math.Hypot(r2, l/2))/(r1+math.Hypot(r1, l/2))), 0,
			"thick winding of uniform current density, µ0·J·r1·F(α, β) (Montgomery, Solenoid Magnet Design, 1969)"},
		{"air-core centre flux density", 1, mu0 * turns * i / math.Hypot(l, r1+r2), 0,
			"finite thin solenoid µ0·N·I/√(l² + d²) at the mean diameter (Griffiths, Introduction to Electrodynamics, ch. 5)"},
		{"air-core inductance", 0, 1e-6 * 0.8 * a * a * turns * turns / (6*a + 9*l/in + 10*c), 0,
			"Wheeler 1928, L[µH] = 0.8·a²·N²/(6a + 9b + 10c), inches"},
	}
	// The ratios: the printed gap field over the printed centre field
	// (their definition), within both prints' rounding.
	var gains []float64
	for k, at := range []string{"seated", "rest"} {
		gap := figuresAfter(t, lines, "gap flux density, "+at+" gap")[0]
		gains = append(gains, gap.v/centre.v)
		forms = append(forms,
			closedForm{"gap flux density, " + at + " gap", 1, gap.v / centre.v, rel(gap) + rel(centre), "gap field ÷ air-core centre field"},
			closedForm{"the iron circuit multiplies", k, gap.v / centre.v, rel(gap) + rel(centre), "gap field ÷ air-core centre field"})
	}
	checkClosedForms(t, "dosing-magnet", forms)
	// source: Maxwell's pull on a pole face F = B²·A/(2µ0) (Hayt & Buck,
	// Engineering Electromagnetics, the force on magnetic materials) with
	// A = π·d²/4, plus the fringing permeance's share 4·t·x/(d·(x + π·t))
	// of the network's pull (Roters' paths, magnet/reluctance.go; t the
	// radial room to the coil bore); 1 % for the table's pull (measured
	// 0.5 %, TestCoilFieldGeometry), the rest the prints' rounding.
	d := sc.Magnet.Geometry.PlungerDiameter
	tf := r1 - d/2
	for _, at := range []struct {
		name string
		x    float64
	}{{"seated", sc.Plunger.SeatedGap}, {"rest", sc.Plunger.RestGap}} {
		gap := figuresAfter(t, lines, "gap flux density, "+at.name+" gap")[0]
		pull := figuresAfter(t, lines, "pull at "+at.name+" gap, rated current")[0]
		want := gap.v * gap.v * math.Pi * d * d / 4 / (2 * mu0) * (1 + 4*tf*at.x/(d*(at.x+math.Pi*tf)))
		if tol := 2*rel(gap) + rel(pull) + 0.01; math.Abs(pull.v-want) > tol*want {
			t.Errorf("%s gap: pull %g N printed, Maxwell's pull of the printed %g T is %g N (tolerance %g)", at.name, pull.v, gap.v, want, tol)
		}
	}
	if !(gains[0] > gains[1] && gains[1] > 1) {
		t.Errorf("gap field ratios %v: want the seated above the rest gap's, both above 1", gains)
	}
}

// TestMagnetCurvesClosedForm: magnet --curves of the gap-law demo is the
// gap law's co-energy pull and the spring + load at each gap (README,
// magnet: current_A, gap_m, force_N, spring_and_load_N, 41 gaps from the
// seated to the rest gap per current, 10 significant digits); the --plot
// written with it is an SVG titled with the scenario's name, one legend
// entry per current and one for spring + load.
func TestMagnetCurvesClosedForm(t *testing.T) {
	t.Parallel()
	const demo = "irrigation-valve.yaml"
	sc := loadDemo(t, demo)
	dir := t.TempDir()
	curves, svg := filepath.Join(dir, "curves.csv"), filepath.Join(dir, "magnet.svg")
	currents := []float64{0.1, 0.25, 1.0 / 3}
	code, _, stderr := runCLI("magnet", filepath.Join("../../scenarios", demo), "--currents", "0.1, 250 mA, 0.3333333333333333", "--curves", curves, "--plot", svg)
	if code != exitOK {
		t.Fatalf("magnet: exit %d: %s", code, stderr)
	}
	f, err := os.Open(curves)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(rows[0], ",") != "current_A,gap_m,force_N,spring_and_load_N" || len(rows)-1 != len(currents)*curveGaps {
		t.Fatalf("header %q, %d rows; want current_A,gap_m,force_N,spring_and_load_N and %d rows", rows[0], len(rows)-1, len(currents)*curveGaps)
	}
	const csvTol = 1e-9 // 10 significant digits (num)
	near := func(got, want float64) bool { return math.Abs(got-want) <= csvTol*math.Abs(want)+1e-15 }
	for k, r := range rows[1:] {
		var cell [4]float64
		for j := range cell {
			cell[j], _ = strconv.ParseFloat(r[j], 64)
		}
		i, x := currents[k/curveGaps], cell[1]
		if g := k % curveGaps; (g == 0 && !near(x, sc.Plunger.SeatedGap)) || (g == curveGaps-1 && !near(x, sc.Plunger.RestGap)) {
			t.Errorf("row %d: gap %g m; the curves run from the seated %g m to the rest gap %g m", k+1, x, sc.Plunger.SeatedGap, sc.Plunger.RestGap)
		}
		if !near(cell[0], i) || !near(cell[2], gapLawForce(sc, i, x)) || !near(cell[3], springAndLoad(sc.Plunger, x)) {
			t.Errorf("row %d: %q; want current %g A, pull %.10g N (½·i²·b·L², co-energy), spring + load %.10g N (Hooke + p·A)",
				k+1, r, i, gapLawForce(sc, i, x), springAndLoad(sc.Plunger, x))
		}
	}
	data, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	fig := parseSVG(t, data)
	if len(fig.texts) == 0 || fig.texts[0] != "Magnetic pull versus air gap — "+sc.Name {
		t.Errorf("SVG title %q, want the scenario's name", fig.texts)
	}
	amps := 0
	for _, s := range fig.texts {
		if strings.HasSuffix(s, " A") {
			amps++
		}
	}
	if amps != len(currents) || !strings.Contains(strings.Join(fig.texts, "\n"), "spring + load") {
		t.Errorf("SVG legend %q: want one entry per current (%d) and spring + load", fig.texts, len(currents))
	}
}
