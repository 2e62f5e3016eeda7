package coilkick

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"coilkick/circuit"
	"coilkick/magnet"
	"coilkick/mech"
)

// imposedModel is a gap-law plunger magnet without leakage on a stiff
// supply with an ideal switch (reference data for a closed form, not a
// product): 1/L(x) = a + b·x.
func imposedModel(t *testing.T) *Model {
	t.Helper()
	const xMin, xMax = 0.1e-3, 3e-3
	gl, err := magnet.NewGapLaw(0.12, 0.05, xMin, xMax)
	if err != nil {
		t.Fatal(err)
	}
	return &Model{
		Name:        "imposed motion",
		Coil:        magnet.Coil{Resistance: 24, RefTemperature: 293.15, TempCoeff: magnet.CopperTempCoeff},
		Temperature: 293.15,
		Magnet:      gl,
		Plunger: mech.Plunger{Mass: 0.015, GapMin: xMin, GapMax: xMax, Spring: mech.Spring{Preload: 2},
			StickSpeed: 0.01},
		Drive: circuit.Drive{
			Supply:     circuit.Supply{Voltage: 24},
			Switch:     circuit.Switch{BreakdownVoltage: 1000, BodyDiodeDrop: 0.7},
			Suppressor: circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7},
		},
		Timing: TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.2, End: 0.3},
	}
}

// imposedCurrent is the closed form of the coil current of a gap-law
// magnet without leakage, 1/L(x) = a + b·x, on a voltage step V at t = 0
// through the resistance R while the gap moves at the constant velocity v
// from x0. Faraday's law with λ = L(x)·i (Fitzgerald & Kingsley, Electric
// Machinery, ch. 3), dλ/dt = V − R·i = V − R·(a + b·x0 + b·v·t)·λ, is
// linear in λ; its integrating factor exp(α·t − c·t²), α = R·(a + b·x0),
// c = −R·b·v/2 > 0 for a closing gap, gives (completing the square, t* =
// α/(2c), u = √c·(t* − t), w = √c·t*)
//
//	λ(t) = V·√π/(2√c)·e^{u²}·(erfc(u) − erfc(w)),  i = (a + b·x(t))·λ.
//
// (derived here; erfc from the Go standard library).
func imposedCurrent(V, R, a, b, x0, v, t float64) float64 {
	alpha := R * (a + b*x0)
	c := -R * b * v / 2
	sc := math.Sqrt(c)
	ts := alpha / (2 * c)
	u, w := sc*(ts-t), sc*ts
	lam := V * math.Sqrt(math.Pi) / (2 * sc) * math.Exp(u*u) * (math.Erfc(u) - math.Erfc(w))
	return (a + b*(x0+v*t)) * lam
}

// TestImposedMotionCurrent: the simulated coil current of a plunger moved
// at a constant velocity (Options.ImposedVelocity) matches the closed form
// of L(x)·di/dt = V − R·i − i·(dL/dx)·v within 1e-6 (Fitzgerald & Kingsley
// ch. 3; imposedCurrent).
func TestImposedMotionCurrent(t *testing.T) {
	t.Parallel()
	md := imposedModel(t)
	const v = -0.1 // m/s: 2.9 mm in 29 ms; the run ends at 25 ms
	res, err := Simulate(md, &Options{ImposedVelocity: v, Energize: 0, Deenergize: 1, End: 0.025})
	if err != nil {
		t.Fatal(err)
	}
	// a, b of the gap law through its two points (magnet.NewGapLaw).
	b := (1/0.05 - 1/0.12) / (3e-3 - 0.1e-3)
	a := 1/0.12 - b*0.1e-3
	worst, n := 0.0, 0
	for k, tt := range res.Trace.Time {
		if tt < 1e-4 {
			continue
		}
		want := imposedCurrent(24, 24, a, b, 3e-3, v, tt)
		if e := math.Abs(res.Trace.Current[k]-want) / want; e > worst {
			worst = e
		}
		if gw := 3e-3 + v*tt; math.Abs(res.Trace.Gap[k]-gw) > 1e-9 {
			t.Fatalf("gap %.9g m at %.6g s, want %.9g m (imposed motion)", res.Trace.Gap[k], tt, gw)
		}
		n++
	}
	if n < 20 || worst > 1e-6 {
		t.Errorf("imposed motion: worst relative error of the current %.3g over %d rows, want <= 1e-6", worst, n)
	}
	// The back-EMF matters: the current at 25 ms against the blocked plunger's.
	still := 24.0 / 24 * (1 - math.Exp(-0.025*24/0.05))
	if got := res.Trace.Current[len(res.Trace.Current)-1]; math.Abs(got-still) < 0.05 {
		t.Errorf("current %.4g A at 25 ms is that of a still plunger (%.4g A): the motion did not act", got, still)
	}
	t.Logf("imposed motion: worst relative error %.3g over %d rows", worst, n)
}

// TestSenseFilterStep: the sense filter's output against the closed forms
// of a first-order low-pass, τ·y' + y = u with τ = 1/(2π·f−3dB): a unit
// step from rest gives 1 − e^(−t/τ), a unit ramp t − τ·(1 − e^(−t/τ))
// (first-order circuit theory, e.g. Hayt & Kemmerly, Engineering Circuit
// Analysis, ch. 8; the ramp checks the first-order hold's slope term).
func TestSenseFilterStep(t *testing.T) {
	t.Parallel()
	const f, h = 2000.0, 1e-5
	tau := 1 / (2 * math.Pi * f)
	step := make([]float64, 400)
	ramp := make([]float64, 400)
	for j := range step {
		step[j], ramp[j] = 1, float64(j)*h
	}
	filter(step, h, tau, 0)
	filter(ramp, h, tau, 0)
	for j := range step {
		tt := float64(j) * h
		if want := -math.Expm1(-tt / tau); math.Abs(step[j]-want) > 1e-12 {
			t.Fatalf("step response at %.3g s: %.15g, want %.15g", tt, step[j], want)
		}
		if want := tt + tau*math.Expm1(-tt/tau); math.Abs(ramp[j]-want) > 1e-15 {
			t.Fatalf("ramp response at %.3g s: %.15g, want %.15g", tt, ramp[j], want)
		}
	}
	// The −3 dB frequency: a sine at f through the filter settles to 1/√2
	// of its amplitude (the same textbook).
	sine := make([]float64, 40000)
	for j := range sine {
		sine[j] = math.Sin(2 * math.Pi * f * float64(j) * h / 10)
	}
	filter(sine, h/10, tau, 0)
	peak := 0.0
	for _, v := range sine[len(sine)/2:] {
		peak = math.Max(peak, v)
	}
	if math.Abs(peak-1/math.Sqrt2) > 1e-4 {
		t.Errorf("amplitude at the −3 dB frequency %.6g, want %.6g", peak, 1/math.Sqrt2)
	}
}

// TestSenseNoiseRepeatable: the ADC readings' noise is seeded (the same
// seed and stream give identical readings, another seed others), has the
// stated rms (sample standard deviation of 20 000 readings within 3 %:
// its relative standard error is 1/√(2N) = 0.5 %, Gaussian sampling
// theory), and the readings are whole steps of the resolution.
func TestSenseNoiseRepeatable(t *testing.T) {
	t.Parallel()
	sc := SenseChain{SampleRate: 10e3, Resolution: 2.0 / 4096, Noise: 3e-3, Seed: 7}
	u := make([]float64, subSamples*20000+1)
	for j := range u {
		u[j] = 0.5
	}
	a, b := sc.Sense(u, 3), sc.Sense(u, 3)
	sc2 := sc
	sc2.Seed = 8
	c := sc2.Sense(u, 3)
	same, differ := true, 0
	sum, sum2 := 0.0, 0.0
	for k := range a {
		same = same && a[k] == b[k]
		if a[k] != c[k] {
			differ++
		}
		if q := a[k] / sc.Resolution; q != math.Round(q) {
			t.Fatalf("reading %d = %.9g A is not a whole number of steps", k, a[k])
		}
		sum += a[k]
		sum2 += a[k] * a[k]
	}
	n := float64(len(a))
	sd := math.Sqrt((sum2 - sum*sum/n) / (n - 1))
	if !same || differ < len(a)/2 {
		t.Errorf("same seed identical: %v; readings that differ with another seed: %d of %d", same, differ, len(a))
	}
	// Quantisation adds q²/12 to the variance (Bennett 1948).
	want := math.Sqrt(sc.Noise*sc.Noise + sc.Resolution*sc.Resolution/12)
	if math.Abs(sd/want-1) > 0.03 {
		t.Errorf("noise rms %.4g A, want %.4g A", sd, want)
	}
}

// signatureCornersModel is the door-strike demo with a hot winding of
// 70 degC, so that every one of its 16 corners pulls in (demo data).
func signatureCornersModel(t testing.TB) *Model {
	t.Helper()
	src, err := os.ReadFile("scenarios/door-strike-duty.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), "hot winding: 100 degC", "hot winding: 70 degC", 1)
	path := filepath.Join(t.TempDir(), "strike.yaml")
	if err := os.WriteFile(path, []byte(text), 0o600); err != nil {
		t.Fatal(err)
	}
	md, err := LoadModel(path)
	if err != nil {
		t.Fatal(err)
	}
	return md
}

// TestSignatureDetection: with the recommended settings the seat is
// detected at every corner, within the stated window, and nothing on the
// blocked plunger at any corner; the blocked plunger never moves; the dip's
// minimum lies at the seat within the filter's delay (about τ) and one
// reading: the current's fall ends where the back-EMF i·(dL/dx)·v ends
// (Fitzgerald & Kingsley ch. 3).
func TestSignatureDetection(t *testing.T) {
	t.Parallel()
	md := signatureCornersModel(t)
	sig, err := EndOfStroke(md, *md.Sense)
	if err != nil {
		t.Fatal(err)
	}
	d := sig.Detection
	if !d.Found || len(sig.Points) != 17 || sig.NominalOnly {
		t.Fatalf("detection %+v over %d points", d, len(sig.Points))
	}
	dt := 1 / md.Sense.SampleRate
	tau := 1 / (2 * math.Pi * md.Sense.Bandwidth)
	for _, p := range sig.Points {
		m, b := p.Moving, p.Blocked
		if !m.Detected || m.DetectTime < d.From || m.DetectTime > d.To {
			t.Errorf("%s: detected %v at %.4g ms, want within %.4g to %.4g ms", p.Corner.Label, m.Detected, 1e3*m.DetectTime, 1e3*d.From, 1e3*d.To)
		}
		// The detector applied again, independently of the study's flags.
		if _, hit := Detect(b.Samples, dt, d.Threshold, d.From, d.To); hit || b.Detected || b.PulledIn {
			t.Errorf("%s: blocked plunger detected %v (pulled in %v)", p.Corner.Label, hit, b.PulledIn)
		}
		if off := m.Dip.MinTime - m.PullIn; off < -dt || off > 3*tau+dt {
			t.Errorf("%s: dip minimum %.4g ms against the seat %.4g ms", p.Corner.Label, 1e3*m.Dip.MinTime, 1e3*m.PullIn)
		}
		if !(m.Margin > 10) {
			t.Errorf("%s: margin %.3g", p.Corner.Label, m.Margin)
		}
	}
	if sig.Failed() {
		t.Errorf("requirement failures without a requirement: %v", sig.Failures)
	}
}

// TestSignatureChopped: the peak-and-hold demo's peak (1.5 A) comes after
// the seat: not regulated, not masked. With a 1 A peak the regulation
// starts before the seat, and the switch-on pulses' rise slope falls after
// it: (V − R·i − i·(dL/dx)·v)/L(x) before against (V − R·i)/L(x_seated)
// after, L rising as the gap closes (Faraday's law, Fitzgerald & Kingsley
// ch. 3).
func TestSignatureChopped(t *testing.T) {
	t.Parallel()
	sc := SenseChain{Bandwidth: 2000, SampleRate: 10e3, Resolution: 2.0 / 4096, Noise: 3e-3, Seed: 1}
	md, err := LoadModel("scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	sig, err := EndOfStroke(md, sc)
	if err != nil {
		t.Fatal(err)
	}
	nom := sig.Points[0].Moving
	if cs := sig.Chop; cs == nil || cs.Regulated || cs.Masked || !(cs.FirstOff > nom.PullIn) || !sig.Detection.Found {
		t.Errorf("1.5 A peak: chop %+v, seat %.4g ms, detection %v", cs, 1e3*nom.PullIn, sig.Detection.Found)
	}
	md.Control.PeakCurrent = 1
	sig, err = EndOfStroke(md, sc)
	if err != nil {
		t.Fatal(err)
	}
	cs := sig.Chop
	if cs == nil || !cs.Regulated || !(cs.FirstOff < sig.Points[0].Moving.PullIn) {
		t.Fatalf("1 A peak: chop %+v, seat %.4g ms", cs, 1e3*sig.Points[0].Moving.PullIn)
	}
	if cs.Before.Cycles < 5 || cs.After.Cycles < 5 || !(cs.After.RiseSlope < 0.8*cs.Before.RiseSlope) {
		t.Errorf("1 A peak: rise slope %.4g A/s before (%d pulses), %.4g A/s after (%d pulses)",
			cs.Before.RiseSlope, cs.Before.Cycles, cs.After.RiseSlope, cs.After.Cycles)
	}
	// Seated (v = 0), a switch-on pulse rises at (V − (R + Ron)·i)/L_seated
	// at the 1 A peak (Faraday's law; the 470 µF bulk capacitor sags a
	// little, hence 3 %).
	if want := (24 - (12+0.04)*1) / 0.06; math.Abs(cs.After.RiseSlope/want-1) > 0.03 {
		t.Errorf("1 A peak: rise slope after the seat %.4g A/s, want %.4g A/s within 3 %%", cs.After.RiseSlope, want)
	}
	// The masking verdict follows its rule.
	nomP := sig.Points[0]
	if want := !(nomP.Moving.Dip.Depth-nomP.Blocked.Dip.Depth > 2*sig.Detection.NoiseAllowance); cs.Masked != want {
		t.Errorf("masked %v, want %v (dip %.4g A, blocked fall %.4g A)", cs.Masked, want, nomP.Moving.Dip.Depth, nomP.Blocked.Dip.Depth)
	}
}

// TestSignatureRequirement: a required margin above every point's fails
// (exit status 2 in the CLI), one below passes; a noise-free chain
// without quantisation has no margin.
func TestSignatureRequirement(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	sc := SenseChain{Bandwidth: 2000, SampleRate: 10e3, Noise: 3e-3, Seed: 1, MinMargin: 1000}
	sig, err := EndOfStroke(md, sc)
	if err != nil {
		t.Fatal(err)
	}
	if !sig.Failed() || !sig.NominalOnly {
		t.Errorf("margin %.3g against 1000 required: failures %v", sig.Points[0].Moving.Margin, sig.Failures)
	}
	sc.MinMargin = 5
	if sig, err = EndOfStroke(md, sc); err != nil || sig.Failed() {
		t.Errorf("margin %.3g against 5 required: failures %v, %v", sig.Points[0].Moving.Margin, sig.Failures, err)
	}
	sc.Noise = 0
	if sig, err = EndOfStroke(md, sc); err != nil || sig.NoiseRMS != 0 || sig.Points[0].Moving.Margin != 0 || !sig.Detection.Found {
		t.Errorf("no noise: rms %g, margin %g, found %v, %v", sig.NoiseRMS, sig.Points[0].Moving.Margin, sig.Detection.Found, err)
	}
}

// BenchmarkSignature32Corners: the door-strike demo with a load and five
// tolerance axes, 32 corners (and the nominal point), free and blocked.
func BenchmarkSignature32Corners(b *testing.B) {
	md := signatureCornersModel(b)
	md.Tolerances.Load = 0.2
	md.Plunger.Load = mech.ConstantLoad(0.3)
	if n := len(corners(md, md.Tolerances)); n != 32 {
		b.Fatalf("%d corners", n)
	}
	steps := 0
	for b.Loop() {
		sig, err := EndOfStroke(md, *md.Sense)
		if err != nil {
			b.Fatal(err)
		}
		steps = sig.Steps()
	}
	b.ReportMetric(float64(steps), "steps")
}
