package coilkick

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"coilkick/magnet"
)

// MeasuredTrace is a bench recording of one actuation: coil current (and
// optionally coil voltage) versus time, in SI units.
type MeasuredTrace struct {
	Source  string
	Time    []float64 // s, strictly increasing
	Current []float64 // A
	Voltage []float64 // V, nil when not recorded
	// Repeated counts the rows dropped because their time equals the
	// previous row's (coilkick's own run CSV has one row on each side of
	// every event); the first row of each instant is kept.
	Repeated int
	// HeaderLine is the file line of the header; Columns the columns read
	// (time, current, and voltage when recorded), with their units.
	HeaderLine int
	Columns    []TraceColumn
}

// columnRE splits a header cell into a name and a unit: "time (ms)",
// "current [mA]", or snake case as coilkick's run CSV writes it:
// "time_s", "coil_voltage_V", "velocity_m_per_s".
var columnRE = regexp.MustCompile(`^\s*([A-Za-z][A-Za-z _]*?)\s*(?:[\(\[]\s*([^\)\]]*)\s*[\)\]]|_([A-Za-z%µ]+(?:_per_[A-Za-z]+)?))?\s*$`)

// ignoredColumns are the other quantities of coilkick's run CSV; a trace
// may carry them and they are skipped.
var ignoredColumns = map[string]bool{"switch voltage": true, "gap": true, "velocity": true,
	"magnetic force": true, "passive force": true, "winding temperature": true}

// Trace limits. A trace above MaxTraceSamples samples is refused with a
// request to decimate it: the fit compares at most FitMaxPoints of them
// and the event detection needs nothing like a million. The range bounds
// keep every sum of squares finite and lie far beyond any solenoid drive
// (common practice, no source).
const (
	MaxTraceSamples = 1_000_000
	// maxTraceColumns and maxHeaderCell bound the header: coilkick's run
	// CSV has 9 columns and its longest cell has 21 characters. A longer
	// cell is refused before the unit parser sees it (its work grows with
	// the square of a unit's length: a 1 MB cell found by FuzzReadTrace
	// took over a minute).
	maxTraceColumns = 100
	maxHeaderCell   = 100  // bytes
	maxTraceTime    = 1e10 // s, magnitude (a logger's epoch time stamps are about 1.8e9 s)
	maxTraceCurrent = 1e6  // A, magnitude
	maxTraceVoltage = 1e6  // V, magnitude
)

// TraceColumn is a column of the trace that was read.
type TraceColumn struct {
	Quantity string  // "time", "current" or "voltage"
	Index    int     // the CSV column, from 1
	Header   string  // the header cell as written
	Unit     string  // the unit as written: "ms", "mA", "V"
	Scale    float64 // SI per unit
}

// String describes the column for messages: column 2 "current (mA)".
func (c TraceColumn) String() string {
	return fmt.Sprintf("column %d %s", c.Index, quoteCell(c.Header))
}

// LoadTrace reads the trace file at path (ReadTraceCSV) after the checks
// of OpenInput: a regular file (not a FIFO or a device) of at most
// MaxTableBytes.
func LoadTrace(path string) (*MeasuredTrace, error) {
	f, err := OpenInput(path, "trace", MaxTableBytes)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return ReadTraceCSV(f, path)
}

// errTraceTooLarge is returned by limitedReader past its limit.
var errTraceTooLarge = fmt.Errorf("the trace is larger than %d bytes: refused", MaxTableBytes)

// limitedReader reads at most n bytes and then fails with
// errTraceTooLarge (io.LimitReader would end quietly, truncating the
// trace).
type limitedReader struct {
	r io.Reader
	n int64
}

func (l *limitedReader) Read(p []byte) (int, error) {
	if l.n <= 0 {
		return 0, errTraceTooLarge
	}
	if int64(len(p)) > l.n {
		p = p[:l.n]
	}
	k, err := l.r.Read(p)
	l.n -= int64(k)
	return k, err
}

// quoteCell quotes a cell for a message, cut to 40 characters.
func quoteCell(s string) string {
	n := 0
	for k := range s {
		if n == 40 {
			return strconv.Quote(s[:k]) + "…"
		}
		n++
	}
	return strconv.Quote(s)
}

// ReadTraceCSV reads a trace from CSV. A UTF-8 byte-order mark at the
// start is skipped; lines starting with '#' are comments. The first row
// names the columns with their units: "time (ms)", "current [mA]" or
// "time_s", "current_A", and optionally "voltage (V)" or
// "coil_voltage_V" (the coil voltage); names may be abbreviated t, i, v.
// The other columns of coilkick's own run CSV (switch voltage, gap,
// velocity, forces, winding temperature) are ignored, so that file reads
// as a trace. A row at the same time as the previous one is dropped (the
// first is kept: the state just before an event, as Simulate samples an
// instant that falls on an event) and counted in Repeated.
//
// Errors name the file, the line and the column with its expected unit: a
// missing, unknown or repeated column, a unit of the wrong kind, a cell
// that is not a finite number or lies outside the range a trace may hold
// (|time| ≤ 1e10 s, |current| ≤ 1e6 A, |voltage| ≤ 1e6 V), time that goes
// back, in a uniformly sampled record gaps in the time base (a step above
// 10 times the median step), fewer than 10 or more than MaxTraceSamples
// samples, and more than MaxTableBytes bytes. The reader keeps only the
// samples, never the whole file.
func ReadTraceCSV(r io.Reader, name string) (*MeasuredTrace, error) {
	rd := newTraceReader(r, name)
	header, headerLine, err := rd.read(`a header naming the columns with their units, e.g. "time (ms), current (mA)"`)
	if err == io.EOF {
		return nil, fmt.Errorf("%s:1: the trace is empty; expected a header naming the columns with their units, e.g. \"time (ms), current (mA)\", then a row per sample", name)
	}
	if err != nil {
		return nil, err
	}
	tr, err := traceHeader(name, header, headerLine)
	if err != nil {
		return nil, err
	}
	rows, err := rd.rows(tr, len(header))
	if err != nil {
		return nil, err
	}
	if len(tr.Time) < 10 {
		return nil, fmt.Errorf("%s:%d: only %d samples after the header (line %d); a trace needs at least 10 rows of %s", name, max(rd.lastLine, headerLine), len(tr.Time), headerLine, rows.expect)
	}
	if !tr.Uniform() {
		return tr, nil // a variable-step record (a simulation's): no gap check
	}
	med := tr.MedianStep()
	cTime := rows.cols[0]
	for k := 1; k < len(tr.Time); k++ {
		if s := tr.Time[k] - tr.Time[k-1]; s > 10*med {
			return nil, fmt.Errorf("%s:%d: %s: a gap of %.3g %s in the time base (median step %.3g %s); expected a uniformly sampled record", name, rows.line[k], cTime, s/cTime.Scale, cTime.Unit, med/cTime.Scale, cTime.Unit)
		}
	}
	return tr, nil
}

// traceReader reads a trace's CSV records with their file lines.
type traceReader struct {
	cr       *magnet.CSVReader
	name     string
	lastLine int // the file line of the last record read
}

// newTraceReader reads at most MaxTableBytes from r, skipping a UTF-8
// byte-order mark and '#' comments (magnet.CSVReader: a syntax error's
// column counts characters, not bytes).
func newTraceReader(r io.Reader, name string) *traceReader {
	cr := magnet.NewCSVReader(&limitedReader{r: r, n: MaxTableBytes})
	cr.CSV.ReuseRecord = true
	cr.CSV.LazyQuotes = true // a stray quote stays in its cell, which is then not a number (named by column)
	return &traceReader{cr: cr, name: name}
}

// read returns the next record and its file line, or io.EOF; an error
// says what was expected.
func (rd *traceReader) read(expect string) ([]string, int, error) {
	rec, line, err := rd.cr.Read()
	if err == io.EOF {
		return nil, 0, err
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return nil, 0, fmt.Errorf("%s:%d: character %d: %v; expected %s", rd.name, pe.Line, pe.Column, pe.Err, expect)
		}
		var le *magnet.LineTooLongError
		if errors.As(err, &le) {
			return nil, 0, fmt.Errorf("%s:%d: %v; expected %s", rd.name, le.Line, err, expect)
		}
		return nil, 0, fmt.Errorf("%s:%d: %v", rd.name, rd.lastLine+1, err)
	}
	rd.lastLine = line
	return rec, line, nil
}

// traceHeader reads the header's columns into a new trace: time and
// current, and the voltage when present.
func traceHeader(name string, header []string, headerLine int) (*MeasuredTrace, error) {
	if len(header) > maxTraceColumns {
		return nil, fmt.Errorf("%s:%d: the header has %d columns; a trace has at most %d (time, current, voltage and the columns of coilkick's run CSV)", name, headerLine, len(header), maxTraceColumns)
	}
	tr := &MeasuredTrace{Source: name, HeaderLine: headerLine}
	at := map[string]int{} // quantity -> index in tr.Columns
	for k, h := range header {
		where := fmt.Sprintf("%s:%d: column %d %s", name, headerLine, k+1, quoteCell(h))
		c, err := traceColumn(where, h)
		if err != nil {
			return nil, err
		}
		if c == nil {
			continue // a column of coilkick's run CSV that a trace ignores
		}
		if j, dup := at[c.Quantity]; dup {
			return nil, fmt.Errorf("%s: a second %s column (the first is column %d); expected one", where, c.Quantity, tr.Columns[j].Index)
		}
		c.Index = k + 1
		at[c.Quantity] = len(tr.Columns)
		tr.Columns = append(tr.Columns, *c)
	}
	for _, need := range []string{"time", "current"} {
		if _, ok := at[need]; !ok {
			return nil, fmt.Errorf("%s:%d: no %s column; the header needs time and current with their units, e.g. \"time (ms), current (mA)\"", name, headerLine, need)
		}
	}
	return tr, nil
}

// traceColumns maps the names a trace's quantities go by to the quantity
// and its dimension.
var traceColumns = map[string]struct {
	quantity string
	dim      Dim
}{"time": {"time", Time}, "t": {"time", Time}, "current": {"current", Current}, "i": {"current", Current},
	"voltage": {"voltage", Voltage}, "v": {"voltage", Voltage}, "coil voltage": {"voltage", Voltage}}

// traceColumn parses a header cell h (where names it for errors): its
// quantity, unit and scale; nil for an ignored column.
func traceColumn(where, h string) (*TraceColumn, error) {
	if len(h) > maxHeaderCell {
		return nil, fmt.Errorf("%s: a header cell of %d bytes; expected a name and a unit of at most %d, e.g. \"current (mA)\"", where, len(h), maxHeaderCell)
	}
	m := columnRE.FindStringSubmatch(h)
	if m == nil {
		return nil, fmt.Errorf("%s: expected a name and a unit, e.g. \"time (ms)\" or \"current (mA)\"", where)
	}
	n := strings.ToLower(strings.Join(strings.Fields(strings.ReplaceAll(m[1], "_", " ")), " "))
	if ignoredColumns[n] {
		return nil, nil
	}
	q, ok := traceColumns[n]
	if !ok {
		return nil, fmt.Errorf("%s: unknown quantity; expected time, current or (coil) voltage with a unit, e.g. \"current (mA)\", or a column of coilkick's run CSV", where)
	}
	example := q.quantity + " (" + strings.Fields(q.dim.Example())[1] + ")"
	unit := strings.TrimSpace(m[2] + m[3])
	if unit == "" {
		return nil, fmt.Errorf("%s has no unit; expected %s, e.g. %q", where, q.dim.Name(), example)
	}
	scale, err := ParseQuantity("1 "+unit, q.dim)
	if err == nil && !(scale > 0 && !math.IsInf(scale, 0)) {
		err = fmt.Errorf("%s is out of range", quoteCell(unit))
	}
	if err != nil {
		// the unit parser speaks of the quantity "1 unit" it was given
		msg := strings.ReplaceAll(err.Error(), strconv.Quote("1 "+unit), "unit "+quoteCell(unit))
		if cut, _, ok := strings.Cut(msg, ", e.g. "); ok {
			msg = cut
		}
		return nil, fmt.Errorf("%s: %s, e.g. %q", where, msg, example)
	}
	return &TraceColumn{Quantity: q.quantity, Header: strings.TrimSpace(h), Unit: unit, Scale: scale}, nil
}

// traceLimits are the magnitudes (SI) a trace may hold, with their text
// for messages.
var traceLimits = map[string]struct {
	max  float64
	text string
}{"time": {maxTraceTime, "1e10 s"}, "current": {maxTraceCurrent, "1e6 A"}, "voltage": {maxTraceVoltage, "1e6 V"}}

// traceInput is what reading the rows found out besides the samples.
type traceInput struct {
	cols   []TraceColumn // time, current and, when recorded, voltage
	expect string        // the columns with their units, for messages
	line   []int         // the file line of each sample
}

// rows reads the samples into tr: each row has nHeader cells.
func (rd *traceReader) rows(tr *MeasuredTrace, nHeader int) (*traceInput, error) {
	rows := &traceInput{}
	var expect []string
	for _, q := range []string{"time", "current", "voltage"} {
		for _, c := range tr.Columns {
			if c.Quantity == q {
				rows.cols = append(rows.cols, c)
			}
		}
	}
	for _, c := range tr.Columns {
		expect = append(expect, c.Quantity+" in "+c.Unit)
	}
	rows.expect = strings.Join(expect, ", ")
	rowExpect := "a row of numbers: " + rows.expect
	values := make([]float64, len(rows.cols)) // time, current, voltage of a row
	for {
		row, line, err := rd.read(rowExpect)
		if err == io.EOF {
			return rows, nil
		}
		if err != nil {
			return nil, err
		}
		if len(row) != nHeader {
			return nil, rd.rowLengthError(line, len(row), nHeader, tr.HeaderLine, rowExpect)
		}
		for j, c := range rows.cols {
			if values[j], err = rd.cell(row, line, c); err != nil {
				return nil, err
			}
		}
		if err := rows.add(tr, values, line, row); err != nil {
			return nil, fmt.Errorf("%s:%d: %w", rd.name, line, err)
		}
	}
}

// rowLengthError says that a row (at line) has n cells, the header
// nHeader.
func (rd *traceReader) rowLengthError(line, n, nHeader, headerLine int, expect string) error {
	cells := fmt.Sprintf("%d cells", n)
	if n == 1 {
		cells = "1 cell"
	}
	if n < nHeader {
		return fmt.Errorf("%s:%d: %s, the header (line %d) has %d: no cell for column %d; expected %s", rd.name, line, cells, headerLine, nHeader, n+1, expect)
	}
	return fmt.Errorf("%s:%d: %s, the header (line %d) has %d: column %d has no header; expected %s", rd.name, line, cells, headerLine, nHeader, nHeader+1, expect)
}

// cell returns column c of a row (at line) in SI: a finite number within
// the trace's limits.
func (rd *traceReader) cell(row []string, line int, c TraceColumn) (float64, error) {
	s := strings.TrimSpace(row[c.Index-1])
	x, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%s:%d: %s: %s is not a finite number; expected a %s in %s", rd.name, line, c, quoteCell(s), c.Quantity, c.Unit)
	}
	v, lim := x*c.Scale, traceLimits[c.Quantity]
	if !(math.Abs(v) <= lim.max) {
		return 0, fmt.Errorf("%s:%d: %s: %s %s is beyond the ±%s a trace may hold; expected a %s in %s", rd.name, line, c, quoteCell(s), c.Unit, lim.text, c.Quantity, c.Unit)
	}
	return v, nil
}

// add appends a row's values (time, current and voltage, SI) read at line
// to tr; a row at the previous row's time is counted and dropped. The
// slices double when full (append grows large slices by a quarter, which
// copied a million-sample trace some twenty times).
func (in *traceInput) add(tr *MeasuredTrace, values []float64, line int, row []string) error {
	t, k := values[0], len(tr.Time)
	if k > 0 && t == tr.Time[k-1] {
		tr.Repeated++
		return nil
	}
	if k > 0 && !(t > tr.Time[k-1]) {
		c := in.cols[0]
		return fmt.Errorf("%s: time %s %s does not increase (the previous sample, line %d, is at %.6g %s)", c,
			strings.TrimSpace(row[c.Index-1]), c.Unit, in.line[k-1], tr.Time[k-1]/c.Scale, c.Unit)
	}
	if k == MaxTraceSamples {
		return fmt.Errorf("more than %d samples: decimate the record (fit compares at most %d points)", MaxTraceSamples, FitMaxPoints)
	}
	if k == cap(tr.Time) {
		tr.Time, tr.Current = slices.Grow(tr.Time, k), slices.Grow(tr.Current, k)
		in.line = slices.Grow(in.line, k)
		if len(values) > 2 {
			tr.Voltage = slices.Grow(tr.Voltage, k)
		}
	}
	tr.Time = append(tr.Time, t)
	in.line = append(in.line, line)
	tr.Current = append(tr.Current, values[1])
	if len(values) > 2 {
		tr.Voltage = append(tr.Voltage, values[2])
	}
	return nil
}

// Resample returns the trace on a uniform time grid of step dt (linear
// interpolation) smoothed by a centred moving average of window samples
// (odd; 1 for none).
func (tr *MeasuredTrace) Resample(dt float64, window int) (t, i []float64) {
	n := int(math.Floor((tr.Time[len(tr.Time)-1]-tr.Time[0])/dt)) + 1
	t = make([]float64, n)
	raw := make([]float64, n)
	k := 0
	for j := range t {
		t[j] = tr.Time[0] + float64(j)*dt
		for k+1 < len(tr.Time)-1 && tr.Time[k+1] < t[j] {
			k++
		}
		a, b := tr.Time[k], tr.Time[k+1]
		w := math.Min(math.Max((t[j]-a)/(b-a), 0), 1)
		raw[j] = tr.Current[k] + w*(tr.Current[k+1]-tr.Current[k])
	}
	if window <= 1 {
		return t, raw
	}
	// centred moving average by a running sum (the window is cut at the
	// ends): O(n) whatever the window
	h := window / 2
	i = make([]float64, n)
	sum, lo, hi := 0.0, 0, -1 // raw[lo..hi] summed
	for j := range i {
		for hi < min(n-1, j+h) {
			hi++
			sum += raw[hi]
		}
		for lo < max(0, j-h) {
			sum -= raw[lo]
			lo++
		}
		i[j] = sum / float64(hi-lo+1)
	}
	return t, i
}

// Uniform says the record is sampled at a constant step, as a scope
// records: at least half the steps within 1 % of the median step.
// coilkick's run CSV has the integrator's variable step instead.
func (tr *MeasuredTrace) Uniform() bool {
	med, near := tr.MedianStep(), 0
	for k := 1; k < len(tr.Time); k++ {
		if math.Abs(tr.Time[k]-tr.Time[k-1]-med) <= 0.01*med {
			near++
		}
	}
	return 2*near >= len(tr.Time)-1
}

// detectionSteps is the number of uniform steps a variable-step record is
// resampled to before its events are found.
const detectionSteps = 10000

// MedianStep returns the median sample interval (s).
func (tr *MeasuredTrace) MedianStep() float64 {
	steps := make([]float64, len(tr.Time)-1)
	for k := range steps {
		steps[k] = tr.Time[k+1] - tr.Time[k]
	}
	sort.Float64s(steps)
	return steps[len(steps)/2]
}

// TraceEvents are the instants found in a measured trace, each with its
// uncertainty (s).
type TraceEvents struct {
	Step          float64 // s, the uniform sample step the events were found on
	Offset, Noise float64 // A: baseline before energizing, and the noise's standard deviation there
	Energize      float64 // s, the current leaves the baseline
	EnergizeErr   float64
	HasDip        bool    // a pull-in dip was found
	Peak, PeakI   float64 // s, A: the local maximum before the dip
	Seat, SeatI   float64 // s, A: the minimum of the dip (the plunger seats)
	SeatErr       float64
	TurnOff       float64 // s, the current starts to fall for good
	DecayEnd      float64 // s, the current back at the baseline (within 3 noise σ or 1 % of its turn-off value)
	DecayEndErr   float64
}

// ErrNoCurrent is returned when the trace never leaves its baseline.
var ErrNoCurrent = errors.New("coilkick: the trace's current never rises above its baseline")

// DetectEvents finds the energize instant, the pull-in dip (local peak and
// minimum: the seat instant) and the end of the decay in a trace. The
// baseline and noise come from the first 2 % of the samples (which must
// precede energizing); the signal is smoothed over 0.1 % of the record.
// A variable-step record is first resampled to a uniform step and not
// smoothed.
func DetectEvents(tr *MeasuredTrace) (*TraceEvents, error) {
	n0 := len(tr.Time)
	win := max(1, n0/1000) | 1
	if !tr.Uniform() {
		// A variable-step record (a simulation's, without noise): find the
		// events on a uniform resampling (linear interpolation) of
		// detectionSteps steps, unsmoothed.
		dt := (tr.Time[len(tr.Time)-1] - tr.Time[0]) / detectionSteps
		t, i := tr.Resample(dt, 1)
		tr = &MeasuredTrace{Source: tr.Source, Time: t, Current: i}
		win = 1
	}
	dt := tr.MedianStep()
	t, i := tr.Resample(dt, win)
	ev := &TraceEvents{Step: dt}
	ev.Offset, ev.Noise = baseline(tr.Current)
	peakAll := 0.0
	for k := range i {
		i[k] -= ev.Offset
		peakAll = math.Max(peakAll, i[k])
	}
	d := eventDetector{ev: ev, t: t, i: i, raw: tr.Current, smNoise: ev.Noise / math.Sqrt(float64(win))}
	d.thr = math.Max(5*d.smNoise, 0.01*peakAll)
	d.start = -1
	for k := range i {
		if i[k] > d.thr {
			d.start = k
			break
		}
	}
	if d.start < 0 || peakAll <= 5*d.smNoise {
		return nil, ErrNoCurrent
	}
	d.energize()
	// The dip: a local maximum followed by a fall of more than the noise
	// and 2 % of the peak, then a rise again.
	d.dip(math.Max(6*d.smNoise, 0.02*peakAll))
	d.decay()
	return ev, nil
}

// baseline returns the mean and standard deviation (A) of the raw samples
// before energizing: the first 10, extended (up to 2 % of the record)
// while the samples stay within 5 σ of it.
func baseline(current []float64) (offset, noise float64) {
	stats := func(n int) (mean, sd float64) {
		s, s2 := 0.0, 0.0
		for k := 0; k < n; k++ {
			s += current[k]
			s2 += current[k] * current[k]
		}
		mean = s / float64(n)
		return mean, math.Sqrt(math.Max(s2/float64(n)-mean*mean, 0))
	}
	nb := min(10, len(current))
	offset, noise = stats(nb)
	for nb < max(10, len(current)/50) && math.Abs(current[nb]-offset) < 5*math.Max(noise, 1e-12) {
		nb++
		if nb%10 == 0 {
			offset, noise = stats(nb)
		}
	}
	return stats(nb)
}

// eventDetector finds the events on the smoothed current i (A, baseline
// removed) at uniform times t (s).
type eventDetector struct {
	ev      *TraceEvents
	t, i    []float64
	raw     []float64 // the unsmoothed current (A, baseline included)
	smNoise float64   // A, the noise of the smoothed current
	thr     float64   // A, the threshold of "the current is on"
	start   int       // the first sample above thr
}

// energize back-extrapolates the rise to the baseline with a least-squares
// line through the raw samples of the early rise (from the threshold to 4
// times it): just after switch-on the current rises linearly, di/dt =
// V/L. Without such a line the energize instant is the first sample above
// the threshold, ± a sample step.
func (d *eventDetector) energize() {
	ev, t, i, dt := d.ev, d.t, d.i, d.ev.Step
	var sx, sy, sxx, sxy, nn float64
	for k := d.start; k < len(i) && i[k] < 4*d.thr; k++ {
		x, y := t[k], d.raw[min(k, len(d.raw)-1)]-ev.Offset
		sx, sy, sxx, sxy, nn = sx+x, sy+y, sxx+x*x, sxy+x*y, nn+1
	}
	ev.Energize = t[d.start]
	ev.EnergizeErr = dt
	if nn < 3 {
		return
	}
	den := nn*sxx - sx*sx
	slope := (nn*sxy - sx*sy) / den
	icpt := (sy - slope*sx) / nn
	if !(slope > 0) {
		return
	}
	if t0 := -icpt / slope; t0 > t[0] && t0 <= t[d.start] {
		ev.Energize = t0
		// σ of the intercept of a least-squares line (any statistics text)
		sdSlope := ev.Noise * math.Sqrt(nn/den)
		ev.EnergizeErr = math.Max(dt/2, ev.Noise/slope/math.Sqrt(nn)+math.Abs(t0)*sdSlope/slope)
	}
}

// dip finds the pull-in dip: a local maximum followed by a fall of more
// than depth (A), then a rise again by depth; the minimum is the seat
// instant. A fall without a rise is the turn-off: no dip.
func (d *eventDetector) dip(depth float64) {
	i := d.i
	kMax := d.start
	for k := d.start; k < len(i); k++ {
		if i[k] > i[kMax] {
			kMax = k
		}
		if i[kMax]-i[k] > depth {
			// find the minimum, then require a rise by depth after it
			kMin := k
			for m := k; m < len(i); m++ {
				if i[m] < i[kMin] {
					kMin = m
				}
				if i[m]-i[kMin] > depth {
					d.seat(kMax, kMin, m)
					return
				}
			}
			return
		}
	}
}

// seat records the dip with its peak at kMax, its minimum at kMin and the
// rise found by m; its uncertainty is the flat bottom of the dip within
// the noise.
func (d *eventDetector) seat(kMax, kMin, m int) {
	ev, t, i, dt := d.ev, d.t, d.i, d.ev.Step
	ev.HasDip = true
	ev.Peak, ev.PeakI = t[kMax], i[kMax]
	ev.Seat, ev.SeatI = t[kMin], i[kMin]
	lo, hi := kMin, kMin
	for lo > kMax && i[lo-1]-i[kMin] < 2*d.smNoise {
		lo--
	}
	for hi < m && i[hi+1]-i[kMin] < 2*d.smNoise {
		hi++
	}
	ev.SeatErr = math.Max(dt, float64(hi-lo)*dt/2)
}

// decay finds the end of the decay (the current back below the threshold
// for good) and the turn-off: the last time the current is within the
// noise of its late maximum before it falls to the baseline for good.
func (d *eventDetector) decay() {
	ev, t, i, dt := d.ev, d.t, d.i, d.ev.Step
	end := len(i) - 1
	for end > 0 && i[end] < d.thr {
		end--
	}
	if end == len(i)-1 {
		return
	}
	ev.DecayEnd = t[end+1]
	ev.DecayEndErr = dt + d.smNoise/math.Max(math.Abs((i[end]-i[end+1])/dt), 1e-30)
	kOff := end
	for kOff > d.start && i[kOff-1] >= i[kOff]-d.smNoise {
		kOff--
	}
	// walk back while the current keeps falling
	for kOff > d.start && i[kOff-1] > i[kOff] {
		kOff--
	}
	ev.TurnOff = t[kOff]
}
