package coilkick

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"coilkick/circuit"
)

// ringClosedForm returns the node voltage and coil current of the ring
// after turn-off: the switch node's capacitance c to ground, the coil
// (r + l) and the core-loss resistance rp (0: none) from the rail v0 to
// the node. With u = vC − v0 the state (u, i) obeys
//
//	c·du/dt = i − u/rp,  l·di/dt = −u − r·i,
//
// a linear pair whose 2×2 matrix M has the exponential
// e^(Mt) = e^(pt)·[cos(wt)·I + sin(wt)/w·(M − p·I)], p = tr M/2,
// w = √(det M − p²) (Cayley–Hamilton; Moler & Van Loan, "Nineteen dubious
// ways to compute the exponential of a matrix", SIAM Review 45, 2003, for
// the 2×2 case; the series RLC response of any circuits textbook, e.g.
// Hayt & Kemmerly, Engineering Circuit Analysis, ch. 9, when rp = 0).
func ringClosedForm(v0, r, l, c, rp, vc0, i0, t float64) (vC, i float64) {
	g := 0.0
	if rp > 0 {
		g = 1 / rp
	}
	m := [2][2]float64{{-g / c, 1 / c}, {-1 / l, -r / l}}
	p := 0.5 * (m[0][0] + m[1][1])
	det := m[0][0]*m[1][1] - m[0][1]*m[1][0]
	w := math.Sqrt(det - p*p)
	e := math.Exp(p * t)
	cs, sn := math.Cos(w*t), math.Sin(w*t)/w
	u0 := vc0 - v0
	u := e * (cs*u0 + sn*((m[0][0]-p)*u0+m[0][1]*i0))
	i = e * (cs*i0 + sn*(m[1][0]*u0+(m[1][1]-p)*i0))
	return v0 + u, i
}

// TestRingAgainstClosedForm: coil + switch capacitance (and the winding
// capacitance, which adds to it at the node), with and without a core-loss
// resistance, ringing after turn-off with the plunger held.
func TestRingAgainstClosedForm(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 1200.0, 1.0
	for _, c := range []struct {
		name        string
		coss, cw    float64
		rp          float64
		wantPeriods float64 // at least this many periods checked
	}{
		{"switch capacitance", 1e-6, 0, 0, 3},
		{"switch + winding capacitance", 0.6e-6, 0.4e-6, 0, 3},
		{"with core-loss resistance", 1e-6, 0, 20e3, 2},
	} {
		md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.None})
		md.Drive.Switch.BreakdownVoltage = 1000
		md.Drive.Switch.OutputCapacitance = c.coss
		md.Drive.CoilCapacitance = c.cw
		md.CoreLossResistance = c.rp
		md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.025, End: 0.05}
		res, err := Simulate(md, nil)
		if err != nil {
			t.Fatal(err)
		}
		tr := &res.Trace
		// The state at the de-energize command: the node at the switch's
		// on-state voltage, the coil current at its steady value.
		k0 := 0
		for k, tt := range tr.Time {
			if tt <= md.Timing.DeenergizeAt {
				k0 = k
			}
		}
		vc0, i0 := tr.SwitchVoltage[k0], tr.Current[k0]
		cn := c.coss + c.cw
		worst, n, span := 0.0, 0, 0.0
		for k := k0 + 1; k < len(tr.Time); k++ {
			dt := tr.Time[k] - md.Timing.DeenergizeAt
			if dt <= 0 {
				continue
			}
			wantV, wantI := ringClosedForm(v0, r, l, cn, c.rp, vc0, i0, dt)
			worst = math.Max(worst, math.Abs(tr.SwitchVoltage[k]-wantV)/v0)
			worst = math.Max(worst, math.Abs(tr.Current[k]-wantI)/i0)
			n++
			span = dt
		}
		periods := span / (2 * math.Pi * math.Sqrt(l*cn))
		if worst > 1e-6 || n < 20 || periods < c.wantPeriods {
			t.Errorf("%s: worst deviation %.3g of scale over %d samples (%.1f periods)", c.name, worst, n, periods)
		}
		if e := res.Metrics.EnergyResidualRel(); e > 1e-6 {
			t.Errorf("%s: energy residual %.3g of supply", c.name, e)
		}
		if c.rp > 0 && !(res.Metrics.CoreLoss > 0) {
			t.Errorf("%s: no core loss booked", c.name)
		}
	}
}

// TestCoreLossDecay: with nothing at the switch node, the coil's current
// decays through its core-loss resistance after turn-off.
func TestCoreLossDecay(t *testing.T) {
	t.Parallel()
	const v0, r, l, rp = 24.0, 48.0, 0.1, 500.0
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.None})
	md.Drive.Switch.BreakdownVoltage = 1000 // Rp·I0 = 250 V: no avalanche
	md.CoreLossResistance = rp
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := &res.Metrics
	i0 := m.CurrentAtTurnOff
	// source: first-order decay of an R–L loop closed by Rp,
	// i(t) = I0·e^(−(R + Rp)·t/L) (any circuits textbook, e.g. Hayt &
	// Kemmerly, Engineering Circuit Analysis, ch. 8); its loss in Rp is
	// Rp·I0²·L/(2(R + Rp)).
	tau := l / (r + rp)
	worst := 0.0
	for k, tt := range res.Trace.Time {
		if dt := tt - md.Timing.DeenergizeAt; dt > 0 {
			want := i0 * math.Exp(-dt/tau)
			worst = math.Max(worst, math.Abs(res.Trace.Current[k]-want)/i0)
		}
	}
	if worst > 1e-6 {
		t.Errorf("decay through Rp: worst deviation %.3g of I0", worst)
	}
	// The on-state loss in Rp (V²/Rp for the energized 25 ms, the coil
	// voltage being v0 − Ron·it) is small; compare the turn-off share.
	onLoss := 0.0
	if d := md.Timing.DeenergizeAt; d > 0 {
		onLoss = v0 * v0 / rp * d // upper bound; the exact value is below by Ron terms
	}
	wantOff := rp * i0 * i0 * l / (2 * (r + rp))
	if got := m.CoreLoss - onLoss; math.Abs(got-wantOff) > 1e-4*wantOff {
		t.Errorf("core loss at turn-off %.9g J, want %.9g J", got, wantOff)
	}
	if want := tau * math.Log(1/DecayFraction); math.Abs(m.CurrentDecay.Seconds-want) > 1e-6*want {
		t.Errorf("current decay %.9g s, want %.9g s", m.CurrentDecay.Seconds, want)
	}
	if e := m.EnergyResidualRel(); e > 1e-6 {
		t.Errorf("energy residual %.3g", e)
	}
}

// TestParasiticsEnergyBalance: the energy balance closes with each new
// element on a demo.
func TestParasiticsEnergyBalance(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name          string
		coss, cw, rpp float64
	}{
		{"winding capacitance", 0, 200e-12, 0},
		{"core loss", 0, 0, 20e3},
		{"switch capacitance + core loss", 400e-12, 0, 20e3},
		{"all three", 400e-12, 200e-12, 20e3},
	} {
		md, err := LoadModel("scenarios/irrigation-valve.yaml")
		if err != nil {
			t.Fatal(err)
		}
		md.Drive.Switch.OutputCapacitance = c.coss
		md.Drive.CoilCapacitance = c.cw
		md.CoreLossResistance = c.rpp
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if e := res.Metrics.EnergyResidualRel(); e > 1e-6 {
			t.Errorf("%s: energy residual %.3g of supply", c.name, e)
		}
		if !res.Metrics.Release.Happened {
			t.Errorf("%s: did not release", c.name)
		}
	}
}

// TestDemoFiguresUnchanged: where no new element is used, the demos'
// figures agree within 1e-6 (relative to the figure, or to the scale of
// its kind for figures near zero) with those recorded before the
// integrator work (testdata/demo-figures, the previous integrator at its
// default tolerance) — or, where that earlier figure was itself further
// than that from the converged value (the previous integrator at
// tolerance 1e-11, testdata/demo-figures/converged), the new figure is at
// least as close to the converged value. A regression check, not a physics
// reference.
func TestDemoFiguresUnchanged(t *testing.T) {
	t.Parallel()
	// The peak-and-hold demo's 1.5 A peak phase chops at a fixed 20 kHz
	// with a duty of about 0.77: above one half, peak-current control
	// without slope compensation is unstable (the subharmonic
	// instability of current-programmed control, e.g. Erickson &
	// Maksimović, Fundamentals of Power Electronics, 2nd ed., the chapter
	// on current-programmed control; from memory), so the pattern of
	// long and short periods depends on the rounding of every step and the
	// whole-run energies with it. Measured with Rodas5P, coil loss at
	// tolerance 1e-8 … 1e-12: 2.59562, 2.59549, 2.59577, 2.59526, 2.59593
	// J — a spread of 2.6e-4 that no tolerance narrows. They are checked
	// within 1e-3 of the converged value instead.
	chaotic := map[string]bool{"peak-hold-valve coil_loss_J": true, "peak-hold-valve supply_energy_J": true}
	files, _ := filepath.Glob("testdata/demo-figures/*.json")
	if len(files) < 8 {
		t.Fatalf("%d recorded demos", len(files))
	}
	read := func(f string) map[string]any {
		var doc struct {
			Metrics map[string]any `json:"metrics"`
		}
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, &doc); err != nil {
			t.Fatal(err)
		}
		return doc.Metrics
	}
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".json")
		if name == "process-air-valve" {
			continue // it has the new parasitics now (winding capacitance, core loss)
		}
		before := read(f)
		conv := read(filepath.Join("testdata/demo-figures/converged", name+".json"))
		md, err := LoadModel(filepath.Join("scenarios", name+".yaml"))
		if err != nil {
			t.Fatal(err)
		}
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		m := &res.Metrics
		now := map[string]Interval{"pull_in_time_s": m.PullIn, "release_time_s": m.Release, "drop_time_s": m.Drop,
			"motion_delay_s": m.MotionDelay, "current_decay_time_s": m.CurrentDecay, "clamp_conduction_time_s": m.ClampConduction}
		vals := map[string]float64{"peak_current_A": m.PeakCurrent, "peak_switch_voltage_V": m.PeakSwitchVoltage,
			"clamp_energy_J": m.ClampEnergy, "avalanche_energy_J": m.AvalancheEnergy, "supply_energy_J": m.SupplyEnergy,
			"coil_loss_J": m.CoilLoss, "current_at_turn_off_A": m.CurrentAtTurnOff, "seat_impact_speed_m_per_s": m.SeatImpactSpeed,
			"lowest_switch_voltage_V": m.MinSwitchVoltage}
		for k, iv := range now {
			_, ok := before[k].(float64)
			if ok != iv.Happened {
				t.Errorf("%s: %s %v, before %v", name, k, iv, before[k])
				continue
			}
			if ok {
				vals[k] = iv.Seconds
			}
		}
		supply := math.Abs(before["supply_energy_J"].(float64))
		for k, v := range vals {
			b, _ := before[k].(float64)
			c, _ := conv[k].(float64)
			scale := math.Max(math.Abs(b), 1e-3*supply)
			switch {
			case strings.HasSuffix(k, "_V"):
				scale = math.Max(math.Abs(b), md.Drive.Supply.Voltage)
			case strings.HasSuffix(k, "_s") || strings.HasSuffix(k, "_m_per_s") || strings.HasSuffix(k, "_A"):
				scale = math.Max(math.Abs(b), 1e-12)
			}
			if chaotic[name+" "+k] {
				// Not determined to 1e-6 by any tolerance (see chaotic):
				// within 1e-3 of the converged value.
				if !(math.Abs(v-c) <= 1e-3*math.Abs(c)) {
					t.Errorf("%s: %s %.12g, converged %.12g", name, k, v, c)
				}
				continue
			}
			if d := math.Abs(v - b); d > 1e-6*scale && math.Abs(v-c) > math.Abs(b-c) {
				t.Errorf("%s: %s %.12g, before %.12g (converged %.12g)", name, k, v, b, c)
			}
		}
	}
}

// TestParasiticsStepBudgets: the step targets of realistic parasitics
// (steps are machine-independent): the irrigation valve with 400 pF at
// most twice its steps without; the door latch (avalanche and an undamped
// ring) under 2 000, with a core-loss resistance under 500; the geometry
// demo (eddy turn and switch capacitance) under 1 000.
func TestParasiticsStepBudgets(t *testing.T) {
	t.Parallel()
	steps := func(md *Model) int {
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		return res.Stats.Steps
	}
	load := func(name string) *Model {
		md, err := LoadModel("scenarios/" + name + ".yaml")
		if err != nil {
			t.Fatal(err)
		}
		return md
	}
	irr := load("irrigation-valve")
	plain := steps(irr)
	irr.Drive.Switch.OutputCapacitance = 400e-12
	if s := steps(irr); s > 2*plain {
		t.Errorf("irrigation valve + 400 pF: %d steps, without %d", s, plain)
	}
	dl := load("door-latch")
	if s := steps(dl); s >= 2000 {
		t.Errorf("door latch: %d steps", s)
	}
	dl.CoreLossResistance = 10e3
	if s := steps(dl); s >= 500 {
		t.Errorf("door latch with core loss: %d steps", s)
	}
	if s := steps(load("dosing-valve-geometry")); s >= 1000 {
		t.Errorf("geometry demo: %d steps", s)
	}
}

// TestPeriodicHoldRepeated: repeating the periodic steady state of a
// chopped hold gives the figures of integrating every period, within 1e-6,
// for fixed-frequency peak-and-hold (the demo), PWM and hysteresis
// chopping, at a fraction of the steps; the PWM case also against the
// closed form of the periodic RL steady state.
func TestPeriodicHoldRepeated(t *testing.T) {
	t.Parallel()
	demo, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const v0, r, l, d, f, vd = 24.0, 48.0, 0.1, 0.4, 2000.0, 0.7
	pwm := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.8})
	pwm.Control = circuit.Control{Mode: circuit.PWM, Frequency: f, Duty: d}
	pwm.Drive.Recirc = circuit.Recirculation{Drop: vd}
	pwm.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 1, End: 1.01}
	hyst := fixedModel(t, 24, 12, 0.05, circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: 30})
	hyst.Control = circuit.Control{Mode: circuit.PeakHold, PeakCurrent: 1.5, PeakTime: 0.01, HoldCurrent: 0.5,
		Regulation: circuit.Hysteresis, Band: 0.04}
	hyst.Drive.Recirc = circuit.Recirculation{Drop: 0.7}
	hyst.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 1, End: 1.01}
	for name, md := range map[string]*Model{"peak-and-hold demo": demo, "pwm": pwm, "hysteresis": hyst} {
		a, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		b, err := Simulate(md, &Options{NoTrace: true, FollowPeriods: true})
		if err != nil {
			t.Fatal(err)
		}
		if a.Stats.PeriodsRepeated == 0 || 5*a.Stats.Steps > b.Stats.Steps {
			t.Errorf("%s: %d periods repeated, %d steps against %d", name, a.Stats.PeriodsRepeated, a.Stats.Steps, b.Stats.Steps)
		}
		ma, mb := &a.Metrics, &b.Metrics
		sup := mb.SupplyEnergy
		for k, p := range map[string][2]float64{"supply": {ma.SupplyEnergy, mb.SupplyEnergy}, "coil": {ma.CoilLoss, mb.CoilLoss},
			"diode": {ma.DiodeLoss, mb.DiodeLoss}, "switch": {ma.SwitchLoss, mb.SwitchLoss}, "clamp": {ma.ClampEnergy, mb.ClampEnergy}} {
			if math.Abs(p[0]-p[1]) > 1e-6*sup {
				t.Errorf("%s: %s energy %.12g J repeated, %.12g J integrated", name, k, p[0], p[1])
			}
		}
		ha, hb := ma.Hold, mb.Hold
		for k, p := range map[string][2]float64{"mean": {ha.MeanCurrent, hb.MeanCurrent}, "min": {ha.MinCurrent, hb.MinCurrent},
			"max": {ha.MaxCurrent, hb.MaxCurrent}, "frequency": {ha.ChoppingFrequency, hb.ChoppingFrequency},
			"coil power": {ha.CoilPower, hb.CoilPower}, "turn-off current": {ma.CurrentAtTurnOff, mb.CurrentAtTurnOff},
			"release": {ma.ClampConduction.Seconds, mb.ClampConduction.Seconds}} {
			if math.Abs(p[0]-p[1]) > 1e-6*math.Abs(p[1]) {
				t.Errorf("%s: %s %.12g repeated, %.12g integrated", name, k, p[0], p[1])
			}
		}
		// Repeating adds nothing to the balance's residual (the hysteresis
		// case has 6.6e-6 integrated too: 10 000 located band crossings).
		if e := ma.EnergyResidualRel(); math.Abs(e-mb.EnergyResidualRel()) > 1e-6 {
			t.Errorf("%s: energy residual %.3g, integrated %.3g", name, e, mb.EnergyResidualRel())
		}
	}
	// source: as TestPWMMeanAndRipple, the mean of the periodic RL steady
	// state (D·V − (1−D)·Vd)/R.
	res, err := Simulate(pwm, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := (d*v0 - (1-d)*vd) / r; math.Abs(res.Metrics.Hold.MeanCurrent-want) > 1e-6*want || res.Stats.PeriodsRepeated == 0 {
		t.Errorf("PWM mean current %.9g A, want %.9g A (%d periods repeated)", res.Metrics.Hold.MeanCurrent, want, res.Stats.PeriodsRepeated)
	}
}

// TestChoppingParasiticsEnergyBalance: a chopped hold with switch and
// winding capacitance (charged and discharged at every edge) and a
// core-loss resistance keeps the energy balance within 1e-6 of the supply.
// Before the node charging at slow-decay switch-offs was accounted for,
// 600 pF left 3e-4 of the supply unexplained.
func TestChoppingParasiticsEnergyBalance(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ coss, rp, cw float64 }{{600e-12, 0, 0}, {0, 0, 200e-12}, {600e-12, 30e3, 200e-12}} {
		md, err := LoadModel("scenarios/peak-hold-valve.yaml")
		if err != nil {
			t.Fatal(err)
		}
		md.Drive.Switch.OutputCapacitance = c.coss
		md.CoreLossResistance = c.rp
		md.Drive.CoilCapacitance = c.cw
		md.Timing.DeenergizeAt, md.Timing.End = 0.1, 0.15
		res, err := Simulate(md, &Options{NoTrace: true})
		if err != nil {
			t.Fatal(err)
		}
		if r := res.Metrics.EnergyResidualRel(); r > 1e-6 {
			t.Errorf("Coss %g F, Rp %g ohm, Cw %g F: energy residual %.3g of supply", c.coss, c.rp, c.cw, r)
		}
	}
}

// TestRunChecks: a run with a non-finite figure or an energy balance that
// does not close is a failed run (an error matching ErrRunInvalid), and the
// residual is judged against the largest energy that flowed.
func TestRunChecks(t *testing.T) {
	t.Parallel()
	m := Metrics{SupplyEnergy: 0, CoilLoss: 4.45, StoredChange: -4.45}
	if r := m.EnergyResidualRel(); r != 0 || m.check() != nil {
		t.Errorf("balanced run fed by a capacitor: residual %g, %v", r, m.check())
	}
	m.EnergyResidual = 1e-3
	if err := m.check(); !errors.Is(err, ErrRunInvalid) || !strings.Contains(err.Error(), "4.45 J") {
		t.Errorf("residual 1e-3 J of 4.45 J: %v", err)
	}
	m = Metrics{SupplyEnergy: 1, CoilLoss: 1}
	m.Hold.ForceMargin = math.Inf(1)
	if err := m.check(); !errors.Is(err, ErrRunInvalid) || !strings.Contains(err.Error(), `"hold force margin"`) {
		t.Errorf("infinite margin: %v", err)
	}
	if w := words("PeakSwitchVoltage"); w != "peak switch voltage" {
		t.Errorf("words = %q", w)
	}
}

// TestZenoBounces: with a restitution of 0.9 and a vanishing stick speed the
// bounces would accumulate forever; the run takes the plunger as resting
// after ZenoBounces of them, in a handful of milliseconds of computing.
func TestZenoBounces(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	md.Plunger.Restitution, md.Plunger.StickSpeed = 0.9, 1e-30
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	m := &res.Metrics
	if !m.Release.Happened || !m.Drop.Happened || m.Bounces != ZenoBounces-1 || res.Stats.Steps > 5000 {
		t.Errorf("bounces %d, release %v, drop %v, %d steps", m.Bounces, m.Release, m.Drop, res.Stats.Steps)
	}
	// source: Newton's restitution law: each impact speed is 0.9 of the
	// one before (the plunger's other forces are small against the impact
	// during the short flights), so the hundredth impact is about 0.9^99 of
	// the first; checked loosely (within a factor 10).
	var speeds []float64
	for _, e := range res.Events {
		if e.Kind == EventImpact && e.Part == "seat" {
			speeds = append(speeds, e.Speed)
		}
	}
	if len(speeds) != ZenoBounces {
		t.Fatalf("%d seat impacts", len(speeds))
	}
	if ratio := speeds[len(speeds)-1] / speeds[0]; ratio > 10*math.Pow(0.9, 99) || ratio < 0.1*math.Pow(0.9, 99) {
		t.Errorf("last/first impact speed %.3g, Newton's law gives about %.3g", ratio, math.Pow(0.9, 99))
	}
}

// TestTraceBounded: the trace stays within its row bound on a long run
// (here the bound lowered to 4096 rows), keeps the current's envelope, and
// says it was thinned; the figures do not depend on it.
func TestTraceBounded(t *testing.T) {
	// Not parallel: it lowers a package variable.
	keep := traceRows
	traceRows = 4096
	defer func() { traceRows = keep }()
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, follow := range []bool{true, false} {
		res, err := Simulate(md, &Options{FollowPeriods: follow})
		if err != nil {
			t.Fatal(err)
		}
		tr := &res.Trace
		hi, lo := math.Inf(-1), math.Inf(1)
		for k, tt := range tr.Time {
			if tt > 0.5 && tt < 0.9 {
				hi, lo = math.Max(hi, tr.Current[k]), math.Min(lo, tr.Current[k])
			}
		}
		h := res.Metrics.Hold
		if len(tr.Time) > traceRows || tr.Thinned == 0 {
			t.Errorf("follow %v: %d rows, thinned %d times", follow, len(tr.Time), tr.Thinned)
		}
		if math.Abs(hi-h.MaxCurrent) > 0.05*h.Ripple || math.Abs(lo-h.MinCurrent) > 0.05*h.Ripple {
			t.Errorf("follow %v: thinned trace spans %.6g..%.6g A in the hold, the hold %.6g..%.6g A", follow, lo, hi, h.MinCurrent, h.MaxCurrent)
		}
		for k := 1; k < len(tr.Time); k++ {
			if tr.Time[k] < tr.Time[k-1] {
				t.Fatalf("follow %v: time goes back at row %d", follow, k)
			}
		}
	}
}

// TestSupplyOverrideStartsAtRest: a run at a supply given by
// Options.SupplyVoltage (corners, solve, the hot-coil check) equals the
// run of a model whose supply is that voltage: before energize the switch
// node sits at the rail, whatever the nominal supply (with a node
// capacitance, starting it at the nominal rail rang the coil before the
// energize command). Circuit law: with no current the coil has no drop,
// so the node is at the supply (Kirchhoff's voltage law).
func TestSupplyOverrideStartsAtRest(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/process-air-valve.yaml") // has switch and winding capacitance
	if err != nil {
		t.Fatal(err)
	}
	if md.Drive.Switch.OutputCapacitance == 0 {
		t.Fatal("the scenario lost its switch capacitance; the test needs one")
	}
	const v = 20.0 // V, below the nominal 24 V
	over, err := Simulate(md, &Options{SupplyVoltage: v})
	if err != nil {
		t.Fatal(err)
	}
	direct := *md
	direct.Drive.Supply.Voltage = v
	ref, err := Simulate(&direct, nil)
	if err != nil {
		t.Fatal(err)
	}
	pairs := []struct {
		name      string
		got, want float64
	}{
		{"peak current", over.Metrics.PeakCurrent, ref.Metrics.PeakCurrent},
		{"peak switch voltage", over.Metrics.PeakSwitchVoltage, ref.Metrics.PeakSwitchVoltage},
		{"lowest switch voltage", over.Metrics.MinSwitchVoltage, ref.Metrics.MinSwitchVoltage},
		{"clamp energy", over.Metrics.ClampEnergy, ref.Metrics.ClampEnergy},
		{"supply energy", over.Metrics.SupplyEnergy, ref.Metrics.SupplyEnergy},
	}
	for _, p := range pairs {
		if math.Abs(p.got-p.want) > 1e-9*math.Max(1, math.Abs(p.want)) {
			t.Errorf("%s: %.10g with the override, %.10g with the model's supply at %g V", p.name, p.got, p.want, v)
		}
	}
	// Before energize nothing moves: the node is at the rail.
	for k, tm := range over.Trace.Time {
		if tm >= md.Timing.EnergizeAt {
			break
		}
		if math.Abs(over.Trace.SwitchVoltage[k]-v) > 1e-6 {
			t.Fatalf("at %g s before energize the switch node is at %g V, want the %g V rail", tm, over.Trace.SwitchVoltage[k], v)
		}
	}
}
