package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

// cmdMagnet prints the coil and magnet figures and writes the force
// curves (--curves, --json, --plot) and the figures (--json, --csv).
func cmdMagnet(c *cli.Context, w io.Writer) error {
	sim, err := loadScenario(c)
	if err != nil {
		return err
	}
	path, md := sim.path, sim.md
	s := md.MagnetSummary()
	if err := checkMagnetFigures(path, md, &s); err != nil {
		return err
	}
	field := md.CoilFieldFigures(sim.sc)
	currents, err := magnetCurrents(c.String("currents"), s.RatedCurrent)
	if err != nil {
		return err
	}
	if err := writeMagnetOutputs(c, w, path, md, &magnetFigs{&s, &field}, currents); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv", "curves") {
		printMagnet(w, path, md, &magnetFigs{&s, &field})
	}
	return nil
}

// magnetFigs are the magnet command's figures: the magnet summary and
// the coil field.
type magnetFigs struct {
	s     *coilkick.MagnetSummary
	field *coilkick.CoilField
}

// checkMagnetFigures refuses a magnet whose figures are not finite (a
// dimension far outside its range).
func checkMagnetFigures(path string, md *coilkick.Model, s *coilkick.MagnetSummary) error {
	if err := s.Check(); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	if g := md.Geometry; g != nil {
		for _, x := range []float64{md.Plunger.GapMin, md.Plunger.GapMax} {
			if b, _, err := g.SteelFluxDensity(s.RatedCurrent, x); err == nil && (math.IsNaN(b) || math.IsInf(b, 0)) {
				return fmt.Errorf("%s: the steel flux density at the %s gap is not a finite number (a dimension far outside its range?)", path, si(x, "m"))
			}
		}
	}
	return nil
}

// magnetCurrents are the currents of the force family: --currents (txt)
// up to maxCurrentRatio × the rated current, else 0.25 to 1.5 × rated.
func magnetCurrents(txt string, rated float64) ([]float64, error) {
	if txt == "" {
		return ratedFamily(rated), nil
	}
	currents, err := parseCurrents(txt)
	if err != nil {
		return nil, err
	}
	for _, i := range currents {
		if i > maxCurrentRatio*rated {
			return nil, fmt.Errorf("--currents: %s is more than %d × the rated current %s", si(i, "A"), maxCurrentRatio, si(rated, "A"))
		}
	}
	return currents, nil
}

// ratedFamily is the default family of currents: 0.25 to 1.5 × the rated
// current.
func ratedFamily(rated float64) []float64 {
	var currents []float64
	for _, k := range []float64{0.25, 0.5, 0.75, 1, 1.25, 1.5} {
		currents = append(currents, k*rated)
	}
	return currents
}

// writeMagnetOutputs writes the magnet's outputs together: the plot (81
// gaps), the curves of --curves and --json (curveGaps gaps), the figures
// of --json and --csv.
func writeMagnetOutputs(c *cli.Context, w io.Writer, path string, md *coilkick.Model, figs *magnetFigs, currents []float64) error {
	outs := newOutputs(w)
	if f := c.String("plot"); f != "" {
		curves, err := md.ForceCurves(currents, 81)
		if err != nil {
			return err
		}
		passive := make([]float64, len(curves[0].Gap))
		for k, x := range curves[0].Gap {
			passive[k] = md.Plunger.PassiveForce(x, 0)
		}
		if err := outs.addFigure(f, plot.ForceVsGap("Magnetic pull versus air gap — "+md.Name, curves, passive)); err != nil {
			return err
		}
	}
	var curves []coilkick.ForceCurve
	if c.String("curves") != "" || c.String("json") != "" {
		var err error
		if curves, err = md.ForceCurves(currents, curveGaps); err != nil {
			return err
		}
	}
	if f := c.String("curves"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeCurves(out, md, curves) })
	}
	doc := newMagnetDoc(path, md, figs.s, curves)
	doc.Field = newMagnetCoilField(figs.field)
	if f := c.String("json"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeMagnetCSV(out, doc) })
	}
	return outs.commit()
}

// curveGaps is the number of gaps of the force curves in --curves and
// --json.
const curveGaps = 41

// toStdout reports whether one of the outputs named by flags goes to
// standard output ("-"); the text is then not printed.
func toStdout(c *cli.Context, flags ...string) bool {
	for _, f := range flags {
		if c.String(f) == "-" {
			return true
		}
	}
	return false
}

func printMagnet(w io.Writer, path string, md *coilkick.Model, figs *magnetFigs) {
	s := figs.s
	b := bufio.NewWriter(w)
	defer b.Flush()
	name := md.Name
	if name == "" {
		name = "(no name)"
	}
	fmt.Fprintf(b, "coilkick magnet: %s\nscenario: %s\n\n", name, path)
	row := func(name, value string) { fmt.Fprintf(b, "  %-34s %s\n", name, value) }
	fmt.Fprintln(b, "Coil")
	if md.Coil.Turns > 0 {
		row("turns", strconv.FormatFloat(md.Coil.Turns, 'f', 0, 64))
	}
	if cb := md.CoilBuild; cb != nil {
		row("mean turn length", si(cb.MeanTurnLength, "m"))
		row("wire length", si(cb.WireLength, "m"))
		row("copper mass", fmt.Sprintf("%.3g g", cb.CopperMass*1e3))
		row("layers (turns per layer)", fmt.Sprintf("%d (%d)", cb.Layers, cb.TurnsPerLayer))
		row("copper fill factor", fmt.Sprintf("%.2f", cb.FillFactor))
	}
	row("resistance at 20 degC", si(md.Coil.ResistanceAt(293.15), "ohm"))
	if md.Temperature != 293.15 {
		row(fmt.Sprintf("resistance at %.0f degC", md.Temperature-273.15), si(md.CoilResistance(), "ohm"))
	}
	row("rated current (supply / R)", si(s.RatedCurrent, "A"))
	row("rated power (supply² / R)", si(md.Drive.Supply.Voltage*s.RatedCurrent, "W"))
	fmt.Fprintln(b, "Magnet")
	row("inductance, seated gap", fmt.Sprintf("%s (at rated current %s)", si(s.ClosedInductance, "H"), si(s.ClosedInductanceRated, "H")))
	row("inductance, rest gap", fmt.Sprintf("%s (at rated current %s)", si(s.OpenInductance, "H"), si(s.OpenInductanceRated, "H")))
	row("time constant L/R, seated / rest", si(s.TimeConstantClosed, "s")+" / "+si(s.TimeConstantOpen, "s"))
	row("pull at rest gap, rated current", fmt.Sprintf("%s against %s spring + load", si(s.ForceAtRest, "N"), si(s.SpringAtRest, "N")))
	row("pull at seated gap, rated current", fmt.Sprintf("%s against %s spring + load", si(s.ForceSeated, "N"), si(s.SpringSeated, "N")))
	if s.PermanentMagnet {
		if s.PermanentMagnetMMF != 0 {
			row("permanent magnet MMF", si(s.PermanentMagnetMMF, "A"))
		}
		row("pull at seated gap, no current", fmt.Sprintf("%s against %s spring + load", si(s.HoldingSeated, "N"), si(s.SpringSeated, "N")))
		row("pull at rest gap, no current", fmt.Sprintf("%s against %s spring + load", si(s.HoldingAtRest, "N"), si(s.SpringAtRest, "N")))
	}
	sat := func(v float64) string {
		if v == 0 {
			return fmt.Sprintf("none below %g × rated", coilkick.SaturationSearch)
		}
		return fmt.Sprintf("%s (%.2f × rated)", si(v, "A"), v/s.RatedCurrent)
	}
	row("saturation onset, seated gap", sat(s.SaturationSeated))
	row("saturation onset, rest gap", sat(s.SaturationRest))
	fmt.Fprintf(b, "  (saturation onset: incremental inductance below %.0f %% of its zero-current value)\n", 100*coilkick.SaturationFraction)
	if g := md.Geometry; g != nil {
		for _, at := range []struct {
			name string
			x    float64
		}{{"seated", md.Plunger.GapMin}, {"rest", md.Plunger.GapMax}} {
			if bmax, part, err := g.SteelFluxDensity(s.RatedCurrent, at.x); err == nil {
				row("steel flux density, "+at.name+" gap", fmt.Sprintf("%.2f T at rated current, highest in the %s", bmax, part))
			}
		}
	}
	printCurveModel(b, md.Curves)
	printCoilField(b, figs.field)
	if s.ForceAtRest <= s.SpringAtRest {
		fmt.Fprintln(b, "\n  WARNING: at rated current the pull at the rest gap does not exceed the spring and load: it will not pull in")
	}
	printMagnetHolding(b, s)
}

// printMagnetHolding warns when a permanent magnet does not hold the
// plunger seated without current, or pulls it in by itself; nothing
// without a permanent magnet.
func printMagnetHolding(b io.Writer, s *coilkick.MagnetSummary) {
	if !s.PermanentMagnet {
		return
	}
	if s.HoldingSeated <= s.SpringSeated {
		fmt.Fprintln(b, "\n  WARNING: with no current the magnet's pull at the seated gap does not exceed the spring and load: it will not latch")
	}
	if s.HoldingAtRest > s.SpringAtRest {
		fmt.Fprintln(b, "\n  WARNING: with no current the magnet's pull at the rest gap exceeds the spring and load: it pulls in by itself")
	}
}

// printCurveModel prints what a magnet from force curves was built from,
// what it assumed and where it extrapolates; nothing for other magnets.
func printCurveModel(b io.Writer, d *coilkick.CurveData) {
	if d == nil {
		return
	}
	levels := make([]string, len(d.Currents))
	for k, i := range d.Currents {
		levels[k] = si(i, "A")
		if d.Voltages != nil {
			levels[k] = si(d.Voltages[k], "V") + " (" + levels[k] + ")"
		}
	}
	fmt.Fprintf(b, "Magnet from force curves (%s)\n", d.File)
	fmt.Fprintf(b, "  %-34s %s\n", "curves at", strings.Join(levels, ", "))
	for _, n := range d.Notes() {
		fmt.Fprintf(b, "  - %s\n", n)
	}
}

// printCoilField prints the coil field block: the winding's air-core
// field and inductance, the working gap's flux density and their ratio;
// a figure that needs what the scenario does not give is left out, with
// a one-line hint.
func printCoilField(b io.Writer, f *coilkick.CoilField) {
	row := func(name, value string) { fmt.Fprintf(b, "  %-34s %s\n", name, value) }
	gap := f.GapSource != ""
	if !f.HasBuild && !gap {
		fmt.Fprintln(b, "Coil field: not available (the air-core field needs coil.build; the gap field a magnet from geometry or a gap law pole area)")
		return
	}
	fmt.Fprintf(b, "Coil field at rated current (%s)\n", si(f.Current, "A"))
	if f.HasBuild {
		row("air-core centre flux density", fmt.Sprintf("%s (thick winding; %s as a thin coil of the mean diameter)", si(f.CentreField, "T"), si(f.CentreFieldMeanDiameter, "T")))
		row("air-core inductance", fmt.Sprintf("%s (Wheeler), %s (numerical)", si(f.WheelerInductance, "H"), si(f.AirCoreInductance, "H")))
	}
	if !gap {
		fmt.Fprintln(b, "  (the gap flux density needs a magnet from geometry or a gap law pole area)")
		return
	}
	for _, at := range []struct {
		name      string
		b, factor float64
	}{{"seated", f.GapFieldSeated, f.GainSeated}, {"rest", f.GapFieldRest, f.GainRest}} {
		v := si(at.b, "T")
		if f.HasBuild {
			v += fmt.Sprintf(" (%s × the air-core centre field)", sig3(at.factor))
		}
		row("gap flux density, "+at.name+" gap", v)
	}
	switch f.GapSource {
	case coilkick.GapFromNetwork:
		fmt.Fprintf(b, "  (gap flux density between the %s pole faces, from the reluctance network, fringing flux not in it)\n", area(f.PoleArea))
	case coilkick.GapFromPull:
		fmt.Fprintf(b, "  (gap flux density from the pull by Maxwell's formula B = √(2·µ0·F/A), pole area %s)\n", area(f.PoleArea))
		if bmax := math.Max(f.GapFieldSeated, f.GapFieldRest); bmax > coilkick.SteelSaturationCaution {
			fmt.Fprintf(b, "  CAUTION: %.3g T is above the about %.0f T at which magnet steel saturates: the linear gap law overstates the pull there; a flux-linkage table or the geometry model saturates\n", bmax, coilkick.SteelSaturationCaution)
		}
	}
	if f.HasBuild {
		fmt.Fprintf(b, "  (the iron circuit multiplies the coil's own field by %s seated, %s at rest)\n", sig3(f.GainSeated), sig3(f.GainRest))
	} else {
		fmt.Fprintln(b, "  (the air-core field needs coil.build)")
	}
}

// sig3 formats a positive ratio with three significant digits, without
// an exponent.
func sig3(v float64) string {
	digits := 0
	if v > 0 {
		digits = max(0, min(6, 2-int(math.Floor(math.Log10(v)))))
	}
	return strconv.FormatFloat(v, 'f', digits, 64)
}

// area formats an area (m²) in mm².
func area(a float64) string {
	return strconv.FormatFloat(a*1e6, 'g', 3, 64) + " mm²"
}

// writeCurves writes the force curves in long form, one row per current
// and gap: current_A, gap_m, force_N, spring_and_load_N (the passive force
// at that gap, the same for every current).
func writeCurves(w io.Writer, md *coilkick.Model, curves []coilkick.ForceCurve) error {
	var rows [][]string
	for _, c := range curves {
		for k, x := range c.Gap {
			rows = append(rows, []string{num(c.Current), num(x), num(c.Force[k]), num(md.Plunger.PassiveForce(x, 0))})
		}
	}
	return writeCSVRows(w, []string{"current_A", "gap_m", "force_N", "spring_and_load_N"}, rows)
}

// magnetDoc is the --json document of magnet (README "Machine-readable
// output"); magnetCoil, magnetFigures and magnetCurves its parts.
type magnetDoc struct {
	jsonHeader
	Coil   magnetCoil      `json:"coil"`
	Magnet magnetFigures   `json:"magnet"`
	Field  magnetCoilField `json:"coil_field"`
	Curves magnetCurves    `json:"force_curves"`
	Model  *magnetCurveSrc `json:"force_curve_model"` // null unless the magnet was given as force curves
}

// magnetCurveSrc: what a magnet from force curves was built from
// (coilkick.CurveData) and its notes.
type magnetCurveSrc struct {
	File                  string    `json:"file"`
	Currents              []float64 `json:"currents_A"`
	Voltages              []float64 `json:"voltages_V"`            // null unless given at voltages
	Temperature           *float64  `json:"coil_temperature_degC"` // null unless given at voltages
	DataGapMin            float64   `json:"data_gap_min_m"`        // the curves' gap span
	DataGapMax            float64   `json:"data_gap_max_m"`        //
	OpenInductance        float64   `json:"open_inductance_H"`     // the LCR reading the model is anchored at
	OpenFrequency         *float64  `json:"open_inductance_test_frequency_Hz"`
	ClosedInductance      *float64  `json:"closed_inductance_lcr_H"` // null when not given
	ClosedFrequency       *float64  `json:"closed_inductance_test_frequency_Hz"`
	CurveClosedInductance float64   `json:"closed_inductance_from_curves_H"`
	Notes                 []string  `json:"notes"`
}

// newCurveSrc is the document's force_curve_model part; nil for other
// magnets.
func newCurveSrc(d *coilkick.CurveData) *magnetCurveSrc {
	if d == nil {
		return nil
	}
	c := &magnetCurveSrc{File: d.File, Currents: d.Currents, Voltages: d.Voltages, DataGapMin: d.DataGapMin, DataGapMax: d.DataGapMax,
		OpenInductance: d.OpenInductance, OpenFrequency: optional(d.OpenFrequency, d.OpenFrequency > 0),
		ClosedInductance: optional(d.ClosedInductance, d.ClosedInductance > 0), ClosedFrequency: optional(d.ClosedFrequency, d.ClosedFrequency > 0),
		CurveClosedInductance: d.CurveClosedInductance, Notes: d.Notes()}
	if d.Voltages != nil {
		t := toDegC(d.Temperature)
		c.Temperature = &t
	}
	return c
}

// magnetCoilField: the coil's air-core field and the working gap's field
// at rated current (coilkick.CoilField); null where not available.
type magnetCoilField struct {
	CentreField       *float64 `json:"air_core_centre_flux_density_T"`
	CentreFieldThin   *float64 `json:"air_core_centre_flux_density_thin_T"`
	WheelerInductance *float64 `json:"air_core_inductance_wheeler_H"`
	AirCoreInductance *float64 `json:"air_core_inductance_numerical_H"`
	GapSource         *string  `json:"gap_flux_density_source"`
	PoleArea          *float64 `json:"pole_area_m2"`
	GapFieldSeated    *float64 `json:"gap_flux_density_seated_T"`
	GapFieldRest      *float64 `json:"gap_flux_density_rest_T"`
	GainSeated        *float64 `json:"gap_to_air_core_field_seated"`
	GainRest          *float64 `json:"gap_to_air_core_field_rest"`
}

func newMagnetCoilField(f *coilkick.CoilField) magnetCoilField {
	build, gap := f.HasBuild, f.GapSource != ""
	d := magnetCoilField{
		CentreField: optional(f.CentreField, build), CentreFieldThin: optional(f.CentreFieldMeanDiameter, build),
		WheelerInductance: optional(f.WheelerInductance, build), AirCoreInductance: optional(f.AirCoreInductance, build),
		PoleArea: optional(f.PoleArea, f.PoleArea > 0), GapFieldSeated: optional(f.GapFieldSeated, gap),
		GapFieldRest: optional(f.GapFieldRest, gap), GainSeated: optional(f.GainSeated, build && gap),
		GainRest: optional(f.GainRest, build && gap),
	}
	if gap {
		src := f.GapSource
		d.GapSource = &src
	}
	return d
}

type magnetCoil struct {
	Turns *float64 `json:"turns"` // null when the scenario gives none (a flux table or gap law)
	// Winding build: null unless the coil is given as wire and bobbin.
	MeanTurnLength *float64 `json:"mean_turn_length_m"`
	WireLength     *float64 `json:"wire_length_m"`
	CopperMass     *float64 `json:"copper_mass_kg"`
	Layers         *int     `json:"layers"`
	TurnsPerLayer  *int     `json:"turns_per_layer"`
	FillFactor     *float64 `json:"copper_fill_factor"`
	Resistance20   float64  `json:"resistance_at_20_celsius_ohm"`
	Temperature    float64  `json:"winding_temperature_degC"`
	Resistance     float64  `json:"resistance_ohm"` // at the winding temperature
	Supply         float64  `json:"supply_voltage_V"`
	RatedCurrent   float64  `json:"rated_current_A"`
	RatedPower     float64  `json:"rated_power_W"`
}

type magnetFigures struct {
	GapSeated             float64  `json:"seated_gap_m"`
	GapRest               float64  `json:"rest_gap_m"`
	InductanceSeated      float64  `json:"inductance_seated_H"`
	InductanceSeatedRated float64  `json:"inductance_seated_at_rated_current_H"`
	InductanceRest        float64  `json:"inductance_rest_H"`
	InductanceRestRated   float64  `json:"inductance_rest_at_rated_current_H"`
	TimeConstantSeated    float64  `json:"time_constant_seated_s"`
	TimeConstantRest      float64  `json:"time_constant_rest_s"`
	PullRest              float64  `json:"pull_at_rest_gap_N"`
	PassiveRest           float64  `json:"spring_and_load_at_rest_gap_N"`
	PullSeated            float64  `json:"pull_at_seated_gap_N"`
	PassiveSeated         float64  `json:"spring_and_load_at_seated_gap_N"`
	PullsIn               bool     `json:"pulls_in_at_rated_current"`
	MagnetMMF             *float64 `json:"permanent_magnet_mmf_A"` // a permanent magnet's figures: null without one
	HoldingSeated         *float64 `json:"holding_force_seated_gap_N"`
	HoldingRest           *float64 `json:"holding_force_rest_gap_N"`
	Latches               *bool    `json:"holds_seated_without_current"`
	PullsInAlone          *bool    `json:"pulls_in_without_current"`
	SaturationSeated      *float64 `json:"saturation_onset_seated_A"`
	SaturationRest        *float64 `json:"saturation_onset_rest_A"`
	SaturationFraction    float64  `json:"saturation_fraction"`
	SaturationSearch      float64  `json:"saturation_search_rated_multiple"`
	SteelFluxSeated       *float64 `json:"steel_flux_density_seated_T"`
	SteelFluxSeatedPart   *string  `json:"steel_flux_density_seated_part"`
	SteelFluxRest         *float64 `json:"steel_flux_density_rest_T"`
	SteelFluxRestPart     *string  `json:"steel_flux_density_rest_part"`
}

// magnetCurves: the force curves over the stroke, gaps shared.
type magnetCurves struct {
	Gap     []float64     `json:"gap_m"`
	Passive []float64     `json:"spring_and_load_N"`
	Curves  []magnetCurve `json:"curves"`
}

type magnetCurve struct {
	Current float64   `json:"current_A"`
	Force   []float64 `json:"force_N"`
}

func newMagnetDoc(path string, md *coilkick.Model, s *coilkick.MagnetSummary, curves []coilkick.ForceCurve) *magnetDoc {
	r := md.CoilResistance()
	d := &magnetDoc{jsonHeader: newHeader("magnet", md, path), Model: newCurveSrc(md.Curves)}
	d.Coil = magnetCoil{Turns: optional(md.Coil.Turns, md.Coil.Turns > 0), Resistance20: md.Coil.ResistanceAt(293.15),
		Temperature: toDegC(md.Temperature), Resistance: r, Supply: md.Drive.Supply.Voltage,
		RatedCurrent: s.RatedCurrent, RatedPower: md.Drive.Supply.Voltage * s.RatedCurrent}
	if cb := md.CoilBuild; cb != nil {
		layers, perLayer := cb.Layers, cb.TurnsPerLayer
		d.Coil.MeanTurnLength, d.Coil.WireLength, d.Coil.CopperMass = &cb.MeanTurnLength, &cb.WireLength, &cb.CopperMass
		d.Coil.Layers, d.Coil.TurnsPerLayer, d.Coil.FillFactor = &layers, &perLayer, &cb.FillFactor
	}
	p := md.Plunger
	d.Magnet = magnetFigures{GapSeated: p.GapMin, GapRest: p.GapMax,
		InductanceSeated: s.ClosedInductance, InductanceSeatedRated: s.ClosedInductanceRated,
		InductanceRest: s.OpenInductance, InductanceRestRated: s.OpenInductanceRated,
		TimeConstantSeated: s.TimeConstantClosed, TimeConstantRest: s.TimeConstantOpen,
		PullRest: s.ForceAtRest, PassiveRest: s.SpringAtRest, PullSeated: s.ForceSeated, PassiveSeated: s.SpringSeated,
		PullsIn:            s.ForceAtRest > s.SpringAtRest,
		SaturationSeated:   optional(s.SaturationSeated, s.SaturationSeated > 0),
		SaturationRest:     optional(s.SaturationRest, s.SaturationRest > 0),
		SaturationFraction: coilkick.SaturationFraction, SaturationSearch: coilkick.SaturationSearch}
	if s.PermanentMagnet {
		latches, alone := s.HoldingSeated > s.SpringSeated, s.HoldingAtRest > s.SpringAtRest
		d.Magnet.MagnetMMF = optional(s.PermanentMagnetMMF, s.PermanentMagnetMMF != 0)
		d.Magnet.HoldingSeated, d.Magnet.HoldingRest = &s.HoldingSeated, &s.HoldingAtRest
		d.Magnet.Latches, d.Magnet.PullsInAlone = &latches, &alone
	}
	if g := md.Geometry; g != nil {
		if b, part, err := g.SteelFluxDensity(s.RatedCurrent, p.GapMin); err == nil {
			d.Magnet.SteelFluxSeated, d.Magnet.SteelFluxSeatedPart = &b, &part
		}
		if b, part, err := g.SteelFluxDensity(s.RatedCurrent, p.GapMax); err == nil {
			d.Magnet.SteelFluxRest, d.Magnet.SteelFluxRestPart = &b, &part
		}
	}
	d.Curves = magnetCurves{Gap: []float64{}, Passive: []float64{}, Curves: []magnetCurve{}}
	if len(curves) > 0 {
		d.Curves.Gap = curves[0].Gap
		for _, x := range curves[0].Gap {
			d.Curves.Passive = append(d.Curves.Passive, p.PassiveForce(x, 0))
		}
	}
	for _, c := range curves {
		d.Curves.Curves = append(d.Curves.Curves, magnetCurve{Current: c.Current, Force: c.Force})
	}
	return d
}

// writeMagnetCSV writes the summary figures as one row: the keys of the
// document's coil, magnet and coil_field parts, less the text (the steel
// part's name, the gap field's source) and the constants of the
// saturation definition.
func writeMagnetCSV(w io.Writer, d *magnetDoc) error {
	c, m, f := &d.Coil, &d.Magnet, &d.Field
	boolPtr := func(v *bool) string {
		if v == nil {
			return ""
		}
		return strconv.FormatBool(*v)
	}
	intPtr := func(v *int) string {
		if v == nil {
			return ""
		}
		return strconv.Itoa(*v)
	}
	cols := []struct{ key, cell string }{
		{"turns", numPtr(c.Turns)}, {"mean_turn_length_m", numPtr(c.MeanTurnLength)}, {"wire_length_m", numPtr(c.WireLength)},
		{"copper_mass_kg", numPtr(c.CopperMass)}, {"layers", intPtr(c.Layers)}, {"turns_per_layer", intPtr(c.TurnsPerLayer)},
		{"copper_fill_factor", numPtr(c.FillFactor)}, {"resistance_at_20_celsius_ohm", num(c.Resistance20)},
		{"winding_temperature_degC", num(c.Temperature)}, {"resistance_ohm", num(c.Resistance)},
		{"supply_voltage_V", num(c.Supply)}, {"rated_current_A", num(c.RatedCurrent)}, {"rated_power_W", num(c.RatedPower)},
		{"seated_gap_m", num(m.GapSeated)}, {"rest_gap_m", num(m.GapRest)},
		{"inductance_seated_H", num(m.InductanceSeated)}, {"inductance_seated_at_rated_current_H", num(m.InductanceSeatedRated)},
		{"inductance_rest_H", num(m.InductanceRest)}, {"inductance_rest_at_rated_current_H", num(m.InductanceRestRated)},
		{"time_constant_seated_s", num(m.TimeConstantSeated)}, {"time_constant_rest_s", num(m.TimeConstantRest)},
		{"pull_at_rest_gap_N", num(m.PullRest)}, {"spring_and_load_at_rest_gap_N", num(m.PassiveRest)},
		{"pull_at_seated_gap_N", num(m.PullSeated)}, {"spring_and_load_at_seated_gap_N", num(m.PassiveSeated)},
		{"pulls_in_at_rated_current", strconv.FormatBool(m.PullsIn)},
		{"permanent_magnet_mmf_A", numPtr(m.MagnetMMF)}, {"holding_force_seated_gap_N", numPtr(m.HoldingSeated)},
		{"holding_force_rest_gap_N", numPtr(m.HoldingRest)}, {"holds_seated_without_current", boolPtr(m.Latches)},
		{"pulls_in_without_current", boolPtr(m.PullsInAlone)},
		{"saturation_onset_seated_A", numPtr(m.SaturationSeated)}, {"saturation_onset_rest_A", numPtr(m.SaturationRest)},
		{"steel_flux_density_seated_T", numPtr(m.SteelFluxSeated)}, {"steel_flux_density_rest_T", numPtr(m.SteelFluxRest)},
		{"air_core_centre_flux_density_T", numPtr(f.CentreField)}, {"air_core_centre_flux_density_thin_T", numPtr(f.CentreFieldThin)},
		{"air_core_inductance_wheeler_H", numPtr(f.WheelerInductance)}, {"air_core_inductance_numerical_H", numPtr(f.AirCoreInductance)},
		{"pole_area_m2", numPtr(f.PoleArea)}, {"gap_flux_density_seated_T", numPtr(f.GapFieldSeated)},
		{"gap_flux_density_rest_T", numPtr(f.GapFieldRest)},
		{"gap_to_air_core_field_seated", numPtr(f.GainSeated)}, {"gap_to_air_core_field_rest", numPtr(f.GainRest)},
	}
	header, row := make([]string, len(cols)), make([]string, len(cols))
	for k, col := range cols {
		header[k], row[k] = col.key, col.cell
	}
	return writeCSVRows(w, header, [][]string{row})
}
