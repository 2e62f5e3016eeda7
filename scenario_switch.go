package coilkick

// switchSection is the low-side switch (SwitchSpec).
var switchSection = &sectionSpec{path: "switch", keys: []*keySpec{
	{name: "on resistance", rng: newRange(Resistance, "0 ohm to 1 kohm", ""), example: "40 mohm"},
	{name: "output capacitance", rng: newRange(Capacitance, "0 or 1 pF to 1 µF", "0: ideal edges"), need: optional,
		defText: "0 F", example: "300 pF", doc: "0: ideal edges"},
	{name: "breakdown voltage", rng: newRange(Voltage, "1 V to 10 kV", ""), example: "60 V",
		doc: "where the switch avalanches, > supply.voltage"},
	{name: "body diode drop", rng: newRange(Voltage, "100 mV to 5 V", ""), need: optional, def: defaultBodyDiodeDrop,
		defText: "0.7 V", example: "0.7 V"},
	{name: "rise time", rng: newRange(Time, "0 s to 1 ms", ""), need: optional, defText: "0 s", example: "100 ns",
		doc: "edge times, for the switching-loss estimate"},
	{name: "fall time", rng: newRange(Time, "0 s to 1 ms", ""), need: optional, defText: "0 s", example: "100 ns"},
}}

// defaultBodyDiodeDrop is switch.body diode drop when not given (V).
const defaultBodyDiodeDrop = 0.7

// loadSwitch reads the switch section.
func (l *scenarioLoader) loadSwitch(sec *yamlSection) {
	sw := &l.s.Switch
	l.read(sec, "on resistance", &sw.OnResistance)
	l.read(sec, "output capacitance", &sw.OutputCapacitance)
	l.read(sec, "breakdown voltage", &sw.BreakdownVoltage)
	l.read(sec, "body diode drop", &sw.BodyDiodeDrop)
	l.read(sec, "rise time", &sw.RiseTime)
	l.read(sec, "fall time", &sw.FallTime)
	l.exceed("switch.breakdown voltage", sw.BreakdownVoltage, "supply.voltage", l.s.Supply.Voltage, false)
}
