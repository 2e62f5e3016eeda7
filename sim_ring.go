package coilkick

import (
	"math"

	"coilkick/circuit"
)

// Ring retirement.
//
// Once the suppression part (or the switch's avalanche) has stopped
// conducting after the de-energize command, the switch node's capacitance
// (the switch's output capacitance and the winding capacitance) rings with
// the coil's inductance: an L–C oscillation about the quiescent state (no
// coil current, the node at the rail). Nothing but the coil resistance, a
// core-loss resistance and the source resistance damps it; undamped, it
// lasts for the rest of the run at tens of kilohertz, and an explicit
// method must follow every cycle (and, once it has decayed, stays limited
// by the oscillation's stability bound).
//
// When the ring can no longer make anything happen, its waveform carries
// no information the run reports: no guard can be reached (the node stays
// clear of every clamp, the avalanche and the body diode with a margin),
// and no extreme of the switch voltage can be exceeded. From then on the
// run follows the ring by its energy E alone, the method of averaging
// (Krylov–Bogoliubov; Sanders, Verhulst & Murdock, Averaging Methods in
// Nonlinear Dynamical Systems, 2nd ed., 2007), and the circuit goes to its
// quiescent state. Averaged over a cycle of a lightly damped L–C ring, half
// the energy is magnetic and half electric, so ⟨i²⟩ = E/L and
// ⟨v²⟩ = E/C, and
//
//	dE/dt = −E·(R/L + 1/(C·Rp) + Rs·(Coss/C)²/L) + F_ring·v,
//	F_ring = ½·⟨i²⟩·(−dL/dx) = (E/L)·F(δ)/δ²,
//
// the last term the mechanical work of the ring's mean pull on the moving
// plunger (it makes E/ω an adiabatic invariant: the ring grows when the gap
// opens and L falls). The losses go to the coil resistance, the core-loss
// resistance and the source resistance; the pull acts on the plunger and
// heats nothing. The error of the averaging is of the order of the ring's
// period over the time scale of its envelope and of the motion (1e-3 on the
// demos) on a ring energy that is itself some 1e-6 of the supply energy.
//
// The retirement is checked a posteriori: the envelope amplitude √(2E/C)
// is compared along the rest of the run with the thresholds; if it comes
// within 1 % of one, the averaging was not safe and Simulate runs the
// scenario again with the ring followed cycle by cycle.

// Ring-retirement settings.
const (
	// ringMargin: the envelope must stay this fraction below every
	// threshold to retire the ring.
	ringMargin = 0.02
	// ringVisible: with a trace recorded, a ring that decays below this
	// fraction of the rail voltage within ringVisibleCycles periods is
	// followed until then, so that the waveform shows it die out as a
	// bench would (a damped ring costs little); a slower one is retired at
	// once and the trace shows its mean.
	ringVisible       = 0.01
	ringVisibleCycles = 20
	// ringProbe is the small current (A) at which the incremental
	// inductance and the force slope are taken.
	ringProbe = 1e-6
)

// ringCheckMargin: a retired envelope coming this close to a threshold
// invalidates the retirement (a variable so that a test can force the
// rerun).
var ringCheckMargin = 0.01

// ringModel reports whether the run's drive can ring and have the ring
// retired: a node capacitance, no snubber and no eddy-current turn (whose
// quasi-static flux decay is not a ring) and no permanent magnet (the
// retired ring's small-signal pull assumes none: its ring is integrated).
func (s *system) ringModel() bool {
	return s.drive.HasSwitchCap() && s.drive.Suppressor.Kind != circuit.Snubber && s.eddy == 0 && !s.pm
}

// smallSignal returns the coil's incremental inductance at zero current
// (H) and the ratio F(δ)/δ² of its pull at a small current (N/A², half
// the inductance's slope −dL/dx) at gap x.
func (s *system) smallSignal(x float64) (l, pull float64) {
	l = s.mag.FluxLinkage(ringProbe, x) / ringProbe
	pull = s.mag.Force(ringProbe, x) / (ringProbe * ringProbe)
	return l, pull
}

// ringBand returns the largest coil-voltage excursion (V) about zero that
// reaches no threshold of mode Off: a clamp across the coil, the switch
// clamp, the avalanche and the body diode, with the node at rail − v_coil.
func (s *system) ringBand(rail float64) float64 {
	d := &s.drive
	sup := d.Suppressor
	band := math.Inf(1)
	lower := func(v float64) { band = math.Min(band, v) }
	switch sup.Kind {
	case circuit.Freewheel, circuit.DiodeZener, circuit.TVS:
		lower(sup.Voltage) // v_coil > −Vcl (and < Vcl for the TVS)
	case circuit.SwitchClamp:
		lower(sup.Voltage - rail)
	}
	lower(d.Switch.BreakdownVoltage - rail)
	lower(rail + d.Switch.BodyDiodeDrop)
	return band
}

// ringRates returns the ring's damping rate (1/s, the energy's) and its
// split into the coil resistance, the core-loss and the source resistance,
// at gap x and winding resistance r, for node capacitance c.
func (s *system) ringRates(l, r, c float64) (total, coil, core, source float64) {
	coil = r / l
	if s.rp > 0 {
		core = 1 / (c * s.rp)
	}
	if s.bulkC == 0 && s.rs > 0 {
		share := s.retiredCoss / c
		source = s.rs * share * share / l
	}
	return coil + core + source, coil, core, source
}

// ringDeriv adds the retired ring's terms to dy (its energy, its losses,
// its pull's work) and returns its mean pull (N).
func (s *system) ringDeriv(y, dy []float64) float64 {
	e := y[sRing]
	dy[sRing] = 0
	if !s.ringRetired || e <= 0 {
		return 0
	}
	l, fslope := s.smallSignal(y[sGap])
	_, coil, core, source := s.ringRates(l, s.resistance(y), s.retiredC)
	pull := e / l * fslope
	v := 0.0
	if s.mmode == mechFree {
		v = y[sVel]
	}
	dy[sRing] = -e*(coil+core+source) + pull*v
	dy[qCoilR] += e * coil
	dy[qCore] += e * core
	dy[qSource] += e * source
	return pull
}

// ringAmplitude returns the retired ring's coil-voltage amplitude (V).
func (s *system) ringAmplitude(y []float64) float64 {
	if !s.ringRetired || y[sRing] <= 0 {
		return 0
	}
	return math.Sqrt(2 * y[sRing] / s.retiredC)
}

// scheduleRingCheck arms the next retirement check one ring period after t
// (+Inf when the ring cannot be retired now).
func (r *run) scheduleRingCheck(t float64, y []float64) {
	r.tRing = math.Inf(1)
	if r.noRetire || r.ringRetired || !r.ringModel() || !r.offDone || r.energized || r.cmode != circuit.Off ||
		!r.res.Metrics.ClampConduction.Happened || t < r.tRevStart && !math.IsInf(r.tRevStart, 1) {
		return // (a delayed reverse pulse is still to come: follow the ring)
	}
	l, _ := r.smallSignal(y[sGap])
	r.tRing = t + 2*math.Pi*math.Sqrt(l*r.drive.NodeCapacitance())
}

// tryRetireRing retires the ring at t if nothing it could do remains, and
// otherwise schedules the next check.
func (r *run) tryRetireRing(t float64, y []float64) {
	m := &r.res.Metrics
	if r.decayArmed || !m.ClampConduction.Happened {
		r.scheduleRingCheck(t, y)
		return
	}
	i, _ := r.solve(y)
	vcoil := r.pt.CoilVoltage
	rail := r.railVoltage(y)
	c := r.drive.NodeCapacitance()
	l, _ := r.smallSignal(y[sGap])
	e := 0.5*l*i*i + 0.5*c*vcoil*vcoil
	amp := math.Sqrt(2 * e / c)
	band := r.ringBand(rail)
	if !(amp*(1+ringMargin) < band) || rail+amp*(1+ringMargin) > m.PeakSwitchVoltage ||
		rail-amp*(1+ringMargin) < m.MinSwitchVoltage {
		r.scheduleRingCheck(t, y)
		return
	}
	if !r.noTrace && amp > ringVisible*rail {
		rate, _, _, _ := r.ringRates(l, r.resistance(y), c) // energy decay rate; the amplitude decays at half
		period := 2 * math.Pi * math.Sqrt(l*c)
		if math.Log(amp/(ringVisible*rail))/(0.5*rate) <= ringVisibleCycles*period {
			r.scheduleRingCheck(t, y) // a damped ring: let the trace show it die out
			return
		}
	}
	// Retire. The node moves to the rail with the switch capacitance's
	// charge change Coss·v_coil drawn from the supply (rail·Coss·v_coil of
	// energy); what the stored energy loses beyond that is the ring's
	// oscillation energy, ½·L·i² + ½·C·v_coil², kept in sRing. The
	// switch capacitance's quiescent energy at the rail stays stored
	// (system.storedCapEnergy).
	before := r.fieldEnergy(y) + r.storedCapEnergy(y)
	coss := r.drive.Switch.OutputCapacitance
	r.retiredC = c
	r.retiredCoss = coss
	r.drive.Switch.OutputCapacitance = 0
	r.drive.CoilCapacitance = 0
	r.ringRetired = true
	y[sFlux] = 0 // no coil current (ringModel: no permanent magnet, zero flux)
	y[sSwitchC] = rail
	source := rail * coss * vcoil
	if r.storage != nil {
		// A storage capacitor gives that charge: no ideal source behind it
		// (its stored energy falls instead).
		source = r.fromRail(y, coss*vcoil)
	} else {
		y[qSupply] += source
		y[qSupplyQ] += coss * vcoil
	}
	after := r.fieldEnergy(y) + r.storedCapEnergy(y)
	y[sRing] = before + source - after
	r.tRing = math.Inf(1)
	r.ringBandAt = band
	m.RingRetired = Interval{true, t - r.tOff}
	m.RingEnergy = y[sRing]
	if y[sRing] > 0 {
		r.scale[sRing] = y[sRing] // into the error norm, relative to its energy now
	}
	f := 1 / (2 * math.Pi * math.Sqrt(l*c))
	r.note(t, "the switch node's ring (%.3g V at %.3g kHz) can no longer reach a threshold: followed from here by its energy (%s), without its waveform",
		amp, f/1e3, formatEnergy(y[sRing]))
}

// checkRetiredRing records a retired ring whose envelope came within
// ringCheckMargin of a threshold or past a recorded switch-voltage extreme:
// the averaging was not safe there.
func (r *run) checkRetiredRing(y []float64) {
	if !r.ringRetired || r.ringUnsafe {
		return
	}
	amp := r.ringAmplitude(y)
	if amp == 0 {
		return
	}
	rail := r.railVoltage(y)
	m := &r.res.Metrics
	if amp*(1+ringCheckMargin) >= r.ringBandAt || rail+amp > m.PeakSwitchVoltage || rail-amp < m.MinSwitchVoltage {
		r.ringUnsafe = true
	}
}
