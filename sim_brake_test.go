package coilkick

import (
	"math"
	"os"
	"strings"
	"testing"

	"coilkick/circuit"
)

// TestBrakeRLClosedForm: a drive with a brake, the plunger held at its
// rest stop (fixedModel), so that the coil is a fixed RL load. Before the
// brake the current rises as the RL step; during it the switch is off and
// the current decays through a diode path (drop Vf, resistance Rd): the
// freewheel diode for a constant drive, the recirculation path for a PWM
// (duty 1, so that only the brake switches); after it the switch is on
// again and the current rises from its value at the brake's end.
func TestBrakeRLClosedForm(t *testing.T) {
	t.Parallel()
	const (
		v0, r, l = 24.0, 48.0, 0.1 // V, ohm, H
		vf, rd   = 0.7, 0.1        // V, ohm: the freewheel diode
		vrc, rrc = 0.9, 0.05       // V, ohm: the PWM's recirculation path
	)
	t.Run("constant", func(t *testing.T) {
		t.Parallel()
		md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: vf, Resistance: rd})
		md.Control = circuit.Control{Mode: circuit.Constant}.WithBrake(brakeRefAt, brakeRefFor)
		checkBrakeRL(t, md, v0, r, l, vf, rd)
	})
	t.Run("pwm", func(t *testing.T) {
		t.Parallel()
		md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: vf, Resistance: rd})
		md.Drive.Recirc = circuit.Recirculation{Drop: vrc, Resistance: rrc}
		md.Control = circuit.Control{Mode: circuit.PWM, Frequency: 1e3, Duty: 1}.WithBrake(brakeRefAt, brakeRefFor)
		checkBrakeRL(t, md, v0, r, l, vrc, rrc)
	})
}

// The brake of TestBrakeRLClosedForm (s).
const brakeRefAt, brakeRefFor = 10e-3, 3e-3

// checkBrakeRL runs md and compares its current before, during and after
// the brake with the RL closed forms (supply v0, coil r and l, the decay
// path's drop vd and resistance rdp).
func checkBrakeRL(t *testing.T, md *Model, v0, r, l, vd, rdp float64) {
	t.Helper()
	const (
		relTol       = 1e-6 // of the current at the brake's start
		samplesPhase = 40
	)
	brakeAt, brakeFor := brakeRefAt, brakeRefFor
	t1, t2 := md.Timing.EnergizeAt+brakeAt, md.Timing.EnergizeAt+brakeAt+brakeFor
	var times []float64
	for k := 1; k < samplesPhase; k++ {
		times = append(times, t1+brakeFor*float64(k)/samplesPhase)
	}
	for k := 1; k < samplesPhase; k++ {
		times = append(times, t2+4e-3*float64(k)/samplesPhase)
	}
	res, err := Simulate(md, &Options{SampleTimes: times, NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	b := res.Metrics.Brake
	if !b.Happened || !b.Ended || math.Abs(b.Start-brakeAt) > 1e-15 || math.Abs(b.End-(brakeAt+brakeFor)) > 1e-15 {
		t.Fatalf("Metrics.Brake = %+v, want the brake from %g s to %g s after energize", b, brakeAt, brakeAt+brakeFor)
	}
	// source: first-order RL circuit (any circuits text, e.g. Hayt &
	// Kemmerly, Engineering Circuit Analysis, ch. 8): the step
	// i = (V/R)(1 − e^(−t/τ)), τ = L/R; the decay through a diode path of
	// drop Vd and resistance Rd, i = (I0 + Vd/R')·e^(−t/τ') − Vd/R' with
	// R' = R + Rd, τ' = L/R'; and the rise from I1, i = V/R + (I1 − V/R)·e^(−t/τ).
	i0 := v0 / r * (1 - math.Exp(-brakeAt*r/l))
	if e := math.Abs(b.CurrentAtStart-i0) / i0; e > relTol {
		t.Errorf("current at the brake's start %.9g A, want %.9g A (RL step; relative error %.3g > %g)", b.CurrentAtStart, i0, e, relTol)
	}
	rp := r + rdp
	decay := func(s float64) float64 { return (i0+vd/rp)*math.Exp(-s*rp/l) - vd/rp }
	i1 := decay(brakeFor)
	if e := math.Abs(b.CurrentAtEnd-i1) / i0; e > relTol {
		t.Errorf("current at the brake's end %.9g A, want %.9g A (relative error %.3g > %g)", b.CurrentAtEnd, i1, e, relTol)
	}
	worst := 0.0
	for k, tm := range times {
		want := decay(tm - t1)
		if tm > t2 {
			want = v0/r + (i1-v0/r)*math.Exp(-(tm-t2)*r/l)
		}
		worst = math.Max(worst, math.Abs(res.Samples[k]-want)/i0)
	}
	if worst > relTol {
		t.Errorf("brake and recovery: worst error %.3g of the current at the brake's start, want <= %g", worst, relTol)
	}
	t.Logf("brake RL: worst error %.3g of I0 over %d samples", worst, len(times))
}

// TestBrakeScenario: the brake keys of a scenario file reach the run: the
// events "brake: switch off" and "brake ends", the freewheel diode
// conducting in between, and Metrics.Brake; a brake that outlasts the
// energized time is refused naming the key.
func TestBrakeScenario(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	src := string(data)
	load := func(text, name string) (*Model, error) {
		s, err := Parse([]byte(text), name)
		if err != nil {
			return nil, err
		}
		return Build(s)
	}
	withBrake := strings.Replace(src, "timing:", "drive:\n  mode: constant\n  brake at: 4 ms\n  brake for: 1 ms\ntiming:", 1)
	md, err := load(withBrake, "brake.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	tOn := md.Timing.EnergizeAt
	var off, ends bool
	for _, e := range res.Events {
		switch {
		case strings.HasPrefix(e.What, "brake: switch off") && e.Time == tOn+4e-3:
			off = true
		case strings.HasPrefix(e.What, "brake ends") && e.Time == tOn+5e-3:
			ends = true
		}
	}
	// The brake's current goes through the suppression part (the diode)
	// while energized: its energy is booked as ChopClampEnergy.
	if diode := res.Metrics.ChopClampEnergy; !off || !ends || !(diode > 0) {
		t.Errorf("events: brake off %v, brake ends %v, diode energy while energized %g J; want true, true, > 0 (events %v)", off, ends, diode, res.Events)
	}
	if b := res.Metrics.Brake; !b.Happened || !b.Ended || !(b.CurrentAtEnd < b.CurrentAtStart) {
		t.Errorf("Metrics.Brake = %+v, want a brake with the current falling", b)
	}
	late := strings.Replace(src, "timing:", "drive:\n  mode: constant\n  brake at: 100 ms\n  brake for: 60 ms\ntiming:", 1)
	if _, err := load(late, "late.yaml"); err == nil || !strings.Contains(err.Error(), "drive.brake for") {
		t.Errorf("a brake past de-energize: error %v, want one naming drive.brake for", err)
	}
	alone := strings.Replace(src, "timing:", "drive:\n  mode: constant\n  brake for: 1 ms\ntiming:", 1)
	if _, err := load(alone, "alone.yaml"); err == nil || !strings.Contains(err.Error(), "brake at") {
		t.Errorf("brake for without brake at: error %v, want one naming drive.brake at", err)
	}
}

// TestBrakePWMPeriodic: a PWM reaches its periodic steady state before
// the brake (the plunger held at rest), so the run repeats periods
// (sim_periodic.go); the repetition must stop at the brake, whose currents
// then equal those of a run that integrates every period (within 1e-6 of
// the current; the repetition's own error is far smaller).
func TestBrakePWMPeriodic(t *testing.T) {
	t.Parallel()
	// L/R = 0.4 ms: the PWM settles within a few ms.
	md := fixedModel(t, 24, 48, 0.02, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	md.Drive.Recirc = circuit.Recirculation{Drop: 0.7, Resistance: 0.05}
	md.Control = circuit.Control{Mode: circuit.PWM, Frequency: 20e3, Duty: 0.5}.WithBrake(15e-3, 2e-3)
	fast, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	full, err := Simulate(md, &Options{NoTrace: true, FollowPeriods: true})
	if err != nil {
		t.Fatal(err)
	}
	bf, bb := fast.Metrics.Brake, full.Metrics.Brake
	if fast.Stats.PeriodsRepeated == 0 || !bf.Happened || !bf.Ended {
		t.Fatalf("periods repeated %d, brake %+v: want repeated periods and the brake", fast.Stats.PeriodsRepeated, bf)
	}
	for _, d := range []float64{bf.CurrentAtStart - bb.CurrentAtStart, bf.CurrentAtEnd - bb.CurrentAtEnd} {
		if math.Abs(d) > 1e-6*bb.CurrentAtStart {
			t.Errorf("brake with repeated periods %+v, integrated %+v: the currents differ by %g A", bf, bb, d)
		}
	}
}
