package coilkick

import (
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"coilkick/circuit"
)

func TestE24(t *testing.T) {
	t.Parallel()
	// source: IEC 60063:2015, E24 series (table 1).
	want := []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
		3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
	if !reflect.DeepEqual(E24, want) {
		t.Fatalf("E24 = %v, want %v", E24, want)
	}
	// The standard's values are not round(10^(i/24)) to two digits at
	// exactly these: 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2.
	var differ []float64
	for i, v := range E24 {
		if r := math.Round(math.Pow(10, float64(i)/24)*10) / 10; r != v {
			differ = append(differ, v)
		}
	}
	if w := []float64{2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}; !reflect.DeepEqual(differ, w) {
		t.Errorf("E24 values that differ from round(10^(i/24)): %v, want %v", differ, w)
	}
	if got := E24Values(10, 40); !reflect.DeepEqual(got, []float64{10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39}) {
		t.Errorf("E24Values(10, 40) = %v", got)
	}
}

func TestClampComparisonClosedForms(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 48.0, 0.1
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	md.Drive.Switch.BreakdownVoltage = 100
	cmp, err := CompareClamps(md)
	if err != nil {
		t.Fatal(err)
	}
	i0 := v0 / r * (1 - math.Exp(-md.Timing.DeenergizeAt*r/l))
	checked := 0
	for _, o := range cmp.Options {
		// source: decay against a constant voltage V, t0 = (L/R)·ln(1 + I0·R/V)
		// (first-order circuit theory): V is the clamp's drop across the coil,
		// the switch clamp's voltage less the supply, or the supply plus two
		// bridge diodes for reverse drive.
		var vEff float64
		switch o.Suppressor.Kind {
		case circuit.Freewheel, circuit.DiodeZener, circuit.TVS:
			vEff = o.Suppressor.Voltage
		case circuit.SwitchClamp:
			vEff = o.Suppressor.Voltage - v0
		case circuit.Bridge:
			vEff = v0 + 2*o.Suppressor.Voltage
		default:
			continue
		}
		if o.Err != "" {
			t.Errorf("%s: %s", o.Name, o.Err)
			continue
		}
		want := l / r * math.Log(1+i0*r/vEff)
		if e := math.Abs(o.Decay.Seconds-want) / want; !o.Decay.Happened || e > 1e-6 {
			t.Errorf("%s: decay %.9g s, want %.9g s", o.Name, o.Decay.Seconds, want)
		}
		checked++
	}
	if checked < 5 {
		t.Errorf("only %d options checked", checked)
	}
}

func TestSolveForConsistency(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// Lowest supply: just above pulls in, just below does not.
	s, err := LowestSupply(md, 0)
	if err != nil || !s.Found {
		t.Fatalf("LowestSupply: %+v, %v", s, err)
	}
	step := 2 * SolveRel
	pulls := func(v float64) bool {
		r, err := Simulate(md, &Options{NoTrace: true, SupplyVoltage: v})
		return err == nil && r.Metrics.PullIn.Happened
	}
	if !pulls(s.Value*(1+step)) || pulls(s.Value*(1-step)) {
		t.Errorf("lowest supply %.4g V: pulls in at +%g: %v, at −%g: %v", s.Value, step, pulls(s.Value*(1+step)), step, pulls(s.Value*(1-step)))
	}
	// Lowest hold current of the peak-and-hold demo, with a margin.
	ph, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	ph.Timing.DeenergizeAt, ph.Timing.End = 0.15, 0.2
	const margin = 1.2
	h, err := LowestHold(ph, margin)
	if err != nil || !h.Found {
		t.Fatalf("LowestHold: %+v, %v", h, err)
	}
	holds := func(i float64) bool {
		v := *ph
		v.Control.HoldCurrent = i
		r, err := Simulate(&v, &Options{NoTrace: true})
		return err == nil && !r.Metrics.DropOut.Happened && r.Metrics.Hold.ForceMargin >= margin
	}
	if !holds(h.Value*(1+step)) || holds(h.Value*(1-step)) {
		t.Errorf("lowest hold %.4g A: holds at +%g: %v, at −%g: %v", h.Value, step, holds(h.Value*(1+step)), step, holds(h.Value*(1-step)))
	}
	// Lowest Zener voltage for a release requirement that needs a clamp.
	pa, err := LoadModel("scenarios/process-air-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	pa.Limits.MaxRelease = 3e-3
	z, err := LowestClamp(pa)
	if err != nil || !z.Found || !(z.Value > 1) {
		t.Fatalf("LowestClamp: %+v, %v", z, err)
	}
	meets := func(vz float64) bool {
		v := *pa
		v.Drive.Suppressor.Voltage = pa.DiodeDrop + vz
		r, err := Simulate(&v, &Options{NoTrace: true})
		return err == nil && r.Metrics.Release.Happened && r.Metrics.Release.Seconds <= pa.Limits.MaxRelease
	}
	if !meets(z.Value*(1+step)) || meets(z.Value*(1-step)) {
		t.Errorf("lowest Zener %.4g V: meets at +%g: %v, at −%g: %v", z.Value, step, meets(z.Value*(1+step)), step, meets(z.Value*(1-step)))
	}
}

func TestSweepDeterministic(t *testing.T) {
	t.Parallel()
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	v1, _ := ParseVary("supply.voltage=22 V:28 V:7")
	v2, _ := ParseVary("plunger.mass=5 g,8 g,12 g")
	vs := []Vary{v1, v2}
	one := sw.Sweep(vs, 1, nil)
	many := sw.Sweep(vs, 3, nil)
	if len(one) != 21 || !reflect.DeepEqual(one, many) {
		t.Fatalf("sweep on 1 worker and on 3 differ (or wrong size %d)", len(one))
	}
	if one[0].Values[0] != "22 V" || one[1].Values[1] != "8 g" || one[0].Err != "" {
		t.Errorf("grid order: %+v %+v", one[0], one[1])
	}
	// More supply, faster pull-in (same mass).
	if !(one[18].Figures.PullIn.Seconds < one[0].Figures.PullIn.Seconds) {
		t.Errorf("pull-in at 28 V %g s not below 22 V %g s", one[18].Figures.PullIn.Seconds, one[0].Figures.PullIn.Seconds)
	}
	if _, err := ParseVary("supply.voltage=18 V:30 A:3"); err == nil {
		t.Error("mixed units accepted")
	}
	if _, err := sw.Model([]Vary{{Key: "supply.volts", Values: []string{"3 V"}}}, []string{"3 V"}); err == nil {
		t.Error("unknown key accepted")
	}
}

func TestCornersFindHotLowCorner(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	tol := Tolerances{Supply: 0.1, HotWinding: 373.15} // ±10 %, hot coil at 100 °C
	pull := func(s, temp float64) float64 {
		r, err := Simulate(md, &Options{NoTrace: true, SupplyVoltage: md.Drive.Supply.Voltage * (1 + s), FixedTemperature: temp})
		if err != nil || !r.Metrics.PullIn.Happened {
			t.Fatalf("pull-in at %+g, %g K: %v", s, temp, err)
		}
		return r.Metrics.PullIn.Seconds
	}
	hotLow := pull(-0.1, 373.15)
	others := math.Max(math.Max(pull(0.1, 373.15), pull(-0.1, md.Temperature)), pull(0.1, md.Temperature))
	if !(hotLow > others) {
		t.Fatalf("hot/low pull-in %g s is not the slowest (%g s)", hotLow, others)
	}
	md.Limits.MaxPullIn = 0.5 * (hotLow + others) // fails only at hot/low
	res, err := Corners(md, tol, 0, 1)
	if err != nil {
		t.Fatal(err)
	}
	const want = "supply -10 %, winding 100 degC"
	for _, c := range res.Checks {
		if c.Name != "pull-in time" {
			continue
		}
		if c.Pass || len(c.Failing) != 1 || c.Failing[0] != want || c.Corner != want {
			t.Errorf("pull-in check %+v; want failing only at %q", c, want)
		}
		return
	}
	t.Error("no pull-in check")
}

func TestMonteCarloRepeatable(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	tol := Tolerances{Supply: 0.1, CoilResistance: 0.07, Spring: 0.1, Load: 0.2, Ambient: 20}
	a, err := Corners(md, tol, 20, 7)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Corners(md, tol, 20, 7)
	if err != nil {
		t.Fatal(err)
	}
	if a.Yield != b.Yield || len(a.Corners) != 32 {
		t.Errorf("yield %g vs %g with the same seed; %d corners (want 2^4·2)", a.Yield, b.Yield, len(a.Corners))
	}
}

// A 1000-point sweep of the 24 V demo (design target: under 3 s on 2 cores).
func BenchmarkSweep1000(b *testing.B) {
	sw, err := NewSweeper("scenarios/irrigation-valve.yaml")
	if err != nil {
		b.Fatal(err)
	}
	v1, _ := ParseVary("supply.voltage=18 V:30 V:40")
	v2, _ := ParseVary("plunger.spring preload=1 N:3 N:25")
	vs := []Vary{v1, v2}
	for b.Loop() {
		t0 := time.Now()
		sw.Sweep(vs, 1, nil)
		one := time.Since(t0)
		t0 = time.Now()
		sw.Sweep(vs, 0, nil)
		all := time.Since(t0)
		b.ReportMetric(one.Seconds(), "s-1worker")
		b.ReportMetric(all.Seconds(), "s-allcores")
		b.ReportMetric(one.Seconds()/all.Seconds(), "speedup")
	}
}

// A 1000-point sweep of the irrigation valve with a 400 pF switch
// capacitance (target: under 2 s on 2 cores).
func BenchmarkSweep1000Irrigation400pF(b *testing.B) {
	data, err := os.ReadFile("scenarios/irrigation-valve.yaml")
	if err != nil {
		b.Fatal(err)
	}
	text := strings.Replace(string(data), "  on resistance: 40 mohm\n", "  on resistance: 40 mohm\n  output capacitance: 400 pF\n", 1)
	path := filepath.Join(b.TempDir(), "irrigation-400pF.yaml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		b.Fatal(err)
	}
	sw, err := NewSweeper(path)
	if err != nil {
		b.Fatal(err)
	}
	v1, _ := ParseVary("supply.voltage=18 V:30 V:40")
	v2, _ := ParseVary("plunger.spring preload=1 N:3 N:25")
	vs := []Vary{v1, v2}
	for b.Loop() {
		for _, p := range sw.Sweep(vs, 0, nil) {
			if p.Err != "" {
				b.Fatal(p.Err)
			}
		}
	}
}

func TestClampRecommendation(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/process-air-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md.Limits.MaxRelease = 3e-3 // a freewheel diode (7.4 ms) no longer meets it
	cmp, err := CompareClamps(md)
	if err != nil {
		t.Fatal(err)
	}
	if cmp.Recommended < 0 {
		t.Fatal("no recommendation")
	}
	r := cmp.Options[cmp.Recommended]
	if !r.MeetsRelease || !r.WithinRating || r.Suppressor.Kind == circuit.Bridge || r.Suppressor.Kind == circuit.Freewheel {
		t.Fatalf("recommended %+v", r)
	}
	// The documented rule: no other qualifying part stresses the switch
	// less by more than the band.
	for _, o := range cmp.Options {
		if o.Err == "" && o.MeetsRelease && o.WithinRating && o.Suppressor.Kind != circuit.Bridge &&
			o.PeakSwitchVoltage*(1+ClampStressBand) < r.PeakSwitchVoltage {
			t.Errorf("%s (%g V) stresses the switch less than the recommended %s (%g V)", o.Name, o.PeakSwitchVoltage, r.Name, r.PeakSwitchVoltage)
		}
	}
	t.Logf("recommended %s: release %.3g ms, %g V", r.Name, r.Release.Seconds*1e3, r.PeakSwitchVoltage)
}
