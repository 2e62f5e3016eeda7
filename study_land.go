package coilkick

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strconv"
	"sync"
	"time"

	"gonum.org/v1/gonum/optimize"

	"coilkick/circuit"
)

// The soft-landing study (Land): the brake of a constant drive — full
// voltage from energize, the switch off from BrakeAt for BrakeFor (the
// current decays through the suppression part, the pull falls, the spring
// and load slow the plunger), then full voltage again for the hold — with
// its two parameters chosen to minimise the seat impact speed at the
// nominal point, subject to every corner of the tolerances (the nominal
// point as well) still seating, not dropping out while energized and
// pulling in within a cap.
//
// Method: Nelder–Mead (gonum/optimize) on the two parameters mapped from
// the whole real line onto their bounds by the logistic function (so that
// the simplex never leaves them), with the constraints as an exact
// (non-smooth) penalty: the objective has kinks where the plunger stops
// seating or a bounce appears, which a simplex method tolerates. The
// answer is the best feasible profile any evaluation found, so a run that
// stops early still returns one that meets every constraint.

// LandOptions set up a soft-landing study.
type LandOptions struct {
	// PullInCap (s): the pull-in time no corner may exceed; 0 takes the
	// scenario's ratings.pull-in time.
	PullInCap float64
	// Start (s, BrakeAt and BrakeFor): the optimiser's start; zero takes
	// the scenario's brake, else a start from the unbraked pull-in.
	StartAt, StartFor float64
	// MaxEvaluations bounds the objective's evaluations (each one run per
	// corner and one at the nominal point); 0: DefaultLandEvaluations.
	MaxEvaluations int
	// Workers run the corners in parallel (0: all cores).
	Workers int
	// TimingMargin (s): the constraints must also hold with either time
	// of the brake moved by this much, earlier or later (4 more sets of
	// runs for every profile that meets them); 0: at the profile only.
	TimingMargin float64
}

// DefaultLandEvaluations is the optimiser's default budget of objective
// evaluations.
const DefaultLandEvaluations = 300

// ErrLandDriveMode is returned for a drive that takes no brake (the brake
// applies to the constant and the pwm drive).
var ErrLandDriveMode = errors.New("coilkick: land: the brake applies to the constant and the pwm drive")

// LandRun is one simulated actuation of the study: at a corner or the
// nominal point, with a drive profile.
type LandRun struct {
	PullIn      Interval
	ImpactSpeed float64 // m/s at the first seating (0 when it did not seat)
	// ImpactEnergy (J): ½·m·v² of that impact.
	ImpactEnergy float64
	Bounces      int
	DroppedOut   bool // left the seat while energized
}

// Meets reports whether the run seats within cap (s) and does not drop
// out.
func (r LandRun) Meets(cap float64) bool {
	return r.PullIn.Happened && !r.DroppedOut && WithinMax(r.PullIn.Seconds, cap)
}

// LandProfile is a brake (s from energize; BrakeFor 0: no brake).
type LandProfile struct{ BrakeAt, BrakeFor float64 }

// LandResult is the outcome of the soft-landing study.
type LandResult struct {
	Cap float64 // s
	// Mode is the drive's (constant or pwm).
	Mode circuit.ControlMode
	// TimingMargin (s): LandOptions.TimingMargin.
	TimingMargin float64
	// CapFromRequirement: the cap is the scenario's ratings.pull-in time.
	CapFromRequirement bool
	// Corners of the tolerances; with none, NominalOnly and no corners
	// (the constraints apply at the nominal point alone).
	Corners     []Corner
	NominalOnly bool
	// UnbrakedPullIn (s): the nominal pull-in without a brake; the
	// parameters' bounds are fractions of it.
	UnbrakedPullIn float64
	// Bounds of BrakeAt and BrakeFor (s).
	AtMin, AtMax, ForMin, ForMax float64
	// Before is the scenario's brake; After the brake found, which is
	// Before when no brake met the constraints with a lower nominal impact
	// speed (BrakeFor 0: no brake).
	Before, After LandProfile
	// Nominal point and corners (in Corners' order), before and after.
	NominalBefore, NominalAfter LandRun
	CornersBefore, CornersAfter []LandRun
	// Feasible: the profile found meets the constraints everywhere;
	// BeforeFeasible: the scenario's own drive does.
	Feasible, BeforeFeasible bool
	// Margins of the brake found (nil without one).
	Margins                  *LandMargins
	Mass                     float64 // kg, the plunger's
	Method                   string
	Evaluations, Simulations int
	Elapsed                  time.Duration
}

// landProblem is the objective of Land.
type landProblem struct {
	md      *Model
	corners []Corner
	cap     float64
	lo, hi  [2]float64 // bounds of BrakeAt, BrakeFor (s)
	workers int
	vRef    float64 // m/s, the scale of the impact speed (the unbraked nominal)
	margin  float64 // s, LandOptions.TimingMargin

	sims, evals int
	best        LandProfile
	bestF       float64 // nominal impact speed of the best feasible profile
	found       bool
}

// Land optimises the brake of md's constant drive (see the comment at the
// top of study_land.go).
func Land(md *Model, opt LandOptions) (*LandResult, error) {
	began := time.Now()
	if md.Control.Mode != circuit.Constant && md.Control.Mode != circuit.PWM {
		return nil, fmt.Errorf("%w; drive.mode is %q", ErrLandDriveMode, md.Control.Mode)
	}
	res := &LandResult{Cap: opt.PullInCap, Mass: md.Plunger.Mass, Mode: md.Control.Mode,
		Method: "Nelder–Mead (gonum/optimize) on logistic-mapped parameters, exact penalty for the corners"}
	if res.Cap == 0 {
		res.Cap, res.CapFromRequirement = md.Limits.MaxPullIn, true
	}
	if !(res.Cap > 0) || math.IsInf(res.Cap, 0) {
		return nil, errors.New("coilkick: land needs a pull-in time cap: --pull-in-cap, or ratings.pull-in time in the scenario")
	}
	if md.Tolerances != (Tolerances{}) {
		res.Corners = corners(md, md.Tolerances)
	} else {
		res.NominalOnly = true
	}
	if !(opt.TimingMargin >= 0) || math.IsInf(opt.TimingMargin, 0) {
		return nil, errors.New("coilkick: land: the timing margin must be a finite time, 0 or more")
	}
	lp, err := newLandProblem(md, res)
	if err != nil {
		return nil, err
	}
	lp.margin, res.TimingMargin = opt.TimingMargin, opt.TimingMargin
	res.Before = LandProfile{md.Control.BrakeAt, md.Control.BrakeFor}
	if res.NominalBefore, res.CornersBefore, err = lp.runAll(res.Before); err != nil {
		return nil, err
	}
	res.BeforeFeasible = lp.feasible(res.NominalBefore, res.CornersBefore)
	if res.BeforeFeasible {
		// A brake must beat the scenario's drive as it is.
		lp.best, lp.bestF, lp.found = res.Before, res.NominalBefore.ImpactSpeed, true
	}
	u0, err := lp.start(opt, res)
	if err != nil {
		return nil, err
	}
	if err := lp.optimise(u0, opt.MaxEvaluations); err != nil {
		return nil, err
	}
	if lp.found {
		if err := lp.settle(res); err != nil {
			return nil, err
		}
	}
	if res.Feasible && res.After.BrakeFor > 0 {
		if res.Margins, err = lp.margins(res.After); err != nil {
			return nil, err
		}
	}
	res.Evaluations, res.Simulations, res.Elapsed = lp.evals, lp.sims, time.Since(began)
	return res, nil
}

// LandResolution (s) is the step of the brake's times as the study
// reports them (a driver's timer tick of 1 µs; common practice, no
// source): the keys to paste are the optimum rounded to it.
const LandResolution = 1e-6

// settle sets the result's profile: the optimum rounded to LandResolution
// (then with the brake's length rounded down, a shorter brake) when the
// rounded profile still meets every constraint, else the optimum as found;
// and its runs.
func (lp *landProblem) settle(res *LandResult) error {
	// Whole ticks over ticks per second: the nearest float to the decimal
	// value (6.922 ms prints as 0.006922 s, not 0.006921999999999999).
	q := func(v float64, f func(float64) float64) float64 {
		return f(v/LandResolution) / math.Round(1/LandResolution)
	}
	b := lp.best
	if b.BrakeFor == 0 {
		res.After, res.NominalAfter, res.CornersAfter, res.Feasible = b, res.NominalBefore, res.CornersBefore, true
		return nil
	}
	for _, p := range []LandProfile{{q(b.BrakeAt, math.Round), q(b.BrakeFor, math.Round)},
		{q(b.BrakeAt, math.Round), q(b.BrakeFor, math.Floor)}, b} {
		nom, cs, err := lp.runAll(p)
		if err != nil {
			return err
		}
		res.After, res.NominalAfter, res.CornersAfter = p, nom, cs
		if res.Feasible = lp.feasible(nom, cs); res.Feasible {
			return nil
		}
	}
	return nil
}

// newLandProblem sets the bounds from the unbraked nominal run: the brake
// starts between 20 % and 100 % of its pull-in time and lasts 1 % to 100 %
// of it, and ends before de-energize.
func newLandProblem(md *Model, res *LandResult) (*landProblem, error) {
	lp := &landProblem{md: md, corners: res.Corners, cap: res.Cap, workers: runtime.GOMAXPROCS(0)}
	free := *md
	free.Control = free.Control.WithBrake(0, 0)
	r, err := Simulate(&free, lp.options(md.Drive.Supply.Voltage, 0))
	lp.sims++
	if err != nil {
		return nil, fmt.Errorf("coilkick: land: the unbraked run: %w", err)
	}
	m := r.Metrics
	if !m.PullIn.Happened {
		return nil, errors.New("coilkick: land: the plunger does not pull in at the nominal point without a brake; no brake can help")
	}
	t0 := m.PullIn.Seconds
	window := md.Timing.DeenergizeAt - md.Timing.EnergizeAt
	lp.lo = [2]float64{0.2 * t0, 0.01 * t0}
	lp.hi = [2]float64{math.Min(t0, 0.5*window), math.Min(t0, 0.49*window)}
	lp.vRef = math.Max(m.SeatImpactSpeed, 1e-6)
	res.UnbrakedPullIn = t0
	res.AtMin, res.AtMax, res.ForMin, res.ForMax = lp.lo[0], lp.hi[0], lp.lo[1], lp.hi[1]
	return lp, nil
}

// options are the runs' options: no trace, the supply v (V) and the
// winding temperature (K, 0: the model's), ending at de-energize (the
// release does not matter here).
func (lp *landProblem) options(v, temp float64) *Options {
	t := lp.md.Timing
	return &Options{NoTrace: true, SupplyVoltage: v, FixedTemperature: temp,
		Energize: t.EnergizeAt, Deenergize: t.DeenergizeAt, End: t.DeenergizeAt}
}

// start returns the optimiser's start (u, the unbounded parameters): the
// options' start when given, else the best of a 5 × 5 grid over the
// bounds (at 10, 30, 50, 70 and 90 % of each range) and the scenario's own
// brake, if any.
func (lp *landProblem) start(opt LandOptions, res *LandResult) ([]float64, error) {
	if opt.StartFor > 0 {
		return lp.toU(LandProfile{opt.StartAt, opt.StartFor}), nil
	}
	var best []float64
	bestF := math.Inf(1)
	try := func(u []float64) error {
		f, err := lp.objective(lp.profile(u))
		if f < bestF {
			best, bestF = u, f
		}
		return err
	}
	if res.Before.BrakeFor > 0 {
		if err := try(lp.toU(res.Before)); err != nil {
			return nil, err
		}
	}
	for _, a := range landGrid {
		for _, b := range landGrid {
			if err := try([]float64{logit(a), logit(b)}); err != nil {
				return nil, err
			}
		}
	}
	return best, nil
}

// landGrid are the starting grid's points, as fractions of each range.
var landGrid = [...]float64{0.1, 0.3, 0.5, 0.7, 0.9}

// logit is the logistic function's inverse: ln(s/(1 − s)).
func logit(s float64) float64 { return math.Log(s / (1 - s)) }

// toU maps the brake p (s) to the real line (the logistic's inverse),
// clamped just inside the bounds.
func (lp *landProblem) toU(p LandProfile) []float64 {
	u := make([]float64, 2)
	for k, v := range [...]float64{p.BrakeAt, p.BrakeFor} {
		f := (v - lp.lo[k]) / (lp.hi[k] - lp.lo[k])
		u[k] = logit(math.Min(math.Max(f, 1e-3), 1-1e-3))
	}
	return u
}

// profile maps u to the brake (s): lo + (hi − lo)·logistic(u).
func (lp *landProblem) profile(u []float64) LandProfile {
	var p [2]float64
	for k := range p {
		p[k] = lp.lo[k] + (lp.hi[k]-lp.lo[k])/(1+math.Exp(-u[k]))
	}
	return LandProfile{p[0], p[1]}
}

// optimise runs Nelder–Mead from u0, then again from the best feasible
// profile (landRounds in all) with the rest of the budget (a restart sheds a simplex
// that collapsed early; common practice, no source), at most maxEval
// evaluations in all (counting the starting grid's).
func (lp *landProblem) optimise(u0 []float64, maxEval int) error {
	if maxEval <= 0 {
		maxEval = DefaultLandEvaluations
	}
	var runErr error
	prob := optimize.Problem{Func: func(u []float64) float64 {
		f, err := lp.objective(lp.profile(u))
		if err != nil && runErr == nil {
			runErr = err
		}
		return f
	}}
	for round := 0; round < landRounds && lp.evals < maxEval; round++ {
		if round > 0 {
			if !lp.found {
				break
			}
			u0 = lp.toU(lp.best)
		}
		settings := &optimize.Settings{FuncEvaluations: maxEval - lp.evals,
			Converger: &optimize.FunctionConverge{Absolute: landFTol, Iterations: 20}}
		_, err := optimize.Minimize(prob, u0, settings, &optimize.NelderMead{SimplexSize: 0.5 / float64(round+1)})
		switch {
		case runErr != nil:
			return runErr
		case err != nil && !lp.found:
			return fmt.Errorf("coilkick: land: %w", err)
		}
	}
	return nil // the best feasible profile stands, whatever stopped the search
}

// landFTol is the optimiser's convergence: the objective (the impact speed
// over the unbraked one) moved less than this over 20 iterations.
const landFTol = 1e-4

// landRounds is how many times Nelder–Mead starts (the first from u0, the
// others from the best feasible profile).
const landRounds = 3

// objective is the nominal impact speed over its unbraked value plus the
// penalty of the constraints (landPenalty) for the brake p; it keeps the
// best feasible profile.
func (lp *landProblem) objective(p LandProfile) (float64, error) {
	nom, cs, err := lp.runAll(p)
	lp.evals++
	if err != nil {
		return math.Inf(1), err
	}
	pen := lp.penalty(nom)
	for _, c := range cs {
		pen += lp.penalty(c)
	}
	if pen == 0 && lp.margin > 0 && p.BrakeFor > 0 {
		if pen, err = lp.neighbours(p); err != nil {
			return math.Inf(1), err
		}
	}
	v := nom.ImpactSpeed
	if pen == 0 && (!lp.found || v < lp.bestF) {
		lp.best, lp.bestF, lp.found = p, v, true
	}
	return v/lp.vRef + pen, nil
}

// neighbours is the penalty of the brake p with either time moved by the
// timing margin, earlier or later (a brake that cannot move that far
// counts as one violation).
func (lp *landProblem) neighbours(p LandProfile) (float64, error) {
	window := lp.md.Timing.DeenergizeAt - lp.md.Timing.EnergizeAt
	pen := 0.0
	for _, d := range [4]LandProfile{{-1, 0}, {1, 0}, {0, -1}, {0, 1}} {
		q := LandProfile{p.BrakeAt + lp.margin*d.BrakeAt, p.BrakeFor + lp.margin*d.BrakeFor}
		if !(q.BrakeAt > 0 && q.BrakeFor > 0) || q.BrakeAt+q.BrakeFor >= window {
			pen += landPenalty
			continue
		}
		nom, cs, err := lp.runAll(q)
		if err != nil {
			return 0, err
		}
		pen += lp.penalty(nom)
		for _, c := range cs {
			pen += lp.penalty(c)
		}
	}
	return pen, nil
}

// landPenalty weighs a constraint's violation against the objective (the
// impact speed over its unbraked value, of order 1): a violation must
// cost more than any speed it buys.
const landPenalty = 10

// penalty is a run's constraint violation: the pull-in time past the cap
// (over the cap), plus one for a drop-out; a plunger that did not seat
// counts as the whole energized time past the cap, plus one.
func (lp *landProblem) penalty(r LandRun) float64 {
	pen := 0.0
	switch {
	case !r.PullIn.Happened:
		window := lp.md.Timing.DeenergizeAt - lp.md.Timing.EnergizeAt
		pen = 1 + math.Max(0, window-lp.cap)/lp.cap
	case !WithinMax(r.PullIn.Seconds, lp.cap):
		pen = (r.PullIn.Seconds - lp.cap) / lp.cap
	}
	if r.DroppedOut {
		pen++
	}
	return landPenalty * pen
}

// feasible reports whether the nominal run and every corner meet the
// constraints.
func (lp *landProblem) feasible(nom LandRun, cs []LandRun) bool {
	ok := nom.Meets(lp.cap)
	for _, c := range cs {
		ok = ok && c.Meets(lp.cap)
	}
	return ok
}

// runAll simulates the brake p at the nominal point and at every corner,
// on lp.workers goroutines.
func (lp *landProblem) runAll(p LandProfile) (LandRun, []LandRun, error) {
	n := len(lp.corners)
	out := make([]LandRun, n+1)
	errs := make([]error, n+1)
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < min(lp.workers, n+1); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range jobs {
				out[k], errs[k] = lp.runSafe(p, k-1)
			}
		}()
	}
	for k := 0; k <= n; k++ {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	lp.sims += n + 1
	for k, err := range errs {
		if err != nil {
			what := "the nominal point"
			if k > 0 {
				what = "corner " + lp.corners[k-1].Label
			}
			return LandRun{}, nil, fmt.Errorf("coilkick: land: brake at %.4g ms for %.4g ms, %s: %w", 1e3*p.BrakeAt, 1e3*p.BrakeFor, what, err)
		}
	}
	return out[0], out[1:], nil
}

// runSafe is runOne with a panic in it (a bug) turned into the run's
// error, so that a worker goroutine cannot end the process (whose exit
// status would then be the runtime's 2, reserved for failing ratings).
func (lp *landProblem) runSafe(p LandProfile, k int) (lr LandRun, err error) {
	defer func() {
		if r := recover(); r != nil {
			lr, err = LandRun{}, fmt.Errorf("internal error (a bug in coilkick, not a fault of the input): %v", r)
		}
	}()
	if landRunHook != nil {
		landRunHook()
	}
	return lp.runOne(p, k)
}

// landRunHook, when set (by a test), runs at the start of every run.
var landRunHook func()

// runOne simulates the brake p at corner k (−1: the nominal point).
func (lp *landProblem) runOne(p LandProfile, k int) (LandRun, error) {
	md, opt := lp.md, lp.options(lp.md.Drive.Supply.Voltage, 0)
	if k >= 0 {
		md, _ = applyCorner(lp.md, lp.corners[k])
		opt = lp.options(md.Drive.Supply.Voltage*(1+lp.corners[k].Supply), lp.corners[k].Temperature)
	}
	v := *md
	v.Control = v.Control.WithBrake(p.BrakeAt, p.BrakeFor)
	r, err := Simulate(&v, opt)
	if err != nil {
		return LandRun{}, err
	}
	m := r.Metrics
	lr := LandRun{PullIn: m.PullIn, Bounces: m.Bounces, DroppedOut: m.DropOut.Happened}
	if m.PullIn.Happened {
		lr.ImpactSpeed = m.SeatImpactSpeed
		lr.ImpactEnergy = 0.5 * md.Plunger.Mass * m.SeatImpactSpeed * m.SeatImpactSpeed
	}
	return lr, nil
}

// YAML returns the brake as the drive section's keys, ready to paste into
// the scenario (times in ms to the nanosecond, trailing zeros dropped): the
// whole section for a constant drive, the two keys to add for a PWM.
func (p LandProfile) YAML(mode circuit.ControlMode) string {
	ms := func(v float64) string { return strconv.FormatFloat(math.Round(v*1e9)/1e6, 'f', -1, 64) + " ms" }
	head := "drive:\n  mode: constant\n"
	if mode != circuit.Constant {
		head = "drive:   # with the section's other keys (mode: " + mode.String() + ", frequency, duty...)\n"
	}
	return head + "  brake at: " + ms(p.BrakeAt) + "\n  brake for: " + ms(p.BrakeFor) + "\n"
}

// LandTraces simulates the nominal point with the scenario's drive and
// with the brake found (res.Before, res.After), keeping the traces (for
// the landing figure); the runs end at de-energize.
func LandTraces(md *Model, res *LandResult) (before, after *Result, err error) {
	lp := &landProblem{md: md}
	var out [2]*Result
	for k, p := range [...]LandProfile{res.Before, res.After} {
		v := *md
		v.Control = v.Control.WithBrake(p.BrakeAt, p.BrakeFor)
		opt := lp.options(md.Drive.Supply.Voltage, 0)
		opt.NoTrace = false
		if out[k], err = Simulate(&v, opt); err != nil {
			return nil, nil, fmt.Errorf("coilkick: land: the nominal run with brake at %.4g ms for %.4g ms: %w", 1e3*p.BrakeAt, 1e3*p.BrakeFor, err)
		}
	}
	return out[0], out[1], nil
}

// LandMargins say how far each time of the brake may move, alone, before
// some run misses the constraints: searched by doubling from
// LandResolution, then four bisections (within about 6 %). Happened false:
// no run failed with the brake moved as far as it can go (down to 0, or
// up to de-energize), and Seconds is that distance.
type LandMargins struct {
	AtEarlier, AtLater, ForShorter, ForLonger Interval
}

// margins searches the four margins of the brake p.
func (lp *landProblem) margins(p LandProfile) (*LandMargins, error) {
	var out [4]Interval
	for k, dir := range [4]LandProfile{{-1, 0}, {1, 0}, {0, -1}, {0, 1}} {
		ok := func(d float64) (bool, error) {
			q := LandProfile{p.BrakeAt + d*dir.BrakeAt, p.BrakeFor + d*dir.BrakeFor}
			if !(q.BrakeAt > 0 && q.BrakeFor > 0) || q.BrakeAt+q.BrakeFor >= lp.md.Timing.DeenergizeAt-lp.md.Timing.EnergizeAt {
				return false, nil
			}
			nom, cs, err := lp.runAll(q)
			return err == nil && lp.feasible(nom, cs), err
		}
		room := lp.md.Timing.DeenergizeAt - lp.md.Timing.EnergizeAt - p.BrakeAt - p.BrakeFor
		limit := [4]float64{p.BrakeAt, room, p.BrakeFor, room}[k] * (1 - 1e-9)
		m, err := landMargin(ok, limit)
		if err != nil {
			return nil, err
		}
		out[k] = m
	}
	return &LandMargins{out[0], out[1], out[2], out[3]}, nil
}

// landMargin is the largest step d (s) with ok(d) true: doubling from
// LandResolution up to limit (not Happened when ok holds there), then four
// bisections.
func landMargin(ok func(d float64) (bool, error), limit float64) (Interval, error) {
	good, bad := 0.0, LandResolution
	for {
		d := math.Min(bad, limit)
		fine, err := ok(d)
		if err != nil {
			return Interval{}, err
		}
		if !fine {
			bad = d
			break
		}
		if good = d; d >= limit {
			return Interval{Seconds: good}, nil
		}
		bad *= 2
	}
	for range 4 {
		mid := 0.5 * (good + bad)
		fine, err := ok(mid)
		if err != nil {
			return Interval{}, err
		}
		if fine {
			good = mid
		} else {
			bad = mid
		}
	}
	return Interval{Happened: true, Seconds: good}, nil
}
