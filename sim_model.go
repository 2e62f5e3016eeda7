package coilkick

import (
	"math"

	"coilkick/circuit"
	"coilkick/magnet"
	"coilkick/mech"
)

// Model is a scenario turned into the domain models, ready to simulate.
type Model struct {
	Name   string
	Source string
	Coil   magnet.Coil
	// CoilBuild holds the winding figures when the coil was given as a
	// bobbin and wire; nil when given as a measured resistance.
	CoilBuild   *magnet.CoilFigures
	Temperature float64 // K, winding temperature during the run
	// Geometry is the magnetic circuit from dimensions when the magnet was
	// given as geometry (Magnet is then its flux-linkage table); nil
	// otherwise.
	Geometry *magnet.PlungerMagnet
	// Curves describes the force-curve data when the magnet was given as
	// force curves (Magnet is then a *magnet.CurveModel); nil otherwise.
	Curves *CurveData
	Magnet magnet.Model
	// EddyResistance (ohm) is the equivalent shorted turn for eddy currents
	// in the steel, referred to the coil's turns; 0 for none.
	EddyResistance float64
	// CoreLossResistance (ohm) across the coil's terminals stands for the
	// core loss; 0 for none. (The winding capacitance is in
	// Drive.CoilCapacitance: the drive sees it at the coil's terminals.)
	CoreLossResistance float64
	Plunger            mech.Plunger
	Drive              circuit.Drive
	Control            circuit.Control // how the driver drives the coil while energized
	// Thermal is the coil's thermal network; nil without a thermal section
	// (the winding then stays at Temperature).
	Thermal *magnet.Thermal
	Ambient float64 // K
	// InsulationLimit (K) and InsulationClass from IEC 60085; 0 and "" when not given.
	InsulationLimit float64
	InsulationClass string
	// DiodeDrop (V): the forward drop of a diode + Zener's diode, as given.
	DiodeDrop float64
	// Tolerances for worst-case corners (zero when not given).
	Tolerances Tolerances
	// Sense is the driver's current-sense chain (the scenario's sense
	// section) for the end-of-stroke signature; nil when not given.
	Sense *SenseChain
	// Duty is the operating pattern from the scenario's duty section; nil
	// when there is none.
	Duty *DutyPattern
	// LowSupply (V): the lowest supply in tolerance; 0 when not given.
	LowSupply float64
	// BulkCapacitance (F) at the drive's supply terminals, fed through the
	// source resistance; 0 for none.
	BulkCapacitance float64
	// Storage is a capacitor-discharge drive's storage capacitor
	// (sim_storage.go); nil for none.
	Storage *StorageCapacitor
	// RiseTime, FallTime (s) of the switch's edges, for the switching-loss
	// estimate; 0 for ideal edges.
	RiseTime, FallTime float64
	Timing             TimingSpec
	Limits             LimitsSpec
	Solver             SolverSpec
	// Pulses: the drive is an H-bridge's timed pulses (drive.mode pulses):
	// the latch pulse is the energized time, the release pulse the
	// reverse pulse (Control.ReversePulse, ReverseDelay).
	Pulses bool
	// DemagCurrent (A): the reverse coil current at which the permanent
	// magnet reaches its knee (magnet.gap law.demagnetising current); 0
	// when not given.
	DemagCurrent float64
}

// DriveName names the drive for reports: the control law ("constant",
// "pwm", ...), or "H-bridge pulses" for a pulses drive.
func (md *Model) DriveName() string {
	if md.Pulses {
		return "H-bridge pulses"
	}
	return md.Control.Mode.String()
}

// CoilResistance returns the coil resistance at the run's winding
// temperature (ohm).
func (md *Model) CoilResistance() float64 { return md.Coil.ResistanceAt(md.Temperature) }

// scales returns the typical magnitude of each state, for the absolute
// tolerances.
func (md *Model) scales() []float64 {
	sc := make([]float64, nState)
	v0 := md.Drive.Supply.Voltage
	// Current scale: the steady current, or the ramp reached in the on
	// time when the coil's time constant is long.
	rt := md.CoilResistance() + md.Drive.Supply.SourceResistance + md.Drive.Switch.OnResistance
	// The open inductance from 1 A of coil current: a permanent magnet's
	// own flux linkage λ(0, x) is not the coil's.
	lOpen := md.Magnet.FluxLinkage(1, md.Plunger.GapMax) - md.Magnet.FluxLinkage(0, md.Plunger.GapMax)
	iScale := math.Min(v0/rt, v0*(md.Timing.DeenergizeAt-md.Timing.EnergizeAt)/lOpen)
	if st := md.Storage; st != nil {
		// A storage capacitor's energy bounds the coil's: ½·L·i² ≤ ½·C·V².
		iScale = math.Min(iScale, st.startVoltage(v0)*math.Sqrt(st.Capacitance/lOpen))
	}
	stroke := md.Plunger.GapMax - md.Plunger.GapMin
	lam := md.Magnet.FluxLinkage(iScale, md.Plunger.GapMin)
	tau := lOpen / rt
	sc[sFlux] = lam
	sc[sGap] = stroke
	sc[sVel] = stroke / tau
	sc[sSwitchC] = v0
	sc[sSnubberC] = v0
	sc[sBus] = v0
	sc[sWinding], sc[sHousing] = 100, 100 // K
	// Energies: the magnetic energy stored at that current.
	e := 0.5 * lam * iScale
	for k := qSupply; k < nState; k++ {
		sc[k] = e
	}
	if md.CoreLossResistance == 0 {
		sc[qCore] = -1 // unused: out of the error norm
	}
	// The retired ring's energy (sim_ring.go) enters the error norm only once
	// the ring is retired, with its energy then as the scale, so that runs
	// before retirement stay exactly as they were.
	sc[sRing] = -1
	return sc
}

// Build turns a loaded scenario into models, checking what the loader
// cannot check alone (model consistency). Errors point at the scenario
// field concerned. The parts are built in order (coil, plunger, magnet,
// drive, control, thermal, timing: the magnet from geometry needs the coil,
// the control the drive) and the first error is returned.
func Build(s *Scenario) (*Model, error) {
	md := &Model{Name: s.Name, Source: s.Source, Timing: s.Timing, Limits: s.Limits, Solver: s.Solver, DemagCurrent: s.Magnet.DemagCurrent,
		EddyResistance: s.Magnet.EddyResistance, CoreLossResistance: s.Coil.CoreLossResistance,
		LowSupply: s.Supply.LowVoltage, Tolerances: s.Tolerances, Sense: s.Sense}
	if d := s.Duty; d != nil {
		md.Duty = &DutyPattern{OnTime: d.OnTime, Period: d.Period, Segments: d.Segments, Duration: d.Duration}
	}
	steps := []func(*Scenario, *Model) error{buildCoilModel, buildPlunger, buildMagnet, buildDrive, buildControl,
		buildThermal, checkTiming}
	for _, step := range steps {
		if err := step(s, md); err != nil {
			return nil, err
		}
	}
	return md, nil
}

// buildCoilModel sets the coil (from the measured resistance, or from the
// bobbin and wire) and the winding temperature of the run.
func buildCoilModel(s *Scenario, md *Model) error {
	md.Coil = magnet.Coil{Resistance: s.Coil.Resistance, RefTemperature: s.Coil.RefTemperature,
		TempCoeff: s.Coil.TempCoeff, Turns: s.Coil.Turns}
	if cb := s.Coil.Build; cb != nil {
		fig, err := buildCoil(cb)
		if err != nil {
			return s.Errorf("coil.build", "%v", err)
		}
		md.CoilBuild = &fig
		// The build gives the resistance at 20 °C (IEC 60028 resistivity).
		md.Coil = magnet.Coil{Resistance: fig.Resistance20, RefTemperature: 293.15, TempCoeff: s.Coil.TempCoeff, Turns: fig.Turns}
	}
	if err := md.Coil.Validate(); err != nil {
		return s.Errorf("coil", "%v", err)
	}
	md.Temperature = s.Coil.Temperature
	if r := md.CoilResistance(); !(r > 0) {
		return s.Errorf("coil.temperature", "coil resistance at %.1f degC is %g ohm, not positive", md.Temperature-273.15, r)
	}
	return nil
}

// buildPlunger sets the plunger: mass, stops, spring, damping, impacts and
// its loads (a constant load, the orifice pressure).
func buildPlunger(s *Scenario, md *Model) error {
	p := s.Plunger
	md.Plunger = mech.Plunger{Mass: p.Mass, GapMin: p.SeatedGap, GapMax: p.RestGap,
		Spring: mech.Spring{Preload: p.SpringPreload, Rate: p.SpringRate}, Damping: p.Damping,
		Restitution: p.Restitution, StickSpeed: p.StickSpeed}
	var loads mech.Loads
	if p.ConstantLoad != 0 {
		loads = append(loads, mech.ConstantLoad(p.ConstantLoad))
	}
	if p.Pressure > 0 {
		loads = append(loads, mech.OrificeLoad{Pressure: p.Pressure, Area: p.OrificeArea, Travel: p.SealTravel, GapMax: p.RestGap})
	}
	if len(loads) > 0 {
		md.Plunger.Load = loads
	}
	if err := md.Plunger.Validate(); err != nil {
		return s.Errorf("plunger", "%v", err)
	}
	return nil
}

// withPermanentMagnet adds the scenario's permanent magnet (magnet mmf, or
// the holding force at the seated gap) to gap law gl; gl itself when none
// is given.
func withPermanentMagnet(s *Scenario, gl *magnet.GapLaw) (*magnet.GapLaw, error) {
	g := s.Magnet
	key, mmf := "magnet.gap law.magnet mmf", g.MagnetMMF
	if g.HoldingForce > 0 {
		var err error
		key = "magnet.gap law.holding force"
		if mmf, err = gl.MMFForHoldingForce(g.HoldingForce, s.Plunger.SeatedGap); err != nil {
			return nil, s.Errorf(key, "%v", err)
		}
	}
	if mmf == 0 {
		return gl, nil
	}
	pm, err := gl.WithMagnet(mmf)
	if err != nil {
		return nil, s.Errorf(key, "%v", err)
	}
	return pm, nil
}

// zeroCurrentFlux returns the flux linkage λ(0, x) (Wb) of magnetic model
// m at gap x (m): a permanent magnet's (magnet.Magnetized), exactly 0 for
// every other model (a table's rounding at zero current is not taken).
func zeroCurrentFlux(m magnet.Model, x float64) float64 {
	if magnetized(m) {
		return m.FluxLinkage(0, x)
	}
	return 0
}

// magnetized reports whether magnetic model m holds a permanent magnet.
func magnetized(m magnet.Model) bool {
	pm, ok := m.(magnet.Magnetized)
	return ok && pm.HasPermanentMagnet()
}

// HasPermanentMagnet reports whether the model's magnet holds a permanent
// magnet (a latching plunger).
func (md *Model) HasPermanentMagnet() bool { return magnetized(md.Magnet) }

// chordInductance returns (λ(i, x) − λ(0, x))/i (H): the chord inductance
// of the coil's own current, λ/i without a permanent magnet.
func chordInductance(m magnet.Model, i, x float64) float64 {
	return (m.FluxLinkage(i, x) - zeroCurrentFlux(m, x)) / i
}

// buildMagnet sets the magnetic model: the gap law, a flux-linkage table
// that must cover the stroke, or the magnet from geometry (which needs the
// coil's build, so the coil comes first).
func buildMagnet(s *Scenario, md *Model) error {
	p := s.Plunger
	switch s.Magnet.Kind {
	case MagnetGapLaw:
		g := s.Magnet
		var err error
		var gl *magnet.GapLaw
		if g.PoleArea > 0 {
			gl, err = magnet.NewGapLawTurns(g.ClosedInductance, g.OpenInductance, p.SeatedGap, p.RestGap, s.Coil.Turns, g.PoleArea)
		} else {
			gl, err = magnet.NewGapLaw(g.ClosedInductance, g.OpenInductance, p.SeatedGap, p.RestGap)
		}
		if err != nil {
			return s.Errorf("magnet.gap law", "%v", err)
		}
		if gl, err = withPermanentMagnet(s, gl); err != nil {
			return err
		}
		md.Magnet = gl
	case MagnetTable:
		tb, err := readFluxTable(s)
		if err != nil {
			return err
		}
		lo, hi := tb.GapRange()
		if lo > p.SeatedGap*(1+1e-9) || hi < p.RestGap*(1-1e-9) {
			return s.Errorf("magnet.table.file", "table covers gaps %.4g–%.4g mm but the plunger moves over %.4g–%.4g mm",
				lo*1e3, hi*1e3, p.SeatedGap*1e3, p.RestGap*1e3)
		}
		md.Magnet = tb
	case MagnetCurves:
		cm, f, err := buildForceCurves(s, md)
		if err != nil {
			return err
		}
		md.Magnet, md.Curves = cm, newCurveData(s, cm, f)
	case MagnetGeom:
		pm, tb, err := buildGeometry(s, md)
		if err != nil {
			return err
		}
		md.Geometry, md.Magnet = pm, tb
	default:
		return s.Errorf("magnet", "unknown magnetic model %q", s.Magnet.Kind)
	}
	return nil
}

// suppressorKinds maps the scenario's suppression types to circuit kinds.
var suppressorKinds = map[string]circuit.Kind{SuppressNone: circuit.None, SuppressFreewheel: circuit.Freewheel,
	SuppressDiodeZener: circuit.DiodeZener, SuppressTVS: circuit.TVS, SuppressSnubber: circuit.Snubber,
	SuppressSwitchClamp: circuit.SwitchClamp, SuppressBridge: circuit.Bridge}

// buildSuppressor returns the suppression part; for a diode + Zener it also
// sets md.DiodeDrop.
func buildSuppressor(s *Scenario, md *Model) (circuit.Suppressor, error) {
	k, ok := suppressorKinds[s.Suppression.Kind]
	if !ok {
		return circuit.Suppressor{}, s.Errorf("suppression.type", "unknown suppression type %q", s.Suppression.Kind)
	}
	sup := circuit.Suppressor{Kind: k, Resistance: s.Suppression.Resistance, Capacitance: s.Suppression.Capacitance}
	switch k {
	case circuit.Freewheel:
		sup.Voltage = s.Suppression.ForwardDrop
	case circuit.DiodeZener:
		sup.Voltage = s.Suppression.ForwardDrop + s.Suppression.ZenerVoltage
		md.DiodeDrop = s.Suppression.ForwardDrop
	case circuit.TVS, circuit.SwitchClamp:
		sup.Voltage = s.Suppression.ClampVoltage
	case circuit.Bridge:
		sup.Voltage = s.Suppression.ForwardDrop
	}
	return sup, nil
}

// buildDrive sets the drive circuit (supply, switch, suppression part,
// winding capacitance, recirculation path), the bulk capacitor and the
// switch's edge times.
func buildDrive(s *Scenario, md *Model) error {
	sup, err := buildSuppressor(s, md)
	if err != nil {
		return err
	}
	md.Drive = circuit.Drive{
		Supply: circuit.Supply{Voltage: s.Supply.Voltage, SourceResistance: s.Supply.SourceResistance},
		Switch: circuit.Switch{OnResistance: s.Switch.OnResistance, OutputCapacitance: s.Switch.OutputCapacitance,
			BreakdownVoltage: s.Switch.BreakdownVoltage, BodyDiodeDrop: s.Switch.BodyDiodeDrop},
		Suppressor:      sup,
		CoilCapacitance: s.Coil.WindingCapacitance,
	}
	if err := md.Drive.Validate(); err != nil {
		return s.Errorf("suppression", "%v", err)
	}
	md.BulkCapacitance = s.Supply.BulkCapacitance
	if st := s.Supply.Storage; st != nil {
		md.Storage = &StorageCapacitor{Capacitance: st.Capacitance, ESR: st.ESR, ChargeVoltage: st.ChargeVoltage,
			ChargingResistance: st.ChargingResistance, RechargeFraction: st.RechargeFraction, ChargeTime: st.ChargeTime,
			SourceResistance: s.Supply.SourceResistance}
	}
	md.RiseTime, md.FallTime = s.Switch.RiseTime, s.Switch.FallTime
	dr := s.Drive
	md.Drive.Recirc = circuit.Recirculation{Drop: dr.RecirculationDrop, Resistance: dr.RecirculationResistance}
	return nil
}

// controlModes maps the scenario's drive modes to circuit control modes
// (no mode: constant).
var controlModes = map[string]circuit.ControlMode{"": circuit.Constant, DriveConstant: circuit.Constant, DrivePWM: circuit.PWM,
	DrivePeakHold: circuit.PeakHold, DriveBoostHold: circuit.BoostHold, DrivePulses: circuit.Constant}

// buildControl sets the driver's control law and checks it against the
// drive (so the drive comes first).
func buildControl(s *Scenario, md *Model) error {
	dr := s.Drive
	cm, ok := controlModes[dr.Mode]
	if !ok {
		return s.Errorf("drive.mode", "unknown drive mode %q", dr.Mode)
	}
	md.Control = circuit.Control{Mode: cm, Frequency: dr.Frequency, Duty: dr.Duty, PeakCurrent: dr.PeakCurrent,
		PeakTime: dr.PeakTime, HoldCurrent: dr.HoldCurrent, Band: dr.Band, FastDecay: dr.Decay == "fast",
		BoostVoltage: dr.BoostVoltage, BoostTime: dr.BoostTime, ReversePulse: s.Suppression.ReversePulse,
		ReverseDelay: s.Suppression.ReverseDelay}
	if dr.BrakeFor > 0 {
		md.Control = md.Control.WithBrake(dr.BrakeAt, dr.BrakeFor)
	}
	md.Pulses = dr.Mode == DrivePulses
	if dr.Mode == DrivePulses && dr.ReleasePulse > 0 {
		// The latch pulse ends at de-energize (the loader set it); the
		// release pulse is the bridge's reverse pulse, delayed to its start.
		md.Control.ReversePulse = dr.ReleasePulse
		md.Control.ReverseDelay = max(0, dr.ReleaseAt-s.Timing.DeenergizeAt)
	}
	if dr.Regulation == "fixed frequency" {
		md.Control.Regulation = circuit.FixedFrequency
	}
	if err := md.Control.Validate(&md.Drive); err != nil {
		return s.Errorf("drive", "%v", err)
	}
	return nil
}

// buildThermal sets the coil's thermal network, the ambient and the
// insulation class when the scenario has a thermal section; the run then
// starts at the ambient unless a coil temperature is written.
func buildThermal(s *Scenario, md *Model) error {
	th := s.Thermal
	if th == nil {
		return nil
	}
	md.Ambient = th.Ambient
	net, err := thermalNetwork(th, md.CoilBuild)
	if err != nil {
		return s.Errorf("thermal", "%v", err)
	}
	md.Thermal = &net
	if th.Class != "" {
		lim, err := magnet.InsulationClassLimit(th.Class)
		if err != nil {
			return s.Errorf("thermal.insulation class", "%v", err)
		}
		md.InsulationClass, md.InsulationLimit = th.Class, lim
	}
	// With a thermal model the run starts at the coil temperature when
	// one is written, else at the ambient.
	if _, written := s.pos["coil.temperature"]; !written {
		md.Temperature = th.Ambient
	}
	return nil
}

// thermalNetwork makes the thermal network of a thermal section: from a
// rating, from the surface (the copper's heat capacity from the coil's
// build when none is given), or as a two-body network.
func thermalNetwork(th *ThermalSpec, coil *magnet.CoilFigures) (magnet.Thermal, error) {
	var net magnet.Thermal
	var err error
	switch th.Kind {
	case "rating":
		net, err = magnet.FromRating(th.Rise, th.AtPower, th.TimeConstant)
	case "surface":
		c := th.HeatCapacity
		if c == 0 && coil != nil {
			// copper only: a conservative (fast-heating) estimate
			c = coil.CopperMass * magnet.CopperSpecificHeat
		}
		net, err = magnet.FromSurface(th.SurfaceArea, th.Convection, c)
	case "network":
		net = magnet.Thermal{WindingCapacity: th.HeatCapacity, WindingToHousing: th.WindingToHousing,
			HousingCapacity: th.HousingCapacity, HousingToAmbient: th.HousingToAmbient}
		err = net.Validate()
	}
	return net, err
}

// checkTiming checks the energize, de-energize and end times.
func checkTiming(s *Scenario, _ *Model) error {
	t := s.Timing
	if !(t.EnergizeAt >= 0 && t.DeenergizeAt > t.EnergizeAt && t.End > t.DeenergizeAt) {
		return s.Errorf("timing", "need 0 <= energize at < de-energize at < end")
	}
	if math.IsInf(t.End, 0) {
		return s.Errorf("timing.end", "must be finite")
	}
	return nil
}

// LoadModel loads a scenario file and builds its model.
func LoadModel(path string) (*Model, error) {
	s, err := Load(path)
	if err != nil {
		return nil, err
	}
	return Build(s)
}

// buildCoil computes the winding figures of a coil given by bobbin and wire.
func buildCoil(cb *CoilBuildSpec) (magnet.CoilFigures, error) {
	d := cb.WireDiameter
	if cb.WireGauge > 0 || d == 0 {
		var err error
		if d, err = magnet.AWGDiameter(cb.WireGauge); err != nil {
			return magnet.CoilFigures{}, err
		}
	}
	b := magnet.CoilBuild{InnerDiameter: cb.InnerDiameter, OuterDiameter: cb.OuterDiameter, Length: cb.Length,
		WireDiameter: d, OverallDiameter: cb.OverallDiameter, Grade: cb.Grade, Turns: cb.Turns, FillFactor: cb.FillFactor}
	return b.Figures()
}

// buildGeometry solves the plunger magnet from its dimensions and samples
// it into a flux-linkage table over the plunger's stroke.
func buildGeometry(s *Scenario, md *Model) (*magnet.PlungerMagnet, *magnet.Table, error) {
	gs := s.Magnet.Geometry
	cb := s.Coil.Build
	if cb == nil || md.CoilBuild == nil {
		return nil, nil, s.Errorf("magnet.geometry", "needs coil.build: the winding space and turns come from the bobbin")
	}
	p := s.Plunger
	if !(p.SeatedGap > 0) {
		return nil, nil, s.Errorf("plunger.seated gap", "a magnet from geometry needs a residual gap > 0 at the seat (a shim or the surface finish, e.g. 0.02 mm)")
	}
	g := magnet.PlungerGeometry{
		PlungerDiameter: gs.PlungerDiameter, PlungerLength: gs.PlungerLength,
		PoleDiameter: gs.PoleDiameter, PoleLength: gs.PoleLength,
		ShellOuterDiameter: gs.ShellOuterDiameter, ShellWall: gs.ShellWall,
		ShellLength: gs.ShellLength, EndPlateThickness: gs.EndPlateThickness,
		SlidingGap: gs.SlidingGap, SlidingLength: gs.SlidingLength,
		WindingInnerRadius: cb.InnerDiameter / 2, WindingOuterRadius: cb.OuterDiameter / 2, WindingLength: cb.Length,
	}
	var steel magnet.BHCurve
	if gs.SteelCurveFile != "" {
		bh, err := readSteelCurve(s)
		if err != nil {
			return nil, nil, err
		}
		steel = bh
	} else {
		fk, err := magnet.NewFrohlichKennelly(gs.SteelSaturation, gs.SteelPermeability)
		if err != nil {
			return nil, nil, s.Errorf("magnet.geometry.steel saturation", "%v", err)
		}
		steel = fk
	}
	pm, err := magnet.NewPlungerMagnet(g, steel, md.CoilBuild.Turns)
	if err != nil {
		return nil, nil, s.Errorf("magnet.geometry", "%v", err)
	}
	maxI := gs.MaxCurrent
	if maxI == 0 {
		r := math.Min(md.Coil.Resistance, md.CoilResistance())
		maxI = 3 * s.Supply.Voltage / r
	}
	nI, nX := gs.TableCurrents, gs.TableGaps
	// Currents spaced quadratically: at small gaps the steel saturates at
	// a small fraction of the rated current, where λ(i) bends sharply.
	currents := make([]float64, nI)
	for k := range currents {
		u := float64(k) / float64(nI-1)
		currents[k] = maxI * u * u
	}
	// Gaps spaced geometrically: the permeance varies as 1/x.
	gaps := make([]float64, nX)
	for j := range gaps {
		gaps[j] = p.SeatedGap * math.Pow(p.RestGap/p.SeatedGap, float64(j)/float64(nX-1))
	}
	gaps[nX-1] = p.RestGap
	tb, err := pm.BuildTable(currents, gaps)
	if err != nil {
		return nil, nil, s.Errorf("magnet.geometry", "%v", err)
	}
	return pm, tb, nil
}
