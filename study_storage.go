package coilkick

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strconv"
	"sync"
)

// eSeries are the IEC 60063 series of preferred numbers used for
// capacitors, one decade each, with the tolerance the standard pairs with
// each series (E6 ±20 %, E12 ±10 %, E24 ±5 %).
var eSeries = map[string]struct {
	values    []float64
	tolerance float64
}{
	"E6":  {[]float64{1.0, 1.5, 2.2, 3.3, 4.7, 6.8}, 0.20},
	"E12": {[]float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}, 0.10},
	"E24": {E24, 0.05},
}

// ESeriesNames lists the series StorageSize accepts.
var ESeriesNames = []string{"E6", "E12", "E24"}

// ESeriesTolerance returns the tolerance IEC 60063 pairs with series
// name, and whether the series is known.
func ESeriesTolerance(name string) (float64, bool) {
	s, ok := eSeries[name]
	return s.tolerance, ok
}

// ESeriesValues returns the values of series name from lo to hi (both
// inclusive, within 1e-9 relative), every decade.
func ESeriesValues(name string, lo, hi float64) []float64 {
	s, ok := eSeries[name]
	if !ok || !(lo > 0) || !(hi >= lo) {
		return nil
	}
	var out []float64
	for d := math.Floor(math.Log10(lo)); d <= math.Ceil(math.Log10(hi)); d++ {
		for _, m := range s.values {
			// Round to 3 significant digits so 4.7e-6 is exactly that.
			v := roundSignificant(m*math.Pow(10, d), 3)
			if v >= lo*(1-1e-9) && v <= hi*(1+1e-9) {
				out = append(out, v)
			}
		}
	}
	return out
}

// Storage capacitance range searched (F): the range of
// supply.storage capacitor.capacitance.
const (
	storageCapMin = 1e-6
	storageCapMax = 10
)

// StorageOptions set a storage sizing study.
type StorageOptions struct {
	Series string // "E6", "E12" or "E24"
	// Tolerance: ± fraction of the capacitance; 0 takes the series' own
	// (ESeriesTolerance).
	Tolerance float64
	// PulseMargin: the recommended pulse is the shortest reliable one
	// times 1 + PulseMargin.
	PulseMargin float64
	Workers     int // parallel runs; 0: all cores
}

// StorageCorner is one corner of a storage sizing study: a supply (the
// battery) and signed fractions of the toleranced parameters.
type StorageCorner struct {
	Supply                                float64 // V
	Resistance, Spring, Load, Capacitance float64 // signed fractions applied
	Temperature                           float64 // K, winding
	Label                                 string
}

// StorageVerdict says whether a candidate passed at every corner, and if
// not, the first failing corner (in corner order) and why.
type StorageVerdict struct {
	Pass   bool
	Corner string
	Reason string
}

// PulseAnswer is the pulse-length part of a storage sizing study (s).
type PulseAnswer struct {
	Given    float64 // the scenario's pulse length
	Shortest float64 // the shortest that works at every corner
	Found    bool
	// Recommended: Shortest × (1 + PulseMargin), capped at Longest.
	Recommended float64
	// Longest (release pulse only): the longest that neither re-latches
	// nor demagnetises at any corner; LongestFound false: none up to
	// LongestSearched.
	Longest         float64
	LongestFound    bool
	LongestSearched float64
	Limit           StorageVerdict // what fails just below Shortest
	LongestLimit    StorageVerdict // what fails just above Longest
	Note            string
}

// StorageSizing is the answer of StorageSize.
type StorageSizing struct {
	Series    string
	Tolerance float64 // ± fraction of the capacitance
	Corners   []StorageCorner
	// Release: the scenario releases with a reverse pulse, so every
	// candidate must latch and release (else latch only).
	Release bool
	// Capacitance (F): the smallest value of the series that passes at
	// every corner with its tolerance; Found false: none in range.
	Capacitance float64
	Found       bool
	Blocked     string // why no capacitance works, when !Found
	// Below (F): the series value one step below Capacitance and what
	// fails there (0 when Capacitance is the range's lowest).
	Below        float64
	BelowVerdict StorageVerdict
	// Threshold (F): the smallest nominal capacitance (any value) that
	// passes at every corner, to SolveRel.
	Threshold    float64
	LatchPulse   PulseAnswer
	ReleasePulse PulseAnswer
	// Given: the scenario's own capacitor and pulses at every corner.
	Given StorageVerdict
	Runs  int // simulations run
}

// Failed reports whether the study found no capacitance or the scenario's
// own design fails at a corner.
func (s *StorageSizing) Failed() bool { return !s.Found || !s.Given.Pass }

// storageProblem is one sizing study in progress.
type storageProblem struct {
	md       *Model
	corners  []StorageCorner
	workers  int
	runs     int
	release  bool
	tOn, end float64
}

// storageCorners lists the full factorial of the battery (low and high),
// coil resistance, spring, load, winding temperature (cold and hot) and
// capacitance extremes. The low battery is supply.low voltage when given,
// else the supply less its tolerance.
func storageCorners(md *Model, capTol float64) []StorageCorner {
	tol := md.Tolerances
	ext := func(t float64) []float64 {
		if t > 0 {
			return []float64{-t, t}
		}
		return []float64{0}
	}
	v := md.Drive.Supply.Voltage
	low := v * (1 - tol.Supply)
	if md.LowSupply > 0 {
		low = md.LowSupply
	}
	supplies := []float64{low}
	if hi := v * (1 + tol.Supply); hi != low {
		supplies = append(supplies, hi)
	}
	temps := []float64{tol.HotCorner(md)}
	if cold := tol.ColdWinding(md); cold != temps[0] {
		temps = append(temps, cold)
	}
	var out []StorageCorner
	for _, s := range supplies {
		for _, t := range temps {
			for _, c := range ext(capTol) {
				for _, r := range ext(tol.CoilResistance) {
					for _, k := range ext(tol.Spring) {
						for _, l := range ext(tol.Load) {
							sc := StorageCorner{Supply: s, Resistance: r, Spring: k, Load: l, Capacitance: c, Temperature: t}
							sc.Label = storageCornerLabel(sc, tol, capTol)
							out = append(out, sc)
						}
					}
				}
			}
		}
	}
	return out
}

func storageCornerLabel(c StorageCorner, tol Tolerances, capTol float64) string {
	s := fmt.Sprintf("supply %.4g V, winding %.0f degC", c.Supply, c.Temperature-273.15)
	pct := func(name string, f, t float64) {
		if t > 0 {
			s += fmt.Sprintf(", %s %+.0f %%", name, 100*f)
		}
	}
	pct("C", c.Capacitance, capTol)
	pct("R", c.Resistance, tol.CoilResistance)
	pct("spring", c.Spring, tol.Spring)
	pct("load", c.Load, tol.Load)
	return s
}

// storageTrial is one candidate: the nominal capacitance (F), the latch
// pulse (s) and the release pulse (s; 0: latch only).
type storageTrial struct {
	capacitance, latch, release float64
}

// judge runs one corner of a trial and says why it fails ("" passes).
func (p *storageProblem) judge(c StorageCorner, tr storageTrial) (string, error) {
	v := *p.md
	st := *p.md.Storage
	st.Capacitance = tr.capacitance * (1 + c.Capacitance)
	v.Storage = &st
	v.Coil.Resistance *= 1 + c.Resistance
	v.Plunger.Spring.Preload *= 1 + c.Spring
	v.Plunger.Spring.Rate *= 1 + c.Spring
	if v.Plunger.Load != nil {
		v.Plunger.Load = scaledLoad{v.Plunger.Load, 1 + c.Load}
	}
	v.Control.ReversePulse = tr.release
	if tr.release == 0 {
		v.Control.ReverseDelay = 0
	}
	r, err := Simulate(&v, &Options{NoTrace: true, SupplyVoltage: c.Supply, FixedTemperature: c.Temperature,
		Energize: p.tOn, Deenergize: p.tOn + tr.latch, End: math.Max(p.end, p.tOn+tr.latch+1e-6)})
	if err != nil {
		return "", err
	}
	return storageFailure(&v, &r.Metrics, tr.release > 0), nil
}

// storageFailure says why a run fails to latch (and, with release, to
// release cleanly); "" when it passes.
func storageFailure(md *Model, m *Metrics, release bool) string {
	switch {
	case !m.PullIn.Happened:
		return "does not pull in"
	case m.DropOut.Happened || !m.SeatedAtTurnOff:
		return "not seated at the end of the latch pulse"
	case !release && md.HasPermanentMagnet() && m.Release.Happened:
		return "does not stay latched after the pulse"
	case !release:
		return ""
	case !m.Release.Happened || !m.Drop.Happened:
		return "the reverse pulse does not release it"
	case m.Relatch.Happened:
		return fmt.Sprintf("re-latches during the reverse pulse (%.3g A)", m.Relatch.Current)
	case m.FinalGap < md.Plunger.GapMax*(1-LimitRelTol):
		return "not back at the rest stop at the end of the run"
	case md.DemagCurrent > 0 && !WithinMax(-m.LowestCurrent, md.DemagCurrent):
		return fmt.Sprintf("reverse current %.3g A passes the demagnetising current %.3g A", m.LowestCurrent, md.DemagCurrent)
	}
	return ""
}

// verdict runs every corner of a trial, in parallel, and returns the first
// failing corner in corner order (all corners are run, so the answer does
// not depend on scheduling).
func (p *storageProblem) verdict(tr storageTrial) (StorageVerdict, error) {
	reasons := make([]string, len(p.corners))
	errs := make([]error, len(p.corners))
	next := make(chan int)
	var wg sync.WaitGroup
	for range min(p.workers, len(p.corners)) {
		wg.Go(func() {
			for k := range next {
				reasons[k], errs[k] = p.judge(p.corners[k], tr)
			}
		})
	}
	for k := range p.corners {
		next <- k
	}
	close(next)
	wg.Wait()
	p.runs += len(p.corners)
	for k, why := range reasons {
		if errs[k] != nil {
			return StorageVerdict{}, fmt.Errorf("corner %s: %w", p.corners[k].Label, errs[k])
		}
		if why != "" {
			return StorageVerdict{Corner: p.corners[k].Label, Reason: why}, nil
		}
	}
	return StorageVerdict{Pass: true}, nil
}

// StorageSize sizes a capacitor-discharge drive: the smallest storage
// capacitance of an IEC 60063 series that, with its tolerance, latches the
// plunger (and releases it with the scenario's reverse pulse, when there
// is one) at every corner of the battery, coil, spring, load, winding
// temperature and capacitance; then, with that capacitor, the shortest
// latch pulse and the shortest and longest release pulse that work at
// every corner.
func StorageSize(md *Model, opt StorageOptions) (*StorageSizing, error) {
	if md.Storage == nil {
		return nil, errors.New("coilkick: the scenario has no supply.storage capacitor to size")
	}
	p, res, err := newStorageProblem(md, opt)
	if err != nil {
		return nil, err
	}
	given := storageTrial{capacitance: md.Storage.Capacitance, latch: md.Timing.DeenergizeAt - md.Timing.EnergizeAt,
		release: md.Control.ReversePulse}
	if err := p.sizeCapacitance(res, given); err != nil {
		return nil, err
	}
	if res.Given, err = p.verdict(given); err != nil {
		return nil, err
	}
	res.LatchPulse.Given, res.ReleasePulse.Given = given.latch, given.release
	if res.Found {
		if err := p.sizePulses(res, given, opt.PulseMargin); err != nil {
			return nil, err
		}
	}
	res.Runs = p.runs
	return res, nil
}

// newStorageProblem checks the options and sets up the corners.
func newStorageProblem(md *Model, opt StorageOptions) (*storageProblem, *StorageSizing, error) {
	capTol, ok := ESeriesTolerance(opt.Series)
	if !ok {
		return nil, nil, fmt.Errorf("coilkick: unknown series %q; expected one of %v", opt.Series, ESeriesNames)
	}
	if opt.Tolerance != 0 {
		if !(opt.Tolerance > 0 && opt.Tolerance < 1) {
			return nil, nil, fmt.Errorf("coilkick: capacitance tolerance %g: expected a fraction above 0 and below 1", opt.Tolerance)
		}
		capTol = opt.Tolerance
	}
	if !(opt.PulseMargin >= 0 && opt.PulseMargin <= 10) {
		return nil, nil, fmt.Errorf("coilkick: pulse margin %g: expected 0 to 10 (a fraction)", opt.PulseMargin)
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	p := &storageProblem{md: md, corners: storageCorners(md, capTol), workers: workers,
		release: md.Control.ReversePulse > 0, tOn: md.Timing.EnergizeAt, end: md.Timing.End}
	res := &StorageSizing{Series: opt.Series, Tolerance: capTol, Corners: p.corners, Release: p.release}
	return p, res, nil
}

// sizeCapacitance finds the smallest series value that passes: latching
// is monotone in the capacitance (more charge), so a bisection over the
// series finds the smallest value that latches; releasing cleanly may
// fail above it too (a stronger reverse pulse re-latches or
// demagnetises), so the values from there up are tried in turn until one
// passes or a value re-latches where the one below only failed to
// release... or the range ends.
func (p *storageProblem) sizeCapacitance(res *StorageSizing, given storageTrial) error {
	values := ESeriesValues(res.Series, storageCapMin, storageCapMax)
	latchOnly := storageTrial{latch: given.latch}
	pass := func(k int, tr storageTrial) (StorageVerdict, error) {
		tr.capacitance = values[k]
		return p.verdict(tr)
	}
	// Smallest value that latches: bisection on the index.
	lo, hi := -1, len(values)-1
	top, err := pass(hi, latchOnly)
	if err != nil {
		return err
	}
	if !top.Pass {
		res.Blocked = fmt.Sprintf("does not latch even with %s at %s: %s", CapacitanceText(values[hi]), top.Corner, top.Reason)
		return nil
	}
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		v, err := pass(mid, latchOnly)
		if err != nil {
			return err
		}
		if v.Pass {
			hi = mid
		} else {
			lo = mid
		}
	}
	k, err := p.firstCycle(values, hi, given, res)
	if err != nil || k < 0 {
		return err
	}
	res.Capacitance, res.Found = values[k], true
	if k > 0 {
		res.Below = values[k-1]
		trial := given
		if !p.release {
			trial = latchOnly
		}
		if res.BelowVerdict, err = pass(k-1, trial); err != nil {
			return err
		}
	}
	return p.threshold(res, values, k, given)
}

// firstCycle returns the index of the first value from k up that also
// releases cleanly (k itself without a reverse pulse); −1 with
// res.Blocked set when none does.
func (p *storageProblem) firstCycle(values []float64, k int, given storageTrial, res *StorageSizing) (int, error) {
	if !p.release {
		return k, nil
	}
	var last StorageVerdict
	for ; k < len(values); k++ {
		tr := given
		tr.capacitance = values[k]
		v, err := p.verdict(tr)
		if err != nil {
			return -1, err
		}
		if v.Pass {
			return k, nil
		}
		last = v
	}
	res.Blocked = fmt.Sprintf("no %s value latches and releases with the %s reverse pulse: at %s it %s; change the reverse pulse (see the pulse answers with a capacitance that latches)",
		res.Series, timeText(given.release), last.Corner, last.Reason)
	return -1, nil
}

// threshold bisects the nominal capacitance between the value below and
// the answer, for the figure that the series value is rounded up from.
func (p *storageProblem) threshold(res *StorageSizing, values []float64, k int, given storageTrial) error {
	trial := given
	if !p.release {
		trial.release = 0
	}
	lo := storageCapMin / 2
	if k > 0 {
		lo = values[k-1]
	}
	var err error
	res.Threshold, err = bisect(lo, values[k], SolveRel, func(c float64) (bool, error) {
		trial.capacitance = c
		v, err := p.verdict(trial)
		return v.Pass, err
	})
	return err
}

// sizePulses finds, with the chosen capacitor, the shortest latch pulse
// and the shortest and longest release pulse that work at every corner.
func (p *storageProblem) sizePulses(res *StorageSizing, given storageTrial, margin float64) error {
	trial := storageTrial{capacitance: res.Capacitance, latch: given.latch}
	lp := &res.LatchPulse
	if err := p.shortest(lp, trial, func(tr *storageTrial, x float64) { tr.latch = x }, given.latch); err != nil {
		return err
	}
	lp.Recommended = math.Min(lp.Shortest*(1+margin), math.Max(given.latch, lp.Shortest))
	if !p.release {
		return nil
	}
	rp := &res.ReleasePulse
	trial.release = given.release
	set := func(tr *storageTrial, x float64) { tr.release = x }
	if err := p.shortest(rp, trial, set, given.release); err != nil {
		return err
	}
	if err := p.longest(rp, trial, set, given.release); err != nil {
		return err
	}
	rp.Recommended = rp.Shortest * (1 + margin)
	if rp.LongestFound && rp.Recommended > rp.Longest {
		rp.Recommended = math.Sqrt(rp.Shortest * rp.Longest)
		rp.Note = "the margin does not fit below the longest pulse: the geometric mean of the two is recommended"
	}
	return nil
}

// shortest bisects a pulse length between 0 (fails) and the given one
// (passes with the chosen capacitor).
func (p *storageProblem) shortest(pa *PulseAnswer, trial storageTrial, set func(*storageTrial, float64), given float64) error {
	x, err := bisect(0, given, SolveRel, func(x float64) (bool, error) {
		tr := trial
		set(&tr, x)
		v, err := p.verdict(tr)
		return v.Pass, err
	})
	if err != nil {
		return err
	}
	pa.Shortest, pa.Found = x, true
	tr := trial
	set(&tr, x*(1-2*SolveRel))
	pa.Limit, err = p.verdict(tr)
	return err
}

// longest looks for the longest release pulse that still passes: the
// pulse is doubled until it fails (at most 64 × the given one, and the
// run's end), then the boundary is bisected.
func (p *storageProblem) longest(pa *PulseAnswer, trial storageTrial, set func(*storageTrial, float64), given float64) error {
	room := p.end - (p.tOn + trial.latch + p.md.Control.ReverseDelay)
	lo, hi := given, 0.0
	for x := 2 * given; x <= 64*given && x <= room; x *= 2 {
		tr := trial
		set(&tr, x)
		v, err := p.verdict(tr)
		if err != nil {
			return err
		}
		if !v.Pass {
			hi = x
			break
		}
		lo = x
	}
	pa.LongestSearched = lo
	if hi == 0 {
		return nil
	}
	// bisect treats its lower end as failing: search on the reversed axis.
	y, err := bisect(-hi, -lo, SolveRel, func(y float64) (bool, error) {
		tr := trial
		set(&tr, -y)
		v, err := p.verdict(tr)
		return v.Pass, err
	})
	if err != nil {
		return err
	}
	pa.Longest, pa.LongestFound = -y, true
	tr := trial
	set(&tr, pa.Longest*(1+2*SolveRel))
	pa.LongestLimit, err = p.verdict(tr)
	return err
}

// CapacitanceText prints a capacitance as capacitors are marked: µF
// below 0.1 F (47000 µF), F from there (4.7 F), 4 significant digits.
func CapacitanceText(c float64) string {
	unit, v := " µF", c*1e6
	if c >= 0.1 {
		unit, v = " F", c
	}
	return strconv.FormatFloat(roundSignificant(v, 4), 'f', -1, 64) + unit
}

// timeText prints a time in ms.
func timeText(t float64) string { return fmt.Sprintf("%.4g ms", t*1e3) }
