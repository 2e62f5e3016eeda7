package plot

import (
	"image/color"
	"math"
	"strings"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"coilkick"
)

// Waveform figure size (points): 1000 × 960 pixels at DPI.
var (
	WaveformWidth  = vg.Inch * 10
	WaveformHeight = vg.Inch * 9.6
)

// WaveformOptions label the waveform figure.
type WaveformOptions struct {
	Title    string // e.g. the scenario name
	Subtitle string // one short line under the title ("" for none)
}

// Marker is a labelled instant on the time axis.
type Marker struct {
	Time  float64 // s
	Label string
}

// EventMarkers picks the instants worth marking on a waveform from a run's
// events: energize, the plunger leaving the rest stop, the first seat
// impact, de-energize, and the plunger leaving the seat after it; for an
// H-bridge's pulses drive, the latch pulse's start and end and the
// release pulse's start instead of energize and de-energize.
func EventMarkers(events []coilkick.Event) []Marker {
	var out []Marker
	found := map[string]bool{}
	off := math.Inf(1)
	add := func(label string, t float64) {
		if !found[label] {
			found[label] = true
			out = append(out, Marker{t, label})
		}
	}
	for _, e := range events {
		switch {
		case strings.HasPrefix(e.What, "energize"):
			add("energize", e.Time)
		case strings.HasPrefix(e.What, "de-energize"):
			add("de-energize", e.Time)
			off = math.Min(off, e.Time)
		case strings.HasPrefix(e.What, "latch pulse starts"):
			add("latch pulse", e.Time)
		case strings.HasPrefix(e.What, "latch pulse ends"):
			add("latch ends", e.Time)
			off = math.Min(off, e.Time)
		case strings.HasPrefix(e.What, "release pulse starts"):
			add("release pulse", e.Time)
		case e.What == "leaves the rest stop":
			add("moves", e.Time)
		case strings.HasPrefix(e.What, "seat impact"):
			add("seated", e.Time)
		case e.What == "leaves the seat" && e.Time >= off:
			add("released", e.Time)
		}
	}
	return out
}

// timeScale picks the unit of a time axis ending at end (s).
func timeScale(end float64) (factor float64, unit string) {
	switch {
	case end <= 2:
		return 1e3, "ms"
	case end <= 600:
		return 1, "s"
	case end <= 3*3600:
		return 1.0 / 60, "min"
	default:
		return 1.0 / 3600, "h"
	}
}

// panel is one quantity band of a stacked figure.
type panel struct {
	yLabel string
	series []panelSeries
	weight float64
}

type panelSeries struct {
	label string
	ys    []float64
	color color.Color
	scale float64
}

// Waveform draws a run's trace as stacked panels on one shared time axis:
// coil current; coil and switch voltage; air gap; magnetic pull and
// passive force. Markers are drawn as labelled vertical lines. Long traces
// are reduced to the minimum and maximum of each pixel column.
func Waveform(tr *coilkick.Trace, markers []Marker, opt WaveformOptions) *Figure {
	panels := []panel{
		{"current (A)", []panelSeries{{"coil current", tr.Current, colCurrent, 1}}, 1},
		{"voltage (V)", []panelSeries{{"coil voltage", tr.CoilVoltage, colCoilV, 1}, {"switch voltage (drain to ground)", tr.SwitchVoltage, colSwitchV, 1}}, 1.2},
		{"air gap (mm)", []panelSeries{{"working air gap", tr.Gap, colGap, 1e3}}, 0.8},
		{"force (N)", []panelSeries{{"magnetic pull toward the seat", tr.MagneticForce, colPull, 1}, {"passive force (spring + load − damping)", tr.PassiveForce, colPassive, 1}}, 1},
	}
	// The winding temperature, when a thermal model makes it vary.
	if n := len(tr.WindingTemperature); n == len(tr.Time) && n > 0 {
		lo, hi := tr.WindingTemperature[0], tr.WindingTemperature[0]
		for _, v := range tr.WindingTemperature {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if hi-lo > 0.01 {
			degC := make([]float64, n)
			for k, v := range tr.WindingTemperature {
				degC[k] = v - 273.15
			}
			panels = append(panels, panel{"winding (°C)", []panelSeries{{"winding temperature", degC, colPull, 1}}, 0.7})
		}
	}
	return stacked(opt, tr.Time, panels, markers, WaveformWidth, WaveformHeight)
}

// stacked lays out panels top to bottom over one time axis.
func stacked(opt WaveformOptions, t []float64, panels []panel, markers []Marker, w, h vg.Length) *Figure {
	return &Figure{Width: w, Height: h, Title: opt.Title, draw: func(c draw.Canvas) {
		drawStacked(c, opt, t, panels, markers)
	}}
}

// drawStacked draws the title block, the event label strip and the
// panels, whose data areas line up on the time axis.
func drawStacked(c draw.Canvas, opt WaveformOptions, t []float64, panels []panel, markers []Marker) {
	ax := newTimeAxis(t)
	cols := int(math.Ceil(c.Size().X.Dots(DPI)))

	pad := vg.Points(8)
	c = draw.Crop(c, pad, -pad, pad, -pad)
	top := drawTitleBlock(c, opt)
	plots, keys := panelPlots(panels, t, ax, markers, cols)
	col := alignedColumn(c, top, plots)
	top -= drawEventStrip(c, top, markers, ax, col)
	drawPanels(c, top, plots, panels, keys, col)
}

// timeAxis is the shared time axis of a stacked figure: its range in the
// display unit, the factor from seconds to it, and its name.
type timeAxis struct {
	x0, x1, f float64
	unit      string
}

// newTimeAxis spans the times t (s); a unit range when t is empty or a
// single instant.
func newTimeAxis(t []float64) timeAxis {
	t0, t1 := 0.0, 1.0
	if len(t) > 0 {
		t0, t1 = t[0], t[len(t)-1]
	}
	if !(t1 > t0) {
		t1 = t0 + 1
	}
	f, unit := timeScale(t1)
	return timeAxis{x0: t0 * f, x1: t1 * f, f: f, unit: unit}
}

// drawTitleBlock draws the title and the subtitle at the top of c and
// returns the y below them.
func drawTitleBlock(c draw.Canvas, opt WaveformOptions) vg.Length {
	top := c.Max.Y
	ts := textStyle(sizeTitle, ink)
	ts.YAlign = draw.YTop
	c.FillText(ts, vg.Point{X: c.Min.X, Y: top}, opt.Title)
	top -= ts.Height("M") + vg.Points(3)
	if opt.Subtitle != "" {
		ss := textStyle(sizeSmall, colPassive)
		ss.YAlign = draw.YTop
		c.FillText(ss, vg.Point{X: c.Min.X, Y: top}, opt.Subtitle)
		top -= ss.Height("M") + vg.Points(2)
	}
	return top
}

// panelPlots builds a plot per panel over the time axis (the time labels
// on the last only), its series reduced to cols pixel columns (MinMax),
// with the markers' lines; keys are each panel's legend entries.
func panelPlots(panels []panel, t []float64, ax timeAxis, markers []Marker, cols int) ([]*gplot.Plot, [][]key) {
	xs := make([]float64, len(t))
	for k := range t {
		xs[k] = t[k] * ax.f
	}
	plots := make([]*gplot.Plot, len(panels))
	keys := make([][]key, len(panels))
	for i, pn := range panels {
		xl := ""
		if i == len(panels)-1 {
			xl = "time (" + ax.unit + ")"
		}
		p := newPlot(xl, pn.yLabel)
		if i < len(panels)-1 {
			p.X.Tick.Marker = hiddenLabels{readableTicks{}}
		}
		p.X.Min, p.X.Max = ax.x0, ax.x1
		p.Y.Tick.Marker = readableTicks{max: 5}
		p.Add(grid{xTicks: readableTicks{}, yTicks: p.Y.Tick.Marker})
		lo, hi := math.Inf(1), math.Inf(-1)
		var lines []gplot.Plotter
		for _, s := range pn.series {
			ys := make([]float64, len(s.ys))
			for k := range s.ys {
				ys[k] = s.ys[k] * s.scale
			}
			dx, dy := MinMax(xs, ys, ax.x0, ax.x1, cols)
			l, h := extent(dy)
			lo, hi = math.Min(lo, l), math.Max(hi, h)
			lines = append(lines, linesOf(dx, dy, s.color, 1.1, nil)...)
			keys[i] = append(keys[i], key{label: s.label, color: s.color})
		}
		setRange(&p.Y, lo, hi, 0.08)
		p.Add(eventLines{markers: markers, f: ax.f})
		p.Add(lines...)
		plots[i] = p
	}
	return plots, keys
}

// dataColumn is the horizontal extent shared by the panels' data areas:
// the insets from the canvas's edges and the resulting x range.
type dataColumn struct{ left, right, min, max vg.Length }

// alignedColumn is the data column of the plots on c below top: the
// widest y axis decides the left edge, the widest right margin the right.
func alignedColumn(c draw.Canvas, top vg.Length, plots []*gplot.Plot) dataColumn {
	probe := c
	probe.Max.Y = top
	var col dataColumn
	for _, p := range plots {
		dc := p.DataCanvas(probe)
		col.left = max(col.left, dc.Min.X-probe.Min.X)
		col.right = max(col.right, probe.Max.X-dc.Max.X)
	}
	col.min, col.max = c.Min.X+col.left, c.Max.X-col.right
	return col
}

// drawEventStrip draws the markers' labels below top in rows so that none
// overlap, each with a tick down to the panels, and returns the strip's
// height.
func drawEventStrip(c draw.Canvas, top vg.Length, markers []Marker, ax timeAxis, col dataColumn) vg.Length {
	ls := textStyle(sizeSmall, ink)
	type placed struct {
		x     vg.Length
		row   int
		label string
		right bool
	}
	xOf := func(v float64) vg.Length {
		return col.min + vg.Length((v-ax.x0)/(ax.x1-ax.x0))*(col.max-col.min)
	}
	var labels []placed
	var rowEnds []vg.Length // right end of the last label in each row
	for _, m := range markers {
		x := xOf(m.Time * ax.f)
		if x < col.min-1 || x > col.max+1 {
			continue
		}
		wid := ls.Width(m.Label)
		start, rightAlign := x+vg.Points(2), false
		if start+wid > col.max {
			start, rightAlign = x-vg.Points(2)-wid, true
		}
		row := 0
		for ; row < len(rowEnds); row++ {
			if start > rowEnds[row]+vg.Points(4) {
				break
			}
		}
		if row == len(rowEnds) {
			rowEnds = append(rowEnds, 0)
		}
		rowEnds[row] = start + wid
		labels = append(labels, placed{x, row, m.Label, rightAlign})
	}
	lineH := ls.Height("M") + vg.Points(2)
	strip := vg.Length(len(rowEnds))*lineH + vg.Points(2)
	for _, l := range labels {
		base := top - vg.Length(l.row+1)*lineH + vg.Points(2)
		sty := ls
		x := l.x + vg.Points(2)
		if l.right {
			sty.XAlign = draw.XRight
			x = l.x - vg.Points(2)
		}
		c.FillText(sty, vg.Point{X: x, Y: base}, l.label)
		c.StrokeLine2(draw.LineStyle{Color: eventInk, Width: vg.Points(0.6)}, l.x, base+ls.Height("M")-vg.Points(2), l.x, top-strip)
	}
	return strip
}

// drawPanels stacks the plots below top: each panel gets a key row above
// its plot, and the data heights follow the panels' weights after the
// fixed overheads; the data areas span col.
func drawPanels(c draw.Canvas, top vg.Length, plots []*gplot.Plot, panels []panel, keys [][]key, col dataColumn) {
	probe := c
	probe.Max.Y = top
	keyH := keyLine() + vg.Points(2)
	over := make([]vg.Length, len(plots))
	var totalOver vg.Length
	var totalW float64
	for i, p := range plots {
		dc := p.DataCanvas(probe)
		over[i] = (probe.Max.Y - probe.Min.Y) - (dc.Max.Y - dc.Min.Y)
		if len(keys[i]) > 0 {
			over[i] += vg.Length(len(keyRows(col.max-col.min, keys[i]))) * keyH
		}
		totalOver += over[i]
		totalW += panels[i].weight
	}
	gap := vg.Points(4)
	avail := top - c.Min.Y - totalOver - gap*vg.Length(len(plots)-1)
	y := top
	for i, p := range plots {
		hData := avail * vg.Length(panels[i].weight/totalW)
		tile := c
		tile.Max.Y = y
		tile.Min.Y = y - over[i] - hData
		if len(keys[i]) > 0 {
			tile.Max.Y -= drawKeys(c, vg.Point{X: col.min + vg.Points(4), Y: y}, col.max-col.min, keys[i]) + vg.Points(2)*vg.Length(len(keyRows(col.max-col.min, keys[i])))
		}
		dc := p.DataCanvas(tile)
		tile.Min.X += col.left - (dc.Min.X - tile.Min.X)
		tile.Max.X -= col.right - (tile.Max.X - dc.Max.X)
		p.Draw(tile)
		y = tile.Min.Y - gap
	}
}

// eventLines draws markers as thin dashed vertical lines over the data
// area.
type eventLines struct {
	markers []Marker
	f       float64
}

func (e eventLines) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, _ := p.Transforms(&c)
	sty := draw.LineStyle{Color: eventInk, Width: vg.Points(0.6), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}
	for _, m := range e.markers {
		v := m.Time * e.f
		if v < p.X.Min || v > p.X.Max {
			continue
		}
		x := trX(v)
		c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
	}
}
