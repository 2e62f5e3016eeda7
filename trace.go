package coilkick

import (
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
}

// columnRE splits a header cell into a name and a unit: "time (ms)",
// "current [mA]", or snake case as coilkick's run CSV writes it:
// "time_s", "coil_voltage_V", "velocity_m_per_s".
var columnRE = regexp.MustCompile(`^\s*([A-Za-z][A-Za-z _]*?)\s*(?:[\(\[]\s*([^\)\]]*)\s*[\)\]]|_([A-Za-z%µ]+(?:_per_[A-Za-z]+)?))?\s*$`)

// ignoredColumns are the other quantities of coilkick's run CSV; a trace
// may carry them and they are skipped.
var ignoredColumns = map[string]bool{"switch voltage": true, "gap": true, "velocity": true,
	"magnetic force": true, "passive force": true, "winding temperature": true}

// ReadTraceCSV reads a trace from CSV. Lines starting with '#' are
// comments. The first row names the columns with their units: "time (ms)",
// "current [mA]" or "time_s", "current_A", and optionally "voltage (V)"
// or "coil_voltage_V" (the coil voltage); names may be abbreviated t, i,
// v. The other columns of coilkick's own run CSV (switch voltage, gap,
// velocity, forces, winding temperature) are ignored, so that file reads
// as a trace. A row at the same time as the previous one is dropped (the
// first is kept: the state just before an event, as Simulate samples an
// instant that falls on an event) and counted in Repeated. Errors name the
// file and line: a missing or unknown column, a unit of the wrong kind, a
// value that is not a number, time that goes back, and, in a uniformly
// sampled record, gaps in the time base (a step above 10 times the median
// step).
func ReadTraceCSV(r io.Reader, name string) (*MeasuredTrace, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	var rows [][]string
	var lines []int // the file line of each row
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %v", name, err)
		}
		line, _ := cr.FieldPos(0)
		rows, lines = append(rows, rec), append(lines, line)
	}
	if len(rows) == 0 {
		return nil, fmt.Errorf("%s: the trace is empty", name)
	}
	// Errors below name the file line: "scope.csv:12: ...".
	header := rows[0]
	col := map[string]int{}
	scale := map[string]float64{}
	dims := map[string]Dim{"time": Time, "current": Current, "voltage": Voltage}
	for k, h := range header {
		m := columnRE.FindStringSubmatch(h)
		if m == nil {
			return nil, fmt.Errorf("%s:%d: column %d %q: expected a name and a unit, e.g. \"time (ms)\"", name, lines[0], k+1, h)
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
			return nil, fmt.Errorf("%s:%d: column %d %q: unknown quantity; expected time, current or (coil) voltage, or a column of coilkick's run CSV", name, lines[0], k+1, h)
		}
		unit := m[2] + m[3]
		if unit == "" {
			return nil, fmt.Errorf("%s:%d: column %q has no unit; expected %s, e.g. %q", name, lines[0], h, dim.Name(), n+" ("+strings.Fields(dim.Example())[1]+")")
		}
		v, err := ParseQuantity("1 "+unit, dim)
		if err != nil {
			return nil, fmt.Errorf("%s:%d: column %q: %v", name, lines[0], h, err)
		}
		if _, dup := col[n]; dup {
			return nil, fmt.Errorf("%s:%d: two %s columns", name, lines[0], n)
		}
		col[n], scale[n] = k, v
	}
	for _, need := range []string{"time", "current"} {
		if _, ok := col[need]; !ok {
			return nil, fmt.Errorf("%s:%d: no %s column (the header needs time and current, e.g. \"time (ms), current (mA)\")", name, lines[0], need)
		}
	}
	tr := &MeasuredTrace{Source: name}
	_, hasV := col["voltage"]
	var rowLine []int // the file line of each sample
	for li, row := range rows[1:] {
		line := lines[li+1]
		if len(row) != len(header) {
			return nil, fmt.Errorf("%s:%d: %d cells, the header has %d", name, line, len(row), len(header))
		}
		get := func(n string) (float64, error) {
			s := strings.TrimSpace(row[col[n]])
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return 0, fmt.Errorf("%s:%d: %s %q is not a number", name, line, n, s)
			}
			return x * scale[n], nil
		}
		t, err := get("time")
		if err != nil {
			return nil, err
		}
		i, err := get("current")
		if err != nil {
			return nil, err
		}
		v := 0.0
		if hasV {
			if v, err = get("voltage"); err != nil {
				return nil, err
			}
		}
		if k := len(tr.Time); k > 0 && t == tr.Time[k-1] {
			tr.Repeated++
			continue
		}
		if k := len(tr.Time); k > 0 && !(t > tr.Time[k-1]) {
			return nil, fmt.Errorf("%s:%d: time %g s does not increase (previous %g s)", name, line, t, tr.Time[k-1])
		}
		tr.Time = append(tr.Time, t)
		rowLine = append(rowLine, line)
		tr.Current = append(tr.Current, i)
		if hasV {
			tr.Voltage = append(tr.Voltage, v)
		}
	}
	if len(tr.Time) < 10 {
		return nil, fmt.Errorf("%s: only %d samples; a trace needs at least 10", name, len(tr.Time))
	}
	steps := make([]float64, len(tr.Time)-1)
	for k := range steps {
		steps[k] = tr.Time[k+1] - tr.Time[k]
	}
	med := tr.MedianStep()
	if !tr.Uniform() {
		return tr, nil // a variable-step record (a simulation's): no gap check
	}
	for k, s := range steps {
		if s > 10*med {
			return nil, fmt.Errorf("%s:%d: a gap of %.3g s in the time base (median step %.3g s)", name, rowLine[k+1], s, med)
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
	h := window / 2
	i = make([]float64, n)
	for j := range i {
		lo, hi := max(0, j-h), min(n-1, j+h)
		s := 0.0
		for m := lo; m <= hi; m++ {
			s += raw[m]
		}
		i[j] = s / float64(hi-lo+1)
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
