package coilkick

import (
	"errors"
	"fmt"
	"math"
	"reflect"
)

// MagnetSummary is what the magnet alone does at the scenario's supply:
// the figures an engineer checks before simulating a drive.
type MagnetSummary struct {
	RatedCurrent float64 // A, supply voltage over the coil resistance at the run temperature
	// Inductances (H) at the seated (closed) and rest (open) gaps: λ/i at
	// a small current (1 % of rated) and at the rated current.
	ClosedInductance, OpenInductance           float64
	ClosedInductanceRated, OpenInductanceRated float64
	ForceAtRest, ForceSeated                   float64 // N, magnetic pull at rated current
	SpringAtRest, SpringSeated                 float64 // N, passive force (spring + load) at the two stops
	TimeConstantOpen, TimeConstantClosed       float64 // s, small-signal L/R at the two gaps
	// SaturationOnset (A) at the seated and rest gaps: the current at which
	// the incremental inductance ∂λ/∂i first falls below SaturationFraction
	// of its value at zero current; 0 when that does not happen below
	// SaturationSearch × the rated current (the model does not saturate
	// there).
	SaturationSeated, SaturationRest float64
}

// Saturation-onset definition.
const (
	SaturationFraction = 0.8
	SaturationSearch   = 4.0
)

// ForceCurve is the magnetic pull versus gap at one current.
type ForceCurve struct {
	Current float64   // A
	Gap     []float64 // m
	Force   []float64 // N
}

// MagnetSummary computes the magnet figures at the model's supply and
// winding temperature.
func (md *Model) MagnetSummary() MagnetSummary {
	var s MagnetSummary
	mg, p := md.Magnet, md.Plunger
	r := md.CoilResistance()
	s.RatedCurrent = md.Drive.Supply.Voltage / r
	small := 0.01 * s.RatedCurrent
	ind := func(i, x float64) float64 { return mg.FluxLinkage(i, x) / i }
	s.ClosedInductance = ind(small, p.GapMin)
	s.OpenInductance = ind(small, p.GapMax)
	s.ClosedInductanceRated = ind(s.RatedCurrent, p.GapMin)
	s.OpenInductanceRated = ind(s.RatedCurrent, p.GapMax)
	s.ForceAtRest = mg.Force(s.RatedCurrent, p.GapMax)
	s.ForceSeated = mg.Force(s.RatedCurrent, p.GapMin)
	s.SpringAtRest = p.PassiveForce(p.GapMax, 0)
	s.SpringSeated = p.PassiveForce(p.GapMin, 0)
	s.TimeConstantClosed = s.ClosedInductance / r
	s.TimeConstantOpen = s.OpenInductance / r
	s.SaturationSeated = saturationOnset(md, p.GapMin, s.RatedCurrent)
	s.SaturationRest = saturationOnset(md, p.GapMax, s.RatedCurrent)
	return s
}

// Check refuses a summary with a figure that is not a finite number (an
// input far outside its range), naming the figure.
func (s MagnetSummary) Check() error {
	if name := nonFinite(reflect.ValueOf(s), ""); name != "" {
		return fmt.Errorf("the magnet figure %q is not a finite number (an input far outside its range?)", name)
	}
	return nil
}

// incremental returns ∂λ/∂i at (i, x) by a central difference.
func incremental(md *Model, i, x, h float64) float64 {
	lo := math.Max(i-h, 0)
	return (md.Magnet.FluxLinkage(i+h, x) - md.Magnet.FluxLinkage(lo, x)) / (i + h - lo)
}

func saturationOnset(md *Model, x, rated float64) float64 {
	const n = 400
	h := rated * 1e-3
	l0 := incremental(md, 0, x, h)
	prev := 0.0
	for k := 1; k <= n; k++ {
		i := SaturationSearch * rated * float64(k) / n
		if incremental(md, i, x, h) < SaturationFraction*l0 {
			// refine by bisection between prev and i
			a, b := prev, i
			for it := 0; it < 50; it++ {
				c := 0.5 * (a + b)
				if incremental(md, c, x, h) < SaturationFraction*l0 {
					b = c
				} else {
					a = c
				}
			}
			return b
		}
		prev = i
	}
	return 0
}

// ForceCurves returns the pull versus gap over the plunger's stroke (n
// gaps) for each current (A).
func (md *Model) ForceCurves(currents []float64, n int) ([]ForceCurve, error) {
	if n < 2 {
		return nil, errors.New("coilkick: force curves need at least 2 gaps")
	}
	p := md.Plunger
	out := make([]ForceCurve, 0, len(currents))
	for _, i := range currents {
		if !(i >= 0) || math.IsInf(i, 0) {
			return nil, errors.New("coilkick: force curve currents must be finite and not negative")
		}
		fc := ForceCurve{Current: i, Gap: make([]float64, n), Force: make([]float64, n)}
		for k := 0; k < n; k++ {
			x := p.GapMin + (p.GapMax-p.GapMin)*float64(k)/float64(n-1)
			fc.Gap[k] = x
			fc.Force[k] = md.Magnet.Force(i, x)
		}
		out = append(out, fc)
	}
	return out, nil
}
