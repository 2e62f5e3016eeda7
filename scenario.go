package coilkick

import (
	"errors"
	"fmt"
	"strings"
)

// Scenario is one drive set-up as read from a scenario file, in SI units
// (V, A, ohm, H, m, kg, N, s, K). The loader (Load) fills it and checks
// each field's range; Build turns it into models.
type Scenario struct {
	Name   string // free text, from the file
	Source string // file the scenario came from ("" when built in code)

	Supply      SupplySpec
	Coil        CoilSpec
	Magnet      MagnetSpec
	Plunger     PlungerSpec
	Switch      SwitchSpec
	Suppression SuppressionSpec
	Drive       DriveSpec
	Thermal     *ThermalSpec // nil: no thermal model
	Duty        *DutySpec    // nil: no operating pattern
	Tolerances  Tolerances   // zero: no spread
	Sense       *SenseChain  // nil: no current-sense chain (coilkick signature)
	Timing      TimingSpec
	Limits      LimitsSpec
	Solver      SolverSpec

	// pos maps a field path such as "plunger.mass" to where it was
	// written, so that later checks can point at the line.
	pos map[string]Pos
}

// Pos is a place in a scenario file.
type Pos struct {
	Line, Column int
}

// SupplySpec is the DC supply: an ideal source behind a resistance.
type SupplySpec struct {
	Voltage          float64 // V
	SourceResistance float64 // ohm, 0 for a stiff supply
	BulkCapacitance  float64 // F at the drive's terminals, behind the source resistance; 0 for none
	LowVoltage       float64 // V, lowest supply in tolerance (hot-coil check); 0 when not given
	// Storage is a capacitor-discharge drive's storage capacitor; nil for
	// none (the supply then feeds the drive directly).
	Storage *StorageSpec
}

// StorageSpec is the storage capacitor of a capacitor-discharge drive
// (supply.storage capacitor).
type StorageSpec struct {
	Capacitance        float64 // F
	ESR                float64 // ohm, equivalent series resistance
	ChargeVoltage      float64 // V at the start; 0: the supply voltage
	ChargingResistance float64 // ohm from the supply; 0: no charging path
	RechargeFraction   float64 // recharged: within this fraction of the charge voltage
	// ChargeTime (s): instead of ChargeVoltage, charged from empty through
	// the charging path for this long before the run; 0: not given.
	ChargeTime float64
}

// ThermalSpec is the coil's thermal network.
type ThermalSpec struct {
	Ambient float64 // K
	Class   string  // IEC 60085 insulation class, "" when not given
	Kind    string  // "rating", "surface" or "network"
	// rating: steady rise (K) at a power (W), time constant (s)
	Rise, AtPower, TimeConstant float64
	// surface: area (m²), convection coefficient (W/(m²·K)), heat capacity (J/K;
	// 0: from the coil build's copper mass)
	SurfaceArea, Convection, HeatCapacity float64
	// network (two nodes): HeatCapacity is the winding's (J/K); resistances K/W
	WindingToHousing, HousingCapacity, HousingToAmbient float64
}

// DutySpec is the operating pattern of a heat study: OnTime every Period,
// or a list of segments repeated.
type DutySpec struct {
	OnTime, Period float64 // s
	Segments       []DutySegment
	Duration       float64 // s; 0: until the periodic steady state
}

// DutySegment is one part of an operating cycle.
type DutySegment struct {
	On       bool
	Duration float64 // s
}

// CoilSpec is the winding's electrical data.
type CoilSpec struct {
	Resistance     float64 // ohm at RefTemperature
	RefTemperature float64 // K
	Temperature    float64 // K, winding temperature during the run
	TempCoeff      float64 // 1/K at RefTemperature
	Turns          float64 // 0 when not given
	// WindingCapacitance (F): the winding's capacitance across its
	// terminals; 0 when not given.
	WindingCapacitance float64
	// CoreLossResistance (ohm): a resistance across the terminals standing
	// for the core (iron) loss; 0 when not given.
	CoreLossResistance float64
	// Build is the winding from bobbin and wire; nil when the coil is
	// given by its measured resistance.
	Build *CoilBuildSpec
}

// CoilBuildSpec is a winding described by its bobbin and wire (m).
type CoilBuildSpec struct {
	InnerDiameter, OuterDiameter, Length float64 // winding space
	WireGauge                            int     // AWG, 0 when a diameter is given
	WireDiameter                         float64 // bare copper; 0 when a gauge is given
	OverallDiameter                      float64 // insulated; 0: from the insulation grade
	Grade                                int     // enamel grade 1..3 (0 with OverallDiameter)
	Turns                                float64 // 0: from FillFactor
	FillFactor                           float64 // copper area ÷ winding window
}

// Magnet model kinds.
const (
	MagnetGapLaw = "gap law"
	MagnetTable  = "table"
	MagnetGeom   = "geometry"
	MagnetCurves = "force curves"
)

// MagnetSpec selects and parameterises the magnetic model.
type MagnetSpec struct {
	Kind string // MagnetGapLaw, MagnetTable, MagnetGeom or MagnetCurves

	// EddyResistance (ohm) is the equivalent shorted turn for eddy
	// currents, referred to the coil's turns; 0 for none.
	EddyResistance float64

	// gap law
	ClosedInductance float64 // H at the seated gap
	OpenInductance   float64 // H at the rest gap
	PoleArea         float64 // m², 0 when not given (then leakage is taken as zero)
	// MagnetMMF (A, ampere-turns) or HoldingForce (N, the zero-current
	// pull at the seated gap): a permanent magnet in the gap law's
	// circuit; 0 when not given (at most one is).
	MagnetMMF, HoldingForce float64
	// DemagCurrent (A): the reverse coil current at which the magnet
	// reaches its knee (stated from its data); 0 when not given.
	DemagCurrent float64

	// table
	TableFile    string  // path as written, resolved against the scenario's folder
	CurrentScale float64 // SI value of one table current unit (A)
	GapScale     float64 // SI value of one table gap unit (m)
	FluxScale    float64 // SI value of one table flux-linkage unit (Wb)
	TableUnits   string  // the table's units as written, for messages
	// the table's units as written ("mA", "mm", "mWb"), for the values
	// its messages quote
	CurrentUnit, GapUnit, FluxUnit string

	// geometry
	Geometry GeometrySpec

	// force curves (with OpenInductance, and ClosedInductance when given)
	CurvesFile       string  // path as written, resolved against the scenario's folder
	OpenFrequency    float64 // Hz, the LCR test frequency of OpenInductance; 0: not given
	ClosedFrequency  float64 // Hz, of ClosedInductance; 0: not given
	CurveTemperature float64 // K, the coil's temperature for curves given at voltages; 0: not given
}

// GeometrySpec is a plunger magnet described by its dimensions (m) and
// steel, from which the flux-linkage table is built.
type GeometrySpec struct {
	PlungerDiameter, PlungerLength float64
	PoleDiameter, PoleLength       float64
	ShellOuterDiameter, ShellWall  float64
	ShellLength, EndPlateThickness float64
	SlidingGap, SlidingLength      float64
	SteelSaturation                float64 // T, saturation polarization of the analytic law
	SteelPermeability              float64 // initial relative permeability of the analytic law
	SteelCurveFile                 string  // B–H table instead of the analytic law ("" for none)
	HScale, BScale                 float64 // SI value of one file unit (A/m, T)
	CurveUnits                     string  // the curve file's units as written, for messages
	HUnit, BUnit                   string  // the curve file's units as written ("kA/m", "T")
	TableCurrents, TableGaps       int     // grid size of the built table
	MaxCurrent                     float64 // A, top of the table's current range; 0: 3 × rated
}

// PlungerSpec is the moving part. Gap convention: x is the working air
// gap, SeatedGap <= x <= RestGap; pulling in reduces x.
type PlungerSpec struct {
	Mass          float64 // kg
	RestGap       float64 // m, gap at the rest stop (de-energized)
	SeatedGap     float64 // m, residual gap at the energized stop
	SpringPreload float64 // N, spring force at the rest gap, pushing the gap open
	SpringRate    float64 // N/m
	Damping       float64 // N·s/m
	Restitution   float64 // 0..1, at both stops
	StickSpeed    float64 // m/s, impacts slower than this end in sticking

	ConstantLoad float64 // N, pushing the gap open (negative: helping pull-in)
	Pressure     float64 // Pa, on the orifice, 0 for none
	OrificeArea  float64 // m²
	SealTravel   float64 // m, lift over which the pressure force fades to zero
}

// SwitchSpec is the low-side switch (a MOSFET, say).
type SwitchSpec struct {
	OnResistance      float64 // ohm
	OutputCapacitance float64 // F, 0 for ideal edges
	BreakdownVoltage  float64 // V, where the switch avalanches
	BodyDiodeDrop     float64 // V
	RiseTime          float64 // s, turn-on edge, for the switching-loss estimate
	FallTime          float64 // s, turn-off edge
}

// Suppression kinds.
const (
	SuppressNone        = "none"
	SuppressFreewheel   = "freewheel diode"
	SuppressDiodeZener  = "diode zener"
	SuppressTVS         = "tvs"
	SuppressSnubber     = "rc snubber"
	SuppressSwitchClamp = "switch clamp"
	SuppressBridge      = "reverse drive" // H-bridge: reverse voltage at turn-off
)

// SuppressionSpec is the inductive-kick suppression part.
type SuppressionSpec struct {
	Kind         string  // one of the Suppress* constants
	ForwardDrop  float64 // V, diode forward drop (freewheel, diode zener)
	ZenerVoltage float64 // V (diode zener)
	ClampVoltage float64 // V (tvs, switch clamp)
	Resistance   float64 // ohm: dynamic resistance of diode/zener/tvs, or the snubber resistor
	Capacitance  float64 // F (rc snubber)
	ReversePulse float64 // s (reverse drive): drive the coil in reverse this long after turn-off
	ReverseDelay float64 // s (reverse drive): start that reverse pulse this long after turn-off (0: at once)
}

// Drive modes.
const (
	DriveConstant  = "constant"
	DrivePWM       = "pwm"
	DrivePeakHold  = "peak and hold"
	DriveBoostHold = "boost then hold"
	// DrivePulses: an H-bridge's timed pulses for a latching magnet: a
	// latch pulse of forward polarity, then optionally a release pulse of
	// reverse polarity (DriveSpec.LatchPulse, ReleaseAt, ReleasePulse).
	DrivePulses = "pulses"
)

// DriveSpec is how the driver drives the coil while energized.
type DriveSpec struct {
	Mode                    string  // one of the Drive* constants
	Frequency               float64 // Hz (pwm; fixed-frequency chopping)
	Duty                    float64 // pwm, 0..1
	PeakCurrent             float64 // A
	PeakTime                float64 // s
	HoldCurrent             float64 // A
	Regulation              string  // "hysteresis" or "fixed frequency"
	Band                    float64 // A, hysteresis band (full width)
	Decay                   string  // "slow" or "fast"
	RecirculationDrop       float64 // V, slow-decay path
	RecirculationResistance float64 // ohm
	BoostVoltage            float64 // V
	BoostTime               float64 // s
	BrakeAt, BrakeFor       float64 // s, soft-landing brake of a constant drive (0: none)
	// Pulses: the latch pulse's length (forward polarity, from
	// timing.energize at), the run time the release pulse (reverse
	// polarity) starts and its length (0: none).
	LatchPulse, ReleaseAt, ReleasePulse float64
}

// TimingSpec is when the drive is commanded on and off.
type TimingSpec struct {
	EnergizeAt   float64 // s
	DeenergizeAt float64 // s
	End          float64 // s
}

// LimitsSpec holds ratings and requirements; a zero field is not checked.
type LimitsSpec struct {
	SwitchVoltage   float64 // V, switch drain-source rating
	AvalancheEnergy float64 // J, single-pulse avalanche rating
	ClampEnergy     float64 // J per operation, clamp part rating
	ClampCurrent    float64 // A, peak clamp current rating
	MaxPullIn       float64 // s, requirement
	MaxRelease      float64 // s, requirement
	MaxDrop         float64 // s, requirement
	MinHoldMargin   float64 // requirement: hold force margin at least this
}

// SolverSpec tunes the integrator; zero fields take the defaults.
type SolverSpec struct {
	Tolerance float64 // relative tolerance
	MaxSteps  int
}

// Errorf returns an error pointing at the place where field (a path such
// as "plunger.mass") was written, or at the file alone when unknown. The
// position and the field say where the error is, so a package prefix at
// the start of the message ("magnet: ", "coilkick: ", as the packages'
// own errors begin) is dropped; control characters are escaped (see
// escapeControl).
func (s *Scenario) Errorf(field, format string, args ...any) error {
	msg := trimPackagePrefix(fmt.Sprintf(format, args...))
	p, ok := s.pos[field]
	var full string
	switch {
	case ok && s.Source != "":
		full = fmt.Sprintf("%s:%d:%d: %s: %s", s.Source, p.Line, p.Column, field, msg)
	case s.Source != "":
		full = fmt.Sprintf("%s: %s: %s", s.Source, field, msg)
	default:
		full = fmt.Sprintf("%s: %s", field, msg)
	}
	return errors.New(escapeControl(full))
}

// packagePrefixes begin the errors of coilkick's packages.
var packagePrefixes = []string{"coilkick: ", "magnet: ", "mech: ", "circuit: "}

// trimPackagePrefix drops the package prefixes at the start of msg.
func trimPackagePrefix(msg string) string {
	for again := true; again; {
		again = false
		for _, p := range packagePrefixes {
			if rest, ok := strings.CutPrefix(msg, p); ok {
				msg, again = rest, true
			}
		}
	}
	return msg
}
