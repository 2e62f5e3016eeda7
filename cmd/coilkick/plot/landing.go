package plot

import (
	"image/color"
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// LandingRun is one run of the landing figure: its trace (s, m, m/s) and
// its label.
type LandingRun struct {
	Label               string
	Time, Gap, Velocity []float64
}

// LandingData is the landing figure's data: the runs before and after at
// the nominal point, the energize command and the end of the window (s),
// and the brake found (s from energize; BrakeFor 0: none).
type LandingData struct {
	Title             string
	Energize, End     float64
	Before, After     LandingRun
	BrakeAt, BrakeFor float64
}

var colBefore = color.RGBA{0x88, 0x88, 0x88, 0xff}

// Landing draws gap and velocity versus the time after energize, before
// (grey, dashed) and after (colour), with the brake interval marked.
func Landing(d LandingData) *Figure {
	dash := []vg.Length{vg.Points(5), vg.Points(3)}
	dots := []vg.Length{vg.Points(2), vg.Points(2)}
	gap := newPlot("", "air gap (mm)")
	vel := newPlot("time after energize (ms)", "velocity (m/s)")
	x1 := (d.End - d.Energize) * 1e3
	cols := int(StudyWidth.Dots(DPI))
	for _, p := range []*gplot.Plot{gap, vel} {
		addGrid(p)
		setRange(&p.X, 0, x1, 0.01)
	}
	glo, ghi, vlo, vhi := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for _, r := range []struct {
		run   LandingRun
		color color.Color
		dash  []vg.Length
	}{{d.Before, colBefore, dash}, {d.After, colGap, nil}} {
		t := make([]float64, 0, len(r.run.Time))
		var g, v []float64
		for k, tm := range r.run.Time {
			if tm >= d.Energize && tm <= d.End {
				t = append(t, (tm-d.Energize)*1e3)
				g = append(g, r.run.Gap[k]*1e3)
				v = append(v, r.run.Velocity[k])
			}
		}
		lx, ly := MinMax(t, g, 0, x1, cols)
		gap.Add(linesOf(lx, ly, r.color, 1.5, r.dash)...)
		lx, ly = MinMax(t, v, 0, x1, cols)
		vel.Add(linesOf(lx, ly, r.color, 1.5, r.dash)...)
		l, h := extent(g)
		glo, ghi = math.Min(glo, l), math.Max(ghi, h)
		l, h = extent(v)
		vlo, vhi = math.Min(vlo, l), math.Max(vhi, h)
	}
	setRange(&gap.Y, math.Min(glo, 0), ghi, 0.06)
	setRange(&vel.Y, math.Min(vlo, 0), math.Max(vhi, 0), 0.06)
	keys := []key{{label: d.Before.Label, color: colBefore, dash: dash}, {label: d.After.Label, color: colGap}}
	if d.BrakeFor > 0 {
		for _, x := range []float64{d.BrakeAt * 1e3, (d.BrakeAt + d.BrakeFor) * 1e3} {
			gap.Add(linesOf([]float64{x, x}, []float64{glo, ghi}, ink, 0.8, dots)...)
			vel.Add(linesOf([]float64{x, x}, []float64{vlo, vhi}, ink, 0.8, dots)...)
		}
		keys = append(keys, key{label: "brake: switch off, on again", color: ink, dash: dots})
	}
	return &Figure{Width: StudyWidth, Height: StudyHeight * 1.4, Title: d.Title, draw: func(c draw.Canvas) {
		pad := vg.Points(8)
		c = draw.Crop(c, pad, -pad, pad, -pad)
		ts := textStyle(sizeTitle, ink)
		ts.YAlign = draw.YTop
		c.FillText(ts, vg.Point{X: c.Min.X, Y: c.Max.Y}, d.Title)
		top := c.Max.Y - ts.Height(d.Title) - vg.Points(4)
		top -= drawKeys(c, vg.Point{X: c.Min.X + vg.Points(4), Y: top}, c.Max.X-c.Min.X, keys) + vg.Points(2)
		c.Max.Y = top
		tiles := draw.Tiles{Rows: 2, Cols: 1, PadY: vg.Points(6)}
		canvases := gplot.Align([][]*gplot.Plot{{gap}, {vel}}, tiles, c)
		gap.Draw(canvases[0][0])
		vel.Draw(canvases[1][0])
	}}
}
