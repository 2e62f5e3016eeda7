package plot

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"io"
	"math"
	"strings"
	"testing"

	"coilkick"
)

func TestMinMaxKeepsColumnExtremes(t *testing.T) {
	// A 20 kHz-like ripple over a slow ramp, 100 001 points, with one
	// isolated spike: every column's min and max must survive, and the
	// output must be bounded by 2·cols + 2.
	const n, cols = 100001, 500
	xs, ys := make([]float64, n), make([]float64, n)
	for k := range xs {
		xs[k] = float64(k) / (n - 1)
		ys[k] = xs[k] + 0.1*math.Sin(2*math.Pi*2000*xs[k])
	}
	ys[54321] = 7 // spike
	ox, oy := MinMax(xs, ys, 0, 1, cols)
	if len(ox) > 2*cols+2 || len(ox) != len(oy) {
		t.Fatalf("got %d points (%d ys), want at most %d", len(ox), len(oy), 2*cols+2)
	}
	if ox[0] != xs[0] || ox[len(ox)-1] != xs[n-1] {
		t.Errorf("first/last point not kept: %g, %g", ox[0], ox[len(ox)-1])
	}
	for k := 1; k < len(ox); k++ {
		if ox[k] < ox[k-1] {
			t.Fatalf("output not in time order at %d", k)
		}
	}
	// Reference extremes per column.
	lo := make([]float64, cols)
	hi := make([]float64, cols)
	for c := range lo {
		lo[c], hi[c] = math.Inf(1), math.Inf(-1)
	}
	col := func(x float64) int { return min(cols-1, int(math.Floor(x*cols))) }
	for k := range xs {
		c := col(xs[k])
		lo[c], hi[c] = math.Min(lo[c], ys[k]), math.Max(hi[c], ys[k])
	}
	gotLo := make([]float64, cols)
	gotHi := make([]float64, cols)
	for c := range gotLo {
		gotLo[c], gotHi[c] = math.Inf(1), math.Inf(-1)
	}
	for k := range ox {
		c := col(ox[k])
		gotLo[c], gotHi[c] = math.Min(gotLo[c], oy[k]), math.Max(gotHi[c], oy[k])
	}
	for c := range lo {
		if gotLo[c] != lo[c] || gotHi[c] != hi[c] {
			t.Fatalf("column %d: kept [%g, %g], want [%g, %g]", c, gotLo[c], gotHi[c], lo[c], hi[c])
		}
	}
	if _, h := extent(oy); h != 7 {
		t.Errorf("spike lost: max %g", h)
	}
}

func TestMinMaxShortSeriesUnchanged(t *testing.T) {
	xs := []float64{0, 1, 2, 3}
	ys := []float64{1, 3, 2, 4}
	ox, oy := MinMax(xs, ys, 0, 3, 10)
	if len(ox) != 4 || oy[1] != 3 {
		t.Errorf("short series changed: %v %v", ox, oy)
	}
	if ox, _ := MinMax(xs, ys, 10, 20, 1); len(ox) != 4 {
		// fits: returned as is even outside the range
		t.Errorf("got %v", ox)
	}
}

// checkFigure renders f as PNG and SVG and checks the image size and that
// the SVG is well-formed XML.
func checkFigure(t *testing.T, name string, f *Figure) {
	t.Helper()
	var pb bytes.Buffer
	if err := f.WritePNG(&pb); err != nil {
		t.Fatalf("%s: PNG: %v", name, err)
	}
	img, err := png.Decode(&pb)
	if err != nil {
		t.Fatalf("%s: PNG does not decode: %v", name, err)
	}
	w, h := f.PixelSize()
	if b := img.Bounds(); b.Dx() != w || b.Dy() != h {
		t.Errorf("%s: PNG %dx%d, want %dx%d", name, b.Dx(), b.Dy(), w, h)
	}
	var sb bytes.Buffer
	if err := f.WriteSVG(&sb); err != nil {
		t.Fatalf("%s: SVG: %v", name, err)
	}
	if err := wellFormed(sb.Bytes()); err != nil {
		t.Errorf("%s: SVG is not well-formed XML: %v", name, err)
	}
	if !strings.Contains(sb.String(), "@font-face") {
		t.Errorf("%s: SVG has no embedded font", name)
	}
}

func wellFormed(b []byte) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		_, err := d.Token()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
	}
}

func TestStudyFigures(t *testing.T) {
	var curves []coilkick.ForceCurve
	for _, i := range []float64{0.1, 0.2, 0.4} {
		fc := coilkick.ForceCurve{Current: i}
		for k := 0; k < 21; k++ {
			x := 0.05e-3 + 1.15e-3*float64(k)/20
			fc.Gap = append(fc.Gap, x)
			fc.Force = append(fc.Force, 1e-6*i*i/(x*x))
		}
		curves = append(curves, fc)
	}
	passive := make([]float64, 21)
	for k := range passive {
		passive[k] = 2 + 500*curves[0].Gap[k]
	}
	checkFigure(t, "force", ForceVsGap("pull <versus> gap & co", curves, passive))
	checkFigure(t, "lines", Lines("pull-in vs supply", "supply (V)", "pull-in time (ms)", []float64{18, 20, 22, 24},
		[]Series{{"20 °C", []float64{math.NaN(), 12, 10, 9}}, {"80 °C", []float64{math.NaN(), math.NaN(), 14, 11}}}))
	checkFigure(t, "scatter", LabelledScatter("suppression options", "release time (ms)", "peak switch voltage (V)",
		[]LabelledPoint{{12, 25, "freewheel diode"}, {3, 58, "diode + Zener 33 V"}, {2.9, 58.5, "TVS 36 V"}, {1, 90, "none"}}))
	hr := &coilkick.HeatResult{Ambient: 313.15, Limit: 428.15, Class: "F"}
	for k := 1; k <= 100; k++ {
		tk := float64(k) * 5
		hr.History = append(hr.History, coilkick.HeatPoint{Time: tk, Peak: 313.15 + 40*(1-math.Exp(-tk/100)) + 0.2, Valley: 313.15 + 40*(1-math.Exp(-tk/100))})
	}
	checkFigure(t, "heat", HeatHistory("heat", hr))
	// Degenerate inputs must not panic.
	checkFigure(t, "empty lines", Lines("", "x", "y", nil, nil))
	checkFigure(t, "flat", Lines("flat", "x", "y", []float64{1}, []Series{{"a", []float64{2}}}))
	checkFigure(t, "empty heat", HeatHistory("none", &coilkick.HeatResult{}))
}

func TestWaveformSyntheticChopping(t *testing.T) {
	// 100 000 points of chopping: the figure must be drawn from the reduced
	// series and the SVG stay small.
	const n = 100000
	tr := &coilkick.Trace{}
	for k := 0; k < n; k++ {
		tk := float64(k) * 1e-5
		sw := 24.0
		if math.Mod(tk*20e3, 1) < 0.4 {
			sw = 0
		}
		tr.Time = append(tr.Time, tk)
		tr.Current = append(tr.Current, 0.4+0.01*math.Sin(2*math.Pi*20e3*tk))
		tr.CoilVoltage = append(tr.CoilVoltage, 24-sw)
		tr.SwitchVoltage = append(tr.SwitchVoltage, sw)
		tr.Gap = append(tr.Gap, 0.05e-3)
		tr.MagneticForce = append(tr.MagneticForce, 10)
		tr.PassiveForce = append(tr.PassiveForce, 3)
	}
	ev := []coilkick.Event{{Time: 0.001, What: "energize (peak and hold drive)"}, {Time: 0.004, What: "leaves the rest stop"},
		{Time: 0.008, What: "seat impact at 0.3 m/s"}, {Time: 0.5, What: "de-energize at 0.4 A"}, {Time: 0.51, What: "leaves the seat"}}
	m := EventMarkers(ev)
	if len(m) != 5 {
		t.Fatalf("markers %v, want 5", m)
	}
	f := Waveform(tr, m, WaveformOptions{Title: "synthetic", Subtitle: "20 kHz"})
	checkFigure(t, "waveform", f)
	var sb bytes.Buffer
	if err := f.WriteSVG(&sb); err != nil {
		t.Fatal(err)
	}
	if sb.Len() > 3<<20 {
		t.Errorf("SVG is %d bytes: the trace was not reduced", sb.Len())
	}
}

func TestEventMarkersReleaseAfterDeenergize(t *testing.T) {
	e := func(t float64, what string) coilkick.Event { return coilkick.Event{Time: t, What: what} }
	ev := []coilkick.Event{e(0.001, "energize (constant drive)"), e(0.002, "leaves the rest stop"), e(0.005, "seat impact at 1 m/s"),
		e(0.006, "leaves the seat"), e(0.007, "seat impact at 0.2 m/s"), e(0.1, "de-energize at 0.3 A"), e(0.104, "leaves the seat")}
	var released, seated float64
	for _, m := range EventMarkers(ev) {
		switch m.Label {
		case "released":
			released = m.Time
		case "seated":
			seated = m.Time
		}
	}
	if released != 0.104 || seated != 0.005 {
		t.Errorf("released %g (want 0.104), seated %g (want 0.005)", released, seated)
	}
}

func TestWriteHTMLEscapesAndInlines(t *testing.T) {
	r := &Report{Title: `<script>alert("x")</script> & valve`, Source: "a<b>.yaml", Verdict: "ok",
		Groups:  []Group{{Name: "G", Rows: []Row{{Key: "k", Name: "n<", Value: "1 V", Checked: true, Pass: false, Requirement: "≤ 0"}}}},
		Notes:   []ReportNote{{Figure: "f", Level: "caution", Text: "hot <b>"}},
		Figures: []ReportFigure{{ID: "w", Heading: "h", Caption: "c", Figure: Lines("t&t", "x", "y", []float64{0, 1}, []Series{{"s", []float64{0, 1}}})}},
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, r); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	for _, bad := range []string{"<script>", "<b>", "<?xml", "a<b>"} {
		if strings.Contains(s, bad) {
			t.Errorf("report contains unescaped %q", bad)
		}
	}
	if strings.Count(s, "@font-face") != 1 || !strings.Contains(s, "<svg role=\"img\"") {
		t.Errorf("SVG not inlined with its font once")
	}
}

// TestWriteHTMLHeatNotesInSafetyBox: the heating study's notes are shown
// in the safety box with the run's, cautions first and highlighted, and
// the box is there even when the run itself has no note.
func TestWriteHTMLHeatNotesInSafetyBox(t *testing.T) {
	heat := &HeatSection{Intro: "study", Notes: []ReportNote{{Figure: "winding peak", Level: "caution", Text: "hot enough to burn"}}}
	for _, run := range [][]ReportNote{nil, {{Level: "info", Text: "model estimates"}}} {
		var b bytes.Buffer
		if err := WriteHTML(&b, &Report{Title: "t", Verdict: "ok", Notes: run, Heat: heat}); err != nil {
			t.Fatal(err)
		}
		s := b.String()
		a, z := strings.Index(s, `<section id="notes">`), strings.Index(s, `<section id="figures">`)
		if a < 0 || z < a {
			t.Fatalf("run notes %v: no safety box", run)
		}
		box := s[a:z]
		c := strings.Index(box, `<li class="caution"><span class="level">caution</span><span class="fig">winding peak: </span>hot enough to burn</li>`)
		if c < 0 {
			t.Errorf("run notes %v: heating caution not highlighted in the safety box:\n%s", run, box)
		}
		if i := strings.Index(box, `<li class="info">`); len(run) > 0 && (i < 0 || i < c) {
			t.Errorf("the run's info note missing or before the caution:\n%s", box)
		}
		if strings.Count(s, "hot enough to burn") != 1 {
			t.Errorf("the caution appears %d times", strings.Count(s, "hot enough to burn"))
		}
	}
}
