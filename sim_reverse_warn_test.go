package coilkick

import (
	"os"
	"regexp"
	"strings"
	"testing"
)

// releaseDemo runs scenarios/latching-valve-9v-release.yaml edited by the
// replacements old → new (each must match) and assesses it.
func releaseDemo(t *testing.T, edits ...string) (*Result, Assessment) {
	t.Helper()
	src, err := os.ReadFile("scenarios/latching-valve-9v-release.yaml")
	if err != nil {
		t.Fatal(err)
	}
	text := string(src)
	for k := 0; k+1 < len(edits); k += 2 {
		re := regexp.MustCompile(edits[k])
		if !re.MatchString(text) {
			t.Fatalf("the demo no longer matches %q", edits[k])
		}
		text = re.ReplaceAllString(text, edits[k+1])
	}
	md := modelFromText(t, text, "latching-valve-9v-release.yaml")
	res, err := Simulate(md, nil)
	if err != nil {
		t.Fatal(err)
	}
	return res, md.Assess(res)
}

// warned returns the text of the first warning containing part ("" none).
func warned(a Assessment, part string) string {
	for _, n := range a.Notes {
		if n.Level == "warning" && strings.Contains(n.Text, part) {
			return n.Text
		}
	}
	return ""
}

// TestReverseWarnings: the demagnetising and re-latch warnings fire on
// cases built for them and not on the demo. Source: the gap law with a
// magnet, W' = ½·L_leak·i² + ½·(i + i_m)²/(a + b·x), the magnet as an
// equivalent winding (Fitzgerald & Kingsley, Electric Machinery, ch. 3, as
// in magnet/gaplaw.go): its pull is ∝ (i + i_m)², so a reverse current well past −i_m pulls the
// plunger in again; the demagnetising limit is the scenario's own.
func TestReverseWarnings(t *testing.T) {
	t.Parallel()
	const demag, relatch = "demagnetising current", "seated again"
	res, a := releaseDemo(t)
	if w := warned(a, demag) + warned(a, relatch); w != "" || res.Metrics.Relatch.Happened {
		t.Errorf("the demo is warned: %q (relatch %+v)", w, res.Metrics.Relatch)
	}
	if !(res.Metrics.LowestCurrent < -0.5) {
		t.Errorf("the demo's lowest current %.4g A, want its reverse pulse below -0.5 A", res.Metrics.LowestCurrent)
	}
	// The same valve on its freewheel diode never reverses its current.
	md, err := LoadModel("scenarios/latching-valve-9v.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if plain, err := Simulate(md, nil); err != nil || !(plain.Metrics.LowestCurrent > -1e-9) {
		t.Errorf("latching-valve-9v: lowest current %v (%v), want 0 (to roundoff)", plain.Metrics.LowestCurrent, err)
	}
	// The demo's reverse current (about −0.85 A) against a knee at 0.1 A.
	res, a = releaseDemo(t, `demagnetising current: 2 A`, `demagnetising current: 0.1 A`)
	if w := warned(a, demag); !strings.Contains(w, formatCurrent(res.Metrics.LowestCurrent)) {
		t.Errorf("a 0.1 A demagnetising current: warning %q, want one naming %.4g A", w, res.Metrics.LowestCurrent)
	}
	// A 60 ms reverse pulse from a stiff 9 V supply (no storage
	// capacitor) drives about −1.27 A, far past −i_m = −0.183 A.
	res, a = releaseDemo(t, `release pulse: 5 ms`, `release pulse: 60 ms`, `  storage capacitor:\n(    .*\n)+`, ``)
	rl := res.Metrics.Relatch
	if !rl.Happened || !(rl.Time > 0.221 && rl.Time < 0.281 && rl.Current < -0.183) {
		t.Fatalf("a 60 ms reverse pulse: relatch %+v, want a seat impact during the pulse (221 to 281 ms) past -0.183 A", rl)
	}
	if w := warned(a, relatch); !strings.Contains(w, formatDuration(rl.Time)) || !strings.Contains(w, formatCurrent(rl.Current)) {
		t.Errorf("re-latch warning %q, want the time %s and current %s", w, formatDuration(rl.Time), formatCurrent(rl.Current))
	}
}
