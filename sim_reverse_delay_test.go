package coilkick

import (
	"math"
	"os"
	"reflect"
	"strings"
	"testing"
)

// bridgeModel builds scenarios/door-latch-bridge.yaml with extra lines
// added to its suppression section.
func bridgeModel(t *testing.T, extra string) *Model {
	t.Helper()
	src, err := os.ReadFile("scenarios/door-latch-bridge.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), "  reverse pulse: 1 ms\n", "  reverse pulse: 1 ms\n"+extra, 1)
	if extra != "" && text == string(src) {
		t.Fatal("door-latch-bridge.yaml no longer has its reverse pulse line")
	}
	return modelFromText(t, text, "door-latch-bridge.yaml")
}

// eventTime returns the time of the first event whose text starts with
// prefix (NaN: none).
func eventTime(res *Result, prefix string) float64 {
	for _, e := range res.Events {
		if strings.HasPrefix(e.What, prefix) {
			return e.Time
		}
	}
	return math.NaN()
}

// TestReversePulseDelay: with suppression.reverse pulse delay the reverse
// pulse starts exactly at de-energize + delay and lasts the reverse pulse
// (source: the key's definition; both are time events the integrator
// lands on, so only rounding of the sums remains).
func TestReversePulseDelay(t *testing.T) {
	t.Parallel()
	md := bridgeModel(t, "  reverse pulse delay: 30 ms\n")
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	const tOff, delay, pulse = 0.2, 0.03, 0.001
	for _, c := range []struct {
		what string
		want float64
	}{{"reverse pulse starts", tOff + delay}, {"reverse pulse ends", tOff + delay + pulse}} {
		if got := eventTime(res, c.what); !(math.Abs(got-c.want) <= 1e-12) {
			t.Errorf("%s at %.15g s, want %.15g s", c.what, got, c.want)
		}
	}
	// The switch node's ring is followed through the delay (never retired
	// to its energy before the pulse), and the balance closes.
	if res.Metrics.RingRetired.Happened && res.Metrics.RingRetired.Seconds < delay {
		t.Errorf("the ring was retired %.4g s after de-energize, before the reverse pulse", res.Metrics.RingRetired.Seconds)
	}
	if r := res.Metrics.EnergyResidualRel(); !(r < 1e-6) {
		t.Errorf("energy residual %.3g of the largest flow, want < 1e-6", r)
	}
	// Before the delay the bridge diodes return the turn-off current.
	if got := eventTime(res, "conduction through the bridge diodes ends"); !(got > tOff && got < tOff+delay) {
		t.Errorf("the bridge diodes stop conducting at %.6g s, want within the delay", got)
	}
}

// TestReversePulseDelayZeroUnchanged: a delay of 0 s is the reverse drive
// as it was before the key: the run with the key equals the run without
// it bit for bit, and both agree with figures printed (%.17g) by the code
// of commit ef7a613, before the key existed — within 1e-9 relative, since
// the integrator has changed since (Rodas5P in place of RODAS4, the load's
// breaks landed on); the energy residual, an integration error, within
// 1e-7 J of it (1e-6 of the 41 mJ returned).
func TestReversePulseDelayZeroUnchanged(t *testing.T) {
	t.Parallel()
	a, err := Simulate(bridgeModel(t, ""), nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Simulate(bridgeModel(t, "  reverse pulse delay: 0 s\n"), nil)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(a.Metrics, b.Metrics) || !reflect.DeepEqual(a.Events, b.Events) {
		t.Errorf("a zero delay changed the run:\n%+v\n%+v", a.Metrics, b.Metrics)
	}
	m := b.Metrics
	got := []float64{m.Release.Seconds, m.Drop.Seconds, m.ClampConduction.Seconds, m.EnergyReturned, float64(len(b.Events))}
	want := []float64{0.0027657463134013183, 0.012353228953940254, 0.0039307874627025619, 0.041050134252921262, 14}
	for k := range got {
		if !(math.Abs(got[k]-want[k]) <= 1e-9*math.Abs(want[k])) {
			t.Errorf("release, drop, clamp conduction, returned energy, events = %.17g, want %.17g (before the key)", got, want)
			break
		}
	}
	if r := m.EnergyResidual; !(math.Abs(r-(-1.1085193030169194e-07)) <= 1e-7) {
		t.Errorf("energy residual %.3g J, before the key -1.11e-07 J", r)
	}
}

// TestLatchReleaseDemo: the latching valve latches, is held with no
// current through the delay, and the reverse pulse releases it; the
// energy balance closes (source: conservation of energy, the first law).
func TestLatchReleaseDemo(t *testing.T) {
	t.Parallel()
	md, err := LoadModel("scenarios/latching-valve-9v-release.yaml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := res.Metrics
	delay, pulse := md.Control.ReverseDelay, md.Control.ReversePulse
	if !m.PullIn.Happened || !m.Release.Happened || !(m.Release.Seconds > delay && m.Release.Seconds < delay+pulse) {
		t.Errorf("pull-in %+v, release %+v: want a release during the reverse pulse (%g s after de-energize, %g s long)",
			m.PullIn, m.Release, delay, pulse)
	}
	if r := m.EnergyResidualRel(); !(r < 1e-6) {
		t.Errorf("energy residual %.3g of the largest flow, want < 1e-6", r)
	}
}
