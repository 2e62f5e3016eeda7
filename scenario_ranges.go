package coilkick

import (
	"fmt"
	"math"
	"strings"
)

// Accepted ranges of the scenario's numeric keys. Every value the loader
// reads is checked against its key's range, so that a typo of a few orders
// of magnitude (1e21 Hz, 1e-30 g, a 1e-20 mm shell wall) is an error that
// states the range and its unit, rather than a run that ends in "step size
// underflow" or prints +Inf. The ranges are wide: they hold every solenoid
// drive we know of with room to spare, and stop where the models or the
// numbers stop making sense (common practice, no source). The README's key
// reference lists the same texts (a test keeps them in step).

// valueRange is the accepted range of one scenario value, in SI units.
type valueRange struct {
	dim              Dim
	min, max         float64
	minOpen, maxOpen bool   // the bound itself is excluded
	zeroOK           bool   // 0 is accepted besides [min, max] (0: none, or ideal)
	whole            bool   // a whole number
	text             string // the range for people: "from 1 mg to 100 kg"
	note             string // why, for messages ("" for none)
}

// contains reports whether v is in the range.
func (r valueRange) contains(v float64) bool {
	if r.zeroOK && v == 0 {
		return true
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	if r.whole && v != math.Trunc(v) {
		return false
	}
	lo := v > r.min || (!r.minOpen && v == r.min)
	hi := v < r.max || (!r.maxOpen && v == r.max)
	return lo && hi
}

// expected is the range for a message: "a mass from 1 mg to 100 kg".
func (r valueRange) expected() string {
	s := r.dim.Name()
	if r.whole {
		s = "a whole number"
	}
	if r.zeroOK {
		s += " of"
	}
	s += " " + r.text
	if r.note != "" {
		s += " (" + r.note + ")"
	}
	return s
}

// problem says what is wrong with text (the value as written, v in SI)
// when it is out of range, in the loader's words: "must be greater than 0"
// and "must not be negative" for those cases (the commonest typos), "is
// too small" or "is too large" otherwise; then the range.
func (r valueRange) problem(text string, v float64) string {
	var what string
	switch {
	case r.whole && v != math.Trunc(v):
		what = "must be a whole number"
	case v <= 0 && r.min >= 0 && !r.zeroOK && (r.min > 0 || r.minOpen):
		what = "must be greater than 0"
	case v < 0 && r.min >= 0:
		what = "must not be negative"
	case v < r.min || (r.minOpen && v == r.min):
		what = "is too small"
	default:
		what = "is too large"
	}
	return fmt.Sprintf("%q %s; expected %s", text, what, r.expected())
}

// newRange reads a range written as "A to B" (both included), with "above
// A" or "below B" to exclude a bound and a leading "0 or " to accept 0
// besides. A and B are quantities of dimension dim as ParseQuantity reads
// them. It panics on a malformed spec: the ranges are fixed in the code.
func newRange(dim Dim, spec, note string) valueRange {
	r := valueRange{dim: dim, note: note}
	rest := spec
	if s, ok := strings.CutPrefix(rest, "0 or "); ok {
		r.zeroOK, rest = true, s
	}
	a, b, ok := strings.Cut(rest, " to ")
	if !ok {
		panic("coilkick: range " + spec + ": no \" to \"")
	}
	if s, ok := strings.CutPrefix(a, "above "); ok {
		r.minOpen, a = true, s
	}
	if s, ok := strings.CutPrefix(b, "below "); ok {
		r.maxOpen, b = true, s
	}
	var err error
	if r.min, err = ParseQuantity(a, dim); err != nil {
		panic("coilkick: range " + spec + ": " + err.Error())
	}
	if r.max, err = ParseQuantity(b, dim); err != nil {
		panic("coilkick: range " + spec + ": " + err.Error())
	}
	if !(r.min < r.max) {
		panic("coilkick: range " + spec + ": empty")
	}
	switch {
	case r.minOpen:
		r.text = "above " + a + ", up to " + b
	case r.maxOpen:
		r.text = "from " + a + " to below " + b
	default:
		r.text = "from " + a + " to " + b
	}
	if r.zeroOK {
		r.text = "0, or " + r.text
	}
	return r
}

// wholeRange is newRange for a whole number.
func wholeRange(spec, note string) valueRange {
	r := newRange(Dimensionless, spec, note)
	r.whole = true
	return r
}

// rangeSnubberResistance is suppression.resistance of an RC snubber (the
// resistor itself), which differs from the dynamic resistance of the
// other suppression types.
const rangeSnubberResistance = "suppression.resistance (rc snubber)"

// rangeDutySegment is the range of each item of duty.segments.
const rangeDutySegment = "duty.segments (each)"

// scenarioRanges maps each numeric key (its path) to its range.
var scenarioRanges = map[string]valueRange{
	"supply.voltage":           newRange(Voltage, "100 mV to 1 kV", ""),
	"supply.source resistance": newRange(Resistance, "0 ohm to 1 kohm", ""),
	"supply.bulk capacitance":  newRange(Capacitance, "1 nF to 1 F", ""),
	"supply.low voltage":       newRange(Voltage, "100 mV to 1 kV", ""),

	"coil.resistance":              newRange(Resistance, "1 mohm to 100 kohm", ""),
	"coil.reference temperature":   newRange(Temperature, "-100 degC to 400 degC", ""),
	"coil.temperature":             newRange(Temperature, "-100 degC to 400 degC", ""),
	"coil.temperature coefficient": newRange(PerKelvin, "0 /K to 0.01 /K", "copper 0.00393 /K"),
	"coil.winding capacitance":     newRange(Capacitance, "1 pF to 1 µF", ""),
	"coil.core loss resistance":    newRange(Resistance, "1 ohm to 1 Gohm", ""),
	"coil.turns":                   wholeRange("1 to 1000000", "turns"),

	"coil.build.inner diameter":        newRange(Length, "100 µm to 1 m", ""),
	"coil.build.outer diameter":        newRange(Length, "100 µm to 1 m", ""),
	"coil.build.length":                newRange(Length, "100 µm to 1 m", ""),
	"coil.build.wire gauge":            wholeRange("0 to 46", "AWG, ASTM B258"),
	"coil.build.wire diameter":         newRange(Length, "10 µm to 10 mm", ""),
	"coil.build.overall diameter":      newRange(Length, "10 µm to 10 mm", ""),
	"coil.build.insulation grade":      wholeRange("1 to 3", "enamel grade"),
	"coil.build.turns":                 wholeRange("1 to 1000000", "turns"),
	"coil.build.fill factor":           newRange(Dimensionless, "0.01 to below 0.91", "copper area ÷ winding window; round wire cannot fill more"),
	"magnet.eddy resistance":           newRange(Resistance, "1 mohm to 1 Gohm", ""),
	"magnet.gap law.closed inductance": newRange(Inductance, "1 µH to 1 kH", ""),
	"magnet.gap law.open inductance":   newRange(Inductance, "1 µH to 1 kH", ""),
	"magnet.gap law.pole area":         newRange(Area, "0.01 mm2 to 0.1 m2", ""),

	"magnet.geometry.plunger diameter":     newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.plunger length":       newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.pole diameter":        newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.pole length":          newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.shell outer diameter": newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.shell wall":           newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.shell length":         newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.end plate thickness":  newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.sliding gap":          newRange(Length, "1 µm to 10 mm", ""),
	"magnet.geometry.sliding length":       newRange(Length, "100 µm to 1 m", ""),
	"magnet.geometry.steel saturation":     newRange(FluxDensity, "100 mT to 3 T", "saturation polarization of steel"),
	"magnet.geometry.steel permeability":   newRange(Dimensionless, "above 1 to 1000000", "initial relative permeability of steel"),
	"magnet.geometry.table currents":       wholeRange("4 to 400", "grid size"),
	"magnet.geometry.table gaps":           wholeRange("4 to 400", "grid size"),
	"magnet.geometry.max current":          newRange(Current, "1 mA to 1 kA", ""),

	"plunger.mass":                   newRange(Mass, "1 mg to 100 kg", ""),
	"plunger.rest gap":               newRange(Length, "10 µm to 100 mm", ""),
	"plunger.seated gap":             newRange(Length, "0 mm to 10 mm", ""),
	"plunger.spring preload":         newRange(Force, "0 N to 10 kN", ""),
	"plunger.spring rate":            newRange(ForcePerLength, "0 N/mm to 10 kN/mm", ""),
	"plunger.damping":                newRange(Damping, "0 N*s/m to 100 kN*s/m", ""),
	"plunger.restitution":            newRange(Dimensionless, "0 to 1", ""),
	"plunger.stick speed":            newRange(Velocity, "100 µm/s to 10 m/s", ""),
	"plunger.load.constant force":    newRange(Force, "-10 kN to 10 kN", ""),
	"plunger.load.pressure":          newRange(Pressure, "0 bar to 1000 bar", ""),
	"plunger.load.orifice diameter":  newRange(Length, "10 µm to 100 mm", ""),
	"plunger.load.orifice area":      newRange(Area, "0.0001 mm2 to 10000 mm2", ""),
	"plunger.load.seal travel":       newRange(Length, "1 µm to 100 mm", ""),
	"switch.on resistance":           newRange(Resistance, "0 ohm to 1 kohm", ""),
	"switch.output capacitance":      newRange(Capacitance, "0 or 1 pF to 1 µF", "0: ideal edges"),
	"switch.breakdown voltage":       newRange(Voltage, "1 V to 10 kV", ""),
	"switch.body diode drop":         newRange(Voltage, "100 mV to 5 V", ""),
	"switch.rise time":               newRange(Time, "0 s to 1 ms", ""),
	"switch.fall time":               newRange(Time, "0 s to 1 ms", ""),
	"suppression.forward drop":       newRange(Voltage, "50 mV to 10 V", ""),
	"suppression.zener voltage":      newRange(Voltage, "1 V to 10 kV", ""),
	"suppression.clamp voltage":      newRange(Voltage, "1 V to 10 kV", ""),
	"suppression.resistance":         newRange(Resistance, "0 ohm to 1 Mohm", ""),
	rangeSnubberResistance:           newRange(Resistance, "1 mohm to 1 Mohm", ""),
	"suppression.capacitance":        newRange(Capacitance, "1 pF to 1 mF", ""),
	"suppression.reverse pulse":      newRange(Time, "0 s to 10 s", ""),
	"drive.frequency":                newRange(Frequency, "1 Hz to 10 MHz", ""),
	"drive.duty":                     newRange(Dimensionless, "above 0 to 1", "fraction of the period"),
	"drive.peak current":             newRange(Current, "1 µA to 1 kA", ""),
	"drive.peak time":                newRange(Time, "1 µs to 60 min", ""),
	"drive.hold current":             newRange(Current, "1 µA to 1 kA", ""),
	"drive.band":                     newRange(Current, "1 µA to 1 kA", ""),
	"drive.recirculation drop":       newRange(Voltage, "0 V to 10 V", ""),
	"drive.recirculation resistance": newRange(Resistance, "0 ohm to 1 kohm", ""),
	"drive.boost voltage":            newRange(Voltage, "100 mV to 1 kV", ""),
	"drive.boost time":               newRange(Time, "1 µs to 60 min", ""),
	"timing.energize at":             newRange(Time, "0 s to 60 min", ""),
	"timing.de-energize at":          newRange(Time, "1 µs to 60 min", ""),
	"timing.end":                     newRange(Time, "1 µs to 60 min", ""),
	"thermal.ambient":                newRange(Temperature, "-100 degC to 400 degC", ""),
	"thermal.temperature rise":       newRange(Temperature, "100 mK to 500 K", ""),
	"thermal.at power":               newRange(Power, "1 mW to 100 kW", ""),
	"thermal.time constant":          newRange(Time, "100 ms to 6000 min", ""),
	"thermal.surface area":           newRange(Area, "1 mm2 to 10 m2", ""),
	"thermal.convection coefficient": newRange(HeatTransfer, "0.1 W*m^-2*K^-1 to 10000 W*m^-2*K^-1", ""),
	"thermal.heat capacity":          newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""),
	"thermal.winding heat capacity":  newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""),
	"thermal.winding to housing":     newRange(ThermalResistance, "1 mK/W to 10000 K/W", ""),
	"thermal.housing heat capacity":  newRange(HeatCapacity, "1 mJ/K to 1 MJ/K", ""),
	"thermal.housing to ambient":     newRange(ThermalResistance, "1 mK/W to 10000 K/W", ""),
	"duty.on time":                   newRange(Time, "1 ms to 1440 min", "at most a day"),
	"duty.period":                    newRange(Time, "1 ms to 1440 min", "at most a day"),
	rangeDutySegment:                 newRange(Time, "1 ms to 1440 min", "at most a day"),
	"duty.duration":                  newRange(Time, "0 s to 525600 min", "at most a year"),
	"tolerances.supply":              newRange(Dimensionless, "0 % to below 100 %", ""),
	"tolerances.coil resistance":     newRange(Dimensionless, "0 % to below 100 %", ""),
	"tolerances.spring":              newRange(Dimensionless, "0 % to below 100 %", ""),
	"tolerances.load":                newRange(Dimensionless, "0 % to below 100 %", ""),
	"tolerances.ambient":             newRange(Temperature, "0 K to 100 K", "a spread in K"),
	"tolerances.hot winding":         newRange(Temperature, "-100 degC to 400 degC", ""),
	"ratings.switch voltage":         newRange(Voltage, "1 V to 10 kV", ""),
	"ratings.avalanche energy":       newRange(Energy, "1 µJ to 10 kJ", ""),
	"ratings.clamp energy":           newRange(Energy, "1 µJ to 10 kJ", ""),
	"ratings.clamp current":          newRange(Current, "1 µA to 10 kA", ""),
	"ratings.pull-in time":           newRange(Time, "1 µs to 60 min", ""),
	"ratings.release time":           newRange(Time, "1 µs to 60 min", ""),
	"ratings.drop time":              newRange(Time, "1 µs to 60 min", ""),
	"ratings.hold force margin":      newRange(Dimensionless, "0.01 to 100", ""),
	"solver.tolerance":               newRange(Dimensionless, "1e-12 to 1e-3", "relative tolerance"),
	"solver.max steps":               wholeRange("1 to 100000000", "attempted steps"),
}
