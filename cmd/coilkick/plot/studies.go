package plot

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"coilkick"
)

// Size of the single-plot study figures (points): 800 × 500 pixels at DPI.
var (
	StudyWidth  = vg.Inch * 8
	StudyHeight = vg.Inch * 5
)

// Series is one line of a family: a label and one y per x (NaN: no value,
// the line is broken there).
type Series struct {
	Label string
	Ys    []float64
}

// LabelledPoint is a point of a labelled scatter.
type LabelledPoint struct {
	X, Y  float64
	Label string
}

// ForceVsGap draws the magnetic pull versus air gap (mm) for each current
// of the family; passive, when not nil, is the spring + load at the same
// gaps as curves[0], drawn dashed for comparison.
func ForceVsGap(title string, curves []coilkick.ForceCurve, passive []float64) *Figure {
	p := newPlot("air gap (mm)", "magnetic pull (N)")
	addGrid(p)
	var keys []key
	lo, hi := math.Inf(1), math.Inf(-1)
	glo, ghi := math.Inf(1), math.Inf(-1)
	for k, fc := range curves {
		gap := scaled(fc.Gap, 1e3)
		l, h := extent(gap)
		glo, ghi = math.Min(glo, l), math.Max(ghi, h)
		l, h = extent(fc.Force)
		lo, hi = math.Min(lo, l), math.Max(hi, h)
		col := seriesColor(k)
		p.Add(linesOf(gap, fc.Force, col, 1.4, nil)...)
		keys = append(keys, key{label: fmt.Sprintf("%s A", strconv.FormatFloat(fc.Current, 'g', 3, 64)), color: col})
	}
	if len(passive) > 0 && len(curves) > 0 && len(passive) == len(curves[0].Gap) {
		l, h := extent(passive)
		lo, hi = math.Min(lo, l), math.Max(hi, h)
		dash := []vg.Length{vg.Points(5), vg.Points(3)}
		p.Add(linesOf(scaled(curves[0].Gap, 1e3), passive, ink, 1.2, dash)...)
		keys = append(keys, key{label: "spring + load", color: ink, dash: dash})
	}
	setRange(&p.X, glo, ghi, 0.02)
	setRange(&p.Y, math.Min(lo, 0), hi, 0.05)
	return single(title, StudyWidth, StudyHeight, p, keys)
}

// Lines draws one line per series against xs (a figure versus a swept
// value, one line per value of a second key).
func Lines(title, xLabel, yLabel string, xs []float64, series []Series) *Figure {
	p := newPlot(xLabel, yLabel)
	addGrid(p)
	var keys []key
	lo, hi := math.Inf(1), math.Inf(-1)
	for k, s := range series {
		n := min(len(xs), len(s.Ys))
		col := seriesColor(k)
		lx, ly := xs[:n], s.Ys[:n]
		if rising(lx) {
			// a long series (a measured trace, say): its envelope per pixel column
			x0, x1 := extent(lx)
			lx, ly = MinMax(lx, ly, x0, x1, int(StudyWidth.Dots(DPI)))
		}
		p.Add(linesOf(lx, ly, col, 1.4, nil)...)
		if n <= maxDots {
			p.Add(&dots{xs: xs[:n], ys: s.Ys[:n], color: col})
		}
		l, h := extent(s.Ys[:n])
		lo, hi = math.Min(lo, l), math.Max(hi, h)
		if s.Label != "" {
			keys = append(keys, key{label: s.Label, color: col})
		}
	}
	xlo, xhi := extent(xs)
	setRange(&p.X, xlo, xhi, 0.03)
	setRange(&p.Y, lo, hi, 0.08)
	return single(title, StudyWidth, StudyHeight, p, keys)
}

// LabelledScatter draws points with their labels beside them (release
// time against peak switch voltage for each suppression option, say).
func LabelledScatter(title, xLabel, yLabel string, pts []LabelledPoint) *Figure {
	p := newPlot(xLabel, yLabel)
	addGrid(p)
	xs, ys := make([]float64, len(pts)), make([]float64, len(pts))
	for k, pt := range pts {
		xs[k], ys[k] = pt.X, pt.Y
	}
	xlo, xhi := extent(xs)
	ylo, yhi := extent(ys)
	setRange(&p.X, xlo, xhi, 0.12)
	setRange(&p.Y, ylo, yhi, 0.12)
	p.Add(&dots{xs: xs, ys: ys, color: colCurrent, radius: 3.5})
	p.Add(&pointLabels{pts: pts, radius: 3.5})
	return single(title, StudyWidth, StudyHeight, p, nil)
}

// HeatHistory draws a duty-cycle heating study: the winding temperature
// (°C) at the end of each on-time (peak) and of each cycle (valley), the
// ambient, and the insulation class limit when one is given.
func HeatHistory(title string, r *coilkick.HeatResult) *Figure {
	end := 1.0
	if n := len(r.History); n > 0 {
		end = r.History[n-1].Time
	}
	f, unit := timeScale(end)
	ts := make([]float64, len(r.History))
	peak := make([]float64, len(r.History))
	valley := make([]float64, len(r.History))
	for k, h := range r.History {
		ts[k], peak[k], valley[k] = h.Time*f, h.Peak-273.15, h.Valley-273.15
	}
	p := newPlot("time ("+unit+")", "winding temperature (°C)")
	addGrid(p)
	amb := r.Ambient - 273.15
	lo, hi := extent(peak, valley, []float64{amb})
	keys := []key{{label: "peak (end of on-time)", color: colPull}, {label: "valley (end of cycle)", color: colCurrent}}
	p.Add(linesOf(ts, peak, colPull, 1.4, nil)...)
	p.Add(linesOf(ts, valley, colCurrent, 1.4, nil)...)
	x0, x1 := 0.0, end*f
	dotted := []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(linesOf([]float64{x0, x1}, []float64{amb, amb}, colAmbient, 1, dotted)...)
	keys = append(keys, key{label: fmt.Sprintf("ambient %.1f °C", amb), color: colAmbient, dash: dotted})
	if r.Limit > 0 {
		lim := r.Limit - 273.15
		dash := []vg.Length{vg.Points(6), vg.Points(3)}
		p.Add(linesOf([]float64{x0, x1}, []float64{lim, lim}, colLimit, 1.2, dash)...)
		keys = append(keys, key{label: fmt.Sprintf("class %s limit %.0f °C", r.Class, lim), color: colLimit, dash: dash})
		hi = math.Max(hi, lim)
	}
	setRange(&p.X, x0, x1, 0)
	setRange(&p.Y, lo, hi, 0.06)
	return single(title, StudyWidth, StudyHeight, p, keys)
}

// maxDots: series with more points than this are drawn without markers.
const maxDots = 60

// rising reports whether xs never decreases.
func rising(xs []float64) bool {
	for k := 1; k < len(xs); k++ {
		if !(xs[k] >= xs[k-1]) {
			return false
		}
	}
	return true
}

func scaled(v []float64, f float64) []float64 {
	out := make([]float64, len(v))
	for k := range v {
		out[k] = v[k] * f
	}
	return out
}

// dots draws filled circles at finite points.
type dots struct {
	xs, ys []float64
	color  color.Color
	radius float64
}

func (d *dots) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	r := d.radius
	if r == 0 {
		r = 2.2
	}
	sty := draw.GlyphStyle{Color: d.color, Radius: vg.Points(r), Shape: draw.CircleGlyph{}}
	for k := range d.xs {
		if math.IsNaN(d.ys[k]) || math.IsInf(d.ys[k], 0) || math.IsNaN(d.xs[k]) {
			continue
		}
		pt := vg.Point{X: trX(d.xs[k]), Y: trY(d.ys[k])}
		if c.Contains(pt) {
			c.DrawGlyph(sty, pt)
		}
	}
}

// pointLabels writes each point's label beside it (see placeLabels).
type pointLabels struct {
	pts    []LabelledPoint
	radius float64 // pt, of the dots (obstacles for the labels)
}

func (l *pointLabels) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := textStyle(sizeSmall, ink)
	sty.XAlign, sty.YAlign = draw.XLeft, draw.YBottom
	var at []vg.Point
	var sizes []vg.Point
	var labels []string
	for _, pt := range l.pts {
		if math.IsNaN(pt.X) || math.IsNaN(pt.Y) {
			continue
		}
		at = append(at, vg.Point{X: trX(pt.X), Y: trY(pt.Y)})
		sizes = append(sizes, vg.Point{X: sty.Width(pt.Label), Y: sty.Height(pt.Label)})
		labels = append(labels, pt.Label)
	}
	boxes := placeLabels(at, sizes, c.Rectangle, vg.Points(l.radius))
	leader := draw.LineStyle{Color: ink, Width: vg.Points(0.4)}
	for k, b := range boxes {
		if labels[k] == "" {
			continue
		}
		c.FillText(sty, b.Min, labels[k])
		if d := rectDistance(b, at[k]); d > 2*labelGap(vg.Points(l.radius)) {
			c.StrokeLine2(leader, at[k].X, at[k].Y, clampTo(at[k].X, b.Min.X, b.Max.X), clampTo(at[k].Y, b.Min.Y, b.Max.Y))
		}
	}
}

// labelGap is the distance between a dot's centre and its label (pt).
func labelGap(radius vg.Length) vg.Length { return radius + vg.Points(2.5) }

// placeLabels returns a box (lower-left corner and size) for the label of
// each point: the first of eight positions round the point (right, left,
// above, below, then the diagonals), at one, two or three gaps from it,
// that stays inside bounds and overlaps neither a label already placed
// nor any dot; when none is free, the position with the least overlap at
// the smallest distance. Empty labels (size 0) get a zero box.
func placeLabels(at, sizes []vg.Point, bounds vg.Rectangle, radius vg.Length) []vg.Rectangle {
	out := make([]vg.Rectangle, len(at))
	dots := make([]vg.Rectangle, len(at))
	for k, p := range at {
		dots[k] = vg.Rectangle{Min: vg.Point{X: p.X - radius, Y: p.Y - radius}, Max: vg.Point{X: p.X + radius, Y: p.Y + radius}}
	}
	var placed []vg.Rectangle
	gap := labelGap(radius)
	for k, p := range at {
		w, h := sizes[k].X, sizes[k].Y
		if w == 0 {
			continue
		}
		best, bestCost := vg.Rectangle{}, math.Inf(1)
		for ring := 1; ring <= 3 && bestCost > 0; ring++ {
			d := gap * vg.Length(ring)
			cands := [...]vg.Point{
				{X: p.X + d, Y: p.Y - h/2},         // right
				{X: p.X - d - w, Y: p.Y - h/2},     // left
				{X: p.X - w/2, Y: p.Y + d},         // above
				{X: p.X - w/2, Y: p.Y - d - h},     // below
				{X: p.X + d, Y: p.Y + d/2},         // upper right
				{X: p.X + d, Y: p.Y - d/2 - h},     // lower right
				{X: p.X - d - w, Y: p.Y + d/2},     // upper left
				{X: p.X - d - w, Y: p.Y - d/2 - h}, // lower left
			}
			for _, m := range cands {
				r := vg.Rectangle{Min: m, Max: vg.Point{X: m.X + w, Y: m.Y + h}}
				cost := 0.0
				if r.Min.X < bounds.Min.X || r.Max.X > bounds.Max.X || r.Min.Y < bounds.Min.Y || r.Max.Y > bounds.Max.Y {
					cost += 1e6
				}
				for _, o := range placed {
					cost += overlapArea(r, o)
				}
				for _, o := range dots {
					cost += overlapArea(r, o)
				}
				// Prefer nearer rings at equal overlap.
				cost += float64(ring-1) * 1e-3
				if cost < bestCost {
					best, bestCost = r, cost
				}
			}
		}
		out[k] = best
		placed = append(placed, best)
	}
	return out
}

// overlapArea returns the area (pt²) shared by two rectangles.
func overlapArea(a, b vg.Rectangle) float64 {
	w := math.Min(float64(a.Max.X), float64(b.Max.X)) - math.Max(float64(a.Min.X), float64(b.Min.X))
	h := math.Min(float64(a.Max.Y), float64(b.Max.Y)) - math.Max(float64(a.Min.Y), float64(b.Min.Y))
	if w <= 0 || h <= 0 {
		return 0
	}
	return w * h
}

// rectDistance returns the distance from p to the nearest point of r.
func rectDistance(r vg.Rectangle, p vg.Point) vg.Length {
	dx := p.X - clampTo(p.X, r.Min.X, r.Max.X)
	dy := p.Y - clampTo(p.Y, r.Min.Y, r.Max.Y)
	return vg.Length(math.Hypot(float64(dx), float64(dy)))
}

func clampTo(v, lo, hi vg.Length) vg.Length {
	return vg.Length(math.Max(float64(lo), math.Min(float64(hi), float64(v))))
}

// Reference is a requirement or a rating drawn as a dashed straight line
// across a study plot: horizontal at y = Value, or vertical at x = Value.
// Its label is the legend entry; the axis range always includes it.
type Reference struct {
	Value    float64
	Vertical bool
	Label    string
}

// StudySeries is one line of a sweep with the state of each point: Ys has
// one value per x (NaN: the point has no value: the figure did not happen,
// or the point was invalid or could not be simulated); Failed marks the
// points that fail a rating or requirement (nil: none).
type StudySeries struct {
	Label  string
	Ys     []float64
	Failed []bool
}

// SweepChart is a figure of a sweep: one line per series against Xs.
type SweepChart struct {
	Title, XLabel, YLabel string
	Xs                    []float64
	// KeyName names what labels the series (the second swept key, say
	// "plunger.mass"); it opens the legend.
	KeyName string
	Series  []StudySeries
	Limits  []Reference
	// FailedLabel and MissingLabel are the legend entries of the failed
	// marker and of the no-value marker (shown when such points exist).
	FailedLabel, MissingLabel string
	// Notes are legend entries of text alone.
	Notes []string
}

// Marker styles of the study plots: a failed point is a bold cross in
// colFailed over its dot; a point without a value is an open triangle
// pointing down, in its series' colour, in a band at the top of the plot.
var colFailed = color.RGBA{0xd5, 0x00, 0x00, 0xff}

const (
	failedRadius       = 4.5 // pt
	failedInsideRadius = 3.0 // pt, a cross inside a no-value triangle
	missingRadius      = 6.0 // pt
)

// studyInk are the colours of a sweep's lines: the package's accents
// without the reds, which mark limits and failed points here.
var studyInk = []color.Color{colCurrent, colGap, colSwitchV, colCoilV, color.RGBA{0x00, 0x83, 0x8f, 0xff}, color.RGBA{0x8d, 0x6e, 0x63, 0xff}, ink}

func studyColor(k int) color.Color { return studyInk[k%len(studyInk)] }

// SweepLines draws a sweep: one line per series with dots (markers only
// when a series has at most maxDots points), failed points crossed, points
// without a value as triangles in a band at the top, and the limits as
// dashed lines; the legend names the series' key, the lines, the markers
// and the limits.
func SweepLines(ch SweepChart) *Figure {
	p := newPlot(ch.XLabel, ch.YLabel)
	addGrid(p)
	var entries []legendEntry
	if ch.KeyName != "" && len(ch.Series) > 0 {
		entries = append(entries, legendEntry{label: ch.KeyName + ":"})
	}
	m := addSweepSeries(p, ch)
	entries = append(entries, m.entries...)
	xlo, xhi := extent(ch.Xs)
	xlo, xhi, lo, hi := widenToLimits(ch.Limits, xlo, xhi, m.lo, m.hi)
	setRange(&p.X, xlo, xhi, 0.03)
	setRange(&p.Y, lo, hi, 0.08)
	band := missingBand(p, m.bandRows())
	entries = append(entries, addLimits(p, ch.Limits)...)
	entries = append(entries, m.draw(p, band, ch.MissingLabel, ch.FailedLabel)...)
	for _, n := range ch.Notes {
		entries = append(entries, legendEntry{label: n})
	}
	return studyFigure(ch.Title, p, entries)
}

// sweepMarks are what a sweep's series leave to draw after the axes are
// set: the failed points with a value, the points without one, and the
// range of the values; entries are the series' legend entries.
type sweepMarks struct {
	lo, hi       float64
	failX, failY []float64
	missing      []missingPoint
	anyFailed    bool
	entries      []legendEntry
}

// addSweepSeries draws each series of ch as a line, with dots when it
// has at most maxDots points, and collects its marks.
func addSweepSeries(p *gplot.Plot, ch SweepChart) *sweepMarks {
	m := &sweepMarks{lo: math.Inf(1), hi: math.Inf(-1)}
	for k, s := range ch.Series {
		n := min(len(ch.Xs), len(s.Ys))
		col := studyColor(k)
		xs, ys := ch.Xs[:n], s.Ys[:n]
		p.Add(linesOf(xs, ys, col, 1.4, nil)...)
		if n <= maxDots {
			p.Add(&dots{xs: xs, ys: ys, color: col})
		}
		l, h := extent(ys)
		m.lo, m.hi = math.Min(m.lo, l), math.Max(m.hi, h)
		for j := 0; j < n; j++ {
			failed := j < len(s.Failed) && s.Failed[j]
			m.anyFailed = m.anyFailed || failed
			if !finite(ys[j]) {
				m.missing = append(m.missing, missingPoint{x: xs[j], color: col, failed: failed})
				continue
			}
			if failed {
				m.failX, m.failY = append(m.failX, xs[j]), append(m.failY, ys[j])
			}
		}
		if s.Label != "" {
			m.entries = append(m.entries, legendEntry{label: s.Label, color: col, line: true})
		}
	}
	return m
}

// bandRows places the points without a value in the band at the top, one
// row per series missing at the same x (so that each shows its colour),
// and returns the number of rows.
func (m *sweepMarks) bandRows() int {
	row := map[float64]int{}
	rows := 0
	for k := range m.missing {
		m.missing[k].row = row[m.missing[k].x]
		row[m.missing[k].x]++
		rows = max(rows, row[m.missing[k].x])
	}
	return rows
}

// draw draws the points without a value in the band (crossed when they
// failed) and crosses the failed points; it returns the legend entries of
// the markers drawn.
func (m *sweepMarks) draw(p *gplot.Plot, band func(row int) float64, missingLabel, failedLabel string) []legendEntry {
	var entries []legendEntry
	if len(m.missing) > 0 {
		for _, mp := range m.missing {
			y := band(mp.row)
			p.Add(&glyphs{xs: []float64{mp.x}, ys: []float64{y}, shape: openTriangle{down: true}, color: mp.color, radius: missingRadius})
			if mp.failed {
				p.Add(&glyphs{xs: []float64{mp.x}, ys: []float64{y}, shape: boldCross{}, color: colFailed, radius: failedInsideRadius})
			}
		}
		if missingLabel != "" {
			entries = append(entries, legendEntry{label: missingLabel, glyph: openTriangle{down: true}, color: ink, radius: missingRadius})
		}
	}
	if len(m.failX) > 0 {
		p.Add(&glyphs{xs: m.failX, ys: m.failY, shape: boldCross{}, color: colFailed, radius: failedRadius})
	}
	if m.anyFailed && failedLabel != "" {
		entries = append(entries, legendEntry{label: failedLabel, glyph: boldCross{}, color: colFailed, radius: failedRadius})
	}
	return entries
}

// widenToLimits widens the x range [xlo, xhi] to take in the finite
// vertical limits and the y range [ylo, yhi] the horizontal ones.
func widenToLimits(refs []Reference, xlo, xhi, ylo, yhi float64) (float64, float64, float64, float64) {
	for _, r := range refs {
		if !finite(r.Value) {
			continue
		}
		if r.Vertical {
			xlo, xhi = math.Min(xlo, r.Value), math.Max(xhi, r.Value)
		} else {
			ylo, yhi = math.Min(ylo, r.Value), math.Max(yhi, r.Value)
		}
	}
	return xlo, xhi, ylo, yhi
}

// missingPoint is a sweep point without a value; row is its place in
// the band at the top.
type missingPoint struct {
	x      float64
	color  color.Color
	failed bool
	row    int
}

// missingBand widens the y axis by a band at the top with rows for the
// markers of points without a value, and returns the y of each row (row 0
// at the top).
func missingBand(p *gplot.Plot, rows int) func(row int) float64 {
	span := p.Y.Max - p.Y.Min
	const step = 0.06 // of the span, per row
	if rows > 0 {
		p.Y.Max += step * float64(rows) * span
	}
	top := p.Y.Max
	return func(row int) float64 { return top - step*span*(float64(row)+0.5) }
}

// addLimits draws the references as dashed lines across the plot and
// returns their legend entries.
func addLimits(p *gplot.Plot, refs []Reference) []legendEntry {
	var out []legendEntry
	dash := []vg.Length{vg.Points(6), vg.Points(3)}
	for _, r := range refs {
		if !finite(r.Value) {
			continue
		}
		p.Add(&referenceLine{ref: r, sty: draw.LineStyle{Color: colLimit, Width: vg.Points(1.4), Dashes: dash}})
		out = append(out, legendEntry{label: r.Label, color: colLimit, dash: dash, line: true})
	}
	return out
}

// referenceLine draws a Reference from edge to edge of the plot.
type referenceLine struct {
	ref Reference
	sty draw.LineStyle
}

func (l *referenceLine) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	axis := p.Y
	if l.ref.Vertical {
		axis = p.X
	}
	if l.ref.Value < axis.Min || l.ref.Value > axis.Max {
		return // outside the plot (the callers widen the axes to include it)
	}
	if l.ref.Vertical {
		x := trX(l.ref.Value)
		c.StrokeLine2(l.sty, x, c.Min.Y, x, c.Max.Y)
		return
	}
	y := trY(l.ref.Value)
	c.StrokeLine2(l.sty, c.Min.X, y, c.Max.X, y)
}

// ScatterPoint is a point of a marked scatter: Y NaN puts it in a band at
// the top of the plot (no value: the plunger did not release, say);
// Failed crosses it.
type ScatterPoint struct {
	X, Y   float64
	Label  string
	Failed bool
}

// Scatter is a labelled scatter with requirement and rating lines (the
// clamp comparison: release time against peak switch voltage, the release
// requirement horizontal, the derated switch rating vertical).
type Scatter struct {
	Title, XLabel, YLabel string
	Points                []ScatterPoint
	Limits                []Reference
	// Legend entries of the ordinary point, the failed marker and the
	// no-value marker (each shown when such points exist).
	PointLabel, FailedLabel, MissingLabel string
	Notes                                 []string
}

// MarkedScatter draws s: each point as a dot with its label beside it,
// failed points crossed, points without a value as triangles in a band at
// the top, and the limits as dashed lines.
func MarkedScatter(s Scatter) *Figure {
	p := newPlot(s.XLabel, s.YLabel)
	addGrid(p)
	rows := 0
	if setScatterRanges(p, s) {
		rows = 1
	}
	m := sortScatter(s.Points, missingBand(p, rows)(0))
	entries := addLimits(p, s.Limits)
	entries = append(entries, m.draw(p, s)...)
	p.Add(&pointLabels{pts: m.placed, radius: scatterRadius})
	for _, n := range s.Notes {
		entries = append(entries, legendEntry{label: n})
	}
	return studyFigure(s.Title, p, entries)
}

// scatterRadius is the radius of a scatter's dots (pt).
const scatterRadius = 3.5

// setScatterRanges sets the axes to the finite points and the limits and
// reports whether a point has no value (a band at the top is then
// needed).
func setScatterRanges(p *gplot.Plot, s Scatter) (anyMissing bool) {
	var xs, ys []float64
	for _, pt := range s.Points {
		if !finite(pt.X) {
			continue
		}
		xs = append(xs, pt.X)
		if finite(pt.Y) {
			ys = append(ys, pt.Y)
		} else {
			anyMissing = true
		}
	}
	xlo, xhi := extent(xs)
	ylo, yhi := extent(ys)
	xlo, xhi, ylo, yhi = widenToLimits(s.Limits, xlo, xhi, ylo, yhi)
	setRange(&p.X, xlo, xhi, 0.12)
	setRange(&p.Y, ylo, yhi, 0.12)
	return anyMissing
}

// scatterMarks are a scatter's points sorted by how they are drawn:
// with a value, without one (at yMissing in the band), failed with a
// value and failed without one; placed are the labelled points.
type scatterMarks struct {
	okX, okY, missX, missY, failX, failY, failInX, failInY []float64
	placed                                                 []LabelledPoint
}

// sortScatter sorts the points with a finite x; a point without a value
// sits at yMissing.
func sortScatter(points []ScatterPoint, yMissing float64) *scatterMarks {
	m := &scatterMarks{}
	for _, pt := range points {
		if !finite(pt.X) {
			continue
		}
		y := pt.Y
		if !finite(y) {
			y = yMissing
			m.missX, m.missY = append(m.missX, pt.X), append(m.missY, y)
		} else {
			m.okX, m.okY = append(m.okX, pt.X), append(m.okY, y)
		}
		if pt.Failed && finite(pt.Y) {
			m.failX, m.failY = append(m.failX, pt.X), append(m.failY, y)
		} else if pt.Failed {
			m.failInX, m.failInY = append(m.failInX, pt.X), append(m.failInY, y)
		}
		m.placed = append(m.placed, LabelledPoint{X: pt.X, Y: y, Label: pt.Label})
	}
	return m
}

// draw draws the dots, the no-value triangles and the crosses, and returns
// the legend entries of s's labels for the kinds drawn.
func (m *scatterMarks) draw(p *gplot.Plot, s Scatter) []legendEntry {
	var entries []legendEntry
	if len(m.okX) > 0 {
		p.Add(&dots{xs: m.okX, ys: m.okY, color: colCurrent, radius: scatterRadius})
		if s.PointLabel != "" {
			entries = append(entries, legendEntry{label: s.PointLabel, glyph: draw.CircleGlyph{}, color: colCurrent, radius: scatterRadius})
		}
	}
	if len(m.missX) > 0 {
		p.Add(&glyphs{xs: m.missX, ys: m.missY, shape: openTriangle{down: true}, color: colCurrent, radius: missingRadius})
		if s.MissingLabel != "" {
			entries = append(entries, legendEntry{label: s.MissingLabel, glyph: openTriangle{down: true}, color: colCurrent, radius: missingRadius})
		}
	}
	if len(m.failX)+len(m.failInX) > 0 {
		p.Add(&glyphs{xs: m.failX, ys: m.failY, shape: boldCross{}, color: colFailed, radius: failedRadius})
		p.Add(&glyphs{xs: m.failInX, ys: m.failInY, shape: boldCross{}, color: colFailed, radius: failedInsideRadius})
		if s.FailedLabel != "" {
			entries = append(entries, legendEntry{label: s.FailedLabel, glyph: boldCross{}, color: colFailed, radius: failedRadius})
		}
	}
	return entries
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// glyphs draws a marker at each finite point.
type glyphs struct {
	xs, ys []float64
	shape  draw.GlyphDrawer
	color  color.Color
	radius float64 // pt
}

func (g *glyphs) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.GlyphStyle{Color: g.color, Radius: vg.Points(g.radius), Shape: g.shape}
	for k := range g.xs {
		if !finite(g.xs[k]) || !finite(g.ys[k]) {
			continue
		}
		c.DrawGlyph(sty, vg.Point{X: trX(g.xs[k]), Y: trY(g.ys[k])})
	}
}

// boldCross is an × drawn with a heavy stroke (the failed marker).
type boldCross struct{}

func (boldCross) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.8)})
	r := sty.Radius * 0.75
	for _, s := range []vg.Length{1, -1} {
		var path vg.Path
		path.Move(vg.Point{X: pt.X - r, Y: pt.Y - s*r})
		path.Line(vg.Point{X: pt.X + r, Y: pt.Y + s*r})
		c.Stroke(path)
	}
}

// openTriangle is the outline of a triangle, pointing down when down is set
// (the no-value marker).
type openTriangle struct{ down bool }

func (t openTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.3)})
	r := sty.Radius
	s := vg.Length(1)
	if t.down {
		s = -1
	}
	var path vg.Path
	path.Move(vg.Point{X: pt.X, Y: pt.Y + s*r})
	path.Line(vg.Point{X: pt.X - r*0.866, Y: pt.Y - s*r*0.5})
	path.Line(vg.Point{X: pt.X + r*0.866, Y: pt.Y - s*r*0.5})
	path.Close()
	c.Stroke(path)
}

// legendEntry is an entry of a study figure's legend: a short line (line),
// a marker (glyph), or text alone (neither).
type legendEntry struct {
	label  string
	color  color.Color
	dash   []vg.Length
	line   bool
	glyph  draw.GlyphDrawer
	radius float64 // pt, of the glyph
}

// width is the room the entry takes in a legend row (pt).
func (e legendEntry) width(sty text.Style) vg.Length {
	w := sty.Width(e.label) + vg.Points(14)
	if e.line || e.glyph != nil {
		w += vg.Points(20)
	}
	return w
}

// drawLegend draws the entries in rows that wrap within width, the first
// row's top at pt, and returns the height used.
func drawLegend(c draw.Canvas, pt vg.Point, width vg.Length, entries []legendEntry) vg.Length {
	sty := textStyle(sizeSmall, ink)
	asc := sty.FontExtents().Ascent
	var rows [][]legendEntry
	var row []legendEntry
	var used vg.Length
	for _, e := range entries {
		w := e.width(sty)
		if len(row) > 0 && used+w > width {
			rows, row, used = append(rows, row), nil, 0
		}
		row, used = append(row, e), used+w
	}
	if len(row) > 0 {
		rows = append(rows, row)
	}
	for r, row := range rows {
		x := pt.X
		base := pt.Y - asc - vg.Length(r)*keyLine()
		y := base + asc*0.35
		for _, e := range row {
			switch {
			case e.line:
				c.StrokeLine2(draw.LineStyle{Color: e.color, Width: vg.Points(2), Dashes: e.dash}, x, y, x+vg.Points(16), y)
			case e.glyph != nil:
				c.DrawGlyphNoClip(draw.GlyphStyle{Color: e.color, Radius: vg.Points(e.radius), Shape: e.glyph}, vg.Point{X: x + vg.Points(8), Y: y})
			}
			if e.line || e.glyph != nil {
				x += vg.Points(20)
			}
			c.FillText(sty, vg.Point{X: x, Y: base}, e.label)
			x += sty.Width(e.label) + vg.Points(14)
		}
	}
	return vg.Length(len(rows)) * keyLine()
}

// studyFigure is a figure of one plot with a title and a legend of
// entries above it (single's layout, with markers and text in the legend).
func studyFigure(title string, p *gplot.Plot, entries []legendEntry) *Figure {
	var row func(c draw.Canvas, at vg.Point, width vg.Length) vg.Length
	if len(entries) > 0 {
		row = func(c draw.Canvas, at vg.Point, width vg.Length) vg.Length { return drawLegend(c, at, width, entries) }
	}
	return titled(title, StudyWidth, StudyHeight, p, row)
}
