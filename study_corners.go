package coilkick

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"coilkick/circuit"
	"coilkick/mech"
)

// Tolerances are the spreads of a design's parameters (fractions, K).
type Tolerances struct {
	Supply         float64 // ± fraction of the supply voltage
	CoilResistance float64 // ± fraction of the coil resistance
	Spring         float64 // ± fraction of spring preload and rate
	Load           float64 // ± fraction of the load (pressure, constant force)
	Ambient        float64 // ± K on the winding temperature
	// HotWinding (K) is the winding temperature of the hot corner, as it
	// stands: it already includes the worst ambient (no tolerance is added
	// to it), and `solve` uses the same temperature. 0: the hot corner is
	// the run's temperature + Ambient.
	HotWinding float64
}

// ColdWinding returns the winding temperature of the cold corner (K): the
// run's temperature less the ambient tolerance.
func (tol Tolerances) ColdWinding(md *Model) float64 { return md.Temperature - tol.Ambient }

// HotCorner returns the winding temperature of the hot corner (K):
// HotWinding when given, else the run's temperature plus the ambient
// tolerance.
func (tol Tolerances) HotCorner(md *Model) float64 {
	if tol.HotWinding > 0 {
		return tol.HotWinding
	}
	return md.Temperature + tol.Ambient
}

// Corner is one combination of parameter extremes.
type Corner struct {
	Supply, Resistance, Spring, Load float64 // signed fractions applied
	Temperature                      float64 // K, winding
	Label                            string
}

// CornerCheck is the worst case of one check over the corners.
type CornerCheck struct {
	Name     string
	Unit     string
	Limit    float64
	Min      bool    // the limit is a minimum
	Worst    float64 // the worst value (meaningless when !Happened)
	Happened bool    // false: at the worst corner the figure did not exist (did not pull in, say)
	Corner   string  // label of the corner that produced the worst value
	// Tied: how many other corners share the worst value (within
	// LimitRelTol, or the figure not happening there either); Corner is the
	// first of them in corner order.
	Tied    int
	Pass    bool     // every corner where the check applies passes
	Failing []string // labels of the failing corners
	// NotApplicable: corners where the check does not apply (release after
	// a drop-out, say).
	NotApplicable int
}

// CornerResult is a worst-case study.
type CornerResult struct {
	Corners []Corner
	Checks  []CornerCheck
	// Monte Carlo yield (fraction of samples passing every check); Samples 0 when not run.
	Samples int
	Seed    uint64
	Yield   float64
	// YieldLow, YieldHigh: the 95 % Wilson score interval of the yield
	// (Wilson, J. Amer. Statist. Assoc. 22, 209–212, 1927).
	YieldLow, YieldHigh float64
}

// FailingCorners returns the number of corners that fail some check.
func (r *CornerResult) FailingCorners() int {
	failing := map[string]bool{}
	for _, ch := range r.Checks {
		for _, c := range ch.Failing {
			failing[c] = true
		}
	}
	return len(failing)
}

// WilsonInterval returns the Wilson score interval of a binomial
// proportion, k successes in n trials, at the normal quantile z (1.96 for
// 95 %): (p + z²/2n ± z·√(p(1−p)/n + z²/4n²)) / (1 + z²/n) (Wilson 1927;
// Newcombe, Statistics in Medicine 17, 857–872, 1998, method 3).
func WilsonInterval(k, n int, z float64) (lo, hi float64) {
	if n <= 0 {
		return 0, 1
	}
	nf := float64(n)
	p := float64(k) / nf
	den := 1 + z*z/nf
	mid := (p + z*z/(2*nf)) / den
	half := z * math.Sqrt(p*(1-p)/nf+z*z/(4*nf*nf)) / den
	return math.Max(0, mid-half), math.Min(1, mid+half)
}

// worse reports whether check value b is worse than the present worst a:
// a figure that did not happen is worse than any that did; otherwise the
// larger value of a maximum (the smaller of a minimum) is worse, values
// within LimitRelTol of each other counting as equal (a tie, kept by the
// earlier corner).
func worse(aHappened bool, a float64, bHappened bool, b float64, min bool) (worse, tie bool) {
	switch {
	case !aHappened && !bHappened:
		return false, true
	case !bHappened:
		return true, false
	case !aHappened:
		return false, false
	}
	tol := LimitRelTol * math.Max(math.Abs(a), math.Abs(b))
	if math.Abs(a-b) <= tol {
		return false, true
	}
	if min {
		return b < a, false
	}
	return b > a, false
}

// scaledLoad multiplies a load by a factor.
type scaledLoad struct {
	mech.Load
	k float64
}

func (s scaledLoad) Force(x float64) float64 { return s.k * s.Load.Force(x) }

// apply returns the model and options of a corner.
func applyCorner(md *Model, c Corner) (*Model, *Options) {
	v := *md
	v.Coil.Resistance *= 1 + c.Resistance
	v.Plunger.Spring.Preload *= 1 + c.Spring
	v.Plunger.Spring.Rate *= 1 + c.Spring
	if v.Plunger.Load != nil {
		v.Plunger.Load = scaledLoad{v.Plunger.Load, 1 + c.Load}
	}
	return &v, &Options{NoTrace: true, SupplyVoltage: md.Drive.Supply.Voltage * (1 + c.Supply), FixedTemperature: c.Temperature}
}

func cornerLabel(c Corner, tol Tolerances) string {
	var parts []string
	pct := func(name string, f, t float64) {
		if t > 0 {
			parts = append(parts, fmt.Sprintf("%s %+.0f %%", name, 100*f))
		}
	}
	pct("supply", c.Supply, tol.Supply)
	pct("R", c.Resistance, tol.CoilResistance)
	pct("spring", c.Spring, tol.Spring)
	pct("load", c.Load, tol.Load)
	parts = append(parts, fmt.Sprintf("winding %.0f degC", c.Temperature-273.15))
	return strings.Join(parts, ", ")
}

// corners lists the full factorial of the toleranced parameters' extremes
// and the cold and hot winding.
func corners(md *Model, tol Tolerances) []Corner {
	ext := func(t float64) []float64 {
		if t > 0 {
			return []float64{-t, t}
		}
		return []float64{0}
	}
	temps := []float64{tol.ColdWinding(md)}
	if hot := tol.HotCorner(md); hot != temps[0] {
		temps = append(temps, hot)
	}
	var out []Corner
	for _, s := range ext(tol.Supply) {
		for _, r := range ext(tol.CoilResistance) {
			for _, k := range ext(tol.Spring) {
				for _, l := range ext(tol.Load) {
					for _, t := range temps {
						c := Corner{Supply: s, Resistance: r, Spring: k, Load: l, Temperature: t}
						c.Label = cornerLabel(c, tol)
						out = append(out, c)
					}
				}
			}
		}
	}
	return out
}

// Corners evaluates every corner of the tolerances and reports, for each
// rating and requirement of the scenario, the worst value and the corner
// that produced it. samples > 0 adds a Monte Carlo yield estimate with
// parameters drawn uniformly within their tolerances (seeded, repeatable).
func Corners(md *Model, tol Tolerances, samples int, seed uint64) (*CornerResult, error) {
	if tol.Supply < 0 || tol.CoilResistance < 0 || tol.Spring < 0 || tol.Load < 0 || tol.Ambient < 0 {
		return nil, errors.New("coilkick: tolerances must not be negative")
	}
	res := &CornerResult{Corners: corners(md, tol), Samples: samples, Seed: seed}
	index := map[string]int{}
	for _, c := range res.Corners {
		v, opt := applyCorner(md, c)
		r, err := Simulate(v, opt)
		if err != nil {
			return nil, fmt.Errorf("corner %s: %w", c.Label, err)
		}
		as := v.Assess(r)
		for _, ch := range as.Checks {
			k, ok := index[ch.Name]
			if !ok {
				k = len(res.Checks)
				index[ch.Name] = k
				res.Checks = append(res.Checks, CornerCheck{Name: ch.Name, Unit: ch.Unit, Limit: ch.Limit, Min: ch.Min, Pass: true})
			}
			res.Checks[k].add(ch, c.Label)
		}
	}
	if samples > 0 {
		rng := rand.New(rand.NewPCG(seed, 0x636f696c6b69636b))
		pass := 0
		u := func(t float64) float64 { return t * (2*rng.Float64() - 1) }
		// The winding temperature is uniform between the cold and hot corners.
		lo, hi := tol.ColdWinding(md), tol.HotCorner(md)
		for n := 0; n < samples; n++ {
			c := Corner{Supply: u(tol.Supply), Resistance: u(tol.CoilResistance), Spring: u(tol.Spring), Load: u(tol.Load),
				Temperature: lo + (hi-lo)*rng.Float64()}
			v, opt := applyCorner(md, c)
			r, err := Simulate(v, opt)
			if err != nil {
				return nil, err
			}
			if as := v.Assess(r); !as.Failed() {
				pass++
			}
		}
		res.Yield = float64(pass) / float64(samples)
		res.YieldLow, res.YieldHigh = WilsonInterval(pass, samples, 1.959963984540054)
	}
	return res, nil
}

// add folds the check of one corner into the worst case.
func (cc *CornerCheck) add(ch Check, label string) {
	if ch.NotApplicable != "" {
		cc.NotApplicable++
		return
	}
	if !ch.Pass {
		cc.Pass = false
		cc.Failing = append(cc.Failing, label)
	}
	if cc.Corner == "" {
		cc.Worst, cc.Happened, cc.Corner = ch.Value, ch.Happened, label
		return
	}
	w, tie := worse(cc.Happened, cc.Worst, ch.Happened, ch.Value, ch.Min)
	switch {
	case w:
		cc.Worst, cc.Happened, cc.Corner, cc.Tied = ch.Value, ch.Happened, label, 0
	case tie:
		cc.Tied++
	}
}

// Solution is a solve-for answer.
type Solution struct {
	What  string  // what was solved for
	Value float64 // SI, in Unit
	Unit  string
	Found bool // false: no value in the searched range works
	// Lo, Hi: the searched range, in Unit.
	Lo, Hi float64
	// AlreadyMet, when not empty: the requirement holds at the end of the
	// range that needs no part or setting (a plain freewheel diode meets
	// the release requirement, say); Value is that end.
	AlreadyMet string
	// Blocked, when not empty: the question has no answer for the scenario
	// as it stands, and why (the plunger drops out during the hold, say).
	Blocked string
	Note    string // the criterion, and a rounding hint
}

// bisect finds the boundary in [lo, hi] between failing (at lo) and
// passing (at hi) to a relative tolerance.
func bisect(lo, hi, rel float64, pass func(float64) (bool, error)) (float64, error) {
	for (hi-lo) > rel*math.Abs(hi) && hi-lo > 1e-15 {
		mid := 0.5 * (lo + hi)
		ok, err := pass(mid)
		if err != nil {
			return 0, err
		}
		if ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi, nil
}

// SolveRel is the relative tolerance of the solve-for bisections.
const SolveRel = 1e-3

// LowestSupply returns the lowest supply voltage that still pulls in with
// the winding at temperature t (K; 0: the model's).
func LowestSupply(md *Model, t float64) (Solution, error) {
	if t == 0 {
		t = md.Temperature
	}
	sol := Solution{What: fmt.Sprintf("lowest supply that pulls in (winding %.0f degC)", t-273.15), Unit: "V",
		Note: "pull-in within the energized time", Lo: 0, Hi: md.Drive.Supply.Voltage}
	pulls := func(v float64) (bool, error) {
		r, err := Simulate(md, &Options{NoTrace: true, FixedTemperature: t, SupplyVoltage: v})
		if err != nil {
			return false, nil // a supply the drive cannot run on does not pull in
		}
		return r.Metrics.PullIn.Happened, nil
	}
	hi := md.Drive.Supply.Voltage
	if ok, _ := pulls(hi); !ok {
		return sol, nil
	}
	v, err := bisect(0, hi, SolveRel, pulls)
	if err != nil {
		return sol, err
	}
	sol.Value, sol.Found = v, true
	return sol, nil
}

// LowestHold returns the lowest hold setting that keeps the plunger
// seated with a force margin of at least margin: the hold current of a
// peak-and-hold drive, the duty of a PWM drive, or for a constant drive
// the current (from the magnet alone) whose pull is margin × the spring
// and load at the seat.
func LowestHold(md *Model, margin float64) (Solution, error) {
	if !(margin > 0) {
		return Solution{}, errors.New("coilkick: the hold margin must be positive")
	}
	holds := func(v *Model) (bool, error) {
		r, err := Simulate(v, &Options{NoTrace: true})
		if err != nil {
			return false, err
		}
		m := &r.Metrics
		return m.PullIn.Happened && !m.DropOut.Happened && m.Hold.Measured && AtLeast(m.Hold.ForceMargin, margin), nil
	}
	switch md.Control.Mode {
	case circuit.PeakHold:
		sol := Solution{What: fmt.Sprintf("lowest hold current with force margin %.2f", margin), Unit: "A",
			Note: "peak-and-hold hold current; margin at the lowest current of the ripple", Lo: 0, Hi: md.Control.PeakCurrent}
		x, err := bisect(0, md.Control.PeakCurrent, SolveRel, func(i float64) (bool, error) {
			v := *md
			v.Control.HoldCurrent = i
			if v.Control.Regulation == circuit.Hysteresis && v.Control.Band >= 2*i {
				return false, nil
			}
			return holds(&v)
		})
		if err != nil {
			return sol, err
		}
		v := *md
		v.Control.HoldCurrent = x
		ok, _ := holds(&v)
		sol.Value, sol.Found = x, ok
		return sol, nil
	case circuit.PWM:
		sol := Solution{What: fmt.Sprintf("lowest PWM duty with force margin %.2f", margin), Unit: "",
			Note: "duty of the whole energized time (PWM from the start)", Lo: 0, Hi: 1}
		x, err := bisect(0, 1, SolveRel, func(d float64) (bool, error) {
			v := *md
			v.Control.Duty = d
			return holds(&v)
		})
		if err != nil {
			return sol, err
		}
		v := *md
		v.Control.Duty = x
		ok, _ := holds(&v)
		sol.Value, sol.Found = x, ok
		return sol, nil
	}
	sol := Solution{What: fmt.Sprintf("lowest holding current with force margin %.2f", margin), Unit: "A",
		Note: "from the magnet's pull at the seat (no simulation)", Lo: 0, Hi: 10 * md.Drive.Supply.Voltage / md.CoilResistance()}
	x, ok := seatHoldingCurrent(md, margin)
	sol.Value, sol.Found = x, ok
	return sol, nil
}

// seatHoldingCurrent returns the coil current whose magnetic pull at the
// seated gap is margin × the spring and load there, from the magnet alone;
// false when even 10 × the rated current (supply over coil resistance)
// does not reach it.
func seatHoldingCurrent(md *Model, margin float64) (float64, bool) {
	p := md.Plunger
	need := p.PassiveForce(p.GapMin, 0) * margin
	if need <= 0 {
		return 0, true
	}
	// Scan up from 1/64 of the rated current in steps of 2^(1/4) to the
	// first current that holds, then bisect below it: the pull need not
	// keep rising far beyond the data (a table's linear continuation can
	// turn it over), so the top of the range is not a safe bracket.
	rated := md.Drive.Supply.Voltage / md.CoilResistance()
	holds := func(i float64) (bool, error) { return md.Magnet.Force(i, p.GapMin) >= need, nil }
	lo := 0.0
	for i := rated / 64; i <= 10*rated*(1+1e-12); i *= math.Pow(2, 0.25) {
		if ok, _ := holds(i); ok {
			x, err := bisect(lo, i, 1e-9, holds)
			return x, err == nil
		}
		lo = i
	}
	return 0, false
}

// LowestClamp returns the lowest clamp voltage of the model's clamp
// (diode + Zener: the Zener voltage; TVS, switch clamp: the clamp
// voltage) that meets the release-time requirement, and notes the next
// E24 value at or above it. When the plunger drops out while energized the
// release does not apply and the answer is Blocked; when the lowest clamp
// the drive allows already meets it (for a diode + Zener, no Zener at all:
// a plain freewheel diode) the answer says so in AlreadyMet.
func LowestClamp(md *Model) (Solution, error) {
	req := md.Limits.MaxRelease
	if req == 0 {
		return Solution{}, errors.New("coilkick: solving for the clamp voltage needs ratings.release time")
	}
	sup := md.Drive.Suppressor
	v0 := md.Drive.Supply.Voltage
	var lo, hi float64
	var set func(v *Model, x float64)
	what, none := "", ""
	switch sup.Kind {
	case circuit.DiodeZener:
		lo, hi = 0, md.Drive.Switch.BreakdownVoltage-v0
		set = func(v *Model, x float64) { v.Drive.Suppressor.Voltage = diodeDropOf(md) + x }
		what, none = "Zener voltage", "no Zener needed: a plain freewheel diode already meets it"
	case circuit.TVS:
		lo, hi = v0, md.Drive.Switch.BreakdownVoltage-v0
		set = func(v *Model, x float64) { v.Drive.Suppressor.Voltage = x }
		what, none = "TVS clamp voltage", "already met at the lowest TVS voltage the drive allows (the supply voltage)"
	case circuit.SwitchClamp:
		lo, hi = v0, md.Drive.Switch.BreakdownVoltage
		set = func(v *Model, x float64) { v.Drive.Suppressor.Voltage = x }
		what, none = "switch clamp voltage", "already met at the lowest switch clamp the drive allows (the supply voltage)"
	default:
		return Solution{}, fmt.Errorf("coilkick: solving for the clamp voltage needs a diode zener, tvs or switch clamp suppression, not %v", sup.Kind)
	}
	top := hi * 0.999 // strictly below the breakdown
	sol := Solution{What: "lowest " + what + " meeting the release requirement", Unit: "V", Lo: lo, Hi: top}
	base, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		return sol, err
	}
	if na := base.Metrics.ReleaseNotApplicable(); na != "" {
		sol.Blocked = "the plunger " + strings.TrimPrefix(na, "not applicable: ") + ", so the release requirement does not apply; make the plunger pull in and stay seated first"
		return sol, nil
	}
	meets := func(x float64) (bool, error) {
		v := *md
		set(&v, x)
		if v.Drive.Validate() != nil {
			return false, nil
		}
		r, err := Simulate(&v, &Options{NoTrace: true})
		if err != nil {
			return false, err
		}
		return r.Metrics.Release.Happened && WithinMax(r.Metrics.Release.Seconds, req), nil
	}
	if ok, err := meets(top); err != nil || !ok {
		sol.Note = "even the highest clamp below the switch breakdown does not meet it"
		return sol, err
	}
	if ok, err := meets(lo); err != nil || ok {
		sol.Value, sol.Found = lo, err == nil
		sol.AlreadyMet = none
		return sol, err
	}
	x, err := bisect(lo, top, SolveRel, meets)
	if err != nil {
		return sol, err
	}
	sol.Value, sol.Found = x, true
	if e := E24Values(x, 1e5); len(e) > 0 {
		sol.Note = fmt.Sprintf("next E24 value (IEC 60063): %g V", e[0])
	}
	return sol, nil
}

// diodeDropOf returns the forward drop of the model's diode + Zener as
// given in the scenario when known, else AssumedDiodeDrop.
func diodeDropOf(md *Model) float64 {
	if md.DiodeDrop > 0 {
		return md.DiodeDrop
	}
	return AssumedDiodeDrop
}
