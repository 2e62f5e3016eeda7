package coilkick

import (
	"math"
	"testing"

	"coilkick/circuit"
)

// The drive-control tests use the fixed plunger of fixedModel (a plain RL
// load) so that the closed forms of first-order circuit theory apply.

func TestPWMMeanAndRipple(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 48.0, 0.1
	const d, f, vd = 0.4, 2000.0, 0.7
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.8})
	md.Control = circuit.Control{Mode: circuit.PWM, Frequency: f, Duty: d}
	md.Drive.Recirc = circuit.Recirculation{Drop: vd}
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.1, End: 0.11} // window from 24 time constants on
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	h := res.Metrics.Hold
	// source: averaged model of a PWM-driven RL load (first-order circuit
	// theory): the mean of v_coil over a period is D·V − (1−D)·Vd, so the
	// mean current in periodic steady state is (D·V − (1−D)·Vd)/R.
	wantMean := (d*v0 - (1-d)*vd) / r
	// source: periodic steady state of the piecewise exponential: on,
	// i → a = V/R; off, i → b = −Vd/R; with x = e^(−D·T/τ), y = e^(−(1−D)T/τ):
	// Imax = (a(1−x)y... solved below) (first-order circuit theory).
	tau := l / r
	T := 1 / f
	a, b := v0/r, -vd/r
	x, y := math.Exp(-d*T/tau), math.Exp(-(1-d)*T/tau)
	// Imin = b + (Imax − b)y, Imax = a + (Imin − a)x  ⇒
	iMax := (a*(1-x) + b*(1-y)*x) / (1 - x*y)
	iMin := b + (iMax-b)*y
	if e := math.Abs(h.MeanCurrent-wantMean) / wantMean; e > 1e-6 {
		t.Errorf("PWM mean current %.9g A, want %.9g A (rel %.2g)", h.MeanCurrent, wantMean, e)
	}
	if e := math.Abs(h.MaxCurrent-iMax) / iMax; e > 1e-6 {
		t.Errorf("PWM max current %.9g A, want %.9g A", h.MaxCurrent, iMax)
	}
	if e := math.Abs(h.MinCurrent-iMin) / iMin; e > 1e-6 {
		t.Errorf("PWM min current %.9g A, want %.9g A", h.MinCurrent, iMin)
	}
	if e := math.Abs(h.ChoppingFrequency-f) / f; e > 2e-3 {
		t.Errorf("PWM frequency %.6g Hz, want %g Hz", h.ChoppingFrequency, f)
	}
	if r := res.Metrics.EnergyResidualRel(); r > 1e-6 {
		t.Errorf("energy residual %.3g", r)
	}
}

func TestHysteresisHold(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 12.0, 0.05
	const ih, band, vd = 0.5, 0.04, 0.7
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: 30})
	md.Control = circuit.Control{Mode: circuit.PeakHold, PeakCurrent: 1.5, PeakTime: 0.01, HoldCurrent: ih,
		Regulation: circuit.Hysteresis, Band: band}
	md.Drive.Recirc = circuit.Recirculation{Drop: vd}
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.2, End: 0.21}
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	h := res.Metrics.Hold
	lo, hi := ih-band/2, ih+band/2
	const slack = 1e-9 // A: thresholds are located, not sampled
	if h.MinCurrent < lo-slack || h.MaxCurrent > hi+slack {
		t.Errorf("hold current %.9g..%.9g A leaves the band %.9g..%.9g A", h.MinCurrent, h.MaxCurrent, lo, hi)
	}
	// source: first-order RL rise and decay between the band edges:
	// t_on = τ·ln((a − lo)/(a − hi)), a = V/R; t_off = τ·ln((hi − b)/(lo − b)),
	// b = −Vd/R; f = 1/(t_on + t_off) (first-order circuit theory).
	tau := l / r
	a, b := v0/r, -vd/r
	want := 1 / (tau*math.Log((a-lo)/(a-hi)) + tau*math.Log((hi-b)/(lo-b)))
	// The issue asks for 2 %; with the thresholds located as events the
	// figure is far better, so hold it to 1e-4.
	if e := math.Abs(h.ChoppingFrequency-want) / want; e > 1e-4 {
		t.Errorf("chopping frequency %.6g Hz, want %.6g Hz (rel %.2g)", h.ChoppingFrequency, want, e)
	}
	t.Logf("hysteresis: %.6g Hz (closed form %.6g Hz), band %.6g..%.6g A", h.ChoppingFrequency, want, h.MinCurrent, h.MaxCurrent)
}

func TestReverseDriveDecay(t *testing.T) {
	t.Parallel()
	const v0, r, l, vd = 24.0, 48.0, 0.1, 0.8
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Bridge, Voltage: vd})
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := res.Metrics
	i0 := m.CurrentAtTurnOff
	// source: decay against a reverse voltage V (first-order circuit theory):
	// t0 = (L/R)·ln(1 + I0·R/V), here V = Vs + 2·Vd (the supply seen through two
	// bridge diodes).
	want := l / r * math.Log(1+i0*r/(v0+2*vd))
	if e := math.Abs(m.ClampConduction.Seconds-want) / want; !m.ClampConduction.Happened || e > 1e-6 {
		t.Errorf("reverse-drive decay %.9g s, want %.9g s", m.ClampConduction.Seconds, want)
	}
	// source: the energy returned is ∫ Vs·i dt over the decay:
	// Vs·(L/R)·[I0 − (V/R)·ln(1 + R·I0/V)] (integrating the exponential decay).
	V := v0 + 2*vd
	wantE := v0 * l / r * (i0 - V/r*math.Log1p(r*i0/V))
	if e := math.Abs(m.EnergyReturned-wantE) / wantE; e > 1e-6 {
		t.Errorf("energy returned %.9g J, want %.9g J", m.EnergyReturned, wantE)
	}
	if r := m.EnergyResidualRel(); r > 1e-6 {
		t.Errorf("energy residual %.3g", r)
	}
}

func TestReversePulse(t *testing.T) {
	t.Parallel()
	// A timed reverse pulse drives the current through zero and negative:
	// i(t) = −V/R + (I0 + V/R)e^(−t/τ) with V = Vs (first-order circuit theory).
	const v0, r, l, vd, pulse = 24.0, 48.0, 0.1, 0.8, 2e-3
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Bridge, Voltage: vd})
	md.Control.ReversePulse = pulse
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	i0 := res.Metrics.CurrentAtTurnOff
	tOff := md.Timing.DeenergizeAt
	tau := l / r
	worst, n := 0.0, 0
	for k, tt := range res.Trace.Time {
		s := tt - tOff
		if s <= 0 || s >= pulse {
			continue
		}
		want := -v0/r + (i0+v0/r)*math.Exp(-s/tau)
		worst = math.Max(worst, math.Abs(res.Trace.Current[k]-want)/i0)
		n++
	}
	if n < 5 || worst > 1e-6 {
		t.Errorf("reverse pulse: worst error %.3g of I0 over %d samples", worst, n)
	}
}

func TestBoostThenHold(t *testing.T) {
	t.Parallel()
	base, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	hold, err := Simulate(base, nil)
	if err != nil {
		t.Fatal(err)
	}
	const vBoost, tBoost = 36.0, 0.03
	boost := *base
	boost.Control = circuit.Control{Mode: circuit.BoostHold, BoostVoltage: vBoost, BoostTime: tBoost}
	rb, err := Simulate(&boost, nil)
	if err != nil {
		t.Fatal(err)
	}
	constant := *base
	constant.Drive.Supply.Voltage = vBoost
	rc, err := Simulate(&constant, nil)
	if err != nil {
		t.Fatal(err)
	}
	pb, ph, pc := rb.Metrics.PullIn.Seconds, hold.Metrics.PullIn.Seconds, rc.Metrics.PullIn.Seconds
	if !(pb < ph) {
		t.Errorf("boost pull-in %.6g s not shorter than at the hold voltage %.6g s", pb, ph)
	}
	// Until the switch-over the boosted run is the constant run at the
	// boost voltage: same equations, same initial state.
	if pb > tBoost || math.Abs(pb-pc)/pc > 1e-6 { // same equations; the step sequences differ slightly
		t.Errorf("boost pull-in %.12g s, constant run at the boost voltage %.12g s", pb, pc)
	}
	if r := rb.Metrics.EnergyResidualRel(); r > 1e-4 {
		t.Errorf("energy residual %.3g", r)
	}
}

func TestFixedFrequencyChopping(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	h := res.Metrics.Hold
	f := md.Control.Frequency
	// Peak-current cut-off: one turn-on per period, and the current never
	// exceeds the target (it is switched off there).
	if e := math.Abs(h.ChoppingFrequency-f) / f; e > 1e-3 {
		t.Errorf("chopping at %.6g Hz, want %g Hz", h.ChoppingFrequency, f)
	}
	if h.MaxCurrent > md.Control.HoldCurrent*(1+1e-9) {
		t.Errorf("hold current peaks at %.9g A above the target %g A", h.MaxCurrent, md.Control.HoldCurrent)
	}
	if !(h.CoilPower < 0.1*h.FullVoltageCoilPower) || !(h.ForceMargin > 1) {
		t.Errorf("hold: coil power %g W vs full %g W, margin %g", h.CoilPower, h.FullVoltageCoilPower, h.ForceMargin)
	}
	if r := res.Metrics.EnergyResidualRel(); r > 1e-4 {
		t.Errorf("1 s of chopping: energy residual %.3g, want < 1e-4", r)
	}
}

func TestHoldTooWeakDropsOut(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// Below the current whose pull balances spring and load at the seat the
	// plunger must drop out during the hold; the run reports it as a failure.
	md.Control.HoldCurrent = 0.2
	md.Timing.DeenergizeAt, md.Timing.End = 0.2, 0.25
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Metrics.DropOut.Happened {
		t.Fatalf("hold at 0.2 A: plunger stayed seated; pull at the seat %.3g N vs passive %.3g N",
			md.Magnet.Force(0.2, md.Plunger.GapMin), md.Plunger.PassiveForce(md.Plunger.GapMin, 0))
	}
	as := md.Assess(res)
	if !as.Failed() {
		t.Error("a drop-out during the hold must fail the assessment")
	}
}

func TestBulkCapacitorSteadyStateAndDroop(t *testing.T) {
	t.Parallel()
	const v0, r, l, rs, c = 24.0, 12.0, 0.05, 0.5, 470e-6
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.8})
	md.Drive.Supply.SourceResistance = rs
	md.BulkCapacitance = c
	md.Timing = TimingSpec{EnergizeAt: 0.001, DeenergizeAt: 0.1, End: 0.12}
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := res.Metrics
	// source: DC steady state (Ohm's law): the capacitor carries no current,
	// so the coil current is V/(R + Rs) and the rail sits at V·R/(R + Rs).
	wantI := v0 / (r + rs)
	if e := math.Abs(m.Hold.MeanCurrent-wantI) / wantI; e > 1e-6 {
		t.Errorf("steady current %.9g A, want %.9g A", m.Hold.MeanCurrent, wantI)
	}
	wantRail := v0 * r / (r + rs)
	if e := math.Abs(m.MinRailVoltage-wantRail) / wantRail; e > 1e-6 {
		t.Errorf("lowest rail %.9g V, want %.9g V (no overshoot below the DC value for this overdamped loop)", m.MinRailVoltage, wantRail)
	}
	if r := m.EnergyResidualRel(); r > 1e-6 {
		t.Errorf("energy residual %.3g", r)
	}
}
