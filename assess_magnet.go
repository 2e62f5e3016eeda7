package coilkick

import (
	"errors"
	"fmt"
	"math"
	"reflect"

	"coilkick/magnet"
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
	// PermanentMagnetMMF (A, ampere-turns) is the gap law's permanent
	// magnet (magnet.GapLaw.WithMagnet); 0 without one. HoldingSeated and
	// HoldingAtRest (N) are then its pull with no coil current at the two
	// stops (Maxwell's pull on the magnet's own gap flux), to set against
	// SpringSeated and SpringAtRest; 0 without a permanent magnet.
	PermanentMagnetMMF           float64
	HoldingSeated, HoldingAtRest float64
	// PermanentMagnet: the model has a permanent magnet (a gap law's, or
	// a flux-linkage table's offset, whose MMF is not known: 0 above);
	// the holding forces are then set.
	PermanentMagnet bool
}

// SteelSaturationCaution (T) is the gap flux density above which a linear
// gap law's pull cannot be real: soft magnetic steels saturate at about
// 1.5 to 2.1 T (common practice, no source). The magnet figures caution
// above it.
const SteelSaturationCaution = 2.0

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
	ind := func(i, x float64) float64 { return chordInductance(mg, i, x) }
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
	if magnetized(mg) {
		s.PermanentMagnet = true
		s.HoldingSeated, s.HoldingAtRest = mg.Force(0, p.GapMin), mg.Force(0, p.GapMax)
		if gl, ok := mg.(*magnet.GapLaw); ok {
			s.PermanentMagnetMMF = gl.MagnetMMF()
		}
	}
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

// CoilField is the winding's own (air-core) field and inductance beside
// the flux density in the real magnet's working gap, at the rated current
// (the "Coil field" block of coilkick magnet). A figure that cannot be
// computed is 0, never NaN: the air-core figures need the winding's
// dimensions (coil.build, HasBuild), the gap figures a magnet from
// geometry or a gap law with a pole area (GapSource), the gains both.
type CoilField struct {
	Current  float64 // A, rated current (supply over the coil resistance at the run temperature)
	HasBuild bool    // the winding's dimensions are known
	// CentreField (T) is the air-core flux density at the winding's
	// centre, magnet.ThickCentreField over the winding window (uniform
	// current density); CentreFieldMeanDiameter (T) the thin-solenoid
	// magnet.CentreField at the mean winding diameter, for comparison.
	CentreField, CentreFieldMeanDiameter float64
	// WheelerInductance (H) is magnet.WheelerMultilayer with the mean
	// radius, length and depth of the window; AirCoreInductance (H) the
	// numerical magnet.AirCoreInductance (AirCoreCells across the smaller
	// side of the window, cells about square).
	WheelerInductance, AirCoreInductance float64
	// GapSource says where the gap flux density comes from: GapFromNetwork,
	// GapFromPull, or "" when it is not available.
	GapSource string
	PoleArea  float64 // m², the working gap's face area; 0 when unknown
	// GapFieldSeated, GapFieldRest (T): the flux density between the pole
	// faces at the seated and rest gaps.
	GapFieldSeated, GapFieldRest float64
	// GainSeated, GainRest: gap flux density over CentreField, how much the
	// iron circuit multiplies the coil's own field.
	GainSeated, GainRest float64
}

// Sources of CoilField's gap flux density.
const (
	// GapFromNetwork: the face flux density of the reluctance network of a
	// magnet from geometry, magnet.PlungerMagnet.GapFluxDensity.
	GapFromNetwork = "reluctance network"
	// GapFromPull: from the model's pull F at rated current by Maxwell's
	// pull on a pole face, F = B²·A/(2µ0), so B = √(2µ0·F/A) (Maxwell
	// stress; Hayt & Buck, Engineering Electromagnetics, the force on
	// magnetic materials), with the gap law's pole area A.
	GapFromPull = "Maxwell's pull"
)

// AirCoreCells is the number of cells of the numerical air-core
// inductance across the smaller side of the winding window (about 1e-4
// relative, magnet.AirCoreInductance); the other side gets as many cells
// as keep them about square, at most airCoreMaxCells.
const (
	AirCoreCells    = 32
	airCoreMaxCells = 256
)

// CoilFieldFigures computes the coil field figures. s is the scenario md
// was built from, for the winding window (coil.build) and the gap law's
// pole area; with s nil only a magnet from geometry gives them.
func (md *Model) CoilFieldFigures(s *Scenario) CoilField {
	f := CoilField{Current: md.Drive.Supply.Voltage / md.CoilResistance()}
	if ri, ro, l, ok := md.windingWindow(s); ok && md.Coil.Turns > 0 {
		f.airCore(md.Coil.Turns, ri, ro, l)
	}
	p := md.Plunger
	switch {
	case md.Geometry != nil:
		bs, errS := md.Geometry.GapFluxDensity(f.Current, p.GapMin)
		br, errR := md.Geometry.GapFluxDensity(f.Current, p.GapMax)
		if errS == nil && errR == nil {
			f.GapSource, f.PoleArea = GapFromNetwork, md.Geometry.FaceArea()
			f.GapFieldSeated, f.GapFieldRest = math.Abs(bs), math.Abs(br)
		}
	case s != nil && s.Magnet.Kind == MagnetGapLaw && s.Magnet.PoleArea > 0:
		a := s.Magnet.PoleArea
		pull := func(x float64) float64 {
			return math.Sqrt(2 * magnet.Mu0 * math.Max(md.Magnet.Force(f.Current, x), 0) / a)
		}
		f.GapSource, f.PoleArea = GapFromPull, a
		f.GapFieldSeated, f.GapFieldRest = pull(p.GapMin), pull(p.GapMax)
	}
	if f.CentreField > 0 && f.GapSource != "" {
		f.GainSeated, f.GainRest = f.GapFieldSeated/f.CentreField, f.GapFieldRest/f.CentreField
	}
	if f.Check() != nil { // an input far outside its range: report nothing rather than NaN
		return CoilField{Current: f.Current}
	}
	return f
}

// windingWindow returns the winding's inner and outer radius and length
// (m): from the scenario's coil.build, else from the magnet's geometry.
func (md *Model) windingWindow(s *Scenario) (ri, ro, l float64, ok bool) {
	if s != nil && s.Coil.Build != nil {
		b := s.Coil.Build
		return b.InnerDiameter / 2, b.OuterDiameter / 2, b.Length, true
	}
	if md.Geometry != nil {
		g := md.Geometry.Geometry()
		return g.WindingInnerRadius, g.WindingOuterRadius, g.WindingLength, true
	}
	return 0, 0, 0, false
}

// airCore fills the air-core figures of turns spread over the window.
func (f *CoilField) airCore(turns, ri, ro, l float64) {
	f.HasBuild = true
	depth, mean := ro-ri, ri+ro // depth and mean diameter
	f.CentreField = magnet.ThickCentreField(turns, f.Current, 2*ri, 2*ro, l)
	f.CentreFieldMeanDiameter = magnet.CentreField(turns, f.Current, l, mean)
	f.WheelerInductance = magnet.WheelerMultilayer(turns, mean/2, l, depth)
	nr, nz := airCoreGrid(depth, l)
	f.AirCoreInductance = magnet.AirCoreInductance(magnet.CoilBuild{InnerDiameter: 2 * ri, OuterDiameter: 2 * ro, Length: l}, turns, nr, nz)
}

// airCoreGrid returns about square cells, AirCoreCells across the smaller
// side of a depth × length window.
func airCoreGrid(depth, length float64) (nr, nz int) {
	cells := func(side, small float64) int {
		return int(math.Min(airCoreMaxCells, math.Max(AirCoreCells, math.Round(AirCoreCells*side/small))))
	}
	small := math.Min(depth, length)
	if !(small > 0) || math.IsInf(small, 0) {
		return AirCoreCells, AirCoreCells
	}
	return cells(depth, small), cells(length, small)
}

// Check refuses coil field figures with a figure that is not a finite
// number, naming the figure.
func (f CoilField) Check() error {
	if name := nonFinite(reflect.ValueOf(f), ""); name != "" {
		return fmt.Errorf("the coil field figure %q is not a finite number (an input far outside its range?)", name)
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
