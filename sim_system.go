package coilkick

import (
	"math"
	"slices"

	"coilkick/circuit"
	"coilkick/magnet"
	"coilkick/mech"
)

// State vector of the coupled system. The first stateJac components feed
// back into the right-hand side; the rest are quadratures (energies) that
// the integrator carries with the same error control.
const (
	sFlux     = iota // λ, Wb: coil flux linkage
	sGap             // x, m: working air gap
	sVel             // v = dx/dt, m/s
	sSwitchC         // V: switch output capacitor voltage (used in circuit mode Off)
	sSnubberC        // V: snubber capacitor voltage
	sBus             // V: supply bulk capacitor voltage (when fitted)
	sWinding         // K: winding temperature (when a thermal model is given)
	sHousing         // K: housing temperature (two-node thermal model)
	sRing            // J: energy of the retired switch-node ring (sim_ring.go)
	qSupply          // J delivered by the ideal source
	qCoilR           // J in the coil resistance
	qSource          // J in the source resistance
	qSwitch          // J in the switch (conduction, avalanche, body diode, capacitive turn-on)
	qAval            // J of avalanche (part of qSwitch)
	qClamp           // J in the suppression part
	qMech            // J of mechanical work done by the magnetic force
	qEddy            // J in the equivalent eddy-current turn
	qCore            // J in the coil's core-loss (parallel) resistance
	qDiode           // J in the recirculation path and bridge diodes
	qReturned        // J returned to the supply rail by a bridge
	qCharge          // C: ∫ coil current dt
	qSupplyQ         // C: ∫ supply current dt
	nState

	stateJac = qSupply
)

// Mechanical modes.
type mechMode int

const (
	mechFree   mechMode = iota // between the stops
	mechSeated                 // held at the energized stop (x = GapMin)
	mechRest                   // held at the rest stop (x = GapMax)
)

func (m mechMode) String() string {
	return [...]string{"moving", "seated", "at rest"}[m]
}

// system is the coupled electrical–magnetic–mechanical model in its
// current modes. It is the only place that knows all the domains.
type system struct {
	mag     magnet.Model
	plunger mech.Plunger
	drive   circuit.Drive
	r       float64 // ohm, coil resistance at the run's winding temperature
	// eddy (ohm) is the resistance of the equivalent shorted turn that
	// stands for eddy currents in the steel, referred to the coil's turns;
	// 0 for none.
	eddy float64
	// rp (ohm) is the coil's core-loss resistance, across its terminals; 0
	// for none.
	rp float64
	// pm: the magnet has a permanent magnet, λ(0, x) ≠ 0 (zeroCurrentFlux);
	// an open coil's flux linkage then follows the gap.
	pm bool

	// thermal, when not nil, makes the winding temperature a state: the
	// coil resistance follows it and the coil's losses heat it.
	thermal *magnet.Thermal
	coil    magnet.Coil
	ambient float64 // K

	v0    float64 // V, present source voltage (the boost voltage while boosting)
	rs    float64 // ohm, source resistance
	bulkC float64 // F, bulk capacitor at the rail behind rs (0: none)
	// storage: the bulk capacitor is a capacitor-discharge drive's storage
	// capacitor (sim_storage.go), charged through its charging path; nil
	// for none.
	storage *StorageCapacitor

	cmode circuit.Mode
	mmode mechMode
	// lastCurrent is the coil current of the last guardsAt (A).
	lastCurrent float64
	// ringRetired: the switch node's ring is followed by its energy
	// (sim_ring.go); the node capacitance has left the drive, retiredC (F) and
	// retiredCoss (F) are what it was.
	ringRetired           bool
	retiredC, retiredCoss float64
	// termCurrent is the coil's terminal current of the last solve (A):
	// the winding current plus the core-loss resistance's.
	termCurrent float64
	pt          circuit.Point // scratch
	// blocked: the plunger never leaves the rest stop (Options.BlockPlunger);
	// imposed (m/s): the plunger's constant velocity while it moves, the
	// mechanics off (Options.ImposedVelocity; 0: none).
	blocked bool
	imposed float64

	// pieces: the magnet is smooth in the gap only piecewise (a table's
	// cells); piece is the one the integrator's present step is on
	// (enterPiece), nil before the first. The right-hand side (deriv)
	// evaluates the magnet on piece, so that within a step it stays one
	// smooth function even when a stage overshoots the piece's end, and the
	// integrator lands on the crossing (pieceGuards) instead of stepping
	// over a kink in the force's gap derivative.
	pieces magnet.GapPiecewise
	piece  magnet.GapPiece
	// curHint is the current interval of the piece's last current solve,
	// where the next search starts (magnet.GapPiece.CurrentForceNear).
	curHint int
	// memo is the last magnetic evaluation, valid while pieceGen is its
	// gen: the step's end is asked for by f, the guards and the outputs.
	memo     magMemo
	pieceGen int // counts the changes of piece
	// loadBreaks: the plunger's passive force is smooth in the gap only
	// piecewise (its load's breaks between the stops, ascending; nil when
	// smooth); deriv evaluates it on the load piece [loadLo, loadHi] that
	// holds at gap loadRef, continued past its ends, as it does the magnet.
	loadBreaks              []float64
	loadLo, loadHi, loadRef float64
}

// magMemo is one magnetic evaluation: the flux linkage (Wb) and gap (m)
// it was at, the current (A) and, when hasPull, the pull (N), on the
// magnet of piece generation gen.
type magMemo struct {
	lam, x, im, pull float64
	hasPull          bool
	gen              int
}

// memoHit reports whether the memo holds the magnet at y.
func (s *system) memoHit(y []float64) bool {
	return s.memo.gen == s.pieceGen && s.memo.lam == y[sFlux] && s.memo.x == y[sGap]
}

// outputs are the algebraic quantities at a state.
type outputs struct {
	Current, CoilVoltage, SwitchVoltage, SupplyCurrent, ClampCurrent float64
	Gap, Velocity, MagneticForce, PassiveForce                       float64
	RailVoltage                                                      float64 // V at the drive's supply terminals
	StorageVoltage                                                   float64 // V of the bus (storage) capacitor
	WindingTemperature                                               float64 // K
}

// resistance returns the coil resistance at y (ohm).
func (s *system) resistance(y []float64) float64 {
	if s.thermal == nil {
		return s.r
	}
	return s.coil.ResistanceAt(y[sWinding])
}

// rail returns the voltage and resistance the drive sees at its supply
// terminals: the source behind its resistance, the bulk capacitor, or the
// storage capacitor behind its ESR.
func (s *system) rail(y []float64) (v0, rs float64) {
	if s.storage != nil {
		return y[sBus], s.storage.ESR
	}
	if s.bulkC > 0 {
		return y[sBus], 0
	}
	return s.v0, s.rs
}

// current returns the coil current at y (and leaves the circuit solved
// in s.pt).
func (s *system) current(y []float64) float64 {
	i, _ := s.solve(y)
	return i
}

// solve evaluates the circuit at y into s.pt and returns the winding
// current i (through the coil resistance) and the magnetizing current im,
// the magnetic model's current for the flux linkage (the ampere-turns over
// N). The circuit is solved at the coil's terminal current, i plus the
// current in the core-loss resistance.
//
// Eddy currents are an equivalent shorted turn, perfectly coupled to the
// coil, of resistance Re referred to the coil's turns (a transformer with a
// resistive secondary, first-order circuit theory): the ampere-turns split
// as im = i + ie, and the common flux obeys dλ/dt = v − R·i = −Re·ie. In
// every circuit mode the coil voltage is affine in the terminal current,
// v = v0 − Ra·it; with the core-loss resistance Rp across the terminals
// (it = i + v/Rp) the winding sees the Thevenin equivalent
// v = (v0 − Ra·i)·Rp/(Rp + Ra), and an open circuit leaves v = −Rp·i.
// Then i = (v0' + Re·im)/(Re + Ra' + R) exactly. Without eddy currents
// i = im.
func (s *system) solve(y []float64) (i, im float64) {
	if s.memoHit(y) {
		im = s.memo.im
	} else {
		im = s.derivMagnet().Current(y[sFlux], y[sGap])
		s.memo = magMemo{lam: y[sFlux], x: y[sGap], im: im, gen: s.pieceGen}
	}
	return s.solveAt(y, im), im
}

// solveAt is solve with the magnetizing current im (A) given; it returns
// the winding current i.
func (s *system) solveAt(y []float64, im float64) (i float64) {
	vC, vS := y[sSwitchC], y[sSnubberC]
	v0, rs := s.rail(y)
	open := s.cmode == circuit.Off && s.drive.Open()
	if s.eddy == 0 && s.rp == 0 {
		i = im
		if open {
			i = 0
		}
		s.termCurrent = i
		s.drive.SolveRail(s.cmode, v0, rs, i, vC, vS, &s.pt)
		return i
	}
	// The circuit's Thevenin equivalent at the coil terminals.
	var vc0, ra float64
	if open {
		s.drive.SolveRail(s.cmode, v0, rs, 0, vC, vS, &s.pt)
		vc0, ra = 0, math.Inf(1)
	} else {
		s.drive.SolveRail(s.cmode, v0, rs, 0, vC, vS, &s.pt)
		vc0 = s.pt.CoilVoltage
		i1 := math.Abs(im)
		if i1 < 1e-6 {
			i1 = 1e-6
		}
		if s.cmode == circuit.CoilClampRev {
			i1 = -i1
		}
		s.drive.SolveRail(s.cmode, v0, rs, i1, vC, vS, &s.pt)
		ra = (vc0 - s.pt.CoilVoltage) / i1
	}
	if s.rp > 0 {
		if open {
			vc0, ra = 0, s.rp
		} else {
			vc0, ra = vc0*s.rp/(s.rp+ra), ra*s.rp/(s.rp+ra)
		}
	}
	switch {
	case s.eddy > 0:
		i = (vc0 + s.eddy*im) / (s.eddy + ra + s.resistance(y))
	case math.IsInf(ra, 1):
		i = 0 // open, no core-loss path (only with eddy currents here)
	default:
		i = im
	}
	it := i
	if s.rp > 0 {
		it = i + (vc0-ra*i)/s.rp
		if open {
			it = 0
		}
	}
	s.termCurrent = it
	s.drive.SolveRail(s.cmode, v0, rs, it, vC, vS, &s.pt)
	if open && s.rp > 0 {
		// Nothing at the node: the winding current circulates through the
		// core-loss resistance, and the node follows the coil voltage.
		s.pt.CoilVoltage = -s.rp * i
		s.pt.SwitchVoltage = v0 - s.pt.CoilVoltage
		s.pt.CurrentPinned = false
	}
	return i
}

// turnOffMode returns the mode the drive takes when the switch opens with
// terminal current i. With a core-loss resistance and nothing at the node
// the current first flows through that resistance (mode Off); the settle
// loop then moves to a clamp or avalanche if the coil voltage reaches it.
func (s *system) turnOffMode(i float64) circuit.Mode {
	if s.rp > 0 && s.drive.Open() && s.drive.Suppressor.Kind != circuit.Bridge {
		return circuit.Off
	}
	return s.drive.TurnOffMode(i)
}

func (s *system) deriv(_ float64, y, dy []float64) {
	x, v := y[sGap], y[sVel]
	im, pull := s.currentForce(y)
	i := s.solveAt(y, im)
	pt := &s.pt
	switch {
	case !pt.CurrentPinned:
		dy[sFlux] = pt.CoilVoltage - s.resistance(y)*i
	case s.eddy > 0:
		dy[sFlux] = -s.eddy * im // open coil: the flux decays through the eddy path
	case s.pm:
		// Open coil, no current: λ = λ(0, x) follows the gap,
		// dλ/dt = ∂λ/∂x|_i·v = −(∂i/∂x)/(∂i/∂λ)·v.
		dl, dx := s.derivMagnet().Partials(y[sFlux], x)
		dy[sFlux] = -dx / dl * v
	default:
		dy[sFlux] = 0
	}
	dy[qEddy] = s.eddy * (im - i) * (im - i)
	dy[qCore] = 0
	if s.rp > 0 {
		dy[qCore] = pt.CoilVoltage * pt.CoilVoltage / s.rp
	}
	if s.mmode == mechFree {
		dy[sGap] = v
		dy[sVel] = 0
		if s.imposed == 0 {
			dy[sVel] = s.acceleration(x, v, pull)
		}
	} else {
		dy[sGap], dy[sVel] = 0, 0
	}
	dy[sSwitchC] = 0
	if s.cmode == circuit.Off {
		dy[sSwitchC] = pt.DSwitchCap
	}
	dy[sSnubberC] = pt.DSnubberCap
	if s.bulkC > 0 {
		// Source behind rs (a storage capacitor: its charging path, if
		// any) charging the bulk capacitor, which feeds the drive; a
		// storage capacitor's ESR is the drive's source resistance
		// (pt.PSource; 0 for a bulk capacitor).
		iin, rin := s.charging(y)
		dy[sBus] = (iin - pt.SupplyCurrent) / s.bulkC
		dy[qSupply] = s.v0 * iin
		dy[qSource] = rin*iin*iin + pt.PSource
	} else {
		dy[sBus] = 0
		dy[qSupply] = pt.PSupply
		dy[qSource] = pt.PSource
	}
	r := s.resistance(y)
	dy[qCoilR] = r * i * i
	dy[sWinding], dy[sHousing] = 0, 0
	if s.thermal != nil {
		// Copper, eddy and core losses heat the winding node.
		p := r*i*i + s.eddy*(im-i)*(im-i) + dy[qCore]
		dy[sWinding], dy[sHousing] = s.thermal.Deriv(y[sWinding], y[sHousing], p, s.ambient)
	}
	dy[qDiode] = pt.PDiode
	dy[qReturned] = 0
	if s.cmode == circuit.BridgeReturn || s.cmode == circuit.BridgeReturnRev || s.cmode == circuit.BridgeReverse {
		v0, _ := s.rail(y)
		dy[qReturned] = -v0 * pt.SupplyCurrent
	}
	dy[qCharge] = i
	dy[qSupplyQ] = pt.SupplyCurrent
	dy[qSwitch] = pt.PSwitch
	dy[qAval] = pt.PAvalanche
	dy[qClamp] = pt.PClamp
	if s.mmode == mechFree {
		dy[qMech] = -pull * v
	} else {
		dy[qMech] = 0
	}
	if ringPull := s.ringDeriv(y, dy); ringPull != 0 && s.mmode == mechFree {
		dy[sVel] -= ringPull / s.plunger.Mass
		dy[qMech] -= ringPull * v
	}
}

// acceleration returns dv/dt (m/s²) of the free plunger at gap x, velocity
// v and pull (mech.Plunger.Acceleration), its load on the present load
// piece (enterLoadPiece) when the load is piecewise.
func (s *system) acceleration(x, v, pull float64) float64 {
	if s.loadBreaks == nil {
		return s.plunger.Acceleration(x, v, pull)
	}
	return s.plunger.AccelerationOn(x, v, pull, s.loadRef)
}

// currentForcer is a magnetic model that evaluates Current and then Force
// at that current in one call, sharing its gap look-up (magnet.GapPiece,
// magnet.CurveModel).
type currentForcer interface {
	CurrentForce(lam, x float64) (i, f float64)
}

// currentForce returns the magnetizing current (A) and the magnetic pull
// (N) at y, on the present gap piece when there is one (deriv).
func (s *system) currentForce(y []float64) (im, pull float64) {
	if s.memo.hasPull && s.memoHit(y) {
		return s.memo.im, s.memo.pull
	}
	lam, x := y[sFlux], y[sGap]
	switch cf, ok := s.mag.(currentForcer); {
	case s.piece != nil:
		im, pull = s.piece.CurrentForceNear(lam, x, &s.curHint)
	case ok:
		im, pull = cf.CurrentForce(lam, x)
	default:
		im = s.mag.Current(lam, x)
		pull = s.mag.Force(im, x)
	}
	s.memo = magMemo{lam: lam, x: x, im: im, pull: pull, hasPull: true, gen: s.pieceGen}
	return im, pull
}

// derivMagnet returns the magnetic model deriv evaluates: the present
// gap piece, or the whole model.
func (s *system) derivMagnet() magnet.Model {
	if s.piece != nil {
		return s.piece
	}
	return s.mag
}

// enterPiece puts deriv on the piece at y (the integrator calls it at the
// start of a run, after events and when a step has landed on a piece's
// end): the magnet's gap piece (none for a magnet that is smooth in the
// gap) and the load's (enterLoadPiece).
func (s *system) enterPiece(y []float64) {
	s.enterLoadPiece(y[sGap], y[sVel])
	if s.pieces == nil {
		pw, ok := s.mag.(magnet.GapPiecewise)
		if !ok {
			return
		}
		s.pieces = pw
	}
	s.piece = s.pieces.GapPieceAt(y[sGap], y[sVel])
	s.pieceGen++
}

// enterLoadPiece puts deriv on the load piece at gap x (m): at a break,
// the piece on the side the gap is moving to (v, m/s).
func (s *system) enterLoadPiece(x, v float64) {
	b := s.loadBreaks
	if b == nil {
		return
	}
	k, _ := slices.BinarySearch(b, x) // b[k−1] < x <= b[k]
	if k < len(b) && b[k] == x && v >= 0 {
		k++
	}
	s.loadLo, s.loadHi = math.Inf(-1), math.Inf(1)
	if k > 0 {
		s.loadLo = b[k-1]
	}
	if k < len(b) {
		s.loadHi = b[k]
	}
	// A gap inside the piece, and between the stops (the breaks are those
	// between them), picks it (mech.PiecewiseLoad.ForceOn).
	s.loadRef = 0.5 * (math.Max(s.loadLo, s.plunger.GapMin) + math.Min(s.loadHi, s.plunger.GapMax))
}

// pieceSpan returns the present piece's ends (m): the magnet's gap piece
// intersected with the load's (±Inf where unbounded).
func (s *system) pieceSpan() (lo, hi float64) {
	lo, hi = math.Inf(-1), math.Inf(1)
	if s.piece != nil {
		lo, hi = s.piece.Span()
	}
	if s.loadBreaks != nil {
		lo, hi = math.Max(lo, s.loadLo), math.Min(hi, s.loadHi)
	}
	return lo, hi
}

// crossPiece moves deriv to the piece beyond the present one's lower end
// (guard k = 0) or upper end (k = 1): the magnet's gap piece and the load
// piece whose end that is, each chosen at that end, not at the gap
// reached, which may be a rounding error short of it.
func (s *system) crossPiece(k int) {
	lo, hi := s.pieceSpan()
	end, dir := hi, 1.0
	if k == 0 {
		end, dir = lo, -1
	}
	if s.piece != nil {
		if mlo, mhi := s.piece.Span(); (k == 0 && mlo == end) || (k == 1 && mhi == end) {
			s.piece = s.pieces.GapPieceAt(end, dir)
		}
	}
	if s.loadBreaks != nil && ((k == 0 && s.loadLo == end) || (k == 1 && s.loadHi == end)) {
		s.enterLoadPiece(end, dir)
	}
	s.pieceGen++
}

// pieceGuards writes the guards of the present piece into g and returns
// their number: the gap's distances past the piece's ends, below and
// above (negative inside), while the plunger moves; none otherwise.
func (s *system) pieceGuards(y, g []float64) int {
	if (s.piece == nil && s.loadBreaks == nil) || s.mmode != mechFree {
		return 0
	}
	lo, hi := s.pieceSpan()
	x := y[sGap]
	g[0], g[1] = -1, -1
	if !math.IsInf(lo, -1) {
		g[0] = lo - x
	}
	if !math.IsInf(hi, 1) {
		g[1] = x - hi
	}
	return 2
}

// out computes the algebraic outputs at y.
func (s *system) out(y []float64) outputs {
	i, im := s.solve(y)
	x, v := y[sGap], y[sVel]
	return outputs{
		Current: i, CoilVoltage: s.pt.CoilVoltage, SwitchVoltage: s.pt.SwitchVoltage,
		SupplyCurrent: s.pt.SupplyCurrent, ClampCurrent: math.Abs(s.pt.ClampCurrent),
		Gap: x, Velocity: v, MagneticForce: s.derivMagnet().Force(im, x), PassiveForce: s.plunger.PassiveForce(x, v),
		RailVoltage: s.railVoltage(y), StorageVoltage: y[sBus], WindingTemperature: y[sWinding],
	}
}

// Guard layout: circuit guards first, then mechanical ones.
func (s *system) guardsAt(y, g []float64) (nc, n int) {
	i, im := s.solve(y)
	s.lastCurrent = i
	nc = s.drive.Guards(s.cmode, s.termCurrent, &s.pt, g)
	n = nc
	x := y[sGap]
	switch s.mmode {
	case mechFree:
		g[n] = s.plunger.GapMin - x   // reaching the seat
		g[n+1] = x - s.plunger.GapMax // reaching the rest stop
		n += 2
	case mechSeated:
		// Leaves when the passive force exceeds the pull.
		g[n] = s.plunger.PassiveForce(s.plunger.GapMin, 0) - s.mag.Force(im, s.plunger.GapMin)
		n++
	case mechRest:
		g[n] = s.mag.Force(im, s.plunger.GapMax) - s.plunger.PassiveForce(s.plunger.GapMax, 0)
		if s.blocked {
			g[n] = -1 // held at the rest stop whatever the pull
		}
		n++
	}
	return nc, n
}

// fieldEnergy returns the magnetic energy stored at y (J).
func (s *system) fieldEnergy(y []float64) float64 {
	_, im := s.solve(y)
	return magnet.FieldEnergy(s.mag, im, y[sGap])
}

// storedCapEnergy returns the energy in the drive's capacitors at y (J);
// a capacitor whose voltage is pinned by a conducting path holds the
// pinned voltage.
func (s *system) storedCapEnergy(y []float64) float64 {
	s.solve(y)
	e := 0.0
	if c := s.drive.Switch.OutputCapacitance; c > 0 {
		v := s.pt.SwitchVoltage
		if s.cmode == circuit.Off {
			v = y[sSwitchC]
		}
		e += 0.5 * c * v * v
	}
	if c := s.drive.CoilCapacitance; c > 0 {
		v := s.pt.CoilVoltage
		e += 0.5 * c * v * v
	}
	if s.drive.Suppressor.Kind == circuit.Snubber {
		v := y[sSnubberC]
		e += 0.5 * s.drive.Suppressor.Capacitance * v * v
	}
	if s.bulkC > 0 {
		e += 0.5 * s.bulkC * y[sBus] * y[sBus]
	}
	if s.ringRetired {
		// The retired switch capacitance, quiescent at the rail.
		v := s.railVoltage(y)
		e += 0.5 * s.retiredCoss * v * v
	}
	return e + y[sRing]
}

// railVoltage returns the voltage at the drive's supply terminals (V),
// after s.solve.
func (s *system) railVoltage(y []float64) float64 {
	v0, rs := s.rail(y)
	return v0 - rs*s.pt.SupplyCurrent
}
