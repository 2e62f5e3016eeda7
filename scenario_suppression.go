package coilkick

import (
	"fmt"
	"slices"
	"strings"
)

// suppressionTypes are the values of suppression.type.
var suppressionTypes = []string{SuppressNone, SuppressFreewheel, SuppressDiodeZener, SuppressTVS, SuppressSnubber,
	SuppressSwitchClamp, SuppressBridge}

// suppressionSection is the inductive-kick suppression part
// (SuppressionSpec); each key applies to the types it lists (only).
var suppressionSection = &sectionSpec{path: "suppression", keys: []*keySpec{
	{name: "type", kind: keyText, example: SuppressFreewheel, doc: strings.Join(suppressionTypes, " | ")},
	{name: "forward drop", rng: newRange(Voltage, "50 mV to 10 V", ""), example: "0.8 V",
		only: []string{SuppressFreewheel, SuppressDiodeZener, SuppressBridge}, doc: "diode forward drop; reverse drive: each bridge diode's"},
	{name: "zener voltage", rng: newRange(Voltage, "1 V to 10 kV", ""), example: "33 V", only: []string{SuppressDiodeZener}},
	{name: "clamp voltage", rng: newRange(Voltage, "1 V to 10 kV", ""), example: "36 V",
		only: []string{SuppressTVS, SuppressSwitchClamp},
		doc:  "tvs: across the coil, > supply.voltage; switch clamp: switch node to ground, > supply.voltage and < switch.breakdown voltage"},
	{name: "resistance", rng: newRange(Resistance, "0 ohm to 1 Mohm", ""), need: optional, defText: "0 ohm", example: "0.1 ohm",
		only: []string{SuppressFreewheel, SuppressDiodeZener, SuppressTVS, SuppressSnubber, SuppressSwitchClamp, SuppressBridge},
		doc:  "dynamic resistance of the diode, zener or tvs; rc snubber: the resistor, required, with a range of its own"},
	{name: "capacitance", rng: newRange(Capacitance, "1 pF to 1 mF", ""), example: "100 nF", only: []string{SuppressSnubber}},
	{name: "reverse pulse", rng: newRange(Time, "0 s to 10 s", ""), need: optional, defText: "0 s", example: "2 ms",
		only: []string{SuppressBridge},
		doc:  "H-bridge: at turn-off the coil sees −(supply + 2 drops) and returns its energy to the supply; drive it in reverse this long first"},
	{name: "reverse pulse delay", rng: newRange(Time, "0 s to 60 min", ""), need: optional, defText: "0 s", example: "200 ms",
		only: []string{SuppressBridge},
		doc:  "H-bridge: start the reverse pulse this long after turn-off, the bridge diodes returning the coil current meanwhile (a latching magnet holds at zero current, then the pulse releases it)"},
}, variants: []*keySpec{snubberResistance}}

// snubberResistance is suppression.resistance of an RC snubber: the
// resistor itself, required, with a range of its own.
var snubberResistance = &keySpec{name: "resistance", rangeAs: SuppressSnubber, rng: newRange(Resistance, "1 mohm to 1 Mohm", "")}

// loadSuppression reads the suppression section: its type, then the keys
// of that type.
func (l *scenarioLoader) loadSuppression(sec *yamlSection) {
	if sec == nil {
		return
	}
	sp := &l.s.Suppression
	kind, ok := l.scalar(sec, "type", true, "one of: "+strings.Join(suppressionTypes, ", "))
	if !ok {
		return
	}
	if !slices.Contains(suppressionTypes, kind) {
		hint := ""
		if h := suggestKey(kind, suppressionTypes); h != "" {
			hint = fmt.Sprintf(" (did you mean %q?)", h)
		}
		l.errf("suppression.type", "unknown suppression type %q%s; expected one of: %s", kind, hint, strings.Join(suppressionTypes, ", "))
		return
	}
	sp.Kind = kind
	l.refuseOthers(sec, kind, func(applies []string) string {
		list := "only type"
		if len(applies) > 0 {
			list = "type, " + strings.Join(applies, ", ")
		}
		return fmt.Sprintf("does not apply to suppression type %q (its keys: %s)", kind, list)
	})
	dst := map[string]*float64{
		"forward drop": &sp.ForwardDrop, "zener voltage": &sp.ZenerVoltage, "clamp voltage": &sp.ClampVoltage,
		"resistance": &sp.Resistance, "capacitance": &sp.Capacitance, "reverse pulse": &sp.ReversePulse,
		"reverse pulse delay": &sp.ReverseDelay,
	}
	for _, k := range sec.spec.keysFor(kind) {
		l.readSpec(sec, sec.spec.variant(k, kind), dst[k])
	}
	if kind == SuppressTVS || kind == SuppressSwitchClamp {
		l.exceed("suppression.clamp voltage", sp.ClampVoltage, "supply.voltage", l.s.Supply.Voltage, false)
	}
	if kind == SuppressBridge && sp.ReverseDelay > 0 && !(sp.ReversePulse > 0) {
		l.errf("suppression.reverse pulse delay", "a reverse pulse delay needs suppression.reverse pulse (a length above 0 s)")
	}
	if kind == SuppressSwitchClamp {
		l.exceed("switch.breakdown voltage", l.s.Switch.BreakdownVoltage, "suppression.clamp voltage", sp.ClampVoltage, false)
	}
}
