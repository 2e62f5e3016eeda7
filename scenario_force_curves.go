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
}

// curveColumns are the quantities of a force-curve file's three columns.
var curveColumns = [3]map[string]Dim{
	{"gap": Length, "air gap": Length, "stroke": Length},
	{"current": Current, "voltage": Voltage},
	{"force": Force, "pull": Force},
}

// readCurveHeader parses the header cells into the columns' names and
// scales.
func readCurveHeader(name string, line int, rec []string) (names [3]string, scales [3]float64, err error) {
	const want = `three columns with units, e.g. "stroke (mm), current (A), force (N)" or "gap (mm), voltage (V), force (N)"`
	if len(rec) != 3 {
		return names, scales, fmt.Errorf("%s:%d: the header has %d columns; expected %s", name, line, len(rec), want)
	}
	for k, h := range rec {
		where := fmt.Sprintf("%s:%d: column %d %s", name, line, k+1, quoteCell(h))
		m := columnRE.FindStringSubmatch(h)
		if len(h) > maxHeaderCell || m == nil {
			return names, scales, fmt.Errorf("%s: expected a name and a unit; the header needs %s", where, want)
		}
		n := strings.ToLower(strings.Join(strings.Fields(strings.ReplaceAll(m[1], "_", " ")), " "))
		dim, ok := curveColumns[k][n]
		if !ok {
			return names, scales, fmt.Errorf("%s: unknown quantity; the header needs %s", where, want)
		}
		unit := strings.TrimSpace(m[2] + m[3])
		if unit == "" {
			return names, scales, fmt.Errorf("%s has no unit; expected %s, e.g. %q", where, dim.Name(), n+" ("+strings.Fields(dim.Example())[1]+")")
		}
		v, err := ParseQuantity("1 "+unit, dim)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return names, scales, fmt.Errorf("%s: unit %s is not %s, e.g. %q", where, quoteCell(unit), dim.Name(), n+" ("+strings.Fields(dim.Example())[1]+")")
		}
		names[k], scales[k] = n, v
	}
	return names, scales, nil
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
	names, scales, err := readCurveHeader(name, line, rec)
	if err != nil {
		return nil, err
	}
	f := &forceCurveFile{header: line, voltage: names[1] == "voltage", stroke: names[0] == "stroke", seated: seated}
	expect := fmt.Sprintf("%s, %s, %s", quoteCell(rec[0]), quoteCell(rec[1]), quoteCell(rec[2]))
	for {
		rec, line, err = rd.read(expect)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if err := f.addRow(name, line, rec, scales, seated, expect); err != nil {
			return nil, err
		}
	}
	if len(f.curves) == 0 {
		return nil, fmt.Errorf("%s: no rows after the header; expected %s", name, expect)
	}
	f.ascending()
	return f, nil
}

// addRow adds one row to the curves.
func (f *forceCurveFile) addRow(name string, line int, rec []string, scales [3]float64, seated float64, expect string) error {
	if len(rec) != 3 {
		return fmt.Errorf("%s:%d: %d cells; expected 3 (%s)", name, line, len(rec), expect)
	}
	var v [3]float64
	for k := range v {
		x, err := strconv.ParseFloat(strings.TrimSpace(rec[k]), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("%s:%d: column %d: %s is not a finite number (%s)", name, line, k+1, quoteCell(rec[k]), expect)
		}
		v[k] = x * scales[k]
	}
	if f.stroke {
		if v[0] < 0 {
			return fmt.Errorf("%s:%d: column 1: stroke %s is negative; the stroke counts from the seated position", name, line, quoteCell(rec[0]))
		}
		v[0] += seated
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
			return fmt.Errorf("%s:%d: column 2: %s falls below the previous curve's %g; give the curves in order of rising %s, each as one run of rows", name, line, quoteCell(rec[1]), f.level(n-1)/scales[1], what)
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
	c.Gaps, c.Forces = append(c.Gaps, v[0]), append(c.Forces, v[2])
	f.lines[n-1] = append(f.lines[n-1], line)
	return nil
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

// gapInMessage finds "at gap 0.35 mm" in a model error.
var gapInMessage = regexp.MustCompile(`at gap ([0-9.e+-]+) mm`)

// curveError names the file line of a model error.
func (f *forceCurveFile) curveError(name string, err error) string {
	ce, ok := err.(*magnet.CurveError)
	if !ok {
		return err.Error()
	}
	msg := ce.Msg
	if f.stroke {
		// the file counts the stroke: say it so, with the gap beside it
		msg = gapInMessage.ReplaceAllStringFunc(msg, func(g string) string {
			x, err := strconv.ParseFloat(gapInMessage.FindStringSubmatch(g)[1], 64)
			if err != nil {
				return g
			}
			return fmt.Sprintf("at stroke %.4g mm (gap %.4g mm)", x-f.seated*1e3, x)
		})
	}
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

// curveLabel is "0.5 A" or "24 V (0.4 A at the curves' temperature)".
func (f *forceCurveFile) curveLabel(k int) string {
	if f.voltage {
		return fmt.Sprintf("%.4g V, %.4g A", f.volts[k], f.curves[k].Current)
	}
	return fmt.Sprintf("%.4g A", f.curves[k].Current)
}
