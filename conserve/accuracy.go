package conserve

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// ErrorNorms are the normalised global errors of Williamson et al. (1992, J. Comput.
// Phys. 102:211–224, section 3), with I[·] the measure-weighted sum over the checked
// cells:
//
//	l1 = I[|h − h_T|] / I[|h_T|]
//	l2 = √I[(h − h_T)²] / √I[h_T²]
//	l∞ = max|h − h_T| / max|h_T|
type ErrorNorms struct {
	L1   float64 `json:"l1"`
	L2   float64 `json:"l2"`
	LInf float64 `json:"linf"`
	// LInfAt is the index where |h − h_T| is largest (−1 when nothing was checked).
	LInfAt int `json:"linf_at"`
}

// Norms returns the Williamson et al. (1992) error norms of h against the truth hT with
// measures m over the entries where covered is true (nil: all), using compensated sums.
// A zero denominator leaves the norm as the unnormalised error. It panics on length
// mismatch.
func Norms(h, hT, m []float64, covered []bool) ErrorNorms {
	if len(h) != len(hT) || len(m) != len(h) || (covered != nil && len(covered) != len(h)) {
		panic("conserve: Norms: lengths differ")
	}
	var e1, t1, e2, t2 weights.Accumulator
	var emax, tmax float64
	at := -1
	for i := range h {
		if covered != nil && !covered[i] {
			continue
		}
		d := math.Abs(h[i] - hT[i])
		e1.Add(m[i] * d)
		t1.Add(m[i] * math.Abs(hT[i]))
		e2.Add(m[i] * d * d)
		t2.Add(m[i] * hT[i] * hT[i])
		if d > emax || at < 0 {
			emax, at = d, i
		}
		tmax = math.Max(tmax, math.Abs(hT[i]))
	}
	ratio := func(a, b float64) float64 {
		if b > 0 {
			return a / b
		}
		return a
	}
	return ErrorNorms{
		L1:     ratio(e1.Sum(), t1.Sum()),
		L2:     ratio(math.Sqrt(math.Max(e2.Sum(), 0)), math.Sqrt(math.Max(t2.Sum(), 0))),
		LInf:   ratio(emax, tmax),
		LInfAt: at,
	}
}

// FieldAccuracy is the accuracy of a map on one analytic field.
type FieldAccuracy struct {
	Name string `json:"name"`
	ErrorNorms
}

// AccuracyReport is check 7: the map applied to exact source cell means of analytic
// fields, compared with exact target cell means.
type AccuracyReport struct {
	// Quadrature is the Gauss–Legendre order per direction of the exact cell means.
	Quadrature int `json:"quadrature"`
	// SampledTargets is the number of targets the norms were computed on: all covered
	// targets, or an evenly spaced sample of them on large maps (see Options).
	SampledTargets int             `json:"sampled_targets"`
	Fields         []FieldAccuracy `json:"fields"`
	// MaxL1, MaxL2 and MaxLInf are the largest norms over the fields.
	MaxL1   float64 `json:"max_l1"`
	MaxL2   float64 `json:"max_l2"`
	MaxLInf float64 `json:"max_linf"`

	// errorMap is (W f − f_T)/max|f_T| on the targets for the first field (for a plot),
	// errorField its name.
	errorMap   []float64
	errorField string
}

// LocalError returns the local error (W f − f_T)/max|f_T| of the first field on the
// targets (NaN where not checked), and the field's name.
func (a *AccuracyReport) LocalError() ([]float64, string) { return a.errorMap, a.errorField }

// CheckAccuracy applies w (target × source) to the exact cell means of each field on the
// source mesh and compares with the exact cell means on the target mesh, weighting by
// the target measures mt over the covered targets (nil: all). n is the quadrature order.
// sample > 0 limits the check to every k-th covered target, k = ⌈covered/sample⌉, and to
// the sources their rows use: the norms are then estimates over an evenly spread sample
// (l∞ normalised by the sample's largest value) and the exact means cost in proportion
// to the sample, not the map.
func CheckAccuracy(w *weights.CSR, src, tgt *grids.Mesh, mt []float64, covered []bool, fields []TestField, n, sample int) (*AccuracyReport, error) {
	if src.NumCells() != w.Cols || tgt.NumCells() != w.Rows {
		return nil, fmt.Errorf("accuracy: map is %d × %d but the meshes have %d target and %d source cells", w.Rows, w.Cols, tgt.NumCells(), src.NumCells())
	}
	rep := &AccuracyReport{Quadrature: n}
	// The targets checked, and the sources their rows use.
	var rows, cols []int32
	nCovered := 0
	for t := 0; t < w.Rows; t++ {
		if covered == nil || covered[t] {
			nCovered++
		}
	}
	stride := 1
	if sample > 0 && nCovered > sample {
		stride = (nCovered + sample - 1) / sample
	}
	use := make([]bool, w.Rows)
	k := 0
	for t := 0; t < w.Rows; t++ {
		if covered == nil || covered[t] {
			if k%stride == 0 {
				use[t] = true
				rows = append(rows, int32(t))
			}
			k++
		}
	}
	rep.SampledTargets = len(rows)
	if stride > 1 {
		mark := make([]bool, w.Cols)
		for _, t := range rows {
			for p := w.RowStart[t]; p < w.RowStart[t+1]; p++ {
				if c := w.ColIndex[p]; !mark[c] {
					mark[c] = true
					cols = append(cols, c)
				}
			}
		}
	} else {
		rows = nil
	}
	fs := make([]float64, w.Cols)
	ft := make([]float64, w.Rows)
	h := make([]float64, w.Rows)
	for i, f := range fields {
		if err := cellMeansOf(fs, src, cols, f.Eval, n); err != nil {
			return nil, fmt.Errorf("accuracy: field %s: %w", f.Name, err)
		}
		if err := cellMeansOf(ft, tgt, rows, f.Eval, n); err != nil {
			return nil, fmt.Errorf("accuracy: field %s: %w", f.Name, err)
		}
		w.ApplyTo(h, fs)
		en := Norms(h, ft, mt, use)
		rep.Fields = append(rep.Fields, FieldAccuracy{Name: f.Name, ErrorNorms: en})
		rep.MaxL1 = math.Max(rep.MaxL1, en.L1)
		rep.MaxL2 = math.Max(rep.MaxL2, en.L2)
		rep.MaxLInf = math.Max(rep.MaxLInf, en.LInf)
		if i == 0 {
			tmax := 0.0
			for t, v := range ft {
				if use[t] {
					tmax = math.Max(tmax, math.Abs(v))
				}
			}
			if tmax == 0 {
				tmax = 1
			}
			rep.errorMap = make([]float64, w.Rows)
			rep.errorField = f.Name
			for t := range h {
				rep.errorMap[t] = math.NaN()
				if use[t] {
					rep.errorMap[t] = (h[t] - ft[t]) / tmax
				}
			}
		}
	}
	return rep, nil
}

// MeanCellSize returns √(total area / cells), the grid length of a mesh.
func MeanCellSize(m *grids.Mesh) float64 {
	return math.Sqrt(m.TotalArea() / float64(m.NumCells()))
}

// ObservedOrder returns the least-squares slope of log(err) against log(h) over the
// points with err > 0 and h > 0, and whether at least two such points with different h
// exist. For err ≈ C·h^p it returns p.
func ObservedOrder(h, err []float64) (float64, bool) {
	if len(h) != len(err) {
		panic("conserve: ObservedOrder: lengths differ")
	}
	var xs, ys []float64
	for i := range h {
		if h[i] > 0 && err[i] > 0 && !math.IsInf(err[i], 0) {
			xs = append(xs, math.Log(h[i]))
			ys = append(ys, math.Log(err[i]))
		}
	}
	if len(xs) < 2 {
		return 0, false
	}
	var mx, my float64
	for i := range xs {
		mx += xs[i]
		my += ys[i]
	}
	mx /= float64(len(xs))
	my /= float64(len(xs))
	var sxy, sxx float64
	for i := range xs {
		sxy += (xs[i] - mx) * (ys[i] - my)
		sxx += (xs[i] - mx) * (xs[i] - mx)
	}
	if sxx == 0 {
		return 0, false
	}
	return sxy / sxx, true
}

// ConvergenceLevel is the accuracy of one map of a family at grid length H.
type ConvergenceLevel struct {
	H      float64
	Fields []FieldAccuracy
}

// FieldConvergence is the convergence of one field over a family of resolutions.
type FieldConvergence struct {
	Name string    `json:"name"`
	H    []float64 `json:"h"`
	L1   []float64 `json:"l1"`
	L2   []float64 `json:"l2"`
	LInf []float64 `json:"linf"`
	// OrderL1, OrderL2 and OrderLInf are the observed orders (least-squares slopes of
	// log error against log h); null when fewer than two levels have a non-zero error.
	OrderL1   *float64 `json:"order_l1"`
	OrderL2   *float64 `json:"order_l2"`
	OrderLInf *float64 `json:"order_linf"`
}

// ConvergenceReport is the observed convergence order over a family of maps.
type ConvergenceReport struct {
	Fields []FieldConvergence `json:"fields"`
}

// Convergence collects the levels (any order of H) into per-field series and fits the
// observed orders. Fields are matched by name; a field missing from a level is skipped
// there.
func Convergence(levels []ConvergenceLevel) *ConvergenceReport {
	var names []string
	byName := map[string]*FieldConvergence{}
	for _, lv := range levels {
		for _, f := range lv.Fields {
			fc, ok := byName[f.Name]
			if !ok {
				fc = &FieldConvergence{Name: f.Name}
				byName[f.Name] = fc
				names = append(names, f.Name)
			}
			fc.H = append(fc.H, lv.H)
			fc.L1 = append(fc.L1, f.L1)
			fc.L2 = append(fc.L2, f.L2)
			fc.LInf = append(fc.LInf, f.LInf)
		}
	}
	rep := &ConvergenceReport{}
	order := func(h, e []float64) *float64 {
		if p, ok := ObservedOrder(h, e); ok {
			return &p
		}
		return nil
	}
	for _, n := range names {
		fc := byName[n]
		fc.OrderL1, fc.OrderL2, fc.OrderLInf = order(fc.H, fc.L1), order(fc.H, fc.L2), order(fc.H, fc.LInf)
		rep.Fields = append(rep.Fields, *fc)
	}
	return rep
}
