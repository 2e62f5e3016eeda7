package plot

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	gplot "gonum.org/v1/plot"
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
