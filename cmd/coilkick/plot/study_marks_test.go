package plot

import (
	"bytes"
	"fmt"
	"html"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// svgPath is a stroked path of an SVG figure: its points and style.
type svgPath struct {
	pts    [][2]float64
	closed bool
	style  string
}

var (
	pathRE = regexp.MustCompile(`<path d="([^"]*)" style="([^"]*)"`)
	textRE = regexp.MustCompile(`(?s)<text [^>]*>(.*?)</text>`)
	cmdRE  = regexp.MustCompile(`([MLZ])([-0-9.e]+)?,?([-0-9.e]+)?`)
)

// renderSVG returns the figure's paths and texts.
func renderSVG(t *testing.T, f *Figure) (paths []svgPath, texts []string) {
	t.Helper()
	var b bytes.Buffer
	if err := f.WriteSVG(&b); err != nil {
		t.Fatal(err)
	}
	if err := wellFormed(b.Bytes()); err != nil {
		t.Fatalf("SVG is not well-formed: %v", err)
	}
	for _, m := range pathRE.FindAllStringSubmatch(b.String(), -1) {
		p := svgPath{style: m[2]}
		for _, c := range cmdRE.FindAllStringSubmatch(m[1], -1) {
			if c[1] == "Z" {
				p.closed = true
				continue
			}
			x, _ := strconv.ParseFloat(c[2], 64)
			y, _ := strconv.ParseFloat(c[3], 64)
			p.pts = append(p.pts, [2]float64{x, y})
		}
		paths = append(paths, p)
	}
	for _, m := range textRE.FindAllStringSubmatch(b.String(), -1) {
		texts = append(texts, html.UnescapeString(m[1]))
	}
	return paths, texts
}

// stroke is the SVG style of a stroke in colour r, g, b (vgsvg writes
// #RRGGBB).
func stroke(r, g, b uint8) string { return fmt.Sprintf("stroke:#%02X%02X%02X", r, g, b) }

var (
	limitStroke  = stroke(colLimit.R, colLimit.G, colLimit.B)
	failedStroke = stroke(colFailed.R, colFailed.G, colFailed.B)
)

// straight counts the dashed limit-coloured two-point paths that run
// horizontally (same y) or vertically (same x) over at least span pt: the
// reference lines across the plot (the legend's samples are 16 pt).
func straight(paths []svgPath, span float64) (horizontal, vertical []float64) {
	for _, p := range paths {
		if !strings.Contains(p.style, limitStroke) || !strings.Contains(p.style, "stroke-dasharray") || len(p.pts) != 2 {
			continue
		}
		a, b := p.pts[0], p.pts[1]
		switch {
		case a[1] == b[1] && math.Abs(b[0]-a[0]) >= span:
			horizontal = append(horizontal, a[1])
		case a[0] == b[0] && math.Abs(b[1]-a[1]) >= span:
			vertical = append(vertical, a[0])
		}
	}
	return horizontal, vertical
}

// crossStrokes counts the strokes of failed markers (two per ×).
func crossStrokes(paths []svgPath) int {
	n := 0
	for _, p := range paths {
		if strings.Contains(p.style, failedStroke) && len(p.pts) == 2 {
			n++
		}
	}
	return n
}

// triangles counts closed three-point outlines (no-value markers).
func triangles(paths []svgPath) int {
	n := 0
	for _, p := range paths {
		if p.closed && len(p.pts) == 3 && !strings.Contains(p.style, "fill:#") {
			n++
		}
	}
	return n
}

func hasText(texts []string, s string) bool {
	for _, t := range texts {
		if strings.Contains(t, s) {
			return true
		}
	}
	return false
}

// TestSweepLinesMarks: the limit is one dashed line across the plot with
// its legend entry; each failed point is a red × (plus the legend's);
// points without a value are triangles at the top; the legend names the
// series' key. Without failures there is no × and no failed entry.
func TestSweepLinesMarks(t *testing.T) {
	t.Parallel()
	nan := math.NaN()
	ch := SweepChart{
		Title: "pull-in", XLabel: "supply.voltage (V)", YLabel: "pull-in time (ms)",
		Xs:      []float64{10, 12, 14, 16},
		KeyName: "plunger.mass",
		Series: []StudySeries{
			{Label: "6 g", Ys: []float64{nan, 18, 9, 7}, Failed: []bool{true, false, false, false}},
			{Label: "12 g", Ys: []float64{nan, 25, 11, 8}, Failed: []bool{true, true, false, false}},
		},
		Limits:      []Reference{{Value: 20, Label: "limit: ratings.pull-in time 20 ms"}},
		FailedLabel: "point fails", MissingLabel: "no value",
	}
	paths, texts := renderSVG(t, SweepLines(ch))
	for _, want := range []string{"plunger.mass:", "6 g", "12 g", "limit: ratings.pull-in time 20 ms", "point fails", "no value"} {
		if !hasText(texts, want) {
			t.Errorf("no text %q in %q", want, texts)
		}
	}
	h, v := straight(paths, 300)
	if len(h) != 1 || len(v) != 0 {
		t.Errorf("limit lines across the plot: %d horizontal, %d vertical; want 1, 0", len(h), len(v))
	}
	// Three failed points (two without a value, one at 25 ms) and the
	// legend's ×: 4 × 2 strokes.
	if n := crossStrokes(paths); n != 8 {
		t.Errorf("%d failed-marker strokes, want 8 (3 points and the legend)", n)
	}
	// Two points without a value and the legend's triangle.
	if n := triangles(paths); n != 3 {
		t.Errorf("%d triangles, want 3", n)
	}
	checkFigure(t, "sweep lines", SweepLines(ch))

	ch.Series[0].Failed = nil
	ch.Series[1].Failed = nil
	ch.Series[0].Ys[0], ch.Series[1].Ys[0] = 20, 30
	paths, texts = renderSVG(t, SweepLines(ch))
	if n := crossStrokes(paths); n != 0 || hasText(texts, "point fails") {
		t.Errorf("no failed point, yet %d × strokes (legend entry %v)", n, hasText(texts, "point fails"))
	}
	if n := triangles(paths); n != 0 || hasText(texts, "no value") {
		t.Errorf("every point has a value, yet %d triangles (legend entry %v)", n, hasText(texts, "no value"))
	}
}

// TestSweepLinesLimitInRange: a limit far above the data still shows: the
// axis is widened to it.
func TestSweepLinesLimitInRange(t *testing.T) {
	t.Parallel()
	ch := SweepChart{Title: "t", XLabel: "x", YLabel: "y", Xs: []float64{1, 2, 3},
		Series: []StudySeries{{Label: "a", Ys: []float64{1, 2, 3}}},
		Limits: []Reference{{Value: 100, Label: "limit"}}}
	paths, _ := renderSVG(t, SweepLines(ch))
	if h, _ := straight(paths, 300); len(h) != 1 {
		t.Errorf("limit above the data not drawn: %d lines", len(h))
	}
}

// TestMarkedScatterMarks: the requirement horizontal and the rating
// vertical, failed points crossed, points without a value as triangles,
// and the notes in the legend.
func TestMarkedScatterMarks(t *testing.T) {
	t.Parallel()
	s := Scatter{Title: "options", XLabel: "peak switch voltage (V)", YLabel: "release time (ms)",
		Points: []ScatterPoint{{X: 25, Y: 7.4, Label: "freewheel diode", Failed: true}, {X: 45, Y: 2.9, Label: "20 V Zener (recommended)"},
			{X: 70, Y: math.NaN(), Label: "snubber", Failed: true}, {X: 30, Y: 2.6, Label: "reverse drive"}},
		Limits:     []Reference{{Value: 3, Label: "release requirement 3 ms"}, {Value: 80, Vertical: true, Label: "derated switch rating 80 V"}},
		PointLabel: "option", FailedLabel: "misses", MissingLabel: "no release", Notes: []string{"not simulated: TVS"}}
	paths, texts := renderSVG(t, MarkedScatter(s))
	for _, want := range []string{"release requirement 3 ms", "derated switch rating 80 V", "misses", "no release", "not simulated: TVS", "freewheel diode", "snubber"} {
		if !hasText(texts, want) {
			t.Errorf("no text %q in %q", want, texts)
		}
	}
	h, v := straight(paths, 200)
	if len(h) != 1 || len(v) != 1 {
		t.Errorf("reference lines: %d horizontal, %d vertical; want 1 and 1", len(h), len(v))
	}
	if n := crossStrokes(paths); n != 6 {
		t.Errorf("%d failed-marker strokes, want 6 (2 points and the legend)", n)
	}
	if n := triangles(paths); n != 2 {
		t.Errorf("%d triangles, want 2 (a point and the legend)", n)
	}
	checkFigure(t, "marked scatter", MarkedScatter(s))
	// Degenerate input must not panic.
	checkFigure(t, "empty scatter", MarkedScatter(Scatter{}))
	checkFigure(t, "empty sweep", SweepLines(SweepChart{}))
}
