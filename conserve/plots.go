package conserve

import (
	"bytes"
	"fmt"
	"github.com/colbridge/colbridge/grids"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Plot is one rendered figure of a report.
type Plot struct {
	// File is the base name ("damping.png" ...), Title a short title and Caption one
	// sentence saying how to read it.
	File, Title, Caption string
	// PNG holds the encoded image.
	PNG []byte
}

// plot sizes and colours shared by the figures.
const (
	plotW = 16 * vg.Centimeter
	plotH = 10 * vg.Centimeter
	dpi   = 110
)

var (
	colModes = color.RGBA{R: 150, G: 170, B: 210, A: 255}
	colMean  = color.RGBA{R: 20, G: 60, B: 160, A: 255}
	colRef   = color.RGBA{R: 120, G: 120, B: 120, A: 255}
	colBar   = color.RGBA{R: 70, G: 110, B: 190, A: 255}
	colAlt   = color.RGBA{R: 200, G: 90, B: 40, A: 255}
)

// Plots renders the figures the report has data for: the damping response, the
// histogram of conservation defects, the map of the local error on the target mesh, the
// noise spectrum and the worst invisible mode. Figures without data are left out.
func Plots(r *Report) ([]Plot, error) {
	var out []Plot
	type maker func(*Report) (*Plot, error)
	for _, mk := range []maker{plotDamping, plotDefects, plotErrorMap, plotSpectrum, plotNullMode} {
		p, err := mk(r)
		if err != nil {
			return nil, err
		}
		if p != nil {
			out = append(out, *p)
		}
	}
	return out, nil
}

func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = vg.Points(13)
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	p.Add(plotter.NewGrid())
	p.Legend.Top = true
	return p
}

func render(p *plot.Plot) ([]byte, error) {
	c := vgimg.NewWith(vgimg.UseWH(plotW, plotH), vgimg.UseDPI(dpi))
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("audit plot %q: %w", p.Title.Text, err)
	}
	return buf.Bytes(), nil
}

// logTicks labels a log axis with powers of ten (and 2, 5 between them when the range
// is short).
type logTicks struct{}

func (logTicks) Ticks(lo, hi float64) []plot.Tick {
	var ts []plot.Tick
	a, b := math.Floor(math.Log10(lo)), math.Ceil(math.Log10(hi))
	short := b-a <= 2
	for e := a; e <= b; e++ {
		for _, m := range []float64{1, 2, 3, 5} {
			v := m * math.Pow(10, e)
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			label := ""
			if m == 1 || short {
				label = fmt.Sprintf("%g", v)
			}
			if m != 1 && !short && m != 3 {
				continue
			}
			ts = append(ts, plot.Tick{Value: v, Label: label})
		}
	}
	return ts
}

func plotDamping(r *Report) (*Plot, error) {
	switch {
	case r.Fourier != nil:
		f := r.Fourier
		p := newPlot("Damping by the round trip R = P·W (exact Fourier analysis)", "wavelength (grid lengths)", "amplitude kept")
		var pts plotter.XYs
		for _, m := range f.modes {
			if !math.IsInf(m.Wavelength, 0) {
				pts = append(pts, plotter.XY{X: m.Wavelength, Y: m.Value})
			}
		}
		if len(pts) == 0 {
			return nil, nil
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Color = colModes
		sc.GlyphStyle.Radius = vg.Points(2)
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		var mean plotter.XYs
		for _, b := range f.Damping {
			mean = append(mean, plotter.XY{X: math.Sqrt(b.WavelengthMin * b.WavelengthMax), Y: b.ResponseMean})
		}
		ln, err := plotter.NewLine(mean)
		if err != nil {
			return nil, err
		}
		ln.Color, ln.Width = colMean, vg.Points(2)
		p.Add(sc, ln)
		p.Legend.Add("each Fourier mode", sc)
		p.Legend.Add("mean per √2 band", ln)
		addLimits(p, f.GridWavelength, f.SmoothWavelength, 0, 1.05)
		p.Legend.Top = false
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, logTicks{}
		p.Y.Min, p.Y.Max = 0, 1.1
		png, err := render(p)
		if err != nil {
			return nil, err
		}
		return &Plot{File: "damping.png", Title: "Damping response",
			Caption: "Amplitude of each Fourier mode kept by the round trip, against its wavelength; dashed lines mark the grid-scale (≤ 3) and smooth (≥ 8) limits.",
			PNG:     png}, nil
	case r.SphereNoise != nil && len(r.SphereNoise.Damping) > 0:
		s := r.SphereNoise
		p := newPlot("Damping by the round trip R = P·W (zonal harmonics)", "wavelength 2πR/√(l(l+1)) (grid lengths)", "amplitude kept  <Rf, f> / <f, f>")
		var pts plotter.XYs
		for _, d := range s.Damping {
			pts = append(pts, plotter.XY{X: d.Wavelength, Y: d.Response})
		}
		ln, sc, err := plotter.NewLinePoints(pts)
		if err != nil {
			return nil, err
		}
		ln.Color, sc.Color = colMean, colMean
		sc.Radius = vg.Points(2)
		p.Add(ln, sc)
		p.Legend.Add("mean over random axes, per degree l", ln, sc)
		addLimits(p, 3, 8, 0, 1.05)
		p.Legend.Top = false
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, logTicks{}
		p.Y.Min = math.Min(0, p.Y.Min)
		png, err := render(p)
		if err != nil {
			return nil, err
		}
		return &Plot{File: "damping.png", Title: "Damping response",
			Caption: "Amplitude of zonal harmonics P_l(n·x) kept by the round trip, against wavelength; dashed lines mark 3 and 8 grid lengths.",
			PNG:     png}, nil
	}
	return nil, nil
}

// addLimits draws dashed vertical lines at the grid-scale and smooth wavelengths, with
// one legend entry.
func addLimits(p *plot.Plot, grid, smooth, ylo, yhi float64) {
	var last *plotter.Line
	for _, x := range []float64{grid, smooth} {
		l, err := plotter.NewLine(plotter.XYs{{X: x, Y: ylo}, {X: x, Y: yhi}})
		if err != nil {
			continue
		}
		l.Color, l.Dashes = colRef, []vg.Length{vg.Points(4), vg.Points(3)}
		p.Add(l)
		last = l
	}
	if last != nil {
		p.Legend.Add(fmt.Sprintf("limits %g (grid scale) and %g (smooth)", grid, smooth), last)
	}
}

func plotDefects(r *Report) (*Plot, error) {
	c := r.Conservation
	if c == nil || c.Checked == 0 {
		return nil, nil
	}
	h := c.Histogram
	k := newHistogram(r.Consistency.Defects)
	p := newPlot("Defects of the column sums (conservation) and row sums (consistency)", "log10 |defect|", "number of degrees of freedom")
	// Bar i sits at the centre of its decade; exact zeros get their own bar at zeroX.
	zeroX := h.Log10Edges[0] - 1.5
	var cons, rows plotter.XYs
	cons = append(cons, plotter.XY{X: zeroX - 0.2, Y: float64(h.Zero)})
	rows = append(rows, plotter.XY{X: zeroX + 0.2, Y: float64(k.Zero)})
	top := float64(max(h.Zero, k.Zero))
	for i := range h.Counts {
		x := (h.Log10Edges[i] + h.Log10Edges[i+1]) / 2
		cons = append(cons, plotter.XY{X: x - 0.2, Y: float64(h.Counts[i])})
		rows = append(rows, plotter.XY{X: x + 0.2, Y: float64(k.Counts[i])})
		top = math.Max(top, float64(max(h.Counts[i], k.Counts[i])))
	}
	bc, err := bars(cons, colBar)
	if err != nil {
		return nil, err
	}
	br, err := bars(rows, colAlt)
	if err != nil {
		return nil, err
	}
	p.Add(bc, br)
	p.Legend.Add(fmt.Sprintf("sources: |c_s - 1|, max %.2e", c.MaxDefect), bc)
	p.Legend.Add(fmt.Sprintf("targets: |row sum - 1|, max %.2e", r.Consistency.MaxDefect), br)
	p.X.Min, p.X.Max = zeroX-0.8, h.Log10Edges[len(h.Log10Edges)-1]
	ticks := []plot.Tick{{Value: zeroX, Label: "= 0"}}
	for _, e := range h.Log10Edges {
		label := ""
		if int(math.Abs(e))%2 == 1 {
			label = fmt.Sprintf("%g", e)
		}
		ticks = append(ticks, plot.Tick{Value: e, Label: label})
	}
	p.X.Tick.Marker = plot.ConstantTicks(ticks)
	p.Y.Min, p.Y.Max = 0, math.Max(1, top*1.3)
	p.Y.Tick.Marker = integerTicks{}
	png, err := render(p)
	if err != nil {
		return nil, err
	}
	return &Plot{File: "defects.png", Title: "Conservation and consistency defects",
		Caption: "How many source cells have a column-sum defect |c_s − 1| in each decade (blue), and how many targets a row-sum defect (orange); the left pair counts exact zeros. Rounding of unit sums sits near 1e-16.",
		PNG:     png}, nil
}

// integerTicks labels an axis of counts with whole numbers only.
type integerTicks struct{}

func (integerTicks) Ticks(lo, hi float64) []plot.Tick {
	var ts []plot.Tick
	for _, t := range (plot.DefaultTicks{}).Ticks(lo, hi) {
		if t.Label != "" {
			if t.Value != math.Trunc(t.Value) {
				continue
			}
			t.Label = fmt.Sprintf("%d", int64(t.Value))
		}
		ts = append(ts, t)
	}
	return ts
}

// decadeTicks labels a wide log axis with powers of ten, every k-th decade so that at
// most 8 are labelled.
type decadeTicks struct{}

func (decadeTicks) Ticks(lo, hi float64) []plot.Tick {
	a, b := int(math.Floor(math.Log10(lo))), int(math.Ceil(math.Log10(hi)))
	step := max(1, (b-a+7)/8)
	var ts []plot.Tick
	for e := a; e <= b; e++ {
		label := ""
		if (e-a)%step == 0 {
			label = fmt.Sprintf("1e%d", e)
		}
		ts = append(ts, plot.Tick{Value: math.Pow(10, float64(e)), Label: label})
	}
	return ts
}

// bars draws one bar per point, 0.4 wide, centred on X.
func bars(pts plotter.XYs, col color.Color) (*plotter.Polygon, error) {
	var rings []plotter.XYer
	for _, pt := range pts {
		if pt.Y <= 0 {
			continue
		}
		rings = append(rings, plotter.XYs{{X: pt.X - 0.2, Y: 0}, {X: pt.X + 0.2, Y: 0}, {X: pt.X + 0.2, Y: pt.Y}, {X: pt.X - 0.2, Y: pt.Y}})
	}
	if len(rings) == 0 {
		rings = append(rings, plotter.XYs{{X: 0, Y: 0}, {X: 0, Y: 0}, {X: 0, Y: 0}})
	}
	pg, err := plotter.NewPolygon(rings...)
	if err != nil {
		return nil, err
	}
	pg.Color = col
	pg.LineStyle.Width = 0
	return pg, nil
}

// cellFill is a plotter that fills each cell polygon with its colour, drawing copies
// shifted by the periods so that cells crossing the date line (or a periodic boundary)
// show on both sides.
type cellFill struct {
	pts  *meshPoints
	cols []color.Color // nil entries are not drawn
}

func (f *cellFill) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	var buf []vg.Point
	for i, poly := range f.pts.polys {
		if f.cols[i] == nil || len(poly) < 3 {
			continue
		}
		lo, hi := poly[0], poly[0]
		for _, q := range poly {
			lo[0], hi[0] = math.Min(lo[0], q[0]), math.Max(hi[0], q[0])
			lo[1], hi[1] = math.Min(lo[1], q[1]), math.Max(hi[1], q[1])
		}
		for _, sh := range f.shifts(lo, hi) {
			buf = buf[:0]
			for _, q := range poly {
				buf = append(buf, vg.Point{X: trX(q[0] + sh[0]), Y: trY(q[1] + sh[1])})
			}
			c.FillPolygon(f.cols[i], c.ClipPolygonXY(buf))
		}
	}
}

// shifts returns the offsets at which a polygon with bounding box lo–hi must be drawn.
func (f *cellFill) shifts(lo, hi [2]float64) [][2]float64 {
	out := [][2]float64{{0, 0}}
	xmin, xmax, ymin, ymax := f.DataRange()
	if px := f.pts.px; px > 0 {
		if hi[0] > xmax {
			out = append(out, [2]float64{-px, 0})
		}
		if lo[0] < xmin {
			out = append(out, [2]float64{px, 0})
		}
	}
	if py := f.pts.py; py > 0 {
		n := len(out)
		for _, o := range out[:n] {
			if hi[1] > ymax {
				out = append(out, [2]float64{o[0], -py})
			}
			if lo[1] < ymin {
				out = append(out, [2]float64{o[0], py})
			}
		}
	}
	return out
}

func (f *cellFill) DataRange() (xmin, xmax, ymin, ymax float64) {
	if f.pts.sphere {
		return -180, 180, -90, 90
	}
	xmin, xmax, ymin, ymax = math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := range f.pts.x {
		xmin, xmax = math.Min(xmin, f.pts.x[i]), math.Max(xmax, f.pts.x[i])
		ymin, ymax = math.Min(ymin, f.pts.y[i]), math.Max(ymax, f.pts.y[i])
	}
	if f.pts.px > 0 {
		xmin, xmax = 0, f.pts.px
	}
	if f.pts.py > 0 {
		ymin, ymax = 0, f.pts.py
	}
	return xmin, xmax, ymin, ymax
}

// mapPlot fills the cells with a diverging colour scale centred on zero and adds a
// colour bar titled label.
func mapPlot(title, label string, pts *meshPoints, vals []float64) ([]byte, error) {
	amp := 0.0
	for _, v := range vals {
		if !math.IsNaN(v) {
			amp = math.Max(amp, math.Abs(v))
		}
	}
	if amp == 0 {
		amp = 1
	}
	return mapPlotRange(title, label, pts, vals, -amp, amp)
}

// FieldMapPNG draws a cell field on its mesh (longitude–latitude on the sphere, x–y on the
// plane), each cell filled with its value's colour, and returns the PNG. With diverging
// the colour scale is centred on zero (for increments and errors); otherwise it runs from
// the field's minimum to its maximum. NaN values are left blank.
func FieldMapPNG(m *grids.Mesh, vals []float64, title, label string, diverging bool) ([]byte, error) {
	if len(vals) != m.NumCells() {
		return nil, fmt.Errorf("field map %q: %d values for %d cells", title, len(vals), m.NumCells())
	}
	if diverging {
		return mapPlot(title, label, pointsOf(m), vals)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		if !math.IsNaN(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if !(hi > lo) {
		lo, hi = lo-1, lo+1
	}
	return mapPlotRange(title, label, pointsOf(m), vals, lo, hi)
}

// mapPlotRange is mapPlot with the colour scale from lo to hi.
func mapPlotRange(title, label string, pts *meshPoints, vals []float64, lo, hi float64) ([]byte, error) {
	cm := moreland.SmoothBlueRed()
	cm.SetMin(lo)
	cm.SetMax(hi)
	xl, yl := "x", "y"
	if pts.sphere {
		xl, yl = "longitude (degrees)", "latitude (degrees)"
	}
	p := newPlot(title, xl, yl)
	cols := make([]color.Color, len(vals))
	any := false
	for i, v := range vals {
		if math.IsNaN(v) {
			continue
		}
		c, err := cm.At(v)
		if err != nil {
			c = color.Black
		}
		cols[i], any = c, true
	}
	if !any {
		return nil, nil
	}
	fill := &cellFill{pts: pts, cols: cols}
	p.Add(fill)
	xmin, xmax, ymin, ymax := fill.DataRange()
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = xmin, xmax, ymin, ymax
	if pts.sphere {
		p.X.Tick.Marker = plot.ConstantTicks(degreeTicks(-180, 180, 60))
		p.Y.Tick.Marker = plot.ConstantTicks(degreeTicks(-90, 90, 30))
	}
	bar := plot.New()
	bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true})
	bar.HideX()
	bar.Y.Padding = 0
	bar.Title.Text = label
	bar.Title.TextStyle.Font.Size = vg.Points(10)

	c := vgimg.NewWith(vgimg.UseWH(plotW, plotH), vgimg.UseDPI(dpi))
	dc := draw.New(c)
	barW := 2.8 * vg.Centimeter
	p.Draw(draw.Crop(dc, 0, -barW, 0, 0))
	bar.Draw(draw.Crop(dc, plotW-barW+0.4*vg.Centimeter, -0.2*vg.Centimeter, 0.5*vg.Centimeter, -0.3*vg.Centimeter))
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("audit plot %q: %w", title, err)
	}
	return buf.Bytes(), nil
}

func degreeTicks(lo, hi, step float64) []plot.Tick {
	var ts []plot.Tick
	for v := lo; v <= hi+1e-9; v += step {
		ts = append(ts, plot.Tick{Value: v, Label: fmt.Sprintf("%g", v)})
	}
	return ts
}

func plotErrorMap(r *Report) (*Plot, error) {
	a := r.Accuracy
	if a == nil || a.errorMap == nil || r.targetPoints() == nil {
		return nil, nil
	}
	png, err := mapPlot(fmt.Sprintf("Local error on target cells, field %q", a.errorField),
		"error / max|f|", r.targetPoints(), a.errorMap)
	if err != nil || png == nil {
		return nil, err
	}
	return &Plot{File: "error_map.png", Title: "Local error",
		Caption: "Mapped minus exact target cell mean, divided by the field's largest |value|, at each target cell centroid (red above, blue below).",
		PNG:     png}, nil
}

func plotSpectrum(r *Report) (*Plot, error) {
	f := r.Fourier
	if f == nil {
		return nil, nil
	}
	var pts plotter.XYs
	floor := 1e-16
	for _, m := range f.spectrum {
		if math.IsInf(m.Wavelength, 0) {
			continue
		}
		pts = append(pts, plotter.XY{X: m.Wavelength, Y: math.Max(m.Value, floor)})
	}
	if len(pts) == 0 {
		return nil, nil
	}
	p := newPlot("Noise spectrum: where smooth inputs (wavelength ≥ 8) end up", "output wavelength (grid lengths)", "amplitude received")
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, err
	}
	sc.GlyphStyle.Color = colAlt
	sc.GlyphStyle.Radius = vg.Points(2)
	p.Add(sc)
	p.Legend.Add("per output mode (values below 1e-16 drawn at 1e-16)", sc)
	addLimits(p, f.GridWavelength, f.SmoothWavelength, floor, 1)
	p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, logTicks{}
	p.Y.Scale, p.Y.Tick.Marker = plot.LogScale{}, decadeTicks{}
	p.Y.Min, p.Y.Max = floor/2, 1e2
	png, err := render(p)
	if err != nil {
		return nil, err
	}
	return &Plot{File: "noise_spectrum.png", Title: "Noise spectrum",
		Caption: "For each output Fourier mode, the largest amplitude any smooth input mode (wavelength ≥ 8 grid lengths) puts into it through the round trip; amplitudes left of the first dashed line are grid-scale noise.",
		PNG:     png}, nil
}

func plotNullMode(r *Report) (*Plot, error) {
	var mode []float64
	what := ""
	switch {
	case r.Fourier != nil && r.Fourier.Symbol != nil && r.Fourier.Symbol.pattern != nil:
		mode = r.Fourier.Symbol.pattern
		what = fmt.Sprintf("smoothest invisible Fourier mode, wavelength %.3g", r.Fourier.Symbol.SmoothestInvisibleWavelength)
	case r.NullSpace != nil && r.NullSpace.mode != nil:
		mode = r.NullSpace.mode
		what = "worst null vector of W"
	default:
		return nil, nil
	}
	if r.sourcePoints() != nil && len(r.sourcePoints().x) == len(mode) {
		png, err := mapPlot("Invisible mode: "+what, "mode value", r.sourcePoints(), mode)
		if err != nil || png == nil {
			return nil, err
		}
		return &Plot{File: "null_mode.png", Title: "Invisible mode",
			Caption: "A pattern on the source cells that the restriction maps to (almost) zero: the physics cannot see it.",
			PNG:     png}, nil
	}
	p := newPlot("Invisible mode of the restriction: "+what, "source index", "mode (max |x| = 1)")
	pts := make(plotter.XYs, len(mode))
	for i, v := range mode {
		pts[i] = plotter.XY{X: float64(i), Y: v}
	}
	ln, sc, err := plotter.NewLinePoints(pts)
	if err != nil {
		return nil, err
	}
	ln.Color, sc.Color = colMean, colMean
	sc.Radius = vg.Points(2)
	p.Add(ln, sc)
	p.Y.Min, p.Y.Max = -1.1, 1.1
	png, err := render(p)
	if err != nil {
		return nil, err
	}
	return &Plot{File: "null_mode.png", Title: "Invisible mode",
		Caption: "The source vector the restriction maps to (almost) zero, by source index (for a vertical map, by level from the bottom).",
		PNG:     png}, nil
}
