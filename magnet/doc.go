// Package magnet holds magnetic models of a plunger electromagnet (a DC
// solenoid): the coil's flux linkage λ (Wb, weber-turns) and the pull force
// (N) as functions of coil current i (A) and working air gap x (m), plus the
// coil's electrical data (resistance and its temperature law).
//
// It is for: turning a description of the magnetic circuit — two
// inductances and a gap law, or a flux-linkage grid from a field solver or a
// bench — into a Model that an ODE integrator can use with λ as its
// electrical state. Each model is built from a single co-energy function
// W'(i, x), and its force is the exact −∂W'/∂x of that function, so a closed
// cycle in (i, x) returns no net work and the integrator's energy balance
// closes.
//
// It is not for: circuits, switches, suppression parts, mechanics, stops or
// integration (other packages do those); eddy currents, hysteresis, iron
// losses or permanent magnets (every model here is lossless, odd in i and
// has λ(0, x) = 0); or field computation (a Table takes a field solver's
// output, it does not compute fields).
//
// Units are SI throughout: A, m, Wb, H, ohm, K, N, J. Pulling in reduces x;
// Force is the pull toward smaller x and is ≥ 0 for a normal magnet.
package magnet
