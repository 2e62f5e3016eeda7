package circuit

import (
	"fmt"
	"math"
	"testing"
)

// Tolerances.
const (
	// relTolPower is the relative tolerance of the power balance, scaled by
	// the sum of the magnitudes of the terms.
	relTolPower = 1e-12
	// relTolKirchhoff is the relative tolerance of KVL/KCL identities, scaled
	// by the sum of the magnitudes of the terms.
	relTolKirchhoff = 1e-12
	// relTolClosedForm is the relative tolerance of closed-form operating
	// points, scaled by the magnitude of the expected value (floor 1).
	relTolClosedForm = 1e-12
	// absTolGuard (V or A) is how close to zero a guard must be at the
	// threshold it stands for.
	absTolGuard = 1e-9
	// guardStep (V) is the offset either side of a threshold used to check
	// the sign of a guard.
	guardStep = 1e-6
	// scanStep (V) is the switch-capacitor voltage step of the turn-off scan.
	scanStep = 1e-3
	// tinyCoss (F) is the switch capacitance used for the limit C_oss → 0.
	tinyCoss = 1e-15
)

// closeTo reports |got−want| ≤ tol·scale.
func closeTo(got, want, scale, tol float64) bool {
	return math.Abs(got-want) <= tol*scale
}

// closeRel reports got ≈ want relative to max(|want|, 1).
func closeRel(got, want float64) bool {
	return closeTo(got, want, math.Max(math.Abs(want), 1), relTolClosedForm)
}

// Reference parts.
const (
	refV0         = 24.0  // V supply
	refBV         = 60.0  // V switch breakdown
	refVbd        = 0.7   // V body diode drop
	refCoss       = 1e-9  // F switch output capacitance
	refCsn        = 1e-7  // F snubber capacitor
	refRsn        = 10.0  // ohm snubber resistor
	refVcl        = 45.0  // V switch clamp
	refRcl        = 0.4   // ohm switch clamp dynamic resistance
	refVtvs       = 30.0  // V TVS clamp
	refRtvs       = 0.3   // ohm TVS dynamic resistance
	refVf         = 0.8   // V freewheel diode drop
	refRd         = 0.02  // ohm freewheel diode resistance
	refVdz        = 33.8  // V diode + Zener total drop
	refRdz        = 0.5   // ohm diode + Zener resistance
	refRs         = 0.5   // ohm source resistance
	refRon        = 0.05  // ohm switch on-resistance
	refILLarge    = 7.0   // A large coil current
	refILLargeRev = -3.0  // A large reverse coil current
	refVS         = -5.0  // V a snubber capacitor voltage
	refVC         = 12.0  // V a switch capacitor voltage
	refILTypical  = 2.0   // A a typical coil current
	refVC2        = 40.0  // V another switch capacitor voltage
	refVS2        = 20.0  // V another snubber capacitor voltage
	refILSmall    = 0.1   // A small coil current
	refILSmallRev = -0.2  // A small reverse coil current
	refVC3        = -0.3  // V slightly negative switch capacitor voltage
	refVS3        = 7.0   // V a snubber capacitor voltage (ignored without snubber)
	refILModerate = 1.5   // A a moderate coil current, below the typical one
	refVdz2       = 50.0  // V a diode + Zener drop with V0 + Vdz2 > BV
	refVtv2       = 24.5  // V a TVS clamp within one body-diode drop of the supply
	refILHigh     = 3.0   // A a high coil current, the size of refILLargeRev
	refVS4        = 5.0   // V another snubber capacitor voltage
	refVC4        = 0.0   // V discharged switch capacitor
	refVS5        = 0.0   // V discharged snubber capacitor
	refILZero     = 0.0   // A no coil current
	refRs0        = 0.0   // ohm ideal source
	refRon0       = 0.0   // ohm ideal switch
	refC0         = 0.0   // F no switch capacitance
	refRd0        = 0.0   // ohm ideal clamp
	refBig        = 1e300 // guard value magnitude sanity bound
)

func refSuppressors() []Suppressor {
	return []Suppressor{
		{Kind: None},
		{Kind: Freewheel, Voltage: refVf},
		{Kind: Freewheel, Voltage: refVf, Resistance: refRd},
		{Kind: DiodeZener, Voltage: refVdz, Resistance: refRdz},
		{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs},
		{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn},
		{Kind: SwitchClamp, Voltage: refVcl, Resistance: refRcl},
	}
}

func makeDrive(rs, ron, coss float64, sup Suppressor) Drive {
	return Drive{
		Supply:     Supply{Voltage: refV0, SourceResistance: rs},
		Switch:     Switch{OnResistance: ron, OutputCapacitance: coss, BreakdownVoltage: refBV, BodyDiodeDrop: refVbd},
		Suppressor: sup,
	}
}

type driveCase struct {
	name string
	d    Drive
}

// driveGrid is every reference suppressor with and without source
// resistance, on-resistance and switch capacitance.
func driveGrid() []driveCase {
	var out []driveCase
	for _, sup := range refSuppressors() {
		for _, rs := range []float64{refRs0, refRs} {
			for _, ron := range []float64{refRon0, refRon} {
				for _, coss := range []float64{refC0, refCoss} {
					name := fmt.Sprintf("%v/V=%g/R=%g/Rs=%g/Ron=%g/Coss=%g", sup.Kind, sup.Voltage, sup.Resistance, rs, ron, coss)
					out = append(out, driveCase{name, makeDrive(rs, ron, coss, sup)})
				}
			}
		}
	}
	return out
}

var (
	posCurrents = []float64{refILZero, refILSmall, refILModerate, refILLarge}
	negCurrents = []float64{refILSmallRev, refILLargeRev}
	allCurrents = append(append([]float64{}, posCurrents...), negCurrents...)
	capVoltages = []float64{refVC3, refVC4, refVC, refVC2}
	snbVoltages = []float64{refVS, refVS5, refVS2, refVS3}
)

type modeCurrents struct {
	m  Mode
	iL []float64
}

// modesFor lists the modes that apply to d and the coil currents each
// allows (the sign for which the mode's guard is negative).
func modesFor(d *Drive) []modeCurrents {
	out := []modeCurrents{{On, allCurrents}}
	if d.Open() {
		out = append(out, modeCurrents{Off, []float64{refILZero}}) // current pinned at zero
	} else {
		out = append(out, modeCurrents{Off, allCurrents})
	}
	if d.Suppressor.acrossCoil() {
		out = append(out, modeCurrents{CoilClamp, posCurrents})
	}
	if d.Suppressor.Kind == TVS {
		out = append(out, modeCurrents{CoilClampRev, append([]float64{refILZero}, negCurrents...)})
	}
	if d.Suppressor.Kind == SwitchClamp {
		out = append(out, modeCurrents{SwClamp, posCurrents})
	}
	out = append(out,
		modeCurrents{Avalanche, posCurrents},
		modeCurrents{BodyDiode, append([]float64{refILZero}, negCurrents...)},
	)
	return out
}

// forEachPoint calls f for every applicable mode, coil current, switch
// capacitor voltage and snubber capacitor voltage of d and returns how many
// points it visited.
func forEachPoint(d *Drive, f func(m Mode, iL, vC, vS float64, pt *Point)) int {
	n := 0
	var pt Point
	for _, mc := range modesFor(d) {
		for _, iL := range mc.iL {
			for _, vC := range capVoltages {
				for _, vS := range snbVoltages {
					d.Solve(mc.m, iL, vC, vS, &pt)
					f(mc.m, iL, vC, vS, &pt)
					n++
				}
			}
		}
	}
	return n
}

func TestGridDrivesValid(t *testing.T) {
	t.Parallel()
	for _, dc := range driveGrid() {
		t.Run(dc.name, func(t *testing.T) {
			t.Parallel()
			if err := dc.d.Validate(); err != nil {
				t.Fatalf("Validate() = %v, want nil", err)
			}
		})
	}
}

// TestSolvePowerBalance checks that the power delivered by the ideal source
// equals the power absorbed by every other branch, in every mode that
// applies to each drive.
//
// Capacitor terms: a capacitor C at voltage v absorbs v·C·dv/dt. The
// switch capacitor is a state only in Off with C_oss > 0 (it is pinned,
// i.e. not a state, in every other mode), so its term is vC·C_oss·DSwitchCap
// there and DSwitchCap must be zero elsewhere. The snubber capacitor is a
// state in every mode, so its term is vS·C_snub·DSnubberCap whenever the
// suppressor is a snubber, and DSnubberCap must be zero otherwise.
func TestSolvePowerBalance(t *testing.T) {
	t.Parallel()
	for _, dc := range driveGrid() {
		t.Run(dc.name, func(t *testing.T) {
			t.Parallel()
			d := dc.d
			snub := d.Suppressor.Kind == Snubber
			n := forEachPoint(&d, func(m Mode, iL, vC, vS float64, pt *Point) {
				var pCapSw, pCapSn float64
				if m == Off && d.HasSwitchCap() {
					pCapSw = vC * d.Switch.OutputCapacitance * pt.DSwitchCap
				} else if pt.DSwitchCap != 0 {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) DSwitchCap = %g, want 0 (switch capacitor not a state in this mode)", m, iL, vC, vS, pt.DSwitchCap)
				}
				if snub {
					pCapSn = vS * d.Suppressor.Capacitance * pt.DSnubberCap
				} else if pt.DSnubberCap != 0 {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) DSnubberCap = %g, want 0 (no snubber)", m, iL, vC, vS, pt.DSnubberCap)
				}
				pCoil := pt.CoilVoltage * iL
				// source: Tellegen's theorem / conservation of power in a lumped
				// circuit (any circuit-theory text): power out of the ideal
				// source equals the sum of the powers into all other branches;
				// a capacitor absorbs v·C·dv/dt.
				absorbed := pt.PSource + pt.PSwitch + pt.PClamp + pCoil + pCapSw + pCapSn
				scale := math.Abs(pt.PSupply) + math.Abs(pt.PSource) + math.Abs(pt.PSwitch) +
					math.Abs(pt.PClamp) + math.Abs(pCoil) + math.Abs(pCapSw) + math.Abs(pCapSn)
				if !closeTo(pt.PSupply, absorbed, scale, relTolPower) {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) PSupply = %g, want %g (PSource %g + PSwitch %g + PClamp %g + coil %g + Coss %g + snubber C %g)",
						m, iL, vC, vS, pt.PSupply, absorbed, pt.PSource, pt.PSwitch, pt.PClamp, pCoil, pCapSw, pCapSn)
				}
				// source: definition of the fields (Point doc comment): PAvalanche
				// is the avalanche part of PSwitch.
				wantAv := 0.0
				if m == Avalanche {
					wantAv = pt.PSwitch
				}
				if pt.PAvalanche != wantAv {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) PAvalanche = %g, want %g", m, iL, vC, vS, pt.PAvalanche, wantAv)
				}
				// source: Joule's law P = R·I² for the source resistance.
				wantPs := d.Supply.SourceResistance * pt.SupplyCurrent * pt.SupplyCurrent
				if !closeTo(pt.PSource, wantPs, math.Abs(wantPs), relTolPower) {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) PSource = %g, want %g", m, iL, vC, vS, pt.PSource, wantPs)
				}
			})
			if n == 0 {
				t.Fatal("no operating points checked")
			}
		})
	}
}

// TestSolveKirchhoff checks KVL round the supply loop and the snubber loop,
// and KCL at the switch node, in every mode.
func TestSolveKirchhoff(t *testing.T) {
	t.Parallel()
	for _, dc := range driveGrid() {
		t.Run(dc.name, func(t *testing.T) {
			t.Parallel()
			d := dc.d
			v0, rs := d.Supply.Voltage, d.Supply.SourceResistance
			sup := d.Suppressor
			snub := sup.Kind == Snubber
			n := forEachPoint(&d, func(m Mode, iL, vC, vS float64, pt *Point) {
				// source: Kirchhoff's voltage law round source, source
				// resistance, coil and switch.
				got := v0 - rs*pt.SupplyCurrent - pt.CoilVoltage
				scale := v0 + math.Abs(rs*pt.SupplyCurrent) + math.Abs(pt.CoilVoltage) + math.Abs(pt.SwitchVoltage)
				if !closeTo(got, pt.SwitchVoltage, scale, relTolKirchhoff) {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) V0 − Rs·Is − CoilVoltage = %g, want SwitchVoltage %g", m, iL, vC, vS, got, pt.SwitchVoltage)
				}

				// source: Kirchhoff's current law at the switch node: coil
				// current plus snubber current (both rail → node) leave
				// through the switch branch and return to the source.
				wantIs := iL
				switch {
				case snub:
					wantIs = iL + pt.ClampCurrent
				case m == CoilClamp || m == CoilClampRev || (m == Off && d.Open()):
					wantIs = 0 // coil current circulates in the clamp, or is pinned at zero
				}
				if !closeTo(pt.SupplyCurrent, wantIs, math.Abs(iL)+math.Abs(pt.ClampCurrent)+math.Abs(wantIs), relTolKirchhoff) {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) SupplyCurrent = %g, want %g", m, iL, vC, vS, pt.SupplyCurrent, wantIs)
				}

				// source: Kirchhoff's current law: the current out of the
				// switch node to ground (channel, avalanche, body diode, switch
				// clamp or switch capacitor i = C·dv/dt) is the supply current.
				var toGround float64
				switch m {
				case On, Avalanche, BodyDiode:
					toGround = pt.SwitchCurrent
				case SwClamp:
					toGround = pt.ClampCurrent
				case Off:
					toGround = d.Switch.OutputCapacitance * pt.DSwitchCap
				}
				if !closeTo(toGround, pt.SupplyCurrent, math.Abs(toGround)+math.Abs(pt.SupplyCurrent), relTolKirchhoff) {
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) current to ground = %g, want SupplyCurrent %g", m, iL, vC, vS, toGround, pt.SupplyCurrent)
				}
				if m == On {
					// source: Ohm's law across the switch channel.
					want := d.Switch.OnResistance * pt.SwitchCurrent
					if !closeTo(pt.SwitchVoltage, want, math.Abs(want)+math.Abs(pt.SwitchVoltage), relTolKirchhoff) {
						t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) SwitchVoltage = %g, want Ron·Isw = %g", m, iL, vC, vS, pt.SwitchVoltage, want)
					}
				}
				if m == Off && d.HasSwitchCap() && pt.SwitchVoltage != vC {
					// source: Point/Solve doc: in Off the switch node is the
					// switch capacitor's voltage.
					t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) SwitchVoltage = %g, want vC %g", m, iL, vC, vS, pt.SwitchVoltage, vC)
				}
				if snub {
					// source: Kirchhoff's voltage law round the coil and the
					// snubber (R in series with C, both across the coil), with
					// Ohm's law for the resistor.
					want := vS + sup.Resistance*pt.ClampCurrent
					if !closeTo(pt.CoilVoltage, want, math.Abs(vS)+math.Abs(sup.Resistance*pt.ClampCurrent)+math.Abs(pt.CoilVoltage), relTolKirchhoff) {
						t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) CoilVoltage = %g, want vS + R·ip = %g", m, iL, vC, vS, pt.CoilVoltage, want)
					}
					// source: capacitor law i = C·dv/dt.
					wantD := pt.ClampCurrent / sup.Capacitance
					if !closeTo(pt.DSnubberCap, wantD, math.Abs(wantD), relTolKirchhoff) {
						t.Errorf("Solve(%v, i=%g, vC=%g, vS=%g) DSnubberCap = %g, want ip/C = %g", m, iL, vC, vS, pt.DSnubberCap, wantD)
					}
				}
			})
			if n == 0 {
				t.Fatal("no operating points checked")
			}
		})
	}
}

// TestSolveClosedForm checks operating points against closed forms.
func TestSolveClosedForm(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	fw := Suppressor{Kind: Freewheel, Voltage: refVf, Resistance: refRd}
	dz := Suppressor{Kind: DiodeZener, Voltage: refVdz, Resistance: refRdz}
	tvs := Suppressor{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs}
	scl := Suppressor{Kind: SwitchClamp, Voltage: refVcl, Resistance: refRcl}
	none := Suppressor{Kind: None}
	tests := []struct {
		name      string
		d         Drive
		m         Mode
		iL, vC    float64
		wantCoil  float64 // NaN: not checked
		wantSw    float64 // NaN: not checked
		wantClamp float64 // NaN: not checked
	}{
		// source: Ohm's law and KVL: the coil sees V0 less the drops in Rs and Ron.
		{"on/ideal", makeDrive(refRs0, refRon0, refC0, none), On, refILTypical, 0, refV0, 0, nan},
		{"on/Rs+Ron", makeDrive(refRs, refRon, refC0, none), On, refILTypical, 0, refV0 - (refRs+refRon)*refILTypical, refRon * refILTypical, nan},
		{"on/Rs+Ron/negative", makeDrive(refRs, refRon, refCoss, fw), On, refILLargeRev, 0, refV0 - (refRs+refRon)*refILLargeRev, refRon * refILLargeRev, nan},
		{"on/Rs+Ron/big", makeDrive(refRs, refRon, refCoss, scl), On, refILLarge, 0, refV0 - (refRs+refRon)*refILLarge, refRon * refILLarge, nan},
		// source: piecewise-linear diode model V = Vf + Rd·i across the coil, and KVL.
		{"coilclamp/freewheel", makeDrive(refRs, refRon, refC0, fw), CoilClamp, refILHigh, 0, -(refVf + refRd*refILHigh), refV0 + refVf + refRd*refILHigh, refILHigh},
		{"coilclamp/freewheel/Coss", makeDrive(refRs0, refRon, refCoss, fw), CoilClamp, refILLarge, 0, -(refVf + refRd*refILLarge), refV0 + refVf + refRd*refILLarge, refILLarge},
		{"coilclamp/freewheel/ideal", makeDrive(refRs, refRon, refC0, Suppressor{Kind: Freewheel, Voltage: refVf}), CoilClamp, refILTypical, 0, -refVf, refV0 + refVf, refILTypical},
		{"coilclamp/diodezener", makeDrive(refRs, refRon, refC0, dz), CoilClamp, refILTypical, 0, -(refVdz + refRdz*refILTypical), refV0 + refVdz + refRdz*refILTypical, refILTypical},
		{"coilclamp/tvs", makeDrive(refRs, refRon, refC0, tvs), CoilClamp, refILTypical, 0, -(refVtvs + refRtvs*refILTypical), refV0 + refVtvs + refRtvs*refILTypical, refILTypical},
		// source: bidirectional TVS model V = Vc + R·|i|, conducting the other way.
		{"coilclamprev/tvs", makeDrive(refRs, refRon, refC0, tvs), CoilClampRev, refILLargeRev, 0, refVtvs - refRtvs*refILLargeRev, refV0 - refVtvs + refRtvs*refILLargeRev, -refILLargeRev},
		// source: clamp model V = Vcl + Rd·i at the switch node, and KVL.
		{"swclamp", makeDrive(refRs, refRon, refC0, scl), SwClamp, refILTypical, 0, refV0 - refRs*refILTypical - (refVcl + refRcl*refILTypical), refVcl + refRcl*refILTypical, refILTypical},
		{"swclamp/Coss", makeDrive(refRs0, refRon, refCoss, scl), SwClamp, refILLarge, refVC, refV0 - (refVcl + refRcl*refILLarge), refVcl + refRcl*refILLarge, refILLarge},
		// source: constant-voltage avalanche model (Switch doc): node at breakdown.
		{"avalanche", makeDrive(refRs, refRon, refC0, none), Avalanche, refILTypical, 0, refV0 - refRs*refILTypical - refBV, refBV, nan},
		{"avalanche/Coss/freewheel", makeDrive(refRs0, refRon, refCoss, fw), Avalanche, refILModerate, refVC2, refV0 - refBV, refBV, nan},
		// source: constant-drop body diode model (Switch doc): node at −Vbd.
		{"bodydiode", makeDrive(refRs, refRon, refC0, none), BodyDiode, refILLargeRev, 0, refV0 - refRs*refILLargeRev + refVbd, -refVbd, nan},
		{"bodydiode/Coss/tvs", makeDrive(refRs0, refRon, refCoss, tvs), BodyDiode, refILSmallRev, refVC3, refV0 + refVbd, -refVbd, nan},
		// source: Solve/Point doc: in Off with C_oss the switch node is vC; KVL.
		{"off/Coss", makeDrive(refRs, refRon, refCoss, none), Off, refILTypical, refVC, refV0 - refRs*refILTypical - refVC, refVC, nan},
		// source: Mode doc: open coil in Off: node at the rail, no coil voltage.
		{"off/open", makeDrive(refRs, refRon, refC0, none), Off, 0, refVC, 0, refV0, nan},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			if err := tt.d.Validate(); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			var pt Point
			tt.d.Solve(tt.m, tt.iL, tt.vC, 0, &pt)
			checked := 0
			if !math.IsNaN(tt.wantCoil) {
				checked++
				if !closeRel(pt.CoilVoltage, tt.wantCoil) {
					t.Errorf("Solve(%v, i=%g) CoilVoltage = %g, want %g", tt.m, tt.iL, pt.CoilVoltage, tt.wantCoil)
				}
			}
			if !math.IsNaN(tt.wantSw) {
				checked++
				if !closeRel(pt.SwitchVoltage, tt.wantSw) {
					t.Errorf("Solve(%v, i=%g) SwitchVoltage = %g, want %g", tt.m, tt.iL, pt.SwitchVoltage, tt.wantSw)
				}
			}
			if !math.IsNaN(tt.wantClamp) {
				checked++
				if !closeRel(pt.ClampCurrent, tt.wantClamp) {
					t.Errorf("Solve(%v, i=%g) ClampCurrent = %g, want %g", tt.m, tt.iL, pt.ClampCurrent, tt.wantClamp)
				}
			}
			if checked == 0 {
				t.Fatal("no expectation in table row")
			}
		})
	}
}

// TestSolveSnubberOn checks the snubber branch while the switch conducts.
func TestSolveSnubberOn(t *testing.T) {
	t.Parallel()
	snub := Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn}
	tests := []struct {
		name        string
		rs, ron, iL float64
		vS          float64
	}{
		{"ideal", refRs0, refRon0, refILTypical, refVS4},
		{"Rs+Ron", refRs, refRon, refILTypical, refVS4},
		{"Rs+Ron/negative vS", refRs, refRon, refILLarge, refVS},
		{"Rs+Ron/reverse", refRs, refRon, refILLargeRev, refVS2},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(tt.rs, tt.ron, refCoss, snub)
			var pt Point
			d.Solve(On, tt.iL, 0, tt.vS, &pt)
			// source: Ohm's law across the snubber resistor, which sees the
			// coil voltage less the snubber capacitor voltage.
			wantIP := (pt.CoilVoltage - tt.vS) / refRsn
			if !closeRel(pt.ClampCurrent, wantIP) {
				t.Errorf("Solve(%v, i=%g) ClampCurrent = %g, want %g", On, tt.iL, pt.ClampCurrent, wantIP)
			}
			// source: Kirchhoff's voltage law round source, Rs, coil and Ron,
			// with the snubber current joining the coil current (KCL).
			wantCoil := refV0 - (tt.rs+tt.ron)*(tt.iL+wantIP)
			if !closeRel(pt.CoilVoltage, wantCoil) {
				t.Errorf("Solve(%v, i=%g) CoilVoltage = %g, want %g", On, tt.iL, pt.CoilVoltage, wantCoil)
			}
			// source: capacitor law i = C·dv/dt.
			if want := wantIP / refCsn; !closeRel(pt.DSnubberCap, want) {
				t.Errorf("Solve(%v, i=%g) DSnubberCap = %g, want %g", On, tt.iL, pt.DSnubberCap, want)
			}
			if tt.rs == 0 && tt.ron == 0 && pt.CoilVoltage != refV0 {
				// source: ideal source and switch: coil sits across the rail.
				t.Errorf("Solve(%v, i=%g) CoilVoltage = %g, want %g", On, tt.iL, pt.CoilVoltage, refV0)
			}
		})
	}
}

// TestGuardsOffThresholds builds, in mode Off with C_oss > 0, the switch
// capacitor voltage at which each guard's threshold is reached and checks
// the guard is zero there, negative on the side where Off holds and
// positive beyond, and that Target maps it to the right mode.
func TestGuardsOffThresholds(t *testing.T) {
	t.Parallel()
	fw := Suppressor{Kind: Freewheel, Voltage: refVf, Resistance: refRd}
	dz := Suppressor{Kind: DiodeZener, Voltage: refVdz, Resistance: refRdz}
	tvs := Suppressor{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs}
	scl := Suppressor{Kind: SwitchClamp, Voltage: refVcl, Resistance: refRcl}
	snub := Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn}
	none := Suppressor{Kind: None}
	tests := []struct {
		name   string
		sup    Suppressor
		rs, iL float64
		k      int
		vCStar float64                // switch capacitor voltage at the threshold
		thresh func(pt *Point) string // "" if the point is at the physical threshold
		dir    float64                // +1 if the guard rises with vC
		want   Mode
	}{
		// source: piecewise-linear diode model: the diode starts to conduct
		// when the coil voltage reaches −Vf (KVL: vC = V0 − Rs·iL + Vf).
		{"freewheel", fw, refRs, refILTypical, 0, refV0 - refRs*refILTypical + refVf, coilAt(-refVf), 1, CoilClamp},
		{"freewheel/Rs=0", fw, 0, refILLarge, 0, refV0 + refVf, coilAt(-refVf), 1, CoilClamp},
		{"diodezener", dz, refRs, refILTypical, 0, refV0 - refRs*refILTypical + refVdz, coilAt(-refVdz), 1, CoilClamp},
		{"tvs/forward", tvs, refRs, refILTypical, 0, refV0 - refRs*refILTypical + refVtvs, coilAt(-refVtvs), 1, CoilClamp},
		// source: bidirectional TVS conducts when the coil voltage reaches +Vc.
		{"tvs/reverse", tvs, refRs, refILLargeRev, 1, refV0 - refRs*refILLargeRev - refVtvs, coilAt(refVtvs), -1, CoilClampRev},
		// source: clamp conducts when the switch node reaches Vcl.
		{"switchclamp", scl, refRs, refILTypical, 2, refVcl, switchAt(refVcl), 1, SwClamp},
		// source: avalanche at the breakdown voltage (Switch doc).
		{"avalanche/none", none, refRs, refILTypical, 3, refBV, switchAt(refBV), 1, Avalanche},
		{"avalanche/freewheel", fw, refRs, refILTypical, 3, refBV, switchAt(refBV), 1, Avalanche},
		{"avalanche/snubber", snub, refRs, refILTypical, 3, refBV, switchAt(refBV), 1, Avalanche},
		// source: body diode conducts when the node falls to −Vbd.
		{"bodydiode/none", none, refRs, refILLargeRev, 4, -refVbd, switchAt(-refVbd), -1, BodyDiode},
		{"bodydiode/snubber", snub, refRs, refILLargeRev, 4, -refVbd, switchAt(-refVbd), -1, BodyDiode},
		{"bodydiode/switchclamp", scl, refRs0, refILSmallRev, 4, -refVbd, switchAt(-refVbd), -1, BodyDiode},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(tt.rs, refRon, refCoss, tt.sup)
			if err := d.Validate(); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			g := make([]float64, MaxGuards)
			var pt Point
			d.Solve(Off, tt.iL, tt.vCStar, refVS4, &pt)
			if msg := tt.thresh(&pt); msg != "" {
				t.Fatalf("Solve(%v, i=%g) at vC=%g: %s (bad test construction)", Off, tt.iL, tt.vCStar, msg)
			}
			n := d.Guards(Off, tt.iL, &pt, g)
			if n != MaxGuards || tt.k >= n {
				t.Fatalf("Guards(%v, i=%g) = %d guards, want %d", Off, tt.iL, n, MaxGuards)
			}
			if math.Abs(g[tt.k]) > absTolGuard {
				t.Errorf("Guards(%v, i=%g) at vC=%g guard %d = %g, want 0", Off, tt.iL, tt.vCStar, tt.k, g[tt.k])
			}
			for _, side := range []float64{-1, 1} {
				vC := tt.vCStar + side*tt.dir*guardStep
				d.Solve(Off, tt.iL, vC, refVS4, &pt)
				d.Guards(Off, tt.iL, &pt, g)
				if side < 0 && !(g[tt.k] < 0) {
					t.Errorf("Guards(%v, i=%g) at vC=%g guard %d = %g, want < 0 (mode holds)", Off, tt.iL, vC, tt.k, g[tt.k])
				}
				if side > 0 && !(g[tt.k] > 0) {
					t.Errorf("Guards(%v, i=%g) at vC=%g guard %d = %g, want > 0 (threshold passed)", Off, tt.iL, vC, tt.k, g[tt.k])
				}
			}
			if got := d.Target(Off, tt.k); got != tt.want {
				t.Errorf("Target(%v, %d) = %v, want %v", Off, tt.k, got, tt.want)
			}
		})
	}
}

func coilAt(v float64) func(pt *Point) string {
	return func(pt *Point) string {
		if !closeRel(pt.CoilVoltage, v) {
			return fmt.Sprintf("CoilVoltage = %g, want %g", pt.CoilVoltage, v)
		}
		return ""
	}
}

func switchAt(v float64) func(pt *Point) string {
	return func(pt *Point) string {
		if !closeRel(pt.SwitchVoltage, v) {
			return fmt.Sprintf("SwitchVoltage = %g, want %g", pt.SwitchVoltage, v)
		}
		return ""
	}
}

// TestGuardsInactive checks that the Off guards of parts a drive does not
// have never fire (−Inf), and the ones it has are finite.
func TestGuardsInactive(t *testing.T) {
	t.Parallel()
	inf := math.Inf(-1)
	tests := []struct {
		sup    Suppressor
		active [MaxGuards]bool
	}{
		{Suppressor{Kind: None}, [MaxGuards]bool{false, false, false, true, true}},
		{Suppressor{Kind: Freewheel, Voltage: refVf}, [MaxGuards]bool{true, false, false, true, true}},
		{Suppressor{Kind: DiodeZener, Voltage: refVdz}, [MaxGuards]bool{true, false, false, true, true}},
		{Suppressor{Kind: TVS, Voltage: refVtvs}, [MaxGuards]bool{true, true, false, true, true}},
		{Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn}, [MaxGuards]bool{false, false, false, true, true}},
		{Suppressor{Kind: SwitchClamp, Voltage: refVcl}, [MaxGuards]bool{false, false, true, true, true}},
	}
	for _, tt := range tests {
		t.Run(tt.sup.Kind.String(), func(t *testing.T) {
			t.Parallel()
			d := makeDrive(refRs, refRon, refCoss, tt.sup)
			var pt Point
			g := make([]float64, MaxGuards)
			d.Solve(Off, refILTypical, refVC, refVS4, &pt)
			n := d.Guards(Off, refILTypical, &pt, g)
			if n != MaxGuards {
				t.Fatalf("Guards(%v, i=%g) = %d guards, want %d", Off, refILTypical, n, MaxGuards)
			}
			for k := range n {
				// source: Guards doc: a guard is negative while the mode holds;
				// refVC = 12 V is inside every threshold here.
				if tt.active[k] {
					if !(g[k] < 0) || math.Abs(g[k]) > refBig {
						t.Errorf("Guards(%v, i=%g) guard %d = %g, want finite < 0", Off, refILTypical, k, g[k])
					}
				} else if g[k] != inf {
					t.Errorf("Guards(%v, i=%g) guard %d = %g, want -Inf (part absent)", Off, refILTypical, k, g[k])
				}
			}
		})
	}
}

// TestGuardsConducting checks the single guard of each conducting mode:
// negative while current flows in the conducting direction, zero when it
// stops, and Target returns Off.
func TestGuardsConducting(t *testing.T) {
	t.Parallel()
	tvs := Suppressor{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs}
	scl := Suppressor{Kind: SwitchClamp, Voltage: refVcl, Resistance: refRcl}
	none := Suppressor{Kind: None}
	tests := []struct {
		name    string
		sup     Suppressor
		m       Mode
		holding float64 // a coil current for which the mode holds
	}{
		{"coilclamp", tvs, CoilClamp, refILTypical},
		{"coilclamprev", tvs, CoilClampRev, refILLargeRev},
		{"swclamp", scl, SwClamp, refILTypical},
		{"avalanche", none, Avalanche, refILTypical},
		{"bodydiode", none, BodyDiode, refILLargeRev},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(refRs, refRon, refCoss, tt.sup)
			g := make([]float64, MaxGuards)
			var pt Point
			// source: a diode-like part stops conducting when its current
			// falls to zero (Guards doc: conduction ends at zero current).
			for _, c := range []struct {
				iL   float64
				sign float64
			}{{tt.holding, -1}, {0, 0}, {-tt.holding, 1}} {
				d.Solve(tt.m, c.iL, refVC, 0, &pt)
				n := d.Guards(tt.m, c.iL, &pt, g)
				if n != 1 {
					t.Fatalf("Guards(%v, i=%g) = %d guards, want 1", tt.m, c.iL, n)
				}
				if sgn(g[0]) != c.sign {
					t.Errorf("Guards(%v, i=%g) guard 0 = %g, want sign %g", tt.m, c.iL, g[0], c.sign)
				}
			}
			if got := d.Target(tt.m, 0); got != Off {
				t.Errorf("Target(%v, 0) = %v, want %v", tt.m, got, Off)
			}
		})
	}
	// On has no guard; Off with an open coil has none either.
	t.Run("on", func(t *testing.T) {
		t.Parallel()
		d := makeDrive(refRs, refRon, refCoss, none)
		var pt Point
		g := make([]float64, MaxGuards)
		d.Solve(On, refILTypical, 0, 0, &pt)
		if n := d.Guards(On, refILTypical, &pt, g); n != 0 {
			t.Errorf("Guards(%v, i=%g) = %d guards, want 0", On, refILTypical, n)
		}
	})
	t.Run("off/open", func(t *testing.T) {
		t.Parallel()
		d := makeDrive(refRs, refRon, refC0, none)
		var pt Point
		g := make([]float64, MaxGuards)
		d.Solve(Off, 0, 0, 0, &pt)
		if !pt.CurrentPinned {
			t.Errorf("Solve(%v, i=0) CurrentPinned = false, want true (open coil)", Off)
		}
		if n := d.Guards(Off, 0, &pt, g); n != 0 {
			t.Errorf("Guards(%v, i=0) = %d guards, want 0", Off, n)
		}
	})
}

func sgn(x float64) float64 {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// firstOffGuard follows the switch node from its on-state voltage, in the
// direction the coil current drives it, with a vanishing switch capacitance
// (so the coil current is constant during the sweep), and returns the mode
// of the first Off guard to reach zero.
func firstOffGuard(d Drive, iL float64) (Mode, bool) {
	d.Switch.OutputCapacitance = tinyCoss
	var pt Point
	d.Solve(On, iL, 0, 0, &pt)
	start, dir := pt.SwitchVoltage, sgn(iL)
	limit := 2 * (d.Switch.BreakdownVoltage + d.Supply.Voltage)
	g := make([]float64, MaxGuards)
	for s := 0.0; s < limit; s += scanStep {
		d.Solve(Off, iL, start+dir*s, 0, &pt)
		n := d.Guards(Off, iL, &pt, g)
		for k := range n {
			if g[k] >= 0 {
				return d.Target(Off, k), true
			}
		}
	}
	return Off, false
}

func TestTurnOffMode(t *testing.T) {
	t.Parallel()
	fw := Suppressor{Kind: Freewheel, Voltage: refVf}
	dz := Suppressor{Kind: DiodeZener, Voltage: refVdz}
	tvs := Suppressor{Kind: TVS, Voltage: refVtvs}
	scl := Suppressor{Kind: SwitchClamp, Voltage: refVcl}
	snub := Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn}
	none := Suppressor{Kind: None}
	tests := []struct {
		name string
		sup  Suppressor
		coss float64
		iL   float64
		want Mode
	}{
		// source: TurnOffMode doc: with no capacitance or snubber the path
		// that pins the switch node lowest takes the current at once.
		{"open/freewheel", fw, 0, refILTypical, CoilClamp},
		{"open/diodezener", dz, 0, refILTypical, CoilClamp},
		{"open/tvs", tvs, 0, refILTypical, CoilClamp},
		{"open/switchclamp", scl, 0, refILTypical, SwClamp},
		{"open/none", none, 0, refILTypical, Avalanche},
		{"open/none/negative", none, 0, refILLargeRev, BodyDiode},
		{"open/freewheel/negative", fw, 0, refILLargeRev, BodyDiode},
		{"open/switchclamp/negative", scl, 0, refILLargeRev, BodyDiode},
		{"open/tvs/negative", tvs, 0, refILLargeRev, BodyDiode}, // V0 − Vtvs = −6 V < −Vbd
		{"open/none/zero", none, 0, 0, Off},
		{"open/freewheel/zero", fw, 0, 0, Off},
		// source: TurnOffMode doc: with a switch capacitance or a snubber the
		// current has somewhere to go and the mode is Off.
		{"coss/freewheel", fw, refCoss, refILTypical, Off},
		{"coss/switchclamp", scl, refCoss, refILTypical, Off},
		{"coss/none", none, refCoss, refILTypical, Off},
		{"coss/none/negative", none, refCoss, refILLargeRev, Off},
		{"snubber", snub, 0, refILTypical, Off},
		{"snubber/negative", snub, 0, refILLargeRev, Off},
		{"snubber/coss", snub, refCoss, refILTypical, Off},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(refRs0, refRon, tt.coss, tt.sup)
			if err := d.Validate(); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			got := d.TurnOffMode(tt.iL)
			if got != tt.want {
				t.Errorf("TurnOffMode(i=%g) = %v, want %v", tt.iL, got, tt.want)
			}
			if !d.Open() || tt.iL == 0 {
				return
			}
			// source: consistency with the Off guards in the limit C_oss → 0
			// (the first threshold the switch node reaches takes the current).
			scan, ok := firstOffGuard(d, tt.iL)
			if !ok {
				t.Fatalf("no Off guard fired in the turn-off scan at i=%g", tt.iL)
			}
			if scan != got {
				t.Errorf("TurnOffMode(i=%g) = %v, want %v (first Off guard as C_oss → 0)", tt.iL, got, scan)
			}
		})
	}
}

// TestTurnOffModeLowestPin checks TurnOffMode on an open coil when the
// suppressor's pin voltage lies beyond another device's threshold: the
// path the switch node reaches first takes the current. With V0 = 24 V,
// breakdown 60 V and a diode + Zener of 50 V (Validate accepts it), the
// coil clamp would put the node at 74 V, 14 V above breakdown: at i = 2 A
// the switch avalanches first (as the Off guards say with any C_oss > 0:
// guard 3 at 60 V before guard 0 at 74 V). With a TVS of 24.5 V and
// i = −3 A the TVS's reverse conduction (node at −0.5 V) is reached before
// the body diode (node at −0.7 V, which would put 24.7 V across the coil,
// 0.2 V beyond the TVS clamp) as the node falls.
func TestTurnOffModeLowestPin(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		sup  Suppressor
		iL   float64
		want Mode
	}{
		{"diodezener beyond breakdown", Suppressor{Kind: DiodeZener, Voltage: refVdz2}, refILTypical, Avalanche},
		{"tvs reverse before body diode", Suppressor{Kind: TVS, Voltage: refVtv2}, refILLargeRev, CoilClampRev},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(refRs0, refRon0, refC0, tt.sup)
			if err := d.Validate(); err != nil {
				t.Fatalf("Validate() = %v", err)
			}
			got := d.TurnOffMode(tt.iL)
			if got != tt.want {
				t.Errorf("TurnOffMode(i=%g) = %v, want %v", tt.iL, got, tt.want)
			}
			// source: device thresholds (Switch/Suppressor docs): in the chosen
			// mode no non-conducting device may be beyond its threshold, i.e.
			// no other Off guard may be positive at the operating point.
			var pt Point
			g := make([]float64, MaxGuards)
			d.Solve(got, tt.iL, 0, 0, &pt)
			n := d.Guards(Off, tt.iL, &pt, g)
			for k := range n {
				if d.Target(Off, k) != got && g[k] > 0 {
					t.Errorf("Solve(%v, i=%g) SwitchVoltage = %g, CoilVoltage = %g: %v threshold exceeded by %g V", got, tt.iL, pt.SwitchVoltage, pt.CoilVoltage, d.Target(Off, k), g[k])
				}
			}
			if scan, ok := firstOffGuard(d, tt.iL); !ok || scan != got {
				t.Errorf("TurnOffMode(i=%g) = %v, want %v (first Off guard as C_oss → 0)", tt.iL, got, scan)
			}
		})
	}
}

func TestValidate(t *testing.T) {
	t.Parallel()
	good := func(f func(d *Drive)) Drive {
		d := makeDrive(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf, Resistance: refRd})
		f(&d)
		return d
	}
	withSup := func(s Suppressor) func(d *Drive) { return func(d *Drive) { d.Suppressor = s } }
	tests := []struct {
		name    string
		d       Drive
		wantErr bool
	}{
		// source: the Validate doc and the part docs (physical ranges).
		{"good/freewheel", good(func(*Drive) {}), false},
		{"good/ideal", good(func(d *Drive) {
			d.Supply.SourceResistance, d.Switch.OnResistance, d.Switch.OutputCapacitance = 0, 0, 0
		}), false},
		{"good/none", good(withSup(Suppressor{Kind: None})), false},
		{"good/diodezener", good(withSup(Suppressor{Kind: DiodeZener, Voltage: refVdz, Resistance: refRdz})), false},
		{"good/tvs", good(withSup(Suppressor{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs})), false},
		{"good/snubber", good(withSup(Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn})), false},
		{"good/switchclamp", good(withSup(Suppressor{Kind: SwitchClamp, Voltage: refVcl, Resistance: refRcl})), false},
		{"bad/zero supply", good(func(d *Drive) { d.Supply.Voltage = 0 }), true},
		{"bad/negative supply", good(func(d *Drive) { d.Supply.Voltage = -refV0 }), true},
		{"bad/NaN supply", good(func(d *Drive) { d.Supply.Voltage = math.NaN() }), true},
		{"bad/negative Rs", good(func(d *Drive) { d.Supply.SourceResistance = -refRs }), true},
		{"bad/negative Ron", good(func(d *Drive) { d.Switch.OnResistance = -refRon }), true},
		{"bad/negative Coss", good(func(d *Drive) { d.Switch.OutputCapacitance = -refCoss }), true},
		{"bad/breakdown = supply", good(func(d *Drive) { d.Switch.BreakdownVoltage = refV0 }), true},
		{"bad/breakdown < supply", good(func(d *Drive) { d.Switch.BreakdownVoltage = refV0 / 2 }), true},
		{"bad/zero body drop", good(func(d *Drive) { d.Switch.BodyDiodeDrop = 0 }), true},
		{"bad/negative suppressor R", good(func(d *Drive) { d.Suppressor.Resistance = -refRd }), true},
		{"bad/freewheel zero V", good(withSup(Suppressor{Kind: Freewheel})), true},
		{"bad/diodezener zero V", good(withSup(Suppressor{Kind: DiodeZener})), true},
		{"bad/tvs = supply", good(withSup(Suppressor{Kind: TVS, Voltage: refV0})), true},
		{"bad/tvs < supply", good(withSup(Suppressor{Kind: TVS, Voltage: refV0 - 1})), true},
		{"bad/switchclamp = supply", good(withSup(Suppressor{Kind: SwitchClamp, Voltage: refV0})), true},
		{"bad/switchclamp < supply", good(withSup(Suppressor{Kind: SwitchClamp, Voltage: refV0 - 1})), true},
		{"bad/switchclamp = breakdown", good(withSup(Suppressor{Kind: SwitchClamp, Voltage: refBV})), true},
		{"bad/switchclamp > breakdown", good(withSup(Suppressor{Kind: SwitchClamp, Voltage: refBV + 1})), true},
		{"bad/snubber no R", good(withSup(Suppressor{Kind: Snubber, Capacitance: refCsn})), true},
		{"bad/snubber no C", good(withSup(Suppressor{Kind: Snubber, Resistance: refRsn})), true},
		{"bad/snubber nothing", good(withSup(Suppressor{Kind: Snubber})), true},
		{"bad/unknown kind", good(withSup(Suppressor{Kind: Kind(99), Voltage: refVf})), true},
		{"bad/negative kind", good(withSup(Suppressor{Kind: Kind(-1), Voltage: refVf})), true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			err := tt.d.Validate()
			if (err != nil) != tt.wantErr {
				t.Errorf("Validate() = %v, want error %v", err, tt.wantErr)
			}
		})
	}
}

// TestValidateNaN: Validate refuses a NaN resistance or capacitance (a test
// written x < 0 would be false for NaN and let it through; Solve would then
// return NaN everywhere).
func TestValidateNaN(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	tests := []struct {
		name string
		f    func(d *Drive)
	}{
		{"Rs", func(d *Drive) { d.Supply.SourceResistance = nan }},
		{"Ron", func(d *Drive) { d.Switch.OnResistance = nan }},
		{"Coss", func(d *Drive) { d.Switch.OutputCapacitance = nan }},
		{"suppressor R", func(d *Drive) { d.Suppressor.Resistance = nan }},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			d := makeDrive(refRs, refRon, refCoss, Suppressor{Kind: Freewheel, Voltage: refVf, Resistance: refRd})
			tt.f(&d)
			// source: Validate doc: it reports a drive that cannot be simulated.
			if err := d.Validate(); err == nil {
				t.Errorf("Validate() with %s = NaN = nil, want error", tt.name)
			}
		})
	}
}

func TestStrings(t *testing.T) {
	t.Parallel()
	d := makeDrive(refRs, refRon, refCoss, Suppressor{Kind: TVS, Voltage: refVtvs})
	tests := []struct {
		got, want string
	}{
		// source: the name tables in circuit.go (kindNames, modeNames).
		{None.String(), "none"},
		{SwitchClamp.String(), "switch clamp"},
		{Kind(99).String(), "Kind(99)"},
		{Kind(-1).String(), "Kind(-1)"},
		{On.String(), "on"},
		{CoilClampRev.String(), "coil clamp (reverse)"},
		{Mode(42).String(), "Mode(42)"},
		// source: ClampName doc: the part that conducts in the mode.
		{d.ClampName(CoilClamp), "tvs"},
		{d.ClampName(CoilClampRev), "tvs"},
		{d.ClampName(Avalanche), "switch avalanche"},
		{d.ClampName(BodyDiode), "switch body diode"},
		{d.ClampName(Off), "off"},
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

// TestSolveNoAllocs is not parallel: AllocsPerRun reads global allocation
// counters, which parallel tests would disturb (parallel top-level tests
// wait until the sequential ones have finished).
func TestSolveNoAllocs(t *testing.T) {
	for _, dc := range []driveCase{
		{"snubber", makeDrive(refRs, refRon, refCoss, Suppressor{Kind: Snubber, Resistance: refRsn, Capacitance: refCsn})},
		{"tvs", makeDrive(refRs, refRon, refCoss, Suppressor{Kind: TVS, Voltage: refVtvs, Resistance: refRtvs})},
		{"switchclamp/open", makeDrive(refRs, refRon, refC0, Suppressor{Kind: SwitchClamp, Voltage: refVcl})},
	} {
		t.Run(dc.name, func(t *testing.T) {
			d := dc.d
			var pt Point
			g := make([]float64, MaxGuards)
			for m := On; m <= CoilClampRev; m++ {
				// source: Solve doc: "It does not allocate."
				if a := testing.AllocsPerRun(100, func() { d.Solve(m, refILTypical, refVC, refVS4, &pt) }); a != 0 {
					t.Errorf("Solve(%v, i=%g) allocates %g times per run, want 0", m, refILTypical, a)
				}
				if a := testing.AllocsPerRun(100, func() { d.Guards(m, refILTypical, &pt, g) }); a != 0 {
					t.Errorf("Guards(%v, i=%g) allocates %g times per run, want 0", m, refILTypical, a)
				}
			}
		})
	}
}
