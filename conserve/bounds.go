package conserve

import (
	"math"

	"github.com/colbridge/colbridge/internal/par"
	"github.com/colbridge/colbridge/weights"
)

// CheckBounds counts the negative weights and looks for new extrema of each source field
// over the covered targets (nil: all): a target value outside [min, max] of the source
// values its row uses (local) or of all source values (global).
func CheckBounds(w *weights.CSR, covered []bool, fields []NamedVector) BoundsReport {
	r := BoundsReport{MostNegativeRow: -1, MostNegativeCol: -1}
	for i := 0; i < w.Rows; i++ {
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			if v := w.Values[k]; v < 0 {
				r.NegativeWeights++
				if v < r.MostNegative {
					r.MostNegative, r.MostNegativeRow, r.MostNegativeCol = v, i, int(w.ColIndex[k])
				}
			}
		}
	}
	y := make([]float64, w.Rows)
	lo := make([]float64, w.Rows)
	hi := make([]float64, w.Rows)
	for _, f := range fields {
		x := f.Values
		w.ApplyTo(y, x)
		par.For(w.Rows, 0, 1<<14, func(a, b int) {
			for t := a; t < b; t++ {
				l, h := math.Inf(1), math.Inf(-1)
				for k := w.RowStart[t]; k < w.RowStart[t+1]; k++ {
					if w.Values[k] == 0 {
						continue
					}
					v := x[w.ColIndex[k]]
					l, h = math.Min(l, v), math.Max(h, v)
				}
				lo[t], hi[t] = l, h
			}
		})
		fb := FieldBounds{Name: f.Name, MaxLocalAt: -1,
			SourceMin: math.Inf(1), SourceMax: math.Inf(-1), TargetMin: math.Inf(1), TargetMax: math.Inf(-1)}
		scale := 0.0
		for _, v := range x {
			fb.SourceMin, fb.SourceMax = math.Min(fb.SourceMin, v), math.Max(fb.SourceMax, v)
			scale = math.Max(scale, math.Abs(v))
		}
		if scale == 0 {
			scale = 1
		}
		for t, v := range y {
			if (covered != nil && !covered[t]) || w.RowStart[t] == w.RowStart[t+1] {
				continue
			}
			fb.TargetMin, fb.TargetMax = math.Min(fb.TargetMin, v), math.Max(fb.TargetMax, v)
			if over := math.Max(v-hi[t], lo[t]-v) / scale; lo[t] <= hi[t] && over > 0 {
				if over > BoundsTol {
					fb.LocalViolations++
				}
				if over > fb.MaxLocalOvershoot {
					fb.MaxLocalOvershoot, fb.MaxLocalAt = over, t
				}
			}
			if over := math.Max(v-fb.SourceMax, fb.SourceMin-v) / scale; over > 0 {
				if over > BoundsTol {
					fb.GlobalViolations++
				}
				fb.MaxGlobalOvershoot = math.Max(fb.MaxGlobalOvershoot, over)
			}
		}
		if math.IsInf(fb.SourceMin, 0) { // no sources
			fb.SourceMin, fb.SourceMax = 0, 0
		}
		if math.IsInf(fb.TargetMin, 0) { // no checked targets
			fb.TargetMin, fb.TargetMax = 0, 0
		}
		r.Fields = append(r.Fields, fb)
		r.MaxLocalOvershoot = math.Max(r.MaxLocalOvershoot, fb.MaxLocalOvershoot)
		r.MaxGlobalOvershoot = math.Max(r.MaxGlobalOvershoot, fb.MaxGlobalOvershoot)
	}
	return r
}
