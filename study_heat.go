package coilkick

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"coilkick/magnet"
)

// DutyPattern is an intermittent operation: the coil is energized for
// OnTime at the start of every Period, or, when Segments are given, the
// segments repeat (OnTime and Period are then ignored).
type DutyPattern struct {
	OnTime, Period float64 // s
	Segments       []DutySegment
	// Duration (s) of the study; 0: until the periodic steady state.
	Duration float64
}

// cycle returns the pattern as segments.
func (d DutyPattern) cycle() []DutySegment {
	if len(d.Segments) > 0 {
		return d.Segments
	}
	return []DutySegment{{On: true, Duration: d.OnTime}, {On: false, Duration: d.Period - d.OnTime}}
}

// CycleTime returns the length of one operating cycle (s).
func (d DutyPattern) CycleTime() float64 {
	t := 0.0
	for _, s := range d.cycle() {
		t += s.Duration
	}
	return t
}

// OnTotal returns the energized time per cycle (s).
func (d DutyPattern) OnTotal() float64 {
	t := 0.0
	for _, s := range d.cycle() {
		if s.On {
			t += s.Duration
		}
	}
	return t
}

// RelativeOnTime is the duty as solenoid standards state it (ED %), as a
// fraction: energized time over the cycle time.
func (d DutyPattern) RelativeOnTime() float64 { return d.OnTotal() / d.CycleTime() }

// scaled returns the cycle with every on segment scaled to give relative
// on-time r, the off segments absorbing the difference (same cycle time).
func (d DutyPattern) scaled(r float64) []DutySegment {
	segs := d.cycle()
	T, on := d.CycleTime(), d.OnTotal()
	fOn := r * T / on
	fOff := (T - r*T) / (T - on)
	out := make([]DutySegment, len(segs))
	for k, s := range segs {
		out[k] = s
		if s.On {
			out[k].Duration *= fOn
		} else {
			out[k].Duration *= fOff
		}
	}
	return out
}

// HeatPoint is one cycle of the temperature history.
type HeatPoint struct {
	Cycle        int     // 1 for the first cycle
	Time         float64 // s, at the end of the cycle
	Peak, Valley float64 // K, winding temperature at the end of the on-time and of the cycle
}

// HeatResult is a duty-cycle heating study.
//
// Steady state, one definition for every statement about it: the cycle
// peaks (winding temperature at the end of the on-time) approach the peak
// of the periodic steady state, SteadyPeak, the limit of the peaks as the
// cycles go on. The study is settled from the first cycle after which
// every peak stays within SteadyTol of SteadyPeak; SteadyAfter is the end
// of that cycle. Steady says whether the study (its Duration, or until the
// steady state when Duration is 0) lasts that long. The study steps on
// past a short Duration to find SteadyPeak and SteadyAfter, so a study
// that ends before them can say when it would have settled and where.
type HeatResult struct {
	Pattern DutyPattern
	Ambient float64 // K
	// Winding temperature over the last cycle of the study (K): the
	// periodic steady state when Duration is 0, else the cycle that ends
	// the Duration (within SteadyTol of the steady state when Steady).
	Peak, Valley, Mean float64
	Ripple             float64 // K, Peak − Valley
	// Steady: the study lasts until SteadyAfter (see above).
	Steady bool
	// Cycles in the study: Duration over the cycle time, rounded up, or
	// the cycles stepped until the steady state when Duration is 0.
	Cycles int
	// SteadyPeak (K) is the peak of the periodic steady state, and
	// SteadyAfter (s) the end of the first cycle from which every peak
	// stays within SteadyTol of it; both 0 when no steady state was found
	// (thermal runaway past RunawayTemperature, or not within
	// maxHeatCycles).
	SteadyPeak, SteadyAfter float64
	// History is the peak and valley of every cycle of the study, up to
	// MaxHistory cycles; a longer study keeps every HistoryStride-th cycle
	// (a power of two, the smallest that fits) and always its last cycle.
	History       []HeatPoint
	HistoryStride int
	// HotResistance (ohm) at the peak temperature.
	HotResistance float64
	// Pull-in with the coil at the peak temperature, at the nominal and
	// at the lowest supply in tolerance (LowSupply; not Happened when no
	// low supply is given or it does not pull in).
	HotPullIn, HotPullInLow Interval
	LowSupply               float64 // V
	// LowestPullInSupply (V): the lowest supply that still pulls in with the
	// coil hot (bisection on full simulations, to 0.05 %); 0 when even the
	// nominal supply does not.
	LowestPullInSupply float64
	// Insulation class (IEC 60085) and its limit (K); Limit 0 when none given.
	Class string
	Limit float64
	// HeldOn: held on continuously from ambient, the time to reach the
	// class limit (not Happened: it never does) and the final temperature.
	HeldToLimit       Interval
	HeldSteady        float64 // K, steady winding temperature when held on
	MaxRelativeOnTime float64 // largest OnTime/Period that keeps the peak within the class limit (1 when always)
	Simulations       int     // electrical simulations used
	// Notes on the study, as Assessment's: a caution when the winding gets
	// hot enough to burn (HotSurfaceCaution).
	Notes []Note
}

// Heat study settings.
const (
	// SteadyTol (K): the study is in the periodic steady state once the
	// cycle peaks stay within this of the steady-state peak (HeatResult).
	SteadyTol = 0.01
	// RunawayTemperature (K): a winding beyond this is far past every
	// insulation class; the study stops there (thermal runaway).
	RunawayTemperature = 1200.0
	// MaxHistory: a study of more cycles keeps every 2nd, 4th, … cycle.
	MaxHistory = 100000
	// convergedTol (K): the steady-state peak is taken as found when the
	// peaks move by less than this per cycle and the geometric tail of
	// the remaining approach is below it too (three cycles running).
	convergedTol  = SteadyTol * 1e-2
	heatGrid      = 5.0 // K: the electrical cycle is re-simulated on this temperature grid
	maxHeatCycles = 2e6 // safety bound on the cycles stepped to find the steady state
	// MaxStudyCycles bounds the cycles of a study with a duration; once the
	// periodic steady state is found the rest is not stepped (a study of a
	// year takes as long as one of a day).
	MaxStudyCycles = 1e12
	// steadyLead: cycles stepped at least before a long study may stop at
	// its steady state.
	steadyLead = 3
	dutyTol    = 1e-4 // bisection tolerance on the relative on-time
	supplyTol  = 5e-4 // relative bisection tolerance on the supply voltage
)

// cycleLoss is the electrical cycle at one winding temperature.
type cycleLoss struct {
	temp   float64 // K
	energy float64 // J dissipated in the coil (copper and eddy) over one cycle
	hold   float64 // W, coil loss at the end of the on-time (held on)
}

// heatModel holds the cached electrical cycles of a study.
type heatModel struct {
	md     *Model
	pat    DutyPattern
	onRef  float64 // on-time the cycles were simulated with
	minOff float64 // s, the shortest off segment (the release must settle within it)
	cache  []cycleLoss
	sims   int
	simErr error
}

// loss returns the cycle at temperature t, interpolating between cycles
// simulated on a heatGrid-kelvin grid (simulating the missing ones).
func (h *heatModel) loss(t float64) cycleLoss {
	lo := math.Floor(t/heatGrid) * heatGrid
	a, b := h.at(lo), h.at(lo+heatGrid)
	w := (t - lo) / heatGrid
	return cycleLoss{temp: t, energy: a.energy + w*(b.energy-a.energy), hold: a.hold + w*(b.hold-a.hold)}
}

func (h *heatModel) at(t float64) cycleLoss {
	k := sort.Search(len(h.cache), func(i int) bool { return h.cache[i].temp >= t })
	if k < len(h.cache) && h.cache[k].temp == t {
		return h.cache[k]
	}
	c := h.simulate(t)
	h.cache = append(h.cache, cycleLoss{})
	copy(h.cache[k+1:], h.cache[k:])
	h.cache[k] = c
	return c
}

// simulate runs one electrical cycle with the winding fixed at t: energize
// at 0, de-energize at the on-time, end after the release has settled.
func (h *heatModel) simulate(t float64) cycleLoss {
	h.sims++
	md := h.md
	settle := math.Min(h.minOff, md.Timing.End-md.Timing.DeenergizeAt)
	res, err := Simulate(md, &Options{NoTrace: true, FixedTemperature: t, Energize: 0, Deenergize: h.onRef, End: h.onRef + settle})
	if err != nil {
		h.simErr = err
		return cycleLoss{temp: t}
	}
	m := res.Metrics
	hold := m.Hold.CoilPower
	if !m.Hold.Measured {
		hold = (m.CoilLoss + m.EddyLoss) / h.onRef
	}
	return cycleLoss{temp: t, energy: m.CoilLoss + m.EddyLoss, hold: hold}
}

// energyAt returns the cycle energy at temperature t for on-time on: the
// simulated cycle, lengthened or shortened in its settled hold (the hold
// power times the difference in on-time).
func (h *heatModel) energyAt(t, on float64) float64 {
	c := h.loss(t)
	return math.Max(c.energy+c.hold*(on-h.onRef), 0)
}

// Heat runs the duty-cycle study of the two-time-scale method: the
// electrical cycle is simulated at a few winding temperatures (re-simulated
// as the resistance rises, on a 5 K grid, interpolated between), its loss is
// applied as a constant power over the on-time, and the thermal network is
// stepped cycle by cycle with its exact solution (Thermal.Advance) until the
// periodic steady state or the end of the study.
func Heat(md *Model, pat DutyPattern) (*HeatResult, error) {
	if md.Thermal == nil {
		return nil, errors.New("coilkick: a heat study needs a thermal section in the scenario")
	}
	if len(pat.Segments) == 0 && !(pat.OnTime > 0 && pat.Period > pat.OnTime) {
		return nil, fmt.Errorf("coilkick: duty pattern needs 0 < on time < period, got %g s of %g s", pat.OnTime, pat.Period)
	}
	hm := &heatModel{md: md, pat: pat, minOff: math.Inf(1)}
	hasOn, hasOff := false, false
	for _, sg := range pat.cycle() {
		if !(sg.Duration > 0) {
			return nil, errors.New("coilkick: duty segments must be longer than zero")
		}
		if sg.On {
			hm.onRef, hasOn = math.Max(hm.onRef, sg.Duration), true
		} else {
			hm.minOff, hasOff = math.Min(hm.minOff, sg.Duration), true
		}
	}
	if !hasOn || !hasOff {
		return nil, errors.New("coilkick: a duty cycle needs at least one on and one off segment")
	}
	res := &HeatResult{Pattern: pat, Ambient: md.Ambient, Class: md.InsulationClass, Limit: md.InsulationLimit}

	cr := hm.run(pat.cycle(), pat.Duration, true)
	if hm.simErr != nil {
		return nil, hm.simErr
	}
	peak := cr.peak
	res.Peak, res.Valley, res.Mean, res.Cycles = cr.peak, cr.valley, cr.mean, cr.cycles
	res.History, res.HistoryStride = cr.hist, cr.stride
	res.Ripple = cr.peak - cr.valley
	if cr.found {
		T := pat.CycleTime()
		res.SteadyPeak, res.SteadyAfter = cr.steadyPeak, float64(cr.steadyCycle)*T
		res.Steady = cr.steadyCycle <= cr.cycles
	}
	if peak > HotSurfaceCaution {
		res.Notes = append(res.Notes, Note{Figure: "winding peak in the duty cycle", Level: "caution",
			Text: fmt.Sprintf("the winding reaches %.1f degC in the duty cycle; the coil surface may be hot enough to burn: guard it and label it", peak-273.15)})
	}
	res.HotResistance = md.Coil.ResistanceAt(peak)

	// Held on continuously.
	res.HeldToLimit, res.HeldSteady = hm.heldOn()

	// Largest relative on-time within the class limit.
	if res.Limit > 0 {
		res.MaxRelativeOnTime = hm.maxDuty()
	}

	// Hot-coil checks.
	hot := &Options{NoTrace: true, FixedTemperature: peak}
	r, err := Simulate(md, hot)
	if err != nil {
		return nil, err
	}
	res.HotPullIn = r.Metrics.PullIn
	res.LowSupply = md.LowSupply
	if md.LowSupply > 0 {
		lo := *hot
		lo.SupplyVoltage = md.LowSupply
		r, err := Simulate(md, &lo)
		if err != nil {
			return nil, err
		}
		res.HotPullInLow = r.Metrics.PullIn
	}
	v, err := lowestPullIn(md, peak)
	if err != nil {
		return nil, err
	}
	res.LowestPullInSupply = v
	res.Simulations = hm.sims
	if hm.simErr != nil {
		return nil, hm.simErr
	}
	return res, nil
}

// cycleRun is the outcome of stepping the thermal network.
type cycleRun struct {
	peak, valley, mean float64 // K, last cycle of the study
	cycles             int     // cycles in the study
	found              bool    // the steady-state peak was found
	steadyPeak         float64 // K
	steadyCycle        int     // first cycle from which every peak is within SteadyTol of steadyPeak
	hist               []HeatPoint
	stride             int
}

// addHistory records a cycle; past MaxHistory points it keeps every
// second one of those kept so far and doubles the stride, and reports that
// it did.
func (out *cycleRun) addHistory(p HeatPoint) bool {
	out.hist = append(out.hist, p)
	if len(out.hist) < MaxHistory {
		return false
	}
	out.stride *= 2
	kept := out.hist[:0]
	for _, q := range out.hist {
		if q.Cycle%out.stride == 0 {
			kept = append(kept, q)
		}
	}
	out.hist = kept
	return true
}

// run steps the thermal network cycle by cycle through the segments, for
// duration (0: until the periodic steady state), and on past the duration
// until the steady-state peak is found (HeatResult explains the terms).
// With keep, it records the history of the study's cycles.
func (h *heatModel) run(segs []DutySegment, duration float64, keep bool) cycleRun {
	ta := h.md.Ambient
	T := segmentsTime(segs)
	study := int(maxHeatCycles) // cycles of the study; with no duration, until the steady state
	if duration > 0 {
		// In float first: a duration of 1e18 min overflowed the int.
		study = int(math.Max(math.Min(math.Ceil(duration/T-1e-9), MaxStudyCycles), 1))
	}
	out := cycleRun{stride: 1}
	tw, thh := ta, ta
	var startW, startH float64 // state at the start of the study's last cycle
	powers := make([]float64, len(segs))
	lastPowers := make([]float64, len(segs))
	var st steadyTest
	for c := 1; ; c++ {
		w0, h0 := tw, thh
		var peak float64
		tw, thh, peak = h.cycle(segs, tw, thh, powers)
		if c <= study {
			out.peak, out.valley, out.cycles = peak, tw, c
			startW, startH = w0, h0
			copy(lastPowers, powers)
			if keep && c%out.stride == 0 {
				out.addHistory(HeatPoint{Cycle: c, Time: float64(c) * T, Peak: peak, Valley: tw})
			}
		}
		st.add(peak)
		if h.failed(tw, peak) {
			break
		}
		if duration == 0 && st.found {
			break // the study ends in the steady state
		}
		if st.found && c < study && c > steadyLead {
			// The periodic steady state is reached long before the study
			// ends: every later cycle repeats this one (within
			// convergedTol), so the study's last cycle is this one.
			out.cycles = study
			if keep {
				out.repeatHistory(c, study, T, peak, tw)
			}
			break
		}
		if c >= study && (st.found || c >= int(maxHeatCycles)) {
			break
		}
	}
	if keep {
		out.closeHistory(T)
	}
	if st.found {
		out.found, out.steadyPeak, out.steadyCycle = true, st.peak, st.firstSteady()
	}
	out.mean = meanTemperature(h.md.Thermal, ta, segs, lastPowers, startW, startH) / T
	return out
}

// cycle steps the network through one cycle of segments from winding and
// housing temperatures tw, thh (K), with the coil loss of each on segment
// applied as a constant power (W, written to powers); it returns the
// temperatures at the cycle's end and the winding's peak (K).
func (h *heatModel) cycle(segs []DutySegment, tw, thh float64, powers []float64) (float64, float64, float64) {
	th, ta := h.md.Thermal, h.md.Ambient
	peak := math.Inf(-1)
	for k, sg := range segs {
		p := 0.0
		if sg.On {
			p = h.energyAt(tw, sg.Duration) / sg.Duration
		}
		powers[k] = p
		tw, thh = th.Advance(tw, thh, p, ta, sg.Duration)
		if sg.On {
			peak = math.Max(peak, tw)
		}
	}
	return tw, thh, peak
}

// steadyTest watches the cycle peaks for the periodic steady state: three
// cycles running whose peak moved by less than convergedTol, approaching
// geometrically with a tail (the approach still to come) below it too.
type steadyTest struct {
	peaks []float64 // the peaks until the steady state is found
	calm  int       // cycles running that meet the test
	found bool
	peak  float64 // K, the steady-state peak: the last peak and the tail
}

// add takes the next cycle's peak (K).
func (s *steadyTest) add(peak float64) {
	if s.found {
		return
	}
	s.peaks = append(s.peaks, peak)
	n := len(s.peaks)
	if n <= 2 {
		return
	}
	d, dPrev := s.peaks[n-1]-s.peaks[n-2], s.peaks[n-2]-s.peaks[n-3]
	tail := 0.0 // geometric estimate of the approach still to come
	ok := math.Abs(d) < convergedTol
	if d != 0 {
		q := d / dPrev
		ok = ok && q > 0 && q < 1
		tail = d * q / (1 - q)
		ok = ok && math.Abs(tail) < convergedTol
	}
	if ok {
		s.calm++
	} else {
		s.calm = 0
	}
	if s.calm >= 3 {
		s.found, s.peak = true, peak+tail
	}
}

// firstSteady returns the first cycle (from 1) from which every peak
// lies within SteadyTol of the steady-state peak.
func (s *steadyTest) firstSteady() int {
	k := len(s.peaks)
	for k > 0 && math.Abs(s.peaks[k-1]-s.peak) < SteadyTol {
		k--
	}
	return k + 1
}

// segmentsTime returns the duration of a cycle of segments (s).
func segmentsTime(segs []DutySegment) float64 {
	T := 0.0
	for _, sg := range segs {
		T += sg.Duration
	}
	return T
}

// failed says the stepping must stop: a simulation failed, or the winding
// (at tw, peak: K) ran away.
func (h *heatModel) failed(tw, peak float64) bool {
	return h.simErr != nil || tw > RunawayTemperature || peak > RunawayTemperature
}

// closeHistory ends the history with the study's last cycle (T the cycle
// time, s) unless it is there.
func (out *cycleRun) closeHistory(T float64) {
	if len(out.hist) == 0 || out.hist[len(out.hist)-1].Cycle != out.cycles {
		out.hist = append(out.hist, HeatPoint{Cycle: out.cycles, Time: float64(out.cycles) * T, Peak: out.peak, Valley: out.valley})
	}
}

// repeatHistory continues the history from cycle c to the study's last
// cycle with the repeated steady cycle (peak and valley, K; T the cycle
// time, s).
func (out *cycleRun) repeatHistory(c, study int, T, peak, valley float64) {
	for c2 := (c/out.stride + 1) * out.stride; c2 <= study; c2 += out.stride {
		if out.addHistory(HeatPoint{Cycle: c2, Time: float64(c2) * T, Peak: peak, Valley: valley}) {
			c2 = (c2 / out.stride) * out.stride
		}
	}
}

// meanTemperature returns the time integral of the winding temperature
// (K·s) over one cycle of segments with the given powers (W) from the
// winding and housing temperatures tw, thh (K), by the exact solution on
// 100 sub-intervals per segment (the power is piecewise constant) and the
// trapezoidal rule.
func meanTemperature(th *magnet.Thermal, ta float64, segs []DutySegment, powers []float64, tw, thh float64) float64 {
	const n = 100
	sum := 0.0
	for k, sg := range segs {
		for j := 0; j < n; j++ {
			tw2, th2 := th.Advance(tw, thh, powers[k], ta, sg.Duration/n)
			sum += 0.5 * (tw + tw2) * sg.Duration / n
			tw, thh = tw2, th2
		}
	}
	return sum
}

// heldOn integrates the network from ambient with the coil held on (its
// hold power at the present temperature) until the class limit or the
// steady state.
func (h *heatModel) heldOn() (Interval, float64) {
	th, ta := h.md.Thermal, h.md.Ambient
	slow, fast := th.TimeConstants()
	dt := slow / 200
	if fast > 0 {
		dt = math.Min(dt, fast/200)
	}
	tw, thh := ta, ta
	limit := h.md.InsulationLimit
	var reached Interval
	for k := 0; k < 400000; k++ {
		p := h.loss(tw).hold
		tw2, th2 := th.Advance(tw, thh, p, ta, dt)
		if limit > 0 && !reached.Happened && tw2 >= limit && tw < limit {
			// linear interpolation inside the step
			reached = Interval{true, (float64(k) + (limit-tw)/(tw2-tw)) * dt}
		}
		if math.Abs(tw2-tw) < 1e-7 && math.Abs(th2-thh) < 1e-7 {
			return reached, tw2
		}
		tw, thh = tw2, th2
		if h.simErr != nil || tw > 1200 {
			break // far beyond any insulation class: thermal runaway
		}
	}
	return reached, tw
}

// maxDuty finds the largest relative on-time whose periodic peak stays
// within the class limit, by bisection on the shortcut.
func (h *heatModel) maxDuty() float64 {
	limit := h.md.InsulationLimit
	peakAt := func(d float64) float64 { return h.run(h.pat.scaled(d), 0, false).peak }
	if peakAt(0.999) <= limit {
		return 1
	}
	lo, hi := 0.0, 0.999
	for hi-lo > dutyTol {
		mid := 0.5 * (lo + hi)
		if peakAt(mid) <= limit {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// lowestPullIn finds the lowest supply voltage at which the plunger still
// pulls in with the winding at temperature t, by bisection to supplyTol; a
// supply too low for the drive (below a clamp, say) does not pull in. It
// returns 0 when the nominal supply does not pull in either.
func lowestPullIn(md *Model, t float64) (float64, error) {
	pulls := func(v float64) (bool, error) {
		r, err := Simulate(md, &Options{NoTrace: true, FixedTemperature: t, SupplyVoltage: v})
		if err != nil {
			return false, err
		}
		return r.Metrics.PullIn.Happened, nil
	}
	hi := md.Drive.Supply.Voltage
	ok, err := pulls(hi)
	if err != nil || !ok {
		return 0, err
	}
	return bisect(0, hi, supplyTol, func(v float64) (bool, error) {
		ok, err := pulls(v)
		return err == nil && ok, nil
	})
}
