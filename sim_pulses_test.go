package coilkick

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

const pulsesDemo = "scenarios/latching-valve-9v-release.yaml"

// drive.mode pulses is the H-bridge's latch and release pulses written in
// the drive section: the same run as the constant drive with the
// suppression section's delayed reverse pulse, figure for figure.
func TestPulsesDriveSameAsReversePulse(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile(pulsesDemo)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	for _, old := range []string{"drive:\n  mode: pulses\n", "  latch pulse: 20 ms", "  release at: 221 ms", "  release pulse: 5 ms"} {
		if !strings.Contains(text, old) {
			t.Fatalf("the demo lacks %q", old)
		}
	}
	// The same drive in the older form: a constant drive de-energized at
	// the latch pulse's end, the reverse pulse 200 ms after it.
	cut := text[strings.Index(text, "drive:\n"):strings.Index(text, "suppression:\n")]
	old := strings.Replace(text, cut, "", 1)
	old = strings.Replace(old, "  forward drop: 0.7 V\n", "  forward drop: 0.7 V\n  reverse pulse: 5 ms\n  reverse pulse delay: 200 ms\n", 1)
	old = strings.Replace(old, "  end: 300 ms", "  de-energize at: 21 ms\n  end: 300 ms", 1)
	mdOld := modelFromText(t, old, "old.yaml")
	md, err := LoadModel(pulsesDemo)
	if err != nil {
		t.Fatal(err)
	}
	if md.Timing.DeenergizeAt != 21e-3 || md.Control.ReversePulse != 5e-3 || math.Abs(md.Control.ReverseDelay-0.2) > 1e-15 {
		t.Errorf("pulses: de-energize %g s, reverse pulse %g s after %g s", md.Timing.DeenergizeAt, md.Control.ReversePulse, md.Control.ReverseDelay)
	}
	a, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Simulate(mdOld, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.Metrics != b.Metrics || a.Stats.Steps != b.Stats.Steps {
		t.Errorf("the two forms differ:\n%+v\n%+v", a.Metrics, b.Metrics)
	}
	// The events name the pulses as the scenario does.
	var what []string
	for _, e := range a.Events {
		what = append(what, e.What)
	}
	all := strings.Join(what, "\n")
	for _, w := range []string{"latch pulse starts (H-bridge, forward)", "latch pulse ends at", "release pulse starts (H-bridge, reverse)", "release pulse ends at"} {
		if !strings.Contains(all, w) {
			t.Errorf("events lack %q:\n%s", w, all)
		}
	}
	if md.DriveName() != "H-bridge pulses" || mdOld.DriveName() != "constant" {
		t.Errorf("drive names %q and %q", md.DriveName(), mdOld.DriveName())
	}
	// The release measured from the reverse pulse's start is the release
	// from de-energize less the delay (definitions, assess_metrics.go).
	m := a.Metrics
	if !m.ReverseStart.Happened || m.ReverseStart.Seconds != 0.221 || !m.ReleaseAfterReverse.Happened ||
		math.Abs(m.ReleaseAfterReverse.Seconds-(m.Release.Seconds-0.2)) > 1e-12 {
		t.Errorf("reverse start %+v, release %+v, after the start %+v", m.ReverseStart, m.Release, m.ReleaseAfterReverse)
	}
}

// A release pulse too short to release: the plunger leaves the seat and
// the magnet pulls it back after the pulse has ended. That is a failed
// release, not a re-latch (which happens while the pulse is still on).
func TestShortReleasePulsePulledBack(t *testing.T) {
	t.Parallel()
	md, err := LoadModel(pulsesDemo)
	if err != nil {
		t.Fatal(err)
	}
	md.Control.ReversePulse = 0.5e-3
	r, err := Simulate(md, &Options{NoTrace: true})
	if err != nil {
		t.Fatal(err)
	}
	m := r.Metrics
	if !m.Release.Happened || m.Drop.Happened || m.FinalGap != md.Plunger.GapMin {
		t.Fatalf("0.5 ms pulse: release %+v, drop %+v, final gap %g m", m.Release, m.Drop, m.FinalGap)
	}
	if m.Relatch.Happened {
		t.Errorf("pulled back after the pulse counted as a re-latch during it: %+v", m.Relatch)
	}
}

// Bad pulses are refused at their line, naming the field and the rule.
func TestPulsesBadInput(t *testing.T) {
	t.Parallel()
	good, err := os.ReadFile(pulsesDemo)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		old, new string
		want     []string
	}{
		{"  release at: 221 ms             # the coil open from 21 ms to here\n", "",
			[]string{"p.yaml:46:18: drive.release pulse", "needs drive.release at"}},
		{"release at: 221 ms", "release at: 15 ms", []string{"p.yaml:46:15: drive.release at", "before the latch pulse ends"}},
		{"release pulse: 5 ms", "release pulse: 90 ms", []string{"p.yaml:47:18: drive.release pulse", "timing.end"}},
		{"  end: 300 ms", "  de-energize at: 21 ms\n  end: 300 ms", []string{"p.yaml:53:19: timing.de-energize at", "remove this key"}},
		{"  forward drop: 0.7 V\n", "  forward drop: 0.7 V\n  reverse pulse: 5 ms\n", []string{"drive.release pulse", "given twice"}},
		{"  type: reverse drive ", "  type: freewheel diode ", []string{"drive.release pulse", "reverse drive"}},
		{"latch pulse: 20 ms", "latch pulse: 20 V", []string{"p.yaml:45:16: drive.latch pulse", "time"}},
		{"  mode: pulses\n", "  mode: constant\n", []string{"drive.latch pulse", "does not apply to drive mode \"constant\""}},
	} {
		if !strings.Contains(string(good), c.old) {
			t.Fatalf("the demo lacks %q", c.old)
		}
		bad := strings.Replace(string(good), c.old, c.new, 1)
		s, err := Parse([]byte(bad), "p.yaml")
		if err == nil {
			_, err = Build(s)
		}
		errorHas(t, fmt.Sprintf("%q", c.new), err, c.want)
	}
}
