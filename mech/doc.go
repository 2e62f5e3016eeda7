// Package mech models the moving part of a solenoid: the plunger's mass,
// its return spring, the load it works against (with a helper for a
// pressure acting on a valve orifice), viscous damping and the two end
// stops with a coefficient of restitution.
//
// Convention, used throughout coilkick: x is the working air gap in
// metres. The plunger rests at GapMax (the rest stop, de-energized) and is
// pulled to GapMin (the energized stop; a residual gap from a non-magnetic
// shim is normal). Velocity v = dx/dt is therefore negative while pulling
// in. Forces returned here are signed along +x: positive pushes the gap
// open (against pull-in).
//
// The package knows nothing of coils or integrators: it gives forces and
// the rules for impacts and sticking, and the coupled simulator in the
// root package locates the events.
package mech
