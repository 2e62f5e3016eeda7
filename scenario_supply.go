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
	{name: "storage capacitor", kind: keySection, sub: storageSection, need: whenGiven,
		doc: "capacitor-discharge drive: a charged capacitor feeds the drive (instead of bulk capacitance)"},
}}

// storageSection is a capacitor-discharge drive's storage capacitor
// (StorageSpec).
var storageSection = &sectionSpec{path: "supply.storage capacitor", keys: []*keySpec{
	{name: "capacitance", rng: newRange(Capacitance, "1 uF to 10 F", ""), example: "2200 uF"},
	{name: "esr", rng: newRange(Resistance, "0 ohm to 100 ohm", ""), need: optional, defText: "0 ohm", example: "0.1 ohm",
		doc: "equivalent series resistance, in series with the drive"},
	{name: "charge voltage", rng: newRange(Voltage, "100 mV to 1 kV", ""), need: whenGiven, example: "9 V",
		doc: "the voltage it starts at, at most supply.voltage; default supply.voltage"},
	{name: "charge time", rng: newRange(Time, "1 µs to 60 min", ""), need: whenGiven, example: "500 ms",
		doc: "instead of charge voltage: charged from empty through the charging resistance (and the source resistance) for this long before the run, so it starts at supply.voltage × (1 − e^(−t/RC)); needs charging resistance"},
	{name: "charging resistance", rng: newRange(Resistance, "1 mohm to 100 Mohm", ""), need: whenGiven, example: "100 ohm",
		doc: "from supply.voltage (in series with its source resistance), during and after the pulse; without it the capacitor has no charging path (the battery disconnected)"},
	{name: "recharge fraction", rng: newRange(Dimensionless, "0.001 % to 50 %", ""), need: optional, def: defaultRechargeFraction,
		defText: "1 %", example: "1 %", doc: "recharged means back within this fraction of the charge voltage"},
}}

// defaultRechargeFraction: recharged is within 1 % of the charge voltage.
const defaultRechargeFraction = 0.01

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
	if st := l.sub(sec, "storage capacitor"); st != nil {
		if sp.BulkCapacitance > 0 {
			l.errf("supply.storage capacitor", "give either supply.bulk capacitance or supply.storage capacitor, not both")
		}
		sp.Storage = l.loadStorage(st)
	}
}

// loadStorage reads the storage capacitor of a capacitor-discharge drive.
func (l *scenarioLoader) loadStorage(sec *yamlSection) *StorageSpec {
	st := &StorageSpec{}
	l.read(sec, "capacitance", &st.Capacitance)
	l.read(sec, "esr", &st.ESR)
	if l.read(sec, "charge voltage", &st.ChargeVoltage) {
		l.exceed("supply.voltage", l.s.Supply.Voltage, "supply.storage capacitor.charge voltage", st.ChargeVoltage, true)
	}
	l.read(sec, "charging resistance", &st.ChargingResistance)
	l.read(sec, "recharge fraction", &st.RechargeFraction)
	if l.read(sec, "charge time", &st.ChargeTime) {
		switch {
		case sec.has("charge voltage"):
			l.errf("supply.storage capacitor.charge time", "give either charge voltage or charge time, not both")
		case !sec.has("charging resistance"):
			l.errf("supply.storage capacitor.charge time", "needs supply.storage capacitor.charging resistance (the path it was charged through)")
		}
	}
	return st
}
