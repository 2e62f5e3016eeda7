package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gopkg.in/yaml.v3"

	"coilkick/magnet"
)

// FitParam is a model parameter the fit may adjust.
type FitParam string

// Fit parameters and the scenario keys they write back to.
const (
	FitResistance       FitParam = "resistance"        // coil.resistance (at the reference temperature)
	FitClosedInductance FitParam = "closed inductance" // magnet.gap law.closed inductance
	FitOpenInductance   FitParam = "open inductance"   // magnet.gap law.open inductance
	FitPreload          FitParam = "spring preload"    // plunger.spring preload
	FitMass             FitParam = "mass"              // plunger.mass
	FitDamping          FitParam = "damping"           // plunger.damping
)

var fitKeys = map[FitParam]struct {
	path, unit string
	scale      float64 // SI per unit
}{
	FitResistance:       {"coil.resistance", "ohm", 1},
	FitClosedInductance: {"magnet.gap law.closed inductance", "mH", 1e-3},
	FitOpenInductance:   {"magnet.gap law.open inductance", "mH", 1e-3},
	FitPreload:          {"plunger.spring preload", "N", 1},
	FitMass:             {"plunger.mass", "g", 1e-3},
	FitDamping:          {"plunger.damping", "N*s/m", 1},
}

// FitParams lists the parameters a fit can adjust.
func FitParams() []FitParam {
	return []FitParam{FitResistance, FitClosedInductance, FitOpenInductance, FitPreload, FitMass, FitDamping}
}

// FitValue is one fitted parameter.
type FitValue struct {
	Param        FitParam
	Start, Value float64 // SI
	// StdErr (SI) is the 1σ uncertainty (see FitUncertaintyMethod); +Inf
	// when the trace does not determine the parameter (a singular
	// covariance).
	StdErr       float64
	Sensitivity  float64 // relative RMS-residual rise for a +1 % change of the parameter
	Unit         string  // of Display values
	DisplayScale float64
}

// FitUncertaintyMethod names how Fit computes its standard errors.
const FitUncertaintyMethod = "Gauss–Newton covariance with offset and alignment fitted as nuisance parameters, " +
	"inflated by (1+ρ)/(1−ρ) for residual autocorrelation ρ > 0"

// FitResult is the outcome of fitting a scenario to a measured trace.
type FitResult struct {
	Values      []FitValue
	RMSStart    float64 // A, RMS current error with the scenario's values (detected offset and alignment)
	RMS         float64 // A, after the fit
	Noise       float64 // A, the trace's noise before energizing (for comparison)
	Evaluations int     // simulations run
	Points      int     // trace samples compared
	Events      *TraceEvents
	// Shift (s): measured time + Shift = model time. It starts from the
	// detected energize instant and is fitted with the parameters, as is
	// the baseline Offset (A) removed from the measured current; both with
	// their 1σ errors.
	Shift, ShiftErr   float64
	Offset, OffsetErr float64
	// Energize, EnergizeErr (s): the energize command in trace time under
	// the fitted alignment, the model's energize time − Shift, ± ShiftErr.
	// It is the instant the fit used; the event detector's
	// Events.Energize, where the alignment search started, may lie
	// elsewhere (a threshold detector fooled by a baseline disturbance).
	Energize, EnergizeErr float64
	// ResidualSD (A) is the residual standard deviation s used for the
	// errors: √(SSE/(n − p)) with p the fitted parameters plus offset and
	// shift, but not below NoiseFloor (A), the model's own accuracy
	// (FitNoiseFloor × the peak current); FloorUsed says the floor applied
	// (a noiseless trace, such as coilkick's own output).
	ResidualSD, NoiseFloor float64
	FloorUsed              bool
	// Autocorrelation is the lag-1 autocorrelation ρ of the residuals on
	// the fit grid; Inflation the variance factor applied for it.
	Autocorrelation, Inflation float64
	// Overlay: measured (offset removed) and simulated current on the fit grid.
	Time, Measured, Simulated []float64
	SeatModel                 Interval // model's pull-in (seat) instant, from its energize command
	// NoiseRef (A) is the noise the residual is judged against: the
	// largest of the trace's noise before energizing (Noise), its
	// sample-to-sample noise over the whole record (DiffNoise, uniformly
	// sampled records only), the rounding noise of its resolution
	// (Quantum/√12) and NoiseFloor. Quantum (A) is the smallest step
	// between successive current samples.
	NoiseRef, DiffNoise, Quantum float64
	// Warnings are shown to the user, not fatal: an alignment near the
	// edge of its search range.
	Warnings []string
	// Failure gives the reasons the fit failed (FitResidualLimit, a
	// quantity the trace does not determine, the alignment at the edge of
	// its search), and hints at the cause (a unit in the trace's header);
	// empty for a good fit. A failed result is returned with an error
	// wrapping ErrFitFailed, for inspection; its values must not be used
	// as a calibration.
	Failure []string
}

// Failed reports whether the fit failed (see FitResult.Failure).
func (fr *FitResult) Failed() bool { return len(fr.Failure) > 0 }

// ErrFitFailed is wrapped by the error Fit returns with a failed result.
var ErrFitFailed = errors.New("the fit failed")

// FitResidualLimit is the failure criterion on the residual: a fit whose
// RMS residual exceeds this multiple of the trace's noise (NoiseRef) has
// not found a model that follows the trace, and fails. With a model that
// explains the trace the RMS residual is about the noise: over the 30
// seeds of TestFitCoverage (white noise) RMS/NoiseRef lies between 0.57
// and 1.02, over those of TestFitCoverageCorrelatedNoise (a band-limited
// probe, whose short baseline underestimates the noise) between 0.71 and
// 2.9 (0.57–1.03 and 0.71–2.9 over the 50 seeds they used before). 5
// keeps a margin of 1.7 over the worst of those and allows a systematic
// model error of up to √(5²−1) ≈ 4.9 noise σ RMS, while a wrong unit in
// the trace's header leaves some 50 times the noise (time in µs on
// millisecond data, current in A on milliampere data:
// TestFitFailsOnWrongUnits). The value is common practice, no source.
const FitResidualLimit = 5

// setFit writes parameter p = v into a copy of the model.
func setFit(md *Model, p FitParam, v float64) error {
	switch p {
	case FitResistance:
		md.Coil.Resistance = v
	case FitClosedInductance, FitOpenInductance:
		gl, ok := md.Magnet.(*magnet.GapLaw)
		if !ok {
			return fmt.Errorf("coilkick: fitting %s needs a gap-law magnet", p)
		}
		if gl.MagnetMMF() != 0 {
			return fmt.Errorf("coilkick: fitting %s of a gap law with a permanent magnet (magnet.gap law.magnet mmf or holding force) is not yet supported", p)
		}
		lc, lo := gl.Inductance(md.Plunger.GapMin), gl.Inductance(md.Plunger.GapMax)
		if p == FitClosedInductance {
			lc = v
		} else {
			lo = v
		}
		ng, err := magnet.NewGapLaw(lc, lo, md.Plunger.GapMin, md.Plunger.GapMax)
		if err != nil {
			return err
		}
		md.Magnet = ng
	case FitPreload:
		md.Plunger.Spring.Preload = v
	case FitMass:
		md.Plunger.Mass = v
	case FitDamping:
		md.Plunger.Damping = v
	default:
		return fmt.Errorf("coilkick: unknown fit parameter %q", p)
	}
	return nil
}

func getFit(md *Model, p FitParam) (float64, error) {
	switch p {
	case FitResistance:
		return md.Coil.Resistance, nil
	case FitClosedInductance, FitOpenInductance:
		gl, ok := md.Magnet.(*magnet.GapLaw)
		if !ok {
			return 0, fmt.Errorf("coilkick: fitting %s needs a gap-law magnet", p)
		}
		if p == FitClosedInductance {
			return gl.Inductance(md.Plunger.GapMin), nil
		}
		return gl.Inductance(md.Plunger.GapMax), nil
	case FitPreload:
		return md.Plunger.Spring.Preload, nil
	case FitMass:
		return md.Plunger.Mass, nil
	case FitDamping:
		return md.Plunger.Damping, nil
	}
	return 0, fmt.Errorf("coilkick: unknown fit parameter %q", p)
}

// FitMaxPoints bounds the number of trace points the objective compares.
const FitMaxPoints = 1500

// FitNoiseFloor is the smallest residual standard deviation Fit assumes,
// as a fraction of the peak measured current: a stand-in for the
// simulator's own accuracy when the trace has no noise. Fitting
// coilkick's own run CSV (TestFitRoundTripRunCSV) leaves an RMS residual
// of 1.4e-9 of the peak current at the default relative tolerance 1e-8;
// the floor keeps a wide margin over that (a scenario may set a looser
// tolerance) and lies far below any bench noise (one step of a 12-bit
// scope is 2.4e-4 of full scale). The choice is common practice, no
// source; without it a noiseless trace would get an error bar of
// round-off size, and "± 0" once printed.
const FitNoiseFloor = 1e-6

// errShiftRange marks a trial alignment outside the searched window.
var errShiftRange = errors.New("coilkick: alignment outside the searched window")

// Fit adjusts the chosen parameters of the model so that its simulated
// coil current matches the measured trace in the least-squares sense.
//
// The unknowns are the parameters (on their logarithms), the time
// alignment of the trace (starting from its detected energize instant and
// searched within ±max(4 σ of that instant, 4 sample steps)) and the
// trace's baseline offset (linear, so it is solved exactly for every
// trial: the mean of measured minus simulated current over the whole
// record, before energizing and after the decay included). Samples before
// the model's time 0 are compared with zero current: the model starts at
// rest, de-energized. The minimum is found by Nelder–Mead (gonum/optimize;
// it copes with the kinks where events move), then polished by
// Gauss–Newton steps that are kept only when they lower the squared error.
//
// Uncertainties (FitUncertaintyMethod): the Gauss–Newton covariance
// s²·(JᵀJ)⁻¹ at the optimum (J by central differences, one column per
// parameter plus the alignment and the offset, so that their
// uncertainties and correlations with the parameters are carried:
// Bates & Watts, Nonlinear Regression Analysis, ch. 2), with
// s² = SSE/(n − p), s no smaller than FitNoiseFloor × peak current, and
// the variance multiplied by (1+ρ)/(1−ρ) when the residuals' lag-1
// autocorrelation ρ is positive: the variance factor of a mean of a
// first-order autoregressive series, n_eff = n·(1−ρ)/(1+ρ) (e.g. Wilks,
// Statistical Methods in the Atmospheric Sciences, "effective sample
// size"; cited from memory). For a regressor that is itself correlated
// the exact factor is smaller, so this errs on the safe side; it matters
// for real traces with model mismatch or a band-limited probe, and is
// ≈ 1 for white noise.
func Fit(md *Model, tr *MeasuredTrace, params []FitParam) (*FitResult, error) {
	if len(params) == 0 {
		return nil, errors.New("coilkick: choose at least one parameter to fit")
	}
	ev, err := DetectEvents(tr)
	if err != nil {
		return nil, err
	}
	fp, err := newFitProblem(md, tr, params, ev)
	if err != nil {
		return nil, err
	}
	res := &FitResult{Events: ev, Noise: ev.Noise, Shift: fp.shift0, Offset: ev.Offset, Points: len(fp.grid)}
	x0, err := fp.startPoint()
	if err != nil {
		return nil, err
	}
	fp.evaluations++
	sim, err := fp.simulate(x0)
	if err != nil {
		return nil, err
	}
	res.RMSStart = math.Sqrt(fp.sseOf(sim, ev.Offset) / float64(len(fp.grid)))
	x, err := fp.minimize(x0)
	if err != nil {
		return nil, err
	}
	f, err := fp.record(res, x)
	if err != nil {
		return nil, err
	}
	fp.uncertainties(res, x, f)
	res.Energize, res.EnergizeErr = md.Timing.EnergizeAt-res.Shift, res.ShiftErr
	res.Evaluations = fp.evaluations
	// The fitted model's seat instant.
	v := *md
	for k, p := range params {
		setFit(&v, p, math.Exp(x[k]))
	}
	if r, err := Simulate(&v, &Options{NoTrace: true}); err == nil {
		res.SeatModel = r.Metrics.PullIn
	}
	judgeResidual(res, md, tr, ev)
	if res.Failed() {
		where := tr.Source
		if tr.HeaderLine > 0 {
			where = fmt.Sprintf("%s:%d", tr.Source, tr.HeaderLine)
		}
		return res, fmt.Errorf("%s: %w: %s", where, ErrFitFailed, strings.Join(res.Failure, "; "))
	}
	return res, nil
}

// fitProblem is one fit's measured samples on the fit grid and its trial
// simulations. A trial is x = (ln p₁ … ln pₘ, u): the parameters on their
// logarithms and the alignment correction δ = u·tau.
type fitProblem struct {
	md     *Model
	params []FitParam
	start  []float64 // the parameters' starting values (SI)
	// shift0 (s) is the detected alignment (measured time + shift0 =
	// model time), window (s) the half-width of the alignment's search
	// about it, dt (s) the trace's sample step, tau (s) the alignment per
	// unit of u.
	shift0, window, dt, tau float64
	grid, raw               []float64 // model time at shift0 (s), measured current (A)
	peak                    float64   // A, the largest |measured − detected offset| on the grid
	hs                      []float64 // the central-difference steps of x for the Jacobian
	times                   []float64 // a trial's sample times (reused)
	evaluations             int       // simulations counted in FitResult.Evaluations
	jacErr                  error     // why the last Jacobian could not be made
	// The last trial of sse and the last Jacobian made, with their x, for
	// reuse (a simulation is deterministic).
	lastX, lastSim []float64
	jacX           []float64
	jac            *mat.Dense
}

// newFitProblem sets up the fit grid (the measured samples inside the
// model's run, kept away from its end by the search window, thinned to
// FitMaxPoints), the alignment's search window and the starting values.
func newFitProblem(md *Model, tr *MeasuredTrace, params []FitParam, ev *TraceEvents) (*fitProblem, error) {
	dt := ev.Step
	fp := &fitProblem{md: md, params: params, shift0: md.Timing.EnergizeAt - ev.Energize, dt: dt}
	// The alignment search range about the detected energize instant:
	// wide, because a threshold detector can be fooled by slow noise
	// (TestFitCoverageCorrelatedNoise had a 0.4 ms miss). Capped at 1000
	// samples so that the alignment scan stays bounded whatever the
	// detector returned.
	fp.window = math.Min(math.Max(4*ev.EnergizeErr, 40*dt), 1000*dt)
	stride := max(1, len(tr.Time)/FitMaxPoints)
	for k := 0; k < len(tr.Time); k += stride {
		tm := tr.Time[k] + fp.shift0
		if tm > md.Timing.End-fp.window {
			break
		}
		fp.grid, fp.raw = append(fp.grid, tm), append(fp.raw, tr.Current[k])
		fp.peak = math.Max(fp.peak, math.Abs(tr.Current[k]-ev.Offset))
	}
	n, m := len(fp.grid), len(params)
	if n < 20 || fp.grid[n-1] < md.Timing.EnergizeAt {
		return nil, errors.New("coilkick: the trace and the scenario's timing overlap in fewer than 20 samples after energizing")
	}
	if n < m+3 {
		return nil, fmt.Errorf("coilkick: %d trace samples cannot determine %d parameters with offset and alignment", n, m)
	}
	fp.start = make([]float64, m)
	for k, p := range params {
		v, err := getFit(md, p)
		if err != nil {
			return nil, err
		}
		if !(v > 0) {
			return nil, fmt.Errorf("coilkick: %s must start from a positive value to be fitted", p)
		}
		fp.start[k] = v
	}
	// tau makes Nelder–Mead's first simplex step (0.05) one sample step.
	fp.tau = 20 * dt
	fp.hs = make([]float64, m+1)
	for k := range fp.hs {
		fp.hs[k] = 1e-3
	}
	fp.hs[m] = 0.1 * dt / fp.tau // a tenth of a sample step
	fp.times = make([]float64, 0, n)
	return fp, nil
}

// model returns a copy of the model with the parameters of x.
func (fp *fitProblem) model(x []float64) (*Model, error) {
	v := *fp.md
	for k, p := range fp.params {
		if err := setFit(&v, p, math.Exp(x[k])); err != nil {
			return nil, err
		}
	}
	return &v, nil
}

// simulate returns the model current on the grid for x.
func (fp *fitProblem) simulate(x []float64) ([]float64, error) {
	v, err := fp.model(x)
	if err != nil {
		return nil, err
	}
	delta := x[len(fp.params)] * fp.tau
	if !(math.Abs(delta) <= fp.window) {
		return nil, errShiftRange
	}
	n := len(fp.grid)
	first := 0 // grid points before model time 0 see the coil at rest
	for first < n && fp.grid[first]+delta < 0 {
		first++
	}
	fp.times = fp.times[:0]
	for _, t := range fp.grid[first:] {
		fp.times = append(fp.times, t+delta)
	}
	r, err := Simulate(v, &Options{NoTrace: true, SampleTimes: fp.times})
	if err != nil {
		return nil, err
	}
	if len(r.Samples) != len(fp.times) {
		return nil, fmt.Errorf("coilkick: fit: %d samples simulated, %d asked", len(r.Samples), len(fp.times))
	}
	sim := make([]float64, n)
	copy(sim[first:], r.Samples)
	return sim, nil
}

// offset returns the least-squares baseline offset (A) for a simulation.
func (fp *fitProblem) offset(sim []float64) float64 {
	s := 0.0
	for k := range sim {
		s += fp.raw[k] - sim[k]
	}
	return s / float64(len(fp.grid))
}

// sseOf returns the squared error (A²) of a simulation with offset b.
func (fp *fitProblem) sseOf(sim []float64, b float64) float64 {
	s := 0.0
	for k := range sim {
		d := fp.raw[k] - b - sim[k]
		s += d * d
	}
	return s
}

// sse is the objective: the squared error at x with its best offset,
// +Inf when the trial fails.
func (fp *fitProblem) sse(x []float64) float64 {
	fp.evaluations++
	sim, err := fp.simulate(x)
	if err != nil {
		return math.Inf(1)
	}
	fp.lastX, fp.lastSim = append(fp.lastX[:0], x...), sim
	return fp.sseOf(sim, fp.offset(sim))
}

// simulated returns the model current on the grid for x, reusing the last
// trial of sse when it was at x.
func (fp *fitProblem) simulated(x []float64) ([]float64, error) {
	if fp.lastSim != nil && slices.Equal(x, fp.lastX) {
		return fp.lastSim, nil
	}
	return fp.simulate(x)
}

// startPoint returns x at the starting parameters with the coarse
// alignment: the least-squares alignment over the whole window in steps
// of half a sample, from one simulation on a fine grid.
func (fp *fitProblem) startPoint() ([]float64, error) {
	m := len(fp.params)
	x0 := make([]float64, m+1)
	for k, v := range fp.start {
		x0[k] = math.Log(v)
	}
	delta, err := coarseAlignment(fp.md, fp.grid, fp.raw, fp.window, fp.dt/2)
	if err != nil {
		return nil, err
	}
	x0[m] = delta / fp.tau
	return x0, nil
}

// minimize finds the least-squares x from x0: Nelder–Mead, then the
// Gauss–Newton polish.
func (fp *fitProblem) minimize(x0 []float64) ([]float64, error) {
	prob := optimize.Problem{Func: fp.sse}
	settings := &optimize.Settings{FuncEvaluations: 3000, Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-6, Iterations: 30}}
	out, err := optimize.Minimize(prob, x0, settings, &optimize.NelderMead{})
	if out == nil || math.IsInf(out.F, 0) {
		return nil, fmt.Errorf("coilkick: fit: no trial simulation matched the trace (%v)", err)
	}
	return fp.polish(out.X, out.F), nil
}

// polish takes Gauss–Newton steps from x (squared error f): the
// least-squares step of the linearised problem, halved until it lowers
// the squared error.
func (fp *fitProblem) polish(x []float64, f float64) []float64 {
	n, m := len(fp.grid), len(fp.params)
	for it := 0; it < 8; it++ {
		sim, err := fp.simulated(x)
		if err != nil {
			break
		}
		b := fp.offset(sim)
		J, ok := fp.jacobian(x)
		if !ok {
			break
		}
		r := mat.NewVecDense(n, nil)
		for j := range sim {
			r.SetVec(j, fp.raw[j]-b-sim[j])
		}
		var step mat.VecDense
		if err := step.SolveVec(J, r); err != nil {
			break
		}
		better := false
		for lambda := 1.0; lambda > 1.0/32; lambda /= 2 {
			xt := append([]float64(nil), x...)
			for k := 0; k <= m; k++ {
				xt[k] += lambda * step.AtVec(k)
			}
			if ft := fp.sse(xt); ft < f {
				better = f-ft > 1e-9*f
				x, f = xt, ft
				break
			}
		}
		if !better {
			break
		}
	}
	return x
}

// jacobian returns J at x: ∂(simulated current)/∂x for the parameters
// (ln p) and u by central differences, then the offset (a column of
// ones); false (and fp.jacErr) when a trial failed.
func (fp *fitProblem) jacobian(x []float64) (*mat.Dense, bool) {
	if fp.jac != nil && slices.Equal(x, fp.jacX) {
		return fp.jac, true
	}
	n, m := len(fp.grid), len(fp.params)
	J := mat.NewDense(n, m+2, nil)
	for k := 0; k <= m; k++ {
		xp := append([]float64(nil), x...)
		xm := append([]float64(nil), x...)
		xp[k] += fp.hs[k]
		xm[k] -= fp.hs[k]
		fp.evaluations += 2
		sp, err1 := fp.simulate(xp)
		sm, err2 := fp.simulate(xm)
		if fp.jacErr = errors.Join(err1, err2); fp.jacErr != nil {
			return nil, false
		}
		for j := range sp {
			J.Set(j, k, (sp[j]-sm[j])/(2*fp.hs[k]))
		}
	}
	for j := 0; j < n; j++ {
		J.Set(j, m+1, 1)
	}
	fp.jacX, fp.jac = append(fp.jacX[:0], x...), J
	return J, true
}

// record fills res with the fit at x (the RMS residual, the overlay, the
// offset and alignment, the residual scale with its floor and the
// autocorrelation inflation) and returns the squared error (A²).
func (fp *fitProblem) record(res *FitResult, x []float64) (float64, error) {
	n, m := len(fp.grid), len(fp.params)
	sim, err := fp.simulated(x)
	if err != nil {
		return 0, err
	}
	b := fp.offset(sim)
	f := fp.sseOf(sim, b)
	res.RMS = math.Sqrt(f / float64(n))
	res.Simulated = sim
	res.Offset = b
	res.Shift = fp.shift0 + x[m]*fp.tau
	for k := range fp.grid {
		res.Time = append(res.Time, fp.grid[k]+x[m]*fp.tau)
		res.Measured = append(res.Measured, fp.raw[k]-b)
	}
	// Residual scale, its floor and the autocorrelation inflation.
	dof := float64(n - (m + 2))
	res.NoiseFloor = FitNoiseFloor * fp.peak
	res.ResidualSD = math.Sqrt(f / dof)
	if !(res.ResidualSD > res.NoiseFloor) {
		res.ResidualSD, res.FloorUsed = res.NoiseFloor, true
	}
	var r0, r1 float64
	for k := range sim {
		d := fp.raw[k] - b - sim[k]
		r0 += d * d
		if k > 0 {
			r1 += d * (fp.raw[k-1] - b - sim[k-1])
		}
	}
	res.Inflation = 1
	if r0 > 0 {
		res.Autocorrelation = r1 / r0
		if rho := math.Min(res.Autocorrelation, 0.99); rho > 0 {
			res.Inflation = (1 + rho) / (1 - rho)
		}
	}
	return f, nil
}

// uncertainties computes the covariance at x (squared error f) and fills
// in the alignment's and offset's errors and the fitted values with their
// errors and sensitivities, recording the failures: the alignment at the
// edge of its search, a failed trial next to the optimum, a singular
// covariance, a 1σ above the value, a value run off.
func (fp *fitProblem) uncertainties(res *FitResult, x []float64, f float64) {
	m := len(fp.params)
	atEdge := fp.checkAlignment(res, x[m]*fp.tau)
	var cov *mat.Dense
	var null []float64
	J, jacOK := fp.jacobian(x)
	if jacOK {
		cov, null = covariance(J, res.ResidualSD*res.ResidualSD*res.Inflation)
	}
	switch {
	case !jacOK && !(atEdge && errors.Is(fp.jacErr, errShiftRange)):
		why, _, _ := strings.Cut(strings.TrimPrefix(fp.jacErr.Error(), "coilkick: "), "\n")
		res.Failure = append(res.Failure, fmt.Sprintf("the uncertainties cannot be computed: a trial next to the optimum failed (%s)", why))
	case jacOK && cov == nil:
		what := "every fitted quantity"
		if names := nullNames(null, fp.quantities()); names != "" {
			what = names
		}
		res.Failure = append(res.Failure, fmt.Sprintf("the trace does not determine %s (singular covariance): fit fewer parameters", what))
	}
	stdErr := func(k int) float64 {
		if cov == nil {
			return math.Inf(1)
		}
		return math.Sqrt(cov.At(k, k))
	}
	res.ShiftErr = fp.tau * stdErr(m)
	res.OffsetErr = stdErr(m + 1)
	base := math.Max(f, float64(len(fp.grid))*res.NoiseFloor*res.NoiseFloor) // no division by a vanishing residual
	for k, p := range fp.params {
		v := math.Exp(x[k])
		fk := fitKeys[p]
		fv := FitValue{Param: p, Start: fp.start[k], Value: v, Unit: fk.unit, DisplayScale: fk.scale}
		fv.StdErr = v * stdErr(k) // d p = p · d ln p
		xp := append([]float64(nil), x...)
		xp[k] += math.Log(1.01)
		if f := fp.sse(xp); base > 0 && !math.IsInf(f, 0) {
			fv.Sensitivity = math.Sqrt(f/base) - 1
		}
		res.Values = append(res.Values, fv)
		if rel := stdErr(k); cov != nil && !(rel <= 1) {
			res.Failure = append(res.Failure, fmt.Sprintf("the trace does not determine %s: its 1σ is %.2g times its value", p, rel))
		}
		if !isFinite(v) {
			res.Failure = append(res.Failure, fmt.Sprintf("%s ran off to %g", p, v))
		}
	}
}

// checkAlignment records a failure when the fitted alignment correction
// d (s) ran to the edge of its search, and a warning near it; it reports
// the edge.
func (fp *fitProblem) checkAlignment(res *FitResult, d float64) (atEdge bool) {
	switch {
	case math.Abs(d) > 0.98*fp.window:
		res.Failure = append(res.Failure, fmt.Sprintf("the time alignment ran to the edge of its search, %s from the detected energize instant (±%s): check the trace's energize edge and the scenario's timing", siText(d, "s"), siText(fp.window, "s")))
		return true
	case math.Abs(d) > 0.9*fp.window:
		res.Warnings = append(res.Warnings, fmt.Sprintf("the time alignment moved %s from the detected energize instant, near the edge of its ±%s search: check the trace's energize edge and the scenario's timing", siText(d, "s"), siText(fp.window, "s")))
	}
	return false
}

// quantities names the columns of the Jacobian, for messages.
func (fp *fitProblem) quantities() []string {
	q := make([]string, 0, len(fp.params)+2)
	for _, p := range fp.params {
		q = append(q, string(p))
	}
	return append(q, "time alignment", "baseline offset")
}

// judgeResidual sets the noise the residual is judged against and, when
// the RMS residual exceeds FitResidualLimit times it, records the failure
// (first: the most telling reason) with hints at a wrong unit.
func judgeResidual(res *FitResult, md *Model, tr *MeasuredTrace, ev *TraceEvents) {
	res.Quantum = currentQuantum(tr.Current)
	if tr.Uniform() {
		res.DiffNoise = differenceNoise(tr.Current)
	}
	res.NoiseRef = max(ev.Noise, res.DiffNoise, res.Quantum/math.Sqrt(12), res.NoiseFloor)
	if !(res.RMS <= FitResidualLimit*res.NoiseRef) {
		res.Failure = append([]string{fmt.Sprintf("the RMS residual %s is %.3g times the trace's noise %s (a fit fails above %d times): the model does not follow the trace",
			siText(res.RMS, "A"), res.RMS/res.NoiseRef, siText(res.NoiseRef, "A"), FitResidualLimit)}, res.Failure...)
		res.Failure = append(res.Failure, unitHints(md, tr, ev)...)
	}
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// siText formats v (in unit) with an engineering prefix and 3 significant
// digits for messages: siText(0.00763, "s") = "7.63 ms".
func siText(v float64, unit string) string {
	a := math.Abs(v)
	if v == 0 || !isFinite(v) || a >= 1e12 || a < 1e-12 {
		return strconv.FormatFloat(v, 'g', 3, 64) + " " + unit
	}
	for _, p := range []struct {
		p string
		f float64
	}{{"G", 1e9}, {"M", 1e6}, {"k", 1e3}, {"", 1}, {"m", 1e-3}, {"µ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}} {
		if a >= p.f*0.9995 || p.p == "p" {
			return strconv.FormatFloat(v/p.f, 'g', 3, 64) + " " + p.p + unit
		}
	}
	return strconv.FormatFloat(v, 'g', 3, 64) + " " + unit
}

// currentQuantum returns the smallest nonzero step between successive
// samples (A): the resolution of a quantised record, whose rounding
// alone leaves a residual of Quantum/√12 (uniform rounding error).
func currentQuantum(i []float64) float64 {
	q := math.Inf(1)
	for k := 1; k < len(i); k++ {
		if d := math.Abs(i[k] - i[k-1]); d > 0 && d < q {
			q = d
		}
	}
	if math.IsInf(q, 0) {
		return 0
	}
	return q
}

// differenceNoise estimates the noise σ (A) of a uniformly sampled record
// from all its samples: the median absolute second difference
// |i[k+1] − 2·i[k] + i[k−1]|, which for white noise of σ is Gaussian with
// σ·√6, divided by 0.6745·√6 (the median of |N(0,1)| is 0.6745). A smooth
// signal adds little (its second difference is d²i/dt²·Δt²), and the median
// ignores the few samples at a kink. The baseline before energizing can
// be short (10 samples at 10 kHz with 1 ms before energizing), so its σ
// alone scatters by 22 %; this uses the whole record. Robust scale
// estimation by the median absolute deviation: Hampel, J. Am. Stat.
// Assoc. 69 (1974); the difference form is common practice, no source.
func differenceNoise(i []float64) float64 {
	if len(i) < 3 {
		return 0
	}
	d := make([]float64, len(i)-2)
	for k := range d {
		d[k] = math.Abs(i[k+2] - 2*i[k+1] + i[k])
	}
	sort.Float64s(d)
	return d[len(d)/2] / (0.6745 * math.Sqrt(6))
}

// unitHints says where a failed fit's trace differs from the model by a
// large factor in current or in time (a wrong unit in the header names
// mA data "A", or millisecond data "us"), naming the columns and their
// units. The model runs with the scenario's own values.
func unitHints(md *Model, tr *MeasuredTrace, ev *TraceEvents) []string {
	col := map[string]string{"time": "the time column", "current": "the current column"}
	for _, c := range tr.Columns {
		col[c.Quantity] = fmt.Sprintf("%s (unit %s)", c, quoteCell(c.Unit))
	}
	hints := []string{}
	r, err := Simulate(md, &Options{NoTrace: true})
	far := func(ratio float64) bool { return ratio > 3 || ratio < 1.0/3 }
	if err == nil {
		peak := 0.0
		for _, i := range tr.Current {
			peak = math.Max(peak, math.Abs(i-ev.Offset))
		}
		if ratio := peak / r.Metrics.PeakCurrent; r.Metrics.PeakCurrent > 0 && far(ratio) {
			hints = append(hints, fmt.Sprintf("the trace's peak current %s is %.3g times the scenario's %s: check the unit of %s", siText(peak, "A"), ratio, siText(r.Metrics.PeakCurrent, "A"), col["current"]))
		}
		if pi := r.Metrics.PullIn; ev.HasDip && pi.Happened && pi.Seconds > 0 {
			if ratio := (ev.Seat - ev.Energize) / pi.Seconds; far(ratio) {
				hints = append(hints, fmt.Sprintf("the trace's pull-in dip comes %s after energizing, the scenario pulls in after %s (%.3g times): check the unit of %s", siText(ev.Seat-ev.Energize, "s"), siText(pi.Seconds, "s"), ratio, col["time"]))
			}
		}
	}
	hints = append(hints, fmt.Sprintf("check the units in the trace's header: %s and %s", col["time"], col["current"]))
	return hints
}

// coarseAlignment returns the alignment correction δ (s), a multiple of
// step within ±window, that minimises the squared difference between
// raw (A) at model times grid+δ and the model's current, the offset
// removed by least squares.
func coarseAlignment(md *Model, grid, raw []float64, window, step float64) (float64, error) {
	lo := math.Max(0, grid[0]-window)
	hi := grid[len(grid)-1] + window
	nf := int(math.Ceil((hi-lo)/step)) + 1
	fine := make([]float64, nf)
	for k := range fine {
		fine[k] = math.Min(lo+float64(k)*step, md.Timing.End)
	}
	r, err := Simulate(md, &Options{NoTrace: true, SampleTimes: fine})
	if err != nil {
		return 0, err
	}
	if len(r.Samples) != nf {
		return 0, fmt.Errorf("coilkick: fit: %d samples simulated, %d asked", len(r.Samples), nf)
	}
	at := func(t float64) float64 { // the model current at t (zero before 0)
		if t < 0 {
			return 0
		}
		x := (t - lo) / step
		k := min(max(int(x), 0), nf-2)
		w := x - float64(k)
		return r.Samples[k] + w*(r.Samples[k+1]-r.Samples[k])
	}
	best, bestF := 0.0, math.Inf(1)
	nw := int(window / step)
	for j := -nw; j <= nw; j++ {
		delta := float64(j) * step
		var sd, sdd float64
		for k, t := range grid {
			d := raw[k] - at(t+delta)
			sd, sdd = sd+d, sdd+d*d
		}
		if f := sdd - sd*sd/float64(len(grid)); f < bestF {
			best, bestF = delta, f
		}
	}
	return best, nil
}

// covariance returns scale·(JᵀJ)⁻¹, or nil when JᵀJ is singular or a
// variance is not positive; then null is the direction (over the columns
// of J) that the data determine least: a column of zeros, or the
// eigenvector of the smallest eigenvalue. The columns are normalised
// first so that the inverse is well conditioned whatever their units.
func covariance(J *mat.Dense, scale float64) (cov *mat.Dense, null []float64) {
	n, c := J.Dims()
	norm := make([]float64, c)
	Js := mat.NewDense(n, c, nil)
	for k := 0; k < c; k++ {
		col := mat.Col(nil, k, J)
		norm[k] = floats.Norm(col, 2)
		if !(norm[k] > 0) || math.IsInf(norm[k], 0) {
			null = make([]float64, c)
			null[k] = 1
			return nil, null
		}
		for j := range col {
			Js.Set(j, k, col[j]/norm[k])
		}
	}
	var a mat.SymDense
	a.SymOuterK(1, Js.T())
	weakest := func() []float64 {
		var es mat.EigenSym
		if !es.Factorize(&a, true) {
			return nil
		}
		var ev mat.Dense
		es.VectorsTo(&ev)
		return mat.Col(nil, 0, &ev) // eigenvalues ascend
	}
	var ch mat.Cholesky
	if !ch.Factorize(&a) {
		return nil, weakest()
	}
	if cond := ch.Cond(); !(cond < 1e14) {
		return nil, weakest()
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, weakest()
	}
	cov = mat.NewDense(c, c, nil)
	for i := 0; i < c; i++ {
		for k := 0; k < c; k++ {
			cov.Set(i, k, scale*inv.At(i, k)/(norm[i]*norm[k]))
		}
		if v := cov.At(i, i); !(v > 0) || math.IsInf(v, 0) {
			null = make([]float64, c)
			null[i] = 1
			return nil, null
		}
	}
	return cov, nil
}

// nullNames names the quantities that take part in a direction the data
// do not determine (components of at least 0.3 in magnitude, largest
// first): "open inductance and mass".
func nullNames(null []float64, quantities []string) string {
	if len(null) != len(quantities) {
		return ""
	}
	idx := make([]int, len(null))
	for k := range idx {
		idx[k] = k
	}
	sort.SliceStable(idx, func(a, b int) bool { return math.Abs(null[idx[a]]) > math.Abs(null[idx[b]]) })
	var names []string
	for _, k := range idx {
		if math.Abs(null[k]) >= 0.3 {
			names = append(names, quantities[k])
		}
	}
	switch len(names) {
	case 0:
		return ""
	case 1:
		return names[0]
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1] + " apart"
}

// WriteFitted writes the scenario file at path with the fitted values
// replaced (as text with units), to out.
func WriteFitted(path string, fr *FitResult) ([]byte, error) {
	data, err := ReadInput(path, "scenario", MaxScenarioBytes)
	if err != nil {
		return nil, err
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, err
	}
	root := doc.Content[0]
	for _, v := range fr.Values {
		fk := fitKeys[v.Param]
		text := strconv.FormatFloat(v.Value/fk.scale, 'g', 5, 64) + " " + fk.unit
		if err := setPath(root, strings.Split(fk.path, "."), text); err != nil {
			return nil, fmt.Errorf("coilkick: writing %s: %v", fk.path, err)
		}
	}
	var buf bytes.Buffer
	buf.WriteString("# Fitted by coilkick to a measured trace; values below replace the originals.\n")
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(&doc); err != nil {
		return nil, err
	}
	// The written file must load.
	if _, err := Parse(buf.Bytes(), path); err != nil {
		return nil, fmt.Errorf("coilkick: the fitted scenario does not load: %v", err)
	}
	return buf.Bytes(), nil
}
