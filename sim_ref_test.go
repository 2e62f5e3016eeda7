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
