package coilkick

import "math"

// plungerSection is the moving part (PlungerSpec). Gap convention: the
// working air gap, seated gap <= x <= rest gap.
var plungerSection = &sectionSpec{path: "plunger", keys: []*keySpec{
	{name: "mass", rng: newRange(Mass, "1 mg to 100 kg", ""), example: "8 g"},
	{name: "rest gap", rng: newRange(Length, "10 µm to 100 mm", ""), example: "1.2 mm",
		doc: "air gap at the rest stop (de-energized), > seated gap"},
	{name: "seated gap", rng: newRange(Length, "0 mm to 10 mm", ""), example: "0.05 mm",
		doc: "residual gap at the energized stop"},
	{name: "spring preload", rng: newRange(Force, "0 N to 10 kN", ""), example: "2 N",
		doc: "return-spring force at the rest gap, pushing the gap open"},
	{name: "spring rate", rng: newRange(ForcePerLength, "0 N/mm to 10 kN/mm", ""), example: "0.5 N/mm"},
	{name: "damping", rng: newRange(Damping, "0 N*s/m to 100 kN*s/m", ""), need: optional, defText: "0 N*s/m",
		example: "0.5 N*s/m", doc: "viscous"},
	{name: "restitution", rng: newRange(Dimensionless, "0 to 1", ""), need: whenGiven, example: "0.2",
		doc: "plain number, at both stops; 0 when not given"},
	{name: "stick speed", rng: newRange(Velocity, "100 µm/s to 10 m/s", ""), need: optional, def: defaultStickSpeed,
		defText: "0.05 m/s", example: "0.05 m/s", doc: "slower impacts or rebounds end in sticking"},
	{name: "load", kind: keySection, sub: plungerLoadSection, need: whenGiven},
}}

// plungerLoadSection is the load on the plunger: a constant force and the
// pressure on a valve orifice.
var plungerLoadSection = &sectionSpec{path: "plunger.load", keys: []*keySpec{
	{name: "constant force", rng: newRange(Force, "-10 kN to 10 kN", ""), need: optional, defText: "0 N",
		example: "0.5 N", doc: "positive pushes the gap open"},
	{name: "pressure", rng: newRange(Pressure, "0 bar to 1000 bar", ""), need: whenGiven, example: "3 bar",
		doc: "pressure on a valve orifice holding the seal shut; needs seal travel and one of orifice diameter, orifice area"},
	{name: "orifice diameter", rng: newRange(Length, "10 µm to 100 mm", ""), need: needWhere, example: "1.0 mm",
		doc: "with pressure; or orifice area"},
	{name: "orifice area", rng: newRange(Area, "0.0001 mm2 to 10000 mm2", ""), need: needWhere, example: "0.79 mm2",
		doc: "with pressure; or orifice diameter"},
	{name: "seal travel", rng: newRange(Length, "1 µm to 100 mm", ""), need: needWhere, example: "0.3 mm",
		doc: "with pressure: lift over which the pressure force fades to zero, at most rest gap − seated gap"},
}}

// defaultStickSpeed is plunger.stick speed when not given (m/s).
const defaultStickSpeed = 0.05

// loadPlunger reads the plunger section.
func (l *scenarioLoader) loadPlunger(sec *yamlSection) {
	if sec == nil {
		return
	}
	p := &l.s.Plunger
	l.read(sec, "mass", &p.Mass)
	l.read(sec, "rest gap", &p.RestGap)
	l.read(sec, "seated gap", &p.SeatedGap)
	l.exceed("plunger.rest gap", p.RestGap, "plunger.seated gap", p.SeatedGap, false)
	l.read(sec, "spring preload", &p.SpringPreload)
	l.read(sec, "spring rate", &p.SpringRate)
	l.read(sec, "damping", &p.Damping)
	l.read(sec, "restitution", &p.Restitution)
	l.read(sec, "stick speed", &p.StickSpeed)
	l.loadPlungerLoad(l.sub(sec, "load"))
}

// orificeChoice: the orifice is given by its diameter or its area.
var orificeChoice = choice{
	alts: [][]string{{"orifice diameter"}, {"orifice area"}},
	both: "give either plunger.load.orifice diameter or plunger.load.orifice area, not both",
}

// loadPlungerLoad reads plunger.load.
func (l *scenarioLoader) loadPlungerLoad(sec *yamlSection) {
	if sec == nil {
		return
	}
	p := &l.s.Plunger
	l.read(sec, "constant force", &p.ConstantLoad)
	if !sec.has("pressure") {
		l.refuse(sec, "applies only when plunger.load.pressure is given", "orifice diameter", "orifice area", "seal travel")
		return
	}
	l.read(sec, "pressure", &p.Pressure)
	switch l.pick(sec, orificeChoice) {
	case 0:
		var d float64
		if l.read(sec, "orifice diameter", &d) {
			p.OrificeArea = math.Pi * d * d / 4
		}
	case 1:
		l.read(sec, "orifice area", &p.OrificeArea)
	case -1:
		l.errf("plunger.load.pressure", "needs plunger.load.orifice diameter or plunger.load.orifice area")
	}
	if !sec.has("seal travel") {
		l.errf("plunger.load.pressure", "needs plunger.load.seal travel, e.g. \"0.3 mm\"")
		return
	}
	if l.read(sec, "seal travel", &p.SealTravel) &&
		l.ok["plunger.rest gap"] && l.ok["plunger.seated gap"] && p.RestGap > p.SeatedGap {
		if stroke := p.RestGap - p.SeatedGap; p.SealTravel > stroke {
			l.errf("plunger.load.seal travel", "%s must not exceed the stroke plunger.rest gap − plunger.seated gap = %s − %s (lines %d, %d)",
				l.show("plunger.load.seal travel"), l.show("plunger.rest gap"), l.show("plunger.seated gap"),
				l.s.pos["plunger.rest gap"].Line, l.s.pos["plunger.seated gap"].Line)
		}
	}
}
