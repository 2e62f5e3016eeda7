package coilkick

import "strings"

// thermalSection is the coil's thermal network (ThermalSpec): the ambient,
// and one of three ways to give the network: a datasheet rating, a surface,
// or an explicit two-node network.
var thermalSection = &sectionSpec{path: "thermal", keys: []*keySpec{
	{name: "ambient", rng: newRange(Temperature, "-100 degC to 400 degC", ""), example: "40 degC"},
	{name: "insulation class", kind: keyText, need: whenGiven, example: "F",
		doc: "IEC 60085: A 105, E 120, B 130, F 155, H 180, N 200, R 220 degC"},
	{name: "temperature rise", rng: newRange(Temperature, "100 mK to 500 K", ""), need: needWhere, example: "80 K",
		doc: "one node from a rating: the steady rise (in K) at a power"},
	{name: "at power", rng: newRange(Power, "1 mW to 100 kW", ""), need: needWhere, example: "10 W"},
	{name: "time constant", rng: newRange(Time, "100 ms to 6000 min", ""), need: needWhere, example: "12 min",
		doc: "and the thermal time constant"},
	{name: "surface area", rng: newRange(Area, "1 mm2 to 10 m2", ""), need: needWhere, example: "60 cm2",
		doc: "or one node from a surface: its area"},
	{name: "convection coefficient", rng: newRange(HeatTransfer, "0.1 W*m^-2*K^-1 to 10000 W*m^-2*K^-1", ""),
		need: needWhere, example: "12 W*m^-2*K^-1", doc: "12 W*m^-2*K^-1 is common practice for still air"},
	{name: "heat capacity", rng: newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""), need: needWhere, example: "150 J/K",
		doc: "may be left out with coil.build: copper mass × 385 J/(kg·K)"},
	{name: "winding heat capacity", rng: newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""), need: needWhere, example: "60 J/K",
		doc: "or a two-node network"},
	{name: "winding to housing", rng: newRange(ThermalResistance, "1 mK/W to 10000 K/W", ""), need: needWhere, example: "2 K/W"},
	{name: "housing heat capacity", rng: newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""), need: needWhere, example: "300 J/K"},
	{name: "housing to ambient", rng: newRange(ThermalResistance, "1 mK/W to 10000 K/W", ""), need: needWhere, example: "5 K/W"},
}}

// thermalMessage says what the thermal section needs besides the ambient.
const thermalMessage = "give exactly one of: a rating (temperature rise, at power, time constant), " +
	"a surface (surface area, convection coefficient, heat capacity) or a two-node network " +
	"(winding heat capacity, winding to housing, housing heat capacity, housing to ambient)"

// thermalChoice: a rating, a surface or a two-node network.
var thermalChoice = choice{
	alts: [][]string{
		{"temperature rise", "at power", "time constant"},
		{"surface area", "convection coefficient", "heat capacity"},
		{"winding heat capacity", "winding to housing", "housing heat capacity", "housing to ambient"},
	},
	both: thermalMessage, bothAt: "thermal",
	missing: thermalMessage, missingAt: "thermal",
}

// loadThermal reads the optional thermal section.
func (l *scenarioLoader) loadThermal(sec *yamlSection) {
	if sec == nil {
		return
	}
	t := &ThermalSpec{}
	l.s.Thermal = t
	l.read(sec, "ambient", &t.Ambient)
	if text, ok := l.scalar(sec, "insulation class", false, "an IEC 60085 class letter: A, E, B, F, H, N or R"); ok {
		t.Class = strings.TrimSpace(text)
	}
	switch l.pick(sec, thermalChoice) {
	case 0:
		t.Kind = "rating"
		if l.read(sec, "temperature rise", &t.Rise) {
			if txt := l.text["thermal.temperature rise"]; strings.Contains(txt, "C") {
				l.errf("thermal.temperature rise", "%q: a temperature rise is written in K, e.g. \"60 K\"", txt)
			}
		}
		l.read(sec, "at power", &t.AtPower)
		l.read(sec, "time constant", &t.TimeConstant)
	case 1:
		t.Kind = "surface"
		l.read(sec, "surface area", &t.SurfaceArea)
		l.read(sec, "convection coefficient", &t.Convection)
		if l.s.Coil.Build == nil || sec.has("heat capacity") {
			l.read(sec, "heat capacity", &t.HeatCapacity)
		}
	case 2:
		t.Kind = "network"
		l.read(sec, "winding heat capacity", &t.HeatCapacity)
		l.read(sec, "winding to housing", &t.WindingToHousing)
		l.read(sec, "housing heat capacity", &t.HousingCapacity)
		l.read(sec, "housing to ambient", &t.HousingToAmbient)
	}
}
