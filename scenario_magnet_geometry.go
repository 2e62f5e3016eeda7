package coilkick

import (
	"fmt"
	"strings"
)

// geometrySection is magnet.geometry: a plunger magnet from its dimensions
// (GeometrySpec), whose steel follows the analytic law or a B–H curve file.
var geometrySection = &sectionSpec{path: "magnet.geometry", keys: []*keySpec{
	{name: "plunger diameter", rng: newRange(Length, "100 µm to 1 m", ""), example: "8 mm"},
	{name: "plunger length", rng: newRange(Length, "100 µm to 1 m", ""), example: "12 mm",
		doc: "steel path from the working-gap face to the front-plate bushing"},
	{name: "pole diameter", rng: newRange(Length, "100 µm to 1 m", ""), example: "8 mm",
		doc: "fixed pole piece the plunger is pulled to (flat faces)"},
	{name: "pole length", rng: newRange(Length, "100 µm to 1 m", ""), example: "12 mm",
		doc: "from the back plate's inner face to the pole face"},
	{name: "shell outer diameter", rng: newRange(Length, "100 µm to 1 m", ""), example: "32 mm"},
	{name: "shell wall", rng: newRange(Length, "100 µm to 1 m", ""), example: "1.5 mm"},
	{name: "shell length", rng: newRange(Length, "100 µm to 1 m", ""), example: "28 mm", doc: "over both end plates"},
	{name: "end plate thickness", rng: newRange(Length, "100 µm to 1 m", ""), example: "2.5 mm"},
	{name: "sliding gap", rng: newRange(Length, "1 µm to 10 mm", ""), example: "0.05 mm",
		doc: "radial clearance in the front-plate bushing"},
	{name: "sliding length", rng: newRange(Length, "100 µm to 1 m", ""), example: "4 mm"},
	{name: "steel saturation", rng: newRange(FluxDensity, "100 mT to 3 T", "saturation polarization of steel"),
		need: needWhere, example: "2.0 T", doc: "Frohlich–Kennelly law: saturation polarization; or steel curve"},
	{name: "steel permeability", rng: newRange(Dimensionless, "above 1 to 1000000", "initial relative permeability of steel"),
		need: needWhere, example: "1500", doc: "and initial relative permeability of the same law"},
	{name: "steel curve", kind: keySection, sub: steelCurveSection, need: needWhere,
		doc: "instead of the analytic law: a measured B–H curve"},
	{name: "table currents", rng: wholeRange("4 to 400", "grid size"), need: optional, def: defaultTableCurrents,
		defText: "40", example: "40", doc: "grid of the built table"},
	{name: "table gaps", rng: wholeRange("4 to 400", "grid size"), need: optional, def: defaultTableGaps,
		defText: "60", example: "60"},
	{name: "max current", rng: newRange(Current, "1 mA to 1 kA", ""), need: optional,
		defText: "3 × supply voltage / coil resistance", example: "1 A", doc: "top of the table's current range"},
}}

// steelCurveSection is magnet.geometry.steel curve: a B–H table file.
var steelCurveSection = &sectionSpec{path: "magnet.geometry.steel curve", keys: []*keySpec{
	{name: "file", kind: keyFile, example: "steel_bh.csv", doc: "rows H, B from 0, 0; relative to the scenario file's folder"},
	{name: "field unit", kind: keyUnit, rng: unitOf(FieldStrength), example: "A/m"},
	{name: "flux density unit", kind: keyUnit, rng: unitOf(FluxDensity), example: "T"},
}}

// Defaults of the geometry section.
const (
	defaultTableCurrents = 40
	defaultTableGaps     = 60
)

// steelChoice: the analytic steel law or a B–H curve file.
var steelChoice = choice{
	alts:   [][]string{{"steel saturation", "steel permeability"}, {"steel curve"}},
	both:   "give either the analytic steel law (steel saturation, steel permeability) or a steel curve file, not both",
	bothAt: "magnet.geometry.steel curve",
}

// loadGeometry reads magnet.geometry: a plunger magnet from dimensions.
func (l *scenarioLoader) loadGeometry(g *yamlSection) {
	if g == nil {
		return
	}
	gs := &l.s.Magnet.Geometry
	for _, f := range []struct {
		key string
		dst *float64
	}{
		{"plunger diameter", &gs.PlungerDiameter}, {"plunger length", &gs.PlungerLength},
		{"pole diameter", &gs.PoleDiameter}, {"pole length", &gs.PoleLength},
		{"shell outer diameter", &gs.ShellOuterDiameter}, {"shell wall", &gs.ShellWall},
		{"shell length", &gs.ShellLength}, {"end plate thickness", &gs.EndPlateThickness},
		{"sliding gap", &gs.SlidingGap}, {"sliding length", &gs.SlidingLength},
	} {
		l.read(g, f.key, f.dst)
	}
	if l.s.Coil.Build == nil {
		l.errAt("magnet.geometry", g.pos, "needs coil.build: the winding space and turns come from the bobbin")
	}
	switch l.pick(g, steelChoice) {
	case bothGiven:
	case 1:
		l.loadSteelCurve(l.sub(g, "steel curve"))
	default:
		l.read(g, "steel saturation", &gs.SteelSaturation)
		l.read(g, "steel permeability", &gs.SteelPermeability)
	}
	l.readWhole(g, "table currents", &gs.TableCurrents)
	l.readWhole(g, "table gaps", &gs.TableGaps)
	l.read(g, "max current", &gs.MaxCurrent)
}

// loadSteelCurve reads magnet.geometry.steel curve.
func (l *scenarioLoader) loadSteelCurve(sc *yamlSection) {
	if sc == nil {
		return
	}
	gs := &l.s.Magnet.Geometry
	gs.SteelCurveFile = l.file(sc, "steel curve")
	l.unit(sc, "field unit", &gs.HScale)
	l.unit(sc, "flux density unit", &gs.BScale)
	gs.HUnit = strings.TrimSpace(l.text["magnet.geometry.steel curve.field unit"])
	gs.BUnit = strings.TrimSpace(l.text["magnet.geometry.steel curve.flux density unit"])
	gs.CurveUnits = fmt.Sprintf("field strength in %s, flux density in %s (magnet.geometry.steel curve)", gs.HUnit, gs.BUnit)
}
