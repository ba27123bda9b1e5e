package conserve

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/weights"
)

// Adjoint returns W* = M_s⁻¹ Wᵀ M_t, the adjoint of W (target × source, rows are targets)
// with respect to the inner products ⟨x, x'⟩_s = Σ m_s x x' and ⟨y, y'⟩_t = Σ m_t y y':
// ⟨Wx, y⟩_t = ⟨x, W*y⟩_s for all x, y. Entry (s, t) is W_ts·m_t/m_s, one rounding from
// the exact value; rows with m_s = 0 are zero. Row sums of W* are the conservation sums
// c_s of W, and the conservation sums of W* (with the measures swapped) are the row sums
// of W. It panics if the measure lengths do not match W.
func Adjoint(w *weights.CSR, ms, mt []float64) *weights.CSR {
	if len(ms) != w.Cols || len(mt) != w.Rows {
		panic(fmt.Sprintf("conserve: Adjoint: measures %d, %d for a %d × %d matrix", len(ms), len(mt), w.Rows, w.Cols))
	}
	a := w.T()
	for s := 0; s < a.Rows; s++ {
		for k := a.RowStart[s]; k < a.RowStart[s+1]; k++ {
			if ms[s] > 0 {
				a.Values[k] = a.Values[k] * mt[a.ColIndex[k]] / ms[s]
			} else {
				a.Values[k] = 0
			}
		}
	}
	return a
}

// conservationDefect returns max |Σ_y m_y A_yx / m_x − 1| over the fully covered columns x
// with m_x > 0 (0 when there are none), for A from side x (columns) to side y (rows).
func conservationDefect(a *weights.CSR, mx, my, covx []float64) float64 {
	c := make([]float64, a.Cols)
	ColumnSumsTo(c, a, mx, my)
	d := 0.0
	for x, v := range c {
		if mx[x] > 0 && fullyCovered(covx, x) {
			d = math.Max(d, math.Abs(v-1))
		}
	}
	return d
}

// consistencyDefect returns max |Σ_x A_yx − 1| over the covered rows (nil: all).
func consistencyDefect(a *weights.CSR, covered []bool) float64 {
	s := make([]float64, a.Rows)
	a.RowSumsTo(s)
	d := 0.0
	for y, v := range s {
		if covered == nil || covered[y] {
			d = math.Max(d, math.Abs(v-1))
		}
	}
	return d
}

// PairSides carries the measures and coverages of a restriction's two sides for the pair
// check: the source (dynamics) side S and the target (physics) side T.
type PairSides struct {
	MS, MT     []float64 // measures (required)
	CovS, CovT []float64 // coverages (nil: full)
	// CoveredS and CoveredT select the rows checked for consistency of P and W (nil: all).
	CoveredS, CoveredT []bool
}

// CheckPair compares the prolongation p (source × target) with the adjoint of the
// restriction w (target × source) and reports the four properties and the adjoint
// identity on probes random vector pairs drawn from seed. It panics on size mismatch.
func CheckPair(w, p *weights.CSR, sd PairSides, probes int, seed uint64) PairReport {
	if p.Rows != w.Cols || p.Cols != w.Rows {
		panic(fmt.Sprintf("conserve: CheckPair: prolongation %d × %d for a %d × %d restriction", p.Rows, p.Cols, w.Rows, w.Cols))
	}
	ws := Adjoint(w, sd.MS, sd.MT)
	r := PairReport{MaxEntryRow: -1, MaxEntryCol: -1, Probes: probes}
	var diff, norm, pnorm weights.Accumulator
	for i := 0; i < ws.Rows; i++ {
		a, aEnd := ws.RowStart[i], ws.RowStart[i+1]
		b, bEnd := p.RowStart[i], p.RowStart[i+1]
		for a < aEnd || b < bEnd {
			var d float64
			var j int32
			switch {
			case b >= bEnd || (a < aEnd && ws.ColIndex[a] < p.ColIndex[b]):
				j, d = ws.ColIndex[a], -ws.Values[a]
				norm.Add(ws.Values[a] * ws.Values[a])
				a++
			case a >= aEnd || p.ColIndex[b] < ws.ColIndex[a]:
				j, d = p.ColIndex[b], p.Values[b]
				pnorm.Add(d * d)
				b++
			default:
				j, d = p.ColIndex[b], p.Values[b]-ws.Values[a]
				norm.Add(ws.Values[a] * ws.Values[a])
				pnorm.Add(p.Values[b] * p.Values[b])
				a++
				b++
			}
			diff.Add(d * d)
			if math.Abs(d) > r.MaxEntryDifference {
				r.MaxEntryDifference, r.MaxEntryRow, r.MaxEntryCol = math.Abs(d), i, int(j)
			}
		}
	}
	// Relative to ‖W*‖_F; when W* = 0, relative to ‖P‖_F (1 unless P = 0 too).
	if n := norm.Sum(); n > 0 {
		r.RelativeDifference = math.Sqrt(diff.Sum() / n)
	} else if n := pnorm.Sum(); n > 0 {
		r.RelativeDifference = math.Sqrt(diff.Sum() / n)
	}
	r.RestrictionConservation = conservationDefect(w, sd.MS, sd.MT, sd.CovS)
	r.RestrictionConsistency = consistencyDefect(w, sd.CoveredT)
	r.ProlongationConservation = conservationDefect(p, sd.MT, sd.MS, sd.CovT)
	r.ProlongationConsistency = consistencyDefect(p, sd.CoveredS)
	r.AdjointConsistency = consistencyDefect(ws, coveredOnly(sd.CovS, ws.Rows))
	r.AdjointConservation = conservationDefect(ws, sd.MT, sd.MS, coverageOf(sd.CoveredT))
	r.AdjointIdentityDefect = adjointIdentityDefect(w, p, sd.MS, sd.MT, probes, seed)
	return r
}

// coveredOnly turns a coverage vector into the fully-covered mask (nil stays nil).
func coveredOnly(cov []float64, n int) []bool {
	if cov == nil {
		return nil
	}
	ok := make([]bool, n)
	for i := range ok {
		ok[i] = fullyCovered(cov, i)
	}
	return ok
}

// coverageOf turns a mask into a 0/1 coverage vector (nil stays nil).
func coverageOf(mask []bool) []float64 {
	if mask == nil {
		return nil
	}
	c := make([]float64, len(mask))
	for i, ok := range mask {
		if ok {
			c[i] = 1
		}
	}
	return c
}

// adjointIdentityDefect returns max over probes of
// |⟨Wx, y⟩_t − ⟨x, Py⟩_s| / (‖Wx‖_t‖y‖_t + ‖x‖_s‖Py‖_s).
func adjointIdentityDefect(w, p *weights.CSR, ms, mt []float64, probes int, seed uint64) float64 {
	xs := randomVectors(probes, w.Cols, seed)
	ys := randomVectors(probes, w.Rows, seed+1)
	wxs := make([]float64, w.Rows*probes)
	pys := make([]float64, w.Cols*probes)
	w.ApplyBatchTo(wxs, interleave(xs), probes)
	p.ApplyBatchTo(pys, interleave(ys), probes)
	wx := make([]float64, w.Rows)
	py := make([]float64, w.Cols)
	worst := 0.0
	for v := range xs {
		for i := range wx {
			wx[i] = wxs[i*probes+v]
		}
		for j := range py {
			py[j] = pys[j*probes+v]
		}
		a := weightedDot(wx, ys[v], mt)
		b := weightedDot(xs[v], py, ms)
		scale := weightedNorm(wx, mt)*weightedNorm(ys[v], mt) + weightedNorm(xs[v], ms)*weightedNorm(py, ms)
		if scale > 0 {
			worst = math.Max(worst, math.Abs(a-b)/scale)
		}
	}
	return worst
}

// weightedDot returns Σ m_i a_i b_i, compensated.
func weightedDot(a, b, m []float64) float64 {
	var k weights.Accumulator
	for i := range a {
		k.Add(m[i] * a[i] * b[i])
	}
	return k.Sum()
}

// weightedNorm returns sqrt(Σ m_i a_i²).
func weightedNorm(a, m []float64) float64 { return math.Sqrt(math.Max(weightedDot(a, a, m), 0)) }
