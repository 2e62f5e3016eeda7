// Package coilkick simulates the transient of a DC electromagnet (solenoid)
// drive: it couples the drive circuit (package circuit), the magnet's flux
// linkage and force versus gap (package magnet), the plunger's motion
// between two stops (package mech) and the coil's heating, integrates them
// as one piecewise-smooth ODE with events, and turns the result into the
// figures a driver designer acts on (pull-in and release times, peak
// current, switch voltage, clamp energy, winding temperature) and their
// verdicts against the ratings.
//
// It is for: loading a scenario file into a Model, simulating one
// actuation (Simulate), assessing it (Model.Assess), and the design studies
// built on many runs (sweeps, tolerance corners, clamp comparison,
// solve-for, duty-cycle heating, calibration to a measured current trace).
// Everything inside is SI; units exist only where text is parsed.
//
// It is not for: the physics of one part (circuit, magnet and mech each
// model their own and import nothing of each other; only this package
// joins them), the command line, tables, plots or reports (cmd/coilkick),
// or field computation beyond the magnet package's own models.
//
// # Files by concern
//
// Each concern's files share a prefix, so they sort together:
//
//   - scenario*.go — scenario loading and units. scenario.go holds the
//     scenario's types (the file's sections); scenario_load.go reads a file
//     into them (Load, Parse) and the scenario_<section>.go files read one
//     section each; scenario_ranges.go holds every key's specification
//     (keySpec: name, dimension and unit, range, required or default), the
//     one table the loader, the README's key reference and the Parse
//     comment are checked against; scenario_units.go parses quantities with units
//     (ParseQuantity); scenario_input.go opens input files safely.
//   - sim_*.go — the coupled system. sim_model.go builds a Model from a
//     scenario (Build, LoadModel); sim_system.go is the state vector and
//     its right-hand side (flux linkage, gap, velocity, node voltages,
//     temperatures and the energy integrals); sim_run.go runs one
//     actuation (Simulate): the modes, the event handling, the metrics as
//     they happen and the energy balance at the end; sim_ring.go retires
//     the switch node's ring after turn-off; sim_periodic.go repeats a
//     chopped hold's periodic steady state instead of integrating it;
//     sim_brake.go records a constant or PWM drive's soft-landing brake interval
//     (its events and Metrics.Brake); the study that tunes the brake
//     against the tolerance corners is study_land.go (Land); sim_storage.go
//     is a capacitor-discharge drive's storage capacitor (StorageCapacitor:
//     the bus capacitor behind its ESR, its charging path, its figures and
//     the recharge time's closed form, RechargeTime).
//   - ode*.go — the integrator, which knows nothing of solenoids: ode.go
//     steps, controls the error, lands on time events and locates state
//     events (guards) on the dense output; ode_methods.go holds the
//     Dormand–Prince 5(4) and Rosenbrock (Rodas5P) methods.
//   - assess*.go — metrics and assessment. assess_metrics.go defines every
//     figure of a run (Metrics; each field's comment is its definition);
//     assess.go checks them against the ratings and requirements and
//     writes the safety notes; assess_magnet.go computes the coil and
//     magnet figures without simulating (MagnetSummary, ForceCurves);
//     assess_curves.go describes a magnet given as force curves (CurveData:
//     what the model assumed, where it extrapolates, the LCR readings
//     against the curves). scenario_force_curves.go reads the force-curve
//     file (columns with units, one curve per current or voltage).
//   - study_*.go — design studies on many runs: study_sweep.go (a grid
//     over scenario keys), study_corners.go (tolerance corners and Monte
//     Carlo yield), study_solve.go (the solve-for searches by bisection:
//     lowest supply, hold setting and clamp voltage), study_clamps.go (the
//     suppression options compared and one recommended), study_heat.go
//     (the duty-cycle heating study), study_signature.go (the end-of-stroke
//     signature: the current-sense chain, the dip, the runs at every corner
//     with the plunger free and blocked), study_signature_detect.go (the
//     recommended detection settings and a chopped drive's signature) and
//     study_storage.go (StorageSize: a capacitor-discharge drive's smallest
//     IEC 60063 capacitance and shortest reliable pulses at every corner).
//   - fit*.go — calibration from a measured trace: fit_trace.go reads a
//     scope CSV and finds its events (energize, the pull-in dip, the
//     decay); fit.go fits the model's parameters to it.
//
// # Where to find
//
//   - The clamp energy: the energy integral qClamp of the state vector
//     (sim_system.go) accumulates the suppression part's power; at the end
//     of a run sim_run.go splits it at the de-energize command into
//     Metrics.ClampEnergy (turn-off) and Metrics.ChopClampEnergy (while
//     chopping). The definition is the field's comment in assess_metrics.go.
//   - How an event is located: odeIntegrator.locate in ode.go (Illinois
//     regula falsi on the dense output); the guards come from run.guards
//     (sim_run.go), system.guardsAt (sim_system.go) and the parts' guards
//     in package circuit; the event is applied by run.event (sim_run.go).
//   - Where a YAML key is parsed: in the scenario_<section>.go file of its
//     section (scenario_drive.go for the drive section), by
//     scenarioLoader.read with the key's keySpec from scenario_ranges.go;
//     the units of its value are parsed by ParseQuantity in
//     scenario_units.go.
package coilkick
