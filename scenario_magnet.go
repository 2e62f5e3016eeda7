package coilkick

import (
	"fmt"
	"strings"

	"coilkick/magnet"
)

// magnetSection selects and parameterises the magnetic model (MagnetSpec):
// exactly one of its three model sections.
var magnetSection = &sectionSpec{path: "magnet", keys: []*keySpec{
	{name: MagnetGapLaw, kind: keySection, sub: gapLawSection, need: needWhere,
		doc: "L(x) = L_leak + 1/(a + b·x), linear iron"},
	{name: MagnetTable, kind: keySection, sub: tableSection, need: needWhere,
		doc: "flux linkage versus current and gap, from a field solver or bench"},
	{name: MagnetGeom, kind: keySection, sub: geometrySection, need: needWhere,
		doc: "a plunger magnet from its dimensions (needs coil.build)"},
	{name: MagnetCurves, kind: keySection, sub: forceCurvesSection, need: needWhere,
		doc: "pull force versus gap at one or more currents or voltages, and LCR readings (see \"Magnet from force curves\")"},
	{name: "eddy resistance", rng: newRange(Resistance, "1 mohm to 1 Gohm", ""), need: optional, defText: "none",
		example: "400 ohm", doc: "eddy currents as a shorted turn, referred to the coil's turns"},
}}

// gapLawSection is magnet.gap law.
var gapLawSection = &sectionSpec{path: "magnet.gap law", keys: []*keySpec{
	{name: "closed inductance", rng: newRange(Inductance, "1 µH to 1 kH", ""), example: "300 mH", doc: "at the seated gap"},
	{name: "open inductance", rng: newRange(Inductance, "1 µH to 1 kH", ""), example: "120 mH",
		doc: "at the rest gap, < closed inductance"},
	{name: "pole area", rng: newRange(Area, "0.01 mm2 to 0.1 m2", ""), need: whenGiven, example: "50 mm2",
		doc: "needs coil.turns; fixes b = 1/(µ0·A·N²) and solves the leakage"},
	{name: "magnet mmf", rng: newRange(Current, "0.1 A to 1 MA", ""), need: whenGiven, example: "300 A",
		doc: "a permanent magnet in the circuit (latching): its MMF in ampere-turns, aiding a positive coil current; needs pole area; or give holding force"},
	{name: "holding force", rng: newRange(Force, "1 mN to 100 kN", ""), need: whenGiven, example: "12 N",
		doc: "a permanent magnet given by its pull at the seated gap with no current (measured); needs pole area; instead of magnet mmf"},
	{name: "demagnetising current", rng: newRange(Current, "1 µA to 1 MA", ""), need: whenGiven, example: "2 A",
		doc: "the reverse coil current at which the magnet reaches its knee (its knee field as a coil current, from the magnet's data); a run whose current goes further negative is warned of; needs a magnet"},
}}

// tableSection is magnet.table: a flux-linkage table file and its units.
var tableSection = &sectionSpec{path: "magnet.table", keys: []*keySpec{
	{name: "file", kind: keyFile, example: "valve_flux.csv", doc: "relative to the scenario file's folder (see \"Flux-linkage table\")"},
	{name: "current unit", kind: keyUnit, rng: unitOf(Current), example: "A", doc: "unit of the table's currents"},
	{name: "gap unit", kind: keyUnit, rng: unitOf(Length), example: "mm", doc: "unit of the table's gaps"},
	{name: "flux linkage unit", kind: keyUnit, rng: unitOf(FluxLinkage), example: "mWb", doc: "unit of the table's flux linkages"},
}}

// magnetChoice: one model section.
var magnetChoice = choice{
	alts:      [][]string{{MagnetGapLaw}, {MagnetTable}, {MagnetGeom}, {MagnetCurves}},
	both:      fmt.Sprintf("give only one of %q, %q, %q and %q", MagnetGapLaw, MagnetTable, MagnetGeom, MagnetCurves),
	missing:   fmt.Sprintf("needs one of the sections %q, %q, %q or %q", MagnetGapLaw, MagnetTable, MagnetGeom, MagnetCurves),
	missingAt: "magnet",
}

// loadMagnet reads the magnet section.
func (l *scenarioLoader) loadMagnet(sec *yamlSection) {
	if sec == nil {
		return
	}
	l.read(sec, "eddy resistance", &l.s.Magnet.EddyResistance)
	switch l.pick(sec, magnetChoice) {
	case 0:
		l.s.Magnet.Kind = MagnetGapLaw
		l.loadGapLaw(l.sub(sec, MagnetGapLaw))
	case 1:
		l.s.Magnet.Kind = MagnetTable
		l.loadTable(l.sub(sec, MagnetTable))
	case 2:
		l.s.Magnet.Kind = MagnetGeom
		l.loadGeometry(l.sub(sec, MagnetGeom))
	case 3:
		l.s.Magnet.Kind = MagnetCurves
		l.loadForceCurves(l.sub(sec, MagnetCurves))
	}
}

// loadGapLaw reads magnet.gap law.
func (l *scenarioLoader) loadGapLaw(sec *yamlSection) {
	if sec == nil {
		return
	}
	m := &l.s.Magnet
	l.read(sec, "closed inductance", &m.ClosedInductance)
	l.read(sec, "open inductance", &m.OpenInductance)
	l.exceed("magnet.gap law.closed inductance", m.ClosedInductance, "magnet.gap law.open inductance", m.OpenInductance, false)
	if l.read(sec, "pole area", &m.PoleArea) && !l.ok["coil.turns"] {
		l.errf("magnet.gap law.pole area", "needs coil.turns, which is not given")
	}
	mmf := l.read(sec, "magnet mmf", &m.MagnetMMF)
	hold := l.read(sec, "holding force", &m.HoldingForce)
	for _, k := range []struct {
		given bool
		key   string
	}{{mmf, "magnet mmf"}, {hold, "holding force"}} {
		if k.given && !l.ok["magnet.gap law.pole area"] {
			l.errf("magnet.gap law."+k.key, "a permanent magnet needs magnet.gap law.pole area (and coil.turns), which is not given")
		}
	}
	if l.read(sec, "demagnetising current", &m.DemagCurrent) && !mmf && !hold {
		l.errf("magnet.gap law.demagnetising current", "needs a permanent magnet (magnet mmf or holding force), which is not given")
	}
	if mmf && hold {
		l.errf("magnet.gap law.holding force", "give only one of \"magnet mmf\" and \"holding force\"")
	}
}

// loadTable reads magnet.table.
func (l *scenarioLoader) loadTable(sec *yamlSection) {
	if sec == nil {
		return
	}
	m := &l.s.Magnet
	m.TableFile = l.file(sec, "table")
	l.unit(sec, "current unit", &m.CurrentScale)
	l.unit(sec, "gap unit", &m.GapScale)
	l.unit(sec, "flux linkage unit", &m.FluxScale)
	m.CurrentUnit = strings.TrimSpace(l.text["magnet.table.current unit"])
	m.GapUnit = strings.TrimSpace(l.text["magnet.table.gap unit"])
	m.FluxUnit = strings.TrimSpace(l.text["magnet.table.flux linkage unit"])
	m.TableUnits = fmt.Sprintf("current in %s, gap in %s, flux linkage in %s (magnet.table)", m.CurrentUnit, m.GapUnit, m.FluxUnit)
}

// file reads the key "file" of sec, a file name checked by inputFile (kind
// names it in messages); "" when missing or refused.
func (l *scenarioLoader) file(sec *yamlSection, kind string) string {
	text, ok := l.scalar(sec, "file", true, fmt.Sprintf("a file name, e.g. %q", sec.spec.key("file").example))
	if !ok {
		return ""
	}
	return l.inputFile(fieldPath(sec.path, "file"), text, kind)
}

// readFluxTable reads the scenario's flux-linkage table file through
// OpenInput (a regular file of at most MaxTableBytes). Its errors point at
// magnet.table.file and name the table's file, line and column, and the
// table's units.
func readFluxTable(s *Scenario) (*magnet.Table, error) {
	m := &s.Magnet
	f, err := OpenInput(m.TableFile, "flux-linkage table", MaxTableBytes)
	if err != nil {
		return nil, s.Errorf("magnet.table.file", "%v", err)
	}
	defer f.Close()
	tb, err := magnet.ReadTableCSV(f, m.TableFile, magnet.Unit{Name: m.CurrentUnit, Scale: m.CurrentScale},
		magnet.Unit{Name: m.GapUnit, Scale: m.GapScale}, magnet.Unit{Name: m.FluxUnit, Scale: m.FluxScale})
	if err != nil {
		return nil, s.Errorf("magnet.table.file", "%s; the table's units: %s", inputDetail(err), m.TableUnits)
	}
	return tb, nil
}

// readSteelCurve reads the scenario's B–H curve file as readFluxTable
// reads the table.
func readSteelCurve(s *Scenario) (*magnet.BHTable, error) {
	gs := &s.Magnet.Geometry
	const field = "magnet.geometry.steel curve.file"
	f, err := OpenInput(gs.SteelCurveFile, "steel curve", MaxTableBytes)
	if err != nil {
		return nil, s.Errorf(field, "%v", err)
	}
	defer f.Close()
	bh, err := magnet.ReadBHCSV(f, gs.SteelCurveFile, magnet.Unit{Name: gs.HUnit, Scale: gs.HScale}, magnet.Unit{Name: gs.BUnit, Scale: gs.BScale})
	if err != nil {
		return nil, s.Errorf(field, "%s; the curve's units: %s", inputDetail(err), gs.CurveUnits)
	}
	return bh, nil
}
