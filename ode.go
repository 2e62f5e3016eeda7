package coilkick

import (
	"errors"
	"fmt"
	"math"
)

// This file is the integrator. It knows nothing of solenoids: it advances
// a piecewise-smooth system y' = f(t, y) whose right-hand side changes at
// events, and it locates those events.
//
// Design (see DEVELOPERS.md): one-step methods with error control and a
// dense output, so that after an event they restart at no cost.
//   - Dormand–Prince 5(4) (J. R. Dormand, P. J. Prince, "A family of embedded
//     Runge–Kutta formulae", J. Comp. Appl. Math. 6, 1980) with the dense
//     output of Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., II.6
//     (DOPRI5's CONTD5) for non-stiff systems: the default.
//   - Rodas5P, the stiffly accurate L-stable Rosenbrock method of order
//     5(4) of G. Steinebach (BIT Numer. Math. 63, 2023), in the form of
//     Hairer & Wanner's code RODAS (Solving ODEs II, IV.7), with its own
//     order-4 dense output, a finite-difference Jacobian and the error
//     estimate filtered through (I − γh·J)⁻¹, while the system declares
//     its present modes stiff (an RC snubber, or the switch capacitance
//     discharging through the eddy-current turn, against millisecond
//     motion), or once DOPRI5's stiffness test fires (odeLoop). The choice
//     is made again after every event, so a run uses the implicit method
//     only in the segments that need it.
//
// Time events (commands) are landed on exactly by shortening the step.
// State events are guard functions: a guard is negative while the mode
// holds and an event happens when it reaches zero. They are located on the
// dense output with the Illinois variant of regula falsi (Dowell & Jarratt,
// BIT 11, 1971).

// odeSystem is what the integrator advances.
type odeSystem interface {
	// deriv writes f(t, y) into dy.
	deriv(t float64, y, dy []float64)
	// guards writes the current mode's guard values at (t, y) into g and
	// returns how many there are. They may read only the fed-back
	// components of y (odeSettings.NJac): the others are not interpolated
	// for them.
	guards(t float64, y, g []float64) int
	// nextTimeEvent returns the first commanded event time strictly after t.
	nextTimeEvent(t float64) float64
	// event applies event k (k < 0: the time event at t) and may change y
	// and the mode. It returns stop = true to end the run.
	event(t float64, y []float64, k int) (stop bool, err error)
	// accepted is told of every accepted step; s.interp gives the solution
	// anywhere in [s.t0, s.t1].
	accepted(s *stepView)
	// stiff reports whether the present modes have a fast mode that an
	// explicit method would have to resolve (asked at the start and after
	// every event).
	stiff() bool
	// dynamic returns the fed-back states the present modes let change
	// (nil: all); the others have identically zero derivatives until the
	// next event.
	dynamic() []int
}

// pieceSystem is a system whose right-hand side, within one mode, is
// smooth only piecewise: across a piece's end f stays continuous but a
// derivative of it jumps (a table's gap cells). A step over such a kink
// loses the methods' order and is rejected again and again. The system
// evaluates f on the present piece, continued smoothly past its ends, and
// gives the piece's ends as guards; the integrator lands on a crossing as
// on a state event, but only moves the system to the next piece — no event,
// no mode change, no restart: f is recomputed there and the step size goes
// on from the controller.
type pieceSystem interface {
	// enterPiece puts the system on the piece at y.
	enterPiece(y []float64)
	// crossPiece moves the system to the piece beyond the end of the
	// present one whose guard k (0 ≤ k < the piece guards' number) has
	// just crossed zero; y, where it crossed, may be a rounding error short
	// of that end, so the piece is chosen by the guard, not by y.
	crossPiece(k int)
	// pieceGuards writes the present piece's guards at y into g (negative
	// inside it) and returns how many there are.
	pieceGuards(y, g []float64) int
}

// maxPieceGuards bounds the number of piece guards.
const maxPieceGuards = 2

// fastForwarder is a system that may jump ahead in time after an event,
// repeating what it knows to be periodic: it changes y and returns the new
// time (t when it does not jump).
type fastForwarder interface {
	fastForward(t float64, y []float64) float64
}

// odeSettings tunes the integrator.
type odeSettings struct {
	RelTol   float64   // relative tolerance
	Scale    []float64 // absolute tolerance of component i is RelTol·Scale[i]; a negative scale leaves the component out of the error norm (a state the model does not use yet; the system may change it at an event)
	MaxSteps int       // attempted steps (accepted + rejected) before giving up
	MaxStep  float64   // s, largest step
	Stiff    bool      // use the Rosenbrock method throughout, whatever the system says
	NJac     int       // components that feed back into f (Jacobian columns); the rest are quadratures
}

// odeStats counts the integrator's work.
type odeStats struct {
	Steps      int // accepted
	Rejected   int
	Events     int
	Evals      int // right-hand side evaluations
	StiffSteps int // accepted steps taken by the Rosenbrock method
	Switches   int // segments the stiffness detector moved to the Rosenbrock method
	Pieces     int // accepted steps that ended on a piece's end (pieceSystem)
}

// maxGuardCount bounds the number of guards a system may report.
const maxGuardCount = 16

// errStepBudget is wrapped by the error returned when MaxSteps runs out.
var errStepBudget = errors.New("step budget exhausted")

// stepView is one accepted step, for the system to record.
type stepView struct {
	t0, t1 float64
	y0, y1 []float64
	m      stepper
	h      float64 // the step the dense output was built for
}

// interp writes the solution at t (t0 <= t <= t1) into out.
func (s *stepView) interp(t float64, out []float64) {
	switch {
	case t <= s.t0:
		copy(out, s.y0)
	case t >= s.t1:
		copy(out, s.y1)
	default:
		s.m.dense((t-s.t0)/s.h, out)
	}
}

// stepper is one method: it attempts a step and interpolates within it.
type stepper interface {
	// attempt advances y0 (with f0 = f(t0, y0)) by h into y1 and returns the
	// scaled error norm (≤ 1 accepts).
	attempt(t0, h float64, y0, f0, y1 []float64) float64
	// f1 returns f(t1, y1) of the last attempt (free for DOPRI5, FSAL).
	f1() []float64
	// dense writes the interpolant at θ ∈ [0, 1] of the last attempt.
	dense(theta float64, out []float64)
	// denseFed is dense for the fed-back components only (odeSettings.NJac),
	// all the guards may read.
	denseFed(theta float64, out []float64)
	order() int // order of the error estimator's lower formula + 1 (step-size exponent 1/order)
}

type odeIntegrator struct {
	scratch            []float64 // for initialStep
	sys                odeSystem
	set                odeSettings
	n                  int
	m                  stepper
	explicit, implicit stepper
	stats              odeStats
	norm               func(err, y0, y1 []float64) float64
	pieces             pieceSystem // nil: the system's f is smooth within a mode
}

func newODE(sys odeSystem, n int, set odeSettings) *odeIntegrator {
	in := &odeIntegrator{sys: sys, set: set, n: n, scratch: make([]float64, n)}
	in.pieces, _ = sys.(pieceSystem)
	if set.NJac == 0 {
		in.set.NJac = n
	}
	counted := func(t float64, y, dy []float64) {
		in.stats.Evals++
		sys.deriv(t, y, dy)
	}
	in.norm = func(err, y0, y1 []float64) float64 {
		s := 0.0
		active := 0
		for i, e := range err {
			if set.Scale[i] < 0 {
				continue
			}
			active++
			a, b := math.Abs(y0[i]), math.Abs(y1[i])
			if b > a {
				a = b
			}
			sc := set.RelTol * (set.Scale[i] + a)
			r := e / sc
			s += r * r
		}
		return math.Sqrt(s / float64(active))
	}
	in.explicit = newDopri(n, in.set.NJac, counted, in.norm)
	in.implicit = newRodas(rodas5p, n, in.set.NJac, counted, in.norm, set.Scale)
	in.m = in.explicit
	return in
}

// choose picks the method for the segment that starts now and returns the
// step-size exponent's order.
func (in *odeIntegrator) choose() float64 {
	in.implicit.(*rodas).setColumns(in.sys.dynamic())
	if in.set.Stiff || in.sys.stiff() {
		in.m = in.implicit
	} else {
		in.m = in.explicit
	}
	return float64(in.m.order())
}

// odeLoop is the state of the driver loop of one run: the time, the
// state, its derivative and the guards at the start of the next step, the
// step to try, the present method's step-size exponent order, and the
// counters of the stiffness detector and of events that do not advance
// time.
type odeLoop struct {
	in     *odeIntegrator
	t      float64 // present time
	h      float64 // the step to try next
	q      float64 // order of the present method's step-size exponent (1/q)
	y, f0  []float64
	y1     []float64    // the attempted step's end
	ytmp   []float64    // scratch: dense output, event location
	g0, g1 []float64    // guards at the step's start and end
	gmid   [2][]float64 // guards at the step's two interior points
	gt     []float64    // scratch for locate
	ng     int          // guards the present modes have
	np     int          // piece guards, after the ng mode guards (pieceSystem)
	view   stepView     // the accepted step, as the system sees it
	// Stiffness detection on the explicit method (Hairer & Wanner,
	// Solving ODEs II, IV.2, DOPRI5's test): h·|λ| near the edge of the
	// stability region (3.25) on 15 accepted steps without 6 in a row
	// below it switches the segment to the implicit method until the next
	// event.
	stiffHits, calm int
	sameTime        int // state events in a row at one instant (mode chatter)
}

// run integrates from t0 until the system stops it: one attempted step
// per pass, up to the step budget.
func (in *odeIntegrator) run(t0 float64, y []float64) error {
	n := in.n
	const ng = maxGuardCount + maxPieceGuards
	s := &odeLoop{in: in, t: t0, y: y, f0: make([]float64, n), y1: make([]float64, n), ytmp: make([]float64, n),
		g0: make([]float64, ng), g1: make([]float64, ng), gt: make([]float64, ng),
		gmid: [2][]float64{make([]float64, ng), make([]float64, ng)}}
	s.h = s.restart()
	s.guardsAtStart()
	for attempts := 1; ; attempts++ {
		if attempts > in.set.MaxSteps {
			return fmt.Errorf("%w: %d steps reached at t = %.9g s; loosen the tolerance or raise the solver's max steps", errStepBudget, in.set.MaxSteps, s.t)
		}
		done, err := s.step()
		if done || err != nil {
			return err
		}
	}
}

// guardsAtStart evaluates the mode's guards, then the piece guards, at
// the present time and state into g0.
func (s *odeLoop) guardsAtStart() {
	s.ng, s.np = s.in.allGuards(s.t, s.y, s.g0)
}

// allGuards writes the mode's guards, then the piece guards, at (t, y)
// into g and returns how many of each there are.
func (in *odeIntegrator) allGuards(t float64, y, g []float64) (ng, np int) {
	ng = in.sys.guards(t, y, g)
	if in.pieces != nil {
		np = in.pieces.pieceGuards(y, g[ng:])
	}
	return ng, np
}

// enterPiece puts a pieceSystem on the piece at y.
func (in *odeIntegrator) enterPiece(y []float64) {
	if in.pieces != nil {
		in.pieces.enterPiece(y)
	}
}

// restart chooses the method for the segment that starts at the present
// time (after an event, or at the start) and returns a fresh starting step.
func (s *odeLoop) restart() float64 {
	in := s.in
	in.enterPiece(s.y)
	s.q = in.choose()
	s.stiffHits, s.calm = 0, 0
	in.sys.deriv(s.t, s.y, s.f0)
	in.stats.Evals++
	return in.initialStep(s.t, s.y, s.f0, s.ytmp, s.q)
}

// step attempts one step, shortened to land on the next time event when
// it would reach it, and handles its outcome: a rejection, a state event
// inside it, or an accepted step. It returns done when the run is over
// (the system stopped it, or err).
func (s *odeLoop) step() (done bool, err error) {
	in := s.in
	tNext := in.sys.nextTimeEvent(s.t)
	landing := false
	if s.h > in.set.MaxStep {
		s.h = in.set.MaxStep
	}
	hNatural := s.h
	if s.t+s.h >= tNext || s.t+1.01*s.h >= tNext {
		s.h = tNext - s.t
		landing = true
	}
	if s.h <= 4*epsTime(s.t) {
		if landing {
			return s.atTimeEvent(tNext)
		}
		return true, fmt.Errorf("step size underflow at t = %.12g s", s.t)
	}
	errNorm := in.m.attempt(s.t, s.h, s.y, s.f0, s.y1)
	if !(errNorm <= 1) {
		s.reject(errNorm)
		return false, nil
	}
	if kEv, tEv := s.firstCrossing(); kEv >= 0 {
		if kEv < s.ng {
			return s.stateEvent(kEv, tEv, landing, tNext)
		}
		if !landing || tEv < tNext {
			return s.pieceCrossing(errNorm, kEv-s.ng, tEv)
		}
		// A piece's end reached exactly at the time event: the landing
		// re-enters the piece (afterLanding).
	}
	return s.accept(errNorm, landing, tNext, hNatural)
}

// atTimeEvent applies the time event at tNext when the present time is
// already there (the step left to land is negligible) and restarts.
func (s *odeLoop) atTimeEvent(tNext float64) (done bool, err error) {
	in := s.in
	s.t = tNext
	if stop, err := in.timeEvent(s.t, s.y); stop || err != nil {
		return true, err
	}
	s.t = in.jump(s.t, s.y)
	s.h = s.restart()
	s.guardsAtStart()
	return false, nil
}

// reject shrinks the step after a failed error test (by 5 when the error
// is not a number).
func (s *odeLoop) reject(errNorm float64) {
	s.in.stats.Rejected++
	fac := 0.2
	if !math.IsNaN(errNorm) && !math.IsInf(errNorm, 0) {
		fac = math.Max(0.2, 0.9*math.Pow(errNorm, -1/s.q))
	}
	s.h *= fac
}

// firstCrossing returns the guard that crosses zero first within the step
// just attempted, and the time it does (k < 0: none). The guards are
// evaluated at the end of the step and at two interior points of the dense
// output, so that a guard that crosses zero and comes back within one step
// (a grazing ring) is still caught.
func (s *odeLoop) firstCrossing() (kEv int, tEv float64) {
	in := s.in
	t, h := s.t, s.h
	in.allGuards(t+h, s.y1, s.g1)
	for j, th := range [...]float64{1.0 / 3, 2.0 / 3} {
		in.m.denseFed(th, s.ytmp)
		in.allGuards(t+th*h, s.ytmp, s.gmid[j])
	}
	kEv, tEv = -1, t+h
	for k := 0; k < s.ng+s.np; k++ {
		a, ga := 0.0, s.g0[k]
		for j, th := range [...]float64{1.0 / 3, 2.0 / 3, 1} {
			gb := s.g1[k]
			if j < 2 {
				gb = s.gmid[j][k]
			}
			if gb > 0 && ga <= 0 {
				te := in.locate(t, h, k, s.ng, a, th, ga, gb, s.ytmp, s.gt)
				if kEv < 0 || te < tEv {
					kEv, tEv = k, te
				}
				break
			}
			a, ga = th, gb
		}
	}
	return kEv, tEv
}

// record hands the system the accepted step from the present time to t1,
// where the state is y1.
func (s *odeLoop) record(t1 float64, y1 []float64) {
	in := s.in
	s.view.t0, s.view.y0, s.view.h, s.view.m = s.t, s.y, s.h, in.m
	if in.m == in.implicit {
		in.stats.StiffSteps++
	}
	s.view.t1, s.view.y1 = t1, y1
	in.sys.accepted(&s.view)
	in.stats.Steps++
}

// stateEvent accepts the step up to guard k's crossing at tEv, applies
// the event (and the time event at tNext when the crossing fell on it
// while landing), lets the system jump ahead, and restarts.
func (s *odeLoop) stateEvent(k int, tEv float64, landing bool, tNext float64) (done bool, err error) {
	in := s.in
	h := s.h
	in.m.dense((tEv-s.t)/h, s.ytmp)
	s.record(tEv, s.ytmp)
	in.stats.Events++
	if tEv == s.t {
		s.sameTime++
		if s.sameTime > 100 {
			return true, fmt.Errorf("events repeat without time advancing at t = %.12g s (mode chatter)", s.t)
		}
	} else {
		s.sameTime = 0
	}
	s.t = tEv
	copy(s.y, s.ytmp)
	if stop, err := in.sys.event(s.t, s.y, k); stop || err != nil {
		return true, err
	}
	if landing && s.t >= tNext {
		// The state event fell on the time event's instant: apply
		// the time event too, or it would be skipped.
		s.t = tNext
		if stop, err := in.timeEvent(s.t, s.y); stop || err != nil {
			return true, err
		}
	}
	hOld := h
	if t2 := in.jump(s.t, s.y); t2 != s.t {
		s.t = t2
		hOld = math.Inf(1)
	}
	s.h = math.Min(s.restart(), hOld)
	s.guardsAtStart()
	return false, nil
}

// pieceCrossing accepts the step up to the present piece's end at tEv,
// where its piece guard k crossed (pieceSystem), puts the system on the
// next piece and goes on with the step size the error estimate errNorm of
// the whole step asks for; f is recomputed at tEv (continuous there, but
// the stepper's last f is at the step's end). The new piece's guard at the
// end just crossed may start a rounding error above zero; it starts at 0,
// so that a return across that end is still seen.
func (s *odeLoop) pieceCrossing(errNorm float64, k int, tEv float64) (done bool, err error) {
	in := s.in
	in.m.dense((tEv-s.t)/s.h, s.ytmp)
	s.record(tEv, s.ytmp)
	in.stats.Pieces++
	switchNow := s.stiffnessDetected()
	s.t = tEv
	copy(s.y, s.ytmp)
	in.pieces.crossPiece(k)
	in.sys.deriv(s.t, s.y, s.f0)
	in.stats.Evals++
	s.guardsAtStart()
	for j := s.ng; j < s.ng+s.np; j++ {
		s.g0[j] = math.Min(s.g0[j], 0)
	}
	s.h *= s.growth(errNorm)
	if switchNow {
		s.toImplicit()
	}
	return false, nil
}

// growth returns the step-size factor after an accepted step with error
// norm errNorm: 0.9·err^(−1/q) within 0.2 to 5.
func (s *odeLoop) growth(errNorm float64) float64 {
	if errNorm > 0 {
		return math.Min(5, math.Max(0.2, 0.9*math.Pow(errNorm, -1/s.q)))
	}
	return 5
}

// toImplicit moves the segment to the implicit method (the stiffness test
// fired).
func (s *odeLoop) toImplicit() {
	in := s.in
	in.implicit.(*rodas).setColumns(in.sys.dynamic())
	in.m = in.implicit
	s.q = float64(in.m.order())
	in.stats.Switches++
}

// accept takes the step (to the time event tNext when landing), picks the
// next step from the error estimate (0.9·err^(−1/q), within a factor 0.2
// to 5), moves to the implicit method when the stiffness test fires, and
// after a landing applies the time event.
func (s *odeLoop) accept(errNorm float64, landing bool, tNext, hNatural float64) (done bool, err error) {
	in := s.in
	s.record(s.t+s.h, s.y1)
	s.sameTime = 0
	switchNow := s.stiffnessDetected()
	if landing {
		s.t = tNext
	} else {
		s.t += s.h
	}
	copy(s.y, s.y1)
	copy(s.f0, in.m.f1())
	copy(s.g0, s.g1)
	s.h *= s.growth(errNorm)
	if switchNow {
		s.toImplicit()
	}
	if landing {
		return s.afterLanding(hNatural)
	}
	return false, nil
}

// stiffnessDetected updates the stiffness detector with the step the
// explicit method just took and reports whether the segment should move to
// the implicit method now (see odeLoop).
func (s *odeLoop) stiffnessDetected() bool {
	dp, ok := s.in.m.(*dopri)
	if !ok {
		return false
	}
	if dp.hLambda > 3.25 {
		s.calm = 0
		s.stiffHits++
		return s.stiffHits >= 15
	}
	if s.calm++; s.calm >= 6 {
		s.stiffHits = 0
	}
	return false
}

// afterLanding applies the time event the accepted step landed on. After
// a jump ahead the run restarts; otherwise it goes on with hNatural, the
// step the controller wanted before it was shortened to land here: time
// events (switch edges) recur, and the first step's error test catches a
// change of pace. A change of method at the command starts afresh.
func (s *odeLoop) afterLanding(hNatural float64) (done bool, err error) {
	in := s.in
	if stop, err := in.timeEvent(s.t, s.y); stop || err != nil {
		return true, err
	}
	if t2 := in.jump(s.t, s.y); t2 != s.t {
		s.t = t2
		s.h = s.restart()
		s.guardsAtStart()
		return false, nil
	}
	m0 := in.m
	in.choose()
	if in.m != m0 {
		s.h = s.restart()
	} else {
		in.enterPiece(s.y)
		in.sys.deriv(s.t, s.y, s.f0)
		in.stats.Evals++
		s.h = hNatural
	}
	s.guardsAtStart()
	return false, nil
}

// jump lets a fastForwarder system repeat periods after an event at t and
// returns the new time.
func (in *odeIntegrator) jump(t float64, y []float64) float64 {
	ff, ok := in.sys.(fastForwarder)
	if !ok {
		return t
	}
	return ff.fastForward(t, y)
}

func (in *odeIntegrator) timeEvent(t float64, y []float64) (bool, error) {
	in.stats.Events++
	return in.sys.event(t, y, -1)
}

// epsTime is the smallest meaningful time step at t.
func epsTime(t float64) float64 {
	return math.Max(math.Abs(t), 1e-9) * 2.3e-16
}

// locate finds the time at which guard k crosses zero inside the last
// attempted step [t, t+h], between the fractions a and b of the step where
// its values are ga ≤ 0 and gb > 0, by the Illinois method on the dense output. It returns the right end
// of the final bracket, so the guard has (just) crossed there. Guards from
// ng on are piece guards (pieceSystem).
func (in *odeIntegrator) locate(t, h float64, k, ng int, a, b, ga, gb float64, ytmp, g []float64) float64 {
	fa, fb := ga, gb
	side := 0
	tol := (1e-13 + 4*epsTime(t)) / h
	for it := 0; it < 200 && b-a > tol; it++ {
		c := (a*fb - b*fa) / (fb - fa)
		if !(c > a && c < b) {
			c = 0.5 * (a + b)
		}
		in.m.denseFed(c, ytmp)
		if k < ng {
			in.sys.guards(t+c*h, ytmp, g)
		} else {
			in.pieces.pieceGuards(ytmp, g[ng:])
		}
		fc := g[k]
		if fc > 0 {
			b, fb = c, fc
			if side == -1 {
				fa /= 2
			}
			side = -1
		} else {
			a, fa = c, fc
			if side == 1 {
				fb /= 2
			}
			side = 1
		}
	}
	return t + b*h
}

// initialStep picks a first step after a (re)start: the algorithm of
// Hairer, Nørsett & Wanner, Solving ODEs I, II.4 (starting step size).
func (in *odeIntegrator) initialStep(t float64, y, f0, ytmp []float64, q float64) float64 {
	zero := ytmp
	d0 := in.normVec(y, y)
	d1 := in.normVec(f0, y)
	h0 := 1e-6
	if d0 > 1e-5 && d1 > 1e-5 {
		h0 = 0.01 * d0 / d1
	}
	h0 = math.Min(h0, in.set.MaxStep)
	h0 = math.Max(h0, 1e-12)
	f1 := in.scratch
	for i := range y {
		zero[i] = y[i] + h0*f0[i]
	}
	in.sys.deriv(t+h0, zero, f1)
	in.stats.Evals++
	for i := range f1 {
		f1[i] -= f0[i]
	}
	d2 := in.normVec(f1, y) / h0
	h1 := math.Max(1e-6, h0*1e-3)
	if m := math.Max(d1, d2); m > 1e-15 {
		h1 = math.Pow(0.01/m, 1/q)
	}
	return math.Min(math.Min(100*h0, h1), in.set.MaxStep)
}

// normVec is the weighted RMS norm of v with weights from y.
func (in *odeIntegrator) normVec(v, y []float64) float64 {
	s := 0.0
	active := 0
	for i := range v {
		if in.set.Scale[i] < 0 {
			continue
		}
		active++
		sc := in.set.RelTol * (in.set.Scale[i] + math.Abs(y[i]))
		r := v[i] / sc
		s += r * r
	}
	return math.Sqrt(s / float64(active))
}
