// Package magnet holds the magnetic and coil models of a plunger
// electromagnet (a DC solenoid): the coil's flux linkage λ (Wb,
// weber-turns) and the pull force (N) as functions of coil current i (A)
// and working air gap x (m); the coil's resistance and its temperature
// law; the wire and bobbin figures of a winding (CoilBuild: AWG and
// enamelled diameters, turns, resistance, mass); the closed-form air-core
// field and inductance of a coil; the plunger magnet from its dimensions
// and a B–H law of its steel (a reluctance network, sampled into a
// flux-linkage table by BuildTable); the magnet from force–gap curves and
// an open-gap inductance (CurveModel); and the coil's lumped thermal
// network.
//
// It is for: turning a description of the coil and its magnetic circuit —
// two inductances and a gap law, a flux-linkage grid from a field solver or
// a bench, the dimensions and steel of the plunger magnet, or force–gap
// curves from a data sheet or a pull test — into a Model
// that an ODE integrator can use with λ as its electrical state, and the
// coil's electrical and thermal figures alongside. Each model is built
// from a single co-energy function W'(i, x), and its force is the exact
// −∂W'/∂x of that function, so a closed cycle in (i, x) returns no net work
// and the integrator's energy balance closes.
//
// It is not for: circuits, switches, suppression parts, mechanics, stops or
// integration (other packages do those); eddy currents, hysteresis, iron
// losses, or permanent magnets beyond the gap law's linear one and a
// flux-linkage table's offset (every model here is lossless; all but
// those two, Magnetized, are odd in i and have λ(0, x) = 0); or numerical
// field solution (finite elements): the
// fields it computes are closed forms (an air-core coil) and a lumped
// reluctance network, and a Table takes a field solver's output.
//
// Units are SI throughout: A, m, Wb, H, ohm, K, N, J. Pulling in reduces x;
// Force is the pull toward smaller x and is ≥ 0 for a normal magnet.
package magnet
