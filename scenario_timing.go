package coilkick

// timingSection is when the drive is commanded on and off (TimingSpec).
var timingSection = &sectionSpec{path: "timing", keys: []*keySpec{
	{name: "energize at", rng: newRange(Time, "0 s to 60 min", ""), need: optional, defText: "0 s", example: "1 ms"},
	{name: "de-energize at", rng: newRange(Time, "1 µs to 60 min", ""), example: "150 ms", doc: "> energize at; not with drive.mode pulses (its latch pulse sets it)"},
	{name: "end", rng: newRange(Time, "1 µs to 60 min", ""), example: "300 ms", doc: "> de-energize at"},
}}

// loadTiming reads the timing section, then checks the drive's frequency
// against the energized time (checkFrequency) and that a brake ends before
// de-energize (checkBrake).
func (l *scenarioLoader) loadTiming(sec *yamlSection) {
	t := &l.s.Timing
	l.read(sec, "energize at", &t.EnergizeAt)
	pulses := l.s.Drive.Mode == DrivePulses
	if !pulses {
		l.read(sec, "de-energize at", &t.DeenergizeAt)
	}
	l.read(sec, "end", &t.End)
	if pulses {
		l.checkPulses(sec)
	}
	l.exceed("timing.de-energize at", t.DeenergizeAt, "timing.energize at", t.EnergizeAt, false)
	l.exceed("timing.end", t.End, "timing.de-energize at", t.DeenergizeAt, false)
	l.checkFrequency()
	l.checkBrake()
}
