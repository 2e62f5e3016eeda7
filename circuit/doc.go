// Package circuit models the drive of a solenoid coil: a DC supply behind a
// source resistance, a low-side switch (on-resistance, output capacitance,
// avalanche breakdown, body diode), the coil's winding capacitance, the
// inductive-kick suppression part (freewheel diode, diode + Zener,
// bidirectional TVS or RC snubber across the coil, a Zener/TVS clamp across
// the switch, or an H-bridge whose diodes return the current to the supply
// and which can drive a reverse pulse), and the slow-decay recirculation
// path of a chopping driver. Controller runs the drive's control law while
// energized (PWM, peak and hold, boost then hold) as a state machine of time
// events and current guards.
//
// Devices are ideal or piecewise linear with conduction modes rather than
// smooth exponential laws: a conducting clamp pins a voltage, and the mode
// changes when a current or voltage crosses a threshold. The package gives,
// for a mode and the coil current, the coil's terminal voltage, the
// derivatives of its own states (switch node and snubber capacitor
// voltages), the power in every part, and guard functions whose zero
// crossings are the mode changes. It knows nothing of magnets, plungers or
// integrators.
//
// Where a capacitor sits in parallel with a conducting low-impedance path
// (the capacitance at the switch node while the switch, a clamp or the
// avalanche conducts) its voltage is taken as equal to the pinned node
// voltage (a singular-perturbation reduction: the omitted mode has a time
// constant of picoseconds to nanoseconds). The energy this leaves out is
// of order ½·C·ΔV², reported in the run's energy balance residual.
//
// Sign conventions: coil current iL flows from the supply rail through the
// coil into the switch node; coil voltage is rail minus switch node; switch
// voltage is switch node to ground.
package circuit
