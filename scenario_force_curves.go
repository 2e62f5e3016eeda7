package coilkick

import (
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"coilkick/magnet"
)

// forceCurvesSection is magnet.force curves: a force–gap curve file and the
// LCR readings (see "Magnet from force curves" in the README).
var forceCurvesSection = &sectionSpec{path: "magnet.force curves", keys: []*keySpec{
	{name: "file", kind: keyFile, example: "valve_force.csv",
		doc: "columns gap or stroke, current or voltage, force, each with its unit; relative to the scenario file's folder"},
	{name: "open inductance", rng: newRange(Inductance, "1 µH to 1 kH", ""), example: "95 mH",
		doc: "LCR reading with the plunger held at the rest gap; the model's anchor"},
	{name: "open inductance frequency", rng: newRange(Frequency, "1 Hz to 10 MHz", ""), need: whenGiven, example: "1 kHz",
		doc: "the LCR meter's test frequency of the open reading (reported beside it)"},
	{name: "closed inductance", rng: newRange(Inductance, "1 µH to 1 kH", ""), need: whenGiven, example: "240 mH",
		doc: "LCR reading at the seated gap; compared with the curves' value, not used by the model"},
	{name: "closed inductance frequency", rng: newRange(Frequency, "1 Hz to 10 MHz", ""), need: whenGiven, example: "1 kHz",
		doc: "the LCR meter's test frequency of the closed reading"},
	{name: "coil temperature", rng: newRange(Temperature, "-100 degC to 400 degC", ""), need: whenGiven, example: "20 degC",
		doc: "the coil's temperature when the curves were taken; needed when the file gives voltages (current = V/R(T))"},
}}

// loadForceCurves reads magnet.force curves.
func (l *scenarioLoader) loadForceCurves(sec *yamlSection) {
	if sec == nil {
		return
	}
	m := &l.s.Magnet
	m.CurvesFile = l.file(sec, "force-curve")
	l.read(sec, "open inductance", &m.OpenInductance)
	l.read(sec, "open inductance frequency", &m.OpenFrequency)
	if l.read(sec, "closed inductance", &m.ClosedInductance) {
		l.exceed("magnet.force curves.closed inductance", m.ClosedInductance, "magnet.force curves.open inductance", m.OpenInductance, false)
	}
	l.read(sec, "closed inductance frequency", &m.ClosedFrequency)
	l.read(sec, "coil temperature", &m.CurveTemperature)
}

// forceCurveFile is a force-curve file as read: the curves (SI, gaps
// ascending), the file line of each point, and what its columns were.
type forceCurveFile struct {
	curves  []magnet.ForceCurve
	lines   [][]int // per curve, per point
	header  int     // the header's line
	voltage bool    // the second column gave voltages (V)
	volts   []float64
	stroke  bool    // the first column gave the stroke from the seated gap
	seated  float64 // m, the seated gap a stroke counts from
	// the columns' headers as written and units (as written, with their
	// SI values), for messages in the file's units
	headers [3]string
	units   [3]magnet.Unit
}

// curveColumns are the quantities of a force-curve file's three columns.
var curveColumns = [3]map[string]Dim{
	{"gap": Length, "air gap": Length, "stroke": Length},
	{"current": Current, "voltage": Voltage},
	{"force": Force, "pull": Force},
}

// readCurveHeader parses the header cells into the columns' names and
// units.
func readCurveHeader(name string, line int, rec []string) (names [3]string, units [3]magnet.Unit, err error) {
	const want = `three columns with units, e.g. "stroke (mm), current (A), force (N)" or "gap (mm), voltage (V), force (N)"`
	if len(rec) != 3 {
		return names, units, fmt.Errorf("%s:%d: the header has %d columns; expected %s", name, line, len(rec), want)
	}
	for k, h := range rec {
		where := fmt.Sprintf("%s:%d: column %d %s", name, line, k+1, quoteCell(h))
		m := columnRE.FindStringSubmatch(h)
		if len(h) > maxHeaderCell || m == nil {
			return names, units, fmt.Errorf("%s: expected a name and a unit; the header needs %s", where, want)
		}
		n := strings.ToLower(strings.Join(strings.Fields(strings.ReplaceAll(m[1], "_", " ")), " "))
		dim, ok := curveColumns[k][n]
		if !ok {
			return names, units, fmt.Errorf("%s: unknown quantity; the header needs %s", where, want)
		}
		unit := strings.TrimSpace(m[2] + m[3])
		if unit == "" {
			return names, units, fmt.Errorf("%s has no unit; expected %s, e.g. %q", where, dim.Name(), n+" ("+strings.Fields(dim.Example())[1]+")")
		}
		v, err := ParseQuantity("1 "+unit, dim)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return names, units, fmt.Errorf("%s: unit %s is not %s, e.g. %q", where, quoteCell(unit), dim.Name(), n+" ("+strings.Fields(dim.Example())[1]+")")
		}
		names[k], units[k] = n, magnet.Unit{Name: unit, Scale: v}
	}
	return names, units, nil
}

// readForceCurves reads a force-curve CSV: a header, then rows of gap (or
// stroke), current (or voltage) and force, one curve per run of rows with
// the same current, the curves in order of rising current. seated is the
// seated gap (m) a stroke is counted from.
func readForceCurves(r io.Reader, name string, seated float64) (*forceCurveFile, error) {
	rd := newTraceReader(r, name)
	rec, line, err := rd.read("a header")
	if err == io.EOF {
		return nil, fmt.Errorf("%s: empty; expected a header and the curves' rows", name)
	}
	if err != nil {
		return nil, err
	}
	names, units, err := readCurveHeader(name, line, rec)
	if err != nil {
		return nil, err
	}
	f := &forceCurveFile{header: line, voltage: names[1] == "voltage", stroke: names[0] == "stroke", seated: seated, units: units}
	for k := range f.headers {
		f.headers[k] = strings.TrimSpace(rec[k])
	}
	expect := fmt.Sprintf("%s, %s, %s", quoteCell(rec[0]), quoteCell(rec[1]), quoteCell(rec[2]))
	for {
		rec, line, err = rd.read(expect)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if err := f.addRow(name, line, rec, expect); err != nil {
			return nil, err
		}
	}
	if len(f.curves) == 0 {
		return nil, fmt.Errorf("%s: no rows after the header; expected %s", name, expect)
	}
	f.ascending()
	return f, nil
}

// column names column k (from 0) for messages: column 2 "current (mA)".
func (f *forceCurveFile) column(k int) string {
	return fmt.Sprintf("column %d %s", k+1, quoteCell(f.headers[k]))
}

// addRow adds one row (at line) to the curves. Its messages name the
// column by its header and give values in the file's units.
func (f *forceCurveFile) addRow(name string, line int, rec []string, expect string) error {
	if len(rec) != 3 {
		return fmt.Errorf("%s:%d: %d cells; expected 3 (%s)", name, line, len(rec), expect)
	}
	var v [3]float64
	for k := range v {
		x, err := strconv.ParseFloat(strings.TrimSpace(rec[k]), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("%s:%d: %s: %s is not a finite number (%s)", name, line, f.column(k), quoteCell(rec[k]), expect)
		}
		v[k] = x * f.units[k].Scale
	}
	if err := f.checkCells(v); err != "" {
		return fmt.Errorf("%s:%d: %s", name, line, err)
	}
	if f.stroke {
		v[0] += f.seated
	}
	n := len(f.curves)
	if n == 0 || v[1] != f.level(n-1) {
		if n >= magnet.MaxForceCurves {
			return fmt.Errorf("%s:%d: more than %d curves", name, line, magnet.MaxForceCurves)
		}
		if n > 0 && v[1] < f.level(n-1) {
			what := "current"
			if f.voltage {
				what = "voltage"
			}
			u := f.units[1]
			return fmt.Errorf("%s:%d: %s: %s falls below the previous curve's %s; give the curves in order of rising %s, each as one run of rows", name, line, f.column(1), u.Format(v[1]), u.Format(f.level(n-1)), what)
		}
		f.curves = append(f.curves, magnet.ForceCurve{Current: v[1]})
		f.volts = append(f.volts, v[1])
		f.lines = append(f.lines, nil)
		n++
	}
	c := &f.curves[n-1]
	if len(c.Gaps) >= magnet.MaxCurvePoints {
		return fmt.Errorf("%s:%d: more than %d points in one curve", name, line, magnet.MaxCurvePoints)
	}
	if err := f.checkOrder(c, v[0]); err != "" {
		return fmt.Errorf("%s:%d: %s", name, line, err)
	}
	c.Gaps, c.Forces = append(c.Gaps, v[0]), append(c.Forces, v[2])
	f.lines[n-1] = append(f.lines[n-1], line)
	return nil
}

// checkCells returns what is wrong with a row's values v (SI, the stroke
// not yet turned into a gap), or "": a negative gap or stroke, a current
// or voltage not above zero, a negative force.
func (f *forceCurveFile) checkCells(v [3]float64) string {
	switch {
	case v[0] < 0 && f.stroke:
		return fmt.Sprintf("%s: stroke %s is negative; the stroke counts from the seated position", f.column(0), f.units[0].Format(v[0]))
	case v[0] < 0:
		return fmt.Sprintf("%s: gap %s is negative; expected a gap ≥ 0", f.column(0), f.units[0].Format(v[0]))
	case !(v[1] > 0):
		return fmt.Sprintf("%s: %s must be positive, got %s (a curve without current has no pull)", f.column(1), map[bool]string{false: "current", true: "voltage"}[f.voltage], f.units[1].Format(v[1]))
	case v[2] < 0:
		return fmt.Sprintf("%s: force %s is negative; force must be ≥ 0 (a pull)", f.column(2), f.units[2].Format(v[2]))
	}
	return ""
}

// checkOrder returns what is wrong with gap x (m) as the next point of
// curve c, or "": a curve's gaps (or strokes) rise or fall strictly, the
// way its first two points go. The message gives the values as the file
// does (a stroke as the stroke).
func (f *forceCurveFile) checkOrder(c *magnet.ForceCurve, x float64) string {
	n := len(c.Gaps)
	if n == 0 {
		return ""
	}
	what, show := "gap", f.units[0].Format
	if f.stroke {
		what, show = "stroke", f.strokeOf
	}
	prev := c.Gaps[n-1]
	rising := n < 2 || c.Gaps[1] > c.Gaps[0]
	if x == prev || (n >= 2 && (x > prev) != rising) {
		return fmt.Sprintf("%s: %s %s does not follow %s of the previous row (line %d) in the curve's direction: a curve's %ss must rise (or fall) strictly",
			f.column(0), what, show(x), show(prev), f.lines[len(f.lines)-1][n-1], what)
	}
	return ""
}

// strokeOf returns gap x (m) as the stroke in the file's unit: "0.3 mm".
func (f *forceCurveFile) strokeOf(x float64) string {
	return strconv.FormatFloat((x-f.seated)/f.units[0].Scale, 'g', 6, 64) + " " + f.units[0].Name
}

// level is curve k's current or voltage as read.
func (f *forceCurveFile) level(k int) float64 { return f.volts[k] }

// ascending reverses each curve given from the largest gap down.
func (f *forceCurveFile) ascending() {
	for k := range f.curves {
		c := &f.curves[k]
		if len(c.Gaps) >= 2 && c.Gaps[0] > c.Gaps[len(c.Gaps)-1] {
			for i, j := 0, len(c.Gaps)-1; i < j; i, j = i+1, j-1 {
				c.Gaps[i], c.Gaps[j] = c.Gaps[j], c.Gaps[i]
				c.Forces[i], c.Forces[j] = c.Forces[j], c.Forces[i]
				f.lines[k][i], f.lines[k][j] = f.lines[k][j], f.lines[k][i]
			}
		}
	}
}

// buildForceCurves reads the scenario's force-curve file and builds the
// model; its errors name the file's line (or the scenario key).
func buildForceCurves(s *Scenario, md *Model) (*magnet.CurveModel, *forceCurveFile, error) {
	m := &s.Magnet
	const field = "magnet.force curves.file"
	in, err := OpenInput(m.CurvesFile, "force-curve file", MaxTableBytes)
	if err != nil {
		return nil, nil, s.Errorf(field, "%v", err)
	}
	defer in.Close()
	f, err := readForceCurves(in, m.CurvesFile, s.Plunger.SeatedGap)
	if err != nil {
		return nil, nil, s.Errorf(field, "%v", err)
	}
	if f.voltage {
		if m.CurveTemperature == 0 {
			return nil, nil, s.Errorf("magnet.force curves", "the file gives voltages: give coil temperature, the coil's temperature when the curves were taken (current = V/R(T))")
		}
		r := md.Coil.ResistanceAt(m.CurveTemperature)
		for k := range f.curves {
			f.curves[k].Current = f.volts[k] / r
		}
	}
	cm, err := magnet.NewCurveModel(f.curves, m.OpenInductance, s.Plunger.SeatedGap, s.Plunger.RestGap)
	if err != nil {
		return nil, nil, s.Errorf(field, "%s", f.curveError(m.CurvesFile, err))
	}
	return cm, f, nil
}

// valueInMessage finds a value of a force-curve model's message (in mm,
// A or N, as magnet.NewCurveModel writes them), or a range of them
// ("0.1–1.2 mm"), with the word before it that says what it is.
var valueInMessage = regexp.MustCompile(`(gaps? |the stroke )?(-?[0-9.]+(?:e[+-]?[0-9]+)?)(?:–(-?[0-9.]+(?:e[+-]?[0-9]+)?))? (mm|A|N)\b`)

// fileUnits rewrites the values of a model message in the file's units:
// a current as the file gives its curve (the current or the voltage as
// written), a force in the force column's unit, a gap in the gap
// column's unit or, when the file counts the stroke, as the stroke with
// the gap beside it.
func (f *forceCurveFile) fileUnits(msg string) string {
	return valueInMessage.ReplaceAllStringFunc(msg, func(m string) string {
		sub := valueInMessage.FindStringSubmatch(m)
		word, unit := sub[1], sub[4]
		var xs []float64
		for _, t := range sub[2:4] {
			if t == "" {
				continue
			}
			x, err := strconv.ParseFloat(t, 64)
			if err != nil {
				return m
			}
			xs = append(xs, x)
		}
		switch unit {
		case "A":
			return word + f.currentText(sub[2], xs[0])
		case "N":
			return word + f.rangeText(xs, 1, f.units[2])
		}
		for k := range xs {
			xs[k] *= 1e-3 // mm
		}
		if !f.stroke {
			if word == "the stroke " {
				word = "the stroke's gaps "
			}
			return word + f.rangeText(xs, 1, f.units[0])
		}
		gaps := word
		switch word {
		case "the stroke ":
			gaps = "gaps "
		case "":
			word = "stroke "
		default:
			word = strings.Replace(word, "gap", "stroke", 1)
		}
		for k := range xs {
			xs[k] -= f.seated
		}
		strokes := f.rangeText(xs, 1, f.units[0])
		return fmt.Sprintf("%s%s (%s%s)", word, strokes, gaps, sub[0][len(sub[1]):])
	})
}

// rangeText is "x u" or "x1–x2 u" of the SI values xs in unit u, to 4
// digits; scale multiplies them first.
func (f *forceCurveFile) rangeText(xs []float64, scale float64, u magnet.Unit) string {
	var parts []string
	for _, x := range xs {
		parts = append(parts, strconv.FormatFloat(x*scale/u.Scale, 'g', 4, 64))
	}
	return strings.Join(parts, "–") + " " + u.Name
}

// currentText is a model message's current x (A, written as text) as the
// file gives it: the current or voltage of the curve it is, as written
// ("300 mA", "24 V (0.4 A)"); another current in the current column's
// unit.
func (f *forceCurveFile) currentText(text string, x float64) string {
	for k, c := range f.curves {
		if strconv.FormatFloat(c.Current, 'g', 4, 64) == text {
			if f.voltage {
				return fmt.Sprintf("%s (%s A)", f.units[1].Format(f.volts[k]), text)
			}
			return f.units[1].Format(f.volts[k])
		}
	}
	if f.voltage || x == 0 {
		return text + " A"
	}
	return f.units[1].Approx(x)
}

// curveError names the file line of a model error and gives its values in
// the file's units.
func (f *forceCurveFile) curveError(name string, err error) string {
	ce, ok := err.(*magnet.CurveError)
	if !ok {
		return err.Error()
	}
	msg := f.fileUnits(ce.Msg)
	switch {
	case ce.Curve >= 0 && ce.Point >= 0 && ce.Point < len(f.lines[ce.Curve]):
		line := f.lines[ce.Curve][ce.Point]
		if k := ce.Curve - 1; k >= 0 && strings.Contains(msg, "at the lower current") {
			for j, x := range f.curves[k].Gaps {
				if x == f.curves[ce.Curve].Gaps[ce.Point] {
					msg += fmt.Sprintf(" (the lower curve's point is line %d)", f.lines[k][j])
				}
			}
		}
		return fmt.Sprintf("%s:%d: %s", name, line, msg)
	case ce.Curve >= 0 && ce.Curve < len(f.lines):
		ls := f.lines[ce.Curve]
		return fmt.Sprintf("%s:%d-%d (the curve at %s): %s", name, slices.Min(ls), slices.Max(ls), f.curveLabel(ce.Curve), msg)
	}
	return fmt.Sprintf("%s: %s", name, msg)
}

// curveLabel is the curve's current or voltage as the file gives it:
// "500 mA" or "24 V, 0.4 A" (the current at the curves' temperature).
func (f *forceCurveFile) curveLabel(k int) string {
	if f.voltage {
		return fmt.Sprintf("%s, %.4g A", f.units[1].Format(f.volts[k]), f.curves[k].Current)
	}
	return f.units[1].Format(f.volts[k])
}
