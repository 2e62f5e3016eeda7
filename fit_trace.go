package coilkick

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"
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

// utf8BOM is the byte-order mark some programs write at the start of a
// UTF-8 file.
const utf8BOM = "\uFEFF"

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
	br := bufio.NewReader(&limitedReader{r: r, n: MaxTableBytes})
	if b, err := br.Peek(len(utf8BOM)); err == nil && string(b) == utf8BOM {
		br.Discard(len(utf8BOM))
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	cr.LazyQuotes = true // a stray quote stays in its cell, which is then not a number (named by column)
	lastLine := 0
	// read returns the next record and its file line, or io.EOF.
	read := func(expect string) ([]string, int, error) {
		rec, err := cr.Read()
		if err == io.EOF {
			return nil, 0, err
		}
		if err != nil {
			var pe *csv.ParseError
			switch {
			case errors.As(err, &pe):
				return nil, 0, fmt.Errorf("%s:%d: character %d: %v; expected %s", name, pe.Line, pe.Column, pe.Err, expect)
			case errors.Is(err, errTraceTooLarge):
				return nil, 0, fmt.Errorf("%s:%d: %v", name, lastLine+1, err)
			}
			return nil, 0, fmt.Errorf("%s:%d: %v", name, lastLine+1, err)
		}
		lastLine, _ = cr.FieldPos(0)
		return rec, lastLine, nil
	}
	header, headerLine, err := read(`a header naming the columns with their units, e.g. "time (ms), current (mA)"`)
	if err == io.EOF {
		return nil, fmt.Errorf("%s:1: the trace is empty; expected a header naming the columns with their units, e.g. \"time (ms), current (mA)\", then a row per sample", name)
	}
	if err != nil {
		return nil, err
	}
	nHeader := len(header) // the record is reused by the next read
	if nHeader > maxTraceColumns {
		return nil, fmt.Errorf("%s:%d: the header has %d columns; a trace has at most %d (time, current, voltage and the columns of coilkick's run CSV)", name, headerLine, nHeader, maxTraceColumns)
	}
	tr := &MeasuredTrace{Source: name, HeaderLine: headerLine}
	at := map[string]int{} // quantity -> index in tr.Columns
	dims := map[string]Dim{"time": Time, "current": Current, "voltage": Voltage}
	for k, h := range header {
		if len(h) > maxHeaderCell {
			return nil, fmt.Errorf("%s:%d: column %d %s: a header cell of %d bytes; expected a name and a unit of at most %d, e.g. \"current (mA)\"", name, headerLine, k+1, quoteCell(h), len(h), maxHeaderCell)
		}
		m := columnRE.FindStringSubmatch(h)
		if m == nil {
			return nil, fmt.Errorf("%s:%d: column %d %s: expected a name and a unit, e.g. \"time (ms)\" or \"current (mA)\"", name, headerLine, k+1, quoteCell(h))
		}
		n := strings.ToLower(strings.Join(strings.Fields(strings.ReplaceAll(m[1], "_", " ")), " "))
		if ignoredColumns[n] {
			continue
		}
		switch n {
		case "t":
			n = "time"
		case "i":
			n = "current"
		case "v", "coil voltage":
			n = "voltage"
		}
		dim, ok := dims[n]
		if !ok {
			return nil, fmt.Errorf("%s:%d: column %d %s: unknown quantity; expected time, current or (coil) voltage with a unit, e.g. \"current (mA)\", or a column of coilkick's run CSV", name, headerLine, k+1, quoteCell(h))
		}
		example := n + " (" + strings.Fields(dim.Example())[1] + ")"
		unit := strings.TrimSpace(m[2] + m[3])
		if unit == "" {
			return nil, fmt.Errorf("%s:%d: column %d %s has no unit; expected %s, e.g. %q", name, headerLine, k+1, quoteCell(h), dim.Name(), example)
		}
		scale, err := ParseQuantity("1 "+unit, dim)
		if err == nil && !(scale > 0 && !math.IsInf(scale, 0)) {
			err = fmt.Errorf("%s is out of range", quoteCell(unit))
		}
		if err != nil {
			// the unit parser speaks of the quantity "1 unit" it was given
			msg := strings.ReplaceAll(err.Error(), strconv.Quote("1 "+unit), "unit "+quoteCell(unit))
			if cut, _, ok := strings.Cut(msg, ", e.g. "); ok {
				msg = cut
			}
			return nil, fmt.Errorf("%s:%d: column %d %s: %s, e.g. %q", name, headerLine, k+1, quoteCell(h), msg, example)
		}
		if j, dup := at[n]; dup {
			return nil, fmt.Errorf("%s:%d: column %d %s: a second %s column (the first is column %d); expected one", name, headerLine, k+1, quoteCell(h), n, tr.Columns[j].Index)
		}
		at[n] = len(tr.Columns)
		tr.Columns = append(tr.Columns, TraceColumn{Quantity: n, Index: k + 1, Header: strings.TrimSpace(h), Unit: unit, Scale: scale})
	}
	for _, need := range []string{"time", "current"} {
		if _, ok := at[need]; !ok {
			return nil, fmt.Errorf("%s:%d: no %s column; the header needs time and current with their units, e.g. \"time (ms), current (mA)\"", name, headerLine, need)
		}
	}
	cTime, cCurrent := tr.Columns[at["time"]], tr.Columns[at["current"]]
	jv, hasV := at["voltage"]
	var cVoltage TraceColumn
	if hasV {
		cVoltage = tr.Columns[jv]
	}
	var expect []string
	for _, c := range tr.Columns {
		expect = append(expect, c.Quantity+" in "+c.Unit)
	}
	rowExpect := "a row of numbers: " + strings.Join(expect, ", ")
	limits := map[string]struct {
		max  float64
		text string
	}{"time": {maxTraceTime, "1e10 s"}, "current": {maxTraceCurrent, "1e6 A"}, "voltage": {maxTraceVoltage, "1e6 V"}}
	var rowLine []int // the file line of each sample
	for {
		row, line, err := read(rowExpect)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if len(row) != nHeader {
			cells := fmt.Sprintf("%d cells", len(row))
			if len(row) == 1 {
				cells = "1 cell"
			}
			if len(row) < nHeader {
				return nil, fmt.Errorf("%s:%d: %s, the header (line %d) has %d: no cell for column %d; expected %s", name, line, cells, headerLine, nHeader, len(row)+1, rowExpect)
			}
			return nil, fmt.Errorf("%s:%d: %s, the header (line %d) has %d: column %d has no header; expected %s", name, line, cells, headerLine, nHeader, nHeader+1, rowExpect)
		}
		get := func(c TraceColumn) (float64, error) {
			s := strings.TrimSpace(row[c.Index-1])
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return 0, fmt.Errorf("%s:%d: %s: %s is not a finite number; expected a %s in %s", name, line, c, quoteCell(s), c.Quantity, c.Unit)
			}
			v, lim := x*c.Scale, limits[c.Quantity]
			if !(math.Abs(v) <= lim.max) {
				return 0, fmt.Errorf("%s:%d: %s: %s %s is beyond the ±%s a trace may hold; expected a %s in %s", name, line, c, quoteCell(s), c.Unit, lim.text, c.Quantity, c.Unit)
			}
			return v, nil
		}
		t, err := get(cTime)
		if err != nil {
			return nil, err
		}
		i, err := get(cCurrent)
		if err != nil {
			return nil, err
		}
		v := 0.0
		if hasV {
			if v, err = get(cVoltage); err != nil {
				return nil, err
			}
		}
		k := len(tr.Time)
		if k > 0 && t == tr.Time[k-1] {
			tr.Repeated++
			continue
		}
		if k > 0 && !(t > tr.Time[k-1]) {
			return nil, fmt.Errorf("%s:%d: %s: time %s %s does not increase (the previous sample, line %d, is at %.6g %s)", name, line, cTime,
				strings.TrimSpace(row[cTime.Index-1]), cTime.Unit, rowLine[k-1], tr.Time[k-1]/cTime.Scale, cTime.Unit)
		}
		if k == MaxTraceSamples {
			return nil, fmt.Errorf("%s:%d: more than %d samples: decimate the record (fit compares at most %d points)", name, line, MaxTraceSamples, FitMaxPoints)
		}
		tr.Time = append(tr.Time, t)
		rowLine = append(rowLine, line)
		tr.Current = append(tr.Current, i)
		if hasV {
			tr.Voltage = append(tr.Voltage, v)
		}
	}
	if len(tr.Time) < 10 {
		return nil, fmt.Errorf("%s:%d: only %d samples after the header (line %d); a trace needs at least 10 rows of %s", name, max(lastLine, headerLine), len(tr.Time), headerLine, strings.Join(expect, ", "))
	}
	if !tr.Uniform() {
		return tr, nil // a variable-step record (a simulation's): no gap check
	}
	med := tr.MedianStep()
	for k := 1; k < len(tr.Time); k++ {
		if s := tr.Time[k] - tr.Time[k-1]; s > 10*med {
			return nil, fmt.Errorf("%s:%d: %s: a gap of %.3g %s in the time base (median step %.3g %s); expected a uniformly sampled record", name, rowLine[k], cTime, s/cTime.Scale, cTime.Unit, med/cTime.Scale, cTime.Unit)
		}
	}
	return tr, nil
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
	// Baseline and noise from the raw samples before energizing: start
	// with the first 10, then extend the window (up to 2 % of the record)
	// while the samples stay within 5 σ of it.
	stats := func(n int) (mean, sd float64) {
		s, s2 := 0.0, 0.0
		for k := 0; k < n; k++ {
			s += tr.Current[k]
			s2 += tr.Current[k] * tr.Current[k]
		}
		mean = s / float64(n)
		return mean, math.Sqrt(math.Max(s2/float64(n)-mean*mean, 0))
	}
	nb := min(10, len(tr.Current))
	ev.Offset, ev.Noise = stats(nb)
	for nb < max(10, len(tr.Current)/50) && math.Abs(tr.Current[nb]-ev.Offset) < 5*math.Max(ev.Noise, 1e-12) {
		nb++
		if nb%10 == 0 {
			ev.Offset, ev.Noise = stats(nb)
		}
	}
	ev.Offset, ev.Noise = stats(nb)
	peakAll := 0.0
	for k := range i {
		i[k] -= ev.Offset
		peakAll = math.Max(peakAll, i[k])
	}
	smNoise := ev.Noise / math.Sqrt(float64(win))
	thr := math.Max(5*smNoise, 0.01*peakAll)
	start := -1
	for k := range i {
		if i[k] > thr {
			start = k
			break
		}
	}
	if start < 0 || peakAll <= 5*smNoise {
		return nil, ErrNoCurrent
	}
	// Back-extrapolate to the baseline with a least-squares line through
	// the raw samples of the early rise (from the threshold to 4 times it):
	// just after switch-on the current rises linearly, di/dt = V/L.
	var sx, sy, sxx, sxy, nn float64
	for k := start; k < len(i) && i[k] < 4*thr; k++ {
		x, y := t[k], tr.Current[min(k, len(tr.Current)-1)]-ev.Offset
		sx, sy, sxx, sxy, nn = sx+x, sy+y, sxx+x*x, sxy+x*y, nn+1
	}
	ev.Energize = t[start]
	ev.EnergizeErr = dt
	if nn >= 3 {
		den := nn*sxx - sx*sx
		slope := (nn*sxy - sx*sy) / den
		icpt := (sy - slope*sx) / nn
		if slope > 0 {
			t0 := -icpt / slope
			if t0 > t[0] && t0 <= t[start] {
				ev.Energize = t0
				// σ of the intercept of a least-squares line (any statistics text)
				sdSlope := ev.Noise * math.Sqrt(nn/den)
				ev.EnergizeErr = math.Max(dt/2, ev.Noise/slope/math.Sqrt(nn)+math.Abs(t0)*sdSlope/slope)
			}
		}
	}
	// The dip: a local maximum followed by a fall of more than the noise
	// and 2 % of the peak, then a rise again.
	dip := math.Max(6*smNoise, 0.02*peakAll)
	kMax := start
	for k := start; k < len(i); k++ {
		if i[k] > i[kMax] {
			kMax = k
		}
		if i[kMax]-i[k] > dip {
			// find the minimum, then require a rise by dip after it
			kMin := k
			for m := k; m < len(i); m++ {
				if i[m] < i[kMin] {
					kMin = m
				}
				if i[m]-i[kMin] > dip {
					ev.HasDip = true
					ev.Peak, ev.PeakI = t[kMax], i[kMax]
					ev.Seat, ev.SeatI = t[kMin], i[kMin]
					// uncertainty: the flat bottom of the dip within the noise
					lo, hi := kMin, kMin
					for lo > kMax && i[lo-1]-i[kMin] < 2*smNoise {
						lo--
					}
					for hi < m && i[hi+1]-i[kMin] < 2*smNoise {
						hi++
					}
					ev.SeatErr = math.Max(dt, float64(hi-lo)*dt/2)
					break
				}
			}
			if ev.HasDip {
				break
			}
			// a fall without a rise: the turn-off
			break
		}
	}
	// Turn-off: the last time the current is within the dip threshold of
	// its late maximum before it falls to the baseline for good.
	end := len(i) - 1
	for end > 0 && i[end] < thr {
		end--
	}
	if end < len(i)-1 {
		ev.DecayEnd = t[end+1]
		ev.DecayEndErr = dt + smNoise/math.Max(math.Abs((i[end]-i[end+1])/dt), 1e-30)
		kOff := end
		for kOff > start && i[kOff-1] >= i[kOff]-smNoise {
			kOff--
		}
		// walk back while the current keeps falling
		for kOff > start && i[kOff-1] > i[kOff] {
			kOff--
		}
		ev.TurnOff = t[kOff]
	}
	return ev, nil
}
