package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
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
	// Warnings are shown to the user, not fatal: an alignment at the edge
	// of its search range, uncertainties the trace does not determine.
	Warnings []string
}

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
	shift0 := md.Timing.EnergizeAt - ev.Energize
	dt := ev.Step
	// s, the alignment search range about the detected energize instant:
	// wide, because a threshold detector can be fooled by slow noise
	// (TestFitCoverageCorrelatedNoise had a 0.4 ms miss).
	window := math.Max(4*ev.EnergizeErr, 40*dt)
	res := &FitResult{Events: ev, Noise: ev.Noise, Shift: shift0, Offset: ev.Offset}
	// The fit grid: the measured samples inside the model's run (kept
	// away from its end by the search window), thinned.
	stride := max(1, len(tr.Time)/FitMaxPoints)
	var grid, raw []float64 // model time at shift0 (s), measured current (A)
	peak := 0.0
	for k := 0; k < len(tr.Time); k += stride {
		tm := tr.Time[k] + shift0
		if tm > md.Timing.End-window {
			break
		}
		grid, raw = append(grid, tm), append(raw, tr.Current[k])
		peak = math.Max(peak, math.Abs(tr.Current[k]-ev.Offset))
	}
	if len(grid) < 20 || grid[len(grid)-1] < md.Timing.EnergizeAt {
		return nil, errors.New("coilkick: the trace and the scenario's timing overlap in fewer than 20 samples after energizing")
	}
	n, m := len(grid), len(params)
	res.Points = n
	if n < m+3 {
		return nil, fmt.Errorf("coilkick: %d trace samples cannot determine %d parameters with offset and alignment", n, m)
	}
	start := make([]float64, m)
	for k, p := range params {
		v, err := getFit(md, p)
		if err != nil {
			return nil, err
		}
		if !(v > 0) {
			return nil, fmt.Errorf("coilkick: %s must start from a positive value to be fitted", p)
		}
		start[k] = v
	}
	// x = (ln p₁ … ln pₘ, u) with the alignment correction δ = u·tau; tau
	// makes Nelder–Mead's first simplex step (0.05) one sample step.
	tau := 20 * dt
	times := make([]float64, 0, n)
	// simulate returns the model current on the grid for x.
	simulate := func(x []float64) ([]float64, error) {
		v := *md
		for k, p := range params {
			if err := setFit(&v, p, math.Exp(x[k])); err != nil {
				return nil, err
			}
		}
		delta := x[m] * tau
		if !(math.Abs(delta) <= window) {
			return nil, errShiftRange
		}
		first := 0 // grid points before model time 0 see the coil at rest
		for first < n && grid[first]+delta < 0 {
			first++
		}
		times = times[:0]
		for _, t := range grid[first:] {
			times = append(times, t+delta)
		}
		r, err := Simulate(&v, &Options{NoTrace: true, SampleTimes: times})
		if err != nil {
			return nil, err
		}
		if len(r.Samples) != len(times) {
			return nil, fmt.Errorf("coilkick: fit: %d samples simulated, %d asked", len(r.Samples), len(times))
		}
		sim := make([]float64, n)
		copy(sim[first:], r.Samples)
		return sim, nil
	}
	// offset returns the least-squares baseline offset for a simulation.
	offset := func(sim []float64) float64 {
		s := 0.0
		for k := range sim {
			s += raw[k] - sim[k]
		}
		return s / float64(n)
	}
	sseOf := func(sim []float64, b float64) float64 {
		s := 0.0
		for k := range sim {
			d := raw[k] - b - sim[k]
			s += d * d
		}
		return s
	}
	sse := func(x []float64) float64 {
		res.Evaluations++
		sim, err := simulate(x)
		if err != nil {
			return math.Inf(1)
		}
		return sseOf(sim, offset(sim))
	}
	x0 := make([]float64, m+1)
	for k, v := range start {
		x0[k] = math.Log(v)
	}
	// Coarse alignment: the least-squares alignment over the whole window
	// in steps of half a sample, with the starting parameters, from one
	// simulation on a fine grid (linear interpolation between its points).
	if delta, err := coarseAlignment(md, grid, raw, window, dt/2); err == nil {
		x0[m] = delta / tau
	} else {
		return nil, err
	}
	res.Evaluations++
	if sim, err := simulate(x0); err == nil {
		res.RMSStart = math.Sqrt(sseOf(sim, ev.Offset) / float64(n))
	} else {
		return nil, err
	}
	prob := optimize.Problem{Func: sse}
	settings := &optimize.Settings{FuncEvaluations: 3000, Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-6, Iterations: 30}}
	out, err := optimize.Minimize(prob, x0, settings, &optimize.NelderMead{})
	if out == nil || math.IsInf(out.F, 0) {
		return nil, fmt.Errorf("coilkick: fit: no trial simulation matched the trace (%v)", err)
	}
	x, f := out.X, out.F
	// Columns of J: ∂(simulated current)/∂x for the parameters (ln p) and
	// u, by central differences, then the offset (a column of ones).
	hs := make([]float64, m+1)
	for k := range hs {
		hs[k] = 1e-3
	}
	hs[m] = 0.1 * dt / tau // a tenth of a sample step
	jacobian := func(x []float64) (*mat.Dense, bool) {
		J := mat.NewDense(n, m+2, nil)
		for k := 0; k <= m; k++ {
			xp := append([]float64(nil), x...)
			xm := append([]float64(nil), x...)
			xp[k] += hs[k]
			xm[k] -= hs[k]
			res.Evaluations += 2
			sp, err1 := simulate(xp)
			sm, err2 := simulate(xm)
			if err1 != nil || err2 != nil {
				return nil, false
			}
			for j := range sp {
				J.Set(j, k, (sp[j]-sm[j])/(2*hs[k]))
			}
		}
		for j := 0; j < n; j++ {
			J.Set(j, m+1, 1)
		}
		return J, true
	}
	// Gauss–Newton polish: the least-squares step of the linearised
	// problem, halved until it lowers the squared error.
	for it := 0; it < 8; it++ {
		sim, err := simulate(x)
		if err != nil {
			break
		}
		b := offset(sim)
		J, ok := jacobian(x)
		if !ok {
			break
		}
		r := mat.NewVecDense(n, nil)
		for j := range sim {
			r.SetVec(j, raw[j]-b-sim[j])
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
			if ft := sse(xt); ft < f {
				better = f-ft > 1e-9*f
				x, f = xt, ft
				break
			}
		}
		if !better {
			break
		}
	}
	sim, err := simulate(x)
	if err != nil {
		return nil, err
	}
	b := offset(sim)
	f = sseOf(sim, b)
	res.RMS = math.Sqrt(f / float64(n))
	res.Simulated = sim
	res.Offset = b
	res.Shift = shift0 + x[m]*tau
	for k := range grid {
		res.Time = append(res.Time, grid[k]+x[m]*tau)
		res.Measured = append(res.Measured, raw[k]-b)
	}
	// Residual scale, its floor and the autocorrelation inflation.
	dof := float64(n - (m + 2))
	res.NoiseFloor = FitNoiseFloor * peak
	res.ResidualSD = math.Sqrt(f / dof)
	if !(res.ResidualSD > res.NoiseFloor) {
		res.ResidualSD, res.FloorUsed = res.NoiseFloor, true
	}
	var r0, r1 float64
	for k := range sim {
		d := raw[k] - b - sim[k]
		r0 += d * d
		if k > 0 {
			r1 += d * (raw[k-1] - b - sim[k-1])
		}
	}
	res.Inflation = 1
	if r0 > 0 {
		res.Autocorrelation = r1 / r0
		if rho := math.Min(res.Autocorrelation, 0.99); rho > 0 {
			res.Inflation = (1 + rho) / (1 - rho)
		}
	}
	var cov *mat.Dense
	if J, ok := jacobian(x); ok {
		cov = covariance(J, res.ResidualSD*res.ResidualSD*res.Inflation)
	}
	stdErr := func(k int) float64 {
		if cov == nil {
			return math.Inf(1)
		}
		return math.Sqrt(cov.At(k, k))
	}
	if cov == nil {
		res.Warnings = append(res.Warnings, "the trace does not determine every fitted quantity (singular covariance): fit fewer parameters")
	}
	if d := x[m] * tau; math.Abs(d) > 0.9*window {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the time alignment moved %.3g ms from the detected energize instant, near the edge of its ±%.3g ms search: check the trace's energize edge and the scenario's timing", d*1e3, window*1e3))
	}
	res.ShiftErr = tau * stdErr(m)
	res.OffsetErr = stdErr(m + 1)
	base := math.Max(f, float64(n)*res.NoiseFloor*res.NoiseFloor) // no division by a vanishing residual
	for k, p := range params {
		v := math.Exp(x[k])
		fk := fitKeys[p]
		fv := FitValue{Param: p, Start: start[k], Value: v, Unit: fk.unit, DisplayScale: fk.scale}
		fv.StdErr = v * stdErr(k) // d p = p · d ln p
		xp := append([]float64(nil), x...)
		xp[k] += math.Log(1.01)
		if f := sse(xp); base > 0 && !math.IsInf(f, 0) {
			fv.Sensitivity = math.Sqrt(f/base) - 1
		}
		res.Values = append(res.Values, fv)
	}
	// The fitted model's seat instant.
	v := *md
	for k, p := range params {
		setFit(&v, p, math.Exp(x[k]))
	}
	if r, err := Simulate(&v, &Options{NoTrace: true}); err == nil {
		res.SeatModel = r.Metrics.PullIn
	}
	return res, nil
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
// variance is not positive. The columns are normalised first so that the
// inverse is well conditioned whatever their units.
func covariance(J *mat.Dense, scale float64) *mat.Dense {
	n, c := J.Dims()
	norm := make([]float64, c)
	Js := mat.NewDense(n, c, nil)
	for k := 0; k < c; k++ {
		col := mat.Col(nil, k, J)
		norm[k] = floats.Norm(col, 2)
		if !(norm[k] > 0) {
			return nil
		}
		for j := range col {
			Js.Set(j, k, col[j]/norm[k])
		}
	}
	var a mat.SymDense
	a.SymOuterK(1, Js.T())
	var ch mat.Cholesky
	if !ch.Factorize(&a) {
		return nil
	}
	if cond := ch.Cond(); !(cond < 1e14) {
		return nil
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil
	}
	cov := mat.NewDense(c, c, nil)
	for i := 0; i < c; i++ {
		for k := 0; k < c; k++ {
			cov.Set(i, k, scale*inv.At(i, k)/(norm[i]*norm[k]))
		}
		if !(cov.At(i, i) > 0) {
			return nil
		}
	}
	return cov
}

// WriteFitted writes the scenario file at path with the fitted values
// replaced (as text with units), to out.
func WriteFitted(path string, fr *FitResult) ([]byte, error) {
	data, err := os.ReadFile(path)
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
