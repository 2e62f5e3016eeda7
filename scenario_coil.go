package coilkick

// coilSection is the winding's electrical data (CoilSpec).
var coilSection = &sectionSpec{path: "coil", keys: []*keySpec{
	{name: "resistance", rng: newRange(Resistance, "1 mohm to 100 kohm", ""), need: needWhere, example: "72 ohm",
		doc: "at the reference temperature; or instead build"},
	{name: "reference temperature", rng: newRange(Temperature, "-100 degC to 400 degC", ""), need: optional,
		def: defaultRefTemperature, defText: "20 degC", example: "20 degC"},
	{name: "temperature", rng: newRange(Temperature, "-100 degC to 400 degC", ""), need: whenGiven, example: "40 degC",
		doc: "winding temperature during the run; default the reference temperature"},
	{name: "temperature coefficient", rng: newRange(PerKelvin, "0 /K to 0.01 /K", "copper 0.00393 /K"), need: optional,
		def: defaultTempCoeff, defText: "0.00393 /K", example: "0.00393 /K",
		doc: "annealed copper (IEC 60028); the resistance at the run temperature must stay > 0"},
	{name: "turns", rng: wholeRange("1 to 1000000", "turns"), need: whenGiven, example: "2400",
		doc: "needed with magnet.gap law.pole area; with build, give the turns inside it"},
	{name: "build", kind: keySection, sub: coilBuildSection, need: needWhere,
		doc: "instead of resistance (and turns): the winding from bobbin and wire (resistance at 20 degC from IEC 60028)"},
	{name: "winding capacitance", rng: newRange(Capacitance, "1 pF to 1 µF", ""), need: optional, defText: "none",
		example: "150 pF", doc: "the winding's capacitance across its terminals (see \"Parasitics\")"},
	{name: "core loss resistance", rng: newRange(Resistance, "1 ohm to 1 Gohm", ""), need: optional, defText: "none",
		example: "20 kohm", doc: "a resistance across the terminals for the core (iron) loss"},
}}

// coilBuildSection is a winding from its bobbin and wire (CoilBuildSpec).
var coilBuildSection = &sectionSpec{path: "coil.build", keys: []*keySpec{
	{name: "inner diameter", rng: newRange(Length, "100 µm to 1 m", ""), example: "10 mm", doc: "winding space of the bobbin"},
	{name: "outer diameter", rng: newRange(Length, "100 µm to 1 m", ""), example: "26 mm", doc: "> inner diameter"},
	{name: "length", rng: newRange(Length, "100 µm to 1 m", ""), example: "22 mm"},
	{name: "wire gauge", rng: wholeRange("0 to 46", "AWG, ASTM B258"), need: needWhere, example: "32",
		doc: "AWG (ASTM B258); or wire diameter"},
	{name: "wire diameter", rng: newRange(Length, "10 µm to 10 mm", ""), need: needWhere, example: "0.2 mm",
		doc: "bare copper; or wire gauge"},
	{name: "overall diameter", rng: newRange(Length, "10 µm to 10 mm", ""), need: needWhere, example: "0.23 mm",
		doc: "insulated; or insulation grade"},
	{name: "insulation grade", rng: wholeRange("1 to 3", "enamel grade"), need: needWhere, example: "2",
		doc: "enamel grade 1..3 (approximate build-up); or overall diameter"},
	{name: "turns", rng: wholeRange("1 to 1000000", "turns"), need: needWhere, example: "2500", doc: "or fill factor"},
	{name: "fill factor", rng: newRange(Dimensionless, "0.01 to below 0.91", "copper area ÷ winding window; round wire cannot fill more"),
		need: needWhere, example: "0.52", doc: "copper area / winding window; or turns"},
}}

// Defaults of the coil section.
const (
	defaultRefTemperature = 293.15  // K, 20 °C
	defaultTempCoeff      = 0.00393 // 1/K, annealed copper at 20 °C (IEC 60028)
)

// coilChoice: the coil's resistance is measured or built.
var coilChoice = choice{
	alts: [][]string{{"resistance"}, {"build"}},
	both: "give either coil.resistance (measured) or coil.build (bobbin and wire), not both",
}

// loadCoil reads the coil section.
func (l *scenarioLoader) loadCoil(sec *yamlSection) {
	if sec == nil {
		return
	}
	c := &l.s.Coil
	switch l.pick(sec, coilChoice) {
	case bothGiven:
	case 1:
		l.loadCoilBuild(l.sub(sec, "build"))
		l.refuse(sec, "with coil.build, give the turns (or a fill factor) inside the build", "turns")
	default:
		l.read(sec, "resistance", &c.Resistance)
	}
	l.read(sec, "reference temperature", &c.RefTemperature)
	if sec.has("temperature") {
		l.read(sec, "temperature", &c.Temperature)
	} else if l.ok["coil.reference temperature"] {
		c.Temperature = c.RefTemperature
		l.ok["coil.temperature"] = true
		l.text["coil.temperature"] = "default reference temperature"
	}
	l.read(sec, "temperature coefficient", &c.TempCoeff)
	l.read(sec, "winding capacitance", &c.WindingCapacitance)
	l.read(sec, "core loss resistance", &c.CoreLossResistance)
	l.read(sec, "turns", &c.Turns)
	// The winding resistance at the run temperature must stay positive.
	if (l.ok["coil.resistance"] || c.Build != nil) && l.ok["coil.reference temperature"] && l.ok["coil.temperature"] && l.ok["coil.temperature coefficient"] {
		if f := 1 + c.TempCoeff*(c.Temperature-c.RefTemperature); !(f > 0) {
			at := l.later("coil.temperature coefficient", "coil.temperature")
			l.errf(at, "coil.temperature coefficient %s at coil.temperature %s gives a resistance of zero or less",
				l.show("coil.temperature coefficient"), l.show("coil.temperature"))
		}
	}
}

// Choices of coil.build: the wire by gauge or diameter, its insulation by
// overall diameter or grade, the winding by turns or fill factor.
var (
	wireChoice = choice{
		alts:      [][]string{{"wire gauge"}, {"wire diameter"}},
		both:      "give either a wire gauge (AWG) or a wire diameter, not both",
		missing:   "missing: give a wire gauge (AWG number) or a bare wire diameter",
		missingAt: "coil.build.wire gauge",
	}
	insulationChoice = choice{
		alts:      [][]string{{"overall diameter"}, {"insulation grade"}},
		both:      "give either the insulated overall diameter or the insulation grade, not both",
		missing:   "missing: give the enamel insulation grade (1, 2 or 3) or the insulated overall diameter",
		missingAt: "coil.build.insulation grade",
	}
	windingChoice = choice{
		alts:      [][]string{{"turns"}, {"fill factor"}},
		both:      "give either the turns or a fill factor, not both",
		missing:   "missing: give the turns or a copper fill factor",
		missingAt: "coil.build.turns",
	}
)

// loadCoilBuild reads coil.build: a winding from bobbin and wire.
func (l *scenarioLoader) loadCoilBuild(b *yamlSection) {
	if b == nil {
		return
	}
	cb := &CoilBuildSpec{}
	l.s.Coil.Build = cb
	l.read(b, "inner diameter", &cb.InnerDiameter)
	l.read(b, "outer diameter", &cb.OuterDiameter)
	l.read(b, "length", &cb.Length)
	l.exceed("coil.build.outer diameter", cb.OuterDiameter, "coil.build.inner diameter", cb.InnerDiameter, false)
	l.readChoice(b, wireChoice, &cb.WireGauge, &cb.WireDiameter)
	l.readChoice(b, insulationChoice, &cb.OverallDiameter, &cb.Grade)
	l.readChoice(b, windingChoice, &cb.Turns, &cb.FillFactor)
}
