package coilkick

import (
	"math"

	"coilkick/circuit"
	"coilkick/magnet"
	"coilkick/mech"
)

// State vector of the coupled system. The first stateJac components feed
// back into the right-hand side; the rest are quadratures (energies) that
// the integrator carries with the same error control.
const (
	sFlux     = iota // λ, Wb: coil flux linkage
	sGap             // x, m: working air gap
	sVel             // v = dx/dt, m/s
	sSwitchC         // V: switch output capacitor voltage (used in circuit mode Off)
	sSnubberC        // V: snubber capacitor voltage
	qSupply          // J delivered by the ideal source
	qCoilR           // J in the coil resistance
	qSource          // J in the source resistance
	qSwitch          // J in the switch (conduction, avalanche, body diode, capacitive turn-on)
	qAval            // J of avalanche (part of qSwitch)
	qClamp           // J in the suppression part
	qMech            // J of mechanical work done by the magnetic force
	nState

	stateJac = qSupply
)

// Mechanical modes.
type mechMode int

const (
	mechFree   mechMode = iota // between the stops
	mechSeated                 // held at the energized stop (x = GapMin)
	mechRest                   // held at the rest stop (x = GapMax)
)

func (m mechMode) String() string {
	return [...]string{"moving", "seated", "at rest"}[m]
}

// system is the coupled electrical–magnetic–mechanical model in its
// current modes. It is the only place that knows all the domains.
type system struct {
	mag     magnet.Model
	plunger mech.Plunger
	drive   circuit.Drive
	r       float64 // ohm, coil resistance at the run's winding temperature

	cmode circuit.Mode
	mmode mechMode
	pt    circuit.Point // scratch
}

// outputs are the algebraic quantities at a state.
type outputs struct {
	Current, CoilVoltage, SwitchVoltage, SupplyCurrent, ClampCurrent float64
	Gap, Velocity, MagneticForce, PassiveForce                       float64
}

func (s *system) current(y []float64) float64 {
	if s.cmode == circuit.Off && s.drive.Open() {
		return 0
	}
	return s.mag.Current(y[sFlux], y[sGap])
}

// solve evaluates the circuit at y into s.pt and returns the coil current.
func (s *system) solve(y []float64) float64 {
	i := s.current(y)
	s.drive.Solve(s.cmode, i, y[sSwitchC], y[sSnubberC], &s.pt)
	return i
}

func (s *system) deriv(_ float64, y, dy []float64) {
	i := s.solve(y)
	pt := &s.pt
	x, v := y[sGap], y[sVel]
	pull := s.mag.Force(i, x)
	if pt.CurrentPinned {
		dy[sFlux] = 0
	} else {
		dy[sFlux] = pt.CoilVoltage - s.r*i
	}
	if s.mmode == mechFree {
		dy[sGap] = v
		dy[sVel] = s.plunger.Acceleration(x, v, pull)
	} else {
		dy[sGap], dy[sVel] = 0, 0
	}
	dy[sSwitchC] = 0
	if s.cmode == circuit.Off {
		dy[sSwitchC] = pt.DSwitchCap
	}
	dy[sSnubberC] = pt.DSnubberCap
	dy[qSupply] = pt.PSupply
	dy[qCoilR] = s.r * i * i
	dy[qSource] = pt.PSource
	dy[qSwitch] = pt.PSwitch
	dy[qAval] = pt.PAvalanche
	dy[qClamp] = pt.PClamp
	if s.mmode == mechFree {
		dy[qMech] = -pull * v
	} else {
		dy[qMech] = 0
	}
}

// out computes the algebraic outputs at y.
func (s *system) out(y []float64) outputs {
	i := s.solve(y)
	x, v := y[sGap], y[sVel]
	return outputs{
		Current: i, CoilVoltage: s.pt.CoilVoltage, SwitchVoltage: s.pt.SwitchVoltage,
		SupplyCurrent: s.pt.SupplyCurrent, ClampCurrent: math.Abs(s.pt.ClampCurrent),
		Gap: x, Velocity: v, MagneticForce: s.mag.Force(i, x), PassiveForce: s.plunger.PassiveForce(x, v),
	}
}

// Guard layout: circuit guards first, then mechanical ones.
func (s *system) guardsAt(y, g []float64) (nc, n int) {
	i := s.solve(y)
	nc = s.drive.Guards(s.cmode, i, &s.pt, g)
	n = nc
	x := y[sGap]
	switch s.mmode {
	case mechFree:
		g[n] = s.plunger.GapMin - x   // reaching the seat
		g[n+1] = x - s.plunger.GapMax // reaching the rest stop
		n += 2
	case mechSeated:
		// Leaves when the passive force exceeds the pull.
		g[n] = s.plunger.PassiveForce(s.plunger.GapMin, 0) - s.mag.Force(i, s.plunger.GapMin)
		n++
	case mechRest:
		g[n] = s.mag.Force(i, s.plunger.GapMax) - s.plunger.PassiveForce(s.plunger.GapMax, 0)
		n++
	}
	return nc, n
}

// fieldEnergy returns the magnetic energy stored at y (J).
func (s *system) fieldEnergy(y []float64) float64 {
	i := s.current(y)
	return magnet.FieldEnergy(s.mag, i, y[sGap])
}

// storedCapEnergy returns the energy in the drive's capacitors at y (J);
// a capacitor whose voltage is pinned by a conducting path holds the
// pinned voltage.
func (s *system) storedCapEnergy(y []float64) float64 {
	s.solve(y)
	e := 0.0
	if c := s.drive.Switch.OutputCapacitance; c > 0 {
		v := s.pt.SwitchVoltage
		if s.cmode == circuit.Off {
			v = y[sSwitchC]
		}
		e += 0.5 * c * v * v
	}
	if s.drive.Suppressor.Kind == circuit.Snubber {
		v := y[sSnubberC]
		e += 0.5 * s.drive.Suppressor.Capacitance * v * v
	}
	return e
}
