package coilkick

import (
	"errors"
	"fmt"
)

// senseSection is the driver's current-sense chain for `coilkick
// signature` (SenseChain).
var senseSection = &sectionSpec{path: "sense", keys: []*keySpec{
	{name: "bandwidth", rng: newRange(Frequency, "0 or 1 Hz to 100 MHz", "the filter's −3 dB frequency"), need: optional,
		defText: "0 Hz, no filter", example: "2 kHz", doc: "−3 dB frequency of the first-order current-sense filter"},
	{name: "sample rate", rng: newRange(Frequency, "10 Hz to 100 MHz", ""), example: "10 kHz",
		doc: "the ADC's sampling rate"},
	{name: "resolution", rng: newRange(Current, "0 or 1 nA to 100 A", "one LSB"), need: optional, defText: "0 A, none",
		example: "0.49 mA", doc: "the ADC's step (one LSB, in A): 12 bits over 2 A is 2 A/4096"},
	{name: "noise", rng: newRange(Current, "0 or 1 nA to 100 A", "rms"), need: optional, defText: "0 A, none",
		example: "3 mA", doc: "rms of white Gaussian noise added to each reading before quantisation"},
	{name: "seed", rng: wholeRange("0 to 4294967295", ""), need: optional, defText: "1", def: 1, example: "1",
		doc: "of the noise (repeatable)"},
	{name: "required margin", rng: newRange(Dimensionless, "1 to 10000", "dip depth ÷ noise"), need: whenGiven,
		example: "5", doc: "requirement: the dip depth ÷ the noise rms at every point, and a detection setting that works"},
}}

// loadSense reads the optional sense section.
func (l *scenarioLoader) loadSense(sec *yamlSection) {
	if sec == nil {
		return
	}
	sc := &SenseChain{}
	l.read(sec, "bandwidth", &sc.Bandwidth)
	l.read(sec, "sample rate", &sc.SampleRate)
	l.read(sec, "resolution", &sc.Resolution)
	l.read(sec, "noise", &sc.Noise)
	var seed float64
	l.read(sec, "seed", &seed)
	sc.Seed = uint64(seed)
	l.read(sec, "required margin", &sc.MinMargin)
	l.s.Sense = sc
}

// ParseSenseValue reads text as the value of the sense section's key
// (for the command line's flags, which override the section): a quantity
// with its unit (ParseQuantity), in the key's range. The error states the
// expected quantity and range.
func ParseSenseValue(key, text string) (float64, error) {
	k := senseSection.key(key)
	v, err := ParseQuantity(text, k.rng.dim)
	if err != nil {
		return 0, fmt.Errorf("%q: %v (range: %s)", text, err, k.rng.text)
	}
	if !k.rng.contains(v) {
		return 0, errors.New(k.rng.problem(text, v))
	}
	return v, nil
}
