package scenario

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/colbridge/colbridge/conserve"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// fieldPlot names one map to draw: a variable's slab at a time index and level.
type fieldPlot struct {
	file, name string
	mesh       *grids.Mesh
	levels     int // levels of the variable (0 for 2-D)
	time, k    int
	title      string
	label      string
	diverging  bool
	out        string
}

// writePlots draws the demo's maps and the ledger into dir and returns the file names.
func writePlots(dir string, plots []fieldPlot, rows []LedgerRow) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	var files []string
	for _, p := range plots {
		vals, err := slab(p.file, p.name, p.mesh.NumCells(), p.levels, p.time, p.k)
		if err != nil {
			return nil, err
		}
		png, err := conserve.FieldMapPNG(p.mesh, vals, p.title, p.label, p.diverging)
		if err != nil {
			return nil, err
		}
		if err := os.WriteFile(filepath.Join(dir, p.out), png, 0o644); err != nil {
			return nil, err
		}
		files = append(files, p.out)
	}
	png, err := ledgerPlot(rows)
	if err != nil {
		return nil, err
	}
	if err := os.WriteFile(filepath.Join(dir, "ledger.png"), png, 0o644); err != nil {
		return nil, err
	}
	return append(files, "ledger.png"), nil
}

// slab reads level k at time index t of a (time, [level,] cell) variable.
func slab(path, name string, n, levels, t, k int) ([]float64, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	x := make([]float64, n)
	start, count := []int{t, 0}, []int{1, n}
	if levels > 0 {
		start, count = []int{t, k, 0}, []int{1, 1, n}
	}
	return x, f.ReadFloat64s(name, start, count, x)
}

// ledgerPlot draws |relative change| of every ledger quantity against the time of day,
// on a logarithmic axis: the kept quantities sit at rounding level (~1e-16), the others
// show what the maps do to them.
func ledgerPlot(rows []LedgerRow) ([]byte, error) {
	p := plot.New()
	p.Title.Text = "Conservation ledger: |relative change| across each coupling step"
	p.X.Label.Text = "time of day (hours)"
	p.Y.Label.Text = "|after − before| / |before|"
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = decades{}
	p.Add(plotter.NewGrid())
	// The legend sits in the empty middle band, between the exact quantities (near 1e-16)
	// and the ones the maps change (percent level).
	p.Legend.Top = false
	p.Legend.Left = false
	p.Legend.XOffs = -2 * vg.Millimeter
	p.Legend.YOffs = 22 * vg.Millimeter
	floor := 1e-17 // exact zeros are drawn here
	series := map[string]plotter.XYs{}
	var order []string
	for _, r := range rows {
		key := r.Quantity + " (" + r.Step + ")"
		if _, ok := series[key]; !ok {
			order = append(order, key)
		}
		series[key] = append(series[key], plotter.XY{X: r.Hour, Y: math.Max(math.Abs(r.Change()), floor)})
	}
	palette := []color.RGBA{{20, 60, 160, 255}, {200, 90, 40, 255}, {40, 140, 60, 255}, {150, 40, 150, 255}, {90, 90, 90, 255}}
	for i, key := range order {
		l, pts, err := plotter.NewLinePoints(series[key])
		if err != nil {
			return nil, err
		}
		c := palette[i%len(palette)]
		l.Color, pts.Color = c, c
		l.Width = vg.Points(1.5)
		pts.Shape = shapes[i%len(shapes)]
		p.Add(l, pts)
		p.Legend.Add(key, l, pts)
	}
	p.Y.Min, p.Y.Max = floor/2, 1
	p.X.Min, p.X.Max = -1, 25
	var buf bytes.Buffer
	wt, err := p.WriterTo(18*vg.Centimeter, 11*vg.Centimeter, "png")
	if err != nil {
		return nil, err
	}
	if _, err := wt.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("ledger plot: %w", err)
	}
	return buf.Bytes(), nil
}

var shapes = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.TriangleGlyph{}, draw.SquareGlyph{}, draw.CrossGlyph{}, draw.RingGlyph{}}

// decades labels every second power of ten ("1e-16", "1e-14" ...) and marks the others.
type decades struct{}

func (decades) Ticks(lo, hi float64) []plot.Tick {
	var ts []plot.Tick
	for e := int(math.Floor(math.Log10(lo))); e <= int(math.Ceil(math.Log10(hi))); e++ {
		v := math.Pow(10, float64(e))
		if v < lo || v > hi {
			continue
		}
		label := ""
		if e%2 == 0 {
			label = fmt.Sprintf("1e%d", e)
		}
		ts = append(ts, plot.Tick{Value: v, Label: label})
	}
	return ts
}
