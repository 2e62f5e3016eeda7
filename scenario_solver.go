package coilkick

// solverSection tunes the integrator (SolverSpec); a missing key leaves
// the integrator's own setting.
var solverSection = &sectionSpec{path: "solver", keys: []*keySpec{
	{name: "tolerance", rng: newRange(Dimensionless, "1e-12 to 1e-3", "relative tolerance"), need: whenGiven,
		example: "1e-8", doc: "relative tolerance; default the integrator's own (1e-8)"},
	{name: "max steps", rng: wholeRange("1 to 100000000", "attempted steps"), need: whenGiven, example: "2000000",
		doc: "attempted steps before the run fails with a clear error; default the integrator's own (2000000)"},
}}

// loadSolver reads the optional solver section.
func (l *scenarioLoader) loadSolver(sec *yamlSection) {
	l.read(sec, "tolerance", &l.s.Solver.Tolerance)
	l.readWhole(sec, "max steps", &l.s.Solver.MaxSteps)
}
