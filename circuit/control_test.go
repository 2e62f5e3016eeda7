package circuit

import (
	"fmt"
	"math"
	"math/big"
	"testing"
)

// Tests of the recirculation path, the H-bridge (reverse drive) modes,
// SolveRail and the Controller state machine. Helpers and reference parts
// shared with circuit_test.go: closeTo, closeRel, makeDrive, sgn, ref*.

// Tolerances of these tests.
const (
	// edgeTolULP is how many units in the last place a PWM or chopping edge
	// may lie from the exactly rounded t0 + (k + D)/f: the few roundings of
	// one closed-form evaluation per edge (k + D, the division, the sum),
	// far below the drift of edges accumulated over thousands of periods.
	edgeTolULP = 4
	// pwmPeriods is how many PWM or chopping periods the edge tests follow.
	pwmPeriods = 10000
)

// Reference parts and operating values of these tests.
const (
	refVbr            = 0.9    // V bridge diode forward drop
	refRbr            = 0.05   // ohm bridge diode dynamic resistance
	refVrc            = 0.7    // V recirculation path drop
	refRrc            = 0.03   // ohm recirculation path resistance
	refVboost         = 48.0   // V a boosted source voltage for SolveRail
	refVsag           = 19.5   // V a sagging bulk-capacitor voltage for SolveRail
	refRsBoost        = 0.2    // ohm source resistance of the boost supply
	refIPeak          = 4.0    // A peak current
	refIHold          = 1.0    // A hold current
	refBand           = 0.2    // A hysteresis band
	refTPeak          = 5e-3   // s peak time
	refTBoost         = 2e-3   // s boost time
	refFChop          = 20e3   // Hz chopping frequency
	refT0             = 0.0123 // s an energize time
	refT1             = 0.75   // s a later energize time (restart)
	refPulse          = 1e-3   // s a reverse pulse
	refFPWM           = 2e3    // Hz a PWM frequency
	refDuty           = 0.4    // a PWM duty
	refTLate          = 1.0    // s a time far past every phase end above
	refVrcBad         = -0.5   // V a negative (invalid) recirculation drop
	refILVeryLargeRev = -6.0   // A a reversed coil current twice refILLargeRev
	refBandHi         = 1.999  // A a band just under twice the hold current
	refDutyHi         = 1.1    // a duty above 1
	refVBoost2        = 36.0   // V another boost voltage
)

func bridgeSup() Suppressor { return Suppressor{Kind: Bridge, Voltage: refVbr, Resistance: refRbr} }

func refRecirc() Recirculation { return Recirculation{Drop: refVrc, Resistance: refRrc} }

// makeDriveRC is makeDrive with the reference recirculation path.
func makeDriveRC(rs, ron, coss float64, sup Suppressor) Drive {
	d := makeDrive(rs, ron, coss, sup)
	d.Recirc = refRecirc()
	return d
}

// rail is the source a point is solved with: Solve (the drive's own
// supply) or SolveRail with the given source voltage and resistance.
type rail struct {
	name  string
	solve bool // use Solve; v0, rs are then the drive's supply
	v0    float64
	rs    float64
}

func rails(d *Drive) []rail {
	return []rail{
		{"Solve", true, d.Supply.Voltage, d.Supply.SourceResistance},
		{"SolveRail/boost", false, refVboost, refRsBoost},
		{"SolveRail/sag", false, refVsag, refRs0},
		{"SolveRail/sag+Rs", false, refVsag, refRs},
	}
}

func (r rail) solveInto(d *Drive, m Mode, iL, vC, vS float64, pt *Point) {
	if r.solve {
		d.Solve(m, iL, vC, vS, pt)
		return
	}
	d.SolveRail(m, r.v0, r.rs, iL, vC, vS, pt)
}

var (
	ctlPos     = []float64{refILZero, refILSmall, refILModerate, refILLarge}
	ctlNeg     = []float64{refILZero, refILSmallRev, refILLargeRev, refILVeryLargeRev}
	ctlBothSig = []float64{refILVeryLargeRev, refILLargeRev, refILSmallRev, refILZero, refILSmall, refILModerate, refILLarge}
)

// recircBridgeModes lists the recirculation and H-bridge modes (On too with
// a bridge) that apply to d with the coil currents each allows (the sign
// for which its guard is negative, and zero).
func recircBridgeModes(d *Drive) []modeCurrents {
	out := []modeCurrents{{Recirc, ctlPos}}
	if d.Suppressor.Kind == Bridge {
		out = append(out,
			modeCurrents{On, ctlBothSig},
			modeCurrents{BridgeReturn, ctlPos},
			modeCurrents{BridgeReturnRev, ctlNeg},
			modeCurrents{BridgeReverse, ctlBothSig}, // timed: either sign while the pulse lasts
		)
	}
	return out
}

// recircBridgeDrives: the bridge with and without source resistance, on-
// resistance and switch capacitance, and the recirculation path with other
// suppressors.
func recircBridgeDrives() []driveCase {
	var out []driveCase
	for _, rs := range []float64{refRs0, refRs} {
		for _, ron := range []float64{refRon0, refRon} {
			for _, coss := range []float64{refC0, refCoss} {
				out = append(out, driveCase{
					fmt.Sprintf("bridge/Rs=%g/Ron=%g/Coss=%g", rs, ron, coss),
					makeDriveRC(rs, ron, coss, bridgeSup()),
				})
			}
		}
	}
	for _, sup := range []Suppressor{
		{Kind: None},
		{Kind: Freewheel, Voltage: refVf, Resistance: refRd},
		{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn},
	} {
		out = append(out, driveCase{fmt.Sprintf("recirc/%v/Rs=%g", sup.Kind, refRs), makeDriveRC(refRs, refRon, refCoss, sup)})
	}
	return out
}

// TestSolveRecircBridgePowerBalance checks the power balance in Recirc,
// BridgeReturn, BridgeReturnRev, BridgeReverse (and On with a bridge), with
// Solve and with SolveRail at source voltages other than Supply.Voltage.
func TestSolveRecircBridgePowerBalance(t *testing.T) {
	t.Parallel()
	for _, dc := range recircBridgeDrives() {
		for _, mc := range recircBridgeModes(&dc.d) {
			t.Run(dc.name+"/"+mc.m.String(), func(t *testing.T) {
				t.Parallel()
				d := dc.d
				if err := d.Validate(); err != nil {
					t.Fatalf("Validate() = %v", err)
				}
				snub := d.Suppressor.Kind == Snubber
				n := 0
				var pt Point
				for _, r := range rails(&d) {
					for _, iL := range mc.iL {
						for _, vS := range snbVoltages {
							r.solveInto(&d, mc.m, iL, refVC, vS, &pt)
							n++
							// source: these modes pin the switch node (Solve
							// doc / package doc: a capacitor in parallel with a
							// conducting path is not a state), so the switch
							// capacitor term is zero.
							if pt.DSwitchCap != 0 {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) DSwitchCap = %g, want 0", r.name, mc.m, r.v0, r.rs, iL, pt.DSwitchCap)
							}
							var pCapSn float64
							if snub {
								pCapSn = vS * d.Suppressor.Capacitance * pt.DSnubberCap
							} else if pt.DSnubberCap != 0 {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) DSnubberCap = %g, want 0 (no snubber)", r.name, mc.m, r.v0, r.rs, iL, pt.DSnubberCap)
							}
							// source: definition of PSupply, the power delivered by
							// the ideal source of voltage v0 (SolveRail doc).
							wantPS := r.v0 * pt.SupplyCurrent
							if !closeTo(pt.PSupply, wantPS, math.Abs(wantPS), relTolPower) {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) PSupply = %g, want v0·SupplyCurrent = %g", r.name, mc.m, r.v0, r.rs, iL, pt.PSupply, wantPS)
							}
							// source: Joule's law P = R·I² for the source resistance.
							wantPs := r.rs * pt.SupplyCurrent * pt.SupplyCurrent
							if !closeTo(pt.PSource, wantPs, math.Abs(wantPs), relTolPower) {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) PSource = %g, want rs·Is² = %g", r.name, mc.m, r.v0, r.rs, iL, pt.PSource, wantPs)
							}
							pCoil := pt.CoilVoltage * iL
							// source: Tellegen's theorem / conservation of power in a
							// lumped circuit: the ideal source's power equals the sum
							// of the powers into all other branches (a capacitor
							// absorbs v·C·dv/dt).
							absorbed := pt.PSource + pt.PSwitch + pt.PClamp + pt.PDiode + pCoil + pCapSn
							scale := math.Abs(pt.PSupply) + math.Abs(pt.PSource) + math.Abs(pt.PSwitch) +
								math.Abs(pt.PClamp) + math.Abs(pt.PDiode) + math.Abs(pCoil) + math.Abs(pCapSn)
							if !closeTo(pt.PSupply, absorbed, scale, relTolPower) {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g, vS=%g) PSupply = %g, want %g (PSource %g + PSwitch %g + PClamp %g + PDiode %g + coil %g + snubber C %g)",
									r.name, mc.m, r.v0, r.rs, iL, vS, pt.PSupply, absorbed, pt.PSource, pt.PSwitch, pt.PClamp, pt.PDiode, pCoil, pCapSn)
							}
							// source: Point doc: PAvalanche is only the avalanche part.
							if pt.PAvalanche != 0 {
								t.Errorf("%s(%v, i=%g) PAvalanche = %g, want 0", r.name, mc.m, iL, pt.PAvalanche)
							}
						}
					}
				}
				if n == 0 {
					t.Fatal("no operating points checked")
				}
			})
		}
	}
}

// TestSolveBridgeReturnRevSupply checks the supply current and the coil
// voltage in BridgeReturnRev with and without source resistance.
//
// After a reverse pulse the coil current is negative (it flows from the
// switch node B through the coil to node A). When the bridge opens, the
// diodes of leg A (A → rail) and leg B (ground → B) carry it back to the
// supply, exactly as BridgeReturn does for a positive current: the current
// into the source is |iL|, i.e. SupplyCurrent (out of the source) = iL < 0,
// and the rail sits at v0 + rs·|iL|. With the reference bridge (Vd = 0.9 V,
// Rd = 0.05 ohm), v0 = 24 V, rs = 0.5 ohm and iL = −3 A: SupplyCurrent =
// −3 A, PSupply = −72 W and CoilVoltage = 24 + 1.5 + 2·1.05 = 27.6 V. In
// the simulator this sign makes the supply energy and EnergyReturned right
// after a reverse pulse, and the returned current charges a bulk capacitor.
func TestSolveBridgeReturnRevSupply(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		rs, iL float64
	}{
		{"Rs=0", refRs0, refILLargeRev},
		{"Rs", refRs, refILLargeRev},
		{"Rs/small", refRs, refILSmallRev},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDriveRC(tt.rs, refRon, refC0, bridgeSup())
			var pt Point
			d.Solve(BridgeReturnRev, tt.iL, 0, 0, &pt)
			a := -tt.iL
			// source: Kirchhoff's current law: the coil current leaves node A
			// through the upper diode into the rail and returns to the source.
			if !closeRel(pt.SupplyCurrent, tt.iL) {
				t.Errorf("Solve(%v, i=%g) SupplyCurrent = %g, want %g", BridgeReturnRev, tt.iL, pt.SupplyCurrent, tt.iL)
			}
			// source: Kirchhoff's voltage law A → rail → source → ground → B
			// with the diode law Vd + Rd·|i| for each diode and Ohm's law for rs.
			want := refV0 + tt.rs*a + 2*(refVbr+refRbr*a)
			if !closeRel(pt.CoilVoltage, want) {
				t.Errorf("Solve(%v, i=%g) CoilVoltage = %g, want %g", BridgeReturnRev, tt.iL, pt.CoilVoltage, want)
			}
		})
	}
}

// TestPDiodeZeroWithoutDiodePath checks that PDiode is zero in the modes of
// modesFor, in which neither the recirculation path nor the bridge diodes
// conduct (TestSolvePowerBalance leaves PDiode out of its balance).
func TestPDiodeZeroWithoutDiodePath(t *testing.T) {
	t.Parallel()
	for _, dc := range driveGrid() {
		t.Run(dc.name, func(t *testing.T) {
			t.Parallel()
			d := dc.d
			d.Recirc = refRecirc() // present but not conducting
			n := forEachPoint(&d, func(m Mode, iL, vC, vS float64, pt *Point) {
				// source: Point doc: PDiode is the power in the recirculation
				// path and the bridge diodes, which conduct in none of these modes.
				if pt.PDiode != 0 {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) PDiode = %g, want 0", m, iL, vC, vS, pt.PDiode)
				}
			})
			if n == 0 {
				t.Fatal("no operating points checked")
			}
		})
	}
}

// TestSolveRecircBridgeKirchhoff checks KVL and KCL in the recirculation
// and H-bridge modes (and On with a bridge).
//
// Which node is the "switch node" of a bridge: the coil sits between node
// A (leg A, at the rail when driving forward) and node B (leg B, the low
// side when driving forward). In every bridge mode SwitchVoltage is node B
// to ground (Ron·i in On, v_rail + Vd in BridgeReturn, v_rail + Ron·i in
// BridgeReverse, −Vd in BridgeReturnRev), and KVL round source, coil and
// "switch" (v0 − rs·Is − CoilVoltage = SwitchVoltage) does not hold there,
// because node A is not at the rail (in On it is one switch drop below the
// rail; otherwise one diode drop below ground, or one switch drop above
// ground). The check used for the bridge modes is KVL with node A from its
// device law: SwitchVoltage = v_A − CoilVoltage. Recirc keeps the lumped
// KVL.
func TestSolveRecircBridgeKirchhoff(t *testing.T) {
	t.Parallel()
	for _, dc := range recircBridgeDrives() {
		for _, mc := range recircBridgeModes(&dc.d) {
			t.Run(dc.name+"/"+mc.m.String(), func(t *testing.T) {
				t.Parallel()
				d := dc.d
				ron := d.Switch.OnResistance
				n := 0
				var pt Point
				for _, r := range rails(&d) {
					for _, iL := range mc.iL {
						r.solveInto(&d, mc.m, iL, refVC, refVS, &pt)
						n++
						// vd is the bridge diode law Vd + Rd·a for a current a in
						// the conducting direction.
						vd := func(a float64) float64 { return d.Suppressor.Voltage + d.Suppressor.Resistance*a }
						// The rail seen by the bridge, from the point's own supply
						// current (Ohm's law for rs).
						vrail := r.v0 - r.rs*pt.SupplyCurrent
						// vA, vB: nodes A and B to ground from the device laws of
						// the conducting bridge parts.
						var wantIs, vA, vB float64
						lumped := false // the rail-minus-coil KVL applies
						switch mc.m {
						case Recirc:
							// source: Kirchhoff's current law: the coil current
							// circulates in the path across the coil.
							wantIs, lumped = 0, true
						case On:
							// source: KCL: the coil current comes from the source
							// through the upper switch of leg A and returns through
							// the lower switch of leg B (Ohm's law, Ron each).
							wantIs = iL
							vA, vB = vrail-ron*iL, ron*iL
						case BridgeReturn:
							// source: KCL: the coil current returns to the source
							// through the upper diode of leg B; node A is fed from
							// ground by the lower diode of leg A (diode law).
							wantIs = -iL
							vA, vB = -vd(iL), vrail+vd(iL)
						case BridgeReturnRev:
							// source: KCL: the reversed coil current returns to the
							// source through the upper diode of leg A; node B is fed
							// from ground by the lower diode of leg B (diode law).
							wantIs = iL
							vA, vB = vrail+vd(-iL), -vd(-iL)
						case BridgeReverse:
							// source: KCL: the coil current flows through the upper
							// switch of leg B into the rail; node A is at ground
							// through the lower switch of leg A (Ohm's law, Ron).
							wantIs = -iL
							vA, vB = -ron*iL, vrail+ron*iL
						}
						if !closeTo(pt.SupplyCurrent, wantIs, math.Abs(iL)+math.Abs(wantIs), relTolKirchhoff) {
							t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) SupplyCurrent = %g, want %g", r.name, mc.m, r.v0, r.rs, iL, pt.SupplyCurrent, wantIs)
						}
						if lumped {
							// source: Kirchhoff's voltage law round source,
							// source resistance, coil and switch (node).
							got := r.v0 - r.rs*pt.SupplyCurrent - pt.CoilVoltage
							scale := r.v0 + math.Abs(r.rs*pt.SupplyCurrent) + math.Abs(pt.CoilVoltage) + math.Abs(pt.SwitchVoltage)
							if !closeTo(got, pt.SwitchVoltage, scale, relTolKirchhoff) {
								t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) v0 − rs·Is − CoilVoltage = %g, want SwitchVoltage %g", r.name, mc.m, r.v0, r.rs, iL, got, pt.SwitchVoltage)
							}
							continue
						}
						scale := math.Abs(vA) + math.Abs(vB) + math.Abs(pt.CoilVoltage) + math.Abs(pt.SwitchVoltage)
						// source: device law of the leg-B part between node B and
						// the rail or ground (the switch node, Point doc).
						if !closeTo(pt.SwitchVoltage, vB, scale, relTolKirchhoff) {
							t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) SwitchVoltage = %g, want node B %g", r.name, mc.m, r.v0, r.rs, iL, pt.SwitchVoltage, vB)
						}
						// source: Kirchhoff's voltage law round ground, node A,
						// the coil and node B (the switch node).
						if got := vA - pt.CoilVoltage; !closeTo(got, pt.SwitchVoltage, scale, relTolKirchhoff) {
							t.Errorf("%s(%v, v0=%g, rs=%g, i=%g) v_A − CoilVoltage = %g, want SwitchVoltage %g", r.name, mc.m, r.v0, r.rs, iL, got, pt.SwitchVoltage)
						}
					}
				}
				if n == 0 {
					t.Fatal("no operating points checked")
				}
			})
		}
	}
}

// TestSolveBridgeOnSwitchNode: in On with a bridge SwitchVoltage is node B
// to ground, as in the other bridge modes (the Point doc: "switch node to
// ground"): the node behind the one low-side switch of leg B, at Ron·i,
// not the drop of both switches (2·Ron·i, rail minus coil voltage). With
// Ron = 0.05 ohm and i = 2 A node B is at 0.1 V. The peak and minimum
// switch voltage figures and the switch capacitor's voltage after an
// On → Off change use it.
func TestSolveBridgeOnSwitchNode(t *testing.T) {
	t.Parallel()
	d := makeDriveRC(refRs, refRon, refC0, bridgeSup())
	var pt Point
	d.Solve(On, refILTypical, 0, 0, &pt)
	// source: Ohm's law across the low-side switch of leg B.
	if want := refRon * refILTypical; !closeRel(pt.SwitchVoltage, want) {
		t.Errorf("Solve(%v, i=%g) SwitchVoltage = %g, want %g", On, refILTypical, pt.SwitchVoltage, want)
	}
}

// TestSolveRecircSnubber: the snubber capacitor follows the coil voltage
// in Recirc.
//
// A snubber (series R–C across the coil) sees the coil voltage in every
// mode, and its capacitor is a state in every mode (TestSolvePowerBalance's
// convention). In Recirc the snubber shares the loop with the slow-decay
// path, so its current is (v_coil − vS)/Rsn with the coil voltage the path
// pins. With the reference snubber (10 ohm, 100 nF), the reference path
// (0.7 V, 0.03 ohm), i = 2 A and vS = −5 V that is about 0.42 A: chopping
// with slow decay and a snubber (which Control.Validate accepts) charges
// and discharges the snubber capacitor in every recirculation interval.
func TestSolveRecircSnubber(t *testing.T) {
	t.Parallel()
	sup := Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn}
	d := makeDriveRC(refRs, refRon, refCoss, sup)
	var pt Point
	d.Solve(Recirc, refILTypical, refVC, refVS, &pt)
	// source: Kirchhoff's voltage law round coil and snubber, Ohm's law
	// for the snubber resistor.
	want := (pt.CoilVoltage - refVS) / refRsn
	if !closeRel(pt.ClampCurrent, want) {
		t.Errorf("Solve(%v, i=%g, vS=%g) ClampCurrent = %g, want %g", Recirc, refILTypical, refVS, pt.ClampCurrent, want)
	}
	// source: capacitor law i = C·dv/dt.
	if wantD := want / refCsn; !closeRel(pt.DSnubberCap, wantD) {
		t.Errorf("Solve(%v, i=%g, vS=%g) DSnubberCap = %g, want %g", Recirc, refILTypical, refVS, pt.DSnubberCap, wantD)
	}
}

// TestSolveRecircBridgeClosedForm checks the recirculation and H-bridge
// modes (and On with and without a bridge) against closed forms.
func TestSolveRecircBridgeClosedForm(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	vrc := func(i float64) float64 { return refVrc + refRrc*i }
	vbr := func(a float64) float64 { return refVbr + refRbr*a }
	none := Suppressor{Kind: None}
	br := bridgeSup()
	tests := []struct {
		name   string
		d      Drive
		m      Mode
		v0, rs float64 // the source (SolveRail)
		iL     float64
		// NaN: not checked
		wantCoil, wantSw, wantIs, wantClamp, wantPDiode, wantPSwitch float64
	}{
		// source: piecewise-linear diode model V = Vd + Rd·i of the slow-decay
		// path across the coil; KVL for the switch node; KCL: no supply current.
		{"recirc/none", makeDriveRC(refRs, refRon, refC0, none), Recirc, refV0, refRs, refILTypical,
			-vrc(refILTypical), refV0 + vrc(refILTypical), 0, nan, vrc(refILTypical) * refILTypical, 0},
		{"recirc/bridge/big", makeDriveRC(refRs0, refRon, refCoss, br), Recirc, refV0, refRs0, refILLarge,
			-vrc(refILLarge), refV0 + vrc(refILLarge), 0, nan, vrc(refILLarge) * refILLarge, 0},
		{"recirc/rail", makeDriveRC(refRs, refRon, refC0, none), Recirc, refVboost, refRsBoost, refILModerate,
			-vrc(refILModerate), refVboost + vrc(refILModerate), 0, nan, vrc(refILModerate) * refILModerate, 0},
		// source: KVL round node A (lower diode of leg A from ground), the
		// coil, node B (upper diode of leg B into the rail) and the source:
		// v_coil = −(v0 + rs·i + 2(Vd + Rd·i)); the diode law for each diode.
		{"bridgereturn/Rs=0", makeDriveRC(refRs0, refRon, refC0, br), BridgeReturn, refV0, refRs0, refILTypical,
			-(refV0 + 2*vbr(refILTypical)), refV0 + vbr(refILTypical), -refILTypical, refILTypical, 2 * vbr(refILTypical) * refILTypical, 0},
		{"bridgereturn/Rs", makeDriveRC(refRs, refRon, refCoss, br), BridgeReturn, refV0, refRs, refILLarge,
			-(refV0 + refRs*refILLarge + 2*vbr(refILLarge)), refV0 + refRs*refILLarge + vbr(refILLarge), -refILLarge, refILLarge, 2 * vbr(refILLarge) * refILLarge, 0},
		{"bridgereturn/rail", makeDriveRC(refRs, refRon, refC0, br), BridgeReturn, refVboost, refRsBoost, refILHigh,
			-(refVboost + refRsBoost*refILHigh + 2*vbr(refILHigh)), refVboost + refRsBoost*refILHigh + vbr(refILHigh), -refILHigh, refILHigh, 2 * vbr(refILHigh) * refILHigh, 0},
		// source: as BridgeReturn, mirrored (diodes of leg A to the rail, leg
		// B from ground); with rs = 0 the supply current's sign does not enter
		// the voltages (the rs > 0 case is in TestSolveBridgeReturnRevSupply).
		{"bridgereturnrev/Rs=0", makeDriveRC(refRs0, refRon, refC0, br), BridgeReturnRev, refV0, refRs0, refILLargeRev,
			refV0 + 2*vbr(-refILLargeRev), -vbr(-refILLargeRev), nan, -refILLargeRev, 2 * vbr(-refILLargeRev) * -refILLargeRev, 0},
		// source: KVL with the opposite pair of switches on (Ohm's law, Ron
		// each): v_coil = −(v0 + rs·i) − 2·Ron·i; Joule's law for the switches.
		{"bridgereverse/positive", makeDriveRC(refRs, refRon, refC0, br), BridgeReverse, refV0, refRs, refILTypical,
			-(refV0 + refRs*refILTypical) - 2*refRon*refILTypical, refV0 + refRs*refILTypical + refRon*refILTypical, -refILTypical, nan, 0, 2 * refRon * refILTypical * refILTypical},
		{"bridgereverse/negative", makeDriveRC(refRs, refRon, refCoss, br), BridgeReverse, refV0, refRs, refILLargeRev,
			-(refV0 + refRs*refILLargeRev) - 2*refRon*refILLargeRev, refV0 + refRs*refILLargeRev + refRon*refILLargeRev, -refILLargeRev, nan, 0, 2 * refRon * refILLargeRev * refILLargeRev},
		{"bridgereverse/rail/ideal", makeDriveRC(refRs, refRon0, refC0, br), BridgeReverse, refVsag, refRs0, refILLarge,
			-refVsag, refVsag, -refILLarge, nan, 0, 0},
		// source: Ohm's law and KVL: two bridge switches (2·Ron) in series
		// with the coil; Joule's law for their loss.
		{"on/bridge", makeDriveRC(refRs, refRon, refC0, br), On, refV0, refRs, refILTypical,
			refV0 - (refRs+2*refRon)*refILTypical, nan, refILTypical, nan, 0, 2 * refRon * refILTypical * refILTypical},
		{"on/bridge/negative/rail", makeDriveRC(refRs, refRon, refCoss, br), On, refVboost, refRsBoost, refILLargeRev,
			refVboost - (refRsBoost+2*refRon)*refILLargeRev, nan, refILLargeRev, nan, 0, 2 * refRon * refILLargeRev * refILLargeRev},
		// source: Ohm's law and KVL without a bridge: one switch, Ron.
		{"on/single switch", makeDriveRC(refRs, refRon, refC0, none), On, refV0, refRs, refILTypical,
			refV0 - (refRs+refRon)*refILTypical, refRon * refILTypical, refILTypical, nan, 0, refRon * refILTypical * refILTypical},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			if err := tt.d.Validate(); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			var pt Point
			tt.d.SolveRail(tt.m, tt.v0, tt.rs, tt.iL, 0, 0, &pt)
			checked := 0
			check := func(field string, got, want float64) {
				if math.IsNaN(want) {
					return
				}
				checked++
				if !closeRel(got, want) {
					t.Errorf("SolveRail(%v, v0=%g, rs=%g, i=%g) %s = %g, want %g", tt.m, tt.v0, tt.rs, tt.iL, field, got, want)
				}
			}
			check("CoilVoltage", pt.CoilVoltage, tt.wantCoil)
			check("SwitchVoltage", pt.SwitchVoltage, tt.wantSw)
			check("SupplyCurrent", pt.SupplyCurrent, tt.wantIs)
			check("ClampCurrent", pt.ClampCurrent, tt.wantClamp)
			check("PDiode", pt.PDiode, tt.wantPDiode)
			check("PSwitch", pt.PSwitch, tt.wantPSwitch)
			if checked == 0 {
				t.Fatal("no expectation in table row")
			}
			// source: Solve doc: Solve is SolveRail with the supply as specified.
			if tt.v0 == tt.d.Supply.Voltage && tt.rs == tt.d.Supply.SourceResistance {
				var ps Point
				tt.d.Solve(tt.m, tt.iL, 0, 0, &ps)
				if ps != pt {
					t.Errorf("Solve(%v, i=%g) = %+v, want SolveRail's %+v", tt.m, tt.iL, ps, pt)
				}
			}
		})
	}
}

// TestBridgeTurnOffMode checks TurnOffMode with a bridge.
func TestBridgeTurnOffMode(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		rs, coss  float64
		iL        float64
		want      Mode
		wantClamp string
	}{
		// source: TurnOffMode doc and the Bridge kind doc: the bridge diodes
		// take the current at once, in the direction it flows; no current,
		// nothing conducts.
		{"positive", refRs0, refC0, refILTypical, BridgeReturn, "bridge diodes"},
		{"positive/small/Coss", refRs, refCoss, refILSmall, BridgeReturn, "bridge diodes"},
		{"negative", refRs0, refC0, refILLargeRev, BridgeReturnRev, "bridge diodes"},
		{"negative/small/Coss", refRs, refCoss, refILSmallRev, BridgeReturnRev, "bridge diodes"},
		{"zero", refRs0, refC0, refILZero, Off, "off"},
		{"zero/Coss", refRs, refCoss, refILZero, Off, "off"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDriveRC(tt.rs, refRon, tt.coss, bridgeSup())
			if got := d.TurnOffMode(tt.iL); got != tt.want {
				t.Errorf("TurnOffMode(i=%g) = %v, want %v", tt.iL, got, tt.want)
			}
			// source: ClampName doc: the part that conducts in the mode.
			if got := d.ClampName(tt.want); got != tt.wantClamp {
				t.Errorf("ClampName(%v) = %q, want %q", tt.want, got, tt.wantClamp)
			}
		})
	}
}

// TestRecircBridgeGuards checks the guards of Recirc, BridgeReturn,
// BridgeReturnRev and BridgeReverse.
func TestRecircBridgeGuards(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		sup  Suppressor
		m    Mode
		n    int
		// wantG is guard 0 for coil current i (ignored when n = 0).
		wantG func(i float64) float64
	}{
		// source: Guards doc: a conducting diode path ends when its current
		// falls to zero; the guard is −i for a positive-current path and i for
		// the reversed one.
		{"recirc/none", Suppressor{Kind: None}, Recirc, 1, func(i float64) float64 { return -i }},
		{"recirc/freewheel", Suppressor{Kind: Freewheel, Voltage: refVf}, Recirc, 1, func(i float64) float64 { return -i }},
		{"recirc/bridge", bridgeSup(), Recirc, 1, func(i float64) float64 { return -i }},
		{"bridgereturn", bridgeSup(), BridgeReturn, 1, func(i float64) float64 { return -i }},
		{"bridgereturnrev", bridgeSup(), BridgeReturnRev, 1, func(i float64) float64 { return i }},
		// source: Mode doc: BridgeReverse is a timed pulse, ended by time, not
		// by a guard.
		{"bridgereverse", bridgeSup(), BridgeReverse, 0, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDriveRC(refRs, refRon, refCoss, tt.sup)
			g := make([]float64, MaxGuards)
			var pt Point
			for _, iL := range ctlBothSig {
				d.Solve(tt.m, iL, refVC, 0, &pt)
				n := d.Guards(tt.m, iL, &pt, g)
				if n != tt.n {
					t.Fatalf("Guards(%v, i=%g) = %d guards, want %d", tt.m, iL, n, tt.n)
				}
				if n == 0 {
					continue
				}
				if want := tt.wantG(iL); g[0] != want {
					t.Errorf("Guards(%v, i=%g) guard 0 = %g, want %g", tt.m, iL, g[0], want)
				}
			}
			if tt.n > 0 {
				// source: Target doc: a conducting mode's guard leads to Off.
				if got := d.Target(tt.m, 0); got != Off {
					t.Errorf("Target(%v, 0) = %v, want %v", tt.m, got, Off)
				}
			}
		})
	}
}

// TestBridgeValidateStrings checks Drive.Validate for the bridge and the
// names of the bridge kind, the recirculation and bridge modes and the
// control modes.
func TestBridgeValidateStrings(t *testing.T) {
	t.Parallel()
	t.Run("validate", func(t *testing.T) {
		t.Parallel()
		tests := []struct {
			name    string
			sup     Suppressor
			wantErr bool
		}{
			// source: Validate: the bridge needs its diodes' forward drop.
			{"good", bridgeSup(), false},
			{"good/no R", Suppressor{Kind: Bridge, Voltage: refVbr}, false},
			{"bad/zero drop", Suppressor{Kind: Bridge}, true},
			{"bad/negative drop", Suppressor{Kind: Bridge, Voltage: -refVbr}, true},
			{"bad/NaN drop", Suppressor{Kind: Bridge, Voltage: math.NaN()}, true},
			{"bad/negative R", Suppressor{Kind: Bridge, Voltage: refVbr, Resistance: -refRbr}, true},
		}
		for _, tt := range tests {
			d := makeDriveRC(refRs, refRon, refCoss, tt.sup)
			if err := d.Validate(); (err != nil) != tt.wantErr {
				t.Errorf("Validate() with %s = %v, want error %v", tt.name, err, tt.wantErr)
			}
		}
	})
	d := makeDriveRC(refRs, refRon, refCoss, bridgeSup())
	tests := []struct {
		got, want string
	}{
		// source: the name tables (kindNames, modeNames, controlNames) and
		// the ClampName doc.
		{Bridge.String(), "reverse drive"},
		{Kind(7).String(), "Kind(7)"},
		{Recirc.String(), "recirculation"},
		{BridgeReturn.String(), "bridge return"},
		{BridgeReverse.String(), "bridge reverse"},
		{BridgeReturnRev.String(), "bridge return (reverse)"},
		{Mode(11).String(), "Mode(11)"},
		{d.ClampName(Recirc), "recirculation path"},
		{d.ClampName(BridgeReturn), "bridge diodes"},
		{d.ClampName(BridgeReturnRev), "bridge diodes"},
		{d.ClampName(BridgeReverse), "bridge reverse drive"},
		{Constant.String(), "constant"},
		{PWM.String(), "pwm"},
		{PeakHold.String(), "peak and hold"},
		{BoostHold.String(), "boost then hold"},
		{ControlMode(4).String(), "ControlMode(4)"},
		{ControlMode(-1).String(), "ControlMode(-1)"},
	}
	for _, tt := range tests {
		t.Run(tt.want, func(t *testing.T) {
			t.Parallel()
			if tt.got != tt.want {
				t.Errorf("String() = %q, want %q", tt.got, tt.want)
			}
		})
	}
}

// exactEdge returns t0 + (k + frac)/f computed exactly (math/big.Rat) from
// the float64 values and rounded once to float64.
func exactEdge(t0 float64, k int, frac, f float64) float64 {
	r := new(big.Rat).SetInt64(int64(k))
	r.Add(r, new(big.Rat).SetFloat64(frac))
	r.Quo(r, new(big.Rat).SetFloat64(f))
	r.Add(r, new(big.Rat).SetFloat64(t0))
	v, _ := r.Float64()
	return v
}

// ulpDist is the distance in units in the last place between two finite
// non-negative floats (MaxUint64 otherwise).
func ulpDist(a, b float64) uint64 {
	if !(a >= 0 && b >= 0) || math.IsInf(a, 0) || math.IsInf(b, 0) {
		return math.MaxUint64
	}
	ia, ib := math.Float64bits(a), math.Float64bits(b)
	if ia > ib {
		return ia - ib
	}
	return ib - ia
}

// TestControllerPWMEdges follows the PWM edges over pwmPeriods periods.
func TestControllerPWMEdges(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		t0, f, d float64
	}{
		{"t0=0/20kHz/D=0.25", 0, 20e3, 0.25},
		{"t0=0.0123/3kHz/D=0.3", refT0, 3e3, 0.3},
		{"t0=12.5/333.3Hz/D=0.9", 12.5, 333.3, 0.9},
		{"t0=1e-3/47kHz/D=0.01", 1e-3, 47e3, 0.01},
		{"t0=0.75/2kHz/D=0.999", refT1, refFPWM, 0.999},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			var c Controller
			c.Control = Control{Mode: PWM, Frequency: tt.f, Duty: tt.d}
			d := makeDriveRC(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
			if err := c.Validate(&d); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			c.Start(tt.t0)
			// source: Start doc: the switch turns on at the energize time.
			if !c.On() || !c.Active() {
				t.Fatalf("after Start(%g) On() = %v, Active() = %v, want true, true", tt.t0, c.On(), c.Active())
			}
			g := make([]float64, MaxControlGuards)
			if n := c.Guards(tt.t0, refILTypical, g); n != 0 {
				t.Errorf("PWM Guards(t=%g, i=%g) = %d guards, want 0", tt.t0, refILTypical, n)
			}
			if pe := c.PhaseEnd(); !math.IsInf(pe, 1) {
				t.Errorf("PWM PhaseEnd() = %g, want +Inf", pe)
			}
			now := tt.t0
			worst := uint64(0)
			for k := range pwmPeriods {
				for _, e := range []struct {
					frac   float64
					kk     int
					wantOn bool
				}{{tt.d, k, false}, {0, k + 1, true}} {
					// source: Controller doc / AtTime comment: edges at
					// t0 + (k + D)/f (off) and t0 + (k+1)/f (on), computed
					// from the period index, not accumulated.
					want := exactEdge(tt.t0, e.kk, e.frac, tt.f)
					got := c.NextTime(now)
					dist := ulpDist(got, want)
					worst = max(worst, dist)
					if dist > edgeTolULP {
						t.Fatalf("period %d: NextTime(%.17g) = %.17g, want %.17g (%d ulp off)", k, now, got, want, dist)
					}
					// source: NextTime doc: the first event strictly after t; a
					// time between events still gives the pending edge.
					if mid := now + (got-now)/2; mid > now {
						if g2 := c.NextTime(mid); g2 != got {
							t.Fatalf("period %d: NextTime(%.17g) = %.17g, want %.17g (pending edge)", k, mid, g2, got)
						}
					}
					c.AtTime(got)
					if c.On() != e.wantOn {
						t.Fatalf("period %d: after AtTime(%.17g) On() = %v, want %v", k, got, c.On(), e.wantOn)
					}
					now = got
				}
			}
			t.Logf("worst edge error over %d periods: %d ulp", pwmPeriods, worst)
		})
	}
	t.Run("duty=1", func(t *testing.T) {
		t.Parallel()
		var c Controller
		c.Control = Control{Mode: PWM, Frequency: refFPWM, Duty: 1}
		c.Start(refT0)
		// source: Start: with a duty of 1 there is no PWM edge; the switch
		// stays on.
		for _, tm := range []float64{refT0, refT0 + 1/refFPWM, refTLate} {
			if got := c.NextTime(tm); !math.IsInf(got, 1) {
				t.Errorf("PWM(D=1) NextTime(%g) = %g, want +Inf", tm, got)
			}
			c.AtTime(tm)
			if !c.On() {
				t.Errorf("PWM(D=1) after AtTime(%g) On() = false, want true", tm)
			}
		}
	})
	t.Run("off-schedule AtTime", func(t *testing.T) {
		t.Parallel()
		var c Controller
		c.Control = Control{Mode: PWM, Frequency: refFPWM, Duty: refDuty}
		c.Start(refT0)
		edge := c.NextTime(refT0)
		// source: AtTime doc: it applies the scheduled events at t; at a time
		// with none nothing changes.
		c.AtTime(refT0 + (edge-refT0)/2)
		if !c.On() || c.NextTime(refT0) != edge {
			t.Errorf("after AtTime between edges On() = %v, NextTime = %g, want true, %g", c.On(), c.NextTime(refT0), edge)
		}
	})
}

func peakHoldControl(reg Regulation) Control {
	c := Control{Mode: PeakHold, PeakCurrent: refIPeak, PeakTime: refTPeak, HoldCurrent: refIHold, Regulation: reg}
	if reg == Hysteresis {
		c.Band = refBand
	} else {
		c.Frequency = refFChop
		c.PeakTime = 2.5 / refFChop // between the second and third period starts
	}
	return c
}

// TestControllerHysteresis checks peak-and-hold with hysteresis.
func TestControllerHysteresis(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name        string
		t0          float64
		onAtPhase   bool // the switch is on at the phase end
		currentsOn  []float64
		currentsOff []float64
	}{
		{"t0=0/on at phase end", 0, true, []float64{refILZero, refILTypical, refIPeak, refIPeak + refBand/2}, []float64{refILZero, refIHold, refIPeak}},
		{"t0=0.0123/off at phase end", refT0, false, []float64{refILSmall, refIPeak + refBand}, []float64{refIPeak - refBand/2, refILLarge}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			var c Controller
			c.Control = peakHoldControl(Hysteresis)
			d := makeDriveRC(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
			if err := c.Validate(&d); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			c.Start(tt.t0)
			g := make([]float64, MaxControlGuards)
			// checkGuards: source: Regulation doc (Hysteresis): off when the
			// current reaches target + band/2, on again at target − band/2;
			// the guard is negative while the state holds (Guards doc).
			checkGuards := func(stage string, tm, target float64) {
				t.Helper()
				currents, on := tt.currentsOff, c.On()
				if on {
					currents = tt.currentsOn
				}
				for _, i := range currents {
					n := c.Guards(tm, i, g)
					if n != 1 {
						t.Fatalf("%s: Guards(t=%g, i=%g) = %d guards, want 1", stage, tm, i, n)
					}
					want := (target - refBand/2) - i
					if on {
						want = i - (target + refBand/2)
					}
					if !closeRel(g[0], want) {
						t.Errorf("%s: Guards(t=%g, i=%g) guard 0 = %g, want %g (on=%v, target %g)", stage, tm, i, g[0], want, on, target)
					}
				}
				if got := c.Target(tm); got != target {
					t.Errorf("%s: Target(%g) = %g, want %g", stage, tm, got, target)
				}
			}
			if !c.On() {
				t.Fatalf("after Start(%g) On() = false, want true", tt.t0)
			}
			checkGuards("peak/on", tt.t0, refIPeak)
			// The guard is zero exactly at the threshold.
			if c.Guards(tt.t0, refIPeak+refBand/2, g); math.Abs(g[0]) > absTolGuard {
				t.Errorf("Guards(t=%g, i=%g) guard 0 = %g, want 0", tt.t0, refIPeak+refBand/2, g[0])
			}
			// source: AtGuard doc: the switch toggles.
			c.AtGuard(0)
			if c.On() {
				t.Fatal("after AtGuard(0) On() = true, want false")
			}
			checkGuards("peak/off", tt.t0, refIPeak)
			c.AtGuard(0)
			if !c.On() {
				t.Fatal("after the second AtGuard(0) On() = false, want true")
			}
			// source: PhaseEnd doc and NextTime doc: the peak phase ends at
			// t0 + PeakTime; hysteresis has no other time event.
			pe := c.PhaseEnd()
			if want := tt.t0 + refTPeak; pe != want {
				t.Errorf("PhaseEnd() = %g, want %g", pe, want)
			}
			if got := c.NextTime(tt.t0); got != pe {
				t.Errorf("NextTime(%g) = %g, want PhaseEnd %g", tt.t0, got, pe)
			}
			if !tt.onAtPhase {
				c.AtGuard(0)
			}
			// source: Controller doc (held): the phase changes only at the
			// phase-end time event, not with the time argument of Guards.
			checkGuards("peak/past phase end, before the event", tt.t0+refTLate, refIPeak)
			c.AtTime(tt.t0 + refTPeak/2) // not an event
			checkGuards("peak/after a non-event AtTime", tt.t0+refTPeak/2, refIPeak)
			c.AtTime(pe)
			if c.On() != tt.onAtPhase {
				t.Errorf("after AtTime(PhaseEnd) On() = %v, want %v (the phase end does not switch)", c.On(), tt.onAtPhase)
			}
			checkGuards("hold", pe, refIHold)
			checkGuards("hold/early time argument", tt.t0, refIHold)
			if got := c.NextTime(pe); !math.IsInf(got, 1) {
				t.Errorf("in hold NextTime(%g) = %g, want +Inf", pe, got)
			}
			c.AtGuard(0)
			checkGuards("hold/toggled", pe, refIHold)
		})
	}
}

// TestControllerFixedFrequency checks peak-and-hold with fixed-frequency
// (peak-current cut-off) chopping.
func TestControllerFixedFrequency(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		t0   float64
	}{
		{"t0=0", 0},
		{"t0=0.0123", refT0},
		{"t0=12.5", 12.5},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			var c Controller
			c.Control = peakHoldControl(FixedFrequency)
			d := makeDriveRC(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
			if err := c.Validate(&d); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			c.Start(tt.t0)
			g := make([]float64, MaxControlGuards)
			// check: source: Regulation doc (FixedFrequency): while on, the
			// switch turns off when the current reaches the target (guard
			// i − target); while off there is no guard.
			check := func(stage string, tm, target float64, wantOn bool) {
				t.Helper()
				if c.On() != wantOn {
					t.Fatalf("%s: On() = %v, want %v", stage, c.On(), wantOn)
				}
				for _, i := range []float64{refILZero, refIHold, refIPeak, refILLarge} {
					n := c.Guards(tm, i, g)
					switch {
					case !wantOn && n != 0:
						t.Errorf("%s: Guards(t=%g, i=%g) = %d guards, want 0 (off until the next period)", stage, tm, i, n)
					case wantOn && n != 1:
						t.Errorf("%s: Guards(t=%g, i=%g) = %d guards, want 1", stage, tm, i, n)
					case wantOn && !closeRel(g[0], i-target):
						t.Errorf("%s: Guards(t=%g, i=%g) guard 0 = %g, want %g", stage, tm, i, g[0], i-target)
					}
				}
			}
			nextEdge := func(stage string, now float64, k int) float64 {
				t.Helper()
				// source: Regulation doc: on at the start of every period,
				// t0 + k/f from the period index.
				want := exactEdge(tt.t0, k, 0, refFChop)
				got := c.NextTime(now)
				if dist := ulpDist(got, want); dist > edgeTolULP {
					t.Fatalf("%s: NextTime(%.17g) = %.17g, want %.17g (%d ulp off)", stage, now, got, want, dist)
				}
				return got
			}
			check("start", tt.t0, refIPeak, true)
			c.AtGuard(0)
			check("period 0 cut off", tt.t0, refIPeak, false)
			e1 := nextEdge("period 1", tt.t0, 1)
			c.AtTime(e1)
			check("period 1 start", e1, refIPeak, true)
			// The current did not reach the target: the switch stays on
			// through the next period start.
			e2 := nextEdge("period 2", e1, 2)
			c.AtTime(e2)
			check("period 2 start (still on)", e2, refIPeak, true)
			c.AtGuard(0)
			check("period 2 cut off", e2, refIPeak, false)
			// source: NextTime doc: the first scheduled event; the phase end
			// (t0 + 2.5/f) comes before the third period start.
			pe := c.PhaseEnd()
			if got := c.NextTime(e2); got != pe {
				t.Fatalf("NextTime(%g) = %g, want PhaseEnd %g", e2, got, pe)
			}
			c.AtTime(pe)
			check("hold, still off", pe, refIHold, false)
			if got := c.Target(pe); got != refIHold {
				t.Errorf("Target(%g) = %g, want %g", pe, got, refIHold)
			}
			now := pe
			for k := 3; k < pwmPeriods; k++ {
				e := nextEdge(fmt.Sprintf("period %d", k), now, k)
				c.AtTime(e)
				if !c.On() {
					t.Fatalf("period %d: after AtTime(%.17g) On() = false, want true", k, e)
				}
				n := c.Guards(e, refIHold, g)
				if n != 1 || g[0] != 0 {
					t.Fatalf("period %d: Guards(t=%g, i=%g) = %d, %g, want 1, 0", k, e, refIHold, n, g[0])
				}
				c.AtGuard(0)
				if c.On() || c.Guards(e, refIHold, g) != 0 {
					t.Fatalf("period %d: after AtGuard On() = %v, want false with no guard", k, c.On())
				}
				now = e
			}
		})
	}
}

// TestControllerBoostHold checks boost-then-hold.
func TestControllerBoostHold(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		vboost float64
		t0, t1 float64
	}{
		{"48V/t0=0", refVboost, 0, refT1},
		{"36V/t0=0.0123", refVBoost2, refT0, refT1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			var c Controller
			c.Control = Control{Mode: BoostHold, BoostVoltage: tt.vboost, BoostTime: refTBoost}
			d := makeDrive(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
			if err := c.Validate(&d); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			// source: SupplyVoltage doc: the boost voltage only during the
			// boost phase of a running interval.
			if got := c.SupplyVoltage(tt.t0, refV0); got != refV0 {
				t.Errorf("before Start SupplyVoltage(%g, %g) = %g, want %g", tt.t0, refV0, got, refV0)
			}
			g := make([]float64, MaxControlGuards)
			for _, start := range []float64{tt.t0, tt.t1} { // a restart begins a new boost phase
				c.Start(start)
				if !c.On() {
					t.Errorf("after Start(%g) On() = false, want true", start)
				}
				if n := c.Guards(start, refILTypical, g); n != 0 {
					t.Errorf("boost Guards(t=%g, i=%g) = %d guards, want 0", start, refILTypical, n)
				}
				pe := c.PhaseEnd()
				if want := start + refTBoost; pe != want {
					t.Errorf("PhaseEnd() = %g, want %g", pe, want)
				}
				if got := c.NextTime(start); got != pe {
					t.Errorf("NextTime(%g) = %g, want PhaseEnd %g", start, got, pe)
				}
				// source: Controller doc (held): the phase changes only at the
				// phase-end event, whatever the time argument.
				for _, tm := range []float64{start, pe, start + refTLate} {
					if got := c.SupplyVoltage(tm, refV0); got != tt.vboost {
						t.Errorf("boost phase SupplyVoltage(%g, %g) = %g, want %g", tm, refV0, got, tt.vboost)
					}
				}
				c.AtTime(pe)
				for _, tm := range []float64{start, pe, start + refTLate} {
					if got := c.SupplyVoltage(tm, refV0); got != refV0 {
						t.Errorf("after AtTime(PhaseEnd) SupplyVoltage(%g, %g) = %g, want %g", tm, refV0, got, refV0)
					}
				}
				if !c.On() {
					t.Error("after AtTime(PhaseEnd) On() = false, want true (boost then hold keeps the switch on)")
				}
				if got := c.NextTime(pe); !math.IsInf(got, 1) {
					t.Errorf("after the boost phase NextTime(%g) = %g, want +Inf", pe, got)
				}
				c.Stop()
				if got := c.SupplyVoltage(pe, refV0); got != refV0 {
					t.Errorf("after Stop SupplyVoltage(%g, %g) = %g, want %g", pe, refV0, got, refV0)
				}
			}
		})
	}
}

// TestControllerStop checks Stop in every control mode, at several stages.
func TestControllerStop(t *testing.T) {
	t.Parallel()
	ctls := []struct {
		name string
		c    Control
	}{
		{"constant", Control{Mode: Constant}},
		{"pwm", Control{Mode: PWM, Frequency: refFPWM, Duty: refDuty}},
		{"peakhold/hysteresis", peakHoldControl(Hysteresis)},
		{"peakhold/fixed", peakHoldControl(FixedFrequency)},
		{"boosthold", Control{Mode: BoostHold, BoostVoltage: refVboost, BoostTime: refTBoost}},
	}
	for _, cc := range ctls {
		for _, guardFirst := range []bool{false, true} {
			t.Run(fmt.Sprintf("%s/toggled=%v", cc.name, guardFirst), func(t *testing.T) {
				t.Parallel()
				var c Controller
				c.Control = cc.c
				c.Start(refT0)
				next := c.NextTime(refT0)
				if guardFirst {
					c.AtGuard(0)
				}
				c.Stop()
				g := make([]float64, MaxControlGuards)
				// source: Stop doc (the interval ends), On doc and NextTime
				// doc: no switch command, no events, no guards.
				if c.On() || c.Active() {
					t.Errorf("after Stop On() = %v, Active() = %v, want false, false", c.On(), c.Active())
				}
				for _, tm := range []float64{refT0, next, refTLate} {
					if got := c.NextTime(tm); !math.IsInf(got, 1) {
						t.Errorf("after Stop NextTime(%g) = %g, want +Inf", tm, got)
					}
					for _, i := range []float64{refILZero, refIHold, refIPeak, refILLarge} {
						if n := c.Guards(tm, i, g); n != 0 {
							t.Errorf("after Stop Guards(t=%g, i=%g) = %d guards, want 0", tm, i, n)
						}
					}
					if got := c.SupplyVoltage(tm, refV0); got != refV0 {
						t.Errorf("after Stop SupplyVoltage(%g, %g) = %g, want %g", tm, refV0, got, refV0)
					}
				}
				if !math.IsInf(next, 1) {
					// source: AtTime doc: an event time after Stop changes nothing.
					c.AtTime(next)
					if c.On() || !math.IsInf(c.NextTime(refT0), 1) {
						t.Errorf("after Stop, AtTime(%g): On() = %v, NextTime = %g, want false, +Inf", next, c.On(), c.NextTime(refT0))
					}
				}
			})
		}
	}
}

// TestControlValidate covers every branch of Control.Validate.
func TestControlValidate(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	fw := Suppressor{Kind: Freewheel, Voltage: refVf}
	rc := makeDriveRC(refRs, refRon, refCoss, fw)
	bridge := makeDriveRC(refRs, refRon, refCoss, bridgeSup())
	badRC := makeDrive(refRs, refRon, refCoss, fw)
	badRC.Recirc = Recirculation{Drop: refVrcBad}
	nanRC := makeDrive(refRs, refRon, refCoss, fw)
	nanRC.Recirc = Recirculation{Drop: refVrc, Resistance: nan}
	pwm := func(f, duty float64) Control { return Control{Mode: PWM, Frequency: f, Duty: duty} }
	ph := func(mod func(c *Control)) Control {
		c := peakHoldControl(Hysteresis)
		mod(&c)
		return c
	}
	phFF := func(mod func(c *Control)) Control {
		c := peakHoldControl(FixedFrequency)
		mod(&c)
		return c
	}
	boost := func(v, tb float64) Control { return Control{Mode: BoostHold, BoostVoltage: v, BoostTime: tb} }
	tests := []struct {
		name    string
		c       Control
		d       Drive
		wantErr bool
	}{
		// source: the Control and Validate docs (each documented range).
		{"good/constant", Control{Mode: Constant}, rc, false},
		{"good/pwm", pwm(refFPWM, refDuty), rc, false},
		{"good/pwm duty 1", pwm(refFPWM, 1), rc, false},
		{"bad/pwm zero frequency", pwm(0, refDuty), rc, true},
		{"bad/pwm negative frequency", pwm(-refFPWM, refDuty), rc, true},
		{"bad/pwm NaN frequency", pwm(nan, refDuty), rc, true},
		{"bad/pwm zero duty", pwm(refFPWM, 0), rc, true},
		{"bad/pwm duty > 1", pwm(refFPWM, refDutyHi), rc, true},
		{"bad/pwm NaN duty", pwm(refFPWM, nan), rc, true},
		{"good/peakhold hysteresis", ph(func(*Control) {}), rc, false},
		{"good/peakhold hold = peak", ph(func(c *Control) { c.HoldCurrent = refIPeak }), rc, false},
		{"good/peakhold band just under 2·hold", ph(func(c *Control) { c.Band = refBandHi }), rc, false},
		{"good/peakhold fixed frequency", phFF(func(*Control) {}), rc, false},
		{"bad/peakhold zero peak", ph(func(c *Control) { c.PeakCurrent = 0 }), rc, true},
		{"bad/peakhold zero hold", ph(func(c *Control) { c.HoldCurrent = 0 }), rc, true},
		{"bad/peakhold zero peak time", ph(func(c *Control) { c.PeakTime = 0 }), rc, true},
		{"bad/peakhold NaN peak time", ph(func(c *Control) { c.PeakTime = nan }), rc, true},
		{"bad/peakhold hold > peak", ph(func(c *Control) { c.HoldCurrent = refIPeak + 1 }), rc, true},
		{"bad/peakhold zero band", ph(func(c *Control) { c.Band = 0 }), rc, true},
		{"bad/peakhold band = 2·hold", ph(func(c *Control) { c.Band = 2 * refIHold }), rc, true},
		{"bad/peakhold NaN band", ph(func(c *Control) { c.Band = nan }), rc, true},
		{"bad/peakhold fixed zero frequency", phFF(func(c *Control) { c.Frequency = 0 }), rc, true},
		{"bad/peakhold fixed NaN frequency", phFF(func(c *Control) { c.Frequency = nan }), rc, true},
		{"good/boost", boost(refVboost, refTBoost), rc, false},
		{"bad/boost = supply", boost(refV0, refTBoost), rc, true},
		{"bad/boost < supply", boost(refVsag, refTBoost), rc, true},
		{"bad/boost zero time", boost(refVboost, 0), rc, true},
		{"bad/boost NaN voltage", boost(nan, refTBoost), rc, true},
		{"bad/unknown mode", Control{Mode: ControlMode(4)}, rc, true},
		{"bad/negative mode", Control{Mode: ControlMode(-1)}, rc, true},
		{"good/reverse pulse with bridge", Control{Mode: Constant, ReversePulse: refPulse}, bridge, false},
		{"bad/reverse pulse without bridge", Control{Mode: Constant, ReversePulse: refPulse}, rc, true},
		{"bad/negative reverse pulse", Control{Mode: Constant, ReversePulse: -refPulse}, bridge, true},
		{"bad/NaN reverse pulse", Control{Mode: Constant, ReversePulse: nan}, bridge, true},
		{"bad/pwm slow decay, negative recirc drop", pwm(refFPWM, refDuty), badRC, true},
		{"bad/peakhold slow decay, NaN recirc R", ph(func(*Control) {}), nanRC, true},
		{"good/pwm fast decay, negative recirc drop", func() Control { c := pwm(refFPWM, refDuty); c.FastDecay = true; return c }(), badRC, false},
		{"good/constant, negative recirc drop", Control{Mode: Constant}, badRC, false},
		{"good/boost, negative recirc drop", boost(refVboost, refTBoost), badRC, false},
		// An undefined Regulation could not run: Start would schedule no
		// chopping period (only FixedFrequency does), and Guards would treat
		// it as peak cut-off while on but give no guard while off, so the
		// switch would turn off at the first peak and never turn on again
		// (the coil would drop out silently).
		{"bad/peakhold unknown regulation", ph(func(c *Control) { c.Regulation = Regulation(2) }), rc, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			err := tt.c.Validate(&tt.d)
			if (err != nil) != tt.wantErr {
				t.Errorf("Validate(%+v) = %v, want error %v", tt.c, err, tt.wantErr)
			}
		})
	}
}

// TestControlPhaseTimeChops checks PhaseTime and Chops.
func TestControlPhaseTimeChops(t *testing.T) {
	t.Parallel()
	tests := []struct {
		c         Control
		wantPhase float64
		wantChops bool
	}{
		// source: PhaseTime and Chops docs.
		{Control{Mode: Constant}, 0, false},
		{Control{Mode: PWM, Frequency: refFPWM, Duty: refDuty}, 0, true},
		{peakHoldControl(Hysteresis), refTPeak, true},
		{Control{Mode: BoostHold, BoostVoltage: refVboost, BoostTime: refTBoost}, refTBoost, false},
	}
	for _, tt := range tests {
		t.Run(tt.c.Mode.String(), func(t *testing.T) {
			t.Parallel()
			if got := tt.c.PhaseTime(); got != tt.wantPhase {
				t.Errorf("PhaseTime() = %g, want %g", got, tt.wantPhase)
			}
			if got := tt.c.Chops(); got != tt.wantChops {
				t.Errorf("Chops() = %v, want %v", got, tt.wantChops)
			}
		})
	}
}

// TestControlNoAllocs is not parallel: AllocsPerRun reads global allocation
// counters, which parallel tests would disturb.
func TestControlNoAllocs(t *testing.T) {
	var pt Point
	g := make([]float64, MaxGuards)
	for _, dc := range []driveCase{
		{"bridge", makeDriveRC(refRs, refRon, refCoss, bridgeSup())},
		{"snubber", makeDriveRC(refRs, refRon, refCoss, Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn})},
	} {
		d := dc.d
		for m := On; m <= BridgeReturnRev; m++ {
			// source: Solve doc ("It does not allocate"); SolveRail is the
			// same computation.
			if a := testing.AllocsPerRun(100, func() { d.SolveRail(m, refVboost, refRsBoost, refILTypical, refVC, refVS4, &pt) }); a != 0 {
				t.Errorf("%s: SolveRail(%v, i=%g) allocates %g times per run, want 0", dc.name, m, refILTypical, a)
			}
			if a := testing.AllocsPerRun(100, func() { d.Guards(m, refILTypical, &pt, g) }); a != 0 {
				t.Errorf("%s: Guards(%v, i=%g) allocates %g times per run, want 0", dc.name, m, refILTypical, a)
			}
		}
		if a := testing.AllocsPerRun(100, func() { d.TurnOffMode(refILLargeRev) }); a != 0 {
			t.Errorf("%s: TurnOffMode(i=%g) allocates %g times per run, want 0", dc.name, refILLargeRev, a)
		}
	}
	d := makeDriveRC(refRs, refRon, refCoss, bridgeSup())
	for _, cc := range []Control{
		{Mode: Constant},
		{Mode: PWM, Frequency: refFPWM, Duty: refDuty},
		peakHoldControl(Hysteresis),
		peakHoldControl(FixedFrequency),
		{Mode: BoostHold, BoostVoltage: refVboost, BoostTime: refTBoost},
	} {
		var c Controller
		c.Control = cc
		cg := make([]float64, MaxControlGuards)
		sink := 0.0
		// source: the Controller is a small state machine driven by the
		// integrator's events; its methods are on the hot path and are
		// expected not to allocate (like Solve).
		a := testing.AllocsPerRun(100, func() {
			if c.Validate(&d) != nil {
				sink++
			}
			c.Start(refT0)
			tn := c.NextTime(refT0)
			c.AtTime(tn)
			c.AtTime(c.PhaseEnd())
			sink += c.Target(tn) + c.SupplyVoltage(tn, refV0)
			if c.Guards(tn, refILTypical, cg) > 0 {
				c.AtGuard(0)
			}
			if c.On() && c.Active() {
				sink++
			}
			c.Stop()
		})
		if a != 0 {
			t.Errorf("Controller(%v) methods allocate %g times per run, want 0", cc.Mode, a)
		}
		if sink == 0 {
			t.Errorf("Controller(%v): the allocation run did nothing", cc.Mode)
		}
	}
}

// Reference values of the brake tests.
const (
	refBrakeAt  = 4e-3   // s brake start after energize
	refBrakeFor = 1.5e-3 // s brake length
)

// TestControllerBrake follows a constant drive with a brake interval
// through its time events: on from Start, off at BrakeStart, on again at
// BrakeEnd, no events after it; a restart brakes again; Stop in the middle
// ends it.
func TestControllerBrake(t *testing.T) {
	t.Parallel()
	for _, t0 := range []float64{0, refT0} {
		t.Run(fmt.Sprintf("t0=%g", t0), func(t *testing.T) {
			t.Parallel()
			var c Controller
			c.Control = Control{Mode: Constant, BrakeAt: refBrakeAt, BrakeFor: refBrakeFor}
			d := makeDrive(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
			if err := c.Validate(&d); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			// source: Control doc (BrakeAt, BrakeFor): the switch is off
			// from t0 + BrakeAt for BrakeFor, on otherwise while energized.
			for round, start := range []float64{t0, t0 + refT1} { // a restart brakes again
				c.Start(start)
				bs, be := start+refBrakeAt, start+refBrakeAt+refBrakeFor
				if c.BrakeStart() != bs || c.BrakeEnd() != be {
					t.Fatalf("round %d: BrakeStart, BrakeEnd = %g, %g, want %g, %g", round, c.BrakeStart(), c.BrakeEnd(), bs, be)
				}
				steps := []struct {
					now      float64 // NextTime is asked from here
					next     float64 // the event it must return (applied with AtTime)
					onAfter  bool
					brakeNow bool
				}{
					{start, bs, false, true},
					{bs, be, true, false},
				}
				if !c.On() || c.Braking() {
					t.Errorf("round %d: after Start On, Braking = %v, %v, want true, false", round, c.On(), c.Braking())
				}
				for _, st := range steps {
					if got := c.NextTime(st.now); got != st.next {
						t.Fatalf("round %d: NextTime(%g) = %g, want %g", round, st.now, got, st.next)
					}
					c.AtTime(st.next)
					if c.On() != st.onAfter || c.Braking() != st.brakeNow {
						t.Errorf("round %d: after AtTime(%g) On, Braking = %v, %v, want %v, %v", round, st.next, c.On(), c.Braking(), st.onAfter, st.brakeNow)
					}
				}
				if got := c.NextTime(be); !math.IsInf(got, 1) {
					t.Errorf("round %d: after the brake NextTime(%g) = %g, want +Inf", round, be, got)
				}
				// An event time that is not the brake's changes nothing.
				c.AtTime(be + refBrakeFor)
				if !c.On() || c.Braking() {
					t.Errorf("round %d: a foreign AtTime switched the hold: On, Braking = %v, %v", round, c.On(), c.Braking())
				}
			}
			c.Start(t0)
			c.AtTime(c.BrakeStart())
			c.Stop()
			if c.On() || c.Braking() || !math.IsInf(c.NextTime(t0), 1) {
				t.Errorf("Stop while braking: On, Braking, NextTime = %v, %v, %g, want false, false, +Inf", c.On(), c.Braking(), c.NextTime(t0))
			}
		})
	}
}

// TestControlValidateBrake: a brake only with the constant or PWM drive,
// with a start and a length > 0.
func TestControlValidateBrake(t *testing.T) {
	t.Parallel()
	fw := makeDriveRC(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf})
	inf := math.Inf(1)
	tests := []struct {
		name    string
		c       Control
		wantErr bool
	}{
		// source: Control doc (BrakeAt, BrakeFor) and validateBrake doc.
		{"good/constant brake", Control{Mode: Constant, BrakeAt: refBrakeAt, BrakeFor: refBrakeFor}, false},
		{"good/no brake", Control{Mode: Constant}, false},
		{"good/pwm brake", Control{Mode: PWM, Frequency: refFPWM, Duty: refDuty, BrakeAt: refBrakeAt, BrakeFor: refBrakeFor}, false},
		{"bad/peak and hold brake", func() Control {
			c := peakHoldControl(Hysteresis)
			c.BrakeAt, c.BrakeFor = refBrakeAt, refBrakeFor
			return c
		}(), true},
		{"bad/boost brake", Control{Mode: BoostHold, BoostVoltage: refVboost, BoostTime: refTBoost, BrakeAt: refBrakeAt, BrakeFor: refBrakeFor}, true},
		{"bad/start 0", Control{Mode: Constant, BrakeFor: refBrakeFor}, true},
		{"bad/length 0", Control{Mode: Constant, BrakeAt: refBrakeAt}, true},
		{"bad/negative length", Control{Mode: Constant, BrakeAt: refBrakeAt, BrakeFor: -refBrakeFor}, true},
		{"bad/NaN start", Control{Mode: Constant, BrakeAt: math.NaN(), BrakeFor: refBrakeFor}, true},
		{"bad/infinite length", Control{Mode: Constant, BrakeAt: refBrakeAt, BrakeFor: inf}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			if err := tt.c.Validate(&fw); (err != nil) != tt.wantErr {
				t.Errorf("Validate(%+v) = %v, want error %v", tt.c, err, tt.wantErr)
			}
		})
	}
}

// TestControllerBrakePWM: a PWM's edges run on beneath the brake (the
// same edges as without it), the switch is off throughout the brake, and
// after it the switch follows the PWM again.
func TestControllerBrakePWM(t *testing.T) {
	t.Parallel()
	var plain, braked Controller
	plain.Control = Control{Mode: PWM, Frequency: refFPWM, Duty: refDuty}
	braked.Control = plain.Control.WithBrake(refBrakeAt, refBrakeFor)
	if braked.FastDecay {
		t.Error("WithBrake set FastDecay on a PWM (it keeps its own decay)")
	}
	plain.Start(refT0)
	braked.Start(refT0)
	bs, be := braked.BrakeStart(), braked.BrakeEnd()
	now := refT0
	for k := 0; k < 40; k++ {
		next := braked.NextTime(now)
		// source: Control doc (BrakeAt, BrakeFor): the brake's start and end
		// are events besides the PWM edges; the edges do not move.
		if pn := plain.NextTime(now); next != pn && next != bs && next != be {
			t.Fatalf("event %d: NextTime(%g) = %g, want the PWM edge %g or the brake's %g, %g", k, now, next, pn, bs, be)
		}
		if next == plain.NextTime(now) {
			plain.AtTime(next)
		}
		braked.AtTime(next)
		inBrake := next >= bs && next < be
		if want := plain.On() && !inBrake; braked.On() != want {
			t.Errorf("at %g: On() = %v, want %v (PWM %v, in the brake %v)", next, braked.On(), want, plain.On(), inBrake)
		}
		now = next
	}
	if !(now > be) {
		t.Errorf("followed the events to %g only, before the brake's end %g", now, be)
	}
}
