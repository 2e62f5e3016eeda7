package coilkick

import (
	"fmt"
	"math"
	"sort"

	"coilkick/circuit"
)

// E24 is the IEC 60063 E24 series of preferred numbers, one decade. It is
// not round(10^(i/24)): 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ.
var E24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
	3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}

// E24Values returns the E24 values (all decades) in [lo, hi].
func E24Values(lo, hi float64) []float64 {
	var out []float64
	for dec := 1e-1; dec <= 1e4; dec *= 10 {
		for _, m := range E24 {
			v := math.Round(m*dec*1e3) / 1e3
			if v >= lo && v <= hi {
				out = append(out, v)
			}
		}
	}
	return out
}

// Clamp-comparison assumptions (common practice, no source).
const (
	ClampDerating    = 0.8 // the switch may see at most this fraction of its voltage rating
	AssumedDiodeDrop = 0.8 // V, forward drop of an added freewheel or bridge diode
	// ClampStressBand: switch voltages within this fraction of the least
	// one count as equal stress when recommending.
	ClampStressBand = 0.1
)

// ClampOption is one suppression choice in a comparison.
type ClampOption struct {
	Name       string // e.g. "diode + 33 V Zener"
	Suppressor circuit.Suppressor
	// Figures of the actuation with this option.
	Release, Drop, Decay           Interval
	PeakSwitchVoltage, ClampEnergy float64 // V, J per operation
	PeakClampCurrent               float64 // A
	ClampPower                     float64 // W at the operating rate (0 when the rate is unknown)
	MeetsRelease                   bool    // the release requirement (true when none is given)
	WithinRating                   bool    // peak switch voltage within the derated switch rating
	Err                            string
}

// ClampComparison compares suppression options for one actuation.
type ClampComparison struct {
	SwitchRating float64 // V, the rating compared against (ratings.switch voltage, else breakdown)
	Rate         float64 // operations per second (0: unknown)
	Options      []ClampOption
	// Recommended is the index of the part with the least switch stress
	// that meets the release requirement and the derated rating (−1: none);
	// reverse drive is compared but not recommended (it needs an H-bridge).
	Recommended int
	// Required part ratings of the recommended option.
	PartVoltage, PartPeakCurrent, PartEnergy, PartPower float64
}

// CompareClamps simulates the model's actuation with each suppression
// option: freewheel diode, diode + Zener over the E24 voltages that keep
// the switch within ClampDerating of its rating, a TVS and a switch clamp at
// the highest such E24 voltage, an RC snubber sized so that the kick
// I0·√(L/C) stays within the derated rating (R = √(L/C), common practice,
// no source), and reverse drive. rate (operations per second, 0 unknown)
// gives the clamp's average power.
func CompareClamps(md *Model, rate float64) (*ClampComparison, error) {
	cmp := &ClampComparison{Rate: rate, Recommended: -1}
	v0 := md.Drive.Supply.Voltage
	rating := md.Limits.SwitchVoltage
	if rating == 0 {
		rating = md.Drive.Switch.BreakdownVoltage
	}
	cmp.SwitchRating = rating
	allow := ClampDerating * rating
	// The turn-off current and the coil's seated inductance size the snubber.
	base, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		return nil, err
	}
	i0 := math.Abs(base.Metrics.CurrentAtTurnOff)
	lSeat := md.Magnet.FluxLinkage(math.Max(i0, 1e-3), md.Plunger.GapMin) / math.Max(i0, 1e-3)

	var opts []ClampOption
	add := func(name string, s circuit.Suppressor) {
		opts = append(opts, ClampOption{Name: name, Suppressor: s})
	}
	add("freewheel diode", circuit.Suppressor{Kind: circuit.Freewheel, Voltage: AssumedDiodeDrop})
	// Zener voltages from 5.1 V up (lower ones have soft knees; common
	// practice, no source).
	zeners := E24Values(5.1, allow-v0-AssumedDiodeDrop)
	for _, vz := range zeners {
		add(fmt.Sprintf("diode + %g V Zener", vz), circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: AssumedDiodeDrop + vz})
	}
	if tvs := E24Values(v0*1.05, allow-v0); len(tvs) > 0 {
		v := tvs[len(tvs)-1]
		add(fmt.Sprintf("%g V TVS across the coil", v), circuit.Suppressor{Kind: circuit.TVS, Voltage: v})
	} else {
		opts = append(opts, ClampOption{Name: "TVS across the coil", Suppressor: circuit.Suppressor{Kind: circuit.TVS},
			Err: fmt.Sprintf("no TVS fits: it must clamp above the %g V supply and keep the switch within %g V", v0, allow)})
	}
	if sc := E24Values(v0*1.05, math.Min(allow, md.Drive.Switch.BreakdownVoltage*0.95)); len(sc) > 0 {
		v := sc[len(sc)-1]
		add(fmt.Sprintf("%g V clamp across the switch", v), circuit.Suppressor{Kind: circuit.SwitchClamp, Voltage: v})
	}
	if i0 > 0 && allow > v0 {
		z := (allow - v0) / i0 // √(L/C) that keeps the kick within the allowance
		c := lSeat / (z * z)
		add(fmt.Sprintf("RC snubber %.3g ohm + %.3g µF", z, c*1e6), circuit.Suppressor{Kind: circuit.Snubber, Resistance: z, Capacitance: c})
	}
	add("reverse drive (H-bridge)", circuit.Suppressor{Kind: circuit.Bridge, Voltage: AssumedDiodeDrop})

	for k := range opts {
		o := &opts[k]
		if o.Err != "" {
			continue
		}
		v := *md
		v.Drive.Suppressor = o.Suppressor
		v.Control.ReversePulse = 0
		if err := v.Drive.Validate(); err != nil {
			o.Err = err.Error()
			continue
		}
		res, err := Simulate(&v, &Options{NoTrace: true})
		if err != nil {
			o.Err = err.Error()
			continue
		}
		m := &res.Metrics
		o.Release, o.Drop, o.Decay = m.Release, m.Drop, m.ClampConduction
		o.PeakSwitchVoltage, o.PeakClampCurrent = m.PeakSwitchVoltage, m.PeakClampCurrent
		o.ClampEnergy = m.ClampEnergy + m.AvalancheEnergy + m.DiodeLoss
		if o.Suppressor.Kind == circuit.Bridge {
			o.PeakClampCurrent = i0
		}
		o.ClampPower = o.ClampEnergy * rate
		o.MeetsRelease = md.Limits.MaxRelease == 0 || (m.Release.Happened && m.Release.Seconds <= md.Limits.MaxRelease)
		o.WithinRating = m.PeakSwitchVoltage <= allow
	}
	cmp.Options = opts
	// Recommend: meets release and rating, least switch voltage; options
	// within ClampStressBand of that least voltage count as equal and the
	// one dissipating the least energy per operation wins (a snubber that
	// shaves a volt off a freewheel diode at many times its energy is not a
	// better choice; common practice, no source).
	idx := make([]int, 0, len(opts))
	least := math.Inf(1)
	for k, o := range opts {
		// Reverse drive changes the topology (an H-bridge): shown for
		// comparison, not recommended as a part for the low-side switch.
		if o.Err == "" && o.MeetsRelease && o.WithinRating && o.Suppressor.Kind != circuit.Bridge {
			idx = append(idx, k)
			least = math.Min(least, o.PeakSwitchVoltage)
		}
	}
	band := least * (1 + ClampStressBand)
	sort.SliceStable(idx, func(a, b int) bool {
		oa, ob := opts[idx[a]], opts[idx[b]]
		ina, inb := oa.PeakSwitchVoltage <= band, ob.PeakSwitchVoltage <= band
		if ina != inb {
			return ina
		}
		if ina {
			return oa.ClampEnergy < ob.ClampEnergy
		}
		return oa.PeakSwitchVoltage < ob.PeakSwitchVoltage
	})
	if len(idx) > 0 {
		r := opts[idx[0]]
		cmp.Recommended = idx[0]
		cmp.PartVoltage = r.Suppressor.Voltage
		cmp.PartPeakCurrent = r.PeakClampCurrent
		cmp.PartEnergy = r.ClampEnergy
		cmp.PartPower = r.ClampPower
	}
	return cmp, nil
}
