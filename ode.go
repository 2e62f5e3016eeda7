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
//   - RODAS4, the stiffly accurate L-stable Rosenbrock method of order
//     4(3) of Hairer & Wanner (Solving ODEs II, IV.7), with its own dense
//     output and a finite-difference Jacobian, while the system declares
//     its present modes stiff (an RC snubber, or the switch capacitance
//     discharging through the eddy-current turn, against millisecond
//     motion). The choice is made again after every event, so a run uses
//     the implicit method only in the segments that need it.
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
	// returns how many there are.
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
}

func newODE(sys odeSystem, n int, set odeSettings) *odeIntegrator {
	in := &odeIntegrator{sys: sys, set: set, n: n, scratch: make([]float64, n)}
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
	in.explicit = newDopri(n, counted, in.norm)
	in.implicit = newRodas(n, in.set.NJac, counted, in.norm)
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

// run integrates from t0 until the system stops it.
func (in *odeIntegrator) run(t0 float64, y []float64) error {
	n := in.n
	f0 := make([]float64, n)
	y1 := make([]float64, n)
	ytmp := make([]float64, n)
	g0 := make([]float64, maxGuardCount)
	g1 := make([]float64, maxGuardCount)
	gt := make([]float64, maxGuardCount)
	gmid := [2][]float64{make([]float64, maxGuardCount), make([]float64, maxGuardCount)}
	view := &stepView{}
	var q float64
	t := t0
	// Stiffness detection on the explicit method (Hairer & Wanner,
	// Solving ODEs II, IV.2, DOPRI5's test): h·|λ| near the edge of the
	// stability region (3.25) on 15 accepted steps without 6 in a row
	// below it switches the segment to the implicit method until the next
	// event.
	stiffHits, calm := 0, 0

	restart := func() float64 {
		q = in.choose()
		stiffHits, calm = 0, 0
		in.sys.deriv(t, y, f0)
		in.stats.Evals++
		return in.initialStep(t, y, f0, ytmp, q)
	}
	h := restart()
	ng := in.sys.guards(t, y, g0)
	sameTime := 0
	attempts := 0
	for {
		attempts++
		if attempts > in.set.MaxSteps {
			return fmt.Errorf("%w: %d steps reached at t = %.9g s; loosen the tolerance or raise the solver's max steps", errStepBudget, in.set.MaxSteps, t)
		}
		tNext := in.sys.nextTimeEvent(t)
		landing := false
		if h > in.set.MaxStep {
			h = in.set.MaxStep
		}
		hNatural := h
		if t+h >= tNext || t+1.01*h >= tNext {
			h = tNext - t
			landing = true
		}
		if h <= 4*epsTime(t) {
			if landing {
				// Already at the time event.
				t = tNext
				stop, err := in.timeEvent(t, y)
				if stop || err != nil {
					return err
				}
				t = in.jump(t, y)
				h = restart()
				ng = in.sys.guards(t, y, g0)
				continue
			}
			return fmt.Errorf("step size underflow at t = %.12g s", t)
		}
		errNorm := in.m.attempt(t, h, y, f0, y1)
		if !(errNorm <= 1) {
			in.stats.Rejected++
			fac := 0.2
			if !math.IsNaN(errNorm) && !math.IsInf(errNorm, 0) {
				fac = math.Max(0.2, 0.9*math.Pow(errNorm, -1/q))
			}
			h *= fac
			continue
		}
		// Guards at the end of the step and at two interior points of the
		// dense output, so that a guard that crosses zero and comes back
		// within one step (a grazing ring) is still caught.
		in.sys.guards(t+h, y1, g1)
		for j, th := range [...]float64{1.0 / 3, 2.0 / 3} {
			in.m.dense(th, ytmp)
			in.sys.guards(t+th*h, ytmp, gmid[j])
		}
		kEv, tEv := -1, t+h
		for k := 0; k < ng; k++ {
			a, ga := 0.0, g0[k]
			for j, th := range [...]float64{1.0 / 3, 2.0 / 3, 1} {
				gb := g1[k]
				if j < 2 {
					gb = gmid[j][k]
				}
				if gb > 0 && ga <= 0 {
					te := in.locate(t, h, k, a, th, ga, gb, ytmp, gt)
					if kEv < 0 || te < tEv {
						kEv, tEv = k, te
					}
					break
				}
				a, ga = th, gb
			}
		}
		view.t0, view.y0, view.h, view.m = t, y, h, in.m
		if in.m == in.implicit {
			in.stats.StiffSteps++
		}
		if kEv >= 0 {
			in.m.dense((tEv-t)/h, ytmp)
			view.t1, view.y1 = tEv, ytmp
			in.sys.accepted(view)
			in.stats.Steps++
			in.stats.Events++
			if tEv == t {
				sameTime++
				if sameTime > 100 {
					return fmt.Errorf("events repeat without time advancing at t = %.12g s (mode chatter)", t)
				}
			} else {
				sameTime = 0
			}
			t = tEv
			copy(y, ytmp)
			stop, err := in.sys.event(t, y, kEv)
			if stop || err != nil {
				return err
			}
			if landing && t >= tNext {
				// The state event fell on the time event's instant: apply
				// the time event too, or it would be skipped.
				t = tNext
				if stop, err := in.timeEvent(t, y); stop || err != nil {
					return err
				}
			}
			hOld := h
			if t2 := in.jump(t, y); t2 != t {
				t = t2
				hOld = math.Inf(1)
			}
			h = math.Min(restart(), hOld)
			ng = in.sys.guards(t, y, g0)
			continue
		}
		view.t1, view.y1 = t+h, y1
		in.sys.accepted(view)
		in.stats.Steps++
		sameTime = 0
		switchNow := false
		if dp, ok := in.m.(*dopri); ok {
			if dp.hLambda > 3.25 {
				calm = 0
				stiffHits++
				switchNow = stiffHits >= 15
			} else if calm++; calm >= 6 {
				stiffHits = 0
			}
		}
		if landing {
			t = tNext
		} else {
			t += h
		}
		copy(y, y1)
		copy(f0, in.m.f1())
		copy(g0, g1)
		fac := 5.0
		if errNorm > 0 {
			fac = math.Min(5, math.Max(0.2, 0.9*math.Pow(errNorm, -1/q)))
		}
		h *= fac
		if switchNow {
			in.implicit.(*rodas).setColumns(in.sys.dynamic())
			in.m = in.implicit
			q = float64(in.m.order())
			in.stats.Switches++
		}
		if landing {
			stop, err := in.timeEvent(t, y)
			if stop || err != nil {
				return err
			}
			if t2 := in.jump(t, y); t2 != t {
				t = t2
				h = restart()
				ng = in.sys.guards(t, y, g0)
				continue
			}
			// Restart with the step the controller wanted before it was
			// shortened to land here: time events (switch edges) recur, and
			// the first step's error test catches a change of pace.
			if q1 := in.choose(); q1 != q {
				// The method changed at this command: start afresh.
				q = q1
				h = restart()
			} else {
				in.sys.deriv(t, y, f0)
				in.stats.Evals++
				h = hNatural
			}
			ng = in.sys.guards(t, y, g0)
		}
	}
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
// of the final bracket, so the guard has (just) crossed there.
func (in *odeIntegrator) locate(t, h float64, k int, a, b, ga, gb float64, ytmp, g []float64) float64 {
	fa, fb := ga, gb
	side := 0
	tol := (1e-13 + 4*epsTime(t)) / h
	for it := 0; it < 200 && b-a > tol; it++ {
		c := (a*fb - b*fa) / (fb - fa)
		if !(c > a && c < b) {
			c = 0.5 * (a + b)
		}
		in.m.dense(c, ytmp)
		in.sys.guards(t+c*h, ytmp, g)
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
