package coilkick

import (
	"math"
	"testing"

	"coilkick/circuit"
	"coilkick/magnet"
	"coilkick/mech"
)

// fixedModel returns a model whose plunger cannot move (the spring preload
// far exceeds any pull), so the coil is a plain RL load of inductance
// lOpen (H) and resistance r (ohm). Reference data for closed forms, not
// a product.
func fixedModel(t *testing.T, v0, r, lOpen float64, sup circuit.Suppressor) *Model {
	t.Helper()
	const xMin, xMax = 0.1e-3, 1e-3
	gl, err := magnet.NewGapLaw(2*lOpen, lOpen, xMin, xMax)
	if err != nil {
		t.Fatal(err)
	}
	return &Model{
		Name:        "fixed plunger",
		Coil:        magnet.Coil{Resistance: r, RefTemperature: 293.15, TempCoeff: magnet.CopperTempCoeff},
		Temperature: 293.15,
		Magnet:      gl,
		Plunger: mech.Plunger{Mass: 0.01, GapMin: xMin, GapMax: xMax, Spring: mech.Spring{Preload: 1e6},
			StickSpeed: 0.01},
		Drive: circuit.Drive{
			Supply:     circuit.Supply{Voltage: v0},
			Switch:     circuit.Switch{BreakdownVoltage: 1000, BodyDiodeDrop: 0.7},
			Suppressor: sup,
		},
		Timing: TimingSpec{EnergizeAt: 0, DeenergizeAt: 0.025, End: 0.05},
	}
}

func TestRLStepResponse(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 48.0, 0.1
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	// source: first-order RL step response i(t) = (V/R)(1 − e^(−tR/L)),
	// any circuits textbook (e.g. Hayt & Kemmerly, Engineering Circuit
	// Analysis, ch. 8).
	const relTol = 1e-6
	worst := 0.0
	n := 0
	for k, tt := range res.Trace.Time {
		if tt <= 0 || tt >= md.Timing.DeenergizeAt {
			continue
		}
		want := v0 / r * (1 - math.Exp(-tt*r/l))
		got := res.Trace.Current[k]
		if e := math.Abs(got-want) / want; e > worst {
			worst = e
		}
		n++
	}
	if n < 10 || worst > relTol {
		t.Errorf("RL step: worst relative error %.3g over %d samples, want <= %g", worst, n, relTol)
	}
	t.Logf("RL step: worst relative error %.3g over %d samples; stats %+v", worst, n, res.Stats)
}

func TestDecayClosedForms(t *testing.T) {
	t.Parallel()
	const v0, r, l = 24.0, 48.0, 0.1
	i0 := v0 / r * (1 - math.Exp(-0.025*r/l))
	cases := []struct {
		name string
		sup  circuit.Suppressor
		vEff float64 // effective voltage driving the decay
	}{
		// source: decay through a freewheel diode with constant drop,
		// t0 = (L/R)·ln(1 + I0·R/Vf) (first-order circuit theory).
		{"freewheel", circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7}, 0.7},
		// source: clamp across the coil, same form with Vcl.
		{"diode zener", circuit.Suppressor{Kind: circuit.DiodeZener, Voltage: 0.7 + 33}, 33.7},
		{"tvs", circuit.Suppressor{Kind: circuit.TVS, Voltage: 36}, 36},
		// source: clamp across the switch, same form with Vcl − Vs.
		{"switch clamp", circuit.Suppressor{Kind: circuit.SwitchClamp, Voltage: 60}, 60 - v0},
		// no suppression: the switch avalanches at its breakdown, Vbr − Vs.
		{"avalanche", circuit.Suppressor{Kind: circuit.None}, 1000 - v0},
	}
	for _, c := range cases {
		c := c
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			md := fixedModel(t, v0, r, l, c.sup)
			res, err := Simulate(md, nil)
			if err != nil {
				t.Fatal(err)
			}
			m := res.Metrics
			want := l / r * math.Log(1+i0*r/c.vEff)
			if !m.ClampConduction.Happened {
				t.Fatalf("clamp never stopped conducting; events %v", res.Events)
			}
			if e := math.Abs(m.ClampConduction.Seconds-want) / want; e > 1e-6 {
				t.Errorf("decay time %.9g s, want %.9g s (rel err %.2g)", m.ClampConduction.Seconds, want, e)
			}
			if e := math.Abs(m.CurrentAtTurnOff-i0) / i0; e > 1e-6 {
				t.Errorf("turn-off current %.9g A, want %.9g A", m.CurrentAtTurnOff, i0)
			}
			t.Logf("%s: decay %.6g s (want %.6g), residual %.2g, stats %+v", c.name, m.ClampConduction.Seconds, want, m.EnergyResidualRel(), res.Stats)
		})
	}
}

func TestClampEnergy(t *testing.T) {
	t.Parallel()
	// A coil with almost no resistance, switched off after a short linear
	// ramp, so that the R → 0 limit applies.
	const v0, l, r = 24.0, 0.1, 1e-4
	for _, c := range []struct {
		name      string
		sup       circuit.Suppressor
		vcl, vOff float64 // clamp voltage and the part of it the supply offsets
		fromAval  bool
	}{
		{"switch clamp", circuit.Suppressor{Kind: circuit.SwitchClamp, Voltage: 60}, 60, v0, false},
		{"avalanche", circuit.Suppressor{Kind: circuit.None}, 1000, v0, true},
		{"coil tvs", circuit.Suppressor{Kind: circuit.TVS, Voltage: 36}, 36, 0, false},
	} {
		md := fixedModel(t, v0, r, l, c.sup)
		md.Timing = TimingSpec{EnergizeAt: 0, DeenergizeAt: 2e-3, End: 0.02}
		res, err := Simulate(md, nil)
		if err != nil {
			t.Fatal(err)
		}
		m := res.Metrics
		i0 := m.CurrentAtTurnOff
		e := m.ClampEnergy
		if c.fromAval {
			e = m.AvalancheEnergy
		}
		d := c.vcl - c.vOff
		// source: integrating Vcl·i(t) over the first-order decay
		// i(t) = (I0 + d/R)e^(−tR/L) − d/R gives
		// E = Vcl·(L/R)·[I0 − (d/R)·ln(1 + R·I0/d)] (first-order circuit theory).
		exact := c.vcl * l / r * (i0 - d/r*math.Log1p(r*i0/d))
		// source: R → 0 limit, E = ½·L·I0²·Vcl/(Vcl − Vs), as in power-MOSFET
		// unclamped inductive switching (avalanche) literature.
		limit := 0.5 * l * i0 * i0 * c.vcl / d
		if rel := math.Abs(e-exact) / exact; rel > 1e-6 {
			t.Errorf("%s: clamp energy %.9g J, want %.9g J (rel %.2g)", c.name, e, exact, rel)
		}
		if rel := math.Abs(e-limit) / limit; rel > 1e-4 {
			t.Errorf("%s: clamp energy %.9g J, R→0 limit %.9g J (rel %.2g)", c.name, e, limit, rel)
		}
	}
}

func TestSnubberRLCResponse(t *testing.T) {
	t.Parallel()
	const v0, r, l, rs, cs = 24.0, 48.0, 0.1, 100.0, 100e-9
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Snubber, Resistance: rs, Capacitance: cs})
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Stats.StiffSteps != res.Stats.Steps {
		t.Errorf("a snubber model should be integrated as stiff throughout: %d of %d steps implicit", res.Stats.StiffSteps, res.Stats.Steps)
	}
	tOff := md.Timing.DeenergizeAt
	i0 := res.Metrics.CurrentAtTurnOff
	vs0 := r * i0 // snubber capacitor charged to the coil's DC voltage
	// source: natural response of a series RLC loop,
	// i'' + (R/L) i' + i/(LC) = 0, i(0) = I0, L·i'(0) = vC(0) − R·I0:
	// i = e^(−αt)(I0 cos ωd t + B sin ωd t), α = R/2L, ωd = √(1/LC − α²),
	// B = (i'(0) + α I0)/ωd (any circuits textbook, e.g. Hayt & Kemmerly ch. 9).
	rt := r + rs
	alpha := rt / (2 * l)
	wd := math.Sqrt(1/(l*cs) - alpha*alpha)
	b := ((vs0-rt*i0)/l + alpha*i0) / wd
	// The ring swings the switch node below ground after half a period,
	// where the switch's body diode takes over: compare up to then.
	tEnd := tOff + 3e-3
	for _, e := range res.Events {
		if e.Time > tOff && e.Time < tEnd {
			tEnd = e.Time
		}
	}
	// The run's own steps (the trace) and 50 instants between them (the
	// dense output, Options.SampleTimes) are compared.
	times := make([]float64, 50)
	for k := range times {
		times[k] = tOff + (tEnd-tOff)*(float64(k)+0.5)/float64(len(times))
	}
	sampled, err := Simulate(md, &Options{SampleTimes: times})
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-6 // of I0
	worst, n := 0.0, 0
	check := func(tt, got float64) {
		s := tt - tOff
		if s <= 0 || tt >= tEnd {
			return
		}
		want := math.Exp(-alpha*s) * (i0*math.Cos(wd*s) + b*math.Sin(wd*s))
		worst = math.Max(worst, math.Abs(got-want)/i0)
		n++
	}
	for k, tt := range res.Trace.Time {
		check(tt, res.Trace.Current[k])
	}
	for k, tt := range times {
		check(tt, sampled.Samples[k])
	}
	if n < 60 || worst > tol {
		t.Errorf("snubber RLC ring: worst error %.3g of I0 over %d samples, want <= %g", worst, n, tol)
	}
	if r := res.Metrics.EnergyResidualRel(); r > 1e-4 {
		t.Errorf("snubber energy residual %.3g", r)
	}
	t.Logf("snubber: worst %.3g of I0 over %d samples; %+v", worst, n, res.Stats)
}

func TestEddyTurnStepResponse(t *testing.T) {
	t.Parallel()
	const v0, r, l, re = 24.0, 48.0, 0.1, 200.0
	md := fixedModel(t, v0, r, l, circuit.Suppressor{Kind: circuit.Freewheel, Voltage: 0.7})
	md.EddyResistance = re
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	// source: a coil perfectly coupled to a shorted turn of resistance Re
	// (an ideal transformer with a resistive secondary; first-order circuit
	// theory): the magnetizing current rises as im = (V/R)(1 − e^(−t/τ)) with
	// τ = (L/R)(1 + R/Re), and the coil current is i = (V + Re·im)/(Re + R),
	// which jumps to V/(R + Re) at switch-on.
	tau := l / r * (1 + r/re)
	worst, n := 0.0, 0
	for k, tt := range res.Trace.Time {
		if tt <= 0 || tt >= md.Timing.DeenergizeAt {
			continue
		}
		im := v0 / r * (1 - math.Exp(-tt/tau))
		want := (v0 + re*im) / (re + r)
		worst = math.Max(worst, math.Abs(res.Trace.Current[k]-want)/want)
		n++
	}
	if n < 10 || worst > 1e-6 {
		t.Errorf("eddy step: worst relative error %.3g over %d samples, want <= 1e-6", worst, n)
	}
	m := res.Metrics
	if !(m.EddyLoss > 0) || m.EnergyResidualRel() > 1e-6 {
		t.Errorf("eddy loss %g J, residual %.3g", m.EddyLoss, m.EnergyResidualRel())
	}
}
