package coilkick

import "math"

// StorageCapacitor is the storage capacitor of a capacitor-discharge
// drive: it starts charged and feeds the drive through its ESR; a charging
// resistor from the supply (if any) recharges it during and after the
// pulse. In the run it is the bus capacitor (state sBus) with the ESR as the
// drive's source resistance (circuit.Drive.SolveRail books its loss as the
// source's) and the charging resistor, in series with the supply's source
// resistance, as the path from the ideal source; with no charging path the
// source gives nothing.
type StorageCapacitor struct {
	Capacitance float64 // F
	ESR         float64 // ohm
	// ChargeVoltage (V) at the start of a run; 0: the supply voltage (so
	// that a study's supply override moves it too).
	ChargeVoltage float64
	// ChargingResistance (ohm) from the supply; 0: no charging path.
	ChargingResistance float64
	// RechargeFraction: recharged means within this fraction of the charge
	// voltage.
	RechargeFraction float64
	// ChargeTime (s), when not 0 (and ChargeVoltage is 0): the capacitor
	// was charged from empty through ChargingResistance in series with
	// SourceResistance (ohm, the supply's) for this long before the run.
	ChargeTime, SourceResistance float64
}

// StartEnergy returns the energy (J) the capacitor holds at the start of a
// run with supply voltage vs (V): ½·C·V0² at its start voltage (the charge
// voltage, the voltage after the charge time, or vs).
func (sc *StorageCapacitor) StartEnergy(vs float64) float64 {
	v := sc.startVoltage(vs)
	return 0.5 * sc.Capacitance * v * v
}

// startVoltage returns the capacitor's voltage at the start of a run with
// supply voltage vs (V): the charge voltage, or after ChargeTime of
// first-order RC charging from empty, v = vs·(1 − e^(−t/(R·C))) (Hayt &
// Kemmerly, Engineering Circuit Analysis, ch. 8), or vs.
func (sc *StorageCapacitor) startVoltage(vs float64) float64 {
	switch {
	case sc.ChargeVoltage > 0:
		return sc.ChargeVoltage
	case sc.ChargeTime > 0 && sc.ChargingResistance > 0:
		rc := (sc.ChargingResistance + sc.SourceResistance) * sc.Capacitance
		return -vs * math.Expm1(-sc.ChargeTime/rc)
	}
	return vs
}

// RechargeTime returns the time (s) a capacitor of capacitance c (F)
// charged through resistance r (ohm) from a source vs (V) takes from v0 to
// target (V), and whether it gets there: first-order RC charging,
// v(t) = vs − (vs − v0)·e^(−t/(R·C)), so t = R·C·ln((vs − v0)/(vs − target))
// (Hayt & Kemmerly, Engineering Circuit Analysis, ch. 8). 0 when v0 is at
// the target already; false when the source cannot reach the target
// (target ≥ vs) or there is no path (r = 0 stands for none).
func RechargeTime(r, c, vs, v0, target float64) (float64, bool) {
	switch {
	case v0 >= target:
		return 0, true
	case !(r > 0) || !(target < vs):
		return 0, false
	}
	return r * c * math.Log((vs-v0)/(vs-target)), true
}

// charging returns the current (A) from the ideal source into the bus
// capacitor at y and the resistance (ohm) it flows through: the source
// resistance for a bulk capacitor, the charging path for a storage
// capacitor (0 and 0 with no charging path).
func (s *system) charging(y []float64) (iin, rin float64) {
	rin = s.rs
	if s.storage != nil {
		if s.storage.ChargingResistance == 0 {
			return 0, 0
		}
		rin += s.storage.ChargingResistance
	}
	return (s.v0 - y[sBus]) / rin, rin
}

// storageStart records the storage capacitor's starting voltage.
func (r *run) storageStart(y []float64) {
	if r.storage == nil {
		return
	}
	v := y[sBus]
	r.res.Metrics.Storage = StorageMetrics{Fitted: true, ChargeVoltage: v, VoltageAtTurnOff: v, FinalVoltage: v,
		MinVoltage: v}
}

// storageTrack lowers the capacitor's lowest voltage to that of o.
func (r *run) storageTrack(o outputs) {
	if r.storage != nil {
		st := &r.res.Metrics.Storage
		st.MinVoltage = math.Min(st.MinVoltage, o.StorageVoltage)
	}
}

// storageFinish fills the storage capacitor's figures at the end of the run
// (state y; r.off is the state at the de-energize command).
func (r *run) storageFinish(y []float64) {
	if r.storage == nil {
		return
	}
	st := &r.res.Metrics.Storage
	c := r.storage.Capacitance
	v0 := st.ChargeVoltage
	if r.offDone {
		st.VoltageAtTurnOff = r.off[sBus]
	}
	st.FinalVoltage = y[sBus]
	st.PulseEnergy = 0.5 * c * (v0*v0 - st.VoltageAtTurnOff*st.VoltageAtTurnOff)
	st.RunEnergy = 0.5 * c * (v0*v0 - st.FinalVoltage*st.FinalVoltage)
	st.RechargeTarget = (1 - r.storage.RechargeFraction) * v0
	_, rin := r.charging(y)
	t, ok := RechargeTime(rin, c, r.baseV0, st.FinalVoltage, st.RechargeTarget)
	st.Recharge = Interval{ok, t}
	switch {
	case ok:
	case rin == 0:
		st.NoRecharge = "not recharged (no charging path)"
	default:
		st.NoRecharge = "not recharged (the supply is below the recharge target)"
	}
}

// steadyResistance returns the resistance (ohm) between the ideal source
// and the drive in the steady state: the source resistance, plus a storage
// capacitor's charging path and ESR (+Inf with no charging path: no steady
// current).
func (s *system) steadyResistance() float64 {
	if s.storage == nil {
		return s.rs
	}
	if s.storage.ChargingResistance == 0 {
		return math.Inf(1)
	}
	return s.rs + s.storage.ChargingResistance + s.storage.ESR
}

// storageNotes writes the storage capacitor's notes: the energy a bridge
// returned into it, and a capacitor that swung below zero (an under-damped
// discharge ringing on while the switch is on).
func storageNotes(m *Metrics, note func(fig, level, format string, args ...any)) {
	st := m.Storage
	if st.Fitted && m.EnergyReturned > 0 {
		note("energy returned to supply", "info", "the bridge returns %s into the storage capacitor at turn-off (recovered for the next pulse)", formatEnergy(m.EnergyReturned))
	}
	if st.Fitted && st.MinVoltage < 0 {
		note("lowest capacitor voltage", "caution", "the storage capacitor swings to %.3g V: the discharge is under-damped and rings on while the switch is on; a polarised (electrolytic) capacitor is then reverse-biased, and a freewheel diode across the coil would conduct, which the model does not follow while the switch is on: end the pulse before the capacitor reaches zero, or damp the discharge", st.MinVoltage)
	}
}
