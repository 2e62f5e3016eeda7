package coilkick

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"coilkick/circuit"
)

// storageModel returns the fixed RL load of fixedModel (inductance l, H;
// total loop resistance rt, ohm, split between the coil, the switch's on
// resistance and the ESR) fed from a storage capacitor of capacitance c
// (F) charged to v0 (V) with no charging path (the supply, at 4/3·v0,
// feeds nothing), switched on at 0 for the pulse tOff and run to tEnd (s).
// Reference data, not a product.
func storageModel(t *testing.T, v0, rt, l, c, tOff, tEnd float64) *Model {
	t.Helper()
	const ron, esr = 0.05, 0.15
	md := fixedModel(t, 4*v0/3, rt-ron-esr, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	md.Drive.Switch.OnResistance = ron
	md.Storage = &StorageCapacitor{Capacitance: c, ESR: esr, ChargeVoltage: v0, RechargeFraction: 0.01}
	md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: tOff, End: tEnd}
	return md
}

// seriesRLC returns the current i (A) and the capacitor voltage vc (V) at
// t (s) of a capacitor c (F) charged to v0 (V) discharging from rest into a
// series R (ohm), L (H): α = R/(2L), ω0 = 1/√(LC); under-damped
// i = V0/(L·ωd)·e^(−αt)·sin ωd·t, vc = V0·e^(−αt)·(cos ωd·t + α/ωd·sin ωd·t);
// critically damped i = V0/L·t·e^(−αt), vc = V0·e^(−αt)·(1 + αt);
// over-damped the same with sinh and cosh of β = √(α² − ω0²). Source: the
// source-free series RLC circuit, Hayt & Kemmerly, Engineering Circuit
// Analysis, ch. 9 (the three cases written for i(0) = 0, vc(0) = V0).
func seriesRLC(v0, r, l, c, t float64) (i, vc float64) {
	alpha := r / (2 * l)
	w0sq := 1 / (l * c)
	d := alpha*alpha - w0sq
	e := math.Exp(-alpha * t)
	switch {
	case d < 0:
		wd := math.Sqrt(-d)
		s, co := math.Sincos(wd * t)
		return v0 / (l * wd) * e * s, v0 * e * (co + alpha/wd*s)
	case d == 0:
		return v0 / l * t * e, v0 * e * (1 + alpha*t)
	}
	b := math.Sqrt(d)
	return v0 / (l * b) * e * math.Sinh(b*t), v0 * e * (math.Cosh(b*t) + alpha/b*math.Sinh(b*t))
}

func TestStorageSeriesRLC(t *testing.T) {
	t.Parallel()
	// L = 50 mH, C = 2 mF: ω0 = 100 rad/s, critical at R = 2·√(L/C) = 10 ohm.
	const v0, l, c, tOff, tEnd = 9.0, 0.05, 2e-3, 0.1, 0.12
	for _, tc := range []struct {
		name string
		r    float64 // ohm, the loop's total
	}{
		{"under-damped (ζ = 0.2)", 2},
		{"critically damped (ζ = 1)", 10},
		{"over-damped (ζ = 4)", 40},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			md := storageModel(t, v0, tc.r, l, c, tOff, tEnd)
			res, err := Simulate(md, &Options{BlockPlunger: true})
			if err != nil {
				t.Fatal(err)
			}
			checkSeriesRLC(t, res, v0, tc.r, l, c, tOff)
			// Only the under-damped discharge swings below zero, and
			// only it carries the caution.
			as := md.Assess(res)
			caution := false
			for _, n := range as.Notes {
				caution = caution || (n.Figure == "lowest capacitor voltage" && n.Level == "caution")
			}
			if below := res.Metrics.Storage.MinVoltage < 0; caution != below || below != (tc.r < 10) {
				t.Errorf("lowest voltage %.4g V, caution %v", res.Metrics.Storage.MinVoltage, caution)
			}
		})
	}
}

// checkSeriesRLC compares a storage capacitor's discharge over the pulse
// with the series RLC's closed form (seriesRLC): current and capacitor
// voltage within 1e-6 of their peaks, and the storage figures.
func checkSeriesRLC(t *testing.T, res *Result, v0, r, l, c, tOff float64) {
	t.Helper()
	const relTol = 1e-6
	const ron, esr = 0.05, 0.15
	tr := &res.Trace
	iPeak, vPeak, vMin := 0.0, v0, v0
	for k := 0; k <= 2000; k++ {
		i, vc := seriesRLC(v0, r, l, c, tOff*float64(k)/2000)
		iPeak, vMin = math.Max(iPeak, math.Abs(i)), math.Min(vMin, vc)
	}
	worstI, worstV, n := 0.0, 0.0, 0
	for k, tt := range tr.Time {
		if tt <= 0 || tt >= tOff {
			continue
		}
		i, vc := seriesRLC(v0, r, l, c, tt)
		// KVL round the loop: the capacitor's voltage is the coil's plus
		// the drop in the ESR and the switch.
		gotV := tr.CoilVoltage[k] + (esr+ron)*tr.Current[k]
		worstI = math.Max(worstI, math.Abs(tr.Current[k]-i)/iPeak)
		worstV = math.Max(worstV, math.Abs(gotV-vc)/vPeak)
		n++
	}
	if n < 10 || worstI > relTol || worstV > relTol {
		t.Errorf("series RLC: worst error current %.3g, capacitor voltage %.3g of the peaks over %d samples, want <= %g",
			worstI, worstV, n, relTol)
	}
	st := res.Metrics.Storage
	_, vOff := seriesRLC(v0, r, l, c, tOff)
	e0 := 0.5 * c * v0 * v0
	if !st.Fitted || math.Abs(st.VoltageAtTurnOff-vOff) > relTol*v0 ||
		math.Abs(st.PulseEnergy-0.5*c*(v0*v0-vOff*vOff)) > relTol*e0 {
		t.Errorf("storage: voltage at turn-off %.9g V (want %.9g), pulse energy %.9g J (want %.9g)", st.VoltageAtTurnOff,
			vOff, st.PulseEnergy, 0.5*c*(v0*v0-vOff*vOff))
	}
	// The lowest voltage is sampled (at events and three points of each
	// step): not below the true minimum, and close to it.
	if st.MinVoltage < vMin-relTol*v0 || st.MinVoltage > vMin+1e-3*v0 {
		t.Errorf("storage: lowest voltage %.9g V, closed form %.9g V", st.MinVoltage, vMin)
	}
	if st.Recharge.Happened || st.NoRecharge != "not recharged (no charging path)" {
		t.Errorf("storage without a charging path: recharge %+v, %q", st.Recharge, st.NoRecharge)
	}
	// The balance's residual is the integrator's error (it falls with the
	// tolerance: TestStorageEnergyBalance).
	if rel := res.Metrics.EnergyResidualRel(); rel > 1e-6 {
		t.Errorf("energy residual %.3g of the largest flow, want <= 1e-6", rel)
	}
	t.Logf("worst error current %.3g, voltage %.3g over %d samples; residual %.3g; %d steps", worstI, worstV, n,
		res.Metrics.EnergyResidualRel(), res.Stats.Steps)
}

func TestStorageRecharge(t *testing.T) {
	t.Parallel()
	// Over-damped discharge (ζ = 4) through a 100 ohm charging resistor; the
	// coil current has decayed through the freewheel diode well before the
	// run's end, so the capacitor then charges from the supply alone.
	const v0, l, c, tOff, tEnd, rch = 9.0, 0.05, 2e-3, 0.1, 0.2, 100.0
	md := storageModel(t, v0, 40, l, c, tOff, tEnd)
	md.Storage.ChargingResistance = rch
	res, err := Simulate(md, &Options{BlockPlunger: true})
	if err != nil {
		t.Fatal(err)
	}
	st := res.Metrics.Storage
	target := 0.99 * v0
	// source: first-order RC charging, v(t) = Vs − (Vs − V0)·e^(−t/RC),
	// Hayt & Kemmerly, Engineering Circuit Analysis, ch. 8.
	// The supply (12 V) is above the charge voltage (9 V).
	vs := md.Drive.Supply.Voltage
	want := rch * c * math.Log((vs-st.FinalVoltage)/(vs-target))
	if !st.Recharge.Happened || math.Abs(st.Recharge.Seconds-want) > 1e-12*want || st.RechargeTarget != target {
		t.Fatalf("recharge %+v to %g V, want %.9g s to %g V", st.Recharge, st.RechargeTarget, want, target)
	}
	// The same run carried on for the recharge time ends at the target.
	long, err := Simulate(md, &Options{BlockPlunger: true, Energize: 0, Deenergize: tOff, End: tEnd + want})
	if err != nil {
		t.Fatal(err)
	}
	lst := long.Metrics.Storage
	t.Logf("recharge from %.6g V: %.9g s (closed form %.9g s); carried on: %.9g V", st.FinalVoltage, st.Recharge.Seconds, want,
		lst.FinalVoltage)
	if math.Abs(lst.FinalVoltage-target) > 1e-6*v0 || lst.Recharge.Seconds > 1e-6*want {
		t.Errorf("after the recharge time: %.9g V (want %.9g V), recharge left %.3g s", lst.FinalVoltage, target,
			lst.Recharge.Seconds)
	}
	// Energy: the supply's less the charging resistor's loss is what the
	// capacitor regained after the pulse.
	if rel := long.Metrics.EnergyResidualRel(); rel > 1e-6 {
		t.Errorf("energy residual %.3g of the largest flow, want <= 1e-6", rel)
	}
	// The closed form's edges: at the target already, no charging path,
	// a supply below the target.
	for _, at := range []float64{target, 0.5 * (target + v0)} {
		if d, ok := RechargeTime(rch, c, v0, at, target); d != 0 || !ok {
			t.Errorf("RechargeTime from %g V, at or above the target: %g, %v", at, d, ok)
		}
	}
	if _, ok := RechargeTime(0, c, v0, 1, target); ok {
		t.Error("RechargeTime with no charging path: recharged")
	}
	if _, ok := RechargeTime(rch, c, target, 1, target); ok {
		t.Error("RechargeTime with the supply at the target: recharged")
	}
}

func TestStorageEnergyBalance(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/latch-valve-9v-cap.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		tol, limit float64
	}{
		// The residual is the integrator's error: it falls with the
		// tolerance (no term is missing from the balance).
		{0, 1e-6}, {1e-10, 1e-8},
	} {
		res, err := Simulate(md, &Options{Tolerance: tc.tol, NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		m := &res.Metrics
		st := m.Storage
		e0 := 0.5 * md.Storage.Capacitance * st.ChargeVoltage * st.ChargeVoltage
		if rel := math.Abs(m.EnergyResidual) / e0; rel > tc.limit {
			t.Errorf("tolerance %g: energy residual %.3g of the capacitor's energy, want <= %g", tc.tol, rel, tc.limit)
		}
		// No other capacitor and no field left at the end: the stored
		// change is the capacitor's.
		if math.Abs(m.StoredChange+st.RunEnergy) > 1e-12 {
			t.Errorf("stored change %.9g J, capacitor %.9g J", m.StoredChange, -st.RunEnergy)
		}
		t.Logf("tolerance %g: residual %.3g of the capacitor's %.4g J; pulse %.4g J, run %.4g J, V off %.4g V, end %.4g V, min %.4g V, recharge %.4g s",
			tc.tol, m.EnergyResidual/e0, e0, st.PulseEnergy, st.RunEnergy, st.VoltageAtTurnOff, st.FinalVoltage, st.MinVoltage,
			st.Recharge.Seconds)
	}
}

func TestStorageBadInput(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile("scenarios/latch-valve-9v-cap.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		old, new string
		want     []string // in the message: file:line:column, field, unit or rule
	}{
		{"capacitance: 2200 uF", "capacitance: 2200 uH",
			[]string{"cap.yaml:13:18: supply.storage capacitor.capacitance", "inductance", "capacitance"}},
		{"esr: 0.1 ohm", "esr: -0.1 ohm", []string{"cap.yaml:14:10: supply.storage capacitor.esr", "must not be negative", "ohm"}},
		{"charging resistance: 100 ohm", "charge voltage: 12 V",
			[]string{"cap.yaml:15:21: supply.storage capacitor.charge voltage", "at most supply.voltage", "9 V"}},
		{"source resistance: 1 ohm", "source resistance: 1 ohm\n  bulk capacitance: 470 uF",
			[]string{"cap.yaml:13:3: supply.storage capacitor", "not both"}},
		{"recharge fraction: 1 %", "recharge fraction: 60 %",
			[]string{"cap.yaml:16:24: supply.storage capacitor.recharge fraction", "too large", "50 %"}},
	} {
		bad := strings.Replace(string(good), c.old, c.new, 1)
		_, err := Parse([]byte(bad), "cap.yaml")
		errorHas(t, fmt.Sprintf("%q", c.new), err, c.want)
	}
}

func TestStorageBridge(t *testing.T) {
	t.Parallel()
	// The door latch's H-bridge fed from a 4700 µF storage capacitor with
	// no charging path, for a 20 ms pulse: the reverse pulse and the bridge
	// diodes put the coil's energy back into the capacitor; the supply
	// gives nothing, even when the switch node's ring is retired.
	data, err := os.ReadFile("scenarios/door-latch-bridge.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.NewReplacer("  bulk capacitance: 100 uF\n", "  storage capacitor:\n    capacitance: 4700 uF\n    esr: 0.05 ohm\n",
		"de-energize at: 200 ms", "de-energize at: 21 ms", "end: 300 ms", "end: 60 ms").Replace(string(data))
	md := modelFromText(t, text, "bridge-cap.yaml")
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	m := &res.Metrics
	st := m.Storage
	if m.SupplyEnergy != 0 || !m.RingRetired.Happened || !(m.EnergyReturned > 0) || !(st.FinalVoltage > st.VoltageAtTurnOff) {
		t.Errorf("supply %g J (want 0), ring retired %v, returned %g J, capacitor %.6g V at turn-off, %.6g V at the end",
			m.SupplyEnergy, m.RingRetired.Happened, m.EnergyReturned, st.VoltageAtTurnOff, st.FinalVoltage)
	}
	if rel := m.EnergyResidualRel(); rel > 1e-6 {
		t.Errorf("energy residual %.3g of the largest flow, want <= 1e-6", rel)
	}
	as := md.Assess(res)
	for _, n := range as.Notes {
		if n.Figure == "energy returned to supply" && n.Level != "info" {
			t.Errorf("a storage capacitor's returned energy: %s note %q", n.Level, n.Text)
		}
	}
	t.Logf("returned %.4g J; capacitor %.6g V → %.6g V; residual %.3g", m.EnergyReturned, st.VoltageAtTurnOff, st.FinalVoltage,
		m.EnergyResidualRel())
}

// storage capacitor.charge time: the capacitor starts where first-order RC
// charging from empty through the charging and source resistances puts it,
// v0 = Vs·(1 − e^(−t/RC)) (Hayt & Kemmerly, Engineering Circuit Analysis,
// ch. 8), and RechargeTime from 0 V to that voltage gives the charge time
// back (the same law inverted).
func TestStorageChargeTime(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile("scenarios/latch-valve-9v-cap.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(good), "    charging resistance: 100 ohm\n", "    charging resistance: 100 ohm\n    charge time: 150 ms\n", 1)
	md := modelFromText(t, text, "ct.yaml")
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	const vs, r, c, tc = 9.0, 100.0 + 1.0, 2200e-6, 0.150 // the demo: 100 ohm charging + 1 ohm source
	want := vs * (1 - math.Exp(-tc/(r*c)))
	got := res.Metrics.Storage.ChargeVoltage
	if math.Abs(got-want) > 1e-12*want {
		t.Errorf("start voltage after 150 ms of charging: %.12g V, want %.12g V", got, want)
	}
	// A capacitor's stored energy ½·C·V² (Hayt & Kemmerly, ch. 7) at that
	// start voltage, which the storage command's caution quotes.
	if e, want := md.Storage.StartEnergy(vs), 0.5*c*want*want; math.Abs(e-want) > 1e-12*want {
		t.Errorf("energy at the start %.9g J, want %.9g J", e, want)
	}
	if back, ok := RechargeTime(r, c, vs, 0, got); !ok || math.Abs(back-tc) > 1e-9*tc {
		t.Errorf("recharge time from 0 V to %.6g V: %v s (%v), want %g s", got, back, ok, tc)
	}
	for _, bad := range []struct{ old, new, want string }{
		{"    charging resistance: 100 ohm\n", "    charging resistance: 100 ohm\n    charge time: 150 ms\n    charge voltage: 8 V\n", "not both"},
		{"    charging resistance: 100 ohm\n", "    charge time: 150 ms\n", "needs supply.storage capacitor.charging resistance"},
		{"    charging resistance: 100 ohm\n", "    charging resistance: 100 ohm\n    charge time: 150 mA\n", "supply.storage capacitor.charge time"},
	} {
		_, err := Parse([]byte(strings.Replace(string(good), bad.old, bad.new, 1)), "ct.yaml")
		errorHas(t, fmt.Sprintf("%q", bad.new), err, []string{bad.want, "ct.yaml:"})
	}
}
