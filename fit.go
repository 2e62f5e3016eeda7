package coilkick

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"

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
	StdErr       float64 // SI, 1σ from the Gauss–Newton covariance at the optimum
	Sensitivity  float64 // relative RMS-residual rise for a +1 % change of the parameter
	Unit         string  // of Display values
	DisplayScale float64
}

// FitResult is the outcome of fitting a scenario to a measured trace.
type FitResult struct {
	Values      []FitValue
	RMSStart    float64 // A, RMS current error with the scenario's values
	RMS         float64 // A, after the fit
	Noise       float64 // A, the trace's noise (for comparison)
	Evaluations int
	Events      *TraceEvents
	Shift       float64 // s: measured time + Shift = model time (aligns the energize instants)
	// Overlay: measured (offset removed) and simulated current on the fit grid.
	Time, Measured, Simulated []float64
	SeatModel                 Interval // model's pull-in (seat) instant, from its energize command
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

// Fit adjusts the chosen parameters of the model so that its simulated
// coil current matches the measured trace in the least-squares sense
// (Nelder–Mead on the logarithms of the parameters, gonum/optimize), after
// aligning the trace's energize instant with the model's and removing the
// trace's baseline offset. Standard errors come from the Gauss–Newton
// approximation σ²(JᵀJ)⁻¹ at the optimum (J by central differences).
func Fit(md *Model, tr *MeasuredTrace, params []FitParam) (*FitResult, error) {
	if len(params) == 0 {
		return nil, errors.New("coilkick: choose at least one parameter to fit")
	}
	ev, err := DetectEvents(tr)
	if err != nil {
		return nil, err
	}
	res := &FitResult{Events: ev, Noise: ev.Noise, Shift: md.Timing.EnergizeAt - ev.Energize}
	// The fit grid: the measured samples inside the model's run, thinned.
	stride := max(1, len(tr.Time)/FitMaxPoints)
	for k := 0; k < len(tr.Time); k += stride {
		tm := tr.Time[k] + res.Shift
		if tm < 0 || tm > md.Timing.End {
			continue
		}
		res.Time = append(res.Time, tm)
		res.Measured = append(res.Measured, tr.Current[k]-ev.Offset)
	}
	if len(res.Time) < 20 {
		return nil, errors.New("coilkick: the trace and the scenario's timing overlap in fewer than 20 samples")
	}
	start := make([]float64, len(params))
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
	simulate := func(x []float64) ([]float64, error) {
		v := *md
		for k, p := range params {
			if err := setFit(&v, p, math.Exp(x[k])); err != nil {
				return nil, err
			}
		}
		r, err := Simulate(&v, &Options{NoTrace: true, SampleTimes: res.Time})
		if err != nil {
			return nil, err
		}
		return r.Samples, nil
	}
	sse := func(x []float64) float64 {
		res.Evaluations++
		sim, err := simulate(x)
		if err != nil || len(sim) != len(res.Measured) {
			return math.Inf(1)
		}
		s := 0.0
		for k, m := range res.Measured {
			d := sim[k] - m
			s += d * d
		}
		return s
	}
	x0 := make([]float64, len(params))
	for k, v := range start {
		x0[k] = math.Log(v)
	}
	n := float64(len(res.Measured))
	res.RMSStart = math.Sqrt(sse(x0) / n)
	prob := optimize.Problem{Func: sse}
	settings := &optimize.Settings{FuncEvaluations: 3000, Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-10, Iterations: 200}}
	out, err := optimize.Minimize(prob, x0, settings, &optimize.NelderMead{})
	if err != nil && out == nil {
		return nil, fmt.Errorf("coilkick: fit: %v", err)
	}
	x := out.X
	// Polish: a second Nelder–Mead from the optimum with a fresh simplex.
	if out2, err2 := optimize.Minimize(prob, x, settings, &optimize.NelderMead{}); err2 == nil || out2 != nil {
		if out2.F < out.F {
			x, out = out2.X, out2
		}
	}
	res.RMS = math.Sqrt(out.F / n)
	sim, err := simulate(x)
	if err != nil {
		return nil, err
	}
	res.Simulated = sim
	// Gauss–Newton covariance and sensitivities.
	m := len(params)
	J := mat.NewDense(len(sim), m, nil)
	const h = 1e-3
	for k := 0; k < m; k++ {
		xp := append([]float64(nil), x...)
		xm := append([]float64(nil), x...)
		xp[k] += h
		xm[k] -= h
		sp, err1 := simulate(xp)
		sm, err2 := simulate(xm)
		if err1 != nil || err2 != nil || len(sp) != len(sim) || len(sm) != len(sim) {
			continue
		}
		for j := range sim {
			J.Set(j, k, (sp[j]-sm[j])/(2*h)) // d i / d ln p
		}
	}
	var jtj mat.Dense
	jtj.Mul(J.T(), J)
	var cov mat.Dense
	covOK := cov.Inverse(&jtj) == nil
	sigma2 := out.F / math.Max(n-float64(m), 1)
	base := out.F
	for k, p := range params {
		v := math.Exp(x[k])
		fk := fitKeys[p]
		fv := FitValue{Param: p, Start: start[k], Value: v, Unit: fk.unit, DisplayScale: fk.scale}
		if covOK {
			if c := cov.At(k, k) * sigma2; c >= 0 {
				fv.StdErr = v * math.Sqrt(c) // d p = p · d ln p
			}
		}
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
