package coilkick

import (
	"math"
	"strings"
	"testing"

	"coilkick/circuit"
	"coilkick/magnet"
)

// choppedModel is a fixed-inductance coil (the plunger held open) on a
// fixed-frequency peak-and-hold driver: 24 V, 12 ohm, 0.1 H, 0.8 A for
// 5 ms, then 0.4 A chopped at 20 kHz, de-energized at 100 ms.
func choppedModel(t *testing.T, fast bool, sup circuit.Suppressor) *Model {
	t.Helper()
	md := fixedModel(t, 24, 12, 0.1, sup)
	md.Control = circuit.Control{Mode: circuit.PeakHold, Frequency: 20e3, PeakCurrent: 0.8, PeakTime: 5e-3,
		HoldCurrent: 0.4, Regulation: circuit.FixedFrequency, FastDecay: fast}
	md.Drive.Recirc = circuit.Recirculation{Drop: 0.7}
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.1, End: 0.12}
	if err := md.Control.Validate(&md.Drive); err != nil {
		t.Fatal(err)
	}
	return md
}

// clampDecayEnergy is the energy a clamp of constant voltage vcl across an
// R–L coil absorbs while the current decays from i0 to zero:
// E = vcl·(L/R)·[i0 − (vcl/R)·ln(1 + R·i0/vcl)], the integral of vcl·i(t)
// over the first-order decay (any circuits textbook; e.g. Hayt & Kemmerly,
// Engineering Circuit Analysis, ch. 8).
func clampDecayEnergy(vcl, r, l, i0 float64) float64 {
	return vcl * l / r * (i0 - vcl/r*math.Log(1+r*i0/vcl))
}

// TestClampEnergyIsTheTurnOffPulse: with fast decay the chopping off-times
// go through the Zener too; the run's clamp energy is only the turn-off
// pulse, and the chopping shows as power in the hold.
func TestClampEnergyIsTheTurnOffPulse(t *testing.T) {
	t.Parallel()
	const v0, r, l, vcl, f = 24.0, 12.0, 0.1, 5.9, 20e3
	md := choppedModel(t, true, circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: vcl})
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	m := &res.Metrics
	i0 := m.CurrentAtTurnOff
	want := clampDecayEnergy(vcl, r, l, i0)
	if e := math.Abs(m.ClampEnergy-want) / want; e > 1e-6 {
		t.Errorf("clamp energy %.9g J, want the turn-off pulse %.9g J (from %.6g A)", m.ClampEnergy, want, i0)
	}
	if !(m.ChopClampEnergy > 10*m.ClampEnergy) {
		t.Errorf("chopping energy in the clamp %.3g J: fast decay must send every off-time through it", m.ChopClampEnergy)
	}
	if d := math.Abs(m.SuppressionLoss - m.ClampEnergy - m.ChopClampEnergy); d > 1e-12 {
		t.Errorf("suppression loss %.9g J ≠ pulse + chopping", m.SuppressionLoss)
	}
	// source: the periodic steady state of peak-current chopping of an
	// R–L load (first-order circuit theory): on from i_min toward
	// V/Rt until the target I, off through the clamp toward −vcl/R for the
	// rest of the period; the clamp energy per period is
	// vcl·∫i dt = vcl·[(I + vcl/R)·τ·(1 − e^(−t_off/τ)) − (vcl/R)·t_off].
	rt := r + md.Drive.Switch.OnResistance
	target := md.Control.HoldCurrent
	tau := l / r
	period := 1 / f
	tOn := func(iMin float64) float64 { return l / rt * math.Log((v0/rt-iMin)/(v0/rt-target)) }
	after := func(iMin float64) float64 { // current at the end of the period
		off := period - tOn(iMin)
		return (target+vcl/r)*math.Exp(-off/tau) - vcl/r
	}
	lo, hi := 0.0, target
	for k := 0; k < 200; k++ { // bisection on the fixed point after(i) = i
		mid := 0.5 * (lo + hi)
		if after(mid) > mid {
			lo = mid
		} else {
			hi = mid
		}
	}
	iMin := 0.5 * (lo + hi)
	off := period - tOn(iMin)
	wantP := f * vcl * ((target+vcl/r)*tau*(1-math.Exp(-off/tau)) - vcl/r*off)
	// The window is not a whole number of periods: at most one period's
	// energy over 2500 periods, 4e-4.
	if e := math.Abs(m.Hold.ClampPower-wantP) / wantP; e > 1e-3 {
		t.Errorf("clamp power while chopping %.6g W, want %.6g W (i_min %.6g A)", m.Hold.ClampPower, wantP, iMin)
	}
	if h := m.Hold; math.Abs(h.MinCurrent-iMin) > 1e-6 {
		t.Errorf("hold minimum current %.9g A, want %.9g A", h.MinCurrent, iMin)
	}
}

// TestClampOptionsRateTheTurnOffPulse: the comparison's energy per option
// and the part rating are the turn-off pulse, not the hold's recirculation
// (slow decay) added in.
func TestClampOptionsRateTheTurnOffPulse(t *testing.T) {
	t.Parallel()
	const r, l = 12.0, 0.1
	md := choppedModel(t, false, circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: 5.9})
	md.Drive.Switch.BreakdownVoltage = 100
	base, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	i0 := base.Metrics.CurrentAtTurnOff // slow decay: the same for every option
	cmp, err := CompareClamps(md)
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for _, o := range cmp.Options {
		if o.Err != "" {
			t.Errorf("%s: %s", o.Name, o.Err)
			continue
		}
		if o.Suppressor.Kind != circuit.DiodeZener && o.Suppressor.Kind != circuit.Freewheel && o.Suppressor.Kind != circuit.TVS {
			continue
		}
		want := clampDecayEnergy(o.Suppressor.Voltage, r, l, i0) // source: as in clampDecayEnergy
		if e := math.Abs(o.ClampEnergy-want) / want; e > 1e-6 {
			t.Errorf("%s: energy per turn-off %.9g J, want %.9g J", o.Name, o.ClampEnergy, want)
		}
		if o.ChopPower != 0 {
			t.Errorf("%s: slow decay, yet %.3g W while chopping", o.Name, o.ChopPower)
		}
		checked++
	}
	if checked < 10 {
		t.Fatalf("only %d options checked", checked)
	}
	if cmp.Recommended < 0 {
		t.Fatal("no recommendation")
	}
	rec := cmp.Options[cmp.Recommended]
	if cmp.PartEnergy != rec.ClampEnergy || cmp.PartPeakCurrent != rec.PeakClampCurrent {
		t.Errorf("part ratings %g J, %g A; the recommended option has %g J, %g A", cmp.PartEnergy, cmp.PartPeakCurrent,
			rec.ClampEnergy, rec.PeakClampCurrent)
	}
}

// TestDropOutDuringHoldDiagnosed: the case, the peak-and-hold demo
// with a 0.25 A hold.
func TestDropOutDuringHoldDiagnosed(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md.Control.HoldCurrent = 0.25
	md.Timing.DeenergizeAt, md.Timing.End = 0.1, 0.12 // shorter hold; the drop-out comes at 38 ms
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	m := &res.Metrics
	d := m.DropOut
	if !d.Happened || !d.InHold || !(d.Time > md.Control.PeakTime) {
		t.Fatalf("drop-out %+v, want one in the hold (after %g s)", d, md.Control.PeakTime)
	}
	// source: co-energy force of a linear magnet, F = ½·i²·|dL/dx|
	// (Woodson & Melcher, Electromechanical Dynamics, ch. 3), with the gap
	// law L = L_leak + 1/(a + b·x): the plunger leaves the seat where
	// ½·i²·b/(a + b·x)² equals the spring and load there.
	gl := md.Magnet.(*magnet.GapLaw)
	a, b := gl.Coefficients()
	x := md.Plunger.GapMin
	passive := md.Plunger.PassiveForce(x, 0)
	iHold := math.Sqrt(2 * passive * (a + b*x) * (a + b*x) / b)
	if e := math.Abs(d.Current-iHold) / iHold; e > 1e-6 {
		t.Errorf("drop-out at %.9g A, want %.9g A", d.Current, iHold)
	}
	if math.Abs(d.Passive-passive) > 1e-9 || math.Abs(d.Pull-d.Passive) > 1e-6*passive {
		t.Errorf("force balance at drop-out: pull %g N, passive %g N (want %g N)", d.Pull, d.Passive, passive)
	}
	if na := m.ReleaseNotApplicable(); na != "not applicable: dropped out during the hold" || m.Release.Happened || m.Drop.Happened {
		t.Errorf("release %q, %+v, drop %+v", na, m.Release, m.Drop)
	}
	as := md.Assess(res)
	if !as.Failed() {
		t.Error("a drop-out during the hold must fail the run")
	}
	for _, c := range as.Checks {
		switch c.Name {
		case "release time":
			if c.NotApplicable == "" {
				t.Errorf("release check %+v: want not applicable", c)
			}
		case "stays seated while energized":
			if c.Pass {
				t.Error("stays seated passes")
			}
		}
	}
	for _, n := range as.Notes {
		if strings.Contains(n.Text, "residual flux") {
			t.Errorf("misdiagnosis in the notes: %q", n.Text)
		}
	}
	// The studies treat it as the failure it is.
	sol, err := LowestClamp(md)
	if err != nil || sol.Blocked == "" || sol.Found {
		t.Errorf("LowestClamp: %+v, %v; want blocked by the drop-out", sol, err)
	}
	cmp, err := CompareClamps(md)
	if err != nil || cmp.DropOut == "" || cmp.Recommended >= 0 {
		t.Errorf("CompareClamps: drop-out %q, recommended %d, %v", cmp.DropOut, cmp.Recommended, err)
	}
	fig, err := Figures(md)
	if err != nil || !fig.Failed || !fig.DroppedOut {
		t.Errorf("sweep figures %+v, %v: want failed", fig, err)
	}
	cr, err := Corners(md, Tolerances{Supply: 0.05}, 0, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range cr.Checks {
		if c.Name == "release time" && (c.NotApplicable != 2 || !c.Pass) {
			t.Errorf("corners: release %+v; want not applicable at both corners", c)
		}
		if c.Name == "stays seated while energized" && c.Pass {
			t.Errorf("corners: stays seated passes")
		}
	}
}

// TestLimitRule: values within LimitRelTol of a limit count as equal to it.
func TestLimitRule(t *testing.T) {
	t.Parallel()
	cases := []struct {
		v, lim    float64
		max, min_ bool
	}{
		{60.00000003, 60, true, true}, // the switch clamp
		{60, 60, true, true},
		{60.001, 60, false, true},
		{59.999, 60, true, false},
		{1.19999999, 1.2, true, true},
	}
	for _, c := range cases {
		if got := WithinMax(c.v, c.lim); got != c.max {
			t.Errorf("WithinMax(%v, %v) = %v", c.v, c.lim, got)
		}
		if got := AtLeast(c.v, c.lim); got != c.min_ {
			t.Errorf("AtLeast(%v, %v) = %v", c.v, c.lim, got)
		}
	}
	// A switch clamp at exactly the switch's rating passes: the geometry
	// demo's clamp moved to its 60 V rating peaks a few µV above 60 V (the
	// node overshoots the clamp by its slope times the event location's
	// tolerance).
	md, err := LoadModel("scenarios/dosing-valve-geometry.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md.Drive.Suppressor.Voltage = 60
	md.Limits.SwitchVoltage = 60
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, c := range md.Assess(res).Checks {
		if c.Name == "peak switch voltage" {
			found = true
			if !c.Pass || math.Abs(c.Value-60) > LimitRelTol*60 {
				t.Errorf("switch clamp at its 60 V rating: peak %.12g V, pass %v", c.Value, c.Pass)
			}
		}
	}
	if !found {
		t.Error("no switch-voltage check")
	}
}

// TestChoppingFrequencyExact: an exact 20 kHz controller reports 20 kHz
// and draws no audible-range warning.
func TestChoppingFrequencyExact(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md.Timing.DeenergizeAt, md.Timing.End = 0.2, 0.21
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	if f := res.Metrics.Hold.ChoppingFrequency; f != md.Control.Frequency {
		t.Errorf("chopping frequency %.17g Hz, want exactly %g Hz", f, md.Control.Frequency)
	}
	for _, n := range md.Assess(res).Notes {
		if n.Figure == "chopping frequency" {
			t.Errorf("note at 20 kHz: %q", n.Text)
		}
	}
	md.Control.Frequency = 19.5e3 // below the limit: warned, once
	res, err = Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, note := range md.Assess(res).Notes {
		if note.Figure == "chopping frequency" {
			n++
		}
	}
	if n != 1 {
		t.Errorf("%d audible-range notes at 19.5 kHz, want 1", n)
	}
}

// TestConstantHoldSettles: a constant-voltage hold reports whether its
// current has settled to V/R, not a ripple.
func TestConstantHoldSettles(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 48.0, 0.1
	tau := l / r
	for _, c := range []struct {
		off     float64 // de-energize, s
		settled bool
	}{{10 * tau, true}, {1.2 * tau, false}} {
		md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
		md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: c.off, End: c.off + 5*tau}
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		h := res.Metrics.Hold
		// source: RL step response i(t) = (V/R)(1 − e^(−tR/L)) (Hayt &
		// Kemmerly, Engineering Circuit Analysis, ch. 8), and Ohm's law for
		// its final value with the switch's on-resistance in series.
		steady := v0 / (r + md.Drive.Switch.OnResistance)
		end := steady * (1 - math.Exp(-c.off*(r+md.Drive.Switch.OnResistance)/l))
		if h.Chopped || h.Ripple != res.Metrics.Hold.MaxCurrent-h.MinCurrent {
			t.Errorf("constant drive: chopped %v", h.Chopped)
		}
		if math.Abs(h.SteadyCurrent-steady) > 1e-12 || math.Abs(h.EndCurrent-end) > 1e-6*steady || h.Settled != c.settled {
			t.Errorf("off at %.3g τ: end %.9g A (want %.9g), steady %.9g A (want %.9g), settled %v (want %v)",
				c.off/tau, h.EndCurrent, end, h.SteadyCurrent, steady, h.Settled, c.settled)
		}
	}
}

// TestWorstCornerIsTheWorstValue: the worst corner is the one with the
// worst value, not the first failing one met; ties go to the earlier
// corner and are counted.
func TestWorstCornerIsTheWorstValue(t *testing.T) {
	t.Parallel()
	const limit = 0.040 // s, a maximum
	corners := []struct {
		label    string
		value    float64
		happened bool
	}{
		{"A", 0.045, true}, // fails first
		{"B", 0.030, true},
		{"C", 0.062, true}, // the worst value
		{"D", 0.050, true},
		{"E", 0.062 * (1 + 1e-9), true}, // equal to C within LimitRelTol: a tie
	}
	cc := CornerCheck{Name: "pull-in time", Unit: "s", Limit: limit, Pass: true}
	for _, c := range corners {
		cc.add(Check{Name: cc.Name, Unit: "s", Value: c.value, Limit: limit, Happened: c.happened,
			Pass: c.happened && WithinMax(c.value, limit)}, c.label)
	}
	if cc.Corner != "C" || cc.Worst != 0.062 || cc.Tied != 1 || cc.Pass || len(cc.Failing) != 4 {
		t.Errorf("worst %+v; want corner C (0.062 s), 1 tie, 4 failing", cc)
	}
	// A figure that did not happen is worse than any value; several such
	// corners tie and the first is named.
	cc = CornerCheck{Name: "pull-in time", Unit: "s", Limit: limit, Pass: true}
	for _, c := range []struct {
		label    string
		value    float64
		happened bool
	}{{"A", 0.05, true}, {"B", 0, false}, {"C", 0.09, true}, {"D", 0, false}} {
		cc.add(Check{Value: c.value, Happened: c.happened, Pass: false}, c.label)
	}
	if cc.Corner != "B" || cc.Happened || cc.Tied != 1 {
		t.Errorf("did-not-happen corners: %+v; want B, tied with D", cc)
	}
	// A minimum (a margin): the smallest value is the worst.
	cc = CornerCheck{Name: "hold force margin", Limit: 1.2, Min: true, Pass: true}
	for _, c := range []struct {
		label string
		value float64
	}{{"A", 1.1}, {"B", 1.5}, {"C", 0.9}, {"D", 1.3}} {
		cc.add(Check{Value: c.value, Happened: true, Min: true, Pass: AtLeast(c.value, 1.2)}, c.label)
	}
	if cc.Corner != "C" || cc.Worst != 0.9 {
		t.Errorf("margin: %+v; want C (0.9)", cc)
	}
}

// TestHotWindingMeansTheSameEverywhere: the hot corner is at the hot
// winding temperature as written, in corners, Monte Carlo and solve.
func TestHotWindingMeansTheSameEverywhere(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	tol := Tolerances{Supply: 0.1, Ambient: 5, HotWinding: 403.15} // 130 °C
	var temps []float64
	for _, c := range corners(md, tol) {
		temps = append(temps, c.Temperature)
	}
	hot, cold := 0.0, math.Inf(1)
	for _, x := range temps {
		hot, cold = math.Max(hot, x), math.Min(cold, x)
	}
	if hot != 403.15 || cold != md.Temperature-5 {
		t.Errorf("corner windings %v K; want cold %g K and hot exactly 403.15 K", temps, md.Temperature-5)
	}
	if tol.HotCorner(md) != tol.HotWinding {
		t.Errorf("HotCorner %g K, want the hot winding %g K", tol.HotCorner(md), tol.HotWinding)
	}
	sol, err := LowestSupply(md, tol.HotWinding)
	if err != nil || !strings.Contains(sol.What, "130 degC") {
		t.Errorf("solve at the hot winding: %q, %v", sol.What, err)
	}
}

// TestWilsonInterval checks the yield's confidence interval against R.
func TestWilsonInterval(t *testing.T) {
	t.Parallel()
	// source: R (stats::qnorm, the Wilson formula), 6 successes in 32 with
	// z = qnorm(0.975): 0.08889545 to 0.35309155 (an R Markdown worked
	// example published on rpubs.com, "Wald CI vs Wilson CI", mtcars mpg >= 25).
	lo, hi := WilsonInterval(6, 32, 1.959963984540054)
	if math.Abs(lo-0.08889545) > 1e-8 || math.Abs(hi-0.35309155) > 1e-8 {
		t.Errorf("Wilson(6/32) = [%.8f, %.8f], want [0.08889545, 0.35309155]", lo, hi)
	}
	// All samples passing: the upper end is 1, the lower end n/(n + z²).
	lo, hi = WilsonInterval(200, 200, 1.959963984540054)
	if want := 200 / (200 + 1.959963984540054*1.959963984540054); hi != 1 || math.Abs(lo-want) > 1e-12 {
		t.Errorf("Wilson(200/200) = [%g, %g], want [%g, 1]", lo, hi, want)
	}
}

// TestRecommendClampRule: least switch stress; within the stress band the
// lower energy per operation wins; impractical parts, drop-outs and
// reverse drive are never recommended.
func TestRecommendClampRule(t *testing.T) {
	t.Parallel()
	opt := func(name string, kind circuit.Kind, v, e float64) ClampOption {
		return ClampOption{Name: name, Suppressor: circuit.Suppressor{Kind: kind}, PeakSwitchVoltage: v,
			OperationEnergy: e, ClampEnergy: e, MeetsRelease: true, WithinRating: true}
	}
	cases := []struct {
		name string
		opts []ClampOption
		want string
	}{
		{"band: lower energy wins over 1 V less", []ClampOption{
			opt("snubber", circuit.Snubber, 24.0, 0.050),
			opt("freewheel", circuit.Freewheel, 24.8, 0.003),
			opt("zener 36", circuit.DiodeZener, 60.8, 0.020),
		}, "freewheel"},
		{"outside the band: stress wins over energy", []ClampOption{
			opt("zener 5.1", circuit.DiodeZener, 29.9, 0.015),
			opt("tvs", circuit.TVS, 80, 0.001),
		}, "zener 5.1"},
		{"ties keep the earlier option", []ClampOption{
			opt("zener 5.1", circuit.DiodeZener, 29.9, 0.010),
			opt("zener 5.6", circuit.DiodeZener, 30.4, 0.010),
		}, "zener 5.1"},
		{"never an impractical snubber", func() []ClampOption {
			s := opt("snubber 178 uF", circuit.Snubber, 24.7, 0.001)
			s.Impractical = "capacitor too large"
			return []ClampOption{s, opt("freewheel", circuit.Freewheel, 24.8, 0.003)}
		}(), "freewheel"},
		{"never a drop-out, never reverse drive", func() []ClampOption {
			d := opt("zener 5.1", circuit.DiodeZener, 29.9, 0.001)
			d.DropOut = "drops out"
			return []ClampOption{d, opt("bridge", circuit.Bridge, 24.8, 0.0001), opt("zener 10", circuit.DiodeZener, 34.8, 0.02)}
		}(), "zener 10"},
	}
	for _, c := range cases {
		k := RecommendClamp(c.opts)
		got := "none"
		if k >= 0 {
			got = c.opts[k].Name
		}
		if got != c.want {
			t.Errorf("%s: recommended %s, want %s", c.name, got, c.want)
		}
	}
}

// TestDoorStrikeClampsNoHugeSnubber: the door-strike demo once had a
// 178 µF snubber recommended; it is marked impractical and the freewheel
// diode (least stress, least energy) is recommended.
func TestDoorStrikeClampsNoHugeSnubber(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	cmp, err := CompareClamps(md)
	if err != nil {
		t.Fatal(err)
	}
	snubbers := 0
	for _, o := range cmp.Options {
		if o.Suppressor.Kind == circuit.Snubber {
			snubbers++
			if o.Suppressor.Capacitance > MaxSnubberCapacitance && o.Impractical == "" {
				t.Errorf("%s not marked impractical", o.Name)
			}
		}
	}
	if snubbers != 1 || cmp.Recommended < 0 || cmp.Options[cmp.Recommended].Suppressor.Kind != circuit.Freewheel {
		t.Errorf("recommended %d (%d snubbers); want the freewheel diode", cmp.Recommended, snubbers)
	}
	// source: average power of a pulse train, rate × energy per pulse
	// (definition); the demo cycle is one operation every 5 s.
	if r := cmp.Options[cmp.Recommended]; math.Abs(r.ClampPower-r.ClampEnergy/5) > 1e-12 || cmp.Rate != 0.2 {
		t.Errorf("average clamp power %g W at %g /s for %g J per operation", r.ClampPower, cmp.Rate, r.ClampEnergy)
	}
}

// TestCompactEvents: a run of one part's conductions becomes one line;
// shorter runs, other parts' events and other events stay.
func TestCompactEvents(t *testing.T) {
	t.Parallel()
	var evs []Event
	add := func(ms float64, part string, kind EventKind, what string) {
		evs = append(evs, Event{Time: ms * 1e-3, Part: part, Kind: kind, What: what})
	}
	add(150, "", EventOther, "de-energize at 1 A")
	add(150, "tvs", EventConductionStart, "conduction through the tvs starts")
	add(151, "tvs", EventConductionEnd, "conduction through the tvs ends")
	for k := 0; k < 12; k++ {
		ms := 151.2 + 0.15*float64(k)
		add(ms, "switch body diode", EventConductionStart, "conduction through the switch body diode starts")
		add(ms+0.05, "switch body diode", EventConductionEnd, "conduction through the switch body diode ends")
	}
	add(160, "", EventOther, "rest-stop impact at 0.7 m/s")
	got := CompactEvents(evs)
	var whats []string
	for _, e := range got {
		whats = append(whats, e.What)
	}
	want := []string{"de-energize at 1 A", "conduction through the tvs starts", "conduction through the tvs ends",
		"switch body diode conducts 12 times between 151.2000 ms and 152.9000 ms", "rest-stop impact at 0.7 m/s"}
	if strings.Join(whats, "|") != strings.Join(want, "|") {
		t.Errorf("compacted:\n%s\nwant:\n%s", strings.Join(whats, "\n"), strings.Join(want, "\n"))
	}
}

// TestHoldingCurrentTableMagnet: the flux-table demo's pull turns over far
// above its data (the table's linear continuation); the holding current is
// still found where the pull first reaches the margin.
func TestHoldingCurrentTableMagnet(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/door-latch-tvs-table.yaml")
	if err != nil {
		t.Fatal(err)
	}
	sol, err := LowestHold(md, 1.2)
	p := md.Plunger
	need := 1.2 * p.PassiveForce(p.GapMin, 0)
	if err != nil || !sol.Found || math.Abs(md.Magnet.Force(sol.Value, p.GapMin)-need) > 1e-6*need {
		t.Errorf("holding current %+v, %v: pull there %g N, need %g N", sol, err, md.Magnet.Force(sol.Value, p.GapMin), need)
	}
}
