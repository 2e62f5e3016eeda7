package circuit

import (
	"errors"
	"fmt"
	"math"
)

// Supply is an ideal DC source behind a series resistance.
type Supply struct {
	Voltage          float64 // V
	SourceResistance float64 // ohm
}

// Switch is the low-side switch, a MOSFET say.
type Switch struct {
	OnResistance      float64 // ohm
	OutputCapacitance float64 // F; 0 for ideal edges
	BreakdownVoltage  float64 // V, avalanche voltage (taken as constant)
	BodyDiodeDrop     float64 // V, body diode forward drop (constant)
}

// Kind is the type of suppression part.
type Kind int

// Suppression kinds.
const (
	None        Kind = iota // nothing: the switch capacitance charges to breakdown and avalanches
	Freewheel               // diode across the coil
	DiodeZener              // diode in series with a Zener across the coil
	TVS                     // bidirectional TVS across the coil
	Snubber                 // series R–C across the coil
	SwitchClamp             // Zener or TVS from the switch node to ground
	Bridge                  // H-bridge drive: at turn-off the bridge's diodes return the coil current to the supply (reverse drive)
)

var kindNames = [...]string{"none", "freewheel diode", "diode zener", "tvs", "rc snubber", "switch clamp", "reverse drive"}

func (k Kind) String() string {
	if k < 0 || int(k) >= len(kindNames) {
		return fmt.Sprintf("Kind(%d)", int(k))
	}
	return kindNames[k]
}

// Suppressor is the inductive-kick suppression part.
type Suppressor struct {
	Kind Kind
	// Voltage (V) is the conduction threshold: across the coil, the total
	// drop once it conducts (freewheel: Vf; diode zener: Vf + Vz; TVS: its
	// clamp voltage); for SwitchClamp, the clamp voltage at the switch node.
	Voltage float64
	// Resistance (ohm): the dynamic resistance of a clamp (its voltage is
	// Voltage + Resistance·i), or the snubber's resistor.
	Resistance  float64
	Capacitance float64 // F, snubber capacitor
}

// acrossCoil reports a suppressor that conducts across the coil and pins
// the coil voltage at −(Voltage + Resistance·i) when it does.
func (s Suppressor) acrossCoil() bool {
	return s.Kind == Freewheel || s.Kind == DiodeZener || s.Kind == TVS
}

// Recirculation is the slow-decay path of a chopping driver: a freewheel
// diode (or a synchronous switch) across the coil that carries the current
// while the switch is off between chopping pulses.
type Recirculation struct {
	Drop       float64 // V
	Resistance float64 // ohm
}

// Drive is the whole drive circuit.
type Drive struct {
	Supply     Supply
	Switch     Switch
	Suppressor Suppressor
	Recirc     Recirculation
	// CoilCapacitance (F) is the coil's winding capacitance, across its
	// terminals (between the rail and the switch node); 0 for none. While
	// nothing pins the switch node it adds to the switch capacitance at the
	// node (the rail is stiff at the ring's frequency); while a path pins
	// the coil voltage its charge follows that voltage.
	CoilCapacitance float64
}

// Validate reports a drive that cannot be simulated.
func (d *Drive) Validate() error {
	if err := d.validateRatings(); err != nil {
		return err
	}
	return d.Suppressor.validate(d.Supply.Voltage, d.Switch.BreakdownVoltage)
}

// validateRatings checks the supply, the switch and the suppressor's
// resistance and capacitance (NaN-safe: every test is written so that NaN
// fails it).
func (d *Drive) validateRatings() error {
	s, sw, p := d.Supply, d.Switch, d.Suppressor
	switch {
	case !(s.Voltage > 0):
		return fmt.Errorf("circuit: supply voltage must be positive, got %g V", s.Voltage)
	case !(s.SourceResistance >= 0) || !(sw.OnResistance >= 0):
		return errors.New("circuit: resistances must not be negative")
	case !(sw.OutputCapacitance >= 0):
		return errors.New("circuit: switch output capacitance must not be negative")
	case !(d.CoilCapacitance >= 0):
		return errors.New("circuit: coil capacitance must not be negative")
	case !(sw.BreakdownVoltage > s.Voltage):
		return fmt.Errorf("circuit: switch breakdown %g V must exceed the supply %g V", sw.BreakdownVoltage, s.Voltage)
	case !(sw.BodyDiodeDrop > 0):
		return errors.New("circuit: body diode drop must be positive")
	case !(p.Resistance >= 0):
		return errors.New("circuit: suppressor resistance must not be negative")
	case !(p.Capacitance >= 0):
		return errors.New("circuit: suppressor capacitance must not be negative")
	}
	return nil
}

// validate checks the part's kind and the values that kind needs, against
// the supply voltage and the switch's breakdown voltage (V).
func (s Suppressor) validate(supply, breakdown float64) error {
	switch s.Kind {
	case None:
	case Freewheel, DiodeZener:
		if !(s.Voltage > 0) {
			return fmt.Errorf("circuit: %v voltage must be positive", s.Kind)
		}
	case TVS:
		if !(s.Voltage > supply) {
			return fmt.Errorf("circuit: TVS clamp %g V must exceed the supply %g V, or it conducts while the coil is on", s.Voltage, supply)
		}
	case SwitchClamp:
		if !(s.Voltage > supply) || !(s.Voltage < breakdown) {
			return fmt.Errorf("circuit: switch clamp %g V must lie between the supply %g V and the switch breakdown %g V", s.Voltage, supply, breakdown)
		}
	case Snubber:
		if !(s.Resistance > 0) || !(s.Capacitance > 0) {
			return errors.New("circuit: snubber needs a positive resistance and capacitance")
		}
	case Bridge:
		if !(s.Voltage > 0) {
			return errors.New("circuit: reverse drive needs the bridge diodes' forward drop")
		}
	default:
		return fmt.Errorf("circuit: unknown suppressor kind %d", int(s.Kind))
	}
	return nil
}

// Mode is the conduction state of the drive.
type Mode int

// Modes.
const (
	On              Mode = iota // switch conducting
	Off                         // switch off, nothing pinned: the node capacitance (switch and winding) or the snubber carries the coil current; with neither, the coil is open and its current is zero
	CoilClamp                   // switch off, suppressor across the coil conducting
	SwClamp                     // switch off, clamp across the switch conducting
	Avalanche                   // switch off, switch in avalanche at its breakdown voltage
	BodyDiode                   // switch off, body diode conducting (switch node below ground)
	CoilClampRev                // switch off, bidirectional TVS across the coil conducting a reversed coil current
	Recirc                      // switch off between chopping pulses, the slow-decay path carrying the coil current
	BridgeReturn                // H-bridge off: the bridge diodes return the coil current to the supply
	BridgeReverse               // H-bridge driving the coil in reverse (a timed reverse pulse)
	BridgeReturnRev             // H-bridge off after a reverse pulse: the diodes return a reversed coil current
)

var modeNames = [...]string{"on", "off", "coil clamp", "switch clamp", "avalanche", "body diode", "coil clamp (reverse)",
	"recirculation", "bridge return", "bridge reverse", "bridge return (reverse)"}

func (m Mode) String() string {
	if m < 0 || int(m) >= len(modeNames) {
		return fmt.Sprintf("Mode(%d)", int(m))
	}
	return modeNames[m]
}

// Point is the drive's operating point in one mode: branch voltages and
// currents (V, A), the derivatives of its states (V/s) and the power into
// each part (W).
type Point struct {
	CoilVoltage   float64 // rail minus switch node
	SwitchVoltage float64 // switch node to ground
	SupplyCurrent float64 // out of the ideal source
	SwitchCurrent float64 // through the switch channel, avalanche or body diode (drain to source; negative for the body diode)
	ClampCurrent  float64 // through the suppressor in its conducting direction (snubber: rail to switch node)
	DSwitchCap    float64 // d(switch capacitor voltage)/dt
	DSnubberCap   float64 // d(snubber capacitor voltage)/dt
	PSupply       float64 // delivered by the ideal source
	PSource       float64 // in the source resistance
	PSwitch       float64 // in the switch: conduction, avalanche and body diode
	PAvalanche    float64 // the avalanche part of PSwitch
	PClamp        float64 // in the suppressor (snubber: its resistor)
	PDiode        float64 // in the recirculation path and the bridge diodes
	CurrentPinned bool    // the coil has no path: its current is held at zero
}

// Open reports whether, in mode Off, the coil has no path at all (no
// switch or coil capacitance, no snubber): its terminal current must then
// stay zero.
func (d *Drive) Open() bool {
	return d.NodeCapacitance() == 0 && d.Suppressor.Kind != Snubber
}

// NodeCapacitance returns the capacitance at the switch node in mode Off
// (F): the switch's output capacitance to ground and the coil's winding
// capacitance to the rail, in parallel for the node's dynamics.
func (d *Drive) NodeCapacitance() float64 { return d.Switch.OutputCapacitance + d.CoilCapacitance }

// HasSwitchCap reports whether the switch node voltage is a state (some
// capacitance at the node).
func (d *Drive) HasSwitchCap() bool { return d.NodeCapacitance() > 0 }

// Solve fills pt for mode m, coil current iL (A), switch capacitor voltage
// vC and snubber capacitor voltage vS (V), with the supply as specified.
// It does not allocate.
func (d *Drive) Solve(m Mode, iL, vC, vS float64, pt *Point) {
	d.SolveRail(m, d.Supply.Voltage, d.Supply.SourceResistance, iL, vC, vS, pt)
}

// SolveRail is Solve with the supply's source voltage v0 (V) and source
// resistance rs (ohm) given: a boosted supply, or the bulk capacitor's
// voltage behind no resistance. Each mode's branch laws are in its own
// solve function below, which returns the snubber current; the snubber's
// and the source's terms are added here.
func (d *Drive) SolveRail(m Mode, v0, rs, iL, vC, vS float64, pt *Point) {
	*pt = Point{}
	var ip float64 // snubber current, rail to switch node
	switch m {
	case On:
		ip = d.solveOn(v0, rs, iL, vS, pt)
	case Off:
		ip = d.solveOff(v0, rs, iL, vC, vS, pt)
	case CoilClamp, CoilClampRev:
		d.solveCoilClamp(m, v0, iL, pt)
	case Recirc:
		ip = d.solveRecirc(v0, iL, vS, pt)
	case BridgeReturn, BridgeReturnRev:
		d.solveBridgeReturn(m, v0, rs, iL, pt)
	case BridgeReverse:
		d.solveBridgeReverse(v0, rs, iL, pt)
	case SwClamp, Avalanche, BodyDiode:
		ip = d.solvePinnedNode(m, v0, rs, iL, vS, pt)
	}
	if d.Suppressor.Kind == Snubber {
		d.addSnubber(m, ip, pt)
	}
	pt.PSupply = v0 * pt.SupplyCurrent
	pt.PSource = rs * pt.SupplyCurrent * pt.SupplyCurrent
}

// solveOn fills pt for mode On (the switch, or a bridge's two switches,
// conducting) and returns the snubber current (A, rail to switch node).
func (d *Drive) solveOn(v0, rs, iL, vS float64, pt *Point) (ip float64) {
	sup := &d.Suppressor
	ron := d.Switch.OnResistance
	if sup.Kind == Bridge {
		ron *= 2 // two switches of the bridge in series with the coil
	}
	rt := rs + ron
	var vcoil float64
	if sup.Kind == Snubber {
		// v_coil = V0 − Rt·(iL + ip), ip = (v_coil − vS)/Rsn.
		k := rt / sup.Resistance
		vcoil = (v0 - rt*iL + k*vS) / (1 + k)
		ip = (vcoil - vS) / sup.Resistance
	} else {
		vcoil = v0 - rt*iL
	}
	isw := iL + ip
	pt.CoilVoltage = vcoil
	pt.SwitchVoltage = d.Switch.OnResistance * isw // the low-side switch's node (one switch of a bridge)
	pt.SupplyCurrent = isw
	pt.SwitchCurrent = isw
	pt.PSwitch = ron * isw * isw
	return ip
}

// solveOff fills pt for mode Off (nothing pinned: the node capacitance or
// the snubber carries the coil current; with neither the coil is open) and
// returns the snubber current (A).
func (d *Drive) solveOff(v0, rs, iL, vC, vS float64, pt *Point) (ip float64) {
	sup := &d.Suppressor
	switch {
	case d.HasSwitchCap():
		if sup.Kind == Snubber {
			ip = (v0 - rs*iL - vC - vS) / (sup.Resistance + rs)
		}
		// The coil's terminal current (and the snubber's) reaches the
		// node and charges both capacitances there; the winding
		// capacitance's own current returns to the rail, so the supply
		// carries only the switch capacitance's share.
		in := iL + ip
		cn := d.NodeCapacitance()
		is := in * d.Switch.OutputCapacitance / cn
		pt.SupplyCurrent = is
		pt.SwitchVoltage = vC
		pt.CoilVoltage = v0 - rs*is - vC
		pt.DSwitchCap = in / cn
	case sup.Kind == Snubber:
		// All coil current goes round through the snubber.
		ip = -iL
		pt.CoilVoltage = vS + sup.Resistance*ip
		pt.SwitchVoltage = v0 - pt.CoilVoltage
	default:
		pt.CurrentPinned = true
		pt.SwitchVoltage = v0
	}
	return ip
}

// solveCoilClamp fills pt for CoilClamp and CoilClampRev: the suppressor
// across the coil carries the whole coil current. The laws are written for
// the conducting direction and continued analytically past zero current
// (no |i|), so that the integrator sees a smooth right-hand side up to the
// located end of conduction.
func (d *Drive) solveCoilClamp(m Mode, v0, iL float64, pt *Point) {
	sup := &d.Suppressor
	a := iL
	if m == CoilClampRev {
		a = -iL
	}
	vcl := sup.Voltage + sup.Resistance*a
	pt.CoilVoltage = -vcl
	if m == CoilClampRev {
		pt.CoilVoltage = vcl
	}
	pt.SwitchVoltage = v0 - pt.CoilVoltage
	pt.ClampCurrent = a
	pt.PClamp = vcl * a
}

// solveRecirc fills pt for Recirc, the slow-decay path across the coil,
// written for the conducting direction (continued analytically past zero),
// and returns the snubber current (A). A snubber across the coil shares the
// loop: the diode carries iL + ip, and ip = (−Vd − Rd·iL − vS)/(Rsn + Rd)
// from KVL round coil and snubber.
func (d *Drive) solveRecirc(v0, iL, vS float64, pt *Point) (ip float64) {
	sup := &d.Suppressor
	rd := d.Recirc.Resistance
	if sup.Kind == Snubber {
		ip = (-d.Recirc.Drop - rd*iL - vS) / (sup.Resistance + rd)
	}
	id := iL + ip
	vd := d.Recirc.Drop + rd*id
	pt.CoilVoltage = -vd
	pt.SwitchVoltage = v0 + vd
	pt.PDiode = vd * id
	return ip
}

// solveBridgeReturn fills pt for BridgeReturn and BridgeReturnRev: two
// bridge diodes in series return the coil current to the rail,
// v_coil = −(v_rail + 2·(Vd + Rd·i)) with v_rail = v0 + rs·i (mirrored for
// a reversed current).
func (d *Drive) solveBridgeReturn(m Mode, v0, rs, iL float64, pt *Point) {
	sup := &d.Suppressor
	a := iL
	if m == BridgeReturnRev {
		a = -iL
	}
	vd := sup.Voltage + sup.Resistance*a
	// The diodes return the coil current to the source in either
	// direction: the source current is −|iL|.
	is := -a
	vrail := v0 - rs*is
	pt.SupplyCurrent = is
	if m == BridgeReturn {
		pt.CoilVoltage = -(vrail + 2*vd)
		pt.SwitchVoltage = vrail + vd
	} else {
		pt.CoilVoltage = vrail + 2*vd
		pt.SwitchVoltage = -vd
	}
	pt.ClampCurrent = a
	pt.PDiode = 2 * vd * a
}

// solveBridgeReverse fills pt for BridgeReverse: the opposite pair of
// bridge switches drives the coil in reverse.
func (d *Drive) solveBridgeReverse(v0, rs, iL float64, pt *Point) {
	ron := d.Switch.OnResistance
	is := -iL
	vrail := v0 - rs*is
	pt.SupplyCurrent = is
	pt.CoilVoltage = -vrail - 2*ron*iL
	pt.SwitchVoltage = vrail + ron*iL
	pt.SwitchCurrent = iL
	pt.PSwitch = 2 * ron * iL * iL
}

// solvePinnedNode fills pt for the modes that pin the switch node (SwClamp
// at the clamp's voltage and dynamic resistance, Avalanche at breakdown,
// BodyDiode one drop below ground) and returns the snubber current (A).
func (d *Drive) solvePinnedNode(m Mode, v0, rs, iL, vS float64, pt *Point) (ip float64) {
	sup := &d.Suppressor
	var vpin, rpin float64
	switch m {
	case SwClamp:
		vpin, rpin = sup.Voltage, sup.Resistance
	case Avalanche:
		vpin = d.Switch.BreakdownVoltage
	case BodyDiode:
		vpin = -d.Switch.BodyDiodeDrop
	}
	if sup.Kind == Snubber {
		ip = (v0 - rs*iL - vpin - vS - rpin*iL) / (sup.Resistance + rs + rpin)
	}
	is := iL + ip
	vsw := vpin + rpin*is
	pt.SupplyCurrent = is
	pt.SwitchVoltage = vsw
	pt.CoilVoltage = v0 - rs*is - vsw
	p := vsw * is
	switch m {
	case SwClamp:
		pt.ClampCurrent = is
		pt.PClamp = p
	case Avalanche:
		pt.SwitchCurrent = is
		pt.PSwitch, pt.PAvalanche = p, p
	case BodyDiode:
		pt.SwitchCurrent = is
		pt.PSwitch = p
	}
	return ip
}

// addSnubber books the snubber's current ip (A) in mode m: its capacitor's
// derivative, its current and its resistor's loss. In Off without a node
// capacitance the snubber carries the coil current round the coil and the
// supply gives nothing.
func (d *Drive) addSnubber(m Mode, ip float64, pt *Point) {
	sup := &d.Suppressor
	pt.DSnubberCap = ip / sup.Capacitance
	pt.ClampCurrent = ip
	pt.PClamp = sup.Resistance * ip * ip
	if m == Off && !d.HasSwitchCap() {
		pt.SupplyCurrent = 0
	}
}

// MaxGuards is the largest number of guards any mode has.
const MaxGuards = 5

// Guards writes the guard values of mode m at operating point pt (from
// Solve with the same arguments) into g and returns how many there are.
// A guard is negative while the mode holds; it reaching zero from below is
// a mode change to Target(m, k).
func (d *Drive) Guards(m Mode, iL float64, pt *Point, g []float64) int {
	sup := &d.Suppressor
	switch m {
	case On:
		return 0
	case Off:
		if pt.CurrentPinned {
			return 0
		}
		vcoil, vsw := pt.CoilVoltage, pt.SwitchVoltage
		n := 0
		// 0: coil clamp forward (coil voltage reaching −Voltage)
		g[n] = math.Inf(-1)
		if sup.acrossCoil() {
			g[n] = -vcoil - sup.Voltage
		}
		n++
		// 1: TVS reverse direction (coil voltage reaching +Voltage)
		g[n] = math.Inf(-1)
		if sup.Kind == TVS {
			g[n] = vcoil - sup.Voltage
		}
		n++
		// 2: switch clamp
		g[n] = math.Inf(-1)
		if sup.Kind == SwitchClamp {
			g[n] = vsw - sup.Voltage
		}
		n++
		// 3: avalanche
		g[n] = vsw - d.Switch.BreakdownVoltage
		n++
		// 4: body diode
		g[n] = -d.Switch.BodyDiodeDrop - vsw
		n++
		return n
	case CoilClamp:
		// Conduction ends when the current falls to zero.
		g[0] = -iL
		return 1
	case CoilClampRev, BridgeReturnRev:
		g[0] = iL
		return 1
	case Recirc, BridgeReturn:
		g[0] = -iL
		return 1
	case BridgeReverse:
		return 0
	case SwClamp, Avalanche:
		g[0] = -pt.SupplyCurrent
		return 1
	case BodyDiode:
		g[0] = pt.SupplyCurrent
		return 1
	}
	return 0
}

// Target returns the mode entered when guard k of mode m reaches zero.
func (d *Drive) Target(m Mode, k int) Mode {
	if m != Off {
		return Off
	}
	switch k {
	case 0:
		return CoilClamp
	case 1:
		return CoilClampRev
	case 2:
		return SwClamp
	case 3:
		return Avalanche
	default:
		return BodyDiode
	}
}

// TurnOffMode returns the mode the drive takes at the instant the switch
// opens with coil current iL. With a switch capacitance or a snubber the
// current has somewhere to go and the mode is Off. Otherwise the current
// must flow at once through the path that the switch node reaches first:
// for a positive current the node rises, so the path that pins it lowest
// (coil clamp at V0 + Vcl + R·i, switch clamp at Vcl + R·i, avalanche at
// the breakdown voltage); for a negative current the node falls, so the
// path that pins it highest (TVS reverse at V0 − Vcl − R·|i|, body diode at
// −Vbd).
func (d *Drive) TurnOffMode(iL float64) Mode {
	if d.Suppressor.Kind == Bridge {
		// The bridge diodes take the current at once (their switching is
		// taken as ideal; the switch capacitance is not modelled here).
		switch {
		case iL > 0:
			return BridgeReturn
		case iL < 0:
			return BridgeReturnRev
		}
		return Off
	}
	if !d.Open() || iL == 0 {
		return Off
	}
	sup := &d.Suppressor
	v0 := d.Supply.Voltage
	a := math.Abs(iL)
	if iL < 0 {
		best, pin := BodyDiode, -d.Switch.BodyDiodeDrop
		if sup.Kind == TVS {
			if v := v0 - sup.Voltage - sup.Resistance*a; v > pin {
				best = CoilClampRev
			}
		}
		return best
	}
	best, pin := Avalanche, d.Switch.BreakdownVoltage
	switch {
	case sup.acrossCoil():
		if v := v0 + sup.Voltage + sup.Resistance*a; v < pin {
			best = CoilClamp
		}
	case sup.Kind == SwitchClamp:
		if v := sup.Voltage + sup.Resistance*a; v < pin {
			best = SwClamp
		}
	}
	return best
}

// ClampName names the part that conducts in mode m, for event logs.
func (d *Drive) ClampName(m Mode) string {
	switch m {
	case CoilClamp, CoilClampRev, SwClamp:
		return d.Suppressor.Kind.String()
	case Recirc:
		return "recirculation path"
	case BridgeReturn, BridgeReturnRev:
		return "bridge diodes"
	case BridgeReverse:
		return "bridge reverse drive"
	case Avalanche:
		return "switch avalanche"
	case BodyDiode:
		return "switch body diode"
	}
	return m.String()
}
