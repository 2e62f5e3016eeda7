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
	p.Add(&pointLabels{pts: pts})
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

// pointLabels writes each point's label to its right, or to its left
// when it would leave the data area.
type pointLabels struct{ pts []LabelledPoint }

func (l *pointLabels) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := textStyle(sizeSmall, ink)
	sty.YAlign = draw.YCenter
	var taken []vg.Rectangle
	for _, pt := range l.pts {
		if math.IsNaN(pt.X) || math.IsNaN(pt.Y) {
			continue
		}
		x, y := trX(pt.X), trY(pt.Y)
		w, h := sty.Width(pt.Label), sty.Height(pt.Label)
		s := sty
		tx := x + vg.Points(6)
		if tx+w > c.Max.X {
			s.XAlign = draw.XRight
			tx = x - vg.Points(6)
		}
		// Move down past labels already written there.
		r := func(y vg.Length) vg.Rectangle {
			x0 := tx
			if s.XAlign == draw.XRight {
				x0 = tx - w
			}
			return vg.Rectangle{Min: vg.Point{X: x0, Y: y - h/2}, Max: vg.Point{X: x0 + w, Y: y + h/2}}
		}
		for tries := 0; tries < 10; tries++ {
			clash := false
			for _, t := range taken {
				if overlaps(r(y), t) {
					clash = true
					break
				}
			}
			if !clash {
				break
			}
			y -= h
		}
		taken = append(taken, r(y))
		c.FillText(s, vg.Point{X: tx, Y: y}, pt.Label)
	}
}

func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}
