package coilkick

import (
	"fmt"
	"strings"

	"gopkg.in/yaml.v3"
)

// dutySection is the operating pattern of a heat study (DutySpec): on time
// every period, or a list of segments repeated.
var dutySection = &sectionSpec{path: "duty", keys: []*keySpec{
	{name: "on time", rng: newRange(Time, "1 ms to 1440 min", "at most a day"), need: needWhere, example: "1.25 s",
		doc: "with period; or segments"},
	{name: "period", rng: newRange(Time, "1 ms to 1440 min", "at most a day"), need: needWhere, example: "5 s",
		doc: "> on time"},
	{name: "duration", rng: newRange(Time, "0 s to 525600 min", "at most a year"), need: optional,
		defText: "until the periodic steady state", example: "480 min", doc: "the study's length"},
	{name: "segments", kind: keyList, rng: newRange(Time, "1 ms to 1440 min", "at most a day"), rangeAs: "each",
		need: needWhere, example: `["1 s on", "2 s off", "500 ms on", "6.5 s off"]`,
		doc: "instead of on time and period: a cycle of segments (each a duration and on or off), repeated"},
}}

// dutyChoice: segments, or on time and period.
var dutyChoice = choice{
	alts:   [][]string{{"segments"}, {"on time", "period"}},
	both:   "give either segments or on time and period, not both",
	bothAt: "duty.segments",
}

// loadDuty reads the optional duty section.
func (l *scenarioLoader) loadDuty(sec *yamlSection) {
	if sec == nil {
		return
	}
	d := &DutySpec{}
	l.s.Duty = d
	switch l.pick(sec, dutyChoice) {
	case 0, bothGiven:
		l.loadSegments(sec, d)
	default:
		l.read(sec, "on time", &d.OnTime)
		l.read(sec, "period", &d.Period)
		l.exceed("duty.period", d.Period, "duty.on time", d.OnTime, false)
	}
	l.read(sec, "duration", &d.Duration)
}

// loadSegments reads duty.segments: a list such as ["2 s on", "3 s off"],
// repeated as the operating cycle.
func (l *scenarioLoader) loadSegments(sec *yamlSection, d *DutySpec) {
	r := sec.spec.key("segments").rng
	n := derefAlias(sec.vals["segments"])
	if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
		l.errAt("duty.segments", nodePos(n), `expected a list of segments, e.g. ["2 s on", "3 s off"]`)
		return
	}
	anyOn, anyOff := false, false
	for k, item := range n.Content {
		item = derefAlias(item)
		at := fmt.Sprintf("duty.segments[%d]", k+1)
		text := strings.TrimSpace(item.Value)
		fields := strings.Fields(text)
		if item.Kind != yaml.ScalarNode || len(fields) < 2 {
			l.errAt(at, nodePos(item), `%q: expected a duration and "on" or "off", e.g. "2 s on"`, text)
			continue
		}
		state := fields[len(fields)-1]
		if state != "on" && state != "off" {
			l.errAt(at, nodePos(item), `%q: expected it to end in "on" or "off"`, text)
			continue
		}
		durText := strings.Join(fields[:len(fields)-1], " ")
		dur, err := ParseQuantity(durText, Time)
		if err != nil {
			l.errAt(at, nodePos(item), "%v", err)
			continue
		}
		if !r.contains(dur) {
			l.errAt(at, nodePos(item), "%s", r.problem(durText, dur))
			continue
		}
		d.Segments = append(d.Segments, DutySegment{On: state == "on", Duration: dur})
		anyOn, anyOff = anyOn || state == "on", anyOff || state == "off"
	}
	if len(d.Segments) == len(n.Content) && (!anyOn || !anyOff) {
		l.errAt("duty.segments", nodePos(n), "the segments need at least one on and one off")
	}
}
