package coilkick

import (
	"fmt"
	"math"

	"coilkick/circuit"
)

// recommend finds detection settings (Detection) by a simple rule over
// the points whose plunger seats (the others are listed in Unseated): the
// window runs from the earliest to the latest minimum of their dips, widened by 10 % of the latest and two sample periods; the
// threshold lies halfway between the deepest fall of a blocked run in that
// window plus 3 × NoiseRMS and the shallowest moving dip less 3 × NoiseRMS
// (common practice, no source). Then it applies the detector to every run.
func (s *Signature) recommend() {
	d := &s.Detection
	d.NoiseAllowance = 3 * s.NoiseRMS
	if !s.movingDips() {
		return
	}
	dt := 1 / s.Sense.SampleRate
	margin := 0.1*d.latest + 2*dt
	d.From, d.To = math.Max(0, d.earliest-margin), math.Min(s.Window, d.latest+margin)
	from, to := int(math.Ceil(d.From/dt-1e-9)), int(math.Floor(d.To/dt+1e-9))
	d.LargestFalse = -1
	for _, p := range s.Points {
		if f := findDip(p.Blocked.Samples, dt, from, to).Depth; f > d.LargestFalse {
			d.LargestFalse, d.LargestFalseAt = f, p.Corner.Label
		}
	}
	lo, hi := d.LargestFalse+d.NoiseAllowance, d.SmallestDip-d.NoiseAllowance
	if !(lo < hi) {
		d.Why = fmt.Sprintf("the shallowest dip (%.4g mA, %s) less 3 × the noise (%.3g mA) is not above the deepest fall of the blocked plunger in the window (%.4g mA, %s) plus the same: the dip cannot be told from a stuck plunger at every point",
			1e3*d.SmallestDip, d.SmallestAt, 1e3*d.NoiseAllowance, 1e3*d.LargestFalse, d.LargestFalseAt)
		return
	}
	d.Found, d.Threshold = true, 0.5*(lo+hi)
	for k := range s.Points {
		p := &s.Points[k]
		p.Moving.DetectTime, p.Moving.Detected = Detect(p.Moving.Samples, dt, d.Threshold, d.From, d.To)
		p.Blocked.DetectTime, p.Blocked.Detected = Detect(p.Blocked.Samples, dt, d.Threshold, d.From, d.To)
		if p.Moving.PulledIn != p.Moving.Detected || p.Blocked.Detected {
			// Only a point that does not seat can be detected wrongly: the
			// rule ensures the rest; kept so that a wrong rule says so.
			d.Found, d.Why = false, fmt.Sprintf("the setting found does not tell the seat from no seat at %s", p.Corner.Label)
		}
	}
}

// movingDips gathers the moving runs' shallowest dip and the earliest and
// latest minimum; false (with Detection.Why) when a point does not pull in
// within the window or shows no dip.
func (s *Signature) movingDips() bool {
	d := &s.Detection
	seated := 0
	for _, p := range s.Points {
		m := p.Moving
		switch {
		case !m.PulledIn:
			d.Unseated = append(d.Unseated, p.Corner.Label)
			continue
		case !(m.Dip.Depth > 0):
			d.Why = fmt.Sprintf("at %s the sensed current never falls: there is no dip to detect", p.Corner.Label)
			return false
		}
		if seated == 0 || m.Dip.Depth < d.SmallestDip {
			d.SmallestDip, d.SmallestAt = m.Dip.Depth, p.Corner.Label
		}
		if seated == 0 || m.Dip.MinTime < d.earliest {
			d.earliest = m.Dip.MinTime
		}
		if seated == 0 || m.Dip.MinTime > d.latest {
			d.latest = m.Dip.MinTime
		}
		seated++
	}
	if seated == 0 {
		d.Why = fmt.Sprintf("the plunger reaches the seat at no point within the %.4g ms window: there is no seat to detect", 1e3*s.Window)
	}
	return seated > 0
}

// checkRequirement records the failures of the scenario's requirement
// (Sense.MinMargin): no detection setting, or a moving point whose margin
// falls short (a margin is not checked when NoiseRMS is 0: no noise).
func (s *Signature) checkRequirement() {
	need := s.Sense.MinMargin
	if need == 0 {
		return
	}
	if !s.Detection.Found {
		s.Failures = append(s.Failures, "no detection setting: "+s.Detection.Why)
	}
	for _, u := range s.Detection.Unseated {
		s.Failures = append(s.Failures, u+": the plunger does not reach the seat")
	}
	if s.NoiseRMS == 0 {
		return
	}
	for _, p := range s.Points {
		if m := p.Moving.Margin; !AtLeast(m, need) {
			s.Failures = append(s.Failures, fmt.Sprintf("%s: margin %.3g below the required %.3g", p.Corner.Label, m, need))
		}
	}
}

// onInterval is one switch-on interval of a chopped drive: its start and
// end (s after the energize command) and the coil current at each (A).
type onInterval struct {
	t0, t1, i0, i1 float64
}

// onIntervals finds the switch-on intervals in the trace (the coil voltage
// is positive while the switch conducts and not while the current
// recirculates or decays), times after tOn; an interval still open at the
// trace's end is left out.
func onIntervals(tr *Trace, tOn float64) []onInterval {
	var out []onInterval
	var cur onInterval
	on := false
	for k, t := range tr.Time {
		now := t >= tOn && tr.CoilVoltage[k] > 0
		switch {
		case now && !on:
			cur = onInterval{t0: t - tOn, i0: tr.Current[k]}
		case !now && on:
			cur.t1, cur.i1 = t-tOn, tr.Current[k]
			out = append(out, cur)
		}
		on = now
	}
	return out
}

// chopFigures averages the switch-on intervals that lie within [from, to]
// (s after energize).
func chopFigures(ivs []onInterval, from, to float64) ChopFigures {
	var f ChopFigures
	first, last := 0.0, 0.0
	for _, iv := range ivs {
		if iv.t0 < from || iv.t1 > to || !(iv.t1 > iv.t0) {
			continue
		}
		if f.Cycles == 0 {
			first = iv.t0
		}
		last = iv.t0
		f.Cycles++
		f.OnTime += iv.t1 - iv.t0
		f.RiseSlope += (iv.i1 - iv.i0) / (iv.t1 - iv.t0)
	}
	if f.Cycles > 0 {
		f.OnTime /= float64(f.Cycles)
		f.RiseSlope /= float64(f.Cycles)
	}
	if f.Cycles >= 2 && last > first {
		f.Frequency = float64(f.Cycles-1) / (last - first)
	}
	return f
}

// chopSignature describes a chopped drive's seat from the nominal free
// run's trace tr and its sensed run m: whether the regulation acts before
// the seat (peak and hold; EndOfStroke then says whether it masks the dip),
// and the chopping cycles
// before and after the seat. The inductance rises at the seat, so the
// current's rise slope over a switch-on interval falls there, (V − R·i)/L
// against (V − R·i − i·(dL/dx)·v)/L before it (Faraday's law, Fitzgerald
// & Kingsley ch. 3).
func chopSignature(md *Model, tr *Trace, m SenseRun) *ChopSignature {
	ivs := onIntervals(tr, md.Timing.EnergizeAt)
	cs := &ChopSignature{}
	if len(ivs) == 0 {
		return cs
	}
	cs.FirstOff = ivs[0].t1
	seat, end := math.Inf(1), math.Inf(1)
	if m.PulledIn {
		seat = m.PullIn
	}
	if phase := md.Control.PhaseTime(); phase > 0 && phase > seat {
		end = phase
	}
	cs.Regulated = md.Control.Mode == circuit.PeakHold && cs.FirstOff < seat
	cs.Before = chopFigures(ivs[1:], cs.FirstOff, seat)
	if m.PulledIn {
		cs.After = chopFigures(ivs, seat, end)
	}
	return cs
}
