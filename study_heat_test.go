package coilkick

import (
	"math"
	"os"
	"strings"
	"testing"
	"time"

	"coilkick/circuit"
	"coilkick/magnet"
)

// thermalFixed is fixedModel with a one-node thermal network of the given
// resistance (K/W) and time constant (s), at ambient ta (K).
func thermalFixed(t *testing.T, v0, r, l, rth, tau, ta float64) *Model {
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	th, err := magnet.FromRating(rth, 1, tau)
	if err != nil {
		t.Fatal(err)
	}
	md.Thermal, md.Ambient, md.Temperature = &th, ta, ta
	md.Coil.RefTemperature = ta // R = r at the ambient
	return md
}

func TestConstantVoltageSelfLimiting(t *testing.T) {
	t.Parallel()
	const v0, r, l, rth, tau, ta = 24.0, 24.0, 0.05, 20.0, 0.5, 293.15
	md := thermalFixed(t, v0, r, l, rth, tau, ta)
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 20 * tau, End: 20*tau + 1e-7}
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	// source: steady state of C dT/dt = V²/(R0(1 + αθ)) − θ/Rth, θ = T − Ta
	// (lumped thermal node, Newton's cooling; copper R(T), IEC 60028):
	// αθ² + θ − Rth·V²/R0 = 0, θ = (−1 + √(1 + 4α·Rth·V²/R0))/(2α).
	a := md.Coil.TempCoeff
	theta := (-1 + math.Sqrt(1+4*a*rth*v0*v0/r)) / (2 * a)
	got := res.Metrics.Hold.MaxCurrent
	wantI := v0 / (r * (1 + a*theta))
	if e := math.Abs(res.Metrics.FinalWindingTemperature-(ta+theta)) - 0; e > 1e-3 {
		t.Errorf("constant voltage: final winding %.6f K, want %.6f K", res.Metrics.FinalWindingTemperature, ta+theta)
	}
	if e := math.Abs(res.Metrics.CurrentAtTurnOff-wantI) / wantI; e > 1e-5 {
		t.Errorf("constant voltage: current %.9g A, want %.9g A (hot coil)", res.Metrics.CurrentAtTurnOff, wantI)
	}
	// Self-limiting: the power at the end is below the cold power V²/R0.
	if pEnd := v0 * res.Metrics.CurrentAtTurnOff; !(pEnd < v0*v0/r) || got > v0/r {
		t.Errorf("constant voltage should draw less power hot: %g W vs %g W cold", pEnd, v0*v0/r)
	}
}

func TestConstantCurrentNotSelfLimiting(t *testing.T) {
	t.Parallel()
	const v0, r, l, rth, tau, ta = 48.0, 24.0, 0.05, 5.0, 0.1, 293.15
	const ih = 0.8 // regulated with a 20 mA band: R·mean(i²) exceeds R·I² by band²/12, 5e-5 relative
	md := thermalFixed(t, v0, r, l, rth, tau, ta)
	md.Control = circuit.Control{Mode: circuit.PeakHold, PeakCurrent: ih, PeakTime: 1e-3, HoldCurrent: ih,
		Regulation: circuit.Hysteresis, Band: 0.02}
	md.Drive.Recirc = circuit.Recirculation{Drop: 0.7}
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 20 * tau, End: 20*tau + 1e-7}
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	// source: steady state of C dT/dt = I²R0(1 + αθ) − θ/Rth (same model):
	// θ = Rth·I²R0/(1 − α·Rth·I²R0), finite only while α·Rth·I²R0 < 1
	// (beyond, thermal runaway). The regulated current is the band's mean.
	a := md.Coil.TempCoeff
	k := rth * ih * ih * r
	theta := k / (1 - a*k)
	if e := math.Abs(res.Metrics.FinalWindingTemperature - (ta + theta)); e > 0.05 {
		t.Errorf("constant current: final winding %.4f K, want %.4f K", res.Metrics.FinalWindingTemperature, ta+theta)
	}
	// Not self-limiting: the coil loss rises with temperature.
	if p := res.Metrics.Hold.CoilPower; !(p > ih*ih*r) {
		t.Errorf("constant current: hot coil power %g W, want above the cold %g W", p, ih*ih*r)
	}
}

func TestHeatShortcutMatchesBruteForce(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// A short case: a fast thermal node (τ = 30 s) and 40 cycles of 2 s.
	th, err := magnet.FromRating(80, 10, 30)
	if err != nil {
		t.Fatal(err)
	}
	md.Thermal = &th
	pat := DutyPattern{OnTime: 0.6, Period: 2, Duration: 80}
	short, err := Heat(md, pat)
	if err != nil {
		t.Fatal(err)
	}
	// Brute force: every cycle simulated in full with the thermal state in
	// the coupled equations (resistance following the temperature within
	// each cycle), chained cycle to cycle.
	tw, thh := md.Ambient, md.Ambient
	var peak float64
	for c := 0; c < 40; c++ {
		res, err := Simulate(md, &Options{NoTrace: true, WindingTemperature: tw, HousingTemperature: thh,
			Energize: 0, Deenergize: pat.OnTime, End: pat.Period})
		if err != nil {
			t.Fatal(err)
		}
		// peak: the winding at the de-energize command, from a second run
		// ending there (the release transient is short)
		on, err := Simulate(md, &Options{NoTrace: true, WindingTemperature: tw, HousingTemperature: thh,
			Energize: 0, Deenergize: pat.OnTime * (1 - 1e-9), End: pat.OnTime})
		if err != nil {
			t.Fatal(err)
		}
		peak = on.Metrics.FinalWindingTemperature
		tw, thh = res.Metrics.FinalWindingTemperature, res.Metrics.FinalHousingTemperature
	}
	// The design's bar: the shortcut within 0.5 K of brute force.
	if d := math.Abs(short.Peak - peak); d > 0.5 {
		t.Errorf("shortcut peak %.3f K, brute force %.3f K (diff %.3f K)", short.Peak, peak, d)
	}
	if d := math.Abs(short.Valley - tw); d > 0.5 {
		t.Errorf("shortcut valley %.3f K, brute force %.3f K (diff %.3f K)", short.Valley, tw, d)
	}
	t.Logf("after 40 cycles: peak %.4f vs %.4f K, valley %.4f vs %.4f K", short.Peak, peak, short.Valley, tw)
}

func TestHeatDemo(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Heat(md, DutyPattern{OnTime: 1.25, Period: 5})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Steady || !(res.Peak < res.Limit) || !res.HeldToLimit.Happened {
		t.Errorf("demo: steady %v, peak %.1f K vs limit %.1f K, held to limit %+v", res.Steady, res.Peak, res.Limit, res.HeldToLimit)
	}
	// The largest allowed duty puts the periodic peak on the class limit.
	if !(res.MaxRelativeOnTime > 0.25 && res.MaxRelativeOnTime < 1) {
		t.Fatalf("max relative on-time %g", res.MaxRelativeOnTime)
	}
	at, err := Heat(md, DutyPattern{OnTime: res.MaxRelativeOnTime * 5, Period: 5})
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(at.Peak - res.Limit); d > 0.5 {
		t.Errorf("at the largest duty the peak is %.2f K, the limit %.2f K", at.Peak, res.Limit)
	}
	// source: steady state of a lumped thermal node (Newton's cooling,
	// C dT/dt = P − θ/Rth): θ = Rth·P, with P the coil loss at the winding
	// temperature, solved self-consistently (fixed-point iteration): held
	// on, P = V²·R/(R + Ron)²; at relative on-time D, the cycle mean
	// D·P (the 12 min time constant is far above the 5 s period). Copper:
	// R = R20·(1 + α(T − 20 °C)), α = 0.00393 /K (IEC 60028). The figures
	// are the scenario's: 24 V, R20 = 24 Ω, Ron = 50 mΩ, Rth = 80 K/10 W
	// (its thermal rating), ambient 40 °C. Held on, the study's hold power
	// is interpolated on a 5 K grid (relative error below 1e-4 for 1/R(T)),
	// hence 0.02 K; the duty cycle's mean differs by the inductive rise and
	// decay at each edge (L/R ≈ 3 ms against 1.25 s on: a few tenths of a
	// percent of the loss), hence 1 % of the rise.
	const alpha, r20, t20, supply, ron, rth = 0.00393, 24.0, 293.15, 24.0, 0.05, 80.0 / 10
	closedRise := func(duty float64) float64 {
		theta := 0.0
		for range 100 {
			r := r20 * (1 + alpha*(md.Ambient+theta-t20))
			theta = rth * duty * supply * supply * r / ((r + ron) * (r + ron))
		}
		return theta
	}
	if want, got := closedRise(1), res.HeldSteady-md.Ambient; math.Abs(got-want) > 0.02 {
		t.Errorf("held on: steady rise %.4f K, closed form %.4f K", got, want)
	}
	if want, got := closedRise(0.25), res.Mean-md.Ambient; math.Abs(got-want) > 0.01*want {
		t.Errorf("25 %% duty: mean rise %.4f K, closed form %.4f K", got, want)
	}
	// Hot and at the low supply it still pulls in; the lowest supply that
	// does is below the low supply.
	if !res.HotPullInLow.Happened || !(res.LowestPullInSupply < md.LowSupply) {
		t.Errorf("hot pull-in at low supply %+v, lowest supply %g V", res.HotPullInLow, res.LowestPullInSupply)
	}
}

// An 8-hour duty-cycle study at one operation every 5 s: target under 1 s.
func BenchmarkHeat8h(b *testing.B) {
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Heat(md, DutyPattern{OnTime: 1.25, Period: 5, Duration: 8 * 3600}); err != nil {
			b.Fatal(err)
		}
	}
}

func TestHeatSegments(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	th, err := magnet.FromRating(80, 10, 30) // a fast node for a short brute-force check
	if err != nil {
		t.Fatal(err)
	}
	md.Thermal = &th
	// The same pattern written both ways gives the same study.
	a, err := Heat(md, DutyPattern{OnTime: 0.6, Period: 2, Duration: 60})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Heat(md, DutyPattern{Segments: []DutySegment{{true, 0.6}, {false, 1.4}}, Duration: 60})
	if err != nil {
		t.Fatal(err)
	}
	if a.Peak != b.Peak || a.Valley != b.Valley || a.MaxRelativeOnTime != b.MaxRelativeOnTime {
		t.Errorf("on time/period %.6f/%.6f K vs segments %.6f/%.6f K", a.Peak, a.Valley, b.Peak, b.Valley)
	}
	// An irregular cycle against brute force (chained full simulations of
	// each on segment and its following off segment).
	segs := []DutySegment{{true, 0.5}, {false, 0.5}, {true, 0.3}, {false, 1.7}}
	short, err := Heat(md, DutyPattern{Segments: segs, Duration: 30 * 3})
	if err != nil {
		t.Fatal(err)
	}
	tw, thh := md.Ambient, md.Ambient
	var peak float64
	for c := 0; c < 30; c++ {
		peak = math.Inf(-1)
		for k := 0; k < len(segs); k += 2 {
			on, off := segs[k].Duration, segs[k+1].Duration
			r, err := Simulate(md, &Options{NoTrace: true, WindingTemperature: tw, HousingTemperature: thh, Energize: 0, Deenergize: on, End: on + off})
			if err != nil {
				t.Fatal(err)
			}
			p, err := Simulate(md, &Options{NoTrace: true, WindingTemperature: tw, HousingTemperature: thh, Energize: 0, Deenergize: on * (1 - 1e-9), End: on})
			if err != nil {
				t.Fatal(err)
			}
			peak = math.Max(peak, p.Metrics.FinalWindingTemperature)
			tw, thh = r.Metrics.FinalWindingTemperature, r.Metrics.FinalHousingTemperature
		}
	}
	if d := math.Abs(short.Peak - peak); d > 0.5 {
		t.Errorf("segments: shortcut peak %.3f K, brute force %.3f K", short.Peak, peak)
	}
	if d := math.Abs(short.Valley - tw); d > 0.5 {
		t.Errorf("segments: shortcut valley %.3f K, brute force %.3f K", short.Valley, tw)
	}
	t.Logf("segments after 30 cycles: peak %.4f vs %.4f K, valley %.4f vs %.4f K", short.Peak, peak, short.Valley, tw)
	if r := (DutyPattern{Segments: segs}).RelativeOnTime(); math.Abs(r-0.8/3) > 1e-15 {
		t.Errorf("relative on-time %g, want %g", r, 0.8/3)
	}
}

func TestLoadDutySegments(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	seg := strings.Replace(string(good), "  on time: 1.25 s\n  period: 5 s\n", "  segments: [\"1 s on\", \"2 s off\", \"500 ms on\", \"6.5 s off\"]\n", 1)
	s, err := Parse([]byte(seg), "scenarios/d.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Duty.Segments) != 4 || s.Duty.Segments[2] != (DutySegment{true, 0.5}) {
		t.Errorf("segments %+v", s.Duty.Segments)
	}
	md, err := Build(s)
	if err != nil {
		t.Fatal(err)
	}
	// The model carries the cycle: 1 + 2 + 0.5 + 6.5 s, 15 % on.
	if md.Duty == nil || md.Duty.CycleTime() != 10 || math.Abs(md.Duty.RelativeOnTime()-0.15) > 1e-15 {
		t.Errorf("model duty %+v", md.Duty)
	}
	for _, c := range []struct{ seg, want string }{
		{`["1 s on", "2 s up"]`, `end in "on" or "off"`},
		{`["1 s on"]`, "at least one on and one off"},
		{`["1 V on", "1 s off"]`, "expected a time"},
		{`"1 s on"`, "expected a list"},
	} {
		text := strings.Replace(string(good), "  on time: 1.25 s\n  period: 5 s\n", "  segments: "+c.seg+"\n", 1)
		if _, err := Parse([]byte(text), "d.yaml"); err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "d.yaml:") {
			t.Errorf("segments %s: error %v, want one containing %q", c.seg, err, c.want)
		}
	}
}

// TestHeatSteadyStateOneDefinition: "steady", "settled after" and the
// steady-state peak follow one definition (HeatResult), checked against
// the closed form of a single thermal node driven by a rectangular pulse
// train, whether the study ends before, after or at the steady state.
func TestHeatSteadyStateOneDefinition(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const rth, tau, on, period = 8.0, 1200.0, 1.25, 5.0 // K/W, s, s, s
	th, err := magnet.FromRating(rth, 1, tau)
	if err != nil {
		t.Fatal(err)
	}
	md.Thermal = &th
	md.Coil.TempCoeff = 0 // the cycle loss no longer depends on the temperature: a constant-power pulse train
	// The loss of one cycle, simulated as the study does (energize at 0,
	// de-energize at the on-time, then the release until the scenario's
	// end), applied as a constant power over the on-time.
	cyc, err := Simulate(md, &Options{NoTrace: true, FixedTemperature: md.Ambient, Energize: 0, Deenergize: on,
		End: on + md.Timing.End - md.Timing.DeenergizeAt})
	if err != nil {
		t.Fatal(err)
	}
	p := (cyc.Metrics.CoilLoss + cyc.Metrics.EddyLoss) / on
	// source: first-order RC network under a periodic rectangular pulse
	// train (any circuits textbook; the single-time-constant form of the
	// pulse-train thermal impedance in power-semiconductor datasheets):
	// from rest, the peak at the end of the n-th on-time is
	// θₙ = θ∞·(1 − qⁿ), q = e^(−T/τ), θ∞ = P·Rth·(1 − e^(−t_on/τ))/(1 − q).
	q := math.Exp(-period / tau)
	thetaInf := p * rth * (1 - math.Exp(-on/tau)) / (1 - q)
	// Settled: the first cycle from which every peak is within SteadyTol
	// of the steady peak, θ∞·qⁿ < SteadyTol.
	nSettled := int(math.Ceil(math.Log(thetaInf/SteadyTol) / (period / tau)))
	wantAfter := float64(nSettled) * period
	for _, c := range []struct {
		name     string
		duration float64 // s
		steady   bool
	}{
		{"ends before the steady state", 130 * 60, false}, // settles after about 170 min
		{"ends after it", 5 * 3600, true},
		{"until the steady state", 0, true},
	} {
		r, err := Heat(md, DutyPattern{OnTime: on, Period: period, Duration: c.duration})
		if err != nil {
			t.Fatal(err)
		}
		end := float64(r.Cycles) * period
		if r.Steady != c.steady || r.Steady != (r.SteadyAfter <= end) {
			t.Errorf("%s: steady %v after %.0f s of study, settled after %.0f s; want steady %v", c.name, r.Steady, end, r.SteadyAfter, c.steady)
		}
		// The tolerance: one cycle (the closed form's n is rounded up).
		if d := math.Abs(r.SteadyAfter - wantAfter); d > period {
			t.Errorf("%s: settled after %.0f s, closed form %.0f s", c.name, r.SteadyAfter, wantAfter)
		}
		if d := math.Abs(r.SteadyPeak - (md.Ambient + thetaInf)); d > 1e-3 {
			t.Errorf("%s: steady peak %.5f K, closed form %.5f K", c.name, r.SteadyPeak, md.Ambient+thetaInf)
		}
		// The peak at the end of the study against the closed form.
		if want := md.Ambient + thetaInf*(1-math.Pow(q, float64(r.Cycles))); math.Abs(r.Peak-want) > 1e-3 {
			t.Errorf("%s: peak after %d cycles %.5f K, closed form %.5f K", c.name, r.Cycles, r.Peak, want)
		}
		t.Logf("%s: %d cycles, steady %v, settled after %.0f s (closed form %.0f s), steady peak %.5f K (closed form %.5f K)",
			c.name, r.Cycles, r.Steady, r.SteadyAfter, wantAfter, r.SteadyPeak, md.Ambient+thetaInf)
		// The history agrees with the statement: from SteadyAfter on every
		// peak is within SteadyTol of the steady peak, the cycle before is not.
		for _, h := range r.History {
			inside := math.Abs(h.Peak-r.SteadyPeak) < SteadyTol
			if after := h.Time >= r.SteadyAfter; after != inside && h.Time >= r.SteadyAfter-period {
				t.Errorf("%s: cycle %d ends at %.0f s, peak %.5f K, steady peak %.5f K, settled after %.0f s", c.name, h.Cycle, h.Time, h.Peak, r.SteadyPeak, r.SteadyAfter)
			}
		}
	}
}

// TestHeatHistoryEveryCycle: the history (the CSV of `coilkick heat`) has
// one point per cycle of the study, up to MaxHistory cycles, as documented.
func TestHeatHistoryEveryCycle(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r, err := Heat(md, DutyPattern{OnTime: 1.25, Period: 5, Duration: 8 * 3600})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.History) != 5760 || r.Cycles != 5760 || r.HistoryStride != 1 {
		t.Fatalf("8 h of 5 s cycles: %d history points, %d cycles, stride %d; want 5760, 5760, 1", len(r.History), r.Cycles, r.HistoryStride)
	}
	for k, h := range r.History {
		if h.Cycle != k+1 || h.Time != float64(k+1)*5 {
			t.Fatalf("history point %d: cycle %d at %g s, want cycle %d at %g s", k, h.Cycle, h.Time, k+1, float64(k+1)*5)
		}
	}
	// Beyond MaxHistory cycles: every second cycle and the last.
	long, err := Heat(md, DutyPattern{OnTime: 0.25, Period: 1, Duration: 1.5 * MaxHistory})
	if err != nil {
		t.Fatal(err)
	}
	n := len(long.History)
	if long.HistoryStride != 2 || n != 3*MaxHistory/4 || long.History[n-1].Cycle != long.Cycles || long.Cycles != 3*MaxHistory/2 {
		t.Fatalf("%d cycles: %d points, stride %d, last cycle %d", long.Cycles, n, long.HistoryStride, long.History[n-1].Cycle)
	}
	for k, h := range long.History {
		if h.Cycle != 2*(k+1) {
			t.Fatalf("thinned history point %d is cycle %d, want %d", k, h.Cycle, 2*(k+1))
		}
	}
}

// TestHeatLongDurationStopsAtSteadyState: a study far longer than the time
// to the periodic steady state stops stepping there (a year costs what a day
// does) and reports the steady figures; a duration that overflowed the
// cycle count (1e18 min) no longer gives −273 °C.
func TestHeatLongDurationStopsAtSteadyState(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	day, err := Heat(md, DutyPattern{OnTime: 1.25, Period: 5, Duration: 24 * 3600})
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range []float64{365 * 24 * 3600, 1e18 * 60} {
		start := time.Now()
		long, err := Heat(md, DutyPattern{OnTime: 1.25, Period: 5, Duration: d})
		if err != nil {
			t.Fatal(err)
		}
		if el := time.Since(start); el > 5*time.Second {
			t.Errorf("duration %g s took %v", d, el)
		}
		if math.Abs(long.Peak-day.Peak) > SteadyTol || !long.Steady || long.Peak < 273.15 {
			t.Errorf("duration %g s: peak %.4f K, a day gives %.4f K (steady %v)", d, long.Peak, day.Peak, long.Steady)
		}
	}
}
