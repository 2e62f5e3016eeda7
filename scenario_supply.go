package coilkick

// supplySection is the DC supply (SupplySpec).
var supplySection = &sectionSpec{path: "supply", keys: []*keySpec{
	{name: "voltage", rng: newRange(Voltage, "100 mV to 1 kV", ""), example: "24 V"},
	{name: "source resistance", rng: newRange(Resistance, "0 ohm to 1 kohm", ""), need: optional, defText: "0 ohm",
		example: "0.5 ohm"},
	{name: "bulk capacitance", rng: newRange(Capacitance, "1 nF to 1 F", ""), need: whenGiven, example: "470 uF",
		doc: "a capacitor at the drive's terminals behind the source resistance, which must then be > 0"},
	{name: "low voltage", rng: newRange(Voltage, "100 mV to 1 kV", ""), need: whenGiven, example: "21.6 V",
		doc: "the lowest supply in tolerance (hot-coil check), at most voltage"},
}}

// loadSupply reads the supply section.
func (l *scenarioLoader) loadSupply(sec *yamlSection) {
	sp := &l.s.Supply
	l.read(sec, "voltage", &sp.Voltage)
	l.read(sec, "source resistance", &sp.SourceResistance)
	if l.read(sec, "low voltage", &sp.LowVoltage) {
		l.exceed("supply.voltage", sp.Voltage, "supply.low voltage", sp.LowVoltage, true)
	}
	if l.read(sec, "bulk capacitance", &sp.BulkCapacitance) && !(sp.SourceResistance > 0) {
		l.errf("supply.bulk capacitance", "needs a supply.source resistance > 0 (the capacitor would be tied to an ideal source)")
	}
}
