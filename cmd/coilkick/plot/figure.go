// Package plot draws coilkick's figures (waveforms, force curves, study
// lines, duty-cycle heating) with gonum/plot and writes the self-contained
// HTML report. It takes plain data and knows no physics.
package plot

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strings"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"coilkick/cmd/coilkick/outfile"
)

// DPI is the resolution of PNG output: a figure of width W points is
// ceil(W/72·DPI) pixels wide.
const DPI = 100

// Figure is a drawing of a fixed size that can be written as PNG or SVG.
type Figure struct {
	Width, Height vg.Length
	// Title is a short description (used as the SVG's accessible name).
	Title string
	draw  func(c draw.Canvas)
}

// PixelSize is the size of the figure's PNG in pixels.
func (f *Figure) PixelSize() (w, h int) {
	px := func(l vg.Length) int { return int(math.Ceil(l.Dots(DPI))) }
	return px(f.Width), px(f.Height)
}

func (f *Figure) render(c vg.CanvasSizer) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("plot: %v", r)
		}
	}()
	dc := draw.New(c)
	dc.FillPolygon(color.White, []vg.Point{dc.Min, {X: dc.Max.X, Y: dc.Min.Y}, dc.Max, {X: dc.Min.X, Y: dc.Max.Y}})
	f.draw(dc)
	return nil
}

// WritePNG writes the figure as a PNG image at DPI.
func (f *Figure) WritePNG(w io.Writer) error {
	c := vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(DPI))
	if err := f.render(c); err != nil {
		return err
	}
	_, err := vgimg.PngCanvas{Canvas: c}.WriteTo(w)
	return err
}

// WriteSVG writes the figure as a standalone SVG document with its fonts
// embedded.
func (f *Figure) WriteSVG(w io.Writer) error {
	c := vgsvg.NewWith(vgsvg.UseWH(f.Width, f.Height), vgsvg.EmbedFonts(true))
	if err := f.render(c); err != nil {
		return err
	}
	_, err := c.WriteTo(w)
	return err
}

// CheckFileName tells whether file names a figure the package writes:
// .png or .svg (any case).
func CheckFileName(file string) error {
	switch strings.ToLower(filepath.Ext(file)) {
	case ".png", ".svg":
		return nil
	}
	return fmt.Errorf("plot files end in .png or .svg")
}

// Encoder returns the writer of the figure in file's format, PNG or SVG
// by its extension.
func (f *Figure) Encoder(file string) (func(io.Writer) error, error) {
	if err := CheckFileName(file); err != nil {
		return nil, fmt.Errorf("%s: %v", file, err)
	}
	if strings.ToLower(filepath.Ext(file)) == ".png" {
		return f.WritePNG, nil
	}
	return f.WriteSVG, nil
}

// Save writes the figure to file, as PNG or SVG by the file's extension,
// atomically (outfile.Write: a failed write leaves the old file).
func (f *Figure) Save(file string) error {
	write, err := f.Encoder(file)
	if err != nil {
		return err
	}
	return outfile.Write(file, write)
}

// Style: plain, white background, dark text, one accent per quantity.
var (
	ink      = color.RGBA{0x22, 0x22, 0x22, 0xff}
	gridGrey = color.RGBA{0xe2, 0xe2, 0xe2, 0xff}
	eventInk = color.RGBA{0x70, 0x70, 0x70, 0xff}

	// Accents, one per quantity.
	colCurrent  = color.RGBA{0x1f, 0x4e, 0x8c, 0xff} // blue
	colCoilV    = color.RGBA{0xb3, 0x5c, 0x00, 0xff} // amber-brown
	colSwitchV  = color.RGBA{0x6a, 0x3d, 0x9a, 0xff} // purple
	colGap      = color.RGBA{0x2e, 0x7d, 0x32, 0xff} // green
	colPull     = color.RGBA{0xb7, 0x1c, 0x1c, 0xff} // red
	colPassive  = color.RGBA{0x55, 0x55, 0x55, 0xff} // grey
	colLimit    = color.RGBA{0xc6, 0x28, 0x28, 0xff}
	colAmbient  = color.RGBA{0x88, 0x88, 0x88, 0xff}
	seriesInk   = []color.Color{colCurrent, colPull, colGap, colSwitchV, colCoilV, color.RGBA{0x00, 0x83, 0x8f, 0xff}, color.RGBA{0x8d, 0x6e, 0x63, 0xff}, ink}
	sansRegular = font.Font{Typeface: "Liberation", Variant: "Sans"}
)

// seriesColor is the accent of the k-th line of a family.
func seriesColor(k int) color.Color { return seriesInk[k%len(seriesInk)] }

// Font sizes in points.
const (
	sizeTitle = 12
	sizeLabel = 10
	sizeTick  = 9
	sizeSmall = 8.5
)

func textStyle(size vg.Length, c color.Color) text.Style {
	return text.Style{Color: c, Font: font.From(sansRegular, size), Handler: gplot.DefaultTextHandler}
}

// newPlot returns a gonum plot in the package's style: sans-serif text,
// thin dark axes, no title, no legend (figures draw their own keys).
func newPlot(xLabel, yLabel string) *gplot.Plot {
	p := gplot.New()
	for _, a := range []*gplot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sansRegular, sizeLabel)
		a.Label.TextStyle.Color = ink
		a.Tick.Label.Font = font.From(sansRegular, sizeTick)
		a.Tick.Label.Color = ink
		a.LineStyle.Color = ink
		a.LineStyle.Width = vg.Points(0.6)
		a.Tick.LineStyle.Color = ink
		a.Tick.LineStyle.Width = vg.Points(0.6)
		a.Tick.Length = vg.Points(4)
		a.Padding = vg.Points(2)
		a.Tick.Marker = readableTicks{}
	}
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.Title.TextStyle.Font = font.From(sansRegular, sizeTitle)
	return p
}

// readableTicks are labelled marks at a 1-2-5 step, about six of them
// (at most max+1 when max > 0, for short panels), with tidy labels, and an
// unlabelled mark halfway between.
type readableTicks struct{ max int }

func (r readableTicks) Ticks(lo, hi float64) []gplot.Tick {
	if !(hi > lo) {
		return gplot.DefaultTicks{}.Ticks(lo, hi)
	}
	step := niceStep((hi - lo) / 6)
	if r.max > 0 {
		step = niceStepAtLeast((hi - lo) / float64(r.max))
	}
	var ticks []gplot.Tick
	first := math.Ceil(lo/step-1e-9) * step
	for k := 0; ; k++ {
		v := first + float64(k)*step
		if v > hi+step*1e-9 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		ticks = append(ticks, gplot.Tick{Value: v, Label: tickLabel(v, step)})
		// one unlabelled minor mark halfway
		if m := v + step/2; m <= hi {
			ticks = append(ticks, gplot.Tick{Value: m})
		}
	}
	if m := first - step/2; m >= lo {
		ticks = append(ticks, gplot.Tick{Value: m})
	}
	return ticks
}

// niceStep is the 1, 2 or 5 × a power of ten nearest to raw (by ratio).
func niceStep(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	best := p
	for _, m := range []float64{1, 2, 5, 10} {
		if math.Abs(math.Log(m*p/raw)) < math.Abs(math.Log(best/raw)) {
			best = m * p
		}
	}
	return best
}

// niceStepAtLeast is the smallest 1, 2 or 5 × a power of ten ≥ raw.
func niceStepAtLeast(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 5} {
		if m*p >= raw*(1-1e-9) {
			return m * p
		}
	}
	return 10 * p
}

// tickLabel formats v with as many decimals as the step needs.
func tickLabel(v, step float64) string {
	dec := 0
	if step < 1 {
		dec = int(math.Ceil(-math.Log10(step) - 1e-9))
	}
	if math.Abs(v) >= 1e6 || (v != 0 && math.Abs(v) < 1e-4) {
		return fmt.Sprintf("%.3g", v)
	}
	return fmt.Sprintf("%.*f", dec, v)
}

// hiddenLabels keeps a ticker's marks but drops their labels (marks with
// no label take no room), for panels that share the axis below them.
type hiddenLabels struct{ gplot.Ticker }

func (h hiddenLabels) Ticks(lo, hi float64) []gplot.Tick {
	t := h.Ticker.Ticks(lo, hi)
	out := make([]gplot.Tick, len(t))
	for k := range t {
		out[k] = gplot.Tick{Value: t[k].Value}
	}
	return out
}

// grid draws light lines at the labelled ticks of both axes (or, for an
// axis whose labels are hidden, at the ticks it would label).
type grid struct{ xTicks, yTicks gplot.Ticker }

func (g grid) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.LineStyle{Color: gridGrey, Width: vg.Points(0.5)}
	for _, t := range g.xTicks.Ticks(p.X.Min, p.X.Max) {
		if t.Label == "" {
			continue
		}
		x := trX(t.Value)
		c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
	}
	for _, t := range g.yTicks.Ticks(p.Y.Min, p.Y.Max) {
		if t.Label == "" {
			continue
		}
		y := trY(t.Value)
		c.StrokeLine2(sty, c.Min.X, y, c.Max.X, y)
	}
}

func addGrid(p *gplot.Plot) {
	p.Add(grid{xTicks: readableTicks{}, yTicks: readableTicks{}})
}

// setRange sets an axis to [lo, hi] widened by a margin, and copes with a
// flat or empty range.
func setRange(a *gplot.Axis, lo, hi, margin float64) {
	if math.IsInf(lo, 0) || math.IsInf(hi, 0) || math.IsNaN(lo) || math.IsNaN(hi) {
		lo, hi = 0, 1
	}
	span := hi - lo
	if span <= 1e-12*math.Max(math.Abs(lo), math.Abs(hi)) || span == 0 {
		d := math.Max(math.Abs(hi)*0.1, 1e-9)
		if hi == 0 {
			d = 1
		}
		lo, hi, span = lo-d, hi+d, 2*d
	}
	a.Min, a.Max = lo-margin*span, hi+margin*span
}

// key is an entry of a figure's own legend.
type key struct {
	label string
	color color.Color
	dash  []vg.Length
}

// keyRows splits legend entries into rows that fit width.
func keyRows(width vg.Length, keys []key) [][]key {
	sty := textStyle(sizeSmall, ink)
	var rows [][]key
	var row []key
	var used vg.Length
	for _, k := range keys {
		w := vg.Points(34) + sty.Width(k.label)
		if len(row) > 0 && used+w > width {
			rows, row, used = append(rows, row), nil, 0
		}
		row = append(row, k)
		used += w
	}
	if len(row) > 0 {
		rows = append(rows, row)
	}
	return rows
}

// keyLine is the height of one row of legend entries.
func keyLine() vg.Length { return textStyle(sizeSmall, ink).Height("M") + vg.Points(4) }

// drawKeys draws rows of legend entries (a short line and its label), the
// first row's top at top-left pt, wrapping within width; it returns the
// height used.
func drawKeys(c draw.Canvas, pt vg.Point, width vg.Length, keys []key) vg.Length {
	sty := textStyle(sizeSmall, ink)
	asc := sty.FontExtents().Ascent
	rows := keyRows(width, keys)
	for r, row := range rows {
		x := pt.X
		base := pt.Y - asc - vg.Length(r)*keyLine()
		for _, k := range row {
			line := draw.LineStyle{Color: k.color, Width: vg.Points(2), Dashes: k.dash}
			y := base + asc*0.35
			c.StrokeLine2(line, x, y, x+vg.Points(16), y)
			x += vg.Points(20)
			c.FillText(sty, vg.Point{X: x, Y: base}, k.label)
			x += sty.Width(k.label) + vg.Points(14)
		}
	}
	return vg.Length(len(rows)) * keyLine()
}

// linesOf returns a line plotter over xs, ys in colour c, split at NaNs.
func linesOf(xs, ys []float64, c color.Color, width float64, dash []vg.Length) []gplot.Plotter {
	var out []gplot.Plotter
	var seg []float64
	flush := func() {
		if len(seg) >= 2 {
			out = append(out, &polyline{xy: seg, sty: draw.LineStyle{Color: c, Width: vg.Points(width), Dashes: dash}})
		}
		seg = nil
	}
	for k := range xs {
		if math.IsNaN(ys[k]) || math.IsInf(ys[k], 0) || math.IsNaN(xs[k]) {
			flush()
			continue
		}
		seg = append(seg, xs[k], ys[k])
	}
	flush()
	return out
}

// polyline is a light line plotter on interleaved x, y data.
type polyline struct {
	xy  []float64
	sty draw.LineStyle
}

func (l *polyline) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	pts := make([]vg.Point, len(l.xy)/2)
	for k := range pts {
		pts[k] = vg.Point{X: trX(l.xy[2*k]), Y: trY(l.xy[2*k+1])}
	}
	// Stroke in short pieces: the PNG rasterizer's cost grows with the
	// square of the cells one path covers, and a chopping envelope covers
	// many.
	const piece = 48
	for _, line := range c.ClipLinesXY(pts) {
		for a := 0; a < len(line)-1; a += piece {
			c.StrokeLines(l.sty, line[a:min(len(line), a+piece+1)])
		}
	}
}

// extent returns the finite minimum and maximum of vs.
func extent(vs ...[]float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range vs {
		for _, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				continue
			}
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	return lo, hi
}

// single returns a figure of one plot with a title and an optional key row.
func single(title string, w, h vg.Length, p *gplot.Plot, keys []key) *Figure {
	var row func(c draw.Canvas, at vg.Point, width vg.Length) vg.Length
	if len(keys) > 0 {
		row = func(c draw.Canvas, at vg.Point, width vg.Length) vg.Length { return drawKeys(c, at, width, keys) }
	}
	return titled(title, w, h, p, row)
}

// titled returns a figure of one plot below its title and, when row is
// not nil, a row the function draws (keys, a legend) returning its height.
func titled(title string, w, h vg.Length, p *gplot.Plot, row func(c draw.Canvas, at vg.Point, width vg.Length) vg.Length) *Figure {
	return &Figure{Width: w, Height: h, Title: title, draw: func(c draw.Canvas) {
		pad := vg.Points(8)
		c = draw.Crop(c, pad, -pad, pad, -pad)
		top := c.Max.Y
		ts := textStyle(sizeTitle, ink)
		ts.YAlign = draw.YTop
		c.FillText(ts, vg.Point{X: c.Min.X, Y: top}, title)
		top -= ts.Height(title) + vg.Points(4)
		if row != nil {
			top -= row(c, vg.Point{X: c.Min.X + vg.Points(4), Y: top}, c.Max.X-c.Min.X) + vg.Points(2)
		}
		c.Max.Y = top
		p.Draw(c)
	}}
}
