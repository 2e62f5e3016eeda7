package coilkick

// ratingsSection holds ratings and requirements (LimitsSpec): every key
// is optional, and a missing one stays 0 (not checked).
var ratingsSection = &sectionSpec{path: "ratings", keys: []*keySpec{
	{name: "switch voltage", rng: newRange(Voltage, "1 V to 10 kV", ""), need: whenGiven, example: "60 V",
		doc: "the peak switch voltage must not exceed it"},
	{name: "avalanche energy", rng: newRange(Energy, "1 µJ to 10 kJ", ""), need: whenGiven, example: "20 mJ",
		doc: "single pulse"},
	{name: "clamp energy", rng: newRange(Energy, "1 µJ to 10 kJ", ""), need: whenGiven, example: "50 mJ",
		doc: "per operation"},
	{name: "clamp current", rng: newRange(Current, "1 µA to 10 kA", ""), need: whenGiven, example: "2 A"},
	{name: "pull-in time", rng: newRange(Time, "1 µs to 60 min", ""), need: whenGiven, example: "40 ms",
		doc: "requirement: a maximum"},
	{name: "release time", rng: newRange(Time, "1 µs to 60 min", ""), need: whenGiven, example: "80 ms",
		doc: "a maximum"},
	{name: "drop time", rng: newRange(Time, "1 µs to 60 min", ""), need: whenGiven, example: "100 ms",
		doc: "a maximum"},
	{name: "hold force margin", rng: newRange(Dimensionless, "0.01 to 100", ""), need: whenGiven, example: "1.2",
		doc: "a minimum: pull at the lowest hold current ÷ spring + load at the seat"},
}}

// loadRatings reads the optional ratings section.
func (l *scenarioLoader) loadRatings(sec *yamlSection) {
	lim := &l.s.Limits
	l.read(sec, "switch voltage", &lim.SwitchVoltage)
	l.read(sec, "avalanche energy", &lim.AvalancheEnergy)
	l.read(sec, "clamp energy", &lim.ClampEnergy)
	l.read(sec, "clamp current", &lim.ClampCurrent)
	l.read(sec, "pull-in time", &lim.MaxPullIn)
	l.read(sec, "release time", &lim.MaxRelease)
	l.read(sec, "drop time", &lim.MaxDrop)
	l.read(sec, "hold force margin", &lim.MinHoldMargin)
}
