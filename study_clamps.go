package coilkick

import (
	"fmt"
	"math"

	"coilkick/circuit"
)

// E24 is the IEC 60063 E24 series of preferred numbers, one decade. It is
// not round(10^(i/24)): 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ.
var E24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
	3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}

// E24Values returns the E24 values (all decades) in [lo, hi].
func E24Values(lo, hi float64) []float64 { return ESeriesValues("E24", lo, hi) }

// Clamp-comparison assumptions (common practice, no source).
const (
	ClampDerating    = 0.8 // the switch may see at most this fraction of its voltage rating
	AssumedDiodeDrop = 0.8 // V, forward drop of an added freewheel or bridge diode
	// ClampStressBand: switch voltages within this fraction of the least
	// one count as equal stress when recommending.
	ClampStressBand = 0.1
	// MaxSnubberCapacitance: a snubber capacitor above this is marked
	// impractical and never recommended. It must take the full ring in both
	// polarities, so it is a film or ceramic part; above about 10 µF such
	// parts become bulky and costly (common practice, no source).
	MaxSnubberCapacitance = 10e-6 // F
)

// ClampOption is one suppression choice in a comparison. Energies and
// powers are those of the suppression part itself (the bridge diodes for
// reverse drive).
type ClampOption struct {
	Name       string // e.g. "diode + 33 V Zener"
	Suppressor circuit.Suppressor
	// ZenerVoltage: the nominal Zener voltage of a diode + Zener option
	// (V, the E24 value it was defined with; 0 for other kinds). Its
	// Suppressor.Voltage adds the diode's drop.
	ZenerVoltage float64
	// Figures of the actuation with this option.
	Release, Drop, Decay Interval
	PeakSwitchVoltage    float64 // V
	// ClampEnergy: energy the part absorbs at turn-off, from the
	// de-energize command to the end of its conduction (J per operation;
	// the same meaning as Metrics.ClampEnergy). A part's energy-per-pulse
	// rating is compared with it.
	ClampEnergy float64
	// AvalancheEnergy: the switch's avalanche at turn-off, J (normally 0:
	// every option clamps below the breakdown).
	AvalancheEnergy float64
	// ChopPower: mean power in the part while the drive chops in the hold
	// (W); 0 unless the decay mode sends the off-times through it (fast
	// decay), or for a snubber, which the chopping edges charge and
	// discharge.
	ChopPower float64
	// OperationEnergy: all the part dissipates in one simulated actuation
	// (turn-off pulse plus chopping while energized), J.
	OperationEnergy  float64
	PeakClampCurrent float64 // A
	// ClampPower: average power in the part at the operating pattern,
	// rate × ClampEnergy + relative on-time × ChopPower (W); 0 when the
	// pattern is unknown.
	ClampPower   float64
	MeetsRelease bool // the release requirement (true when none is given)
	WithinRating bool // peak switch voltage within the derated switch rating (LimitRelTol rule)
	// DropOut, when not empty, says that the plunger drops out while
	// energized with this option (release is then not applicable).
	DropOut string
	// Impractical, when not empty, says why the part is not a practical
	// choice (a snubber capacitor above MaxSnubberCapacitance).
	Impractical string
	// NoFit, when not empty, is a finding rather than an error: no part of
	// this kind fits the drive, and why ("no TVS fits: ... because ...");
	// the option is not simulated.
	NoFit string
	Err   string // the option could not be simulated
}

// candidate reports whether an option may be recommended.
func (o ClampOption) candidate() bool {
	return o.Err == "" && o.NoFit == "" && o.DropOut == "" && o.Impractical == "" && o.MeetsRelease && o.WithinRating &&
		o.Suppressor.Kind != circuit.Bridge
}

// ClampComparison compares suppression options for one actuation.
type ClampComparison struct {
	SwitchRating float64 // V, the rating compared against (ratings.switch voltage, else breakdown)
	// Rate: operations per second of the operating pattern (0: unknown);
	// OnFraction: its relative on-time.
	Rate, OnFraction float64
	Options          []ClampOption
	// Recommended is the index of the recommended part (−1: none): see
	// RecommendClamp. Reverse drive is compared but not recommended (it
	// needs an H-bridge).
	Recommended int
	// Required part ratings of the recommended option: voltage (V), peak
	// current (A), energy per turn-off pulse (J), average power at the
	// operating pattern (W, 0 when unknown) and while held chopping (W).
	PartVoltage, PartPeakCurrent, PartEnergy, PartPower, PartChopPower float64
	// DropOut, when not empty: the scenario's plunger drops out while
	// energized whatever the clamp; fix the hold first.
	DropOut string
}

// Operations returns the number of energizations per cycle of the pattern
// (off-to-on transitions, the cycle taken as repeating).
func (d DutyPattern) Operations() int {
	segs := d.cycle()
	n := 0
	for k, s := range segs {
		prev := segs[(k+len(segs)-1)%len(segs)]
		if s.On && s.Duration > 0 && (!prev.On || len(segs) == 1) {
			n++
		}
	}
	return n
}

// CompareClamps simulates the model's actuation with each suppression
// option: freewheel diode, diode + Zener over the E24 voltages that keep
// the switch within ClampDerating of its rating, a TVS and a switch clamp at
// the highest such E24 voltage, an RC snubber sized so that the kick
// I0·√(L/C) stays within the derated rating (R = √(L/C), common practice,
// no source), and reverse drive. With the model's duty pattern the
// average power of each part at that pattern is computed.
func CompareClamps(md *Model) (*ClampComparison, error) {
	cmp := &ClampComparison{Recommended: -1}
	if d := md.Duty; d != nil && d.CycleTime() > 0 {
		cmp.Rate = float64(d.Operations()) / d.CycleTime()
		cmp.OnFraction = d.RelativeOnTime()
	}
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
	if base.Metrics.DropOut.Happened && !md.Control.FastDecay {
		// With slow decay (or no chopping) the clamp plays no part while
		// energized: every option drops out the same way.
		cmp.DropOut = dropOutText(&base.Metrics)
	}
	i0 := math.Abs(base.Metrics.CurrentAtTurnOff)
	lSeat := chordInductance(md.Magnet, math.Max(i0, 1e-3), md.Plunger.GapMin)

	opts := clampOptions(md, allow, i0, lSeat)
	for k := range opts {
		if opts[k].Err == "" && opts[k].NoFit == "" {
			evaluateClamp(md, &opts[k], cmp, allow, i0)
		}
	}
	cmp.Options = opts
	cmp.Recommended = RecommendClamp(opts)
	if cmp.Recommended >= 0 {
		r := opts[cmp.Recommended]
		cmp.PartVoltage = r.Suppressor.Voltage
		cmp.PartPeakCurrent = r.PeakClampCurrent
		cmp.PartEnergy = r.ClampEnergy
		cmp.PartPower = r.ClampPower
		cmp.PartChopPower = r.ChopPower
	}
	return cmp, nil
}

// clampOptions lists the options to compare (allow: the derated switch
// voltage, V; i0: the turn-off current, A; lSeat: the seated inductance, H).
func clampOptions(md *Model, allow, i0, lSeat float64) []ClampOption {
	v0 := md.Drive.Supply.Voltage
	var opts []ClampOption
	add := func(name string, s circuit.Suppressor) {
		opts = append(opts, ClampOption{Name: name, Suppressor: s})
	}
	add("freewheel diode", circuit.Suppressor{Kind: circuit.Freewheel, Voltage: AssumedDiodeDrop})
	// Zener voltages from 5.1 V up (lower ones have soft knees; common
	// practice, no source).
	zeners := E24Values(5.1, allow-v0-AssumedDiodeDrop)
	for _, vz := range zeners {
		// The conduction voltage rounded to 9 digits: 0.8 + 5.1 is
		// 5.8999999999999995 in binary floating point, the part 5.9 V.
		add(fmt.Sprintf("diode + %g V Zener", vz), circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: roundSignificant(AssumedDiodeDrop+vz, 9)})
		opts[len(opts)-1].ZenerVoltage = vz
	}
	if tvs := E24Values(v0*1.05, allow-v0); len(tvs) > 0 {
		v := tvs[len(tvs)-1]
		add(fmt.Sprintf("%g V TVS across the coil", v), circuit.Suppressor{Kind: circuit.TVS, Voltage: v})
	} else {
		opts = append(opts, ClampOption{Name: "TVS across the coil", Suppressor: circuit.Suppressor{Kind: circuit.TVS},
			NoFit: noTVSFits(v0, allow)})
	}
	if sc := E24Values(v0*1.05, math.Min(allow, md.Drive.Switch.BreakdownVoltage*0.95)); len(sc) > 0 {
		v := sc[len(sc)-1]
		add(fmt.Sprintf("%g V clamp across the switch", v), circuit.Suppressor{Kind: circuit.SwitchClamp, Voltage: v})
	}
	if i0 > 0 && allow > v0 {
		z := (allow - v0) / i0 // √(L/C) that keeps the kick within the allowance
		c := lSeat / (z * z)
		add(fmt.Sprintf("RC snubber %.3g ohm + %.3g µF", z, c*1e6), circuit.Suppressor{Kind: circuit.Snubber, Resistance: z, Capacitance: c})
		if c > MaxSnubberCapacitance {
			opts[len(opts)-1].Impractical = fmt.Sprintf("capacitor %.3g µF above the %.3g µF practical bound (common practice, no source)",
				c*1e6, MaxSnubberCapacitance*1e6)
		}
	}
	add("reverse drive (H-bridge)", circuit.Suppressor{Kind: circuit.Bridge, Voltage: AssumedDiodeDrop})
	return opts
}

// noTVSFits says why no E24 TVS across the coil fits a supply of v0 with
// the switch derated to allow (V): it must stand off the supply (at least
// 5 % above it) while the switch sees the supply plus its clamp voltage.
func noTVSFits(v0, allow float64) string {
	lo, hi := v0*1.05, allow-v0
	if lo > hi {
		return fmt.Sprintf("no TVS fits: it must clamp above the %.4g V supply (at least %.4g V), and the switch would then see the supply plus the clamp, at least %.4g V, above the derated %.4g V",
			v0, lo, v0+lo, allow)
	}
	return fmt.Sprintf("no TVS fits: its clamp voltage must lie between %.4g V (above the %.4g V supply) and %.4g V (the derated %.4g V less the supply), and no E24 value does",
		lo, v0, hi, allow)
}

// evaluateClamp simulates the actuation with option o and fills its figures.
func evaluateClamp(md *Model, o *ClampOption, cmp *ClampComparison, allow, i0 float64) {
	v := *md
	v.Drive.Suppressor = o.Suppressor
	v.Control.ReversePulse = 0
	if err := v.Drive.Validate(); err != nil {
		o.Err = err.Error()
		return
	}
	res, err := Simulate(&v, &Options{NoTrace: true})
	if err != nil {
		o.Err = err.Error()
		return
	}
	m := &res.Metrics
	o.Release, o.Drop, o.Decay = m.Release, m.Drop, m.ClampConduction
	o.PeakSwitchVoltage, o.PeakClampCurrent = m.PeakSwitchVoltage, m.PeakClampCurrent
	o.ClampEnergy, o.AvalancheEnergy = m.ClampEnergy, m.AvalancheEnergy
	o.ChopPower = m.Hold.ClampPower
	o.OperationEnergy = m.SuppressionLoss
	if o.Suppressor.Kind == circuit.Bridge {
		// The bridge diodes are the part: their turn-off share, and the
		// chopping off-times when fast decay sends them through the bridge.
		o.PeakClampCurrent = i0
		o.ClampEnergy = m.OffDiodeLoss
		o.ChopPower = 0
		if md.Control.FastDecay {
			o.ChopPower = m.Hold.DiodePower
		}
		o.OperationEnergy = m.DiodeLoss
	}
	o.ClampPower = cmp.Rate*o.ClampEnergy + cmp.OnFraction*o.ChopPower
	if m.DropOut.Happened && !m.SeatedAtTurnOff {
		o.DropOut = dropOutText(m)
	}
	o.MeetsRelease = o.DropOut == "" && (md.Limits.MaxRelease == 0 || (m.Release.Happened && WithinMax(m.Release.Seconds, md.Limits.MaxRelease)))
	o.WithinRating = WithinMax(m.PeakSwitchVoltage, allow)
}

// dropOutText describes a drop-out while energized.
func dropOutText(m *Metrics) string {
	d := m.DropOut
	return fmt.Sprintf("the plunger drops out %s after energize at %s (pull %.3g N against spring + load %.3g N at the seat)",
		formatDuration(d.Time), formatCurrent(d.Current), d.Pull, d.Passive)
}

// RecommendClamp returns the index of the option to recommend, or −1. The
// candidates meet the release requirement within the derated switch
// rating, keep the plunger seated, are practical parts and not reverse
// drive. Among them the least peak switch voltage wins, except that all
// candidates within ClampStressBand of that least voltage count as equal
// stress and among those the one dissipating the least energy per
// operation (OperationEnergy) wins: a snubber that shaves a volt off a
// freewheel diode at many times its energy is not a better choice (common
// practice, no source). Ties keep the earlier option.
func RecommendClamp(opts []ClampOption) int {
	least := math.Inf(1)
	for _, o := range opts {
		if o.candidate() {
			least = math.Min(least, o.PeakSwitchVoltage)
		}
	}
	band := least * (1 + ClampStressBand)
	best := -1
	for k, o := range opts {
		if !o.candidate() || o.PeakSwitchVoltage > band {
			continue
		}
		if best < 0 || o.OperationEnergy < opts[best].OperationEnergy {
			best = k
		}
	}
	return best
}
