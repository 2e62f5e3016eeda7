package coilkick

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"coilkick/circuit"
)

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
	// NextE24: for a clamp voltage found, the next E24 value (IEC 60063)
	// at or above it (V), the part to choose; 0 when there is none, or it
	// would reach the switch's breakdown (the Note says so).
	NextE24 float64
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
		x, ok, err := lowestSetting(md, md.Control.PeakCurrent, holds, func(v *Model, i float64) bool {
			v.Control.HoldCurrent = i
			return !(v.Control.Regulation == circuit.Hysteresis && v.Control.Band >= 2*i)
		})
		if err != nil {
			return sol, err
		}
		sol.Value, sol.Found = x, ok
		return sol, nil
	case circuit.PWM:
		sol := Solution{What: fmt.Sprintf("lowest PWM duty with force margin %.2f", margin), Unit: "",
			Note: "duty of the whole energized time (PWM from the start)", Lo: 0, Hi: 1}
		x, ok, err := lowestSetting(md, 1, holds, func(v *Model, d float64) bool {
			v.Control.Duty = d
			return true
		})
		if err != nil {
			return sol, err
		}
		sol.Value, sol.Found = x, ok
		return sol, nil
	}
	sol := Solution{What: fmt.Sprintf("lowest holding current with force margin %.2f", margin), Unit: "A",
		Note: "from the magnet's pull at the seat (no simulation)", Lo: 0, Hi: 10 * md.Drive.Supply.Voltage / md.CoilResistance()}
	x, ok := seatHoldingCurrent(md, margin)
	sol.Value, sol.Found = x, ok
	return sol, nil
}

// lowestSetting bisects for the lowest value x in [0, hi] of a drive
// setting at which the model holds; set writes x into a copy of the model
// and says whether the setting can work at all (false: it fails without a
// simulation). It reports whether the model holds at x, x set.
func lowestSetting(md *Model, hi float64, holds func(*Model) (bool, error), set func(v *Model, x float64) bool) (float64, bool, error) {
	x, err := bisect(0, hi, SolveRel, func(x float64) (bool, error) {
		v := *md
		if !set(&v, x) {
			return false, nil
		}
		return holds(&v)
	})
	if err != nil {
		return 0, false, err
	}
	v := *md
	set(&v, x)
	ok, _ := holds(&v)
	return x, ok, nil
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
	if ok, _ := holds(0); ok {
		return 0, true // a permanent magnet holds it with no current
	}
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
	switch e := E24Values(x, 1e5); {
	case len(e) == 0:
	case e[0] <= top:
		sol.NextE24 = e[0]
		sol.Note = fmt.Sprintf("next E24 value (IEC 60063): %g V", e[0])
	default:
		sol.Note = fmt.Sprintf("the next E24 value (IEC 60063), %g V, is above the highest clamp below the switch breakdown, %.4g V", e[0], top)
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
