package magnet

import (
	"errors"
	"fmt"
	"math"
	"strings"
)

// CopperResistivity20 is the resistivity of annealed copper at 20 °C, Ω·m
// (IEC 60028, International standard of resistance for copper: 1/58 Ω·mm²/m,
// i.e. 1.7241×10⁻⁸ Ω·m).
const CopperResistivity20 = 1 / 58e6

// CopperDensity is the density of annealed copper, kg/m³ (IEC 60028:
// 8.89 g/cm³ at 20 °C).
const CopperDensity = 8890

// coilRefTemperature is 20 °C in K, the reference temperature of
// CopperResistivity20 and CopperTempCoeff (IEC 60028).
const coilRefTemperature = 293.15

// AWG gauge range accepted by AWGDiameter.
const (
	awgMin = 0
	awgMax = 46
)

// AWGDiameter returns the bare diameter (m) of American Wire Gauge size
// gauge, 0..46, by the defining law of ASTM B258:
//
//	d = 0.127 mm · 92^((36 − n)/39)
//
// (AWG 36 is 0.005 in, AWG 0000 is 0.46 in, 39 steps apart). The sizes
// larger than AWG 0 (00, 000, 0000, written −1..−3 by some tables) are not
// supported: they are not used for solenoid windings.
func AWGDiameter(gauge int) (float64, error) {
	if gauge < awgMin || gauge > awgMax {
		return 0, fmt.Errorf("magnet: AWG gauge must be %d..%d, got %d (00, 000 and 0000 are not supported)", awgMin, awgMax, gauge)
	}
	return 0.127e-3 * math.Pow(92, float64(36-gauge)/39), nil
}

// Range of bare diameters (m) accepted by EnamelledDiameter. The fit below
// was made to sizes 0.1–2 mm; between these limits and that range it is
// extrapolated.
const (
	enamelMinBare = 0.01e-3
	enamelMaxBare = 5e-3
)

// enamelBuild holds the coefficients c_g (m) of the grade-g diameter
// increase Δ_g = c_g·√(d/1 mm) of EnamelledDiameter, grades 1, 2, 3.
var enamelBuild = [3]float64{0.060e-3, 0.090e-3, 0.120e-3}

// EnamelledDiameter returns an approximate overall diameter (m) of
// enamelled round copper wire of bare diameter bare (m) and insulation grade
// 1, 2 or 3 (IEC 60317-0-1 grades: grade 1 thinnest, grade 3 thickest):
//
//	D = d + c_g·√(d / 1 mm),  c_1 = 0.060 mm, c_2 = 0.090 mm, c_3 = 0.120 mm.
//
// This is NOT the IEC 60317-0-1 table. It is a fit, from memory,
// approximate, to maximum overall diameters recalled from that table for
// nominal sizes 0.1–1 mm (for example 1.0 mm grade 2 about 1.09 mm, 0.2 mm
// grade 2 about 0.24 mm); it is meant to land within about ±0.01 mm of the
// tabulated maximum there, and it overestimates the thick sizes (by about
// 0.01 mm at 2 mm), which errs toward less winding space. Use a measured
// or data-sheet overall diameter (CoilBuild.OverallDiameter) when it
// matters. It returns an error for a grade other than 1..3 and for a bare
// diameter outside 0.01–5 mm.
func EnamelledDiameter(bare float64, grade int) (float64, error) {
	if grade < 1 || grade > 3 {
		return 0, fmt.Errorf("magnet: enamelled wire: insulation grade must be 1, 2 or 3, got %d", grade)
	}
	if !(bare >= enamelMinBare && bare <= enamelMaxBare) {
		return 0, fmt.Errorf("magnet: enamelled wire: bare diameter must be %g..%g m for the grade approximation, got %g m; give the overall diameter instead",
			enamelMinBare, enamelMaxBare, bare)
	}
	return bare + enamelBuild[grade-1]*math.Sqrt(bare/1e-3), nil
}

// ErrCoilOverfull is wrapped by the error of CoilBuild.Figures when the
// turns do not fit the winding window.
var ErrCoilOverfull = errors.New("magnet: coil build: turns do not fit the winding window")

// maxCoilTurns bounds CoilBuild.Turns so that layer counts stay within int.
const maxCoilTurns = 1e9

// fitTol is the relative slack in the layer and fit counts, so that a
// length or depth that is an exact multiple of the wire diameter is not lost
// to rounding.
const fitTol = 1e-9

// CoilBuild describes a round winding on a bobbin.
type CoilBuild struct {
	InnerDiameter, OuterDiameter, Length float64 // m, winding space of the bobbin
	WireDiameter                         float64 // m, bare copper
	OverallDiameter                      float64 // m, insulated (0: from EnamelledDiameter with Grade)
	Grade                                int     // insulation grade 1..3, used when OverallDiameter == 0
	Turns                                float64 // 0: from FillFactor
	FillFactor                           float64 // copper area / winding window area, used when Turns == 0
}

// CoilFigures are the figures of a CoilBuild.
type CoilFigures struct {
	Turns          float64 // turns
	MeanTurnLength float64 // m
	WireLength     float64 // m
	Resistance20   float64 // ohm at 20 °C
	CopperMass     float64 // kg
	TurnsPerLayer  int     // whole turns of the overall diameter in the bobbin length
	Layers         int     // layers needed for Turns, the last one possibly partial
	FillFactor     float64 // achieved copper fill: turns·(π d²/4) / window area
	WindowFits     bool    // the layers fit the radial depth (see CoilBuild.Figures)
	LayerFill      float64 // Layers·overall diameter / radial depth: ≤ 1 when the winding fits
}

// Figures returns the turns, resistance, copper mass and layer build of the
// winding.
//
// The window is the bobbin's winding space: radial depth
// h = (OuterDiameter − InnerDiameter)/2, area A_w = h·Length. With d the
// bare and D the overall (insulated) wire diameter:
//
//   - Turns: b.Turns, or when that is 0, floor(FillFactor·A_w/(π d²/4)),
//     whole turns from the copper fill factor (the definition of the fill
//     factor, copper area over window area);
//   - mean turn length MLT = π·(InnerDiameter + OuterDiameter)/2, the
//     circumference at the middle of the window: it assumes the window is
//     wound full (a partly filled window has shorter turns);
//   - wire length ℓ = Turns·MLT, resistance R20 = ρ20·ℓ/(π d²/4) with
//     ρ20 = CopperResistivity20, copper mass = CopperDensity·(π d²/4)·ℓ;
//   - layer build: TurnsPerLayer = floor(Length/D), Layers =
//     ceil(Turns/TurnsPerLayer).
//
// Fit criterion (layer winding with perfect layers): each layer is a
// complete row of touching turns of diameter D and each layer sits directly
// on the one below (square stacking), with no orthocyclic nesting, no
// interlayer insulation and no allowance for crossovers, lead-outs or
// winding tension. The winding fits when Layers·D ≤ h. Orthocyclic nesting
// would fit about 15 % more layers; a real coil winder may fit fewer turns.
// This estimate is common practice, no source.
//
// Errors: the error is non-nil, with zero figures, for a window with
// InnerDiameter < 0, OuterDiameter ≤ InnerDiameter or Length ≤ 0; a bare
// diameter ≤ 0; an overall diameter below the bare one; a grade outside
// 1..3 when OverallDiameter is 0; Turns < 0 or above 1e9; Turns 0 with a
// FillFactor outside (0, 1) or one that gives less than one turn; a wire
// thicker than the bobbin length; and figures that overflow float64. When
// the turns do not fit the window the error wraps ErrCoilOverfull and the
// figures are still returned, with WindowFits false, so the caller can see
// by how much.
func (b CoilBuild) Figures() (CoilFigures, error) {
	if err := b.check(); err != nil {
		return CoilFigures{}, err
	}
	overall := b.OverallDiameter
	if overall == 0 {
		var err error
		if overall, err = EnamelledDiameter(b.WireDiameter, b.Grade); err != nil {
			return CoilFigures{}, fmt.Errorf("magnet: coil build: no overall diameter given, and from the grade: %s",
				strings.TrimPrefix(err.Error(), "magnet: "))
		}
	}
	depth := (b.OuterDiameter - b.InnerDiameter) / 2
	window := depth * b.Length
	area := math.Pi * b.WireDiameter * b.WireDiameter / 4
	turns := b.Turns
	if turns == 0 {
		turns = math.Floor(b.FillFactor*window/area + fitTol)
		if turns < 1 {
			return CoilFigures{}, fmt.Errorf("magnet: coil build: fill factor %g gives less than one turn of %g m wire in a %g m² window",
				b.FillFactor, b.WireDiameter, window)
		}
		if turns > maxCoilTurns {
			return CoilFigures{}, fmt.Errorf("magnet: coil build: fill factor %g gives %g turns, more than %g", b.FillFactor, turns, float64(maxCoilTurns))
		}
	}
	perLayer := math.Floor(b.Length/overall + fitTol)
	if perLayer < 1 {
		return CoilFigures{}, fmt.Errorf("magnet: coil build: wire of overall diameter %g m is longer than the bobbin length %g m", overall, b.Length)
	}
	perLayer = math.Min(perLayer, maxCoilTurns) // keeps int conversion in range
	layers := math.Ceil(turns / perLayer)
	mlt := math.Pi * (b.InnerDiameter + b.OuterDiameter) / 2
	wireLen := turns * mlt
	f := CoilFigures{
		Turns:          turns,
		MeanTurnLength: mlt,
		WireLength:     wireLen,
		Resistance20:   CopperResistivity20 * wireLen / area,
		CopperMass:     CopperDensity * area * wireLen,
		TurnsPerLayer:  int(perLayer),
		Layers:         int(layers),
		FillFactor:     turns * area / window,
		LayerFill:      layers * overall / depth,
	}
	for _, v := range []float64{wireLen, f.Resistance20, f.CopperMass, f.LayerFill} {
		if !isFinite(v) {
			return CoilFigures{}, fmt.Errorf("magnet: coil build: figures overflow for %g turns of %g m mean length; check the units (m)", turns, mlt)
		}
	}
	f.WindowFits = layers*overall <= depth*(1+fitTol)
	if !f.WindowFits {
		maxLayers := math.Floor(depth/overall + fitTol)
		return f, fmt.Errorf("%w: %g turns need %d layers of %d turns of %.4g mm wire, %.4g mm deep, but the radial depth is %.4g mm; at most %g turns fit with perfect layers",
			ErrCoilOverfull, turns, f.Layers, f.TurnsPerLayer, overall*1e3, layers*overall*1e3, depth*1e3, maxLayers*perLayer)
	}
	return f, nil
}

// check validates the fields of b that Figures reads.
func (b CoilBuild) check() error {
	switch {
	case !(b.InnerDiameter >= 0) || math.IsInf(b.InnerDiameter, 0):
		return fmt.Errorf("magnet: coil build: inner diameter must be finite and not negative, got %g m", b.InnerDiameter)
	case !(b.OuterDiameter > b.InnerDiameter) || math.IsInf(b.OuterDiameter, 0):
		return fmt.Errorf("magnet: coil build: outer diameter must be finite and exceed the inner diameter %g m, got %g m", b.InnerDiameter, b.OuterDiameter)
	case !(b.Length > 0) || math.IsInf(b.Length, 0):
		return fmt.Errorf("magnet: coil build: winding length must be positive and finite, got %g m", b.Length)
	case !(b.WireDiameter > 0) || math.IsInf(b.WireDiameter, 0):
		return fmt.Errorf("magnet: coil build: bare wire diameter must be positive and finite, got %g m", b.WireDiameter)
	case b.OverallDiameter != 0 && (!(b.OverallDiameter >= b.WireDiameter) || math.IsInf(b.OverallDiameter, 0)):
		return fmt.Errorf("magnet: coil build: overall wire diameter must be finite and at least the bare diameter %g m (0: from the grade), got %g m", b.WireDiameter, b.OverallDiameter)
	case !(b.Turns >= 0) || b.Turns > maxCoilTurns:
		return fmt.Errorf("magnet: coil build: turns must be 0 (from the fill factor) or positive up to %g, got %g", float64(maxCoilTurns), b.Turns)
	case b.Turns == 0 && !(b.FillFactor > 0 && b.FillFactor < 1):
		return fmt.Errorf("magnet: coil build: with turns 0 the fill factor must be in (0, 1), got %g", b.FillFactor)
	}
	return nil
}

// Coil returns the winding's electrical data: Resistance20 at 293.15 K
// (20 °C) with the temperature coefficient CopperTempCoeff, and the turns.
func (f CoilFigures) Coil() Coil {
	return Coil{Resistance: f.Resistance20, RefTemperature: coilRefTemperature, TempCoeff: CopperTempCoeff, Turns: f.Turns}
}

// RatedPower returns the power (W) the winding takes at 20 °C from a DC
// voltage v (V): v²/R20. It returns 0 for zero figures (R20 ≤ 0) and for a
// non-finite voltage or result.
func (f CoilFigures) RatedPower(v float64) float64 {
	if !(f.Resistance20 > 0) || math.IsInf(f.Resistance20, 0) {
		return 0
	}
	p := v * v / f.Resistance20
	if !isFinite(p) {
		return 0
	}
	return p
}
