package coilkick

import (
	"fmt"
	"math"

	"coilkick/circuit"
)

// Periodic steady state of a chopped hold.
//
// A PWM or peak-and-hold driver holding a plunger at a stop soon repeats the
// same switching period: the coil current, the bulk capacitor and every
// other state come back to the same values at each turn-on edge, and every
// energy grows by the same amount per period. A one-second hold at 20 kHz
// is 20 000 such periods. Once the run has seen the state repeat, it
// repeats the last period instead of integrating the rest of them: the
// states stay, the energies and charges grow by the whole number of
// periods times their increment per period, the controller's period index
// moves on, and the trace repeats the last period's samples. The
// integration resumes for the last period or two before the next command
// (the hold window's start, the de-energize command), so that every command
// is met by an integrated step.
//
// The test of periodicity is strict against the integration noise, which
// is what consecutive periods differ by once the drive has settled: the
// fed-back states at a turn-on must agree with those one period and
// periodCompareSpan periods earlier within periodTol times the
// integrator's tolerance (a real slow drift would grow over the longer
// span), and so must the energy increments of the last two periods. With
// a thermal model (the resistance drifts), sampled currents requested, or
// the plunger moving, the run integrates every period. The peak phase of a
// peak-and-hold driver repeats too once the plunger has seated, up to the
// phase's end.

// Periodic-steady-state settings.
const (
	// periodTol: the repeat test's tolerance, in units of the integrator's
	// relative tolerance (of each state's scale, or of each energy's
	// increment per period).
	periodTol = 10
	// periodCompareSpan: the turn-on is compared with the one this many
	// periods earlier too.
	periodCompareSpan = 8
	// periodMinSkip: fewer periods than this are integrated.
	periodMinSkip = 4
)

// turnOn is the state at one turn-on edge of a chopped hold.
type turnOn struct {
	t        float64
	y        [nState]float64
	swEst    float64
	traceLen int
	edges    int
}

// periodic holds the turn-on history of the present hold.
type periodic struct {
	ring    [periodCompareSpan + 1]turnOn // the last turn-ons, newest at ring[n%len]
	n       int                           // turn-ons recorded since the history began
	pending bool                          // a turn-on happened at the last event
	skipped int                           // periods repeated in the run
}

// periodicAllowed reports whether the run may repeat periods now.
func (r *run) periodicAllowed() bool {
	return !r.noFastForward && r.energized && r.ctl.Active() && r.ctl.Chops() &&
		r.mmode != mechFree && r.thermal == nil && len(r.sampleTimes) == 0 && r.cmode == circuit.On
}

// fastForwardStop is the last command after t that the repeated periods
// may run up to: the de-energize command, the end, the hold window's
// start, the end of the peak phase, a PWM brake's start and end.
func (r *run) fastForwardStop(t float64) float64 {
	stop := math.Min(r.tOff, r.tEnd)
	for _, c := range [...]float64{r.window.start, r.ctl.PhaseEnd(), r.ctl.BrakeStart(), r.ctl.BrakeEnd()} {
		if c > t {
			stop = math.Min(stop, c)
		}
	}
	return stop
}

// fastForward is called by the integrator after each event; after a
// turn-on edge of a settled chopped hold it repeats whole periods, changing
// y, and returns the new time (t when it repeats nothing).
func (r *run) fastForward(t float64, y []float64) float64 {
	if !r.per.pending {
		return t
	}
	r.per.pending = false
	if !r.periodicAllowed() {
		r.per.n = 0
		return t
	}
	p := &r.per
	cur := &p.ring[p.n%len(p.ring)]
	cur.t = t
	copy(cur.y[:], y)
	cur.swEst = r.swEst
	cur.traceLen = len(r.res.Trace.Time)
	cur.edges = r.window.edges
	p.n++
	if p.n <= periodCompareSpan+1 {
		return t
	}
	prev := &p.ring[(p.n-2)%len(p.ring)]
	prev2 := &p.ring[(p.n-3)%len(p.ring)]
	far := &p.ring[(p.n-1-periodCompareSpan)%len(p.ring)]
	T := cur.t - prev.t
	tol := periodTol * r.tol
	if !(T > 0) || math.Abs((prev.t-prev2.t)-T) > tol*T {
		return t
	}
	for i := 0; i < stateJac; i++ {
		if r.scale[i] < 0 {
			continue
		}
		w := tol * (r.scale[i] + math.Abs(cur.y[i]))
		if math.Abs(cur.y[i]-prev.y[i]) > w || math.Abs(cur.y[i]-far.y[i]) > w {
			return t
		}
	}
	for i := stateJac; i < nState; i++ {
		d1, d0 := cur.y[i]-prev.y[i], prev.y[i]-prev2.y[i]
		if math.Abs(d1-d0) > tol*(math.Abs(d1)+1e-3*math.Max(r.scale[i], 0)) {
			return t
		}
	}
	n := int(math.Floor((r.fastForwardStop(t)-t)/T)) - 2
	if n < periodMinSkip {
		return t
	}
	t2 := t + float64(n)*T
	if r.ctl.Periodic() {
		t2 = r.ctl.Skip(n) // from the period index: no drift
	}
	for i := stateJac; i < nState; i++ {
		y[i] += float64(n) * (cur.y[i] - prev.y[i])
	}
	r.swEst += float64(n) * (cur.swEst - prev.swEst)
	r.window.repeatPeriods(n, cur.edges-prev.edges, T)
	if !r.noTrace {
		r.res.Trace.repeat(prev.traceLen, cur.traceLen, n, T)
	}
	p.skipped += n
	p.n = 0 // a fresh history after the jump
	if p.skipped == n {
		r.note(t, "periodic steady state of the hold (%.4g kHz, the state repeats within %.0g of its scale): periods repeated instead of integrated", 1e-3/T, tol)
	}
	return t2
}

// repeat appends n copies of the samples [from, to), shifted by multiples
// of period (s), after the last sample (fewer when that would pass half of
// MaxTraceRows).
func (tr *Trace) repeat(from, to, n int, period float64) {
	if to <= from {
		return
	}
	// Within MaxTraceRows: every k-th period only (they are identical, the
	// envelope stays).
	every := 1
	if rows := n * (to - from); len(tr.Time)+rows > traceRows/2 {
		every = (rows + traceRows/4 - 1) / (traceRows / 4)
		tr.Thinned++
	}
	cols := tr.columns()
	for k := every; k <= n; k += every {
		shift := float64(k) * period
		for j := from; j < to; j++ {
			tr.Time = append(tr.Time, tr.Time[j]+shift)
			for _, c := range cols {
				*c = append(*c, (*c)[j])
			}
		}
	}
}

// String describes the repeated periods for the solver statistics.
func (p *periodic) String() string {
	if p.skipped == 0 {
		return ""
	}
	return fmt.Sprintf("%d periods repeated", p.skipped)
}
