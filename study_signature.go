package coilkick

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
)

// The end-of-stroke signature: the coil current as a driver's firmware
// sees it (through its current-sense filter and ADC), the dip that the
// plunger's back-EMF makes before the seat, and detection settings that
// find the seat at every tolerance corner without a false detection on a
// blocked plunger.

// SenseChain is the path through which a driver's firmware reads the coil
// current (SI): a first-order low-pass filter, white Gaussian noise at the
// ADC's input, and an ADC that samples at a rate and rounds to its step.
// No full-scale clipping is modelled.
type SenseChain struct {
	Bandwidth  float64 // Hz, the filter's −3 dB frequency; 0: no filter
	SampleRate float64 // Hz, the ADC's sampling rate
	Resolution float64 // A, the ADC's step (one LSB); 0: no quantisation
	Noise      float64 // A rms, added to each sample before quantisation; 0: none
	Seed       uint64  // of the noise (PCG), so that a study repeats exactly
	// MinMargin is a requirement: every moving point's detectability
	// margin (depth ÷ NoiseRMS) must reach it, and detection settings must
	// exist; 0: none.
	MinMargin float64
}

// subSamples is the number of current samples per ADC period that the
// filter is solved from.
const subSamples = 8

// NoiseRMS returns the noise the detectability margin is taken against
// (A): the stated noise, or the quantisation noise LSB/√12 of a uniform
// quantiser (Bennett, Bell System Technical Journal 27, 1948) when no noise
// is stated; 0 when neither is. fromLSB says which.
func (sc *SenseChain) NoiseRMS() (rms float64, fromLSB bool) {
	if sc.Noise > 0 {
		return sc.Noise, false
	}
	return sc.Resolution / math.Sqrt(12), sc.Resolution > 0
}

// Validate reports a sense chain that cannot be used.
func (sc *SenseChain) Validate() error {
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch {
	case !(sc.SampleRate > 0) || !finite(sc.SampleRate):
		return errors.New("coilkick: the sense chain needs a sample rate > 0 Hz")
	case !(sc.Bandwidth >= 0) || !finite(sc.Bandwidth):
		return errors.New("coilkick: the sense bandwidth must be 0 (no filter) or positive")
	case !(sc.Resolution >= 0) || !finite(sc.Resolution):
		return errors.New("coilkick: the sense resolution must be 0 (none) or positive")
	case !(sc.Noise >= 0) || !finite(sc.Noise):
		return errors.New("coilkick: the sense noise must be 0 (none) or positive")
	case !(sc.MinMargin >= 0) || !finite(sc.MinMargin):
		return errors.New("coilkick: the required margin must be 0 (none) or positive")
	}
	return nil
}

// fineTimes returns the instants (s) the current is taken at: subSamples
// per ADC period from tOn for n ADC periods.
func (sc *SenseChain) fineTimes(tOn float64, n int) []float64 {
	h := 1 / (subSamples * sc.SampleRate)
	ts := make([]float64, subSamples*n+1)
	for j := range ts {
		ts[j] = tOn + float64(j)*h
	}
	return ts
}

// filter passes the current u (A), taken every h seconds, through the
// first-order low-pass of time constant tau = 1/(2π·f−3dB) (s), in place,
// from the output y0 (A) at the first sample. The filter is solved exactly
// for the current taken as linear between its samples (a first-order
// hold): with a = e^(−h/τ),
//
//	y[j+1] = a·y[j] + (1 − a)·u[j] + (u[j+1] − u[j])·(1 − τ·(1 − a)/h),
//
// the solution of τ·y' + y = u over one interval (first-order circuit
// theory; derived here). tau 0: no filter.
func filter(u []float64, h, tau, y0 float64) {
	if tau == 0 || len(u) == 0 {
		return
	}
	oneMinusA := -math.Expm1(-h / tau)
	a := 1 - oneMinusA
	slope := 1 - tau*oneMinusA/h
	y := y0
	for j := 1; j < len(u); j++ {
		next := a*y + oneMinusA*u[j-1] + (u[j]-u[j-1])*slope
		u[j-1] = y
		y = next
	}
	u[len(u)-1] = y
}

// digitize returns every subSamples-th value of the filtered current y
// (A) with Gaussian noise of the chain's rms added and rounded to its
// resolution: the ADC's readings. The noise comes from a PCG generator
// seeded with the chain's seed and stream (one stream per run, so that
// every run of a study has its own repeatable noise).
func (sc *SenseChain) digitize(y []float64, stream uint64) []float64 {
	rng := rand.New(rand.NewPCG(sc.Seed, stream))
	out := make([]float64, 0, len(y)/subSamples+1)
	for j := 0; j < len(y); j += subSamples {
		v := y[j]
		if sc.Noise > 0 {
			v += sc.Noise * rng.NormFloat64()
		}
		if q := sc.Resolution; q > 0 {
			v = q * math.Round(v/q)
		}
		out = append(out, v)
	}
	return out
}

// Sense returns the ADC readings (A) of the current u taken at fineTimes:
// filtered, then sampled with noise and quantisation.
func (sc *SenseChain) Sense(u []float64, stream uint64) []float64 {
	tau := 0.0
	if sc.Bandwidth > 0 {
		tau = 1 / (2 * math.Pi * sc.Bandwidth)
	}
	y := append([]float64(nil), u...)
	if len(y) > 0 {
		filter(y, 1/(subSamples*sc.SampleRate), tau, y[0]) // settled before the energize command
	}
	return sc.digitize(y, stream)
}

// Dip is the largest fall of the sensed current below its running maximum
// (the running maximum is taken from the energize command on). Times in s
// after the energize command, currents in A.
type Dip struct {
	MaxTime, MaxCurrent float64 // the local maximum before the dip
	MinTime, MinCurrent float64 // the minimum after it
	Depth               float64 // MaxCurrent − MinCurrent; 0: the current never falls
}

// findDip returns the deepest fall of the readings s (one every dt
// seconds from the energize command) below their running maximum, looking
// at the readings from index from to index to (inclusive).
func findDip(s []float64, dt float64, from, to int) Dip {
	var d Dip
	if len(s) == 0 {
		return d
	}
	to = min(to, len(s)-1)
	kMax, best, bestMax, bestMin := 0, 0.0, 0, 0
	for k := 1; k <= to; k++ {
		if s[k] > s[kMax] {
			kMax = k
		}
		if k >= from && s[kMax]-s[k] > best {
			best, bestMax, bestMin = s[kMax]-s[k], kMax, k
		}
	}
	return Dip{MaxTime: float64(bestMax) * dt, MaxCurrent: s[bestMax], MinTime: float64(bestMin) * dt,
		MinCurrent: s[bestMin], Depth: best}
}

// Detect applies the detector the recommendation is for: the first
// reading, between from and to seconds after the energize command, that
// lies at least threshold (A) below the running maximum of the readings
// since the energize command. It returns that reading's time (s after
// energize) and whether there was one.
func Detect(s []float64, dt, threshold, from, to float64) (float64, bool) {
	runMax := math.Inf(-1)
	for k, v := range s {
		runMax = math.Max(runMax, v)
		t := float64(k) * dt
		if t > to*(1+1e-12) {
			break
		}
		if t >= from*(1-1e-12) && runMax-v >= threshold {
			return t, true
		}
	}
	return 0, false
}

// SenseRun is one run of the signature study as the firmware sees it.
type SenseRun struct {
	// Samples are the ADC readings (A), one every 1/SampleRate from the
	// energize command.
	Samples  []float64
	PulledIn bool    // the plunger reached the seat within the window
	PullIn   float64 // s from the energize command to the seat (PulledIn)
	Dip      Dip
	// Margin is Dip.Depth ÷ Signature.NoiseRMS (0 when that is 0).
	Margin float64
	// Steps: the integrator's accepted steps of the run.
	Steps int
	// Detected, DetectTime (s after energize): what the recommended
	// settings find (only when Signature.Detection.Found).
	Detected   bool
	DetectTime float64
}

// SignaturePoint is one operating point: the nominal or a corner of the
// tolerances, with the plunger free and blocked at its rest stop.
type SignaturePoint struct {
	Corner          Corner
	Moving, Blocked SenseRun
}

// Detection is the recommended detection setting: a dip of at least
// Threshold (A) below the running maximum, looked for From to To (s after
// the energize command); Found false when no setting separates the seating
// runs from the blocked ones (Why says why).
type Detection struct {
	Found          bool
	Threshold      float64 // A
	From, To       float64 // s after the energize command
	SmallestDip    float64 // A, the shallowest dip of a moving run
	SmallestAt     string  // its point's label
	LargestFalse   float64 // A, the deepest fall of a blocked run in the window
	LargestFalseAt string  // its point's label
	NoiseAllowance float64 // A, kept on each side of the threshold: 3 × NoiseRMS
	Why            string
	// Unseated lists the points whose plunger does not reach the seat in
	// the window: the settings are for the others, and at these the
	// firmware rightly sees no seat (their Moving.Detected says whether the
	// settings detect one all the same).
	Unseated         []string
	earliest, latest float64 // s, the moving runs' minima
}

// ChopFigures describe the chopping cycles of the coil current in a
// stretch of the run, from the simulated (not the sensed) current.
type ChopFigures struct {
	Cycles    int     // switch-on intervals counted
	Frequency float64 // Hz: turn-ons per second over the stretch; 0 with fewer than two
	OnTime    float64 // s, mean switch-on time
	RiseSlope float64 // A/s, mean rise of the current over a switch-on interval ÷ its length
}

// ChopSignature is what a chopped drive leaves of the seat in the current.
type ChopSignature struct {
	// Regulated: the current regulation (peak and hold) switched the coil
	// off before the seat, so it holds the current at its threshold while
	// the plunger moves, as far as the supply can against the back-EMF.
	Regulated bool
	// Masked: regulated, and the nominal dip is not deeper than the
	// blocked plunger's fall by 2 × 3 × NoiseRMS: the regulation hides it.
	Masked bool
	// FirstOff (s after energize): the chopper's first switch-off; 0: none
	// within the window.
	FirstOff float64
	// Before: the cycles between the first switch-off and the seat; After:
	// from the seat to the end of the phase (or of the window).
	Before, After ChopFigures
}

// Signature is the end-of-stroke signature study.
type Signature struct {
	Sense SenseChain
	// Window (s): the readings run from the energize command for this long.
	Window float64
	// NoiseRMS (A) is what the margins are taken against; FromLSB: it is
	// the quantisation noise LSB/√12 (no noise stated).
	NoiseRMS float64
	FromLSB  bool
	// Points[0] is the nominal point, then the corners of the tolerances
	// (none when the scenario has none: NominalOnly).
	Points      []SignaturePoint
	NominalOnly bool
	Detection   Detection
	// Chop is the chopped drive's signature at the nominal point; nil for
	// a drive that does not chop.
	Chop *ChopSignature
	// Failures: the requirement's failures (Sense.MinMargin); empty when it
	// passes or there is none.
	Failures []string
}

// Steps returns the integrator's accepted steps over every run of the
// study (the window's nominal run not counted).
func (s *Signature) Steps() int {
	n := 0
	for _, p := range s.Points {
		n += p.Moving.Steps + p.Blocked.Steps
	}
	return n
}

// Failed reports whether the scenario's requirement failed.
func (s *Signature) Failed() bool { return len(s.Failures) > 0 }

// maxSenseReadings bounds a run's ADC readings (memory and time).
const maxSenseReadings = 50000

// EndOfStroke studies the end-of-stroke signature of the model through
// the sense chain sc at the nominal point and every corner of the model's
// tolerances, with the plunger free and blocked, and recommends detection
// settings. Every point runs at a fixed winding temperature (as Corners),
// on all cores.
func EndOfStroke(md *Model, sc SenseChain) (*Signature, error) {
	if err := sc.Validate(); err != nil {
		return nil, err
	}
	sig := &Signature{Sense: sc}
	sig.NoiseRMS, sig.FromLSB = sc.NoiseRMS()
	if err := sig.setWindow(md); err != nil {
		return nil, err
	}
	points := []Corner{{Label: "nominal", Temperature: md.Temperature}}
	if md.Tolerances == (Tolerances{}) {
		sig.NominalOnly = true
	} else {
		points = append(points, corners(md, md.Tolerances)...)
	}
	sig.Points = make([]SignaturePoint, len(points))
	errs := make([]error, len(points))
	inParallel(len(points), func(k int) {
		var chop *ChopSignature
		sig.Points[k], chop, errs[k] = sig.point(md, points[k], uint64(k), k == 0)
		if k == 0 {
			sig.Chop = chop
		}
	})
	if err := errors.Join(errs...); err != nil {
		return nil, fmt.Errorf("%s: %w", sourceName(md), err)
	}
	sig.recommend()
	sig.checkRequirement()
	if cs, nom := sig.Chop, sig.Points[0]; cs != nil && cs.Regulated {
		cs.Masked = !(nom.Moving.Dip.Depth-nom.Blocked.Dip.Depth > 2*sig.Detection.NoiseAllowance)
	}
	return sig, nil
}

// inParallel calls f(k) for k = 0..n−1 on all cores and waits; a panic in
// f becomes a panic of the caller (where the CLI recovers it).
func inParallel(n int, f func(k int)) {
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	var caught any
	for w := 0; w < min(n, runtime.GOMAXPROCS(0)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() {
				if p := recover(); p != nil {
					mu.Lock()
					caught = p
					mu.Unlock()
					for range jobs { // drain, so that the sender ends
					}
				}
			}()
			for k := range jobs {
				f(k)
			}
		}()
	}
	for k := 0; k < n; k++ {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	if caught != nil {
		panic(caught)
	}
}

// setWindow sets the readings' window: ten times the nominal pull-in
// (a nominal run without readings finds it), within the energized time,
// the peak or boost phase when the plunger seats in it, and
// maxSenseReadings (common practice, no source).
func (s *Signature) setWindow(md *Model) error {
	on := md.Timing.DeenergizeAt - md.Timing.EnergizeAt
	res, err := Simulate(md, &Options{NoTrace: true, FixedTemperature: md.Temperature})
	if err != nil {
		return err
	}
	w := on
	if pi := res.Metrics.PullIn; pi.Happened {
		w = math.Min(on, 10*pi.Seconds)
		if phase := md.Control.PhaseTime(); phase > pi.Seconds {
			// a peak or boost phase: its end is not a seat
			w = math.Min(w, phase)
		}
	}
	w = math.Min(w, maxSenseReadings/s.Sense.SampleRate)
	if n := w * s.Sense.SampleRate; n < 10 {
		return fmt.Errorf("%s: the sense chain's %g Hz gives %.0f readings in the %.4g s window; at least 10 are needed (raise the sample rate)",
			sourceName(md), s.Sense.SampleRate, math.Floor(n), w)
	}
	s.Window = w
	return nil
}

// point runs one operating point, free and blocked; with chop (the
// nominal point) it also returns the chopped drive's signature.
func (s *Signature) point(md *Model, c Corner, k uint64, chop bool) (SignaturePoint, *ChopSignature, error) {
	p := SignaturePoint{Corner: c}
	v, opt := applyCorner(md, c)
	n := int(math.Floor(s.Window * s.Sense.SampleRate))
	opt.SampleTimes = s.Sense.fineTimes(md.Timing.EnergizeAt, n)
	opt.Energize = md.Timing.EnergizeAt
	// The run ends a sub-sample after the last reading, de-energize after it.
	opt.End = opt.SampleTimes[len(opt.SampleTimes)-1] + 1/(subSamples*s.Sense.SampleRate)
	opt.Deenergize = 2 * opt.End
	free := *opt
	free.NoTrace = !(chop && md.Control.Chops())
	moving, res, err := s.senseRun(v, &free, 2*k)
	if err != nil {
		return p, nil, fmt.Errorf("%s: %w", c.Label, err)
	}
	p.Moving = moving
	var cs *ChopSignature
	if !free.NoTrace {
		cs = chopSignature(md, &res.Trace, moving)
	}
	blocked := *opt
	blocked.BlockPlunger = true
	if p.Blocked, _, err = s.senseRun(v, &blocked, 2*k+1); err != nil {
		return p, nil, fmt.Errorf("%s, blocked plunger: %w", c.Label, err)
	}
	return p, cs, nil
}

// senseRun simulates one run and reads it through the sense chain; the
// noise uses the given stream.
func (s *Signature) senseRun(md *Model, opt *Options, stream uint64) (SenseRun, *Result, error) {
	res, err := Simulate(md, opt)
	if err != nil {
		return SenseRun{}, nil, err
	}
	if len(res.Samples) != len(opt.SampleTimes) {
		return SenseRun{}, nil, fmt.Errorf("coilkick: %d of %d current samples recorded", len(res.Samples), len(opt.SampleTimes))
	}
	r := SenseRun{Samples: s.Sense.Sense(res.Samples, stream)}
	r.PulledIn, r.PullIn, r.Steps = res.Metrics.PullIn.Happened, res.Metrics.PullIn.Seconds, res.Stats.Steps
	r.Dip = findDip(r.Samples, 1/s.Sense.SampleRate, 0, len(r.Samples)-1)
	if s.NoiseRMS > 0 {
		r.Margin = r.Dip.Depth / s.NoiseRMS
	}
	return r, res, nil
}
