package coilkick

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestRandomDesignsNoNaN simulates random variations of the demos (supply,
// resistance, spring, mass, restitution, timing): every run either fails
// with an error or gives finite figures; none panics.
func TestRandomDesignsNoNaN(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(42, 7))
	files := demoScenarios(t)
	for n := 0; n < 60; n++ {
		f := files[n%len(files)]
		md, err := LoadModel(f)
		if err != nil {
			t.Fatal(err)
		}
		if strings.Contains(f, "peak-hold") || strings.Contains(f, "door-latch") {
			md.Timing = TimingSpec{EnergizeAt: 0.001, DeenergizeAt: 0.06, End: 0.08} // keep the test short
		}
		k := func() float64 { return math.Exp(rng.NormFloat64() * 0.4) }
		md.Coil.Resistance *= k()
		md.Plunger.Spring.Preload *= k()
		md.Plunger.Mass *= k()
		md.Plunger.Restitution = rng.Float64() * 0.8
		opt := &Options{NoTrace: true, MaxSteps: 400000, SupplyVoltage: md.Drive.Supply.Voltage * (0.5 + rng.Float64())}
		if opt.SupplyVoltage >= md.Drive.Switch.BreakdownVoltage {
			opt.SupplyVoltage = 0.9 * md.Drive.Switch.BreakdownVoltage
		}
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("%s variation %d panicked: %v", f, n, r)
				}
			}()
			res, err := Simulate(md, opt)
			if err != nil {
				if err.Error() == "" {
					t.Errorf("%s variation %d: empty error", f, n)
				}
				return
			}
			// Every figure must be finite: marshal the metrics and look.
			b, err := json.Marshal(res.Metrics)
			if err != nil {
				t.Errorf("%s variation %d: metrics do not marshal (a NaN or Inf?): %v", f, n, err)
			}
			if strings.Contains(string(b), "NaN") || strings.Contains(string(b), "Inf") {
				t.Errorf("%s variation %d: non-finite figure in %s", f, n, b)
			}
			if r := res.Metrics.EnergyResidualRel(); r > 1e-3 {
				t.Errorf("%s variation %d: energy residual %.3g", f, n, r)
			}
		}()
	}
}
