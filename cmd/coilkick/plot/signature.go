package plot

import (
	"image/color"
	"math"

	"gonum.org/v1/plot/vg"
)

// SignatureData is the end-of-stroke signature figure's data: the sensed
// current of the nominal point (mA, one reading per entry of Times, ms
// from the energize command), of the corners (drawn faintly) and of the
// blocked plunger; the nominal dip's maximum and minimum (ms, mA); the
// seat (ms) and the detection threshold's level below the nominal maximum
// (mA) and window (ms), NaN when there are none.
type SignatureData struct {
	Times            []float64
	Nominal, Blocked []float64
	Corners          [][]float64
	Max, Min         [2]float64
	Seat             float64
	Threshold        float64
	From, To         float64
}

var (
	colFaint     = color.NRGBA{0x1f, 0x4e, 0x8c, 0x50}
	colBlocked   = color.RGBA{0x88, 0x88, 0x88, 0xff}
	colThreshold = color.RGBA{0xc6, 0x28, 0x28, 0xff}
)

// Signature draws the sensed current after the energize command: every
// corner faintly, the nominal point and the blocked plunger, the dip's
// maximum and minimum, the seat, and the detection threshold over its
// window.
func Signature(title string, d SignatureData) *Figure {
	p := newPlot("time after energize (ms)", "sensed current (mA)")
	addGrid(p)
	cols := int(StudyWidth.Dots(DPI))
	x0, x1 := extent(d.Times)
	line := func(ys []float64, c color.Color, width float64, dash []vg.Length) {
		n := min(len(d.Times), len(ys))
		lx, ly := MinMax(d.Times[:n], ys[:n], x0, x1, cols)
		p.Add(linesOf(lx, ly, c, width, dash)...)
	}
	for _, c := range d.Corners {
		line(c, colFaint, 0.8, nil)
	}
	dash := []vg.Length{vg.Points(5), vg.Points(3)}
	line(d.Blocked, colBlocked, 1.2, dash)
	line(d.Nominal, colCurrent, 1.5, nil)
	keys := []key{{label: "nominal", color: colCurrent}, {label: "blocked plunger", color: colBlocked, dash: dash}}
	if len(d.Corners) > 0 {
		keys = append(keys, key{label: "corners", color: colFaint})
	}
	p.Add(&dots{xs: []float64{d.Max[0], d.Min[0]}, ys: []float64{d.Max[1], d.Min[1]}, color: colThreshold, radius: 3.5})
	p.Add(&pointLabels{pts: []LabelledPoint{{X: d.Max[0], Y: d.Max[1], Label: "max before the dip"},
		{X: d.Min[0], Y: d.Min[1], Label: "minimum"}}, radius: 3.5})
	lo, hi := extent(append(append([]float64{}, d.Nominal...), d.Blocked...))
	for _, c := range d.Corners {
		l, h := extent(c)
		lo, hi = math.Min(lo, l), math.Max(hi, h)
	}
	if !math.IsNaN(d.Seat) {
		p.Add(linesOf([]float64{d.Seat, d.Seat}, []float64{lo, hi}, ink, 0.8, []vg.Length{vg.Points(2), vg.Points(2)})...)
		keys = append(keys, key{label: "seat (nominal)", color: ink, dash: []vg.Length{vg.Points(2), vg.Points(2)}})
	}
	if !math.IsNaN(d.Threshold) {
		p.Add(linesOf([]float64{d.From, d.To}, []float64{d.Threshold, d.Threshold}, colThreshold, 1.4, nil)...)
		for _, x := range []float64{d.From, d.To} {
			p.Add(linesOf([]float64{x, x}, []float64{lo, hi}, colThreshold, 0.8, dash)...)
		}
		keys = append(keys, key{label: "threshold below the max, and window", color: colThreshold})
	}
	setRange(&p.X, x0, x1, 0.02)
	setRange(&p.Y, math.Min(lo, 0), hi, 0.06)
	return single(title, StudyWidth, StudyHeight, p, keys)
}
