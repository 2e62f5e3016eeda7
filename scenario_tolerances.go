package coilkick

import "strings"

// tolerancesSection is the spread of a corners study (Tolerances).
var tolerancesSection = &sectionSpec{path: "tolerances", keys: []*keySpec{
	{name: "supply", rng: newRange(Dimensionless, "0 % to below 100 %", ""), need: optional, defText: "0 %",
		example: "10 %", doc: "± of the supply voltage"},
	{name: "coil resistance", rng: newRange(Dimensionless, "0 % to below 100 %", ""), need: optional, defText: "0 %",
		example: "7 %"},
	{name: "spring", rng: newRange(Dimensionless, "0 % to below 100 %", ""), need: optional, defText: "0 %",
		example: "10 %", doc: "± of spring preload and rate"},
	{name: "load", rng: newRange(Dimensionless, "0 % to below 100 %", ""), need: optional, defText: "0 %",
		example: "20 %", doc: "± of the load (pressure, constant force)"},
	{name: "ambient", rng: newRange(Temperature, "0 K to 100 K", "a spread in K"), need: optional, defText: "0 K",
		example: "10 K", doc: "± on the winding temperature, in K"},
	{name: "hot winding", rng: newRange(Temperature, "-100 degC to 400 degC", ""), need: whenGiven, example: "100 degC",
		doc: "the winding temperature of the hot corner, as it stands; default the run's temperature + ambient"},
}}

// loadTolerances reads the optional tolerances section.
func (l *scenarioLoader) loadTolerances(sec *yamlSection) {
	if sec == nil {
		return
	}
	t := &l.s.Tolerances
	l.read(sec, "supply", &t.Supply)
	l.read(sec, "coil resistance", &t.CoilResistance)
	l.read(sec, "spring", &t.Spring)
	l.read(sec, "load", &t.Load)
	if l.read(sec, "ambient", &t.Ambient) {
		if txt := l.text["tolerances.ambient"]; strings.Contains(txt, "C") {
			l.errf("tolerances.ambient", "%q: a temperature spread is written in K, e.g. \"10 K\"", txt)
		}
	}
	l.read(sec, "hot winding", &t.HotWinding)
}
